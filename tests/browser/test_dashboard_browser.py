"""The dashboard in real headless Chromium (Debian package), served by ``python app.py`` and gunicorn."""

from __future__ import annotations

import io
import json

import numpy as np
import pandas as pd
import pytest

from flood.dashboard import adapter
from flood.scenario import build_case, parse_scenario
from flood.study import run_study

pytestmark = pytest.mark.browser


def _press_mobility(s, key="ArrowRight", times=1):
    handle = s.page.locator("#mobility_ratio-slider [role=slider]")
    handle.focus()
    for _ in range(times):
        s.page.keyboard.press(key)


def _type(s, name, text):
    box = s.page.locator(f"#{name}-box")
    box.fill(text)
    box.press("Enter")


def _download(s, button_id):
    with s.page.expect_download(timeout=15_000) as info:
        s.page.click(f"#{button_id}")
    return info.value


def _engine_table(scenario: dict) -> pd.DataFrame:
    return run_study(build_case(parse_scenario(scenario)), points=300).table


def test_page_loads_without_console_errors(session):
    page = session.page
    assert "Screening estimates only" in page.inner_text("#caution")
    assert "licensed professionals" in page.inner_text("#caution")
    assert "μo = M · μw · kro(Swc) / krw(1 − Sor)" in page.inner_text("#mobility-note")
    assert session.card("endpoint_mobility_ratio") == "1.94"
    assert "invented" in page.inner_text("#case-name")
    page.wait_for_timeout(500)
    assert session.errors == []


def test_mobility_slider_by_keyboard_moves_cards_and_figures(session):
    bt_days = session.card("breakthrough_days")
    cut_before = session.trace_y("fig-rate-cut", 1)
    wor_before = session.trace_y("fig-wor", 0)
    _press_mobility(session, "PageUp")  # a big step up in log10 M
    session.wait_card_change("breakthrough_days", bt_days)
    session.page.wait_for_function(
        "(old) => { const y = Array.from(document.querySelector('#fig-wor .js-plotly-plot')._fullData[0].y);"
        " return y.length !== old.length || y.some((v, i) => Math.abs(v - old[i]) > 1e-9); }",
        arg=wor_before, timeout=10_000)
    m = float(session.page.input_value("#mobility_ratio-box"))
    assert m > 1.95
    mu_o = float(session.page.input_value("#mu_o_cp-box"))
    assert mu_o == pytest.approx(m * 0.6 * 0.9 / 0.35, rel=1e-3)  # definition of endpoint M
    assert float(session.card("endpoint_mobility_ratio")) == pytest.approx(m, abs=0.006)  # card: 3 digits
    assert session.trace_y("fig-rate-cut", 1) != cut_before
    # the fractional-flow view, drawn when its tab opens, shows the new case: fw at mu_o from the box
    session.open_tab("Displacement and recovery", ["fig-fractional-flow", "fig-recovery"])
    sw = session.page.evaluate(
        "() => Array.from(document.querySelector('#fig-fractional-flow .js-plotly-plot')._fullData[0].x)")
    from flood.fractional_flow import fractional_flow
    from flood.relative_permeability import Corey
    expected = fractional_flow(Corey(0.2, 0.25, 0.35, 0.9, 2.5, 2.0), np.asarray(sw), 0.6, mu_o)
    np.testing.assert_allclose(session.trace_y("fig-fractional-flow", 0), expected, rtol=1e-9)
    assert session.errors == []


def test_bad_typed_value_shows_inline_message(session):
    before = session.card("ooip_stb")
    _type(session, "porosity", "1.7")
    msg = session.page.locator('[id*="field-message"][id*="porosity"]')
    msg.wait_for(state="visible", timeout=10_000)
    assert "reservoir.porosity = 1.7" in msg.inner_text() and "<= 1" in msg.inner_text()
    assert session.card("ooip_stb") == before
    _type(session, "porosity", "0.25")
    session.wait_card_change("ooip_stb", before)
    assert msg.inner_text() == ""


