"""The ``crosscheck`` and ``sweep`` subcommands of ``python -m flood``.

Both print a JSON summary to standard output and, with ``-o FILE``, write their curve atomically
(.csv: the curve; .json: every table; .xlsx: one sheet per table). Bad input ends with one line
``error: ...`` on standard error and exit status 2 (raised as FloodInputError and reported by
:func:`flood.cli.main`, or here when a handler is called directly).
"""

from __future__ import annotations

import sys

import numpy as np
import pandas as pd

from ..errors import FloodInputError

_CAPILLARY = ("none", "brooks_corey", "table")


def _float_list(text: str):
    try:
        values = [float(v) for v in text.split(",") if v.strip()]
    except ValueError:
        raise FloodInputError("--pvi", text, "comma-separated numbers, e.g. 0.2,0.4") from None
    if not values:
        raise FloodInputError("--pvi", text, "one or more numbers")
    return values


def _summary_frame(summary: dict) -> pd.DataFrame:
    return pd.DataFrame({"quantity": list(summary), "value": [str(v) for v in summary.values()]})


def _capillary_model(args, case):
    from .capillary import BrooksCoreyCapillary, CapillaryTable

    if args.capillary == "none":
        return None
    if args.capillary == "brooks_corey":
        if args.entry_pressure_psi is None or args.pore_size_index is None:
            raise FloodInputError("--capillary brooks_corey", "(missing)",
                                  "--entry-pressure-psi and --pore-size-index as well")
        return BrooksCoreyCapillary(args.entry_pressure_psi, args.pore_size_index, case.swc, case.sor)
    if not args.capillary_table:
        raise FloodInputError("--capillary table", "(missing)", "--capillary-table FILE.csv with columns sw, pc_psi")
    try:
        df = pd.read_csv(args.capillary_table, comment="#", skipinitialspace=True)
    except (OSError, ValueError) as exc:
        raise FloodInputError("--capillary-table", args.capillary_table, "a readable CSV with columns sw, pc_psi",
                              str(exc).splitlines()[0]) from None
    cols = {str(c).strip().lower(): c for c in df.columns}
    if "sw" not in cols or "pc_psi" not in cols:
        raise FloodInputError("--capillary-table", list(df.columns)[:4], "a header row with columns sw, pc_psi")
    sw = pd.to_numeric(df[cols["sw"]], errors="coerce").to_numpy(dtype=float)
    pc = pd.to_numeric(df[cols["pc_psi"]], errors="coerce").to_numpy(dtype=float)
    return CapillaryTable(sw, pc)


def _guarded(func):
    """Run a handler; FloodInputError becomes one stderr line and exit status 2."""

    def handler(args) -> int:
        try:
            return func(args)
        except FloodInputError as exc:
            print(f"error: {exc}", file=sys.stderr)
            return 2

    handler.__name__ = func.__name__
    handler.__doc__ = func.__doc__
    return handler


@_guarded
def run_crosscheck(args) -> int:
    """Handler of ``crosscheck``: numerical 1D solution beside Buckley-Leverett."""
    from ..cli import load_case, print_json
    from ..output import check_output_path, write_tables
    from .crosscheck import crosscheck_case

    if args.output:
        check_output_path(args.output)
    _, case = load_case(args.scenario)
    cap = _capillary_model(args, case)
    pvi = _float_list(args.pvi) if args.pvi else None
    result = crosscheck_case(case, cells=args.cells, capillary=cap, include_gravity=not args.no_gravity,
                             profile_pvi=pvi, end_pvi=args.end_pvi, time_stepping=args.time_stepping)
    summary = result.summary()
    if args.output:
        write_tables(args.output, {"curve": result.curve, "profiles": result.profiles_table(),
                                   "summary": _summary_frame(summary)}, "curve")
        summary["output"] = str(args.output)
    print_json(summary)
    return 0


