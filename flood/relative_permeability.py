"""Water/oil relative permeability: the Corey power-law form and lab tables.

Two models share one interface, so the rest of flood never asks which one it has:

* :class:`Corey` -- endpoint-scaled power laws in the normalised saturation (vectorised: every
  parameter may be an array of cases, broadcast against the saturation array's trailing axes).
* :class:`LabTable` -- a measured (Sw, krw, kro) table, interpolated with a monotone
  shape-preserving cubic (PCHIP) so that interpolated values never overshoot the data.

Both expose ``kr(sw) -> (krw, kro)``, ``dkr(sw) -> (dkrw/dSw, dkro/dSw)``, ``swc``, ``sor``,
``krw_end`` (krw at 1 - Sor) and ``kro_end`` (kro at Swc).

References
----------
Corey, A.T., 1954. The interrelation between gas and oil relative permeabilities. Producers
Monthly 19(1), 38-41. Brooks, R.H. & Corey, A.T., 1964. Hydraulic properties of porous media,
Hydrology Paper 3, Colorado State University. Fritsch, F.N. & Carlson, R.E., 1980. Monotone
piecewise cubic interpolation. SIAM J. Numer. Anal. 17(2), 238-246 (the PCHIP interpolant).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy.interpolate import PchipInterpolator

from .errors import FloodInputError

#: Valid ranges of the Corey parameters, kept as data beside the model (inclusive bounds).
COREY_RANGES = {
    "krw_max": (0.0, 1.0),  # 0 < krw_max <= 1
    "kro_max": (0.0, 1.0),  # 0 < kro_max <= 1
    "nw": (1.0, 10.0),
    "no": (1.0, 10.0),
}


def normalized_water_saturation(sw, swc, sor):
    """Normalised (movable) water saturation S = (Sw - Swc) / (1 - Swc - Sor), clipped to [0, 1].

    Parameters
    ----------
    sw : array_like
        Water saturation [fraction of pore volume].
    swc : array_like
        Connate (irreducible) water saturation [fraction].
    sor : array_like
        Residual oil saturation to water [fraction].

    Returns
    -------
    numpy.ndarray
        Normalised saturation [dimensionless, 0..1].

    References
    ----------
    Corey, A.T., 1954, Producers Monthly 19(1).

    Examples
    --------
    >>> round(float(normalized_water_saturation(0.375, 0.2, 0.25)), 6)
    0.318182
    """
    sw = np.asarray(sw, dtype=float)
    return np.clip((sw - swc) / (1.0 - swc - sor), 0.0, 1.0)


def corey(sw, swc, sor, krw_max, kro_max, nw, no):
    """Corey relative permeabilities krw = krw_max S^nw and kro = kro_max (1 - S)^no.

    Parameters
    ----------
    sw : array_like
        Water saturation [fraction].
    swc, sor : array_like
        Connate water and residual oil saturations [fraction]; swc + sor < 1.
    krw_max : array_like
        Water relative permeability at Sw = 1 - Sor [fraction, 0..1].
    kro_max : array_like
        Oil relative permeability at Sw = Swc [fraction, 0..1].
    nw, no : array_like
        Corey exponents of water and oil [dimensionless, 1..10].

    Returns
    -------
    krw, kro : numpy.ndarray
        Relative permeabilities [fraction], broadcast to a common shape.

    Notes
    -----
    S = (Sw - Swc)/(1 - Swc - Sor), clipped to [0, 1], so krw = 0 below Swc and kro = 0 above
    1 - Sor.

    References
    ----------
    Corey, A.T., 1954, Producers Monthly 19(1), 38-41.

    Examples
    --------
    >>> krw, kro = corey(0.45, 0.2, 0.25, 0.35, 0.9, 2.0, 2.0)
    >>> round(float(krw), 6), round(float(kro), 6)
    (0.072314, 0.267769)
    """
    s = normalized_water_saturation(sw, swc, sor)
    return krw_max * s**nw, kro_max * (1.0 - s) ** no


@dataclass(frozen=True)
class Corey:
    """Corey relative-permeability model; every parameter may be a scalar or an array of cases.

    Parameters
    ----------
    swc, sor : float or numpy.ndarray
        Connate water and residual oil saturation [fraction].
    krw_max, kro_max : float or numpy.ndarray
        Endpoint relative permeabilities [fraction].
    nw, no : float or numpy.ndarray
        Corey exponents [dimensionless].

    Notes
    -----
    With array parameters of shape ``P`` (the batch shape), saturations of shape ``(n, *P)``
    (saturation axis first) give results of shape ``(n, *P)``.

    References
    ----------
    Corey, A.T., 1954, Producers Monthly 19(1), 38-41.
    """

    swc: object
    sor: object
    krw_max: object
    kro_max: object
    nw: object
    no: object

    @property
    def krw_end(self):
        """krw at Sw = 1 - Sor [fraction]."""
        return np.asarray(self.krw_max, dtype=float)

    @property
    def kro_end(self):
        """kro at Sw = Swc [fraction]."""
        return np.asarray(self.kro_max, dtype=float)

    def kr(self, sw):
        """Return (krw, kro) at water saturation ``sw`` [fraction]."""
        return corey(sw, self.swc, self.sor, self.krw_max, self.kro_max, self.nw, self.no)

    def dkr(self, sw):
        """Return (dkrw/dSw, dkro/dSw) at ``sw`` [1/fraction]; one-sided at the ends, zero outside."""
        sw = np.asarray(sw, dtype=float)
        span = 1.0 - self.swc - self.sor
        s_raw = (sw - self.swc) / span
        inside = (s_raw >= 0.0) & (s_raw <= 1.0)  # one-sided limits at the ends
        s = np.clip(s_raw, 0.0, 1.0)
        dkrw = np.where(inside, self.krw_max * self.nw * s ** (self.nw - 1.0) / span, 0.0)
        dkro = np.where(inside, -self.kro_max * self.no * (1.0 - s) ** (self.no - 1.0) / span, 0.0)
        return dkrw, dkro


def validate_relperm_table(sw, krw, kro, field_name: str = "relperm.table"):
    """Check a lab relative-permeability table and return it as three float arrays.

    Parameters
    ----------
    sw, krw, kro : array_like
        Table columns: water saturation [fraction] and relative permeabilities [fraction].
    field_name : str
        Name used in error messages.

    Returns
    -------
    sw, krw, kro : numpy.ndarray

    Raises
    ------
    FloodInputError
        Fewer than 3 rows, non-finite values, Sw not strictly increasing or outside [0, 1],
        kr outside [0, 1], krw decreasing or kro increasing with Sw.
    """
    try:
        sw = np.asarray(sw, dtype=float)
        krw = np.asarray(krw, dtype=float)
        kro = np.asarray(kro, dtype=float)
    except (TypeError, ValueError) as exc:
        raise FloodInputError(field_name, "(table)", "numbers in every cell", str(exc)) from None
    if sw.ndim != 1 or sw.shape != krw.shape or sw.shape != kro.shape:
        raise FloodInputError(field_name, f"shape {sw.shape}", "three equal-length columns Sw, krw, kro")
    if sw.size < 3:
        raise FloodInputError(field_name, f"{sw.size} rows", "at least 3 rows of (Sw, krw, kro)")
    for name, col in (("sw", sw), ("krw", krw), ("kro", kro)):
        bad = ~np.isfinite(col)
        if bad.any():
            i = int(np.argmax(bad))
            raise FloodInputError(f"{field_name}[{i}].{name}", float(col[i]), "a finite number")
    for name, col in (("sw", sw), ("krw", krw), ("kro", kro)):
        bad = (col < 0.0) | (col > 1.0)
        if bad.any():
            i = int(np.argmax(bad))
            raise FloodInputError(f"{field_name}[{i}].{name}", float(col[i]), "0 <= value <= 1")
    step = np.diff(sw)
    if (step <= 0).any():
        i = int(np.argmax(step <= 0)) + 1
        raise FloodInputError(f"{field_name}[{i}].sw", float(sw[i]),
                              f"Sw must increase strictly down the table (previous row {sw[i-1]:g})")
    if (np.diff(krw) < 0).any():
        i = int(np.argmax(np.diff(krw) < 0)) + 1
        raise FloodInputError(f"{field_name}[{i}].krw", float(krw[i]),
                              f"krw must not decrease as Sw rises (previous row {krw[i-1]:g})")
    if (np.diff(kro) > 0).any():
        i = int(np.argmax(np.diff(kro) > 0)) + 1
        raise FloodInputError(f"{field_name}[{i}].kro", float(kro[i]),
                              f"kro must not increase as Sw rises (previous row {kro[i-1]:g})")
    return sw, krw, kro


@dataclass(frozen=True)
class LabTable:
    """A lab relative-permeability table interpolated with monotone PCHIP.

    Parameters
    ----------
    sw, krw, kro : array_like
        Table columns [fraction]; validated by :func:`validate_relperm_table`.
    swc, sor : float
        Connate water and residual oil saturation the table is used with [fraction]. The table must
        span [swc, 1 - sor] and kro must be 0 at 1 - sor.

    Notes
    -----
    Outside the table's Sw range the end values are held constant. PCHIP keeps monotone data
    monotone, so interpolated krw never decreases and kro never increases.

    References
    ----------
    Fritsch, F.N. & Carlson, R.E., 1980, SIAM J. Numer. Anal. 17(2), 238-246.
    """

    sw: np.ndarray
    krw: np.ndarray
    kro: np.ndarray
    swc: float
    sor: float
    field_name: str = "relperm.table"
    _pw: PchipInterpolator = field(init=False, repr=False, compare=False)
    _po: PchipInterpolator = field(init=False, repr=False, compare=False)

    def __post_init__(self):
        sw, krw, kro = validate_relperm_table(self.sw, self.krw, self.kro, self.field_name)
        object.__setattr__(self, "sw", sw)
        object.__setattr__(self, "krw", krw)
        object.__setattr__(self, "kro", kro)
        object.__setattr__(self, "_pw", PchipInterpolator(sw, krw, extrapolate=False))
        object.__setattr__(self, "_po", PchipInterpolator(sw, kro, extrapolate=False))
        s_hi = 1.0 - self.sor
        tol = 1e-9
        if sw[0] > self.swc + tol:
            raise FloodInputError(f"{self.field_name}[0].sw", float(sw[0]),
                                  f"the table must start at or below swc = {self.swc:g}")
        if sw[-1] < s_hi - tol:
            raise FloodInputError(f"{self.field_name}[-1].sw", float(sw[-1]),
                                  f"the table must reach 1 - sor = {s_hi:g}")
        kro_hi = float(self._po(np.clip(s_hi, sw[0], sw[-1])))
        if kro_hi > 1e-6:
            raise FloodInputError(f"{self.field_name}: kro at 1 - sor", kro_hi,
                                  f"kro must fall to 0 at Sw = 1 - sor = {s_hi:g}",
                                  "oil is immobile at its residual saturation")
        krw_hi = float(self.kr(s_hi)[0])
        if krw_hi <= 0.0:
            raise FloodInputError(f"{self.field_name}: krw at 1 - sor", krw_hi,
                                  "krw > 0 at Sw = 1 - sor", "water must be mobile")
        if float(self.kr(self.swc)[1]) <= 0.0:
            raise FloodInputError(f"{self.field_name}: kro at swc", float(self.kr(self.swc)[1]),
                                  "kro > 0 at Sw = swc", "oil must be mobile")

    @property
    def krw_end(self):
        """krw at Sw = 1 - Sor [fraction]."""
        return np.asarray(self.kr(1.0 - self.sor)[0], dtype=float)

    @property
    def kro_end(self):
        """kro at Sw = Swc [fraction]."""
        return np.asarray(self.kr(self.swc)[1], dtype=float)

    def kr(self, sw):
        """Return (krw, kro) at ``sw`` [fraction], end values held outside the table."""
        s = np.clip(np.asarray(sw, dtype=float), self.sw[0], self.sw[-1])
        krw = np.clip(self._pw(s), 0.0, 1.0)
        kro = np.clip(self._po(s), 0.0, 1.0)
        # Above 1 - Sor the oil is immobile by definition of Sor.
        kro = np.where(s >= 1.0 - self.sor, 0.0, kro)
        return krw, kro

    def dkr(self, sw):
        """Return (dkrw/dSw, dkro/dSw) of the PCHIP interpolant [1/fraction]."""
        sw = np.asarray(sw, dtype=float)
        inside = (sw >= self.sw[0]) & (sw <= self.sw[-1])
        s = np.clip(sw, self.sw[0], self.sw[-1])
        dkrw = np.where(inside, self._pw(s, 1), 0.0)
        dkro = np.where(inside & (sw <= 1.0 - self.sor), self._po(s, 1), 0.0)
        return dkrw, dkro
