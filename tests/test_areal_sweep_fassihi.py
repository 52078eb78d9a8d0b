"""Fassihi (1986) areal-sweep correlation [FASSIHI1986; SH Eq. 5-220, Table 5-40] and the dispatcher."""

from __future__ import annotations

import numpy as np
import pytest

from flood.areal_sweep import areal_sweep, correlation_sweep, fassihi_areal_sweep
from flood.errors import FloodInputError


@pytest.mark.parametrize("pattern, expected", [
    # 1/(1 + a4 ln(1 + a5) + a6) with the Table 5-40 coefficients, worked by hand (4 digits)
    ("five_spot", 0.6781),
    ("direct_line", 0.5415),
    ("staggered_line", 0.7284),
])
def test_breakthrough_values_at_unit_mobility_ratio(pattern, expected):
    assert float(fassihi_areal_sweep(pattern, 1.0, 0.0)) == pytest.approx(expected, abs=6e-5)


def test_correlation_sits_below_potential_flow_at_m1():
    """Experimental values sit a few points below the analytic 0.718 at M = 1 (shared notes)."""
    from flood.numerical.sweep import streamline_sweep

    corr = float(fassihi_areal_sweep("five_spot", 1.0, 0.0))
    sl = streamline_sweep("five_spot", cells=50, lines=1000).areal_sweep_at_breakthrough
    assert 0.0 < sl - corr < 0.06


def test_trends_and_cap():
    m = np.array([0.2, 0.5, 1.0, 2.0, 5.0, 10.0])
    e_bt = fassihi_areal_sweep("five_spot", m, 0.0)
    assert np.all(np.diff(e_bt) < 0)  # falls as M rises [SH]
    fd = np.linspace(0, 1, 11)
    assert np.all(np.diff(fassihi_areal_sweep("five_spot", 2.0, fd)) > 0)  # rises after breakthrough
    assert np.all(fassihi_areal_sweep("five_spot", 0.1, fd) <= 1.0)


def test_curve_volume_balance():
    """Before breakthrough E_A = W; after it dE_A/dW = 1 - fd (piston volume balance, common practice)."""
    r = correlation_sweep("five_spot", mobility_ratio=2.0, max_pvi=2.0, points=2001)
    c = r.curve
    w, e, fd = c["pvi"].to_numpy(), c["areal_sweep"].to_numpy(), c["fd"].to_numpy()
    before = w < r.breakthrough_pvi
    assert np.allclose(e[before], w[before])
    after = (w > r.breakthrough_pvi + 0.01) & (e < 0.999)
    de = np.gradient(e, w)
    assert np.allclose(de[after], 1 - fd[after], atol=0.01)


def test_dispatcher_and_errors():
    assert areal_sweep("five_spot", method="correlation", mobility_ratio=1.0).method == "correlation"
    assert areal_sweep("five_spot", mobility_ratio=1.0, cells=30).method == "streamline"
    with pytest.raises(FloodInputError, match=r"mobility_ratio = 12.0: 0 < M <= 10 for the Fassihi correlation"):
        fassihi_areal_sweep("five_spot", 12.0, 0.0)
    with pytest.raises(FloodInputError, match=r"pattern = 'seven_spot': five_spot, direct_line or staggered_line"):
        fassihi_areal_sweep("seven_spot", 1.0, 0.0)
    with pytest.raises(FloodInputError, match=r"fd = 1.5: 0 <= fd <= 1"):
        fassihi_areal_sweep("five_spot", 1.0, 1.5)
    with pytest.raises(FloodInputError, match=r"mobility_ratio = 2.0: 1 for the streamline method"):
        areal_sweep("five_spot", mobility_ratio=2.0, method="streamline")
