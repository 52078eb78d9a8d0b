"""Benchmark of the layered forecast (prints figures; never fails on timing).

A 100-layer stack (log-normal, V = 0.7) of the demo scenario, 400 PVI rows: the whole layered study
(``run_study`` with layers: breakthrough table, economic limit, dated forecast, layer table), warm
median over repeated runs, for Dykstra-Parsons and layered fractional flow; and, for reference,
the homogeneous study of the same scenario.

Target (issue 3): <= 20 ms warm for the 100-layer, 400-point forecast.

Usage: ``python bench/bench_layers.py [--repeat 40] [--layers 100] [--points 400]``
"""

from __future__ import annotations

import argparse
import copy
import json
import statistics
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from flood.scenario import build_case, parse_scenario  # noqa: E402
from flood.study import run_study  # noqa: E402


def _timed(case, points, repeat):
    for _ in range(3):
        run_study(case, points=points)
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        result = run_study(case, points=points)
        times.append(time.perf_counter() - t0)
    return statistics.median(times) * 1e3, min(times) * 1e3, result


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=40)
    ap.add_argument("--layers", type=int, default=100)
    ap.add_argument("--points", type=int, default=400)
    args = ap.parse_args(argv)
    base = json.loads((ROOT / "sample_data" / "demo_scenario.json").read_text())
    med, best, res = _timed(build_case(parse_scenario(base)), args.points, args.repeat)
    print(f"homogeneous study, {args.points} points: median {med:.2f} ms, best {best:.2f} ms")
    for method in ("dykstra_parsons", "layered_fractional_flow"):
        d = copy.deepcopy(base)
        d["layers"] = {"method": method, "variation": {"v": 0.7, "count": args.layers}}
        med, best, res = _timed(build_case(parse_scenario(d)), args.points, args.repeat)
        print(f"{method}, {args.layers} layers, {len(res.table)} rows "
              f"({args.points} + breakthroughs): median {med:.2f} ms, best {best:.2f} ms (target <= 20 ms)")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
