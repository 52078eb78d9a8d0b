"""Pattern areal sweep by streamlines (M = 1) and by the finite-volume solver (any M).

Sources: [SH] Lyons (ed.) 1996, Standard Handbook of Petroleum & Natural Gas Engineering, Table 5-39
(after Craig 1971); Muskat's potential-flow five-spot value 0.7178 (from memory, shared notes).
"""

from __future__ import annotations

import numpy as np
import pytest

from flood.errors import FloodInputError
from flood.numerical.pattern import pattern_element
from flood.numerical.sweep import numerical_sweep, streamline_sweep


def test_five_spot_muskat_default_grid():
    """Five-spot M = 1 sweeps 0.7178 at breakthrough (Muskat, potential flow; from memory), default grid."""
    r = streamline_sweep("five_spot")
    assert r.areal_sweep_at_breakthrough == pytest.approx(0.7178, abs=0.01)


@pytest.mark.parametrize("pattern, d_over_a, expected", [
    ("direct_line", 1.0, 0.570),     # [SH] Table 5-39
    ("direct_line", 1.5, 0.706),     # [SH] Table 5-39
    ("seven_spot", 1.0, 0.740),      # [SH] Table 5-39
], ids=["direct_line_da1", "direct_line_da1.5", "seven_spot"])
def test_published_sweep_at_breakthrough(pattern, d_over_a, expected):
    """Printed to 0.1 %; tolerance 0.01 covers the grid (100 cells along the longer side)."""
    r = streamline_sweep(pattern, d_over_a=d_over_a)
    assert r.areal_sweep_at_breakthrough == pytest.approx(expected, abs=0.01)


def test_staggered_line_half_is_five_spot():
    """Staggered line drive with d/a = 1/2 is the five-spot (geometry; common practice)."""
    a = streamline_sweep("staggered_line", d_over_a=0.5, cells=60).areal_sweep_at_breakthrough
    b = streamline_sweep("five_spot", cells=60).areal_sweep_at_breakthrough
    assert a == pytest.approx(b, abs=1e-9)


def test_streamline_volume_and_growth_after_breakthrough():
    """Tubes fill the element (sum of rate x time of flight = pore volume; Pollock 1988 exactness) and
    the sweep rises with PVI after breakthrough, equal to PVI before it (piston, M = 1)."""
    r = streamline_sweep("five_spot", cells=60)
    assert np.sum(r.tube_flux * r.tube_time) == pytest.approx(1.0, abs=0.005)
    c = r.curve
    before = c["pvi"] <= r.breakthrough_pvi
    assert np.allclose(c.loc[before, "areal_sweep"], c.loc[before, "pvi"])
    after = c.loc[c["pvi"] > r.breakthrough_pvi, "areal_sweep"].to_numpy()
    assert np.all(np.diff(after) > 0) and after[-1] > 0.99


def test_streamline_sweep_converges_with_grid():
    """Grid refinement moves the five-spot value towards 0.7178 (from memory) monotonically."""
    vals = [streamline_sweep("five_spot", cells=n, lines=1000).areal_sweep_at_breakthrough for n in (25, 50, 100)]
    errs = [abs(v - 0.7178) for v in vals]
    assert errs[2] < errs[0]


def test_numerical_sweep_falls_with_mobility_ratio():
    """Sweep at breakthrough falls as M rises (Craig 1971 / Dyes et al. 1954 trend; [SH] Fig. after Table 5-39)."""
    e = [numerical_sweep("five_spot", mobility_ratio=m, cells=16, max_pvi=1.5).areal_sweep_at_breakthrough
         for m in (0.5, 2.0, 5.0)]
    assert e[0] > e[1] > e[2]


def test_numerical_sweep_rises_after_breakthrough():
    r = numerical_sweep("five_spot", mobility_ratio=2.0, cells=16, max_pvi=2.0)
    after = r.curve.loc[r.curve["pvi"] > r.breakthrough_pvi, "areal_sweep"].to_numpy()
    assert after[-1] > r.areal_sweep_at_breakthrough
    assert np.all(np.diff(after) >= -1e-12)


def test_numerical_sweep_with_relperm_runs_and_reports_endpoint_m(demo_dict):
    from flood.scenario import build_case, parse_scenario

    case = build_case(parse_scenario(demo_dict))
    r = numerical_sweep("five_spot", relperm=case.relperm, mu_w=case.mu_w, mu_o=case.mu_o, swi=case.swi,
                        cells=12, max_pvi=1.0)
    assert r.mobility_ratio == pytest.approx((0.35 / 0.6) / (0.9 / 3.0))
    assert 0 < r.areal_sweep_at_breakthrough <= 1


def test_nine_spot_rates_balance():
    e = pattern_element("nine_spot", rate_ratio=2.0)
    assert sum(w.rate for w in e.wells if w.rate > 0) == pytest.approx(1.0)
    assert sum(w.rate for w in e.wells if w.rate < 0) == pytest.approx(-1.0)


def test_pattern_errors():
    with pytest.raises(FloodInputError, match=r"pattern = 'ten_spot': one of five_spot"):
        pattern_element("ten_spot")
    with pytest.raises(FloodInputError, match=r"d_over_a = 0.1: 0.25 <= d/a <= 10"):
        pattern_element("direct_line", d_over_a=0.1)
    with pytest.raises(FloodInputError, match=r"mobility_ratio = 100.0: 0.05 <= M <= 50"):
        numerical_sweep("five_spot", mobility_ratio=100.0)
