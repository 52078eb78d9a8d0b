"""Layer input in the scenario (table, CSV file, variation), its error messages, and the ``layers`` command.

Every bad layer input must give the same one-line FloodInputError as the rest of the contract:
field path, value and valid range. The command is run in-process through ``flood.cli.main``.
"""

from __future__ import annotations

import copy
import json
from pathlib import Path

import numpy as np
import openpyxl
import pandas as pd
import pytest

from flood.cli import main
from flood.errors import FloodInputError
from flood.layers import BREAKTHROUGH_COLUMNS, estimate_variation, generate_layers, layer_set
from flood.scenario import build_case, load_scenario, parse_scenario
from flood.study import run_study

SAMPLE = Path(__file__).resolve().parent.parent / "sample_data"
BASE = json.loads((SAMPLE / "demo_scenario.json").read_text())
ISSUE_COLUMNS = ("layers_broken_through", "vertical_coverage", "wor_reservoir", "wor_surface", "water_cut",
                 "pvi", "days", "cum_oil_stb")


def with_layers(layers, **sections):
    d = copy.deepcopy(BASE)
    d["layers"] = layers
    for key, val in sections.items():
        d[key].update(val)
    return d


def case_of(d, base_dir=None):
    return build_case(parse_scenario(d, base_dir=base_dir))


# ----------------------------------------------------------------------------------------------
# Accepted input


def test_table_rows_default_porosity_and_keep_order():
    case = case_of(with_layers({"method": "dykstra_parsons", "table": [
        {"thickness_ft": 10, "permeability_md": 50.0}, {"thickness_ft": 5.0, "permeability_md": 300, "porosity": 0.25}]}))
    ls = case.layers
    assert ls.method == "dykstra_parsons" and ls.source == "table"
    assert ls.thickness_ft.tolist() == [10.0, 5.0]
    assert ls.permeability_md.tolist() == [50.0, 300.0]
    assert ls.porosity.tolist() == [0.21, 0.25]          # blank porosity = reservoir.porosity


def test_variation_generates_equal_layers_with_the_reservoir_median():
    case = case_of(with_layers({"method": "layered_fractional_flow", "variation": {"v": 0.6, "count": 7}}))
    ls = case.layers
    assert ls.count == 7 and np.allclose(ls.thickness_ft, 30.0 / 7)
    assert np.median(ls.permeability_md) == pytest.approx(120.0)   # the middle layer sits at p = 0.5
    assert np.all(np.diff(ls.permeability_md) < 0)
    assert estimate_variation(ls.permeability_md).v == pytest.approx(0.6, abs=1e-12)


def test_demo_layer_csv_is_read_relative_to_the_scenario():
    sc = load_scenario(SAMPLE / "demo_layered_scenario.json")
    case = build_case(sc)
    df = pd.read_csv(SAMPLE / "layers_demo.csv", comment="#")
    assert case.layers.source == "file"
    assert np.allclose(case.layers.permeability_md, df["permeability_md"])
    assert np.allclose(case.layers.porosity, df["porosity"])
    res = run_study(case)
    assert res.summary["layer_count"] == len(df)
    assert res.summary["layered_thickness_ft"] == pytest.approx(df["thickness_ft"].sum())


def test_csv_without_porosity_column_uses_reservoir_porosity(tmp_path):
    (tmp_path / "l.csv").write_text("Thickness_ft, permeability_md\n10, 200\n20, 40\n")
    case = case_of(with_layers({"method": "dykstra_parsons", "file": "l.csv"}), base_dir=tmp_path)
    assert case.layers.porosity.tolist() == [0.21, 0.21]


def test_homogeneous_summary_is_unchanged_without_layers():
    res = run_study(case_of(copy.deepcopy(BASE)))
    assert res.layers is None and "dykstra_parsons_v" not in res.summary


# ----------------------------------------------------------------------------------------------
# Bad input: one clear line each


