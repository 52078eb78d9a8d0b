"""Pattern forecast: areal sweep combined with Buckley-Leverett displacement (and layers) in time.

The areal sweep curve of a pattern, E_A(W) with fd(W) the fraction of injected fluid in the
production, is read as a bundle of stream tubes: a tube carrying the share w_k of the rate with
time of flight τ_k (pore volumes) breaks through when W = τ_k, so fd(W) = Σ_{τ_k <= W} w_k is the
rate-weighted distribution of τ and each tube holds the pore-volume share w_k τ_k. Streamline
results give the tubes directly; a correlation or numerical curve is cut into equal-rate tubes at
the quantiles of fd (the tubes still unswept at the end of the curve share the unswept volume).

Each tube is then a linear Buckley-Leverett/Welge displacement receiving W/τ_k of its own pore
volume. With layers (non-communicating, same pattern, rate split by k h, equal porosity) layer i
receives W k_i/k̄ with k̄ the thickness-weighted mean permeability.

Assumptions: the tubes keep their shape and rate shares for the whole flood (exact at M = 1 in a
homogeneous pattern, approximate otherwise: the sweep curve used should be for the flood's own
mobility ratio), no flow between tubes or layers, incompressible fluids, no free gas.

References
----------
Higgins, R.V. & Leighton, A.J., 1962, JPT 14(6), 679-683 (stream-tube method; from memory).
Buckley & Leverett, 1942; Welge, 1952. Craig, F.F., 1971, SPE Monograph 3 (combining areal sweep
with displacement; from memory). Dykstra & Parsons, 1950 (non-communicating layers).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .displacement import buckley_leverett
from .errors import FloodInputError
from .fractional_flow import surface_water_cut
from .forecast import original_oil_in_place, pore_volume

#: Columns of :func:`pattern_forecast` and their units.
PATTERN_FORECAST_COLUMNS = {
    "pvi": "pore volumes injected [total PV]",
    "days": "time since start of injection [day]",
    "areal_sweep": "share of the pattern pore volume reached by the water front [fraction]",
    "fw_reservoir": "reservoir fractional flow of water of the pattern production [fraction]",
    "water_cut": "surface water cut [fraction]",
    "oil_rate_stb_d": "oil rate [STB/d]",
    "cum_oil_stb": "cumulative oil [STB]",
    "recovery_factor": "cumulative oil / OOIP [fraction]",
}


def stream_tubes(sweep, tubes: int = 200):
    """Stream tubes (rate share w_k, time of flight τ_k [PV]) equivalent to an areal sweep result.

    Parameters
    ----------
    sweep : flood.numerical.sweep.ArealSweepResult
    tubes : int
        Tubes to cut a curve into (ignored when the result carries streamline tubes) [-].

    Returns
    -------
    w, tau : numpy.ndarray
        Rate shares (sum 1) and times of flight [PV]; Σ w τ = 1.
    """
    if sweep.tube_flux.size:
        w, tau = sweep.tube_flux, sweep.tube_time
        return w / w.sum(), tau / float(np.sum(w * tau) / w.sum())
    c = sweep.curve
    pvi, fd, ea = c["pvi"].to_numpy(), c["fd"].to_numpy(), c["areal_sweep"].to_numpy()
    fd = np.maximum.accumulate(fd)
    u = (np.arange(tubes) + 0.5) / tubes
    fd_end, ea_end, w_end = fd[-1], ea[-1], pvi[-1]
    tau = np.empty(tubes)
    broken = u <= fd_end
    keep = np.concatenate(([True], np.diff(fd) > 0))
    tau[broken] = np.interp(u[broken], fd[keep], pvi[keep])
    tau[broken] = np.maximum(tau[broken], sweep.breakthrough_pvi)
    rest = ~broken
    if rest.any():
        tau[rest] = w_end + max(1.0 - ea_end, 0.0) / max(1.0 - fd_end, 1e-12)
    w = np.full(tubes, 1.0 / tubes)
    return w, tau / float(np.sum(w * tau))


def pattern_forecast(case, sweep, *, points: int = 200, end_pvi: float | None = None, layers=None,
                     tubes: int = 200) -> pd.DataFrame:
    """Forecast a pattern waterflood versus time from its areal sweep and the displacement.

    Parameters
    ----------
    case : flood.scenario.FloodCase
        Scenario inputs (relperm, viscosities, Swi, Bo, Bw, area, thickness, porosity, injection).
    sweep : flood.numerical.sweep.ArealSweepResult
        Areal sweep of the pattern (:func:`flood.areal_sweep.areal_sweep`).
    points : int
        PVI points from 0 to ``end_pvi`` [-].
    end_pvi : float, optional
        Last PVI [total PV]; default the scenario's max PVI.
    layers : sequence of (permeability_md, thickness_ft), optional
        Non-communicating layers; default one layer.
    tubes : int
        Tubes to cut a sweep curve into [-].

    Returns
    -------
    pandas.DataFrame
        Columns :data:`PATTERN_FORECAST_COLUMNS`.

    Raises
    ------
    FloodInputError
        Free gas, bad layers or point count.

    Notes
    -----
    Recovery RF(W) = Σ_i h_i/Σh Σ_k w_k τ_k RF_BL(W k_i/(k̄ τ_k)), fw(W) = Σ_i k_i h_i/Σkh
    Σ_k w_k fw_BL(W k_i/(k̄ τ_k)), RF_BL = (Swbar - Swi)/(1 - Swi) from Welge. The swept share
    counts each tube up to its Buckley-Leverett front, min(W_tube/W_bt, 1) of its pore volume.

    References
    ----------
    Higgins & Leighton, 1962 (from memory); Welge, 1952; Dykstra & Parsons, 1950.
    """
    if case.sgi > 0:
        raise FloodInputError("saturations.sgi", case.sgi, "0 for the pattern forecast",
                              "gas fill-up is not modelled in the stream tubes")
    if not (isinstance(points, (int, np.integer)) and 2 <= points <= 100_000):
        raise FloodInputError("points", points, "a whole number 2 <= points <= 100000")
    if layers is None:
        k = np.array([1.0])
        h = np.array([1.0])
    else:
        arr = np.asarray(layers, dtype=float)
        if arr.ndim != 2 or arr.shape[1] != 2 or arr.shape[0] < 1 or np.any(~np.isfinite(arr)) or np.any(arr <= 0):
            raise FloodInputError("layers", layers, "rows of (permeability_md > 0, thickness_ft > 0)")
        k, h = arr[:, 0], arr[:, 1]
    kbar = float(np.sum(k * h) / np.sum(h))
    end = case.max_pvi if end_pvi is None else float(end_pvi)
    sol = buckley_leverett(case.relperm, case.mu_w, case.mu_o, case.swi, case.gravity)
    w, tau = stream_tubes(sweep, tubes)
    pvi = np.linspace(0.0, end, points)
    tube_pvi = pvi[:, None, None] * (k / kbar)[None, :, None] / tau[None, None, :]
    _, fw_t, sbar_t = sol.outlet(tube_pvi)
    rf_t = (sbar_t - case.swi) / (1.0 - case.swi)
    pv_share = (h / h.sum())[None, :, None] * (w * tau)[None, None, :]
    rate_share = (k * h / np.sum(k * h))[None, :, None] * w[None, None, :]
    rf = np.sum(pv_share * rf_t, axis=(1, 2))
    fw = np.sum(rate_share * fw_t, axis=(1, 2))
    ea = np.sum(pv_share * np.minimum(tube_pvi / sol.breakthrough_pvi, 1.0), axis=(1, 2))
    vp = float(pore_volume(case.area_acres, case.thickness_ft, case.porosity))
    ooip = float(original_oil_in_place(vp, case.swi, case.bo))
    days = case.injection.days_at_cumulative(pvi * vp / case.bw)
    q_res = case.injection.rate(days) * case.bw
    return pd.DataFrame({
        "pvi": pvi, "days": days, "areal_sweep": ea, "fw_reservoir": fw,
        "water_cut": surface_water_cut(fw, case.bo, case.bw),
        "oil_rate_stb_d": q_res * (1.0 - fw) / case.bo,
        "cum_oil_stb": rf * ooip, "recovery_factor": rf,
    })
