"""Benchmark of the fractional-flow engine (prints figures; never fails on timing).

1. One case: summary + 400-point forecast (``run_study``), warm median over repeated runs.
2. Batch: breakthrough and economic-limit figures for many Corey scenarios at once through the
   vectorised ``displacement_summary`` (one core), scenarios per second.

Targets (issue 2): <= 2 ms for (1); >= 50,000 scenarios/s for (2).
Run: ``python bench/bench_engine.py``.
"""

from __future__ import annotations

import statistics
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from flood.forecast import displacement_summary, original_oil_in_place, pore_volume  # noqa: E402
from flood.relative_permeability import Corey  # noqa: E402
from flood.scenario import build_case, load_scenario  # noqa: E402
from flood.study import run_study  # noqa: E402


def bench_single(repeats: int = 300) -> list[float]:
    case = build_case(load_scenario(Path(__file__).resolve().parent.parent / "sample_data" / "demo_scenario.json"))
    for _ in range(20):
        run_study(case)
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        run_study(case, points=400)
        times.append(time.perf_counter() - t0)
    return times


def bench_batch(n: int = 100_000, repeats: int = 5) -> tuple[float, dict]:
    rng = np.random.default_rng(7)
    swc = rng.uniform(0.1, 0.3, n)
    sor = rng.uniform(0.15, 0.35, n)
    rp = Corey(swc, sor, rng.uniform(0.2, 0.6, n), rng.uniform(0.6, 1.0, n), rng.uniform(1.5, 4, n),
               rng.uniform(1.5, 4, n))
    mu_o = rng.uniform(0.5, 50, n)
    best = np.inf
    out = {}
    for _ in range(repeats):
        t0 = time.perf_counter()
        out = displacement_summary(rp, 0.5, mu_o, swc, 1.2, 1.02, 0.98)
        vp = pore_volume(40.0, 30.0, rng.uniform(0.15, 0.3, n))
        ooip = original_oil_in_place(vp, swc, 1.2)
        out["recovery_factor_at_economic_limit"] = out["displaced_at_economic_limit"] / (1 - swc)
        out["breakthrough_days"] = out["breakthrough_pvi"] * vp / (1.02 * 800.0)
        out["ooip"] = ooip
        best = min(best, time.perf_counter() - t0)
    return n / best, out


def main() -> None:
    import os

    print(f"machine: {os.cpu_count()} cores; numpy {np.__version__}")
    t = bench_single()
    ms = np.array(t) * 1e3
    print(f"single case, summary + 400-point forecast: median {statistics.median(ms):.3f} ms, "
          f"p95 {np.percentile(ms, 95):.3f} ms over {len(ms)} warm runs (target <= 2 ms)")
    rate, out = bench_batch()
    print(f"batch, vectorised displacement_summary: {rate:,.0f} scenarios/s on one process "
          f"(target >= 50,000/s); median breakthrough PVI {np.median(out['breakthrough_pvi']):.3f}")


if __name__ == "__main__":
    main()
