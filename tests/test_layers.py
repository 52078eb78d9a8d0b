"""Layered reservoirs: Dykstra-Parsons and layered fractional flow against outside references.

Kept apart below: closed forms of Dykstra & Parsons (1950) [DP1950]; independent numerical
integration with scipy's solve_ivp / quad; the definition of V [SH Fig. 5-163, TD Eqs. 3.113-3.115]
checked with scipy.stats; and consistency checks (one layer = homogeneous forecast, piston-like
relative permeability = Dykstra-Parsons, material balance, coverage).
"""

from __future__ import annotations

import copy
import json
from pathlib import Path

import numpy as np
import pytest
from scipy import integrate, stats

from flood.layers import (dykstra_parsons_front_positions, dykstra_parsons_water_oil_ratio,
                          estimate_variation, fractional_flow_displacement, generate_layers)
from flood.scenario import build_case, parse_scenario
from flood.study import run_study

SAMPLE = Path(__file__).resolve().parent.parent / "sample_data"
BASE = json.loads((SAMPLE / "demo_scenario.json").read_text())

# Straight-line Corey curves, M = krw_max mu_o / (kro_max mu_w); fw is convex (piston-like) for M < 1.
PISTON_M05 = {"model": "corey", "krw_max": 0.5, "kro_max": 1.0, "nw": 1.0, "no": 1.0}
# A lab table whose fw stays convex up to 1 - Sor at M = 1.5 (water immobile until 0.7, oil falls late):
# the Welge tangent is then the chord to 1 - Sor, i.e. a piston-like front at M > 1 (checked below).
PISTON_TABLE = {"model": "table", "table": [[0.2, 0.0, 1.0], [0.3, 0.0, 0.99], [0.4, 0.0, 0.98], [0.5, 0.0, 0.97],
                                            [0.6, 0.0, 0.96], [0.7, 0.0, 0.95], [0.78, 0.01, 0.5], [0.8, 0.5, 0.0]]}


def scenario(layers=None, relperm=None, fluids=None, saturations=None, limits=None):
    d = copy.deepcopy(BASE)
    if layers is not None:
        d["layers"] = layers
    if relperm is not None:
        d["relperm"] = relperm
    for key, val in (("fluids", fluids), ("saturations", saturations), ("limits", limits)):
        if val:
            d[key].update(val)
    return d


def study(**kw):
    return run_study(build_case(parse_scenario(scenario(**kw))))


TABLE5 = [{"thickness_ft": 4.0, "permeability_md": 500.0, "porosity": 0.25},
          {"thickness_ft": 8.0, "permeability_md": 220.0, "porosity": 0.22},
          {"thickness_ft": 5.0, "permeability_md": 140.0, "porosity": 0.18},
          {"thickness_ft": 9.0, "permeability_md": 60.0, "porosity": 0.20},
          {"thickness_ft": 4.0, "permeability_md": 21.0, "porosity": 0.15}]


# ----------------------------------------------------------------------------------------------
# Closed forms [DP1950]


def test_front_positions_equal_permeability_ratio_at_unit_mobility_ratio():
    # [DP1950]: at M = 1, x_i = k_i/k_j when layer j breaks through. Corey with krw_max/mu_w = kro_max/mu_o.
    res = study(layers={"method": "dykstra_parsons", "variation": {"v": 0.6, "count": 6}},
                relperm={"model": "corey", "krw_max": 0.3, "kro_max": 0.9, "nw": 2.0, "no": 2.0},
                fluids={"mu_w_cp": 1.0, "mu_o_cp": 3.0})
    lr = res.layers
    assert lr.mobility_ratio == pytest.approx(1.0, rel=1e-12)
    k = lr.layers.permeability_md
    for j, days in enumerate(lr.layer_table["breakthrough_days"]):
        x = lr.front_positions([days])[0]
        assert np.allclose(x, np.minimum(k / k[j], 1.0), rtol=1e-8, atol=1e-10)
    assert np.allclose(dykstra_parsons_front_positions(k, 1.0, 2), np.minimum(k / k[2], 1.0))


def _ode_fronts(c, m, j):
    """solve_ivp of dx_i/dt = c_i/(x_i/M + 1 - x_i) until x_j = 1 (independent of flood's algebra)."""
    def rhs(t, x):
        return c / (np.minimum(x, 1.0) / m + 1.0 - np.minimum(x, 1.0))

    def hit(t, x):
        return x[j] - 1.0
    hit.terminal = True
    sol = integrate.solve_ivp(rhs, (0.0, 1e3 / c.min()), np.zeros_like(c), events=hit, rtol=1e-11, atol=1e-13)
    return np.minimum(sol.y_events[0][0], 1.0)