def test_bad_csv_upload_shows_message_and_keeps_case(session):
    before = session.card("breakthrough_pvi")
    session.page.set_input_files("#upload-relperm input[type=file]", files=[
        {"name": "broken.csv", "mimeType": "text/csv", "buffer": b"sw,krw\n0.2,0.0\n0.8,0.3\n"}])
    session.page.wait_for_function(
        "() => document.querySelector('#upload-relperm-message').innerText.includes('Rejected')", timeout=10_000)
    assert "missing kro" in session.page.inner_text("#upload-relperm-message")
    session.page.wait_for_timeout(300)
    assert session.card("breakthrough_pvi") == before


def test_good_table_upload_changes_forecast(session):
    before = session.card("breakthrough_pvi")
    sw = np.linspace(0.2, 0.75, 12)
    s = (sw - 0.2) / 0.55
    csv = "sw,krw,kro\n" + "\n".join(f"{a:.4f},{0.5 * b ** 3:.5f},{0.8 * (1 - b) ** 3:.5f}" for a, b in zip(sw, s))
    session.page.set_input_files("#upload-relperm input[type=file]", files=[
        {"name": "lab.csv", "mimeType": "text/csv", "buffer": csv.encode()}])
    session.wait_card_change("breakthrough_pvi", before)
    assert "12 rows" in session.page.inner_text("#upload-relperm-message")
    assert "Lab relative-permeability table in use" in session.page.inner_text("#relperm-note")
    expected = adapter.scenario_with_relperm_table(adapter.demo_scenario(), "data:;base64,"
                                                   + __import__("base64").b64encode(csv.encode()).decode(), "lab.csv")
    summary = run_study(build_case(parse_scenario(expected))).summary
    assert session.card("breakthrough_pvi") == adapter.format_quantity("breakthrough_pvi", summary["breakthrough_pvi"])


def test_downloads_equal_engine_output(session):
    bt = session.card("breakthrough_days")
    _press_mobility(session, "ArrowLeft", 3)
    session.wait_card_change("breakthrough_days", bt)
    session.page.wait_for_timeout(300)
    scenario = json.loads(open(_download(session, "download-json").path()).read())
    assert scenario["fluids"]["mu_o_cp"] == float(session.page.input_value("#mu_o_cp-box"))
    expected = _engine_table(scenario)
    csv = pd.read_csv(_download(session, "download-csv").path())
    np.testing.assert_allclose(csv.to_numpy(), expected.to_numpy(), rtol=1e-12, atol=1e-9)
    assert "water_cut [fraction]" in csv.columns
    book = pd.read_excel(_download(session, "download-xlsx").path(), sheet_name=None)
    assert list(book) == ["inputs", "summary", "forecast"]
    np.testing.assert_allclose(book["forecast"].to_numpy(), expected.to_numpy(), rtol=1e-12, atol=1e-9)


def test_scenario_json_round_trip(session):
    _type(session, "nw", "3.4")
    session.page.wait_for_function("() => document.querySelector('#nw-slider [role=slider]')"
                                   ".getAttribute('aria-valuenow') === '3.4'", timeout=10_000)
    session.page.wait_for_timeout(500)
    cards = {k: session.card(k) for k in adapter.SUMMARY_KEYS}
    saved = open(_download(session, "download-json").path(), "rb").read()
    table_before = pd.read_csv(_download(session, "download-csv").path())
    _type(session, "nw", "2")
    session.wait_card_change("breakthrough_days", cards["breakthrough_days"])
    session.page.set_input_files("#upload-scenario input[type=file]", files=[
        {"name": "saved.json", "mimeType": "application/json", "buffer": saved}])
    session.wait_card_change("breakthrough_days", session.card("breakthrough_days"))
    assert {k: session.card(k) for k in adapter.SUMMARY_KEYS} == cards
    assert session.page.input_value("#nw-box") == "3.4"
    table_after = pd.read_csv(_download(session, "download-csv").path())
    pd.testing.assert_frame_equal(table_before, table_after)


