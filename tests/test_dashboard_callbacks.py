"""Callback functions called directly (no browser): views, uploads, pins and downloads."""

import base64
import copy
import io
import json

import numpy as np
import pandas as pd
import plotly.graph_objects as go
import pytest
from dash import no_update

from flood.fractional_flow import fractional_flow
from flood.scenario import build_case, parse_scenario
from flood.study import run_study
from flood.dashboard import adapter, callbacks, figures, ids


def data_url(text: str) -> str:
    return "data:text/plain;base64," + base64.b64encode(text.encode()).decode()


@pytest.fixture
def demo():
    return adapter.demo_scenario()


@pytest.fixture
def values(demo):
    return adapter.controls_from_scenario(demo)


def _card_texts(cards):
    return {c.children[1].id: c.children[1].children for c in cards}


def test_view_of_demo_matches_engine(demo, values):
    out = callbacks.compute_view(values, demo, [], 0.3, set())
    assert set(out) == set(callbacks.VIEW_KEYS)
    engine = run_study(build_case(parse_scenario(demo)))
    cards = _card_texts(out["cards"])
    for key in adapter.SUMMARY_KEYS:
        assert cards[f"card-{key}"] == adapter.format_quantity(key, engine.summary[key])
    assert cards["card-breakthrough_pvi"] == "0.424"  # regression value of the demo (engine, 2026)
    fig = out["fig_fractional_flow"]
    fw = fractional_flow(engine.solution.relperm, np.asarray(fig["data"][0]["x"]), 0.6, 3.0)
    np.testing.assert_allclose(fig["data"][0]["y"], fw, rtol=1e-12)
    assert out["current"] == demo and out["general_message"] == ""
    assert all(m == "" for m in out["field_messages"].values())


def test_moving_mobility_ratio_changes_cards_and_figures(demo, values):
    first = callbacks.compute_view(values, demo, [], 0.3, set())
    values["mobility_ratio"] = 10.0
    out = callbacks.compute_view(values, demo, [], 0.3, {ids.box("mobility_ratio")})
    assert out["box_values"]["mu_o_cp"] == pytest.approx(10 * 0.6 * 0.9 / 0.35, rel=1e-4)
    assert "mobility_ratio" not in out["box_values"] and out["slider_values"]["mobility_ratio"] == 1.0
    assert _card_texts(out["cards"])["card-endpoint_mobility_ratio"] == "10"
    assert out["current"]["fluids"]["mu_o_cp"] == out["box_values"]["mu_o_cp"]
    # a less favourable M breaks through earlier (common practice)
    later = run_study(build_case(parse_scenario(out["current"]))).summary["breakthrough_pvi"]
    assert later < run_study(build_case(parse_scenario(first["current"]))).summary["breakthrough_pvi"]
    assert not np.allclose(out["fig_rate_cut"]["data"][1]["y"][-5:], first["fig_rate_cut"]["data"][1]["y"][-5:])


def test_changing_water_viscosity_keeps_oil_viscosity_and_moves_m(demo, values):
    values["mu_w_cp"] = 1.2
    out = callbacks.compute_view(values, demo, [], 0.3, {ids.box("mu_w_cp")})
    assert out["current"]["fluids"]["mu_o_cp"] == 3.0
    assert out["box_values"]["mobility_ratio"] == pytest.approx((0.35 / 1.2) / (0.9 / 3.0), rel=1e-3)
    assert "mu_o_cp" not in out["box_values"]


def test_moving_a_slider_sets_its_box(demo, values):
    sliders = {"mobility_ratio": 1.5, "nw": 3.3}
    out = callbacks.compute_view(values, demo, [], 0.3, {ids.slider("mobility_ratio")}, sliders)
    assert out["box_values"]["mobility_ratio"] == pytest.approx(31.62, abs=0.01)  # 10**1.5, 4 digits
    assert out["box_values"]["mu_o_cp"] == pytest.approx(31.62 * 0.6 * 0.9 / 0.35, rel=1e-4)
    out = callbacks.compute_view(values, demo, [], 0.3, {ids.slider("nw")}, sliders)
    assert out["box_values"]["nw"] == 3.3 and out["current"]["relperm"]["nw"] == 3.3
    values["nw"] = 9.0  # typed beyond the slider (the schema allows 1..10): slider pinned at its end
    out = callbacks.compute_view(values, demo, [], 0.3, {ids.box("nw")}, sliders)
    assert out["slider_values"]["nw"] == 6.0 and out["current"]["relperm"]["nw"] == 9.0


