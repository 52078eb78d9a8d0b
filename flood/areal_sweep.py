"""Areal sweep efficiency of repeated patterns: the Fassihi (1986) correlation and a dispatcher.

``areal_sweep(pattern, mobility_ratio=..., method=...)`` returns one
:class:`flood.numerical.sweep.ArealSweepResult` whichever way it is computed:

* "correlation" -- Fassihi's fit of the Dyes, Caudle & Erickson (1954) scaled-model data,
  five-spot, direct line and staggered line drive, 0 < M <= 10 (fast, experimental);
* "streamline" -- streamlines and time of flight at M = 1 (sharp, potential flow);
* "numerical" -- the finite-volume solver at any M (or with a relative-permeability model).

References
----------
Fassihi, M.R., 1986, New correlations for calculation of vertical coverage and areal sweep
efficiency, SPE Reservoir Engineering 1(6), 604-606. Lyons, W.C. (ed.), 1996, Standard Handbook of
Petroleum & Natural Gas Engineering, Vol. 2, Gulf, Eq. 5-220 and Table 5-40. Dyes, A.B., Caudle,
B.H. & Erickson, R.A., 1954, Oil production after breakthrough as influenced by mobility ratio,
Trans. AIME 201, 81-86.
"""

from __future__ import annotations

import time as _time

import numpy as np
import pandas as pd
from scipy.integrate import cumulative_trapezoid

from .errors import FloodInputError

#: Fassihi (1986) coefficients a1..a6 [Lyons 1996, Table 5-40].
FASSIHI_COEFFICIENTS = {
    "five_spot": (-0.2062, -0.0712, -0.511, 0.3048, 0.123, 0.4394),
    "direct_line": (-0.3014, -0.1568, -0.9402, 0.3714, -0.0865, 0.8805),
    "staggered_line": (-0.2077, -0.1059, -0.3526, 0.2608, 0.2444, 0.3158),
}

#: Mobility-ratio range of the fitted data, 0 < M <= 10 [Fassihi 1986].
FASSIHI_M_RANGE = (0.0, 10.0)


def fassihi_areal_sweep(pattern: str, mobility_ratio, fd):
    """Areal sweep efficiency from the Fassihi (1986) correlation.

    Parameters
    ----------
    pattern : str
        "five_spot", "direct_line" or "staggered_line".
    mobility_ratio : array_like
        Mobility ratio M, 0 < M <= 10 [-].
    fd : array_like
        Fraction of the injected (displacing) fluid in the produced stream, 0..1 [-]; 0 gives
        the sweep at breakthrough.

    Returns
    -------
    numpy.ndarray
        E_A [fraction], capped at 1.

    Raises
    ------
    FloodInputError
        Pattern without coefficients, M or fd out of range.

    Notes
    -----
    (1 - E_A)/E_A = [a1 ln(M + a2) + a3] fd + a4 ln(M + a5) + a6 [Lyons 1996, Eq. 5-220].

    References
    ----------
    Fassihi, 1986, SPERE 1(6), 604-606; Lyons (ed.), 1996, Eq. 5-220, Table 5-40.

    Examples
    --------
    >>> round(float(fassihi_areal_sweep("five_spot", 1.0, 0.0)), 4)
    0.6781
    """
    if pattern not in FASSIHI_COEFFICIENTS:
        raise FloodInputError("pattern", pattern, "five_spot, direct_line or staggered_line for the correlation",
                              "Fassihi (1986) fitted these three patterns only")
    m = np.asarray(mobility_ratio, dtype=float)
    if np.any(~np.isfinite(m)) or np.any(m <= FASSIHI_M_RANGE[0]) or np.any(m > FASSIHI_M_RANGE[1]):
        raise FloodInputError("mobility_ratio", float(np.ravel(m)[0]) if m.size == 1 else m.tolist(),
                              "0 < M <= 10 for the Fassihi correlation", "range of the fitted data")
    fd = np.asarray(fd, dtype=float)
    if np.any(~np.isfinite(fd)) or np.any((fd < 0) | (fd > 1)):
        raise FloodInputError("fd", fd.tolist() if fd.size > 1 else float(fd), "0 <= fd <= 1")
    a1, a2, a3, a4, a5, a6 = FASSIHI_COEFFICIENTS[pattern]
    ratio = (a1 * np.log(m + a2) + a3) * fd + a4 * np.log(m + a5) + a6
    return np.minimum(1.0 / (1.0 + ratio), 1.0)


