"""The engine never imports dash, plotly or flask (checked in a fresh interpreter)."""

import pkgutil
import subprocess
import sys
from pathlib import Path

import flood

ROOT = Path(__file__).resolve().parent.parent


def _engine_modules():
    names = []
    for info in pkgutil.walk_packages(flood.__path__, "flood."):
        if info.name.startswith("flood.dashboard") or info.name == "flood.__main__":
            continue
        names.append(info.name)
    return names


def test_engine_modules_load_no_web_stack():
    modules = _engine_modules()
    assert "flood.study" in modules and "flood.scenario" in modules
    code = ("import importlib, sys\n"
            f"for m in {modules!r}:\n"
            "    importlib.import_module(m)\n"
            "bad = sorted(m for m in sys.modules if m.split('.')[0] in ('dash', 'plotly', 'flask'))\n"
            "print(','.join(bad))\n")
    out = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, timeout=120)
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip() == "", f"engine imported: {out.stdout.strip()}"


def test_the_check_would_see_dash():
    """The same check does see dash when the dashboard is imported (so the test above can fail)."""
    code = ("import sys, flood.dashboard.callbacks\n"
            "print(','.join(sorted({m.split('.')[0] for m in sys.modules} & {'dash', 'plotly'})))\n")
    out = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, timeout=120)
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip() == "dash,plotly"
