"""Buckley-Leverett / Welge displacement checked against closed forms and independent methods.

Sources
-------
[BL1942] Buckley & Leverett, 1942, Trans. AIME 146.  [WELGE1952] Welge, 1952, Trans. AIME 195.
[SH] Lyons (ed.), 1996, Standard Handbook of Petroleum & Natural Gas Engineering, Eqs. 5-213, 5-214.
Closed forms for quadratic Corey curves and straight-line curves are derived from the tangent
condition / method of characteristics (see the test docstrings).
"""

from __future__ import annotations

import csv
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import integrate, optimize

from flood.displacement import breakthrough_mobility_ratio, buckley_leverett, welge_tangent
from flood.errors import FloodInputError
from flood.fractional_flow import fractional_flow, fractional_flow_derivative
from flood.relative_permeability import Corey

CASES = list(csv.DictReader(open(Path(__file__).parent / "data" / "closed_form_buckley_leverett.csv")))


@pytest.mark.parametrize("row", CASES, ids=[c["case_id"] for c in CASES])
def test_quadratic_corey_closed_form(row):
    """Closed form, nw = no = 2, any residuals: S_f = 1/sqrt(1+M), fw_f = M/(2(M+1)(1-S_f)),
    breakthrough = 2(sqrt(1+M)-1)/M movable PV (tangent condition S^2(1+1/M) = 1/M)."""
    p = {k: float(row[k]) for k in ("swc", "sor", "krw_max", "kro_max", "mu_w", "mu_o")}
    rp = Corey(p["swc"], p["sor"], p["krw_max"], p["kro_max"], 2.0, 2.0)
    m = (p["krw_max"] / p["mu_w"]) / (p["kro_max"] / p["mu_o"])
    sol = buckley_leverett(rp, p["mu_w"], p["mu_o"])
    span = 1.0 - p["swc"] - p["sor"]
    s_f = 1.0 / np.sqrt(1.0 + m)
    assert (sol.front_saturation - p["swc"]) / span == pytest.approx(s_f, rel=1e-10)
    assert sol.front_fw == pytest.approx(m / (2.0 * (m + 1.0) * (1.0 - s_f)), rel=1e-10)
    assert sol.breakthrough_pvi == pytest.approx(2.0 * (np.sqrt(1.0 + m) - 1.0) / m * span, rel=1e-10)


def test_quadratic_m1_printed_values():
    """M = 1 values as printed in the published-check notes: 0.707107, 0.853553, 0.828427 (6 d.p.)."""
    sol = buckley_leverett(Corey(0.0, 0.0, 1.0, 1.0, 2.0, 2.0), 1.0, 1.0)
    assert sol.front_saturation == pytest.approx(0.707107, abs=5e-7)
    assert sol.front_fw == pytest.approx(0.853553, abs=5e-7)
    assert sol.breakthrough_pvi == pytest.approx(0.828427, abs=5e-7)


@pytest.mark.parametrize("m", [0.1, 0.5, 1.0])
def test_straight_line_piston_for_m_at_most_one(m):
    """Straight-line kr (krw = S, kro = 1 - S), M <= 1: fw convex, piston-like, breakthrough at 1 PV
    (method of characteristics; [BL1942])."""
    sol = buckley_leverett(Corey(0.0, 0.0, 1.0, 1.0, 1.0, 1.0), 1.0, m)
    assert sol.front_saturation == pytest.approx(1.0)
    assert sol.breakthrough_pvi == pytest.approx(1.0, rel=1e-9)
    assert sol.outlet_saturation(1.5) == pytest.approx(1.0)
    assert sol.average_saturation(2.0) == pytest.approx(1.0)


@pytest.mark.parametrize("m", [2.0, 4.0, 10.0])
def test_straight_line_spreading_for_m_above_one(m):
    """Straight-line kr, M > 1: fw concave, pure spreading wave, breakthrough at 1/M PV and outlet
    S2 = (sqrt(rQ) - r)/(1 - r), r = 1/M (method of characteristics)."""
    sol = buckley_leverett(Corey(0.0, 0.0, 1.0, 1.0, 1.0, 1.0), 1.0, m)
    assert sol.front_saturation == pytest.approx(0.0, abs=1e-12)
    assert sol.breakthrough_pvi == pytest.approx(1.0 / m, rel=1e-6)
    r = 1.0 / m
    q = np.linspace(1.0 / m + 1e-3, m, 25)
    expected = np.minimum((np.sqrt(r * q) - r) / (1.0 - r), 1.0)
    np.testing.assert_allclose(sol.outlet_saturation(q), expected, atol=1e-9)


