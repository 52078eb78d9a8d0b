"""Forecast: pore volume, OOIP, calendar time, rates, cumulatives and material balance.

[SH] Lyons (ed.), 1996, Standard Handbook ..., Ch. 5 (Vp = 7758 A h φ; Welge Eqs. 5-213/5-214).
[WELGE1952] Welge, 1952.
"""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import integrate

from flood.forecast import FORECAST_COLUMNS, original_oil_in_place, pore_volume
from flood.scenario import build_case, parse_scenario
from flood.study import run_study


def _case(d):
    return build_case(parse_scenario(d))


def test_pore_volume_and_ooip_by_hand(demo_dict):
    """Vp = 7758 × 40 acre × 30 ft × 0.21 = 1,955,016 rb [SH]; OOIP = Vp (1 - 0.2)/1.15 STB."""
    assert float(pore_volume(40, 30, 0.21)) == pytest.approx(1_955_016.0)
    assert float(original_oil_in_place(1_955_016.0, 0.2, 1.15)) == pytest.approx(1_955_016 * 0.8 / 1.15)
    s = run_study(_case(demo_dict)).summary
    assert s["pore_volume_rb"] == pytest.approx(1_955_016.0)
    assert s["ooip_stb"] == pytest.approx(1_955_016 * 0.8 / 1.15)


def test_breakthrough_days_constant_rate(demo_dict):
    """t_bt = PVI_bt × Vp / (Bw q) at constant rate (definition of PVI)."""
    s = run_study(_case(demo_dict)).summary
    assert s["breakthrough_days"] == pytest.approx(s["breakthrough_pvi"] * s["pore_volume_rb"] / (1.02 * 800))
    # Welge: recovery at breakthrough = (Swbar_bt - Swi)/(1 - Swi) [SH Eq. 5-213]
    assert s["recovery_factor_at_breakthrough"] == pytest.approx(
        (s["average_saturation_at_breakthrough"] - 0.2) / 0.8, rel=1e-12)


def test_summary_keys(demo_dict):
    s = run_study(_case(demo_dict)).summary
    for key in ("pore_volume_rb", "ooip_stb", "endpoint_mobility_ratio", "front_saturation", "front_water_cut",
                "breakthrough_pvi", "breakthrough_days", "average_saturation_at_breakthrough",
                "recovery_factor_at_breakthrough", "economic_limit_pvi", "economic_limit_days",
                "recovery_factor_at_economic_limit"):
        assert np.isfinite(s[key]), key
    assert s["endpoint_mobility_ratio"] == pytest.approx((0.35 / 0.6) / (0.9 / 3.0))


def test_economic_limit_reached_at_the_stated_cut(demo_dict):
    """The forecast ends where the surface water cut equals the economic limit."""
    res = run_study(_case(demo_dict))
    assert res.summary["forecast_end_reason"] == "economic water cut"
    assert res.table["water_cut"].iloc[-1] == pytest.approx(0.98, abs=1e-9)
    assert res.table["pvi"].iloc[-1] == pytest.approx(res.summary["economic_limit_pvi"])


def test_max_pvi_ends_forecast(demo_dict):
    demo_dict["limits"]["max_pvi"] = 0.8
    res = run_study(_case(demo_dict))
    assert res.summary["forecast_end_reason"] == "max_pvi"
    assert res.table["pvi"].iloc[-1] == pytest.approx(0.8)


def test_columns_and_material_balance(demo_dict):
    """Material balance after fill-up: Wi Bw = Np Bo + Wp Bw (+ Vp Sgi) to 1e-9 relative."""
    t = run_study(_case(demo_dict)).table
    assert list(t.columns)[:len(FORECAST_COLUMNS)] == list(FORECAST_COLUMNS)
    lhs = t.cum_injected_stb * 1.02
    rhs = t.cum_oil_stb * 1.15 + t.cum_water_stb * 1.02
    np.testing.assert_allclose(rhs[1:], lhs[1:], rtol=1e-9)


def test_cumulatives_equal_integrated_rates(demo_dict):
    """Independent check: integrating the rate columns over days (trapezoid, 4000 points)
    reproduces the cumulative columns computed from the Welge average."""
    res = run_study(_case(demo_dict), points=4000)
    t = res.table
    cum_oil = integrate.cumulative_trapezoid(t.oil_rate_stb_d, t.days, initial=0.0)
    cum_w = integrate.cumulative_trapezoid(t.water_rate_stb_d, t.days, initial=0.0)
    assert cum_oil[-1] == pytest.approx(t.cum_oil_stb.iloc[-1], rel=2e-4)
    assert cum_w[-1] == pytest.approx(t.cum_water_stb.iloc[-1], rel=2e-3)


