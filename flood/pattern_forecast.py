"""Pattern forecast: areal sweep combined with Buckley-Leverett displacement (and layers) in time.

The areal sweep curve of a pattern, E_A(W) with fd(W) the fraction of injected fluid in the
production, is read as a bundle of stream tubes: a tube carrying the share w_k of the rate with
time of flight τ_k (pore volumes) breaks through when W = τ_k, so fd(W) = Σ_{τ_k <= W} w_k is the
rate-weighted distribution of τ and each tube holds the pore-volume share w_k τ_k. Streamline
results give the tubes directly; a correlation or numerical curve is cut into equal-rate tubes at
the quantiles of fd (the tubes still unswept at the end of the curve share the unswept volume).

Each tube is then a linear Buckley-Leverett/Welge displacement receiving W/τ_k of its own pore
volume. With the scenario's layers (non-communicating, each holding the same pattern), the
layered engine of :mod:`flood.layers` (Dykstra-Parsons or layered fractional flow, one pressure
drop across all layers) gives each layer's own pore volumes injected W_i and its share of the
injection as the flood goes on, and the tubes of layer i receive W_i/τ_k. An explicit list of
(k, h) layers instead splits the rate by k h once and for all (layer i receives W k_i/k̄, k̄ the
thickness-weighted mean, equal porosity): the Dykstra-Parsons split at M = 1.

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


def forecast_sweep(case, sweep, progress=None):
    """The piston-like areal sweep whose stream tubes feed :func:`pattern_forecast` for ``case``.

    Parameters
    ----------
    case : flood.scenario.FloodCase
    sweep : flood.numerical.sweep.ArealSweepResult
        Any areal sweep of the pattern.
    progress : callable, optional
        ``progress(fraction)`` of a finite-volume run, when one is needed.

    Returns
    -------
    flood.numerical.sweep.ArealSweepResult
        ``sweep`` itself when it is piston-like (streamlines, correlation, finite volumes at a
        mobility ratio); for a two-phase finite-volume run, which already holds the
        Buckley-Leverett displacement that every tube adds again, the piston-like finite-volume
        sweep on the same grid at the mobility ratio behind the front
        (:func:`flood.displacement.breakthrough_mobility_ratio`, after Craig 1971, from memory).
    """
    if sweep.pvi_basis != "total":
        return sweep
    from .displacement import breakthrough_mobility_ratio
    from .numerical.sweep import numerical_sweep

    m_bt = breakthrough_mobility_ratio(case.relperm, case.mu_w, case.mu_o, case.swi, case.gravity)
    return numerical_sweep(sweep.pattern, mobility_ratio=min(max(m_bt, 0.05), 50.0),
                           d_over_a=sweep.d_over_a or 1.0, cells=sweep.cells, max_pvi=2.0,
                           stencil=sweep.stencil or 9, progress=progress)


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
                     tubes: int = 200, economic_limit: bool = False) -> pd.DataFrame:
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
        Non-communicating layers with a fixed k h rate split. Default: the scenario's own layers
        (``case.layers``) through the layered engine when it has them, else one layer.
    tubes : int
        Tubes to cut a sweep curve into [-].
    economic_limit : bool
        End the table where the surface water cut first reaches the scenario's economic water
        cut (the last row linearly interpolated between the two rows around it).

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
    Recovery RF(W) = Σ_i p_i Σ_k w_k τ_k RF_1(W_i/τ_k), fw(W) = Σ_i s_i Σ_k w_k fw_1(W_i/τ_k), with
    RF_1 = (Swbar - Swi)/(1 - Swi) and fw_1 of the linear displacement (Welge; piston-like for the
    Dykstra-Parsons layer method). With the scenario's layers p_i = Vp_i/Vp and W_i, s_i(W) come
    from :class:`flood.layers.LayerStack`; with a (k, h) list p_i = h_i/Σh, s_i = k_i h_i/Σ k h,
    W_i = W k_i/k̄. The swept share counts each tube up to its front, min(W_tube/W_bt, 1) of its
    pore volume.

    References
    ----------
    Higgins & Leighton, 1962 (from memory); Welge, 1952; Dykstra & Parsons, 1950.
    """
    table = _pattern_table(case, sweep, points, end_pvi, layers, tubes)
    return _cut_at_economic_limit(table, case.economic_water_cut) if economic_limit else table