def test_pin_compare_and_remove(session):
    page = session.page
    session.open_tab("Displacement and recovery", ["fig-recovery"])
    page.fill("#pin-label", "base case")
    page.click("#pin-case")
    page.wait_for_selector("table.cases td:has-text('base case')", timeout=10_000)
    n_before = page.evaluate("() => document.querySelector('#fig-recovery .js-plotly-plot')._fullData.length")
    page.wait_for_function(
        "() => document.querySelector('#fig-recovery .js-plotly-plot')._fullData.some(t => t.name === 'base case')",
        timeout=10_000)
    page.click("table.cases button:has-text('Remove')")
    page.wait_for_selector("table.cases", state="detached", timeout=10_000)
    page.wait_for_function(
        "() => !document.querySelector('#fig-recovery .js-plotly-plot')._fullData.some(t => t.name === 'base case')",
        timeout=10_000)
    assert n_before >= 2


def test_two_sessions_are_isolated(open_session):
    a, b = open_session(), open_session()
    a.page.click("#pin-case")
    a.page.wait_for_selector("table.cases", timeout=10_000)
    bt = a.card("breakthrough_days")
    _press_mobility(a, "PageUp")
    a.wait_card_change("breakthrough_days", bt)
    b.page.wait_for_timeout(800)
    assert b.card("breakthrough_days") == bt
    assert b.page.locator("table.cases").count() == 0
    assert b.page.input_value("#mobility_ratio-box") == "1.944"
    # and B's own change does not reach A
    a_now = a.card("breakthrough_days")
    _type(b, "rate_bwpd", "1600")
    b.wait_card_change("breakthrough_days", bt)
    a.page.wait_for_timeout(800)
    assert a.card("breakthrough_days") == a_now


def test_gunicorn_serves_the_dashboard(open_session, gunicorn_url):
    s = open_session(gunicorn_url)
    assert "Screening estimates only" in s.page.inner_text("#caution")
    bt = s.card("breakthrough_days")
    _press_mobility(s, "PageDown")
    s.wait_card_change("breakthrough_days", bt)
    assert s.errors == []


def test_layered_view_appears_and_follows_v(session):
    page = session.page
    session.open_tab("Layers")
    assert page.locator("#fig-layer-fronts").count() == 0
    assert "Choose a layer method" in page.inner_text("#layer-section")
    page.click("text=Dykstra-Parsons (piston-like")
    page.wait_for_selector("#fig-layer-fronts .js-plotly-plot", timeout=10_000)
    facts = page.inner_text("#layer-facts")
    assert "10 layers" in facts and "V = 0.600" in facts
    bt = session.card("breakthrough_days")
    handle = page.locator("#layer_v-slider [role=slider]")
    handle.focus()
    page.keyboard.press("ArrowRight")
    session.wait_card_change("breakthrough_days", bt)
    page.wait_for_function("() => document.querySelector('#layer-facts').innerText.includes('V = 0.610')",
                           timeout=10_000)
    page.click("text=None (one homogeneous layer)")
    page.wait_for_selector("#fig-layer-fronts", state="detached", timeout=10_000)
    assert session.errors == []


_RECORD_PROGRESS_JS = """(id) => { window.__progress = [];
  const el = document.getElementById(id);
  new MutationObserver(() => window.__progress.push(Number(el.value)))
    .observe(el, {attributes: true, attributeFilter: ['value']}); }"""


def _run_background(session, run_id, progress_id, message_id, timeout=60_000):
    page = session.page
    page.evaluate(_RECORD_PROGRESS_JS, progress_id)
    page.click(f"#{run_id}")
    page.wait_for_function(f"() => document.getElementById('{message_id}').innerText.length > 0", timeout=timeout)
    return page.evaluate("() => window.__progress"), page.inner_text(f"#{message_id}")


