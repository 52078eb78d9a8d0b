"""Between the browser and the engine: UI values and dcc.Store JSON in, engine inputs and file bytes out.

Every number the dashboard shows comes from engine functions called here (``parse_scenario``,
``build_case``, ``run_study``, ``endpoint_mobility_ratio``). Nothing in this module keeps state:
the per-user state lives in the browser's ``dcc.Store`` components and is passed in and out.
"""

from __future__ import annotations

import base64
import binascii
import copy
import json
import math
from dataclasses import dataclass
from pathlib import Path

import pandas as pd

from flood.cli import SCREENING_NOTE
from flood.displacement import breakthrough_mobility_ratio
from flood.errors import FloodInputError
from flood.forecast import FORECAST_COLUMNS, endpoint_mobility_ratio
from flood.output import table_bytes
from flood.scenario import (MAX_FILE_BYTES, build_case, build_relperm, parse_scenario,
                            parse_scenario_text, read_relperm_csv_text, scenario_to_dict)
from flood.study import run_study

DEMO_PATH = Path(__file__).resolve().parents[2] / "sample_data" / "demo_scenario.json"

#: Most pinned cases shown at once.
MAX_PINS = 5

#: Accepted range of a typed endpoint mobility ratio [-] (the slider spans 0.1 to 100).
MOBILITY_RATIO_RANGE = (0.01, 1000.0)


@dataclass(frozen=True)
class Control:
    """One numeric input: where it goes in the scenario, its label with unit, and its slider range.

    ``path`` is the key path in the scenario dict (None for the mobility ratio, which is not a
    scenario key). ``log`` sliders move log10 of the value.
    """

    name: str
    label: str
    path: tuple | None
    lo: float
    hi: float
    step: float
    slider: bool = True
    log: bool = False


#: Sliders (each paired with a box) for what users explore, then boxes of the inputs panel.
CONTROLS = (
    Control("mobility_ratio", "Endpoint mobility ratio M [-]", None, 0.1, 100.0, 0.01, log=True),
    Control("nw", "Corey water exponent nw [-]", ("relperm", "nw"), 1.0, 6.0, 0.1),
    Control("no", "Corey oil exponent no [-]", ("relperm", "no"), 1.0, 6.0, 0.1),
    Control("krw_max", "Water endpoint krw(1 − Sor) [fraction]", ("relperm", "krw_max"), 0.05, 1.0, 0.01),
    Control("kro_max", "Oil endpoint kro(Swc) [fraction]", ("relperm", "kro_max"), 0.1, 1.0, 0.01),
    Control("swc", "Connate water Swc [fraction]", ("saturations", "swc"), 0.0, 0.5, 0.01),
    Control("sor", "Residual oil Sor [fraction]", ("saturations", "sor"), 0.0, 0.5, 0.01),
    Control("swi", "Initial water Swi [fraction]", ("saturations", "swi"), 0.0, 0.6, 0.01),
    Control("rate_bwpd", "Injection rate [bbl/d]", ("injection", "rate_bwpd"), 50.0, 5000.0, 10.0),
    Control("economic_water_cut", "Economic water-cut limit [fraction]",
            ("limits", "economic_water_cut"), 0.5, 0.999, 0.001),
    Control("layer_v", "Dykstra-Parsons variation V [fraction]", ("layers", "variation", "v"), 0.0, 0.95, 0.01),
    Control("layer_count", "Number of layers [-]", ("layers", "variation", "count"), 1, 50, 1),
    Control("area_acres", "Area [acre]", ("reservoir", "area_acres"), 0, 0, 0, slider=False),
    Control("thickness_ft", "Net thickness [ft]", ("reservoir", "thickness_ft"), 0, 0, 0, slider=False),
    Control("porosity", "Porosity [fraction]", ("reservoir", "porosity"), 0, 0, 0, slider=False),
    Control("mu_w_cp", "Water viscosity μw [cp]", ("fluids", "mu_w_cp"), 0, 0, 0, slider=False),
    Control("mu_o_cp", "Oil viscosity μo [cp]", ("fluids", "mu_o_cp"), 0, 0, 0, slider=False),
    Control("bo_rb_stb", "Oil FVF Bo [rb/STB]", ("fluids", "bo_rb_stb"), 0, 0, 0, slider=False),
    Control("bw_rb_stb", "Water FVF Bw [rb/STB]", ("fluids", "bw_rb_stb"), 0, 0, 0, slider=False),
    Control("max_pvi", "Forecast end at most [total PV]", ("limits", "max_pvi"), 0, 0, 0, slider=False),
)

