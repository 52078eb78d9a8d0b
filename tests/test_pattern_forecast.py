"""Pattern forecast = stream tubes (areal sweep) x Buckley-Leverett/Welge displacement (x layers)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from flood.errors import FloodInputError
from flood.forecast import forecast_table
from flood.numerical.sweep import ArealSweepResult, streamline_sweep
from flood.pattern_forecast import pattern_forecast, stream_tubes
from flood.scenario import build_case, parse_scenario


@pytest.fixture
def case(demo_dict):
    return build_case(parse_scenario(demo_dict))


def _one_tube():
    curve = pd.DataFrame({"pvi": [0.0, 1.0], "areal_sweep": [0.0, 1.0], "fd": [0.0, 1.0]})
    return ArealSweepResult("linear", None, 1.0, "test", None, 1.0, 1.0, curve, 0.0,
                            tube_flux=np.array([1.0]), tube_time=np.array([1.0]))


def test_single_tube_reproduces_the_linear_forecast(case):
    """One tube of the whole pore volume is the 1D Welge forecast (independent path: forecast_table)."""
    pf = pattern_forecast(case, _one_tube(), points=50, end_pvi=2.0)
    lin = forecast_table(case, points=50, end_pvi=2.0)
    rf = np.interp(pf["pvi"], lin["pvi"], lin["recovery_factor"])
    assert np.allclose(pf["recovery_factor"], rf, atol=1e-6)


def test_pattern_recovers_less_early_and_converges_late(case):
    sweep = streamline_sweep("five_spot", cells=50, lines=1000)
    pf = pattern_forecast(case, sweep, points=60, end_pvi=6.0)
    lin = pattern_forecast(case, _one_tube(), points=60, end_pvi=6.0)
    assert np.all(pf["recovery_factor"].to_numpy()[1:] <= lin["recovery_factor"].to_numpy()[1:] + 1e-9)
    assert pf["recovery_factor"].iloc[-1] == pytest.approx(lin["recovery_factor"].iloc[-1], abs=0.02)
    assert np.all(np.diff(pf["days"]) > 0)


def test_tubes_from_curve_keep_volume():
    from flood.areal_sweep import correlation_sweep

    w, tau = stream_tubes(correlation_sweep("five_spot", mobility_ratio=2.0), tubes=400)
    assert w.sum() == pytest.approx(1.0) and np.sum(w * tau) == pytest.approx(1.0)


def test_equal_layers_equal_one_layer(case):
    sweep = _one_tube()
    a = pattern_forecast(case, sweep, points=30, layers=[(100.0, 10.0), (100.0, 20.0)])
    b = pattern_forecast(case, sweep, points=30)
    assert np.allclose(a["recovery_factor"], b["recovery_factor"])
    c = pattern_forecast(case, sweep, points=30, layers=[(300.0, 10.0), (30.0, 10.0)])
    assert c["recovery_factor"].iloc[10] < b["recovery_factor"].iloc[10]  # layering delays recovery


def test_errors(case):
    with pytest.raises(FloodInputError, match=r"layers = .*rows of \(permeability_md > 0, thickness_ft > 0\)"):
        pattern_forecast(case, _one_tube(), layers=[(-1.0, 2.0)])


@pytest.mark.parametrize("method", ["layered_fractional_flow", "dykstra_parsons"])
def test_one_tube_with_scenario_layers_is_the_layered_forecast(method):
    """With the scenario's layers and a single tube (linear flow) the pattern forecast must be the
    layered engine's own forecast (itself checked against Dykstra & Parsons 1950 in test_layers)."""
    import json
    from pathlib import Path

    from flood.layers import layered_study
    from flood.scenario import load_scenario

    src = Path(__file__).resolve().parent.parent / "sample_data" / "demo_layered_scenario.json"
    d = json.loads(src.read_text())
    d["layers"]["method"] = method
    d["layers"]["file"] = str(src.parent / d["layers"]["file"])
    case = build_case(parse_scenario(d))
    ref = layered_study(case).forecast
    pf = pattern_forecast(case, _one_tube(), points=80, end_pvi=float(ref["pvi"].iloc[-1]))
    rf = np.interp(pf["pvi"], ref["pvi"], ref["recovery_factor"])
    assert np.allclose(pf["recovery_factor"], rf, atol=1e-4)
    cut = np.interp(pf["pvi"], ref["pvi"], ref["water_cut"])
    # the cut jumps at each layer breakthrough: compare away from the jumps
    assert np.median(np.abs(pf["water_cut"] - cut)) < 1e-4


def test_forecast_sweep_replaces_a_two_phase_run_by_the_piston_sweep_at_m_bt(case):
    """A two-phase finite-volume sweep already holds the displacement the tubes add again, so the
    tubes come from the piston-like run at M behind the front (Craig 1971, from memory)."""
    from flood.displacement import breakthrough_mobility_ratio
    from flood.numerical.sweep import numerical_sweep
    from flood.pattern_forecast import forecast_sweep

    piston = numerical_sweep("five_spot", mobility_ratio=2.0, cells=12, max_pvi=1.0, points=11)
    assert forecast_sweep(case, piston) is piston
    two_phase = numerical_sweep("five_spot", relperm=case.relperm, mu_w=case.mu_w, mu_o=case.mu_o,
                                swi=case.swi, cells=12, max_pvi=1.0, points=11)
    assert two_phase.pvi_basis == "total"
    tubes = forecast_sweep(case, two_phase)
    assert tubes.pvi_basis == "displaceable" and tubes.cells == 12 and tubes.stencil == two_phase.stencil
    assert tubes.mobility_ratio == pytest.approx(
        breakthrough_mobility_ratio(case.relperm, case.mu_w, case.mu_o, case.swi, case.gravity))


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(m=st.floats(0.1, 10.0), mu_o=st.floats(0.3, 30.0), nw=st.floats(1.0, 4.0))
def test_pattern_forecast_material_balance_property(demo_dict, m, mu_o, nw):
    """Any correlation sweep and any Corey case: recovery never exceeds the movable oil
    (1 - Swi - Sor)/(1 - Swi), never falls, fw stays in [0, 1], and the oil produced equals the
    injection minus the water produced (incompressible material balance, common practice)."""
    from flood.areal_sweep import correlation_sweep

    d = dict(demo_dict)
    d["fluids"] = dict(d["fluids"], mu_o_cp=mu_o)
    d["relperm"] = dict(d["relperm"], nw=nw)
    case = build_case(parse_scenario(d))
    pf = pattern_forecast(case, correlation_sweep("five_spot", mobility_ratio=m), points=120, end_pvi=4.0)
    rf, fw, pvi = pf["recovery_factor"].to_numpy(), pf["fw_reservoir"].to_numpy(), pf["pvi"].to_numpy()
    assert np.all(np.diff(rf) >= -1e-12)
    assert rf[-1] <= (1 - case.swi - case.sor) / (1 - case.swi) + 1e-9
    assert np.all((fw >= -1e-12) & (fw <= 1 + 1e-12))
    # d(oil in PV)/dW = 1 - fw: integrate the water cut and compare with the recovery column
    oil_pv = np.concatenate(([0.0], np.cumsum(np.diff(pvi) * 0.5 * ((1 - fw[1:]) + (1 - fw[:-1])))))
    assert np.allclose(oil_pv / (1 - case.swi), rf, atol=0.02)
