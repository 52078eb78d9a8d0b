"""Command line: ``python -m flood layers SCENARIO.json [-o FILE] [--method ...]``.

Writes one row per layer breakthrough (see :data:`flood.layers.BREAKTHROUGH_COLUMNS`): CSV to
standard output, or a .csv/.xlsx/.json file with ``-o`` (.xlsx and .json also carry the layer table,
the summary and the dated forecast). A WOR that is infinite (every layer producing only water) is
written as a blank cell (JSON null).
"""

from __future__ import annotations

import sys

import numpy as np
import pandas as pd

from .errors import FloodInputError
from .layers import LAYER_METHODS


def _blank_non_finite(df: pd.DataFrame) -> pd.DataFrame:
    """Copy of ``df`` with inf/NaN float cells replaced by None (blank in CSV/XLSX, null in JSON)."""
    out = df.astype(object)
    for col in df.columns:
        if pd.api.types.is_float_dtype(df[col]):
            bad = ~np.isfinite(df[col].to_numpy())
            out.loc[bad, col] = None
    return out


def layered_result_of(path, method=None):
    """Load a scenario with layers (optionally overriding ``layers.method``) and run its study."""
    from dataclasses import replace

    from .cli import load_case
    from .study import run_study

    _, case = load_case(path)
    if case.layers is None:
        raise FloodInputError("layers", "(missing)", "a 'layers' key in the scenario",
                              "see README 'Layered reservoirs'")
    if method is not None:
        case = replace(case, layers=replace(case.layers, method=method))
    return run_study(case)


def _cmd_layers(args) -> int:
    from .output import check_output_path, write_tables

    if args.output:
        check_output_path(args.output)
    result = layered_result_of(args.scenario, args.method)
    lr = result.layers
    bt = _blank_non_finite(lr.breakthrough_table)
    if not args.output:
        sys.stdout.write(bt.to_csv(index=False))
        return 0
    summary = pd.DataFrame({"quantity": list(result.summary), "value": [str(v) for v in result.summary.values()]})
    write_tables(args.output, {"breakthroughs": bt, "layers": _blank_non_finite(lr.layer_table),
                               "summary": summary, "forecast": _blank_non_finite(result.table)},
                 "breakthroughs")
    print(f"wrote {args.output} ({len(bt)} breakthrough rows, method {lr.method})", file=sys.stderr)
    return 0


def register(subparsers) -> None:
    """Add the ``layers`` subcommand."""
    s = subparsers.add_parser(
        "layers", help="layer-by-layer breakthrough table of a layered scenario (.csv/.xlsx/.json; CSV to stdout)")
    s.add_argument("scenario")
    s.add_argument("-o", "--output", help="output file; format by extension")
    s.add_argument("--method", choices=LAYER_METHODS, help="override the scenario's layers.method")
    s.set_defaults(handler=_cmd_layers)