CONTROL_NAMES = tuple(c.name for c in CONTROLS)


def value_from_slider(control: Control, position: float):
    """Control value at a slider position (10**position on a log slider, 4 significant digits)."""
    if control.log:
        return float(f"{10.0 ** position:.4g}")
    if float(control.step).is_integer():
        return int(round(position))
    return round(float(position), 6)


def slider_position(control: Control, value):
    """Slider position showing ``value`` (clamped to the slider), or None for a non-number."""
    if not isinstance(value, (int, float)) or not math.isfinite(value) or (control.log and value <= 0):
        return None
    position = math.log10(value) if control.log else value
    lo, hi = (math.log10(control.lo), math.log10(control.hi)) if control.log else (control.lo, control.hi)
    return min(max(position, lo), hi)
_BY_PATH = {".".join(c.path): c.name for c in CONTROLS if c.path}
COREY_CONTROLS = ("nw", "no", "krw_max", "kro_max")
LAYER_CONTROLS = ("layer_v", "layer_count")

#: Layer methods offered (value -> label); "none" means a homogeneous case.
LAYER_METHODS = {"none": "None (one homogeneous layer)",
                 "dykstra_parsons": "Dykstra-Parsons (piston-like, no crossflow)",
                 "layered_fractional_flow": "Layered fractional flow (no crossflow)"}
#: V and layer count shown while layers are off.
LAYER_DEFAULTS = {"layer_v": 0.6, "layer_count": 10}


def demo_scenario() -> dict:
    """The demo scenario (invented field) as a validated, JSON-ready dict."""
    return scenario_to_dict(parse_scenario_text(DEMO_PATH.read_text(encoding="utf-8")))


def _get(d, path):
    for key in path:
        d = d.get(key) if isinstance(d, dict) else None
    return d


def _set(d, path, value):
    for key in path[:-1]:
        d = d.setdefault(key, {})
    d[path[-1]] = value


def _inline_only(sc):
    """The scenario, if it names no file: browser data must never make the server read its own files."""
    if getattr(sc.relperm, "file", None) is not None:
        raise FloodInputError("relperm.file", sc.relperm.file, "an inline relperm.table in the dashboard",
                              "upload the CSV with the relative-permeability upload instead")
    if getattr(getattr(sc, "layers", None), "file", None) is not None:
        raise FloodInputError("layers.file", sc.layers.file, "an inline layers.table or layers.variation in the "
                              "dashboard", "upload the CSV with the layer-table upload instead")
    return sc


def parse_inline(scenario: dict):
    """Validate a scenario dict from the browser (``parse_scenario``), refusing file references."""
    return _inline_only(parse_scenario(scenario))


def mobility_ratio_of(scenario: dict) -> float:
    """Endpoint mobility ratio of a valid scenario dict [-] (engine: ``endpoint_mobility_ratio``)."""
    sc = parse_inline(scenario)
    rp = build_relperm(sc)
    return float(endpoint_mobility_ratio(rp.krw_end, rp.kro_end, sc.fluids.mu_w_cp, sc.fluids.mu_o_cp))


def oil_viscosity_for_mobility_ratio(scenario: dict, mobility_ratio) -> float:
    """Oil viscosity giving endpoint mobility ratio M at the scenario's μw and endpoints [cp].

    μo = M μw kro(Swc) / krw(1 − Sor), i.e. M divided by the engine's mobility ratio at μo = 1 cp;
    rounded to 5 significant digits (the value then shown in the oil-viscosity box).
    """
    lo, hi = MOBILITY_RATIO_RANGE
    if not (isinstance(mobility_ratio, (int, float)) and math.isfinite(mobility_ratio)
            and lo <= mobility_ratio <= hi):
        raise FloodInputError("mobility_ratio", mobility_ratio, f"a number {lo:g} <= M <= {hi:g}")
    trial = copy.deepcopy(scenario)
    trial["fluids"]["mu_o_cp"] = 1.0
    per_cp = mobility_ratio_of(trial)
    return float(f"{mobility_ratio / per_cp:.5g}")


def controls_from_scenario(scenario: dict) -> dict:
    """Control values (name -> number or None) shown for a scenario dict."""
    values = {c.name: _get(scenario, c.path) for c in CONTROLS if c.path}
    if values.get("swi") is None:
        values["swi"] = _get(scenario, ("saturations", "swc"))
    values["mobility_ratio"] = float(f"{mobility_ratio_of(scenario):.4g}")
    for name, default in LAYER_DEFAULTS.items():
        if values.get(name) is None:
            values[name] = default
    values["layer_method"] = (scenario.get("layers") or {}).get("method", "none")
    return values