@_guarded
def run_sweep(args) -> int:
    """Handler of ``sweep``: areal sweep of a pattern, with the correlation beside it."""
    from ..areal_sweep import FASSIHI_COEFFICIENTS, areal_sweep, correlation_sweep
    from ..cli import load_case, print_json
    from ..output import check_output_path, write_tables

    if args.output:
        check_output_path(args.output)
    if args.forecast:
        if not args.scenario:
            raise FloodInputError("--forecast", args.forecast, "a SCENARIO.json beside it",
                                  "the forecast needs the scenario's rock, fluids and injection")
        check_output_path(args.forecast)
    if args.scenario and args.mobility_ratio is not None:
        raise FloodInputError("--mobility-ratio", args.mobility_ratio, "either a mobility ratio or a scenario, not both")
    kwargs = dict(method=args.method, d_over_a=args.d_over_a, cells=args.cells, max_pvi=args.max_pvi)
    if args.map_pvi is not None:
        if not (np.isfinite(args.map_pvi) and 0 < args.map_pvi <= args.max_pvi):
            raise FloodInputError("--map-pvi", args.map_pvi, f"0 < PVI <= --max-pvi ({args.max_pvi:g})")
        if args.method == "correlation":
            raise FloodInputError("--map-pvi", args.map_pvi, "a streamline or numerical method",
                                  "the correlation has no map")
        kwargs["map_pvi"] = (float(args.map_pvi),)
    if args.scenario:
        from ..displacement import breakthrough_mobility_ratio
        from ..forecast import endpoint_mobility_ratio

        _, case = load_case(args.scenario)
        m_end = float(endpoint_mobility_ratio(case.relperm.krw_end, case.relperm.kro_end, case.mu_w, case.mu_o))
        # piston-displacement correlations are read at the mobility ratio behind the front
        m = breakthrough_mobility_ratio(case.relperm, case.mu_w, case.mu_o, case.swi, case.gravity)
        if args.method in ("correlation",):
            result = areal_sweep(args.pattern, mobility_ratio=m, **kwargs)
        else:
            if args.method == "streamline":
                raise FloodInputError("--method", "streamline", "auto, numerical or correlation with a scenario",
                                      "a scenario's mobility ratio is not 1 in general")
            kwargs["method"] = "numerical"
            result = areal_sweep(args.pattern, mobility_ratio=None, relperm=case.relperm, mu_w=case.mu_w,
                                 mu_o=case.mu_o, swi=case.swi, **kwargs)
    else:
        m = m_end = 1.0 if args.mobility_ratio is None else float(args.mobility_ratio)
        result = areal_sweep(args.pattern, mobility_ratio=m, **kwargs)
    summary = result.summary()
    summary["endpoint_mobility_ratio"] = m_end
    two_phase = result.pvi_basis == "total"
    summary["pvi_basis"] = "total pore volume" if two_phase else "displaceable pore volume"
    if args.scenario:
        summary["breakthrough_mobility_ratio"] = m
    sheets = {"curve": result.curve}
    if result.method != "correlation" and args.pattern in FASSIHI_COEFFICIENTS and 0 < m <= 10 and (
            args.pattern == "five_spot" or args.d_over_a == 1.0):
        corr = correlation_sweep(args.pattern, mobility_ratio=m, max_pvi=args.max_pvi)
        summary["correlation_areal_sweep_at_breakthrough"] = corr.areal_sweep_at_breakthrough
        summary["correlation_breakthrough_pvi"] = corr.breakthrough_pvi
        if two_phase:
            # the correlation is in displaceable pore volumes: the swept area holds the Welge
            # average saturation behind the front, so W_bt = E_A (S̄w,bt - Swi) total PV (Craig 1971, from memory)
            from ..displacement import buckley_leverett

            sol = buckley_leverett(case.relperm, case.mu_w, case.mu_o, case.swi, case.gravity)
            summary["correlation_breakthrough_pvi_total"] = corr.areal_sweep_at_breakthrough * (
                sol.average_saturation_at_breakthrough - sol.swi)
        sheets["correlation"] = corr.curve
    for w, field in result.swept_maps.items():
        # rows bottom (y = 0) to top, columns x = 0 to the element's length; cell-centre coordinates
        ny, nx = field.shape
        frame = pd.DataFrame(field, columns=[f"x={(i + 0.5) / nx:.4g}" for i in range(nx)])
        frame.insert(0, "y", (np.arange(ny) + 0.5) / ny)
        sheets["swept_map"] = frame
        summary["map_pvi"] = w
        if result.method == "streamline":
            summary["swept_share_on_map"] = float(field.mean())
    forecast = None
    if args.forecast:
        from ..pattern_forecast import forecast_sweep, pattern_forecast

        forecast = pattern_forecast(case, forecast_sweep(case, result), economic_limit=True)
        last = forecast.iloc[-1]
        summary["pattern_forecast_end_days"] = float(last["days"])
        summary["pattern_recovery_factor_at_forecast_end"] = float(last["recovery_factor"])
        summary["pattern_water_cut_at_forecast_end"] = float(last["water_cut"])
        summary["pattern_forecast_end_reason"] = ("economic water cut" if last["water_cut"] >= case.economic_water_cut - 1e-9
                                                  else "max_pvi")
    if args.output:
        sheets["summary"] = _summary_frame(summary)
        write_tables(args.output, sheets, "curve")
        summary["output"] = str(args.output)
    if forecast is not None:
        write_tables(args.forecast, {"pattern_forecast": forecast}, "pattern_forecast")
        summary["forecast_output"] = str(args.forecast)
    print_json(summary)
    return 0