def test_bad_value_shows_inline_message_and_keeps_case(demo, values):
    values["swi"] = 0.9
    out = callbacks.compute_view(values, demo, [], 0.3, {ids.box("swi")})
    assert "saturations.swi = 0.9" in out["field_messages"]["swi"]
    assert out["current"] is no_update and out["fig_wor"] is no_update and out["cards"] is no_update


def test_profile_slider_redraws_only_profile(demo, values):
    out = callbacks.compute_view(values, demo, [], 0.5, {ids.PROFILE_PVI})
    assert out["fig_profile"] is not no_update and out["fig_wor"] is no_update
    sol = run_study(build_case(parse_scenario(demo))).solution
    fig = out["fig_profile"]
    np.testing.assert_allclose(fig["data"][0]["y"], sol.profile(np.asarray(fig["data"][0]["x"]), 0.5))


def test_pinned_cases_are_overlaid(demo, values):
    pins = adapter.pin_case([], demo, "base")
    values["nw"] = 4.0
    out = callbacks.compute_view(values, demo, pins, 0.3, {ids.box("nw")})
    names = [t["name"] for t in out["fig_recovery"]["data"]]
    assert "base" in names and any("base" in t["name"] for t in out["fig_rate_cut"]["data"])
    for key in ("fig_recovery", "fig_rate_cut", "fig_wor", "fig_fractional_flow"):
        go.Figure(out[key])  # plotly's own validation of every trace and layout key


def test_load_scenario_upload_and_rejection(demo, values):
    other = json.loads(json.dumps(demo))
    other["name"] = "Plover Flats (invented)"
    other["fluids"]["mu_o_cp"] = 12.0
    out = callbacks.load_files(ids.UPLOAD_SCENARIO, data_url(json.dumps(other)), "p.json", demo, values)
    assert out["base"]["name"] == "Plover Flats (invented)"
    assert out["boxes"]["mu_o_cp"] == 12.0
    assert out["boxes"]["mobility_ratio"] == pytest.approx((0.35 / 0.6) / (0.9 / 12.0), rel=1e-3)
    bad = callbacks.load_files(ids.UPLOAD_SCENARIO, data_url('{"name": 3}'), "bad.json", demo, values)
    assert bad["base"] is no_update and bad["boxes"] is no_update
    assert bad["msg_scenario"].startswith("Rejected: ")
    bad_csv = callbacks.load_files(ids.UPLOAD_RELPERM, data_url("sw,krw\n0.2,0\n"), "t.csv", demo, values)
    assert bad_csv["base"] is no_update and "missing kro" in bad_csv["msg_relperm"]


def test_back_to_corey(demo, values):
    table = {"model": "table", "table": [[0.2, 0.0, 0.9], [0.5, 0.1, 0.2], [0.75, 0.35, 0.0]]}
    current = dict(demo, relperm=table)
    out = callbacks.load_files(ids.COREY_BUTTON, None, None, current, values)
    assert out["base"]["relperm"] == {"model": "corey", "nw": 2.5, "no": 2.0, "krw_max": 0.35, "kro_max": 0.9}


def test_update_pins_and_table(demo):
    pins, table, msg = callbacks.update_pins(ids.PIN_BUTTON, demo, [], "first")
    assert pins[0]["label"] == "first" and "Pinned first" in msg
    pins, table, msg = callbacks.update_pins(ids.unpin(pins[0]["key"]), demo, pins, "")
    assert pins == [] and msg == "Removed."


def test_download_callback(demo):
    out = callbacks.download(ids.DOWNLOAD_CSV, demo)
    df = pd.read_csv(io.BytesIO(base64.b64decode(out["content"])))
    engine = run_study(build_case(parse_scenario(demo)), points=300).table
    np.testing.assert_allclose(df.to_numpy(), engine.to_numpy(), rtol=1e-12, atol=1e-9)
    assert callbacks.download(None, demo) is no_update


def test_figures_have_axis_titles_with_units(demo):
    _, result = adapter.evaluate(demo)
    for fig in (figures.fractional_flow_figure(result), figures.profile_figure(result, 0.2),
                figures.recovery_figure(result), figures.rate_cut_figure(result), figures.wor_figure(result)):
        go.Figure(fig)  # a valid plotly figure (plotly's own validation)
        assert "[" in fig["layout"]["xaxis"]["title"]["text"] and "[" in fig["layout"]["yaxis"]["title"]["text"]
    assert figures.wor_figure(result)["layout"]["yaxis"]["type"] == "log"
    assert set(figures.PINNED) <= set(figures.OKABE_ITO.values())