def uses_layer_table(scenario: dict) -> bool:
    """True when the scenario's layers come from a table (V and layer count do not apply)."""
    return "table" in (scenario.get("layers") or {})


def _integral(value):
    return int(value) if isinstance(value, float) and value.is_integer() else value


def _apply_layers(sc: dict, values: dict) -> None:
    method = values.get("layer_method", (sc.get("layers") or {}).get("method", "none"))
    if method in (None, "none"):
        sc.pop("layers", None)
    elif uses_layer_table(sc):
        sc["layers"]["method"] = method
    else:
        sc["layers"] = {"method": method, "variation": {"v": values.get("layer_v"),
                                                        "count": _integral(values.get("layer_count"))}}


def uses_corey(scenario: dict) -> bool:
    """True when the scenario's relative permeability is the Corey model (sliders apply)."""
    return scenario.get("relperm", {}).get("model") == "corey"


def uses_constant_rate(scenario: dict) -> bool:
    """True when the scenario injects at one constant rate (the rate control applies)."""
    return "rate_bwpd" in scenario.get("injection", {})


def scenario_from_controls(base: dict, values: dict, derive_oil_viscosity: bool) -> dict:
    """Apply control values to a copy of the base scenario dict.

    Corey controls apply only to a Corey scenario and the rate only to a constant-rate one. With
    ``derive_oil_viscosity`` the oil viscosity is set from the mobility ratio at the scenario's
    water viscosity and endpoints (see :func:`oil_viscosity_for_mobility_ratio`).

    Raises
    ------
    FloodInputError
        A bad mobility ratio (other bad values surface when the result is validated).
    """
    sc = copy.deepcopy(base)
    for c in CONTROLS:
        if c.path is None or c.name not in values:
            continue
        if c.name in COREY_CONTROLS and not uses_corey(sc):
            continue
        if c.name == "rate_bwpd" and not uses_constant_rate(sc):
            continue
        if c.name in LAYER_CONTROLS:
            continue
        _set(sc, c.path, values[c.name])
    _apply_layers(sc, values)
    if derive_oil_viscosity:
        sc["fluids"]["mu_o_cp"] = oil_viscosity_for_mobility_ratio(sc, values.get("mobility_ratio"))
    return sc


def evaluate(scenario: dict, points: int = 300):
    """Validate a scenario dict and run the study: returns (validated dict, StudyResult).

    Raises
    ------
    FloodInputError
    """
    sc = parse_inline(scenario)
    result = run_study(build_case(sc), points=points)
    return scenario_to_dict(sc), result


def control_for_error(err: FloodInputError) -> str | None:
    """Name of the control an engine error is about (None when it is not one of the controls)."""
    field = err.field
    if field == "mobility_ratio":
        return "mobility_ratio"
    for path, name in _BY_PATH.items():
        if field == path or field == path.replace("_cp", "") or field.startswith(path + "["):
            return name
    return None


# ----------------------------------------------------------------------------------------------
# Uploads


def decode_upload(contents: str, filename: str, what: str) -> str:
    """Text of a dcc.Upload ``contents`` data URL, size-capped at MAX_FILE_BYTES.

    Raises
    ------
    FloodInputError
        Not a data URL, too large, or not UTF-8 text.
    """
    name = filename or what
    if not isinstance(contents, str) or "," not in contents:
        raise FloodInputError(name, "(no data)", f"a {what}")
    payload = contents.split(",", 1)[1]
    if len(payload) * 3 // 4 > MAX_FILE_BYTES + 3:
        raise FloodInputError(name, f"about {len(payload) * 3 // 4} bytes", f"a {what} of at most {MAX_FILE_BYTES} bytes")
    try:
        raw = base64.b64decode(payload, validate=True)
    except (binascii.Error, ValueError):
        raise FloodInputError(name, "(undecodable)", f"a {what}") from None
    if len(raw) > MAX_FILE_BYTES:
        raise FloodInputError(name, f"{len(raw)} bytes", f"a {what} of at most {MAX_FILE_BYTES} bytes")
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        raise FloodInputError(name, "(binary data)", f"a UTF-8 text {what}") from None