@pytest.mark.parametrize("m", [0.4, 1.0, 2.5, 8.0])
def test_closed_form_fronts_and_wor_match_solve_ivp(m):
    # [DP1950] closed forms for x_i and WOR vs an independent numerical integration of each front
    # equation; WOR from Darcy flows k_i h_i / (x/M + 1 - x) (water layers at x = 1: k h M).
    k = np.array([500.0, 220.0, 140.0, 60.0, 21.0])
    h = np.array([4.0, 8.0, 5.0, 9.0, 4.0])
    for j in range(1, 5):
        x_ode = _ode_fronts(k / k.max(), m, j)
        x_cf = dykstra_parsons_front_positions(k, m, j)
        assert np.allclose(x_cf, x_ode, rtol=1e-7, atol=1e-9)
        flow = k * h / (x_ode / m + 1.0 - x_ode)
        broken = np.arange(5) <= j
        wor_ode = flow[broken].sum() / flow[~broken].sum() if j < 4 else np.inf
        assert dykstra_parsons_water_oil_ratio(k, m, j, h) == pytest.approx(wor_ode, rel=1e-7)


def test_engine_breakthrough_table_matches_closed_forms_with_unequal_thickness_and_porosity():
    # [DP1950] generalised: front speed ~ k/phi, flow ~ k h; the engine's rows against the closed forms.
    res = study(layers={"method": "dykstra_parsons", "table": TABLE5})
    lr = res.layers
    k, h, phi = lr.layers.permeability_md, lr.layers.thickness_ft, lr.layers.porosity
    bt = lr.breakthrough_table
    m = lr.mobility_ratio
    for row in bt.itertuples():
        j = row.layer - 1
        wor = dykstra_parsons_water_oil_ratio(k, m, j, h, phi)
        if np.isfinite(wor):
            assert row.wor_reservoir == pytest.approx(wor, rel=1e-8)
        else:
            assert row.layers_broken_through == 5 and row.water_cut == 1.0
        x = dykstra_parsons_front_positions(k, m, j, phi)
        vp = h * phi
        assert row.vertical_coverage == pytest.approx(np.sum(vp * x) / vp.sum(), rel=1e-8)
        # surface WOR = reservoir WOR x Bo/Bw (common practice)
        if np.isfinite(wor):
            assert row.wor_surface == pytest.approx(wor * 1.15 / 1.02, rel=1e-8)


def test_fronts_in_calendar_time_match_solve_ivp_at_constant_injection():
    # Independent: integrate the layers in days at 800 bbl/d with the common Δp eliminated
    # (q_i = q_t (k_i h_i / R_i) / Σ k h / R, R_i = x_i/λw + (1 - x_i)/λo) and compare x_i(t).
    res = study(layers={"method": "dykstra_parsons", "table": TABLE5})
    lr = res.layers
    k, h, phi = lr.layers.permeability_md, lr.layers.thickness_ft, lr.layers.porosity
    lam_w, lam_o = 0.35 / 0.6, 0.90 / 3.0
    vp_move = 7758.0 * 40.0 * h * phi * (1 - 0.2 - 0.25)   # movable pore volume per layer [rb]
    q_t = 800.0 * 1.02                                     # rb/d

    def rhs(t, x):
        xc = np.minimum(x, 1.0)
        cond = k * h / (xc / lam_w + (1.0 - xc) / lam_o)
        return np.where(x < 1.0, q_t * cond / cond.sum() / vp_move, 0.0)

    days = np.array([50.0, 400.0, 1500.0, 4000.0])
    sol = integrate.solve_ivp(rhs, (0.0, days[-1]), np.zeros(5), t_eval=days, rtol=1e-10, atol=1e-12,
                              max_step=5.0)
    assert np.allclose(lr.front_positions(days), np.minimum(sol.y.T, 1.0), rtol=1e-5, atol=1e-6)


# ----------------------------------------------------------------------------------------------
# Permeability variation [SH Fig. 5-163; TD Eqs. 3.113-3.115]