@pytest.mark.parametrize("layers,match", [
    ({"method": "dykstra_parsons", "table": []},
     r"^layers\.table = \[\]: at least one layer row"),
    ({"method": "dykstra_parsons", "table": [{"thickness_ft": 5, "permeability_md": 0}]},
     r"^layers\.table\[0\]\.permeability_md = 0: .*valid range 0 < value <= 1e\+06"),
    ({"method": "dykstra_parsons", "table": [{"thickness_ft": 5, "permeability_md": 10},
                                             {"thickness_ft": -2, "permeability_md": 10}]},
     r"^layers\.table\[1\]\.thickness_ft = -2: .*valid range 0 < value <= 10000"),
    ({"method": "dykstra_parsons", "table": [{"thickness_ft": 5, "permeability_md": 10, "porosity": 1.5}]},
     r"^layers\.table\[0\]\.porosity = 1\.5: .*valid range 0 < value <= 1"),
    ({"method": "dykstra_parsons", "variation": {"v": 1.0, "count": 5}},
     r"^layers\.variation\.v = 1\.0: .*valid range 0 <= value < 1"),
    ({"method": "dykstra_parsons", "variation": {"v": -0.1, "count": 5}},
     r"^layers\.variation\.v = -0\.1: .*valid range 0 <= value < 1"),
    ({"method": "dykstra_parsons", "variation": {"v": 0.5, "count": 0}},
     r"^layers\.variation\.count = 0: .*valid range 1 <= value <= 1000"),
    ({"method": "dykstra_parsons", "variation": {"v": 0.5, "count": 2.5}},
     r"^layers\.variation\.count = 2\.5: .*integer"),
    ({"method": "stiles", "variation": {"v": 0.5, "count": 3}},
     r"^layers\.method = 'stiles': .*'dykstra_parsons' or 'layered_fractional_flow'"),
    ({"method": "dykstra_parsons"},
     r"^layers = 'neither': exactly one of 'table', 'variation' or 'file'"),
    ({"method": "dykstra_parsons", "file": "x.csv", "variation": {"v": 0.5, "count": 3}},
     r"^layers = 'variation and file': exactly one of"),
    ({"method": "dykstra_parsons", "variation": {"v": 0.5, "count": 3, "sigma": 1}},
     r"^layers\.variation\.sigma = 1: not a known key"),
])
def test_bad_layer_input_gives_one_line(layers, match):
    with pytest.raises(FloodInputError, match=match) as exc:
        parse_scenario(with_layers(layers))
    assert "\n" not in str(exc.value)


@pytest.mark.parametrize("sections,match", [
    ({"reservoir": {"dip_deg": 5.0}, "fluids": {"water_specific_gravity": 1.05, "oil_specific_gravity": 0.85}},
     r"^reservoir\.dip_deg = 5\.0: 0 when 'layers' is given \(the layered methods assume horizontal layers\)"),
    ({"saturations": {"sgi": 0.05}}, r"^saturations\.sgi = 0\.05: 0 when 'layers' is given"),
    ({"saturations": {"swi": 0.3}}, r"^saturations\.swi = 0\.3: swi = swc = 0\.2 for dykstra_parsons"),
])
def test_layer_methods_reject_settings_they_do_not_model(sections, match):
    with pytest.raises(FloodInputError, match=match):
        parse_scenario(with_layers({"method": "dykstra_parsons", "variation": {"v": 0.5, "count": 3}}, **sections))


def test_layered_fractional_flow_accepts_mobile_initial_water():
    res = run_study(case_of(with_layers({"method": "layered_fractional_flow", "variation": {"v": 0.5, "count": 4}},
                                        saturations={"swi": 0.3})))
    assert res.table["water_cut"].iloc[1] > 0.0           # water flows from the start
    assert res.summary["breakthrough_pvi"] > 0.0


@pytest.mark.parametrize("text,match", [
    ("thickness_ft,permeability_md\n5,100\n5,abc\n", r"^layers\.file\[1\]\.permeability_md = 'abc': a number"),
    ("thickness_ft,perm\n5,100\n", r"^layers\.file = \['thickness_ft', 'perm'\]: a header row .*missing permeability_md"),
    ("thickness_ft,permeability_md,porosity\n5,100,0.2\n0,50,0.2\n", r"^layers\.file\[1\]\.thickness_ft = 0\.0: a thickness > 0 ft"),
    ("thickness_ft,permeability_md,porosity\n5,100,0.2\n3,50,x\n", r"^layers\.file\[1\]\.porosity = 'x': a number"),
    ("thickness_ft,permeability_md\n", r"^layers\.file = '\(no rows\)': at least one layer"),
])
def test_bad_layer_csv_gives_one_line(tmp_path, text, match):
    (tmp_path / "l.csv").write_text(text)
    with pytest.raises(FloodInputError, match=match):
        case_of(with_layers({"method": "dykstra_parsons", "file": "l.csv"}), base_dir=tmp_path)