def scenario_from_upload(contents: str, filename: str) -> dict:
    """Validated scenario dict from an uploaded JSON file (same validation as the command line).

    Tables must be inline (``relperm.table``, ``layers.table``): an uploaded file cannot make the
    server read its own files. The check comes before any file would be opened (``build_case``).
    """
    text = decode_upload(contents, filename, "scenario JSON file")
    sc = _inline_only(parse_scenario_text(text, source=filename or "scenario"))
    data = scenario_to_dict(sc)
    evaluate(data, points=2)  # dynamic checks (fill-up before breakthrough...)
    return data


def scenario_with_relperm_table(base: dict, contents: str, filename: str) -> dict:
    """The base scenario with its relative permeability replaced by an uploaded lab table CSV."""
    text = decode_upload(contents, filename, "relative permeability CSV")
    sw, krw, kro = read_relperm_csv_text(text, field_name=filename or "relperm CSV")
    sc = copy.deepcopy(base)
    sc["relperm"] = {"model": "table", "table": [[float(a), float(b), float(c)] for a, b, c in zip(sw, krw, kro)]}
    evaluate(sc, points=2)
    return sc


def scenario_with_corey(base: dict, values: dict) -> dict:
    """The base scenario back on Corey relative permeability with the Corey control values."""
    sc = copy.deepcopy(base)
    sc["relperm"] = {"model": "corey", **{k: values[k] for k in COREY_CONTROLS}}
    return sc


# ----------------------------------------------------------------------------------------------
# Downloads


def unit_headers(table: pd.DataFrame) -> pd.DataFrame:
    """Forecast table with headers carrying units, e.g. ``water_cut [fraction]``."""
    units = {k: v[v.rfind("[") + 1:-1] for k, v in FORECAST_COLUMNS.items()}
    return table.rename(columns={k: f"{k} [{u}]" for k, u in units.items()})


def result_sheets(scenario: dict, result) -> dict:
    """Sheets of the downloadable workbook: inputs, summary, forecast, and layers when present."""
    inputs = pd.json_normalize(scenario, sep=".").T.reset_index()
    inputs.columns = ["input", "value"]
    inputs["value"] = inputs["value"].map(lambda v: json.dumps(v) if isinstance(v, list) else v).astype(str)
    summary = pd.DataFrame({"quantity": [*result.summary, "caution"],
                            "value": [*(str(v) for v in result.summary.values()), SCREENING_NOTE]})
    sheets = {"inputs": inputs, "summary": summary, "forecast": unit_headers(result.table)}
    layers = getattr(result, "layers", None)
    if layers is not None:
        sheets["layers"] = layers.layer_table
        sheets["layer breakthroughs"] = layers.breakthrough_table
    return sheets


def download_bytes(kind: str, scenario: dict) -> tuple[bytes, str]:
    """File bytes and file name for a download of the current scenario ('csv', 'xlsx' or 'json')."""
    stem = "".join(ch if ch.isalnum() or ch in "-_" else "_" for ch in scenario.get("name", "case"))[:60] or "case"
    if kind == "json":
        data, _ = evaluate(scenario, points=2)
        return json.dumps(data, indent=2).encode("utf-8"), f"{stem}.json"
    data, result = evaluate(scenario)
    sheets = result_sheets(data, result)
    return table_bytes(f".{kind}", sheets, "forecast"), f"{stem}_forecast.{kind}"


# ----------------------------------------------------------------------------------------------
# Pinned cases


def pin_case(pins: list, scenario: dict, label: str | None) -> list:
    """Pinned-cases list with the scenario added (the oldest dropped beyond MAX_PINS)."""
    _, result = evaluate(scenario, points=2)
    used = {p["key"] for p in pins}
    key = next(f"case{i}" for i in range(1, 2 * MAX_PINS + 2) if f"case{i}" not in used)
    label = (label or "").strip()[:40] or f"Case {key[4:]}"
    s = result.summary
    entry = {"key": key, "label": label, "scenario": scenario,
             "summary": {k: s[k] for k in SUMMARY_KEYS}}
    return (list(pins) + [entry])[-MAX_PINS:]


def unpin_case(pins: list, key: str) -> list:
    """Pinned-cases list without the case ``key``."""
    return [p for p in pins if p["key"] != key]


def pinned_results(pins: list, points: int = 200) -> list:
    """(label, StudyResult) of each pinned case, recomputed from its scenario."""
    return [(p["label"], evaluate(p["scenario"], points=points)[1]) for p in pins]


