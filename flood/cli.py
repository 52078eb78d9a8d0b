"""Command line: ``python -m flood summary|forecast|validate ...`` (and the subcommands of other modules).

Bad input exits with status 2 and one line on standard error naming the field, the value and the
valid range; no traceback and no output file.
"""

from __future__ import annotations

import argparse
import importlib
import json
import math
import sys

import pandas as pd

from .errors import FloodInputError

#: Modules that add subcommands: each has ``register(subparsers)``; skipped if not installed.
EXTRA_COMMAND_MODULES = ("flood.layers_command", "flood.numerical.command")

SCREENING_NOTE = ("Screening estimate only: reserves, design and operating decisions rest with licensed "
                  "professionals and local regulations.")


def _jsonable(obj):
    if isinstance(obj, float) and not math.isfinite(obj):
        return None
    if isinstance(obj, dict):
        return {k: _jsonable(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_jsonable(v) for v in obj]
    if hasattr(obj, "item"):
        return _jsonable(obj.item())
    return obj


def print_json(obj) -> None:
    """Print ``obj`` as one JSON object (non-finite floats as null)."""
    print(json.dumps(_jsonable(obj), indent=2))


def load_case(path):
    """Load, validate and build the engine case of a scenario file."""
    from .scenario import build_case, load_scenario

    sc = load_scenario(path)
    return sc, build_case(sc)


def _cmd_validate(args) -> int:
    sc, case = load_case(args.scenario)
    from .forecast import summarize

    summarize(case)  # dynamic checks (e.g. gas fill-up before breakthrough)
    print(f"ok: {args.scenario} ({sc.name})")
    return 0


def _cmd_summary(args) -> int:
    from .study import run_study

    _, case = load_case(args.scenario)
    result = run_study(case, points=2)
    print_json(result.summary)
    return 0


def _cmd_forecast(args) -> int:
    from .output import check_output_path, write_tables
    from .scenario import scenario_to_dict
    from .study import run_study

    if args.output:
        check_output_path(args.output)
    sc, case = load_case(args.scenario)
    result = run_study(case, points=args.points)
    if args.output:
        inputs = pd.json_normalize(scenario_to_dict(sc), sep=".").T.reset_index()
        inputs.columns = ["input", "value"]
        inputs["value"] = inputs["value"].map(lambda v: json.dumps(v) if isinstance(v, list) else v).astype(str)
        summary = pd.DataFrame({"quantity": list(result.summary), "value": [str(v) for v in result.summary.values()]})
        write_tables(args.output, {"inputs": inputs, "summary": summary, "forecast": result.table}, "forecast")
        print(f"wrote {args.output} ({len(result.table)} rows)", file=sys.stderr)
    else:
        sys.stdout.write(result.table.to_csv(index=False))
    return 0


def build_parser() -> argparse.ArgumentParser:
    """The argument parser with every available subcommand."""
    p = argparse.ArgumentParser(prog="python -m flood", description="Screening waterflood forecasts. " + SCREENING_NOTE)
    sub = p.add_subparsers(dest="command", required=True)
    s = sub.add_parser("validate", help="check a scenario file")
    s.add_argument("scenario")
    s.set_defaults(handler=_cmd_validate)
    s = sub.add_parser("summary", help="print breakthrough / economic-limit summary as JSON")
    s.add_argument("scenario")
    s.set_defaults(handler=_cmd_summary)
    s = sub.add_parser("forecast", help="write the forecast table (.csv, .xlsx, .json); CSV to stdout without -o")
    s.add_argument("scenario")
    s.add_argument("-o", "--output", help="output file; format by extension")
    s.add_argument("--points", type=int, default=400, help="PVI points (default 400)")
    s.set_defaults(handler=_cmd_forecast)
    for name in EXTRA_COMMAND_MODULES:
        try:
            mod = importlib.import_module(name)
        except ModuleNotFoundError as exc:
            if exc.name and name.startswith(exc.name):
                continue
            raise
        mod.register(sub)
    return p


def main(argv=None) -> int:
    """Entry point; returns the exit status."""
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        return int(args.handler(args) or 0)
    except FloodInputError as exc:
        print(f"error: {exc}", file=sys.stderr)
        return 2
