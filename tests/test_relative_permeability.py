"""Relative permeability: Corey form and lab tables.

[COREY1954] Corey, 1954, Producers Monthly 19(1). [FC1980] Fritsch & Carlson, 1980, SIAM J.
Numer. Anal. 17(2) (PCHIP preserves monotone data).
"""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from flood.errors import FloodInputError
from flood.relative_permeability import Corey, LabTable, corey, validate_relperm_table


def test_corey_endpoints_and_value():
    """krw(1-Sor) = krw_max, kro(Swc) = kro_max; hand value at S = 0.5 [COREY1954]."""
    krw, kro = corey(np.array([0.2, 0.475, 0.75]), 0.2, 0.25, 0.35, 0.9, 2.5, 2.0)
    np.testing.assert_allclose(krw, [0.0, 0.35 * 0.5**2.5, 0.35])
    np.testing.assert_allclose(kro, [0.9, 0.9 * 0.25, 0.0])


def test_corey_derivative_matches_numerical():
    rp = Corey(0.2, 0.25, 0.35, 0.9, 2.5, 2.0)
    sw = np.linspace(0.25, 0.7, 11)
    h = 1e-6
    num_w = (rp.kr(sw + h)[0] - rp.kr(sw - h)[0]) / (2 * h)
    num_o = (rp.kr(sw + h)[1] - rp.kr(sw - h)[1]) / (2 * h)
    dw, do = rp.dkr(sw)
    np.testing.assert_allclose(dw, num_w, rtol=1e-6)
    np.testing.assert_allclose(do, num_o, rtol=1e-6)


def test_table_reproduces_corey_when_dense():
    """A dense table of a Corey curve interpolates back to Corey (PCHIP is third-order accurate)."""
    rp = Corey(0.2, 0.25, 0.35, 0.9, 2.5, 2.0)
    sw = np.linspace(0.2, 0.75, 56)
    krw, kro = rp.kr(sw)
    tab = LabTable(sw, krw, kro, 0.2, 0.25)
    s = np.linspace(0.21, 0.74, 97)
    np.testing.assert_allclose(tab.kr(s)[0], rp.kr(s)[0], atol=2e-4)
    np.testing.assert_allclose(tab.kr(s)[1], rp.kr(s)[1], atol=2e-4)


@settings(max_examples=50, deadline=None)
@given(st.lists(st.floats(0.0, 1.0), min_size=4, max_size=12))
def test_pchip_table_stays_monotone(values):
    """PCHIP keeps monotone data monotone and within its range [FC1980]."""
    krw = np.sort(np.asarray(values))
    n = krw.size
    sw = np.linspace(0.1, 0.8, n)
    kro = krw[::-1].copy()
    kro[-1] = 0.0
    krw = np.maximum(krw, 1e-3)
    kro[0] = max(kro[0], 1e-3)
    kro = np.minimum.accumulate(kro)
    tab = LabTable(sw, krw, kro, 0.1, 0.2)
    s = np.linspace(0.1, 0.8, 500)
    kw, ko = tab.kr(s)
    assert np.all(np.diff(kw) >= -1e-12) and np.all(np.diff(ko) <= 1e-12)
    assert kw.min() >= krw.min() - 1e-12 and kw.max() <= krw.max() + 1e-12


@pytest.mark.parametrize("sw,krw,kro,match", [
    ([0.2, 0.5, 0.4], [0, 0.1, 0.2], [0.9, 0.3, 0], r"relperm\.table\[2\]\.sw = 0\.4: Sw must increase strictly"),
    ([0.2, 0.5, 0.8], [0, 0.3, 0.2], [0.9, 0.3, 0], r"relperm\.table\[2\]\.krw = 0\.2: krw must not decrease"),
    ([0.2, 0.5, 0.8], [0, 0.1, 0.2], [0.9, 0.95, 0], r"relperm\.table\[1\]\.kro = 0\.95: kro must not increase"),
    ([0.2, 0.5, 0.8], [0, 0.1, 1.2], [0.9, 0.3, 0], r"relperm\.table\[2\]\.krw = 1\.2: 0 <= value <= 1"),
    ([0.2, 0.5], [0, 0.1], [0.9, 0.0], r"relperm\.table = '2 rows': at least 3 rows"),
    ([0.2, np.nan, 0.8], [0, 0.1, 0.2], [0.9, 0.3, 0], r"relperm\.table\[1\]\.sw = nan: a finite number"),
])
def test_table_validation_messages(sw, krw, kro, match):
    with pytest.raises(FloodInputError, match=match):
        validate_relperm_table(sw, krw, kro)


def test_table_must_reach_residual_oil():
    with pytest.raises(FloodInputError, match=r"kro must fall to 0 at Sw = 1 - sor = 0\.75"):
        LabTable([0.2, 0.5, 0.8], [0.0, 0.1, 0.3], [0.9, 0.3, 0.1], 0.2, 0.25)
    with pytest.raises(FloodInputError, match=r"the table must start at or below swc = 0\.2"):
        LabTable([0.25, 0.5, 0.8], [0.0, 0.1, 0.3], [0.9, 0.3, 0.0], 0.2, 0.2)
