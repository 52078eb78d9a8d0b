"""``python -m flood crosscheck`` and ``sweep``: JSON keys, output files, one-line errors."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import numpy as np
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
        assert list(pd.read_csv(path).columns) == ["pvi", "areal_sweep", "fd", "water_cut", "recovery"]
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


def test_sweep_of_scenario_reads_correlation_at_mobility_ratio_behind_front(capsys):
    """With a scenario the correlation [Fassihi 1986] is read at M behind the front (Craig 1971, from
    memory) and its breakthrough is also given in total pore volumes, W_bt = E_A (S̄w,bt - Swi)."""
    from flood.areal_sweep import fassihi_areal_sweep
    from flood.displacement import breakthrough_mobility_ratio, buckley_leverett
    from flood.scenario import build_case, load_scenario

    assert main(["sweep", "--pattern", "five_spot", "--cells", "16", "--max-pvi", "0.8", DEMO]) == 0
    out = json.loads(capsys.readouterr().out)
    case = build_case(load_scenario(DEMO))
    m_bt = breakthrough_mobility_ratio(case.relperm, case.mu_w, case.mu_o, case.swi, case.gravity)
    assert out["breakthrough_mobility_ratio"] == pytest.approx(m_bt)
    assert out["breakthrough_mobility_ratio"] < out["endpoint_mobility_ratio"]
    e = float(fassihi_areal_sweep("five_spot", m_bt, 0.0))
    assert out["correlation_areal_sweep_at_breakthrough"] == pytest.approx(e)
    sol = buckley_leverett(case.relperm, case.mu_w, case.mu_o, case.swi, case.gravity)
    assert out["correlation_breakthrough_pvi_total"] == pytest.approx(e * (sol.average_saturation_at_breakthrough - case.swi))
    assert out["pvi_basis"] == "total pore volume"


@pytest.mark.parametrize("ext", [".csv", ".xlsx"])
def test_sweep_forecast_writes_pattern_forecast_to_economic_limit(tmp_path, capsys, ext):
    from flood.pattern_forecast import PATTERN_FORECAST_COLUMNS
    from flood.scenario import build_case, load_scenario

    path = tmp_path / f"pattern{ext}"
    assert main(["sweep", "--pattern", "five_spot", "--method", "correlation", DEMO, "--forecast", str(path)]) == 0
    out = json.loads(capsys.readouterr().out)
    table = pd.read_csv(path) if ext == ".csv" else pd.read_excel(path, sheet_name="pattern_forecast")
    assert list(table.columns) == list(PATTERN_FORECAST_COLUMNS)
    limit = build_case(load_scenario(DEMO)).economic_water_cut
    assert table["water_cut"].iloc[-1] == pytest.approx(limit, abs=1e-9)
    assert np.all(table["water_cut"].iloc[:-1] < limit)
    assert out["pattern_forecast_end_reason"] == "economic water cut"
    assert out["pattern_recovery_factor_at_forecast_end"] == pytest.approx(table["recovery_factor"].iloc[-1])


def test_sweep_forecast_needs_a_scenario(tmp_path, capsys):
    path = tmp_path / "pattern.csv"
    assert main(["sweep", "--pattern", "five_spot", "--forecast", str(path)]) == 2
    err = capsys.readouterr().err
    assert "--forecast" in err and "SCENARIO.json" in err and len(err.strip().splitlines()) == 1
    assert not path.exists()


def test_sweep_map_in_workbook(tmp_path, capsys):
    """--map-pvi keeps the swept map; its swept share is the engine's E_A(W) within the map's cell
    resolution (the stream-tube read-out of the same time-of-flight field)."""
    path = tmp_path / "map.xlsx"
    assert main(["sweep", "--pattern", "five_spot", "--map-pvi", "0.5", "-o", str(path)]) == 0
    out = json.loads(capsys.readouterr().out)
    sheets = pd.read_excel(path, sheet_name=None)
    field = sheets["swept_map"].drop(columns="y").to_numpy()
    assert field.shape == (100, 100) and set(np.unique(field)) <= {0.0, 1.0}
    assert out["swept_share_on_map"] == pytest.approx(field.mean())
    assert out["swept_share_on_map"] == pytest.approx(0.5, abs=0.02)  # E_A = W before breakthrough


@pytest.mark.parametrize("argv, expected", [
    (["--map-pvi", "5"], "--map-pvi = 5.0: 0 < PVI <= --max-pvi (3)"),
    (["--map-pvi", "0.5", "--method", "correlation"], "--map-pvi = 0.5: a streamline or numerical method"),
])
def test_sweep_map_errors(capsys, argv, expected):
    assert main(["sweep", "--pattern", "five_spot", *argv]) == 2
    assert expected in capsys.readouterr().err