COREY_SET = [
    # swc, sor, krw_max, kro_max, nw, no, mu_w, mu_o, swi
    (0.2, 0.25, 0.35, 0.9, 2.5, 2.0, 0.6, 3.0, 0.2),
    (0.15, 0.3, 0.5, 1.0, 3.0, 1.5, 0.5, 20.0, 0.15),
    (0.25, 0.2, 0.2, 0.8, 4.0, 3.0, 1.0, 0.8, 0.25),
    (0.2, 0.25, 0.35, 0.9, 2.5, 2.0, 0.6, 3.0, 0.32),  # mobile initial water
    (0.1, 0.15, 0.6, 0.7, 1.5, 4.0, 0.4, 60.0, 0.1),
]


@pytest.mark.parametrize("case", COREY_SET)
def test_tangent_against_independent_scipy_maximisation(case):
    """Independent method: maximise the chord slope (fw(S) - fw(Swi))/(S - Swi) with scipy's
    bounded minimize_scalar, then polish the tangent condition fw'(S)(S - Swi) = fw - fwi
    with brentq using a finite-difference fw' (engine uses analytic fw' + bisection/Brent)."""
    swc, sor, krw, kro, nw, no, mu_w, mu_o, swi = case
    rp = Corey(swc, sor, krw, kro, nw, no)
    fwi = float(fractional_flow(rp, swi, mu_w, mu_o))
    chord = lambda s: -(float(fractional_flow(rp, s, mu_w, mu_o)) - fwi) / (s - swi)
    grid = np.linspace(swi + 1e-4, 1 - sor, 2000)
    s0 = grid[np.argmin([chord(s) for s in grid])]
    res = optimize.minimize_scalar(chord, bounds=(max(swi + 1e-6, s0 - 0.01), min(1 - sor, s0 + 0.01)),
                                   method="bounded", options={"xatol": 1e-12})
    h = 1e-7
    dfw = lambda s: (float(fractional_flow(rp, s + h, mu_w, mu_o)) - float(fractional_flow(rp, s - h, mu_w, mu_o))) / (2 * h)
    g = lambda s: dfw(s) * (s - swi) - (float(fractional_flow(rp, s, mu_w, mu_o)) - fwi)
    root = optimize.brentq(g, max(swi + 1e-6, res.x - 0.02), min(1 - sor - 1e-9, res.x + 0.02), xtol=1e-14)
    sol = buckley_leverett(rp, mu_w, mu_o, swi)
    assert sol.front_saturation == pytest.approx(root, abs=1e-7)
    # breakthrough PVI = 1/fw'(Swf) (Welge 1952) with the independent derivative
    assert sol.breakthrough_pvi == pytest.approx(1.0 / dfw(root), rel=1e-5)


@pytest.mark.parametrize("case", COREY_SET)
def test_outlet_saturation_against_brentq(case):
    """Outlet saturation after breakthrough solves fw'(S2) = 1/PVI [BL1942]; independent brentq
    on a finite-difference derivative."""
    swc, sor, krw, kro, nw, no, mu_w, mu_o, swi = case
    rp = Corey(swc, sor, krw, kro, nw, no)
    sol = buckley_leverett(rp, mu_w, mu_o, swi)
    h = 1e-7
    dfw = lambda s: (float(fractional_flow(rp, s + h, mu_w, mu_o)) - float(fractional_flow(rp, s - h, mu_w, mu_o))) / (2 * h)
    for pvi in (sol.breakthrough_pvi * 1.2, 1.0, 2.0, 3.0):
        if pvi <= sol.breakthrough_pvi:
            continue
        s2 = optimize.brentq(lambda s: dfw(s) - 1.0 / pvi, sol.front_saturation, 1 - sor - 1e-9, xtol=1e-14)
        assert float(sol.outlet_saturation(pvi)) == pytest.approx(s2, abs=1e-6)