#: Summary quantities shown on the cards and in the cases table: key -> (label, unit, format).
SUMMARY_ITEMS = {
    "breakthrough_days": ("Breakthrough", "days", "{:,.0f}"),
    "breakthrough_pvi": ("Breakthrough", "PV injected", "{:.3f}"),
    "recovery_factor_at_breakthrough": ("Recovery at breakthrough", "% OOIP", "pct"),
    "recovery_factor_at_economic_limit": ("Recovery at economic limit", "% OOIP", "pct"),
    "economic_limit_days": ("Economic limit reached", "days", "{:,.0f}"),
    "ooip_stb": ("Oil in place", "STB", "{:,.0f}"),
    "endpoint_mobility_ratio": ("Endpoint mobility ratio", "M", "{:.3g}"),
}
SUMMARY_KEYS = tuple(SUMMARY_ITEMS)


def format_quantity(key: str, value) -> str:
    """Text of a summary value for display."""
    fmt = SUMMARY_ITEMS[key][2]
    if value is None or not math.isfinite(float(value)):
        return "—"
    return f"{100 * float(value):.1f}" if fmt == "pct" else fmt.format(float(value))


# ----------------------------------------------------------------------------------------------
# Layers (present once the scenario schema has the ``layers`` key)


def scenario_with_layer_table(base: dict, contents: str, filename: str) -> dict:
    """The base scenario with its layers replaced by an uploaded layer CSV (thickness_ft, permeability_md[, porosity]).

    The layer method stays as chosen (Dykstra-Parsons when layers were off).
    """
    from flood.scenario import read_layer_csv_text

    text = decode_upload(contents, filename, "layer table CSV")
    h, k, phi = read_layer_csv_text(text, field_name=filename or "layer CSV")
    rows = []
    for hi, ki, pi in zip(h, k, phi):
        row = {"thickness_ft": float(hi), "permeability_md": float(ki)}
        if math.isfinite(pi):
            row["porosity"] = float(pi)
        rows.append(row)
    sc = copy.deepcopy(base)
    method = (sc.get("layers") or {}).get("method", "dykstra_parsons")
    sc["layers"] = {"method": method, "table": rows}
    evaluate(sc, points=2)
    return sc


def scenario_with_layer_variation(base: dict) -> dict:
    """The base scenario with an uploaded layer table dropped (layers from V and count again)."""
    sc = copy.deepcopy(base)
    if uses_layer_table(sc):
        sc["layers"] = {"method": sc["layers"]["method"], "variation": {"v": LAYER_DEFAULTS["layer_v"],
                                                                         "count": LAYER_DEFAULTS["layer_count"]}}
    return sc


def days_at_pvi(scenario: dict, pvi: float) -> float:
    """Days since injection start when ``pvi`` pore volumes have been injected (engine injection plan)."""
    from flood.forecast import pore_volume

    case = build_case(parse_inline(scenario))
    vp = float(pore_volume(case.area_acres, case.thickness_ft, case.porosity))
    return float(case.injection.days_at_cumulative(pvi * vp / case.bw))


# ----------------------------------------------------------------------------------------------
# Numerical cross-check and pattern sweep (flood.numerical; run as background jobs)

#: Areal-sweep methods offered (value -> label).
SWEEP_METHODS = {"streamline": "Streamlines at M = 1",
                 "numerical": "Finite volumes with this case's relative permeabilities",
                 "correlation": "Fassihi (1986) correlation at this case's endpoint M"}


def _number(field, value, lo, hi, integer=False):
    ok = isinstance(value, (int, float)) and math.isfinite(value) and lo <= value <= hi
    if integer and ok:
        ok = float(value).is_integer()
    if not ok:
        kind = "a whole number" if integer else "a number"
        raise FloodInputError(field, value, f"{kind} {lo:g} <= value <= {hi:g}")
    return int(value) if integer else float(value)


