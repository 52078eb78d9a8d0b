"""flood: screening forecasts of waterfloods by fractional-flow theory.

The engine (this package, except :mod:`flood.dashboard`) depends on numpy, scipy, pandas and
pydantic only. Forecasts are screening estimates, not reserves or design figures.
"""

__version__ = "0.1.0"
