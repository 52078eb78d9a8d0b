"""Water/oil capillary pressure Pc = po - pw as a function of water saturation.

Two models share one interface, ``pc(sw)`` and ``dpc(sw)``:

* :class:`BrooksCoreyCapillary` -- Pc = Pe Se^(-1/λ) (entry pressure Pe, pore-size index λ).
* :class:`CapillaryTable` -- a measured (Sw, Pc) table, monotone PCHIP interpolation.

A water-wet rock has Pc > 0 falling as Sw rises; that drives water from high to low Pc, i.e.
towards lower water saturation (spontaneous imbibition ahead of a waterflood front).

References
----------
Brooks, R.H. & Corey, A.T., 1964. Hydraulic properties of porous media. Hydrology Paper 3,
Colorado State University. Fritsch, F.N. & Carlson, R.E., 1980. Monotone piecewise cubic
interpolation. SIAM J. Numer. Anal. 17(2), 238-246.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy.interpolate import PchipInterpolator

from ..errors import FloodInputError

#: Smallest effective saturation used in the Brooks-Corey law; Pc is held at Pc(SE_MIN) below it
#: (the power law is singular at Se = 0).
SE_MIN = 1e-3


@dataclass(frozen=True)
class BrooksCoreyCapillary:
    """Brooks-Corey capillary pressure Pc = Pe Se^(-1/λ).

    Parameters
    ----------
    entry_pressure : float
        Entry (threshold) pressure Pe [pressure unit, e.g. psi], >= 0.
    pore_size_index : float
        Pore-size distribution index λ [-], 0.1..10.
    swc, sor : float
        Saturations defining Se = (Sw - Swc)/(1 - Swc - Sor) [fraction].

    Notes
    -----
    Se is clipped to [SE_MIN, 1], so Pc is finite (at most Pe SE_MIN^(-1/λ)) and equals Pe at
    Sw = 1 - Sor. The normalisation by 1 - Swc - Sor (rather than 1 - Swc) is common practice for
    water/oil imbibition.

    References
    ----------
    Brooks, R.H. & Corey, A.T., 1964, Hydrology Paper 3, Colorado State University.

    Examples
    --------
    >>> bc = BrooksCoreyCapillary(2.0, 2.0, 0.2, 0.2)
    >>> round(float(bc.pc(0.35)), 6)
    4.0
    """

    entry_pressure: float
    pore_size_index: float
    swc: float
    sor: float

    def __post_init__(self):
        if not (np.isfinite(self.entry_pressure) and self.entry_pressure >= 0):
            raise FloodInputError("capillary.entry_pressure", self.entry_pressure, "an entry pressure >= 0")
        if not (np.isfinite(self.pore_size_index) and 0.1 <= self.pore_size_index <= 10):
            raise FloodInputError("capillary.pore_size_index", self.pore_size_index, "0.1 <= pore-size index <= 10")

    def _se(self, sw):
        return (np.asarray(sw, dtype=float) - self.swc) / (1.0 - self.swc - self.sor)

    def pc(self, sw):
        """Capillary pressure Pc = po - pw at ``sw`` [pressure unit]."""
        se = np.clip(self._se(sw), SE_MIN, 1.0)
        return self.entry_pressure * se ** (-1.0 / self.pore_size_index)

    def dpc(self, sw):
        """dPc/dSw [pressure unit per fraction]; zero where Se is clipped."""
        raw = self._se(sw)
        se = np.clip(raw, SE_MIN, 1.0)
        inside = (raw > SE_MIN) & (raw < 1.0)
        d = -self.entry_pressure / self.pore_size_index * se ** (-1.0 / self.pore_size_index - 1.0)
        return np.where(inside, d / (1.0 - self.swc - self.sor), 0.0)


@dataclass(frozen=True)
class CapillaryTable:
    """A measured capillary-pressure table (Sw, Pc), monotone PCHIP interpolation.

    Parameters
    ----------
    sw : array_like
        Water saturation, strictly increasing [fraction].
    pc : array_like
        Capillary pressure po - pw, non-increasing with Sw [pressure unit].

    Notes
    -----
    End values are held constant outside the table.

    References
    ----------
    Fritsch, F.N. & Carlson, R.E., 1980, SIAM J. Numer. Anal. 17(2), 238-246.
    """

    sw: np.ndarray
    pc_values: np.ndarray
    _interp: PchipInterpolator = field(init=False, repr=False, compare=False)

    def __post_init__(self):
        try:
            sw = np.asarray(self.sw, dtype=float)
            pc = np.asarray(self.pc_values, dtype=float)
        except (TypeError, ValueError):
            raise FloodInputError("capillary.table", "(table)", "numbers in every cell") from None
        if sw.ndim != 1 or sw.shape != pc.shape or sw.size < 2:
            raise FloodInputError("capillary.table", f"{sw.size} rows", "at least 2 rows of (Sw, Pc)")
        if not (np.all(np.isfinite(sw)) and np.all(np.isfinite(pc))):
            raise FloodInputError("capillary.table", "non-finite value", "finite numbers")
        if np.any((sw < 0) | (sw > 1)):
            raise FloodInputError("capillary.table.sw", float(sw[(sw < 0) | (sw > 1)][0]), "0 <= Sw <= 1")
        if np.any(np.diff(sw) <= 0):
            i = int(np.argmax(np.diff(sw) <= 0)) + 1
            raise FloodInputError(f"capillary.table[{i}].sw", float(sw[i]), "Sw strictly increasing down the table")
        if np.any(np.diff(pc) > 0):
            i = int(np.argmax(np.diff(pc) > 0)) + 1
            raise FloodInputError(f"capillary.table[{i}].pc", float(pc[i]),
                                  f"Pc must not rise with Sw (previous row {pc[i - 1]:g})")
        object.__setattr__(self, "sw", sw)
        object.__setattr__(self, "pc_values", pc)
        object.__setattr__(self, "_interp", PchipInterpolator(sw, pc, extrapolate=False))

    def pc(self, sw):
        """Capillary pressure at ``sw`` [pressure unit], end values held outside the table."""
        s = np.clip(np.asarray(sw, dtype=float), self.sw[0], self.sw[-1])
        return self._interp(s)

    def dpc(self, sw):
        """dPc/dSw of the interpolant [pressure unit per fraction]; zero outside the table."""
        sw = np.asarray(sw, dtype=float)
        inside = (sw > self.sw[0]) & (sw < self.sw[-1])
        s = np.clip(sw, self.sw[0], self.sw[-1])
        return np.where(inside, self._interp(s, 1), 0.0)