@pytest.mark.parametrize("method", ["dykstra_parsons", "layered_fractional_flow"])
def test_layered_view_appears_with_layers(demo, values, method):
    values.update(layer_method=method, layer_v=0.7, layer_count=6)
    out = callbacks.compute_view(values, demo, [], 0.4, {ids.LAYER_METHOD})
    assert out["current"]["layers"] == {"method": method, "variation": {"v": 0.7, "count": 6}}
    section = out["layer_section"]
    assert section and section[0].children == "Layered reservoir"
    fronts, coverage = section[2].children[0].figure, section[2].children[1].figure
    result = run_study(build_case(parse_scenario(out["current"])), points=300)
    days = adapter.days_at_pvi(out["current"], 0.4)
    np.testing.assert_allclose(fronts["data"][0]["x"], result.layers.front_positions([days])[0])
    assert len(fronts["data"][0]["y"]) == 6
    assert coverage["layout"]["xaxis"]["type"] == "log"
    go.Figure(fronts), go.Figure(coverage)
    # the estimated V of 6 generated layers is reported (Dykstra & Parsons, 1950 definition via the engine)
    assert f"{result.summary['dykstra_parsons_v']:.3f}" in section[1].children
    values["layer_method"] = "none"
    off = callbacks.compute_view(values, demo, [], 0.4, {ids.LAYER_METHOD})
    assert "Choose a layer method" in off["layer_section"].children and "layers" not in off["current"]


def test_layer_count_must_be_whole(demo, values):
    values.update(layer_method="dykstra_parsons", layer_count=2.5)
    out = callbacks.compute_view(values, demo, [], 0.4, {ids.box("layer_count")})
    assert "layers.variation.count = 2.5" in out["field_messages"]["layer_count"]


def test_layer_table_upload(demo, values):
    csv = "thickness_ft,permeability_md,porosity\n10,400,0.22\n12,150,\n8,60,0.18\n"
    out = callbacks.load_files(ids.UPLOAD_LAYERS, data_url(csv), "layers.csv", demo, values)
    assert out["method"] == "dykstra_parsons"
    assert out["base"]["layers"]["table"][1] == {"thickness_ft": 12.0, "permeability_md": 150.0}
    values["layer_method"] = "dykstra_parsons"
    view = callbacks.compute_view(values, out["base"], [], 0.4, {ids.BASE_STORE})
    assert "Layer table in use (3 layers)" in view["layer_note"]
    data, _ = adapter.download_bytes("xlsx", view["current"])
    import pandas as pd
    book = pd.read_excel(io.BytesIO(data), sheet_name=None)
    assert list(book) == ["inputs", "summary", "forecast", "layers", "layer breakthroughs"]
    bad = callbacks.load_files(ids.UPLOAD_LAYERS, data_url("h,k\n1,2\n"), "bad.csv", demo, values)
    assert bad["base"] is no_update and "missing thickness_ft" in bad["msg_layers"]


def test_restore_session_puts_back_a_valid_case_and_pins(demo):
    changed = copy.deepcopy(demo)
    changed["fluids"]["mu_o_cp"] = 7.5
    pins = adapter.pin_case([], changed, "seven and a half")
    out = callbacks.restore_session({"current": changed, "pins": pins})
    assert out["restored"] is True
    assert out["base"]["fluids"]["mu_o_cp"] == 7.5
    assert out["boxes"]["mu_o_cp"] == 7.5
    assert out["pins"] == pins and "seven and a half" in str(out["cases_table"])


@pytest.mark.parametrize("saved", [None, "text", {"current": None, "pins": None}, {}])
def test_restore_session_with_nothing_saved_changes_nothing(saved):
    out = callbacks.restore_session(saved)
    assert out["restored"] is True
    assert all(out[k] is no_update for k in callbacks.RESTORE_KEYS if k != "restored")


def test_restore_session_refuses_what_the_engine_refuses(demo):
    """The saved copy lives in the browser: it is validated like an upload (and may not name files)."""
    bad = copy.deepcopy(demo)
    bad["fluids"]["mu_o_cp"] = -1.0
    assert callbacks.restore_session({"current": bad, "pins": []})["base"] is no_update
    with_file = copy.deepcopy(demo)
    with_file["relperm"] = {"file": "/etc/passwd"}
    assert callbacks.restore_session({"current": with_file, "pins": []})["base"] is no_update
    too_many = adapter.pin_case([], demo, "a") * (adapter.MAX_PINS + 1)
    assert callbacks.restore_session({"current": demo, "pins": too_many})["pins"] is no_update