def run_crosscheck(scenario: dict, cells, entry_pressure_psi, pore_size_index, gravity: bool, progress=None):
    """1D finite-volume cross-check of the scenario beside its Buckley-Leverett solution.

    Parameters
    ----------
    cells : int
        Grid cells, 10..5000 [-].
    entry_pressure_psi : float
        Brooks-Corey entry pressure Pe [psi]; 0 turns capillarity off.
    pore_size_index : float
        Brooks-Corey pore-size index λ [-], 0.1..10 (used when Pe > 0).
    gravity : bool
        Include the scenario's dip (gravity term).

    Returns
    -------
    flood.numerical.crosscheck.CrosscheckResult
    """
    from flood.numerical.capillary import BrooksCoreyCapillary
    from flood.numerical.crosscheck import crosscheck_case

    cells = _number("cells", cells, 10, 5000, integer=True)
    pe = _number("entry pressure", entry_pressure_psi, 0.0, 1000.0)
    sc = parse_inline(scenario)
    case = build_case(sc)
    capillary = None
    if pe > 0:
        lam = _number("pore-size index", pore_size_index, 0.1, 10.0)
        capillary = BrooksCoreyCapillary(pe, lam, case.swc, case.sor)
    return crosscheck_case(case, cells=cells, capillary=capillary, include_gravity=bool(gravity), progress=progress)


def run_sweep(scenario: dict, pattern: str, d_over_a, method: str, cells, map_pvi, progress=None):
    """Areal sweep of a repeated pattern for the scenario (method as in :data:`SWEEP_METHODS`).

    Returns
    -------
    flood.numerical.sweep.ArealSweepResult
    """
    from flood.areal_sweep import areal_sweep
    from flood.numerical.sweep import numerical_sweep

    d_over_a = _number("d/a", d_over_a, 0.25, 10.0)
    cells = _number("cells", cells, 10, 200, integer=True)
    sc = parse_inline(scenario)
    case = build_case(sc)
    max_pvi = float(min(max(sc.limits.max_pvi, 1.0), 5.0))
    if method == "numerical":
        map_pvi = _number("map PVI", map_pvi, 0.01, max_pvi)
        return numerical_sweep(pattern, d_over_a=d_over_a, cells=cells, relperm=case.relperm, mu_w=case.mu_w,
                               mu_o=case.mu_o, swi=case.swi, max_pvi=max_pvi, map_pvi=(map_pvi,), progress=progress)
    if method == "correlation":
        # the piston-displacement correlation is read at the mobility ratio behind the front
        m = breakthrough_mobility_ratio(case.relperm, case.mu_w, case.mu_o, case.swi, case.gravity)
        return areal_sweep(pattern, mobility_ratio=m, method="correlation", d_over_a=d_over_a, max_pvi=max_pvi)
    if method == "streamline":
        from flood.numerical.sweep import streamline_sweep

        map_pvi = _number("map PVI", map_pvi, 0.01, max_pvi)
        return streamline_sweep(pattern, d_over_a=d_over_a, max_pvi=max_pvi, map_pvi=(map_pvi,))
    raise FloodInputError("method", method, "one of " + ", ".join(SWEEP_METHODS))


def run_pattern_forecast(scenario: dict, sweep, progress=None):
    """Pattern forecast of the scenario from an areal sweep (engine: ``forecast_sweep``,
    ``pattern_forecast``), ending at the economic water cut; and the linear forecast beside it.

    Returns
    -------
    (pandas.DataFrame, flood.study.StudyResult)
    """
    from flood.pattern_forecast import forecast_sweep, pattern_forecast

    case = build_case(parse_inline(scenario))
    table = pattern_forecast(case, forecast_sweep(case, sweep, progress), economic_limit=True)
    return table, run_study(case, points=300)


def sweep_correlation_beside(scenario: dict, sweep):
    """The Fassihi correlation at the same mobility ratio as ``sweep``, or None where it has no data.

    Same M means: 1 beside streamlines, the mobility ratio behind the front beside a two-phase
    finite-volume run (engine: ``breakthrough_mobility_ratio``); nothing beside the correlation
    itself. Only the five-spot, and line drives at d/a = 1, within 0 < M <= 10 (Fassihi 1986).
    """
    from flood.areal_sweep import FASSIHI_COEFFICIENTS, FASSIHI_M_RANGE, correlation_sweep

    if sweep.method == "correlation" or sweep.pattern not in FASSIHI_COEFFICIENTS:
        return None
    if sweep.pattern != "five_spot" and sweep.d_over_a != 1.0:
        return None
    if sweep.method == "streamline":
        m = 1.0
    else:
        case = build_case(parse_inline(scenario))
        m = breakthrough_mobility_ratio(case.relperm, case.mu_w, case.mu_o, case.swi, case.gravity)
    if not (FASSIHI_M_RANGE[0] < m <= FASSIHI_M_RANGE[1]):
        return None
    return correlation_sweep(sweep.pattern, mobility_ratio=m, max_pvi=float(sweep.curve["pvi"].iloc[-1]))