def test_numerical_crosscheck_runs_in_background(session):
    session.open_tab("Numerical check")
    session.page.fill("#numerical-cells", "2500")  # about 2 s: several progress updates at 200 ms
    progress, msg = _run_background(session, "numerical-run", "numerical-progress", "numerical-message")
    assert "2500 cells" in msg and "Breakthrough" in msg
    assert progress and max(progress) >= 90 and any(0 < p < 100 for p in progress), progress
    expected = adapter.run_crosscheck(adapter.demo_scenario(), 2500, 0, 2, True)
    assert f"(analytic {expected.breakthrough_pvi_analytic:.3f})" in msg
    y = session.trace_y("fig-numerical", 1)
    np.testing.assert_allclose(y, expected.numerical_profiles[0], atol=1e-12)
    assert session.errors == []


def test_pattern_sweep_map_in_background(session):
    session.open_tab("Numerical check")
    session.page.fill("#sweep-cells", "24")
    progress, msg = _run_background(session, "sweep-run", "sweep-progress", "sweep-message")
    assert "five spot" in msg and "areal sweep at breakthrough" in msg
    assert progress and max(progress) == 100
    kind = session.page.evaluate("() => document.querySelector('#fig-sweep .js-plotly-plot')._fullData[0].type")
    assert kind == "heatmap"
    assert "Pattern forecast: recovery" in msg
    session.page.wait_for_function(
        "() => { const g = document.querySelector('#fig-pattern-forecast .js-plotly-plot');"
        " return g && g._fullData && g._fullData.length === 4; }", timeout=10_000)
    names = session.page.evaluate(
        "() => document.querySelector('#fig-pattern-forecast .js-plotly-plot')._fullData.map(t => t.name)")
    assert names[0] == "oil rate, pattern" and names[2] == "oil rate, linear"
    assert session.errors == []


def test_background_job_under_gunicorn(open_session, gunicorn_url):
    s = open_session(gunicorn_url)
    s.open_tab("Numerical check")
    s.page.fill("#numerical-cells", "120")
    _, msg = _run_background(s, "numerical-run", "numerical-progress", "numerical-message")
    assert "120 cells" in msg
    assert s.errors == []


def test_case_and_pins_survive_a_reload_and_demo_button_resets(session):
    """A reload in the same tab keeps the current case and the pinned cases (sessionStorage); the
    cards after the reload are the engine's for the restored case; the demo button starts again."""
    page = session.page
    demo_bt = session.card("breakthrough_days")
    page.fill("#pin-label", "kept")
    page.click("#pin-case")
    page.wait_for_selector("table.cases td:has-text('kept')", timeout=10_000)
    _press_mobility(session, "PageUp")
    session.wait_card_change("breakthrough_days", demo_bt)
    m = page.input_value("#mobility_ratio-box")
    changed_bt = session.card("breakthrough_days")
    page.wait_for_function(
        "() => { const s = JSON.parse(sessionStorage.getItem('saved-session') || 'null');"
        " return s && s.pins.length === 1; }", timeout=10_000)
    page.reload()
    page.wait_for_selector("table.cases td:has-text('kept')", timeout=15_000)
    page.wait_for_function(
        "(m) => document.querySelector('#mobility_ratio-box').value === m", arg=m, timeout=15_000)
    page.wait_for_function(
        "(bt) => document.querySelector('#card-breakthrough_days').innerText === bt", arg=changed_bt, timeout=15_000)
    page.wait_for_function(
        "() => document.querySelector('#fig-rate-cut .js-plotly-plot')._fullData.some(t => t.name.includes('kept'))",
        timeout=15_000)
    page.click("#back-to-demo")
    session.wait_card_change("breakthrough_days", changed_bt)
    assert session.card("breakthrough_days") == demo_bt
    assert session.errors == []