def test_schedule_converts_pvi_to_days(demo_dict):
    """Step schedule: 400 bbl/d for 500 days, shut in 100 days, then 1000 bbl/d."""
    demo_dict["injection"] = {"schedule": [[0, 400], [500, 0], [600, 1000]]}
    res = run_study(_case(demo_dict))
    vp = res.summary["pore_volume_rb"]
    w_bt = res.summary["breakthrough_pvi"] * vp / 1.02
    expected = 600 + (w_bt - 400 * 500) / 1000 if w_bt > 200_000 else w_bt / 400
    assert res.summary["breakthrough_days"] == pytest.approx(expected)
    # rates follow the schedule
    t = res.table
    assert set(np.unique(t.injection_rate_bwpd)) <= {400.0, 1000.0}


def test_gas_fill_up_delays_oil(demo_dict):
    """sgi > 0: no oil until injected water fills the gas space (fill-up at PVI = sgi); afterwards
    oil rate = injection rate (Bw/Bo) until breakthrough (Craig 1971, from memory)."""
    demo_dict["saturations"]["sgi"] = 0.05
    res = run_study(_case(demo_dict))
    t = res.table
    before = t[t.pvi < 0.05]
    assert (before.oil_rate_stb_d == 0).all() and (before.cum_oil_stb == 0).all()
    mid = t[(t.pvi > 0.05) & (t.pvi < res.summary["breakthrough_pvi"])]
    np.testing.assert_allclose(mid.oil_rate_stb_d, 800 * 1.02 / 1.15)
    assert res.summary["fill_up_days"] == pytest.approx(0.05 * res.summary["pore_volume_rb"] / (1.02 * 800))
    lhs = t.cum_injected_stb * 1.02
    rhs = t.cum_oil_stb * 1.15 + t.cum_water_stb * 1.02 + 0.05 * res.summary["pore_volume_rb"]
    after = t.pvi >= 0.05
    np.testing.assert_allclose(rhs[after], lhs[after], rtol=1e-9)


def test_mobile_initial_water_produces_water_from_the_start(demo_dict):
    demo_dict["saturations"]["swi"] = 0.3
    res = run_study(_case(demo_dict))
    t = res.table
    assert t.water_cut.iloc[1] > 0
    assert res.summary["breakthrough_pvi"] > 0


@settings(max_examples=40, deadline=None)
@given(nw=st.floats(1.0, 5.0), no=st.floats(1.0, 5.0), mu_o=st.floats(0.3, 200.0),
       swi_extra=st.floats(0.0, 0.1), rate=st.floats(50, 5000), sgi=st.floats(0.0, 0.08))
def test_property_forecast(nw, no, mu_o, swi_extra, rate, sgi):
    """Properties: recovery non-decreasing and never above the movable oil; surface water cut
    non-decreasing and in [0, 1]; material balance to 1e-9 relative after fill-up."""
    d = {"name": "property", "reservoir": {"area_acres": 20, "thickness_ft": 15, "porosity": 0.2,
                                            "permeability_md": 50},
         "saturations": {"swc": 0.2, "sor": 0.25, "swi": 0.2 + swi_extra, "sgi": sgi if swi_extra == 0 else 0.0},
         "relperm": {"model": "corey", "krw_max": 0.4, "kro_max": 0.9, "nw": nw, "no": no},
         "fluids": {"mu_w_cp": 0.5, "mu_o_cp": mu_o, "bo_rb_stb": 1.2, "bw_rb_stb": 1.01},
         "injection": {"rate_bwpd": rate}, "limits": {"economic_water_cut": 0.99, "max_pvi": 5.0}}
    from flood.errors import FloodInputError
    try:
        res = run_study(_case(d))
    except FloodInputError as exc:  # fill-up not before breakthrough is rejected, by design
        assert "fill-up" in str(exc)
        return
    t = res.table
    sc = d["saturations"]
    rf = t.recovery_factor.to_numpy()
    assert np.all(np.diff(rf) >= -1e-12)
    movable = (1 - sc["sor"] - sc["swi"] - sc["sgi"]) / (1 - sc["swi"] - sc["sgi"])
    assert rf.max() <= movable + 1e-12
    wc = t.water_cut.to_numpy()
    assert np.all(np.diff(wc) >= -1e-12) and wc.min() >= 0 and wc.max() <= 1
    after = t.pvi.to_numpy() > sc["sgi"]
    vp = res.summary["pore_volume_rb"]
    lhs = t.cum_injected_stb.to_numpy() * 1.01
    rhs = t.cum_oil_stb.to_numpy() * 1.2 + t.cum_water_stb.to_numpy() * 1.01 + sc["sgi"] * vp
    np.testing.assert_allclose(rhs[after], lhs[after], rtol=1e-9)


def test_fill_up_after_breakthrough_is_rejected(demo_dict):
    from flood.errors import FloodInputError

    demo_dict["saturations"]["sgi"] = 0.55
    demo_dict["saturations"]["sor"] = 0.2
    with pytest.raises(FloodInputError, match=r"saturations\.sgi = 0\.55: sgi < .*fill-up would not be complete"):
        run_study(_case(demo_dict))