def test_missing_layer_file(tmp_path):
    with pytest.raises(FloodInputError, match=r"^layers\.file = 'nope\.csv': a readable CSV file"):
        case_of(with_layers({"method": "dykstra_parsons", "file": "nope.csv"}), base_dir=tmp_path)


@pytest.mark.parametrize("args,match", [
    ((1.0, 5, 100.0, 30.0), r"^layers\.variation\.v = 1\.0: 0 <= V < 1"),
    ((0.5, 0, 100.0, 30.0), r"^layers\.variation\.count = 0: an integer count >= 1"),
    ((0.5, 3, -1.0, 30.0), r"^reservoir\.permeability_md = -1\.0"),
])
def test_engine_functions_check_their_inputs(args, match):
    with pytest.raises(FloodInputError, match=match):
        generate_layers(*args)


def test_layer_set_and_estimate_check_their_inputs():
    with pytest.raises(FloodInputError, match=r"^layers\.table\[1\]\.permeability_md = -3\.0: a permeability > 0 md"):
        layer_set("dykstra_parsons", [1, 1], [10, -3], 0.2)
    with pytest.raises(FloodInputError, match=r"^layers\.method = 'x'"):
        layer_set("x", [1], [10], 0.2)
    with pytest.raises(FloodInputError, match=r"^permeability_md = nan: a permeability > 0 md"):
        estimate_variation([10.0, np.nan])


# ----------------------------------------------------------------------------------------------
# Command line (in-process)


def test_layers_command_prints_one_row_per_breakthrough(capsys):
    assert main(["layers", str(SAMPLE / "demo_layered_scenario.json")]) == 0
    out = capsys.readouterr().out
    df = pd.read_csv(__import__("io").StringIO(out))
    assert list(df.columns) == list(BREAKTHROUGH_COLUMNS)
    for col in ISSUE_COLUMNS:
        assert col in df.columns
    assert len(df) == 9 and df["layers_broken_through"].tolist() == list(range(1, 10))


@pytest.mark.parametrize("method", ["dykstra_parsons", "layered_fractional_flow"])
def test_layers_command_writes_every_format_for_both_methods(tmp_path, capsys, method):
    for ext in (".csv", ".json", ".xlsx"):
        out = tmp_path / f"bt{ext}"
        assert main(["layers", str(SAMPLE / "demo_layered_scenario.json"), "--method", method, "-o", str(out)]) == 0
        assert out.exists()
    payload = json.loads((tmp_path / "bt.json").read_text())
    assert set(payload) == {"breakthroughs", "layers", "summary", "forecast"}
    rows = payload["breakthroughs"]
    assert len(rows) == 9
    if method == "dykstra_parsons":
        assert rows[-1]["wor_reservoir"] is None and rows[-1]["water_cut"] == 1.0   # every layer watered out
    wb = openpyxl.load_workbook(tmp_path / "bt.xlsx", read_only=True)
    assert wb.sheetnames == ["breakthroughs", "layers", "summary", "forecast"]


def test_summary_and_forecast_commands_use_the_layers(capsys):
    assert main(["summary", str(SAMPLE / "demo_layered_scenario.json")]) == 0
    s = json.loads(capsys.readouterr().out)
    assert 0.5 < s["dykstra_parsons_v"] < 0.8 and s["layers_method"] == "layered_fractional_flow"
    homo = run_study(build_case(load_scenario(SAMPLE / "demo_scenario.json"))).summary
    assert s["breakthrough_pvi"] < homo["breakthrough_pvi"]
    assert main(["forecast", str(SAMPLE / "demo_layered_scenario.json"), "--points", "50"]) == 0
    table = pd.read_csv(__import__("io").StringIO(capsys.readouterr().out))
    # the forecast ends when the surface cut first reaches 0.98; here that happens at a layer
    # breakthrough, where the cut jumps past the limit
    assert len(table) >= 50 and table["water_cut"].iloc[-1] >= 0.98 > table["water_cut"].iloc[-2]


def test_layers_command_without_layers_exits_2_with_one_line(tmp_path, capsys):
    out = tmp_path / "x.csv"
    assert main(["layers", str(SAMPLE / "demo_scenario.json"), "-o", str(out)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error: layers = '(missing)': a 'layers' key")
    assert not out.exists()


def test_layers_command_bad_output_extension_fails_before_work(capsys):
    assert main(["layers", str(SAMPLE / "demo_layered_scenario.json"), "-o", "out.txt"]) == 2
    assert "a file name ending in .csv, .xlsx or .json" in capsys.readouterr().err
