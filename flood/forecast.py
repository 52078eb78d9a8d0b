"""Waterflood forecast: pore volume, OOIP, breakthrough, economic limit and the dated rate table.

The one-dimensional Buckley-Leverett/Welge displacement (:mod:`flood.displacement`) is put on the
calendar with the injection plan: PVI = Wi Bw / Vp, with Vp = 7758 A h φ.

Assumptions (stated in the README): incompressible fluids after fill-up (reservoir voidage equals
injection), no capillary pressure, a linear (one-dimensional) displacement of the whole pore volume
(100 % areal and vertical sweep unless the layered or pattern models are used), and, with initial free
gas (sgi > 0), no production until the injected water has filled the gas space (fill-up at
PVI = sgi; the gas is taken to be compressed back into solution ahead of the oil bank), after which
the displacement proceeds as in a gas-free reservoir.

References
----------
Welge, H.J., 1952, Trans. AIME 195, 91-98. Lyons, W.C. (ed.), 1996, Standard Handbook of Petroleum
& Natural Gas Engineering, Vol. 2, Ch. 5 (Vp = 7758 A h φ; Welge relations Eqs. 5-213, 5-214).
Craig, F.F., 1971, The Reservoir Engineering Aspects of Waterflooding, SPE Monograph 3 (fill-up
with initial gas; attribution from memory).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .displacement import buckley_leverett, saturation_at_fw, welge_tangent
from .errors import FloodInputError
from .fractional_flow import (fractional_flow, fractional_flow_derivative,
                              reservoir_fw_from_surface_cut, surface_water_cut,
                              surface_water_oil_ratio)
from .units import BBL_PER_ACRE_FT

#: Columns of the forecast table, in order, with units.
FORECAST_COLUMNS = {
    "pvi": "pore volumes injected [total PV]",
    "days": "time since injection start [day]",
    "oil_rate_stb_d": "oil rate [STB/d]",
    "water_rate_stb_d": "water production rate [STB/d]",
    "injection_rate_bwpd": "water injection rate [bbl/d]",
    "water_cut": "surface water cut [fraction]",
    "wor": "surface water-oil ratio [STB/STB]",
    "cum_oil_stb": "cumulative oil [STB]",
    "cum_water_stb": "cumulative water produced [STB]",
    "cum_injected_stb": "cumulative water injected [bbl]",
    "recovery_factor": "cumulative oil / OOIP [fraction]",
    "avg_water_saturation": "Welge average water saturation [fraction]",
    "outlet_water_saturation": "water saturation at the producer [fraction]",
    "fw_reservoir": "reservoir fractional flow of water at the producer [fraction]",
}


def pore_volume(area_acres, thickness_ft, porosity):
    """Pore volume Vp = 7758 A h φ [rb].

    Parameters
    ----------
    area_acres : array_like
        Area [acre].
    thickness_ft : array_like
        Net thickness [ft].
    porosity : array_like
        Porosity [fraction].

    References
    ----------
    Lyons (ed.), 1996, Standard Handbook of Petroleum & Natural Gas Engineering, Ch. 5 (7,758 bbl/acre-ft).

    Examples
    --------
    >>> float(pore_volume(40, 30, 0.21))
    1955016.0
    """
    return BBL_PER_ACRE_FT * np.asarray(area_acres, dtype=float) * thickness_ft * porosity


def original_oil_in_place(pore_volume_rb, swi, bo, sgi=0.0):
    """OOIP = Vp (1 - Swi - Sgi) / Bo [STB].

    Parameters
    ----------
    pore_volume_rb : array_like
        Pore volume [rb].
    swi, sgi : array_like
        Initial water and free-gas saturation [fraction].
    bo : array_like
        Oil formation volume factor [rb/STB].

    References
    ----------
    Common practice (volumetric OOIP).
    """
    return np.asarray(pore_volume_rb, dtype=float) * (1.0 - np.asarray(swi) - sgi) / bo


def endpoint_mobility_ratio(krw_end, kro_end, mu_w, mu_o):
    """Endpoint mobility ratio M = (krw(1 - Sor)/μw) / (kro(Swc)/μo) [dimensionless].

    References
    ----------
    Craig, 1971, SPE Monograph 3 (definition; from memory). Common practice.

    Examples
    --------
    >>> round(float(endpoint_mobility_ratio(0.35, 0.9, 0.6, 3.0)), 6)
    1.944444
    """
    return (np.asarray(krw_end, dtype=float) / mu_w) / (np.asarray(kro_end, dtype=float) / mu_o)


def displacement_summary(relperm, mu_w, mu_o, swi, bo, bw, economic_water_cut, sgi=0.0, gravity=0.0):
    """Breakthrough and economic-limit figures of the displacement, vectorised over cases.

    Parameters
    ----------
    relperm : Corey or LabTable
        Relative permeability (Corey parameters may be arrays of cases).
    mu_w, mu_o : array_like
        Viscosities [cp].
    swi, sgi : array_like
        Initial water and free-gas saturation [fraction].
    bo, bw : array_like
        Formation volume factors [rb/STB].
    economic_water_cut : array_like
        Surface water cut ending the flood [fraction].
    gravity : array_like
        Gravity term [cp].

    Returns
    -------
    dict of numpy.ndarray
        ``front_saturation``, ``front_water_cut`` (reservoir fw at the front),
        ``breakthrough_pvi`` [total PV], ``average_saturation_at_breakthrough``,
        ``displaced_at_breakthrough`` (oil produced / Vp), ``economic_limit_pvi`` [total PV],
        ``average_saturation_at_economic_limit``, ``displaced_at_economic_limit`` [fraction of Vp].

    Notes
    -----
    Breakthrough PVI = (Swf - Swi)/(fw(Swf) - fw(Swi)), Swbar_bt = Swi + (1 - fw(Swi)) PVI_bt
    (Welge 1952). The economic limit is reached when the outlet fw equals the reservoir fw of
    the economic surface cut, fwe = fws Bw/(fws Bw + (1 - fws) Bo); if the front's fw already exceeds
    it, the limit is breakthrough. There Sw2 solves fw(Sw2) = fwe, PVI = 1/fw'(Sw2) and
    Swbar = Sw2 + PVI (1 - fwe). Oil displaced per pore volume = Swbar - Swi - Sgi.

    References
    ----------
    Welge, 1952; Lyons (ed.), 1996, Eqs. 5-213, 5-214.
    """
    swi = np.asarray(swi, dtype=float)
    s_inj = 1.0 - np.asarray(relperm.sor, dtype=float)
    swf, fwf = welge_tangent(relperm, mu_w, mu_o, swi, gravity)
    fwi = fractional_flow(relperm, swi, mu_w, mu_o, gravity)
    spreading = swf <= swi + 1e-12
    with np.errstate(divide="ignore", invalid="ignore"):
        pvi_chord = (swf - swi) / (fwf - fwi)
        d_i = fractional_flow_derivative(relperm, swi + 1e-9 * (s_inj - swi), mu_w, mu_o, gravity)
        pvi_bt = np.where(spreading, 1.0 / d_i, pvi_chord)
    sbar_bt = swi + (1.0 - fwi) * pvi_bt
    fwe = reservoir_fw_from_surface_cut(economic_water_cut, bo, bw)
    at_bt = fwf >= fwe
    s_e = saturation_at_fw(relperm, mu_w, mu_o, fwe, swf, s_inj, gravity)
    with np.errstate(divide="ignore"):
        pvi_e = np.where(at_bt, pvi_bt, 1.0 / fractional_flow_derivative(relperm, s_e, mu_w, mu_o, gravity))
    sbar_e = np.where(at_bt, sbar_bt, np.minimum(s_e + pvi_e * (1.0 - fwe), s_inj))
    return {
        "front_saturation": swf,
        "front_water_cut": fwf,
        "breakthrough_pvi": pvi_bt,
        "average_saturation_at_breakthrough": sbar_bt,
        "displaced_at_breakthrough": sbar_bt - swi - sgi,
        "economic_limit_pvi": pvi_e,
        "average_saturation_at_economic_limit": sbar_e,
        "displaced_at_economic_limit": sbar_e - swi - sgi,
    }


def _check_fill_up(sgi, sbar_bt, swi):
    if np.any(np.asarray(sgi) >= np.asarray(sbar_bt) - swi):
        raise FloodInputError("saturations.sgi", float(np.max(sgi)),
                              f"sgi < {float(np.min(sbar_bt - swi)):.4g} (the oil displaced by breakthrough)",
                              "fill-up would not be complete before water breakthrough")


def economic_limit(solution, economic_water_cut, bo, bw):
    """PVI and Welge average saturation when the surface water cut reaches its economic limit.

    Parameters
    ----------
    solution : FrontSolution
        One case's :func:`flood.displacement.buckley_leverett` solution.
    economic_water_cut : float
        Surface water cut ending the flood [fraction].
    bo, bw : float
        Formation volume factors [rb/STB].

    Returns
    -------
    pvi, sw_average : float
        [total PV], [fraction].

    Notes
    -----
    fw(Sw2) = fwe solved with scipy's Brent method on [Swf, 1 - Sor]; PVI = 1/fw'(Sw2),
    Swbar = Sw2 + PVI (1 - fwe) (Welge 1952). Breakthrough if fw(Swf) >= fwe.

    References
    ----------
    Welge, 1952, Trans. AIME 195.
    """
    from scipy.optimize import brentq

    sol = solution
    fwe = float(reservoir_fw_from_surface_cut(economic_water_cut, bo, bw))
    if sol.front_fw >= fwe or sol.front_saturation >= sol.sw_injected:
        return sol.breakthrough_pvi, sol.average_saturation_at_breakthrough
    f = lambda s: float(fractional_flow(sol.relperm, s, sol.mu_w, sol.mu_o, sol.gravity)) - fwe  # noqa: E731
    s_e = brentq(f, sol.front_saturation, sol.sw_injected, xtol=1e-14)
    pvi = 1.0 / float(fractional_flow_derivative(sol.relperm, s_e, sol.mu_w, sol.mu_o, sol.gravity))
    return pvi, min(s_e + pvi * (1.0 - fwe), sol.sw_injected)


def summarize(case, solution=None) -> dict:
    """Summary figures of one scenario's forecast (see README for every key's unit).

    Parameters
    ----------
    case : flood.scenario.FloodCase
    solution : FrontSolution, optional
        A precomputed :func:`flood.displacement.buckley_leverett` solution of ``case``.

    Returns
    -------
    dict
        ``pore_volume_rb``, ``ooip_stb``, ``endpoint_mobility_ratio``, ``front_saturation``,
        ``front_water_cut``, ``breakthrough_pvi``, ``breakthrough_days``,
        ``average_saturation_at_breakthrough``, ``recovery_factor_at_breakthrough``,
        ``economic_limit_pvi``, ``economic_limit_days``, ``recovery_factor_at_economic_limit``,
        plus ``fill_up_pvi``, ``fill_up_days``, ``movable_oil_fraction``, ``forecast_end_pvi``,
        ``forecast_end_days``, ``forecast_end_reason``.

    References
    ----------
    Welge, 1952; Lyons (ed.), 1996, Ch. 5.
    """
    vp = float(pore_volume(case.area_acres, case.thickness_ft, case.porosity))
    ooip = float(original_oil_in_place(vp, case.swi, case.bo, case.sgi))
    sol = solution or buckley_leverett(case.relperm, case.mu_w, case.mu_o, case.swi, case.gravity)
    pvi_e, sbar_e = economic_limit(sol, case.economic_water_cut, case.bo, case.bw)
    d = {"front_saturation": sol.front_saturation, "front_water_cut": sol.front_fw,
         "breakthrough_pvi": sol.breakthrough_pvi,
         "average_saturation_at_breakthrough": sol.average_saturation_at_breakthrough,
         "displaced_at_breakthrough": sol.average_saturation_at_breakthrough - case.swi - case.sgi,
         "economic_limit_pvi": pvi_e, "average_saturation_at_economic_limit": sbar_e,
         "displaced_at_economic_limit": sbar_e - case.swi - case.sgi}
    _check_fill_up(case.sgi, d["average_saturation_at_breakthrough"], case.swi)
    to_days = lambda pvi: float(case.injection.days_at_cumulative(pvi * vp / case.bw))  # noqa: E731
    end_pvi = min(d["economic_limit_pvi"], case.max_pvi)
    oil_pv = 1.0 - case.swi - case.sgi
    return {
        "name": case.name,
        "pore_volume_rb": vp,
        "ooip_stb": ooip,
        "endpoint_mobility_ratio": float(endpoint_mobility_ratio(case.relperm.krw_end, case.relperm.kro_end,
                                                                 case.mu_w, case.mu_o)),
        "front_saturation": d["front_saturation"],
        "front_water_cut": d["front_water_cut"],
        "front_surface_water_cut": float(surface_water_cut(d["front_water_cut"], case.bo, case.bw)),
        "breakthrough_pvi": d["breakthrough_pvi"],
        "breakthrough_days": to_days(d["breakthrough_pvi"]),
        "average_saturation_at_breakthrough": d["average_saturation_at_breakthrough"],
        "recovery_factor_at_breakthrough": d["displaced_at_breakthrough"] / oil_pv,
        "economic_limit_pvi": d["economic_limit_pvi"],
        "economic_limit_days": to_days(d["economic_limit_pvi"]),
        "average_saturation_at_economic_limit": d["average_saturation_at_economic_limit"],
        "recovery_factor_at_economic_limit": d["displaced_at_economic_limit"] / oil_pv,
        "fill_up_pvi": case.sgi,
        "fill_up_days": to_days(case.sgi),
        "movable_oil_fraction": (1.0 - case.sor - case.swi - case.sgi) / oil_pv,
        "forecast_end_pvi": end_pvi,
        "forecast_end_days": to_days(end_pvi),
        "forecast_end_reason": "economic water cut" if d["economic_limit_pvi"] <= case.max_pvi else "max_pvi",
    }


def forecast_table(case, points: int = 400, solution=None, end_pvi=None) -> pd.DataFrame:
    """Dated forecast table: rates, cumulatives, water cut, WOR and recovery versus PVI and days.

    Parameters
    ----------
    case : flood.scenario.FloodCase
    points : int
        Evenly spaced PVI points from 0 to the end of the forecast; the fill-up and breakthrough
        points are added exactly.
    solution : FrontSolution, optional
        A precomputed :func:`flood.displacement.buckley_leverett` solution of ``case``.
    end_pvi : float, optional
        Last PVI; default the economic limit or ``case.max_pvi``, whichever comes first.

    Returns
    -------
    pandas.DataFrame
        Columns :data:`FORECAST_COLUMNS`.

    Notes
    -----
    After fill-up, produced reservoir volume equals injected: oil (rb) = Vp (Swbar - Swi - Sgi),
    water (rb) = Vp (PVI - (Swbar - Swi)); rates are the injection rate (rb/d) split by the outlet
    fw. Surface volumes divide by Bo and Bw.

    References
    ----------
    Welge, 1952; Lyons (ed.), 1996, Ch. 5.
    """
    if not (isinstance(points, (int, np.integer)) and 2 <= points <= 100_000):
        raise FloodInputError("points", points, "an integer 2 <= points <= 100000")
    sol = solution or buckley_leverett(case.relperm, case.mu_w, case.mu_o, case.swi, case.gravity)
    _check_fill_up(case.sgi, sol.average_saturation_at_breakthrough, case.swi)
    vp = float(pore_volume(case.area_acres, case.thickness_ft, case.porosity))
    ooip = float(original_oil_in_place(vp, case.swi, case.bo, case.sgi))
    if end_pvi is None:
        end_pvi = min(economic_limit(sol, case.economic_water_cut, case.bo, case.bw)[0], case.max_pvi)
    pvi = np.linspace(0.0, end_pvi, points)
    extra = [p for p in (case.sgi, sol.breakthrough_pvi) if 0.0 < p < end_pvi]
    if extra:
        pvi = np.unique(np.concatenate((pvi, extra)))
    s2, fw2, sbar = sol.outlet(pvi)
    filled = pvi >= case.sgi
    oil_rb = vp * np.maximum(sbar - case.swi - case.sgi, 0.0)
    water_rb = vp * np.maximum(pvi - (sbar - case.swi), 0.0)
    injected_bbl = pvi * vp / case.bw
    days = case.injection.days_at_cumulative(injected_bbl)
    q_inj = case.injection.rate(days)
    q_res = q_inj * case.bw
    fw_prod = np.where(filled, fw2, 0.0)
    oil_rate = np.where(filled, q_res * (1.0 - fw2), 0.0) / case.bo
    water_rate = np.where(filled, q_res * fw2, 0.0) / case.bw
    table = pd.DataFrame({
        "pvi": pvi,
        "days": days,
        "oil_rate_stb_d": oil_rate,
        "water_rate_stb_d": water_rate,
        "injection_rate_bwpd": q_inj,
        "water_cut": np.where(filled, surface_water_cut(fw_prod, case.bo, case.bw), 0.0),
        "wor": np.where(filled, surface_water_oil_ratio(fw_prod, case.bo, case.bw), 0.0),
        "cum_oil_stb": oil_rb / case.bo,
        "cum_water_stb": water_rb / case.bw,
        "cum_injected_stb": injected_bbl,
        "recovery_factor": oil_rb / case.bo / ooip,
        "avg_water_saturation": sbar,
        "outlet_water_saturation": s2,
        "fw_reservoir": fw_prod,
    })
    return table[list(FORECAST_COLUMNS)]
