"""Finite-volume two-phase (water/oil) solver and the studies built on it.

Modules
-------
grid
    Uniform Cartesian grids (1D or 2D), face connectivity and two-point transmissibilities.
capillary
    Capillary-pressure models: Brooks-Corey power law and a lab table.
two_phase
    IMPES solver for incompressible water/oil flow with gravity and capillarity.
crosscheck
    1D numerical solution beside the Buckley-Leverett solution (code verification).
pattern
    Symmetry elements of repeated well patterns (five-spot, line drives, seven- and nine-spot).
streamlines
    Pollock streamline tracing and time of flight on a steady pressure field (unit mobility ratio).
sweep
    Areal sweep of a pattern by streamlines (M = 1) or by the finite-volume solver (any M).
command
    The ``crosscheck`` and ``sweep`` subcommands of ``python -m flood``.

The engine never imports dash, plotly or flask.
"""
