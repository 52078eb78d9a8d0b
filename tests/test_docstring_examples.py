"""The Examples in the engine's docstrings run and print what they say (doctest)."""

import doctest
import importlib

import pytest

MODULES = ["flood.relative_permeability", "flood.fractional_flow", "flood.displacement", "flood.forecast"]


@pytest.mark.parametrize("name", MODULES)
def test_doctests(name):
    result = doctest.testmod(importlib.import_module(name), optionflags=doctest.NORMALIZE_WHITESPACE)
    assert result.attempted > 0
    assert result.failed == 0
