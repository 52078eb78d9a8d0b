"""Adapter: UI values <-> scenario dicts, uploads, downloads and pinned cases (no browser)."""

import base64
import copy
import io
import json

import numpy as np
import pandas as pd
import pytest

from flood.errors import FloodInputError
from flood.forecast import FORECAST_COLUMNS
from flood.scenario import MAX_FILE_BYTES, build_case, parse_scenario
from flood.study import run_study
from flood.dashboard import adapter


def data_url(text: str, mime="text/csv") -> str:
    return f"data:{mime};base64," + base64.b64encode(text.encode()).decode()


@pytest.fixture
def demo():
    return adapter.demo_scenario()


def test_demo_controls_round_trip(demo):
    values = adapter.controls_from_scenario(demo)
    sc = adapter.scenario_from_controls(demo, values, derive_oil_viscosity=False)
    assert sc == demo
    # endpoint M of the demo: (0.35/0.6)/(0.9/3.0) = 1.9444 (closed form of the definition)
    assert values["mobility_ratio"] == pytest.approx(1.944, abs=1e-3)


@pytest.mark.parametrize("m", [0.1, 0.5, 1.0, 7.3, 100.0])
def test_mobility_ratio_sets_oil_viscosity(demo, m):
    """mu_o = M mu_w kro(Swc)/krw(1-Sor) at fixed mu_w and endpoints (definition of endpoint M, common practice)."""
    values = adapter.controls_from_scenario(demo)
    values["mobility_ratio"] = m
    sc = adapter.scenario_from_controls(demo, values, derive_oil_viscosity=True)
    assert sc["fluids"]["mu_o_cp"] == pytest.approx(m * 0.6 * 0.9 / 0.35, rel=1e-4)
    assert sc["fluids"]["mu_w_cp"] == 0.6 and sc["relperm"]["krw_max"] == 0.35
    _, result = adapter.evaluate(sc)
    assert result.summary["endpoint_mobility_ratio"] == pytest.approx(m, rel=1e-4)


@pytest.mark.parametrize("m", [0.0, -1.0, None, 5000.0, float("nan")])
def test_bad_mobility_ratio_message(demo, m):
    values = adapter.controls_from_scenario(demo)
    values["mobility_ratio"] = m
    with pytest.raises(FloodInputError, match=r"mobility_ratio = .*0.01 <= M <= 1000"):
        adapter.scenario_from_controls(demo, values, derive_oil_viscosity=True)


def test_bad_value_names_its_control(demo):
    values = adapter.controls_from_scenario(demo)
    values["porosity"] = 1.5
    sc = adapter.scenario_from_controls(demo, values, derive_oil_viscosity=False)
    with pytest.raises(FloodInputError, match=r"reservoir.porosity = 1.5.*0 < value <= 1") as info:
        adapter.evaluate(sc)
    assert adapter.control_for_error(info.value) == "porosity"


def test_empty_box_names_its_control(demo):
    values = adapter.controls_from_scenario(demo)
    values["bo_rb_stb"] = None
    with pytest.raises(FloodInputError) as info:
        adapter.evaluate(adapter.scenario_from_controls(demo, values, False))
    assert adapter.control_for_error(info.value) == "bo_rb_stb"


def test_forecast_csv_equals_engine(demo):
    data, filename = adapter.download_bytes("csv", demo)
    assert filename.endswith("_forecast.csv")
    df = pd.read_csv(io.BytesIO(data))
    engine = run_study(build_case(parse_scenario(demo)), points=300).table
    assert list(df.columns) == [f"{k} [{v[v.rfind('[') + 1:-1]}]" for k, v in FORECAST_COLUMNS.items()]
    assert "water_cut [fraction]" in df.columns and "oil_rate_stb_d [STB/d]" in df.columns
    np.testing.assert_allclose(df.to_numpy(), engine.to_numpy(), rtol=1e-12, atol=1e-9)


def test_workbook_sheets(demo):
    data, _ = adapter.download_bytes("xlsx", demo)
    sheets = pd.read_excel(io.BytesIO(data), sheet_name=None)
    assert list(sheets) == ["inputs", "summary", "forecast"]
    engine = run_study(build_case(parse_scenario(demo)), points=300)
    np.testing.assert_allclose(sheets["forecast"].to_numpy(), engine.table.to_numpy(), rtol=1e-12)
    summary = dict(zip(sheets["summary"]["quantity"], sheets["summary"]["value"]))
    assert float(summary["breakthrough_pvi"]) == pytest.approx(engine.summary["breakthrough_pvi"], rel=1e-12)
    assert "licensed professionals" in summary["caution"]