@pytest.mark.parametrize("case", COREY_SET)
def test_welge_average_equals_integrated_profile(case):
    """Welge's identity: the average saturation over the length equals the integral of the
    Buckley-Leverett profile Sw(xD) (scipy quad, independent of the Welge formula), before and
    after breakthrough [WELGE1952; SH Eqs. 5-213, 5-214]."""
    swc, sor, krw, kro, nw, no, mu_w, mu_o, swi = case
    rp = Corey(swc, sor, krw, kro, nw, no)
    sol = buckley_leverett(rp, mu_w, mu_o, swi, wave_points=4001)
    for pvi in (0.5 * sol.breakthrough_pvi, sol.breakthrough_pvi, 1.0, 2.5):
        xf = min(pvi / sol.breakthrough_pvi, 1.0)
        pts = [xf] if xf < 1.0 else None
        integral, _ = integrate.quad(lambda x: float(sol.profile(x, pvi)), 0.0, 1.0, points=pts, limit=400,
                                     epsabs=1e-9)
        assert float(sol.average_saturation(pvi)) == pytest.approx(integral, abs=2e-6)


def test_welge_breakthrough_identities():
    """Swbar_bt - Swi = 1/fw'(Swf) = (Swf - Swi)/fw(Swf) with Swi = Swc [SH Eq. 5-213; WELGE1952]."""
    rp = Corey(0.2, 0.25, 0.35, 0.9, 2.5, 2.0)
    sol = buckley_leverett(rp, 0.6, 3.0)
    d = float(fractional_flow_derivative(rp, sol.front_saturation, 0.6, 3.0))
    assert sol.average_saturation_at_breakthrough - 0.2 == pytest.approx(1.0 / d, rel=1e-9)
    assert sol.average_saturation_at_breakthrough - 0.2 == pytest.approx(
        (sol.front_saturation - 0.2) / sol.front_fw, rel=1e-12)
    # after breakthrough: Swbar = Sw2 + (1 - fw2)/fw'(Sw2) [SH Eq. 5-214]
    s2 = float(sol.outlet_saturation(2.0))
    fw2 = float(fractional_flow(rp, s2, 0.6, 3.0))
    d2 = float(fractional_flow_derivative(rp, s2, 0.6, 3.0))
    assert float(sol.average_saturation(2.0)) == pytest.approx(s2 + (1 - fw2) / d2, rel=1e-9)


def test_welge_tangent_vectorised_matches_single_cases():
    """The batch (array) path gives the same fronts as one-case solves (regression of the engine
    against itself across code paths: bisection vs Brent)."""
    mu_o = np.array([0.5, 1.0, 3.0, 10.0, 50.0])
    rp = Corey(0.2, 0.25, 0.35, 0.9, 2.5, 2.0)
    swf, _ = welge_tangent(rp, 0.6, mu_o, 0.2)
    single = [buckley_leverett(rp, 0.6, m).front_saturation for m in mu_o]
    np.testing.assert_allclose(swf, single, atol=1e-12)


def test_second_inflection_uses_concave_envelope():
    """A fw curve with a second inflection beyond the front: the spreading wave must follow the
    upper concave envelope, so the profile stays monotone (entropy solution; Lake 1989, Ch. 5)."""
    from flood.relative_permeability import LabTable

    sw = np.array([0.2, 0.3, 0.4, 0.5, 0.55, 0.6, 0.7, 0.8])
    krw = np.array([0.0, 0.02, 0.05, 0.06, 0.25, 0.3, 0.35, 0.4])
    kro = np.array([0.9, 0.6, 0.35, 0.2, 0.12, 0.08, 0.02, 0.0])
    rp = LabTable(sw, krw, kro, 0.2, 0.2)
    sol = buckley_leverett(rp, 0.6, 3.0)
    x = np.linspace(0, 1, 500)
    prof = sol.profile(x, 0.6 * sol.breakthrough_pvi)
    assert np.all(np.diff(prof) <= 1e-12)
    # water balance of the profile still equals the injected volume (before breakthrough)
    area = integrate.trapezoid(prof - 0.2, x)
    assert area == pytest.approx(0.6 * sol.breakthrough_pvi, rel=2e-3)