def register(subparsers) -> None:
    """Add the ``crosscheck`` and ``sweep`` subcommands to an argparse subparsers object."""
    from .pattern import PATTERNS

    c = subparsers.add_parser("crosscheck", help="1D finite-volume solution beside Buckley-Leverett (JSON)")
    c.add_argument("scenario", help="scenario JSON file")
    c.add_argument("--cells", type=int, default=400, help="number of cells (default 400)")
    c.add_argument("--capillary", choices=_CAPILLARY, default="none", help="capillary pressure model (default none)")
    c.add_argument("--entry-pressure-psi", type=float, help="Brooks-Corey entry pressure [psi]")
    c.add_argument("--pore-size-index", type=float, help="Brooks-Corey pore-size index [-]")
    c.add_argument("--capillary-table", help="CSV with columns sw, pc_psi (for --capillary table)")
    c.add_argument("--no-gravity", action="store_true", help="ignore the scenario's dip")
    c.add_argument("--pvi", help="PVIs of the compared profiles, comma-separated (default 0.5, 0.9, 1.5 x breakthrough)")
    c.add_argument("--end-pvi", type=float, default=None, help="last PVI (default max(2, scenario max_pvi))")
    c.add_argument("--time-stepping", choices=("auto", "explicit", "implicit"), default="auto",
                   help="auto (default): implicit with capillarity, explicit IMPES otherwise")
    c.add_argument("-o", "--output", help="write the curve: .csv, .json or .xlsx")
    c.set_defaults(handler=run_crosscheck)
    s = subparsers.add_parser("sweep", help="areal sweep of a repeated pattern (JSON)")
    s.add_argument("scenario", nargs="?", help="scenario JSON file (its relative permeabilities and viscosities)")
    s.add_argument("--pattern", choices=PATTERNS, required=True)
    s.add_argument("--d-over-a", type=float, default=1.0, help="d/a of a line drive (default 1)")
    s.add_argument("--mobility-ratio", type=float, default=None, help="mobility ratio M (default 1)")
    s.add_argument("--method", choices=("auto", "streamline", "numerical", "correlation"), default="auto",
                   help="auto: streamlines at M = 1, finite volumes otherwise")
    s.add_argument("--cells", type=int, default=None, help="cells along the longer side of the element")
    s.add_argument("--max-pvi", type=float, default=3.0, help="last PVI of the curve (default 3)")
    s.add_argument("-o", "--output", help="write the curve versus PVI: .csv, .json or .xlsx")
    s.add_argument("--map-pvi", type=float, default=None,
                   help="keep the swept map (streamlines: 1 = swept; numerical: Sw) at this PVI in -o .json/.xlsx")
    s.add_argument("--forecast", metavar="FILE",
                   help="with a scenario: write the pattern forecast versus time (.csv, .json or .xlsx)")
    s.set_defaults(handler=run_sweep)