def test_scenario_json_round_trip(demo):
    values = adapter.controls_from_scenario(demo)
    values.update(nw=3.1, mobility_ratio=4.2)
    current, before = adapter.evaluate(adapter.scenario_from_controls(demo, values, True))
    data, _ = adapter.download_bytes("json", current)
    loaded = adapter.scenario_from_upload(data_url(data.decode(), "application/json"), "case.json")
    _, after = adapter.evaluate(loaded)
    assert loaded == current
    pd.testing.assert_frame_equal(before.table, after.table)


def test_upload_rejections(demo):
    with pytest.raises(FloodInputError, match=r"valid JSON"):
        adapter.scenario_from_upload(data_url("{not json"), "bad.json")
    broken = copy.deepcopy(demo)
    broken["saturations"]["sor"] = 0.9
    with pytest.raises(FloodInputError, match=r"saturations.sor = 0.9: swc \+ sor < 1"):
        adapter.scenario_from_upload(data_url(json.dumps(broken)), "s.json")
    with pytest.raises(FloodInputError, match=rf"at most {MAX_FILE_BYTES} bytes"):
        adapter.decode_upload(data_url("x" * (MAX_FILE_BYTES + 10)), "big.csv", "CSV")
    with pytest.raises(FloodInputError, match=r"header row with columns sw, krw, kro"):
        adapter.scenario_with_relperm_table(demo, data_url("a,b\n1,2\n"), "t.csv")
    with pytest.raises(FloodInputError, match=r"relperm.file = '/etc/passwd': an inline relperm.table in the dashboard"):
        bad = copy.deepcopy(demo)
        bad["relperm"] = {"model": "table", "file": "/etc/passwd"}
        adapter.scenario_from_upload(data_url(json.dumps(bad)), "s.json")
    with pytest.raises(FloodInputError, match=r"layers.file = '/etc/passwd': an inline layers.table"):
        bad = copy.deepcopy(demo)
        bad["layers"] = {"method": "dykstra_parsons", "file": "/etc/passwd"}
        adapter.scenario_from_upload(data_url(json.dumps(bad)), "s.json")


def test_relperm_table_upload_changes_forecast(demo):
    sw = np.linspace(0.2, 0.75, 12)
    s = (sw - 0.2) / 0.55
    csv = "sw,krw,kro\n" + "\n".join(f"{a:.4f},{0.5 * b ** 3:.5f},{0.8 * (1 - b) ** 3:.5f}" for a, b in zip(sw, s))
    new = adapter.scenario_with_relperm_table(demo, data_url(csv), "lab.csv")
    assert new["relperm"]["model"] == "table" and len(new["relperm"]["table"]) == 12
    _, before = adapter.evaluate(demo)
    _, after = adapter.evaluate(new)
    assert after.summary["breakthrough_pvi"] != pytest.approx(before.summary["breakthrough_pvi"], rel=1e-3)
    assert adapter.controls_from_scenario(new)["mobility_ratio"] == pytest.approx((0.5 / 0.6) / (0.8 / 3.0), rel=1e-3)


def test_pins_capped_and_removed(demo):
    pins = []
    for i in range(adapter.MAX_PINS + 1):
        pins = adapter.pin_case(pins, demo, f"p{i}")
    assert [p["label"] for p in pins] == [f"p{i}" for i in range(1, adapter.MAX_PINS + 1)]
    assert len({p["key"] for p in pins}) == adapter.MAX_PINS
    key = pins[1]["key"]
    pins = adapter.unpin_case(pins, key)
    assert key not in [p["key"] for p in pins] and len(pins) == adapter.MAX_PINS - 1
    json.dumps(pins)  # store-safe


def test_format_quantity():
    assert adapter.format_quantity("recovery_factor_at_breakthrough", 0.5294) == "52.9"
    assert adapter.format_quantity("ooip_stb", 1360011.13) == "1,360,011"
    assert adapter.format_quantity("breakthrough_days", float("inf")) == "—"


@pytest.mark.parametrize("patch", [{"relperm": {"model": "table", "file": "/etc/hostname"}},
                                   {"layers": {"method": "dykstra_parsons", "file": "/etc/hostname"}}])
def test_browser_data_never_reads_server_files(demo, patch):
    """A crafted dcc.Store value naming a file is refused before any file is opened."""
    crafted = {**copy.deepcopy(demo), **patch}
    with pytest.raises(FloodInputError, match=r"(relperm|layers)\.file = '/etc/hostname': an inline"):
        adapter.evaluate(crafted)
    with pytest.raises(FloodInputError, match=r"\.file = '/etc/hostname'"):
        adapter.download_bytes("csv", crafted)