@pytest.mark.parametrize("v", [0.0, 0.3, 0.5, 0.7, 0.85])
def test_generated_layers_have_v_equal_one_minus_exp_minus_sigma(v):
    # V = 1 - exp(-σ) for log-normal k [SH Fig. 5-163; TD Eq. 3.115]; k50 and k84.1 read from
    # scipy.stats.lognorm (independent): k84.1 is exceeded by Φ(1) = 84.13 % of the thickness.
    sigma = -np.log1p(-v)
    h, k = generate_layers(v, 2000, 120.0, 30.0)
    assert np.allclose(h, 30.0 / 2000)
    dist = stats.lognorm(s=max(sigma, 1e-300), scale=120.0)
    k50, k841 = dist.median(), dist.ppf(stats.norm.sf(1.0))
    assert (k50 - k841) / k50 == pytest.approx(v, abs=1e-12)
    # the layers sample that distribution: mid-probability quantiles are its exact quantiles
    p = (np.arange(2000) + 0.5) / 2000
    assert np.allclose(k, dist.isf(p), rtol=1e-10)
    fit = estimate_variation(k, h)
    assert fit.v == pytest.approx(v, abs=1e-10)
    assert fit.sigma_ln == pytest.approx(sigma, abs=1e-10)
    assert np.std(np.log(k)) == pytest.approx(sigma, rel=2e-3, abs=1e-12)  # sample σ -> σ as n grows


def test_variation_fit_follows_the_definition_with_an_independent_regression():
    # V = (k50 - k84.1)/k50 on the least-squares log-probability line [SH Fig. 5-163]; the line is
    # refitted with scipy.stats.linregress on the same plotting positions (equal thickness).
    k = np.array([12.0, 850.0, 95.0, 40.0, 310.0, 160.0, 66.0, 520.0, 23.0, 130.0])
    fit = estimate_variation(k)
    ks = np.sort(k)[::-1]
    z = stats.norm.ppf((np.arange(10) + 0.5) / 10)
    lr = stats.linregress(z, np.log(ks))
    k50, k841 = np.exp(lr.intercept), np.exp(lr.intercept + lr.slope)
    assert fit.k50 == pytest.approx(k50, rel=1e-12)
    assert fit.k84_1 == pytest.approx(k841, rel=1e-12)
    assert fit.v == pytest.approx((k50 - k841) / k50, rel=1e-12)
    assert fit.r_squared == pytest.approx(lr.rvalue ** 2, rel=1e-12)
    assert 0.5 < fit.v < 0.9  # typical V "often about 0.5 to 0.8" [SH]; this invented sample sits there


def test_thickness_weighted_fit_matches_numpy_weighted_polyfit():
    # Thickness-weighted ranks: each sample plotted mid-band of its thickness; weighted least squares
    # checked with numpy.polyfit (weights sqrt(h) on the residuals).
    k = np.array([400.0, 90.0, 250.0, 30.0, 150.0])
    h = np.array([2.0, 6.0, 3.0, 1.0, 8.0])
    fit = estimate_variation(k, h)
    order = np.argsort(-k)
    w = h[order] / h.sum()
    p = np.cumsum(w) - w / 2
    slope, intercept = np.polyfit(stats.norm.ppf(p), np.log(k[order]), 1, w=np.sqrt(w))
    assert fit.k50 == pytest.approx(np.exp(intercept), rel=1e-10)
    assert fit.v == pytest.approx(1 - np.exp(slope), rel=1e-10)


def test_single_value_has_zero_variation():
    fit = estimate_variation([75.0])
    assert fit.v == 0.0 and fit.k50 == pytest.approx(75.0, rel=1e-14) and np.isnan(fit.r_squared)


# ----------------------------------------------------------------------------------------------
# Layered fractional flow: independent checks of the resistance integral and the layer split


def test_layer_resistance_matches_gauss_legendre_along_the_buckley_leverett_profile():
    # I(Q) = ∫ dx / λt(Sw(x, Q)) in distance x on FrontSolution.profile, 5-point Gauss-Legendre on
    # every piece between the profile's wave nodes (numpy's leggauss; independent of flood's integral
    # K(v) over wave speed); before and after breakthrough.
    res = study(layers={"method": "layered_fractional_flow", "variation": {"v": 0.5, "count": 3}})
    sol = res.solution
    disp = fractional_flow_displacement(sol)
    rp = sol.relperm
    g, w = np.polynomial.legendre.leggauss(5)

    for q in (0.05, 0.5 * sol.breakthrough_pvi, sol.breakthrough_pvi, 0.4, 1.0, 3.0, 20.0):
        front = min(q / sol.breakthrough_pvi, 1.0)
        edges = np.unique(np.concatenate(([0.0, front, 1.0], np.clip(q * sol.wave_speed, 0.0, front))))
        a, b = edges[:-1, None], edges[1:, None]
        x = 0.5 * (a + b) + 0.5 * (b - a) * g
        krw, kro = rp.kr(sol.profile(x, q))   # Gauss nodes are interior: never on the front itself
        ref = np.sum(0.5 * (b - a) * w / (krw / 0.6 + kro / 3.0))
        assert float(disp.resistance(q)) == pytest.approx(ref, rel=2e-5)


