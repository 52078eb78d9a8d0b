"""Benchmarks of the finite-volume solver (prints figures; never fails on timing).

Run: python bench/bench_numerical.py
1. 1D, 1000 cells, demo scenario, to 3 PVI (target <= 1 s).
2. 2D five-spot at M = 1, 100 x 100 cells, finite volumes to breakthrough (target <= 10 s), and
   the streamline method on the same grid.
3. Numerical / analytic run-time ratio for the same recovery accuracy: the coarsest grid whose
   recovery at 2 PVI is within 1 % of Welge, against the analytic solution's time.
4. Finite-volume pattern sweep on the default grid at M = 0.5, 1, 2, 5 (time, sweep at
   breakthrough, Fassihi's value beside it).
5. Strong capillarity (demo, 200 cells, Brooks-Corey Pe = 20 psi, λ = 2): explicit IMPES against
   the implicit (backward-Euler/Newton) stepping the cross-check uses with capillarity.
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from flood.numerical.capillary import BrooksCoreyCapillary  # noqa: E402
from flood.numerical.crosscheck import crosscheck_1d, crosscheck_case  # noqa: E402
from flood.numerical.grid import CartesianGrid  # noqa: E402
from flood.areal_sweep import fassihi_areal_sweep  # noqa: E402
from flood.numerical.sweep import BREAKTHROUGH_FD, PistonMobility, numerical_sweep, streamline_sweep  # noqa: E402
from flood.numerical.pattern import pattern_element  # noqa: E402
from flood.numerical.two_phase import simulate_two_phase  # noqa: E402
from flood.scenario import build_case, load_scenario  # noqa: E402

ROOT = Path(__file__).resolve().parent.parent


def main() -> None:
    case = build_case(load_scenario(ROOT / "sample_data" / "demo_scenario.json"))
    n = 1000
    grid = CartesianGrid(n, 1, 1.0 / n, 1.0)
    q = np.zeros(n)
    q[0], q[-1] = 1.0, -1.0
    best = min(simulate_two_phase(grid, case.relperm, case.mu_w, case.mu_o, case.swi, q, 3.0).seconds
               for _ in range(3))
    run = simulate_two_phase(grid, case.relperm, case.mu_w, case.mu_o, case.swi, q, 3.0)
    print(f"1D 1000 cells to 3 PVI: {best:.3f} s (best of 3), {run.steps} steps, {run.pressure_solves} pressure solves")

    element = pattern_element("five_spot")
    for stencil in (5, 9):
        g = element.grid(100, stencil)
        qw = element.well_rates(g)
        pv = g.pore_volume.sum()
        t0 = time.perf_counter()
        run2 = simulate_two_phase(g, PistonMobility(1.0), 1.0, 1.0, 0.0, qw, 1.5 * pv,
                                  stop=lambda t, sw, fw: fw >= BREAKTHROUGH_FD)
        t2 = time.perf_counter() - t0
        print(f"2D five-spot M=1 100x100 {stencil}-point finite volumes to breakthrough: {t2:.2f} s, {run2.steps} "
              f"steps, {run2.pressure_solves} pressure solves, breakthrough PVI {run2.time[-1] / pv:.4f}")
    t0 = time.perf_counter()
    sl = streamline_sweep("five_spot", cells=100)
    print(f"2D five-spot M=1 100x100 streamlines: {time.perf_counter() - t0:.2f} s, "
          f"sweep at breakthrough {sl.areal_sweep_at_breakthrough:.4f} (Muskat 0.7178, from memory)")

    for cells in (25, 50, 100, 200, 400, 800):
        r = crosscheck_1d(case.relperm, case.mu_w, case.mu_o, case.swi, cells=cells)
        err = abs(r.recovery_factor_at_2pvi_numerical / r.recovery_factor_at_2pvi_analytic - 1)
        if err < 0.01:
            print(f"same accuracy (recovery at 2 PVI within 1 %): {cells} cells, error {err:.4%}, "
                  f"numerical {r.seconds_numerical:.4f} s, analytic {r.seconds_analytic:.5f} s, "
                  f"ratio {r.seconds_numerical / r.seconds_analytic:.0f}x")
            break

    for m in (0.5, 1.0, 2.0, 5.0):
        r = numerical_sweep("five_spot", mobility_ratio=m, max_pvi=1.5, points=16)
        print(f"FV sweep five-spot M={m:g}, {r.cells} cells {r.stencil}-point: {r.seconds:.2f} s, "
              f"sweep at breakthrough {r.areal_sweep_at_breakthrough:.4f} "
              f"(Fassihi {float(fassihi_areal_sweep('five_spot', m, 0.0)):.4f})")

    cap = BrooksCoreyCapillary(20.0, 2.0, case.swc, case.sor)
    for stepping in ("explicit", "implicit"):
        r = crosscheck_case(case, cells=200, capillary=cap, time_stepping=stepping)
        print(f"capillary cross-check, 200 cells, Pe = 20 psi, {stepping}: {r.seconds_numerical:.2f} s, "
              f"{r.steps} steps, breakthrough {r.breakthrough_pvi_numerical:.4f} PV, "
              f"recovery at 2 PVI {r.recovery_factor_at_2pvi_numerical:.4f}")


if __name__ == "__main__":
    main()