@settings(max_examples=60, deadline=None)
@given(nw=st.floats(1.0, 6.0), no=st.floats(1.0, 6.0), m_log=st.floats(-1.5, 2.0),
       swc=st.floats(0.0, 0.35), sor=st.floats(0.0, 0.35))
def test_property_profile_monotone_and_balanced(nw, no, m_log, swc, sor):
    """Properties: 0 <= fw <= 1; profile non-increasing in xD; injected water equals the water
    accumulated in the profile before breakthrough (mass conservation)."""
    rp = Corey(swc, sor, 0.5, 0.9, nw, no)
    mu_w = 0.5
    mu_o = 10**m_log * mu_w * 0.9 / 0.5
    s = np.linspace(swc, 1 - sor, 200)
    fw = fractional_flow(rp, s, mu_w, mu_o)
    assert np.all((fw >= 0) & (fw <= 1))
    sol = buckley_leverett(rp, mu_w, mu_o)
    t = 0.7 * sol.breakthrough_pvi
    x = np.linspace(0, 1, 4001)
    prof = sol.profile(x, t)
    assert np.all(np.diff(prof) <= 1e-12)
    stored = integrate.trapezoid(prof - swc, x)
    assert stored == pytest.approx(t, rel=5e-3, abs=1e-4)


def test_bad_inputs():
    rp = Corey(0.2, 0.25, 0.35, 0.9, 2.5, 2.0)
    with pytest.raises(FloodInputError, match=r"saturations\.swi = 0\.8: swc = 0\.2 <= swi < 1 - sor = 0\.75"):
        buckley_leverett(rp, 0.6, 3.0, swi=0.8)
    with pytest.raises(FloodInputError, match=r"fluids\.mu_o_cp = -1.*> 0 cp"):
        buckley_leverett(rp, 0.6, -1.0)


def test_breakthrough_mobility_ratio_quadratic_closed_form():
    """Quadratic Corey, Swc = Sor = 0, equal viscosities: the tangent from the origin gives
    S̄w,bt = 1/f'(Sf) = 2(√2 - 1) (0.828427 as printed in the published-check notes), so
    M_bt = krw(S̄w,bt)/kro(0) = 4(√2 - 1)² = 12 - 8√2 (derived; definition after Craig 1971, from memory)."""
    m = breakthrough_mobility_ratio(Corey(0.0, 0.0, 1.0, 1.0, 2.0, 2.0), 1.0, 1.0, 0.0)
    assert m == pytest.approx(12.0 - 8.0 * np.sqrt(2.0), rel=1e-9)


@pytest.mark.parametrize("mu_o", [0.2, 0.5, 1.0])
def test_breakthrough_mobility_ratio_is_endpoint_for_piston(mu_o):
    """Straight lines with M <= 1 displace like a piston (S̄w,bt = 1 - Sor), so M_bt equals the
    endpoint ratio krw_end μo / (kro_end μw) (method of characteristics; [BL1942])."""
    rp = Corey(0.0, 0.0, 1.0, 1.0, 1.0, 1.0)
    assert breakthrough_mobility_ratio(rp, 1.0, mu_o) == pytest.approx(mu_o, rel=1e-9)


def test_breakthrough_mobility_ratio_against_independent_tangent():
    """Corey case with Swc = 0.2, Sor = 0.25: the Welge tangent found independently with
    scipy.optimize.brentq on f(S) - Swi-chord slope [WELGE1952], then krw at S̄w,bt."""
    rp = Corey(0.2, 0.25, 0.35, 0.9, 2.5, 2.0)
    mu_w, mu_o = 0.6, 3.0

    def f(s):
        return float(fractional_flow(rp, s, mu_w, mu_o))

    def df(s):
        return float(fractional_flow_derivative(rp, s, mu_w, mu_o))

    sf = optimize.brentq(lambda s: df(s) * (s - 0.2) - f(s), 0.3, 0.749)
    s_bar = sf + (1.0 - f(sf)) / df(sf)
    krw = 0.35 * ((s_bar - 0.2) / 0.55) ** 2.5
    expected = (krw / mu_w) / (0.9 / mu_o)
    assert breakthrough_mobility_ratio(rp, mu_w, mu_o, 0.2) == pytest.approx(expected, rel=1e-6)