def test_layered_fractional_flow_matches_an_independent_ode_in_days():
    # Independent: dQ_i/dt = q_t (k_i h_i / I_i) / Σ(k h / I) / Vp_i with I_i by the trapezoid rule on a
    # 20001-point profile (flood's J(Q) tables are not used); compare each layer's PVI in days.
    res = study(layers={"method": "layered_fractional_flow", "table": TABLE5[:3]})
    lr = res.layers
    sol = res.solution
    rp = sol.relperm
    k, h, phi = lr.layers.permeability_md, lr.layers.thickness_ft, lr.layers.porosity
    vp = 7758.0 * 40.0 * h * phi
    x = np.linspace(0.0, 1.0, 20001)

    def resistance(q):
        krw, kro = rp.kr(sol.profile(x, q))
        return integrate.trapezoid(1.0 / (krw / 0.6 + kro / 3.0), x)

    def rhs(t, q):
        cond = k * h / np.array([resistance(max(qi, 1e-12)) for qi in q])
        return 800.0 * 1.02 * cond / cond.sum() / vp

    days = np.array([200.0, 900.0, 2500.0])
    ref = integrate.solve_ivp(rhs, (0.0, days[-1]), np.zeros(3), t_eval=days, rtol=1e-7, atol=1e-10).y.T
    assert np.allclose(lr.layer_pvi(days), ref, rtol=2e-4)


# ----------------------------------------------------------------------------------------------
# Consistency


def _single_layer(method, **kw):
    return study(layers={"method": method, "table": [{"thickness_ft": 30.0, "permeability_md": 120.0}]}, **kw)


PISTON_SATS = {"swc": 0.2, "sor": 0.2, "swi": 0.2}


@pytest.mark.parametrize("method,kw", [
    ("layered_fractional_flow", {}),
    ("layered_fractional_flow", {"relperm": PISTON_TABLE, "saturations": PISTON_SATS}),
    ("dykstra_parsons", {"relperm": PISTON_M05, "fluids": {"mu_w_cp": 1.0, "mu_o_cp": 1.0}})])
def test_single_layer_reproduces_the_homogeneous_forecast(method, kw):
    # One layer carries all the flow: Buckley-Leverett/Welge of the homogeneous case [BL1942, WELGE1952]
    # (Dykstra-Parsons only with a piston-like front, i.e. convex fw).
    homo = study(**kw)
    lay = _single_layer(method, **kw)
    for key in ("pore_volume_rb", "ooip_stb", "breakthrough_pvi", "breakthrough_days", "front_water_cut",
                "average_saturation_at_breakthrough", "recovery_factor_at_breakthrough", "economic_limit_pvi",
                "recovery_factor_at_economic_limit", "forecast_end_pvi"):
        assert lay.summary[key] == pytest.approx(homo.summary[key], rel=1e-6), key
    assert lay.summary["dykstra_parsons_v"] == 0.0
    assert list(lay.table.columns) == list(homo.table.columns)
    assert len(lay.table) == len(homo.table)
    for col in homo.table.columns:
        # atol 1e-4 (STB): the layered rows sit 1e-12 PV after a breakthrough jump
        ref = homo.table[col].to_numpy()
        scale = np.max(np.abs(ref[np.isfinite(ref)]))   # WOR is inf once a piston front is through
        assert np.allclose(lay.table[col], ref, rtol=1e-5, atol=max(1e-4, 1e-6 * scale)), col


@pytest.mark.parametrize("relperm,fluids", [(PISTON_M05, {"mu_w_cp": 1.0, "mu_o_cp": 1.0}),
                                            (PISTON_TABLE, {"mu_w_cp": 0.5, "mu_o_cp": 1.5})])