def correlation_sweep(pattern: str = "five_spot", *, mobility_ratio: float = 1.0, max_pvi: float = 3.0,
                      points: int = 301):
    """Areal sweep versus PVI from the Fassihi correlation and a volume balance.

    Parameters
    ----------
    pattern : str
        "five_spot", "direct_line" or "staggered_line".
    mobility_ratio : float
        M, 0 < M <= 10 [-].
    max_pvi : float
        Last PVI of the curve [displaceable PV].
    points : int
        Points of the curve [-].

    Returns
    -------
    flood.numerical.sweep.ArealSweepResult

    Notes
    -----
    For piston-like displacement the swept volume grows by what is injected less what of the
    injected fluid is produced: dE_A/dW = 1 - fd. So W_bt = E_A(fd = 0) and
    W(fd) = W_bt + ∫_0^fd (dE_A/df)/(1 - f) df (common practice volume balance), integrated by the
    trapezoidal rule on fd in [0, 0.9999]; beyond the last fd the sweep is held.

    References
    ----------
    Fassihi, 1986; Lyons (ed.), 1996, Eq. 5-220; Dyes, Caudle & Erickson, 1954.
    """
    from .numerical.sweep import ArealSweepResult, _pvi_grid

    t0 = _time.perf_counter()
    e_bt = float(fassihi_areal_sweep(pattern, mobility_ratio, 0.0))
    f = 1.0 - np.geomspace(1.0, 1e-4, 4001)
    f[0] = 0.0
    e = fassihi_areal_sweep(pattern, mobility_ratio, f)
    de = np.gradient(e, f)
    w = e_bt + cumulative_trapezoid(de / (1.0 - f), f, initial=0.0)
    pvi = _pvi_grid(max_pvi, points, (e_bt,))
    after = pvi >= e_bt
    sweep = np.where(after, np.interp(pvi, w, e), pvi)
    fd = np.where(after, np.interp(pvi, w, f), 0.0)
    sweep = np.minimum(sweep, 1.0)
    curve = pd.DataFrame({"pvi": pvi, "areal_sweep": sweep, "fd": fd, "water_cut": fd, "recovery": sweep})
    d_a = 1.0 if pattern != "five_spot" else None
    return ArealSweepResult(pattern, d_a, float(mobility_ratio), "correlation", None, e_bt, e_bt, curve,
                            _time.perf_counter() - t0)


def areal_sweep(pattern: str = "five_spot", *, mobility_ratio: float | None = 1.0, method: str = "auto",
                d_over_a: float = 1.0, cells: int | None = None, relperm=None, mu_w: float = 1.0,
                mu_o: float = 1.0, swi: float | None = None, max_pvi: float = 3.0, progress=None,
                map_pvi=()):
    """Areal sweep of a repeated pattern by the chosen method.

    Parameters
    ----------
    pattern : str
        One of :data:`flood.numerical.pattern.PATTERNS`.
    mobility_ratio : float, optional
        M [-]; ignored by the numerical method when ``relperm`` is given.
    method : str
        "auto" (streamline at M = 1 without relperm, numerical otherwise), "streamline",
        "numerical" or "correlation".
    d_over_a : float
        d/a of the line drives [-] (the correlation is for d/a = 1; from memory).
    cells : int, optional
        Cells along the longer side of the element (method defaults otherwise).
    relperm, mu_w, mu_o, swi
        Two-phase inputs for the numerical method (viscosities [cp], swi [fraction]).
    max_pvi : float
        Last PVI of the curve [PV].
    progress : callable, optional
        ``progress(fraction)`` (numerical method).
    map_pvi : sequence of float
        PVIs at which to keep the swept map (streamline and numerical methods).

    Returns
    -------
    flood.numerical.sweep.ArealSweepResult

    Raises
    ------
    FloodInputError
        Unknown method, or a method that cannot handle the request.

    References
    ----------
    Fassihi, 1986; Pollock, 1988; see :mod:`flood.numerical.sweep`.
    """
    from .numerical import sweep as fv

    methods = ("auto", "streamline", "numerical", "correlation")
    if method not in methods:
        raise FloodInputError("method", method, "one of " + ", ".join(methods))
    if method == "auto":
        method = "streamline" if relperm is None and mobility_ratio == 1.0 else "numerical"
    if method == "streamline":
        if relperm is not None or mobility_ratio != 1.0:
            raise FloodInputError("mobility_ratio", mobility_ratio, "1 for the streamline method",
                                  "streamlines of the steady field hold only at unit mobility ratio")
        return fv.streamline_sweep(pattern, d_over_a=d_over_a, cells=cells or fv.DEFAULT_CELLS_STREAMLINE,
                                   max_pvi=max_pvi, map_pvi=map_pvi)
    if method == "correlation":
        if pattern in ("direct_line", "staggered_line") and d_over_a != 1.0:
            raise FloodInputError("d_over_a", d_over_a, "1 for the correlation",
                                  "the Dyes-Caudle-Erickson line-drive data are for d/a = 1 (from memory)")
        return correlation_sweep(pattern, mobility_ratio=mobility_ratio, max_pvi=max_pvi)
    return fv.numerical_sweep(pattern, mobility_ratio=mobility_ratio, d_over_a=d_over_a,
                              cells=cells or fv.DEFAULT_CELLS_NUMERICAL, relperm=relperm, mu_w=mu_w,
                              mu_o=mu_o, swi=swi, max_pvi=max_pvi, progress=progress, map_pvi=map_pvi)
