"""Shared fixtures: the demo scenario and helpers to write scenario variants to real files."""

from __future__ import annotations

import copy
import json
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
SAMPLE = ROOT / "sample_data"


@pytest.fixture
def demo_dict():
    """The demo scenario as a fresh dict (safe to mutate)."""
    return copy.deepcopy(json.loads((SAMPLE / "demo_scenario.json").read_text()))


@pytest.fixture
def write_scenario(tmp_path):
    """Write a scenario dict to a real JSON file and return its path."""

    def _write(data, name="scenario.json"):
        path = tmp_path / name
        path.write_text(json.dumps(data) if not isinstance(data, str) else data)
        return path

    return _write
