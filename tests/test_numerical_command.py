"""``python -m flood crosscheck`` and ``sweep``: JSON keys, output files, one-line errors."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pandas as pd
import pytest

from flood.cli import main

ROOT = Path(__file__).resolve().parent.parent
DEMO = str(ROOT / "sample_data" / "demo_scenario.json")


def test_crosscheck_json_keys(capsys):
    assert main(["crosscheck", DEMO, "--cells", "60"]) == 0
    out = json.loads(capsys.readouterr().out)
    for key in ("cells", "l1_profile_difference", "breakthrough_pvi_numerical", "breakthrough_pvi_analytic",
                "recovery_factor_at_2pvi_numerical", "recovery_factor_at_2pvi_analytic",
                "seconds_numerical", "seconds_analytic"):
        assert key in out
    assert out["cells"] == 60


@pytest.mark.parametrize("ext", [".csv", ".json", ".xlsx"])
def test_sweep_writes_curve(tmp_path, capsys, ext):
    path = tmp_path / f"sweep{ext}"
    assert main(["sweep", "--pattern", "five_spot", "--cells", "30", "-o", str(path)]) == 0
    out = json.loads(capsys.readouterr().out)
    assert "areal_sweep_at_breakthrough" in out and "breakthrough_pvi" in out
    if ext == ".csv":
        assert list(pd.read_csv(path).columns) == ["pvi", "areal_sweep", "fd"]
    elif ext == ".json":
        assert "curve" in json.loads(path.read_text())
    else:
        assert "curve" in pd.read_excel(path, sheet_name=None)


def test_crosscheck_capillary_option(capsys):
    assert main(["crosscheck", DEMO, "--cells", "40", "--capillary", "brooks_corey",
                 "--entry-pressure-psi", "2", "--pore-size-index", "2"]) == 0
    assert json.loads(capsys.readouterr().out)["capillary"] == "BrooksCoreyCapillary"


def test_errors_one_line_exit_2_no_file(tmp_path):
    path = tmp_path / "x.csv"
    p = subprocess.run([sys.executable, "-m", "flood", "sweep", "--pattern", "five_spot", "--mobility-ratio", "0.01",
                        "-o", str(path)], capture_output=True, text=True, cwd=ROOT)
    assert p.returncode == 2
    assert p.stderr.strip().count("\n") == 0 and p.stderr.startswith("error: mobility_ratio = 0.01")
    assert not path.exists()
    p = subprocess.run([sys.executable, "-m", "flood", "crosscheck", DEMO, "--capillary", "brooks_corey"],
                       capture_output=True, text=True, cwd=ROOT)
    assert p.returncode == 2 and p.stderr.startswith("error: --capillary brooks_corey")
