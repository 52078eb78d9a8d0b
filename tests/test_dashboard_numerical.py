"""Numerical views (cross-check, pattern sweep) called directly, without the background manager."""

import numpy as np
import plotly.graph_objects as go
import pytest
from dash import no_update

from flood.dashboard import adapter, callbacks, create_app, ids


@pytest.fixture
def demo():
    return adapter.demo_scenario()


def test_crosscheck_outputs_match_engine(demo):
    seen = []
    prof, curve, msg = callbacks.crosscheck_outputs(demo, 100, 0, 2, True, progress=seen.append)
    go.Figure(prof), go.Figure(curve)
    check = adapter.run_crosscheck(demo, 100, 0, 2, True)
    np.testing.assert_allclose(prof["data"][1]["y"], check.numerical_profiles[0])
    np.testing.assert_allclose(prof["data"][0]["y"], check.analytic_profiles[0])
    assert f"(analytic {check.breakthrough_pvi_analytic:.3f})" in msg and "100 cells" in msg
    assert seen and seen[-1] == pytest.approx(1.0) and all(0 <= f <= 1 for f in seen)


def test_capillarity_switch(demo):
    _, _, msg = callbacks.crosscheck_outputs(demo, 60, 3.0, 2.0, False)
    assert "capillarity: BrooksCoreyCapillary" in msg or "capillarity: Brooks" in msg
    _, _, off = callbacks.crosscheck_outputs(demo, 60, 0, 2.0, False)
    assert "capillarity: none" in off


@pytest.mark.parametrize("cells, pe, lam, expected", [
    (3, 0, 2, "cells = 3: a whole number 10 <= value <= 5000"),
    (50.5, 0, 2, "cells = 50.5: a whole number 10 <= value <= 5000"),
    (50, -1, 2, "entry pressure = -1: a number 0 <= value <= 1000"),
    (50, 2, 0.01, "pore-size index = 0.01: a number 0.1 <= value <= 10"),
])
def test_crosscheck_bad_inputs_message(demo, cells, pe, lam, expected):
    out = callbacks.crosscheck_outputs(demo, cells, pe, lam, False)
    assert out[0] is no_update and out[1] is no_update
    assert out[2] == "Not run: " + expected


@pytest.mark.parametrize("method", ["streamline", "numerical", "correlation"])
def test_sweep_outputs(demo, method):
    fmap, curve, msg, pattern = callbacks.sweep_outputs(demo, "five_spot", 1.0, method, 16, 0.4)
    go.Figure(fmap), go.Figure(curve), go.Figure(pattern)
    assert "areal sweep at breakthrough" in msg and "Pattern forecast: recovery" in msg
    if method == "numerical":
        assert fmap["data"][0]["type"] == "heatmap" and np.asarray(fmap["data"][0]["z"]).shape == (16, 16)
    if method == "streamline":
        # five-spot at M = 1 sweeps 0.7178 at breakthrough (Muskat's potential-flow result; issue 4 check value)
        assert "0.71" in msg or "0.72" in msg


def test_sweep_bad_input(demo):
    out = callbacks.sweep_outputs(demo, "five_spot", 1.0, "numerical", 500, 0.4)
    assert out[0] is no_update and out[3] is no_update and "cells = 500" in out[2]


def test_app_has_numerical_background_callbacks(tmp_path):
    app = create_app(str(tmp_path / "cache"))
    outputs = " ".join(app.callback_map)
    assert ids.NUM_FIGURE in outputs and ids.SWEEP_FIGURE in outputs
    layout = str(app.layout())
    assert "Numerical check" in layout


def test_sweep_shows_the_correlation_beside_it(demo):
    """Streamlines (M = 1) get the Fassihi (1986) curve at M = 1 overlaid and its value in the message;
    a two-phase finite-volume run gets the value at M behind the front (engine function) in the message."""
    from flood.areal_sweep import fassihi_areal_sweep
    from flood.displacement import breakthrough_mobility_ratio
    from flood.scenario import build_case

    _, curve, msg, _ = callbacks.sweep_outputs(demo, "five_spot", 1.0, "streamline", 40, 0.4)
    go.Figure(curve)  # plotly validates every trace property
    names = [t["name"] for t in curve["data"]]
    assert any("Fassihi" in n for n in names)
    assert f"{float(fassihi_areal_sweep('five_spot', 1.0, 0.0)):.3f} at breakthrough" in msg
    _, curve, msg, _ = callbacks.sweep_outputs(demo, "five_spot", 1.0, "numerical", 12, 0.4)
    assert not any("Fassihi" in t["name"] for t in curve["data"])
    case = build_case(adapter.parse_inline(demo))
    m_bt = breakthrough_mobility_ratio(case.relperm, case.mu_w, case.mu_o, case.swi, case.gravity)
    assert f"{float(fassihi_areal_sweep('five_spot', m_bt, 0.0)):.3f} at breakthrough" in msg
    _, _, msg, _ = callbacks.sweep_outputs(demo, "direct_line", 1.5, "streamline", 40, 0.4)
    assert "Fassihi" not in msg  # no data for d/a = 1.5


def test_pattern_forecast_figure_is_the_engine_table(demo):
    """Every number on the pattern-forecast figure comes from flood.pattern_forecast (engine), and the
    dashed lines are the linear study's own table."""
    from flood.pattern_forecast import pattern_forecast
    from flood.scenario import build_case

    *_, fig = callbacks.sweep_outputs(demo, "five_spot", 1.0, "correlation", 16, 0.4)
    case = build_case(adapter.parse_inline(demo))
    _, study = adapter.evaluate(demo)
    sweep = adapter.run_sweep(demo, "five_spot", 1.0, "correlation", 16, 0.4)
    table = pattern_forecast(case, sweep, economic_limit=True)
    np.testing.assert_allclose(fig["data"][0]["y"], table["oil_rate_stb_d"].to_numpy())
    np.testing.assert_allclose(fig["data"][1]["y"], 100 * table["water_cut"].to_numpy())
    assert fig["data"][3]["y"][-1] == pytest.approx(100 * study.table["water_cut"].iloc[-1])


def test_streamline_sweep_has_a_swept_map(demo):
    """The streamline view draws the swept cells at the chosen PVI (engine: streamline_sweep map_pvi)."""
    from flood.numerical.sweep import streamline_sweep

    fmap, *_ = callbacks.sweep_outputs(demo, "five_spot", 1.0, "streamline", 16, 0.5)
    go.Figure(fmap)
    assert fmap["data"][0]["type"] == "heatmap" and "streamlines" in fmap["layout"]["title"]["text"]
    expected = streamline_sweep("five_spot", max_pvi=3.0, map_pvi=(0.5,)).swept_maps[0.5]
    np.testing.assert_array_equal(np.asarray(fmap["data"][0]["z"]), expected)


def test_sweep_stands_when_the_pattern_forecast_cannot_be_made(demo):
    """Initial free gas: the sweep is still shown; the message says why the forecast is missing
    (the engine's own refusal: gas fill-up is not modelled in the stream tubes)."""
    import copy

    gas = copy.deepcopy(demo)
    gas["saturations"]["sgi"] = 0.05
    fmap, curve, msg, pattern = callbacks.sweep_outputs(gas, "five_spot", 1.0, "streamline", 16, 0.4)
    assert fmap is not no_update and curve is not no_update and pattern is no_update
    assert "areal sweep at breakthrough" in msg
    assert "Pattern forecast not made: saturations.sgi = 0.05" in msg