def _cut_at_economic_limit(table: pd.DataFrame, limit: float) -> pd.DataFrame:
    cut = table["water_cut"].to_numpy()
    k = int(np.argmax(cut >= limit)) if np.any(cut >= limit) else -1
    if k <= 0:
        return table
    a, b = table.iloc[k - 1], table.iloc[k]
    t = float((limit - cut[k - 1]) / (cut[k] - cut[k - 1])) if cut[k] > cut[k - 1] else 1.0
    last = a + t * (b - a)
    return pd.concat([table.iloc[:k], last.to_frame().T], ignore_index=True)


def _pattern_table(case, sweep, points, end_pvi, layers, tubes):
    if case.sgi > 0:
        raise FloodInputError("saturations.sgi", case.sgi, "0 for the pattern forecast",
                              "gas fill-up is not modelled in the stream tubes")
    if not (isinstance(points, (int, np.integer)) and 2 <= points <= 100_000):
        raise FloodInputError("points", points, "a whole number 2 <= points <= 100000")
    end = case.max_pvi if end_pvi is None else float(end_pvi)
    pvi = np.linspace(0.0, end, points)
    if layers is None and getattr(case, "layers", None) is not None:
        disp, layer_pvi, pore_share, rate_share, vp = _stack_split(case, pvi)
    else:
        disp = buckley_leverett(case.relperm, case.mu_w, case.mu_o, case.swi, case.gravity)
        if layers is None:
            k = h = np.array([1.0])
        else:
            arr = np.asarray(layers, dtype=float)
            if (arr.ndim != 2 or arr.shape[1] != 2 or arr.shape[0] < 1 or np.any(~np.isfinite(arr))
                    or np.any(arr <= 0)):
                raise FloodInputError("layers", layers, "rows of (permeability_md > 0, thickness_ft > 0)")
            k, h = arr[:, 0], arr[:, 1]
        layer_pvi = pvi[:, None] * (k / float(np.sum(k * h) / np.sum(h)))[None, :]
        pore_share = h / h.sum()
        rate_share = np.broadcast_to(k * h / np.sum(k * h), layer_pvi.shape)
        vp = float(pore_volume(case.area_acres, case.thickness_ft, case.porosity))
    w, tau = stream_tubes(sweep, tubes)
    tube_pvi = layer_pvi[:, :, None] / tau[None, None, :]
    _, fw_t, sbar_t = disp.outlet(tube_pvi)
    rf_t = (sbar_t - case.swi) / (1.0 - case.swi)
    pv_weight = pore_share[None, :, None] * (w * tau)[None, None, :]
    rf = np.sum(pv_weight * rf_t, axis=(1, 2))
    fw = np.sum(rate_share[:, :, None] * w[None, None, :] * fw_t, axis=(1, 2))
    ea = np.sum(pv_weight * np.minimum(tube_pvi / disp.breakthrough_pvi, 1.0), axis=(1, 2))
    ooip = float(original_oil_in_place(vp, case.swi, case.bo))
    days = case.injection.days_at_cumulative(pvi * vp / case.bw)
    q_res = case.injection.rate(days) * case.bw
    return pd.DataFrame({
        "pvi": pvi, "days": days, "areal_sweep": ea, "fw_reservoir": fw,
        "water_cut": surface_water_cut(fw, case.bo, case.bw),
        "oil_rate_stb_d": q_res * (1.0 - fw) / case.bo,
        "cum_oil_stb": rf * ooip, "recovery_factor": rf,
    })


def _stack_split(case, pvi):
    """The scenario's layers through the common-Δp layered engine at field PVIs ``pvi``.

    Returns the layer displacement, each layer's own PVI and injection share (rows of ``pvi``),
    the layers' pore-volume shares and the total pore volume [rb].
    """
    from .layers import _check_case_for_layers, fractional_flow_displacement, layer_stack, piston_displacement

    layers = case.layers
    _check_case_for_layers(case, layers)
    if layers.method == "dykstra_parsons":
        disp = piston_displacement(case.relperm, case.mu_w, case.mu_o, case.swi)
    else:
        disp = fractional_flow_displacement(buckley_leverett(case.relperm, case.mu_w, case.mu_o, case.swi))
    stack = layer_stack(layers, disp, case.area_acres)
    # common-time grid reaching past the last PVI (the field PVI grows without bound with τ)
    tau_top = 2.0 * float(np.max(stack.breakthrough_tau))
    for _ in range(200):
        if float(stack.field_pvi(np.array([tau_top]))[0]) > pvi[-1]:
            break
        tau_top *= 2.0
    st = stack.state(stack.tau_at_pvi(pvi, stack.time_grid(tau_top)))
    vp = float(np.sum(pore_volume(case.area_acres, layers.thickness_ft, layers.porosity)))
    return disp, st["q"], stack.pore_fraction, st["share"], vp
