"""Command line, run as a real subprocess on real files: outputs, formats and every bad-input case.

Each bad input must exit with status 2, print exactly one line naming the field, value and valid
range, print no traceback and leave no output file behind.
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import openpyxl
import pandas as pd
import pytest

ROOT = Path(__file__).resolve().parent.parent
SAMPLE = ROOT / "sample_data"


def run(*args, cwd=None):
    import os

    env = dict(os.environ, PYTHONPATH=str(ROOT))
    return subprocess.run([sys.executable, "-m", "flood", *map(str, args)], capture_output=True, text=True,
                          cwd=cwd or ROOT, timeout=120, env=env)


def test_summary_prints_one_json_object():
    p = run("summary", SAMPLE / "demo_scenario.json")
    assert p.returncode == 0, p.stderr
    s = json.loads(p.stdout)
    for key in ("pore_volume_rb", "ooip_stb", "endpoint_mobility_ratio", "front_saturation", "front_water_cut",
                "breakthrough_pvi", "breakthrough_days", "average_saturation_at_breakthrough",
                "recovery_factor_at_breakthrough", "economic_limit_pvi", "economic_limit_days",
                "recovery_factor_at_economic_limit"):
        assert isinstance(s[key], float), key


def test_validate_ok():
    p = run("validate", SAMPLE / "demo_scenario.json")
    assert p.returncode == 0 and p.stdout.startswith("ok:")


@pytest.mark.parametrize("ext", [".csv", ".xlsx", ".json"])
def test_forecast_formats_agree(tmp_path, ext):
    out = tmp_path / f"fc{ext}"
    p = run("forecast", SAMPLE / "demo_scenario.json", "-o", out)
    assert p.returncode == 0, p.stderr
    if ext == ".csv":
        df = pd.read_csv(out)
    elif ext == ".xlsx":
        wb = openpyxl.load_workbook(out, read_only=True)
        assert wb.sheetnames == ["inputs", "summary", "forecast"]
        df = pd.read_excel(out, sheet_name="forecast")
    else:
        df = pd.DataFrame(json.loads(out.read_text())["forecast"])
    for col in ("pvi", "days", "oil_rate_stb_d", "water_rate_stb_d", "water_cut", "wor", "cum_oil_stb",
                "cum_water_stb", "cum_injected_stb", "recovery_factor", "avg_water_saturation"):
        assert col in df.columns
    from flood.scenario import build_case, load_scenario
    from flood.study import run_study

    ref = run_study(build_case(load_scenario(SAMPLE / "demo_scenario.json"))).table
    np.testing.assert_allclose(df["cum_oil_stb"], ref["cum_oil_stb"], rtol=1e-12)
    assert len(df) == len(ref)


def test_relperm_table_file_and_schedule_samples(tmp_path, demo_dict, write_scenario):
    demo_dict["relperm"] = {"model": "table", "file": str(SAMPLE / "lab_relperm.csv")}
    demo_dict["injection"] = {"schedule": json.loads((SAMPLE / "injection_schedule.json").read_text())["schedule"]}
    path = write_scenario(demo_dict)
    p = run("summary", path)
    assert p.returncode == 0, p.stderr
    assert 0 < json.loads(p.stdout)["breakthrough_pvi"] < 1


def _bad(key_path, value):
    def mutate(d):
        node = d
        for k in key_path[:-1]:
            node = node[k]
        if value is KeyError:
            del node[key_path[-1]]
        else:
            node[key_path[-1]] = value
    return mutate


BAD = [
    ("missing key", _bad(["reservoir", "area_acres"], KeyError), r"reservoir\.area_acres = \(missing\): a required key"),
    ("unknown key", _bad(["fluids", "mu_oil"], 2.0), r"fluids\.mu_oil = 2\.0: not a known key"),
    ("wrong type", _bad(["reservoir", "porosity"], "0.2"), r"reservoir\.porosity = '0\.2': input should be a valid number; valid range 0 < value <= 1"),
    ("NaN", _bad(["fluids", "mu_o_cp"], float("nan")), r"fluids\.mu_o_cp = nan: a finite number"),
    ("inf", _bad(["reservoir", "thickness_ft"], float("inf")), r"reservoir\.thickness_ft = inf: a finite number"),
    ("swc+sor>=1", _bad(["saturations", "sor"], 0.8), r"saturations\.sor = 0\.8: swc \+ sor < 1 .*no movable oil"),
    ("swi below swc", _bad(["saturations", "swi"], 0.1), r"saturations\.swi = 0\.1: swc = 0\.2 <= swi < 1 - sor = 0\.75"),
    ("swi above 1-sor", _bad(["saturations", "swi"], 0.75), r"saturations\.swi = 0\.75: swc = 0\.2 <= swi < 1 - sor = 0\.75"),
    ("negative viscosity", _bad(["fluids", "mu_w_cp"], -0.6), r"fluids\.mu_w_cp = -0\.6: input should be greater than 0; valid range 0 < value"),
    ("porosity range", _bad(["reservoir", "porosity"], 1.4), r"reservoir\.porosity = 1\.4: .*valid range 0 < value <= 1"),
    ("corey exponent", _bad(["relperm", "nw"], 0.3), r"relperm\.nw = 0\.3: .*valid range 1 <= value <= 10"),
    ("bad model", _bad(["relperm", "model"], "quadratic"), r"relperm\.model = 'quadratic': 'corey' or 'table'"),
    ("econ cut", _bad(["limits", "economic_water_cut"], 1.0), r"limits\.economic_water_cut = 1\.0: .*valid range 0 < value < 1"),
    ("schedule start", _bad(["injection"], {"schedule": [[5, 100], [10, 200]]}), r"injection\.schedule\[0\]\.day = 5\.0: the schedule must start at day 0"),
    ("schedule order", _bad(["injection"], {"schedule": [[0, 100], [10, 200], [10, 300]]}), r"injection\.schedule\[2\]\.day = 10\.0: days must increase strictly"),
    ("schedule negative", _bad(["injection"], {"schedule": [[0, -100]]}), r"injection\.schedule\[0\]\.rate_bwpd = -100\.0: a rate >= 0"),
    ("both rate and schedule", _bad(["injection", "schedule"], [[0, 100]]), r"injection = 'rate_bwpd and schedule': exactly one of"),
    ("bad inline table", _bad(["relperm"], {"model": "table", "table": [[0.2, 0, 0.9], [0.5, 0.2, 0.3], [0.45, 0.3, 0.0]]}),
     r"relperm\.table\[2\]\.sw = 0\.45: Sw must increase strictly"),
    ("table short of sor", _bad(["relperm"], {"model": "table", "table": [[0.2, 0, 0.9], [0.5, 0.2, 0.3], [0.7, 0.3, 0.05]]}),
     r"relperm\.table\[-1\]\.sw = 0\.7: the table must reach 1 - sor = 0\.75"),
    ("dip without gravities", _bad(["reservoir", "dip_deg"], 10.0), r"fluids\.water_specific_gravity = None: a specific gravity > 0 \(required when"),
    ("unreadable table file", _bad(["relperm"], {"model": "table", "file": "no_such.csv"}),
     r"relperm\.file = 'no_such\.csv': a readable CSV file \(relative to the scenario file\)"),
]


@pytest.mark.parametrize("name,mutate,match", BAD, ids=[b[0] for b in BAD])
@pytest.mark.parametrize("command", ["summary", "forecast"])
def test_bad_input_one_line_exit_2_no_file(tmp_path, demo_dict, write_scenario, name, mutate, match, command,
                                           capsys, monkeypatch):
    """``summary`` runs as a real subprocess; ``forecast -o`` runs the same ``main`` in-process
    (faster), checking the exit status, the one-line message and that no file is left."""
    import re

    from flood.cli import main

    mutate(demo_dict)
    path = write_scenario(json.dumps(demo_dict))  # json.dumps writes NaN/Infinity for non-finite floats
    out = tmp_path / "out.xlsx"
    if command == "summary":
        p = run(command, path, cwd=tmp_path)
        code, stdout, stderr = p.returncode, p.stdout, p.stderr
    else:
        monkeypatch.chdir(tmp_path)
        code = main(["forecast", str(path), "-o", str(out)])
        cap = capsys.readouterr()
        stdout, stderr = cap.out, cap.err
    assert code == 2
    assert stdout == ""
    lines = stderr.strip().splitlines()
    assert len(lines) == 1, stderr
    assert "Traceback" not in stderr
    assert re.search(match, lines[0]), lines[0]
    assert not out.exists()
    assert list(tmp_path.glob("*.part")) == []


def test_bad_table_csv_file(tmp_path, demo_dict, write_scenario):
    (tmp_path / "kr.csv").write_text("sw,krw,kro\n0.2,0,0.9\n0.5,abc,0.3\n0.75,0.3,0\n")
    demo_dict["relperm"] = {"model": "table", "file": "kr.csv"}
    p = run("validate", write_scenario(demo_dict))
    assert p.returncode == 2 and "relperm.file[1].krw = 'abc': a number" in p.stderr


def test_unreadable_and_invalid_json(tmp_path):
    p = run("summary", tmp_path / "missing.json")
    assert p.returncode == 2 and "a readable UTF-8 scenario file" in p.stderr
    bad = tmp_path / "bad.json"
    bad.write_text("{not json")
    p = run("summary", bad)
    assert p.returncode == 2 and "valid JSON" in p.stderr and len(p.stderr.strip().splitlines()) == 1


def test_bad_output_extension_writes_nothing(tmp_path):
    out = tmp_path / "fc.txt"
    p = run("forecast", SAMPLE / "demo_scenario.json", "-o", out)
    assert p.returncode == 2 and "-o = " in p.stderr and ".csv, .xlsx or .json" in p.stderr
    assert not out.exists()