def test_layered_fractional_flow_with_piston_like_relperm_reproduces_dykstra_parsons(relperm, fluids):
    # Issue requirement: with a piston-like front each layer holds only Swi and 1 - Sor, so the layered
    # fractional-flow forecast must equal the Dykstra-Parsons one [DP1950] (M = 0.5 and M = 1.5).
    kw = dict(relperm=relperm, fluids=fluids, saturations=PISTON_SATS)
    dp = study(layers={"method": "dykstra_parsons", "table": TABLE5}, **kw)
    ff = study(layers={"method": "layered_fractional_flow", "table": TABLE5}, **kw)
    assert ff.solution.front_saturation == pytest.approx(0.8, abs=1e-12)   # piston-like indeed
    for col in ("vertical_coverage", "fw_reservoir", "pvi", "days", "cum_oil_stb"):
        assert np.allclose(ff.layers.breakthrough_table[col], dp.layers.breakthrough_table[col], rtol=1e-7), col
    for col in ("water_cut", "cum_oil_stb", "cum_water_stb", "oil_rate_stb_d"):
        assert np.allclose(ff.table[col], dp.table[col], rtol=1e-6, atol=1e-6), col


@pytest.mark.parametrize("method", ["dykstra_parsons", "layered_fractional_flow"])
def test_coverage_rises_monotonically_to_one(method):
    res = study(layers={"method": method, "variation": {"v": 0.75, "count": 20}}, limits={"max_pvi": 100.0})
    bt = res.layers.breakthrough_table
    assert np.all(np.diff(bt["vertical_coverage"]) > 0)
    assert bt["vertical_coverage"].iloc[-1] == pytest.approx(1.0, abs=1e-12)
    assert list(bt["layers_broken_through"]) == list(range(1, 21))
    cov = res.layers.coverage_table["vertical_coverage"].to_numpy()
    assert cov[0] == 0.0 and np.all(np.diff(cov) >= -1e-12) and cov[-1] <= 1.0
    assert np.all(np.diff(bt["pvi"]) > 0) and np.all(np.diff(bt["cum_oil_stb"]) > 0)


@pytest.mark.parametrize("method", ["dykstra_parsons", "layered_fractional_flow"])
def test_material_balance_of_the_summed_layers(method):
    # Incompressible flow: injected = oil produced + water produced (reservoir volumes); rates
    # integrated over time give the cumulatives; layer injections sum to the field's.
    res = run_study(build_case(parse_scenario(scenario(
        layers={"method": method, "table": TABLE5}))), points=3000)
    t = res.table
    bo, bw = 1.15, 1.02
    assert np.allclose(t.cum_injected_stb * bw, t.cum_oil_stb * bo + t.cum_water_stb * bw, rtol=1e-9, atol=1e-3)
    np_rate = integrate.cumulative_trapezoid(t.oil_rate_stb_d, t.days, initial=0.0)
    assert np.allclose(np_rate, t.cum_oil_stb, rtol=2e-3, atol=1e-3 * t.cum_oil_stb.iloc[-1])
    lr = res.layers
    days = t.days.to_numpy()[1::300]
    q = lr.layer_pvi(days)
    injected = (q * lr.layer_table["pore_volume_rb"].to_numpy()).sum(axis=1) / bw
    assert np.allclose(injected, t.cum_injected_stb.to_numpy()[1::300], rtol=1e-8)
    assert np.allclose(lr.injection_shares(days).sum(axis=1), 1.0)


def test_heterogeneity_brings_water_earlier_and_dykstra_parsons_differs_from_fractional_flow():
    homo = study()
    runs = {v: study(layers={"method": "layered_fractional_flow", "variation": {"v": v, "count": 10}})
            for v in (0.3, 0.6, 0.8)}
    bts = [homo.summary["breakthrough_pvi"]] + [r.summary["breakthrough_pvi"] for r in runs.values()]
    assert all(a > b for a, b in zip(bts, bts[1:]))   # common practice: higher V, earlier water
    dp = study(layers={"method": "dykstra_parsons", "variation": {"v": 0.6, "count": 10}})
    assert dp.summary["dykstra_parsons_v"] == pytest.approx(0.6, abs=1e-12)
    assert dp.summary["front_saturation"] == pytest.approx(0.75)   # 1 - Sor behind a piston front
    assert dp.summary["recovery_factor_at_breakthrough"] != pytest.approx(
        runs[0.6].summary["recovery_factor_at_breakthrough"], rel=1e-3)
