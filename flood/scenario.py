"""Scenario files: the JSON description of one waterflood, its schema and validation.

A scenario is JSON in field units; every key carries its unit. The schema below is a contract:
keys may be added, never renamed. Validation uses pydantic, and every error becomes a one-line
:class:`~flood.errors.FloodInputError` naming the field path, the value and the valid range.

References
----------
Common practice for the inputs of a fractional-flow waterflood forecast; see README "Scenario files".
"""

from __future__ import annotations

import json
import math
from dataclasses import dataclass
from pathlib import Path
from typing import Annotated, Literal, Optional, Union

import annotated_types as at
import numpy as np
from pydantic import BaseModel, ConfigDict, Field, ValidationError, model_validator

from .errors import FloodInputError
from .injection import InjectionPlan
from .relative_permeability import Corey, LabTable

#: Largest scenario or table file accepted [bytes] (also the dashboard's upload cap).
MAX_FILE_BYTES = 2_000_000

_CONFIG = ConfigDict(extra="forbid", strict=True, allow_inf_nan=False)


class _Model(BaseModel):
    model_config = _CONFIG


class Reservoir(_Model):
    """Pattern or reservoir element: area, net thickness, porosity, permeability and dip."""

    area_acres: float = Field(gt=0, le=1e6, description="drainage/pattern area [acre]")
    thickness_ft: float = Field(gt=0, le=1e4, description="net pay thickness [ft]")
    porosity: float = Field(gt=0, le=1, description="porosity [fraction]")
    permeability_md: float = Field(gt=0, le=1e6, description="absolute permeability [md]")
    dip_deg: float = Field(0.0, ge=-90, le=90, description="dip of the flow path, + when water flows updip [deg]")
    cross_section_ft2: Optional[float] = Field(
        None, gt=0, le=1e9,
        description="cross-section open to flow for the gravity term [ft²]; default sqrt(area) x thickness")


class Saturations(_Model):
    """End-point and initial saturations [fraction of pore volume]."""

    swc: float = Field(ge=0, lt=1, description="connate water saturation [fraction]")
    sor: float = Field(ge=0, lt=1, description="residual oil saturation to water [fraction]")
    swi: Optional[float] = Field(None, ge=0, lt=1, description="initial water saturation [fraction]; default swc")
    sgi: float = Field(0.0, ge=0, lt=1, description="initial free gas saturation [fraction]")

    @model_validator(mode="after")
    def _consistent(self):
        if self.swc + self.sor >= 1.0:
            raise _FieldError("saturations.sor", self.sor, f"swc + sor < 1 (swc = {self.swc:g})",
                              f"swc + sor = {self.swc + self.sor:g}: no movable oil")
        swi = self.swc if self.swi is None else self.swi
        if not (self.swc <= swi < 1.0 - self.sor):
            raise _FieldError("saturations.swi", swi, f"swc = {self.swc:g} <= swi < 1 - sor = {1 - self.sor:g}")
        if swi + self.sgi >= 1.0 - self.sor:
            raise _FieldError("saturations.sgi", self.sgi, f"swi + sgi < 1 - sor = {1 - self.sor:g}",
                              "no movable oil left")
        if self.sgi > 0 and swi > self.swc:
            raise _FieldError("saturations.sgi", self.sgi, f"0 when swi > swc (swi = {swi:g}, swc = {self.swc:g})",
                              "the gas fill-up model assumes immobile initial water")
        return self


class CoreyRelperm(_Model):
    """Corey relative permeability: endpoints and exponents."""

    model: Literal["corey"]
    krw_max: float = Field(gt=0, le=1, description="krw at 1 - sor [fraction]")
    kro_max: float = Field(gt=0, le=1, description="kro at swc [fraction]")
    nw: float = Field(ge=1, le=10, description="Corey water exponent [-]")
    no: float = Field(ge=1, le=10, description="Corey oil exponent [-]")


class TableRelperm(_Model):
    """Lab relative-permeability table inline ([[sw, krw, kro], ...]) or as a CSV file path."""

    model: Literal["table"]
    table: Optional[list[Annotated[list[float], at.Len(3, 3)]]] = Field(None, min_length=3)
    file: Optional[str] = Field(None, min_length=1, description="CSV path relative to the scenario file")

    @model_validator(mode="after")
    def _one_source(self):
        if (self.table is None) == (self.file is None):
            raise _FieldError("relperm", "table and file" if self.table else "neither",
                              "exactly one of 'table' or 'file'")
        return self


class Fluids(_Model):
    """Viscosities, formation volume factors and (for the gravity term) specific gravities."""

    mu_w_cp: float = Field(gt=0, le=1e4, description="water viscosity [cp]")
    mu_o_cp: float = Field(gt=0, le=1e5, description="oil viscosity [cp]")
    bo_rb_stb: float = Field(gt=0, le=10, description="oil formation volume factor [rb/STB]")
    bw_rb_stb: float = Field(gt=0, le=10, description="water formation volume factor [rb/STB]")
    water_specific_gravity: Optional[float] = Field(None, gt=0, le=2, description="water specific gravity [-]")
    oil_specific_gravity: Optional[float] = Field(None, gt=0, le=2, description="oil specific gravity (water = 1) [-]")


class Injection(_Model):
    """Water injection: a constant rate or a schedule of [day, rate_bwpd] rows."""

    rate_bwpd: Optional[float] = Field(None, gt=0, le=1e7, description="constant injection rate [bbl/d]")
    schedule: Optional[list[Annotated[list[float], at.Len(2, 2)]]] = Field(None, min_length=1)
    gravity_reference_rate_bwpd: Optional[float] = Field(
        None, gt=0, le=1e7, description="rate used in the gravity term [bbl/d]; default the (mean) rate")

    @model_validator(mode="after")
    def _one_source(self):
        if (self.rate_bwpd is None) == (self.schedule is None):
            raise _FieldError("injection", "rate_bwpd and schedule" if self.rate_bwpd else "neither",
                              "exactly one of 'rate_bwpd' or 'schedule'")
        return self


class Limits(_Model):
    """What ends the forecast: the economic surface water cut or a maximum PVI, whichever first."""

    economic_water_cut: float = Field(gt=0, lt=1, description="economic limit surface water cut [fraction]")
    max_pvi: float = Field(gt=0, le=100, description="largest pore volumes injected [total PV]")


class LayerRow(_Model):
    """One layer of a layer table: thickness, permeability and (optionally) porosity."""

    thickness_ft: float = Field(gt=0, le=1e4, description="layer net thickness [ft]")
    permeability_md: float = Field(gt=0, le=1e6, description="layer permeability [md]")
    porosity: Optional[float] = Field(None, gt=0, le=1, description="layer porosity [fraction]; default reservoir.porosity")


class LayerVariation(_Model):
    """Equal-thickness log-normal layers generated from the Dykstra-Parsons variation V."""

    v: float = Field(ge=0, lt=1, description="Dykstra-Parsons permeability variation V [fraction]")
    count: int = Field(ge=1, le=1000, description="number of equal-thickness layers [-]")


class Layers(_Model):
    """Layered reservoir: the forecast method and the layers (a table, a CSV file or a variation V)."""

    method: Literal["dykstra_parsons", "layered_fractional_flow"]
    table: Optional[list[LayerRow]] = None
    variation: Optional[LayerVariation] = None
    file: Optional[str] = Field(None, min_length=1, description="layer CSV path relative to the scenario file")

    @model_validator(mode="after")
    def _one_source(self):
        given = [k for k in ("table", "variation", "file") if getattr(self, k) is not None]
        if len(given) != 1:
            raise _FieldError("layers", " and ".join(given) or "neither",
                              "exactly one of 'table', 'variation' or 'file'")
        if self.table is not None and len(self.table) == 0:
            raise _FieldError("layers.table", [], "at least one layer row {thickness_ft, permeability_md}")
        return self


class Scenario(_Model):
    """A complete waterflood scenario (field units)."""

    name: str = Field("Unnamed scenario", min_length=1, max_length=200)
    reservoir: Reservoir
    saturations: Saturations
    relperm: Annotated[Union[CoreyRelperm, TableRelperm], Field(discriminator="model")]
    fluids: Fluids
    injection: Injection
    limits: Limits
    layers: Optional[Layers] = None

    @model_validator(mode="after")
    def _gravity_inputs(self):
        if self.reservoir.dip_deg != 0.0:
            for key in ("water_specific_gravity", "oil_specific_gravity"):
                if getattr(self.fluids, key) is None:
                    raise _FieldError(f"fluids.{key}", None, "a specific gravity > 0",
                                      "required when reservoir.dip_deg is not 0")
        return self

    @model_validator(mode="after")
    def _layer_inputs(self):
        if self.layers is None:
            return self
        if self.reservoir.dip_deg != 0.0:
            raise _FieldError("reservoir.dip_deg", self.reservoir.dip_deg, "0 when 'layers' is given",
                              "the layered methods assume horizontal layers")
        if self.saturations.sgi > 0.0:
            raise _FieldError("saturations.sgi", self.saturations.sgi, "0 when 'layers' is given",
                              "the layered methods assume no initial free gas")
        swi = self.saturations.swc if self.saturations.swi is None else self.saturations.swi
        if self.layers.method == "dykstra_parsons" and swi > self.saturations.swc:
            raise _FieldError("saturations.swi", swi, f"swi = swc = {self.saturations.swc:g} for dykstra_parsons",
                              "the piston-like method assumes immobile initial water")
        return self


class _Missing:
    def __repr__(self):
        return "(missing)"


class _FieldError(ValueError):
    """Raised inside validators; carries a full field path that overrides pydantic's location."""

    def __init__(self, field, value, expected, reason=""):
        self.error = FloodInputError(field, value, expected, reason)
        super().__init__(str(self.error))


# ----------------------------------------------------------------------------------------------
# Turning pydantic errors into one-line messages


def _constraint_text(model_cls, loc) -> str:
    """Valid range of the field at ``loc`` from its Field constraints, e.g. '0 < value <= 1'."""
    cls = model_cls
    info = None
    subs = {"corey": CoreyRelperm, "table": TableRelperm}
    for part in loc:
        if isinstance(part, int) and isinstance(cls, type):
            continue  # an item of a list of models (e.g. layers.table[2])
        if isinstance(part, int) or cls is None:
            break
        if cls == "union":
            cls = subs.get(part)
            continue
        fields = getattr(cls, "model_fields", {})
        if part not in fields:
            return ""
        info = fields[part]
        ann = info.annotation
        cls = "union" if part == "relperm" else _model_in(ann)
    if info is None:
        return ""
    lo = hi = None
    for m in info.metadata:
        if isinstance(m, at.Gt):
            lo = f"{m.gt:g} <"
        elif isinstance(m, at.Ge):
            lo = f"{m.ge:g} <="
        elif isinstance(m, at.Lt):
            hi = f"< {m.lt:g}"
        elif isinstance(m, at.Le):
            hi = f"<= {m.le:g}"
    if lo or hi:
        return " ".join(p for p in (lo, "value", hi) if p)
    return ""


def _model_in(ann):
    """The scenario model class inside an annotation such as ``Optional[list[LayerRow]]`` (or None)."""
    import typing

    if isinstance(ann, type):
        return ann if issubclass(ann, BaseModel) else None
    for arg in typing.get_args(ann):
        found = _model_in(arg)
        if found is not None:
            return found
    return None


def _path(loc) -> str:
    out = ""
    for part in loc:
        if isinstance(part, int):
            out += f"[{part}]"
        elif part in ("corey", "table") and out == "relperm":
            continue  # discriminator tag, not a key
        else:
            out += ("." if out else "") + str(part)
    return out or "(scenario)"


def error_from_validation(exc: ValidationError, prefix: str = "") -> FloodInputError:
    """Convert the first error of a pydantic ValidationError into a :class:`FloodInputError`."""
    err = exc.errors(include_url=False)[0]
    ctx_err = (err.get("ctx") or {}).get("error")
    if isinstance(ctx_err, _FieldError):
        return ctx_err.error
    loc = err.get("loc", ())
    path = (prefix + "." if prefix else "") + _path(loc)
    typ = err.get("type", "")
    value = err.get("input")
    if typ == "missing":
        return FloodInputError(path, _Missing(), "a required key")
    if typ == "extra_forbidden":
        return FloodInputError(path, value, "not a known key", "check the spelling; see README 'Scenario files'")
    if typ == "union_tag_invalid" or typ == "union_tag_not_found":
        return FloodInputError(path + ".model" if not path.endswith("model") else path,
                               value.get("model") if isinstance(value, dict) else value, "'corey' or 'table'")
    rng = _constraint_text(Scenario, loc)
    msg = err.get("msg", "invalid")
    if typ == "finite_number":
        expected = "a finite number" + (f" ({rng})" if rng else "")
    elif rng:
        expected = f"{msg[0].lower() + msg[1:]}; valid range {rng}"
    else:
        expected = msg[0].lower() + msg[1:]
    return FloodInputError(path, value, expected)


# ----------------------------------------------------------------------------------------------
# Reading


def _reject_constant(token: str):
    raise FloodInputError("(scenario)", token, "finite numbers only (NaN and Infinity are not allowed)")


def parse_scenario(data, base_dir: Path | str | None = None) -> Scenario:
    """Validate a scenario given as a dict (already parsed JSON).

    Parameters
    ----------
    data : dict
        The scenario.
    base_dir : path, optional
        Folder that a relative ``relperm.file`` is resolved against (kept on the result).

    Returns
    -------
    Scenario

    Raises
    ------
    FloodInputError
    """
    if not isinstance(data, dict):
        raise FloodInputError("(scenario)", type(data).__name__, "a JSON object {...}")
    _check_finite(data, "")
    try:
        sc = Scenario.model_validate(data)
    except ValidationError as exc:
        raise error_from_validation(exc) from None
    object.__setattr__(sc, "_base_dir", Path(base_dir) if base_dir else Path.cwd())
    return sc


def _check_finite(obj, path):
    """Reject NaN/inf anywhere (python's json module accepts them) with the field path."""
    if isinstance(obj, float) and not math.isfinite(obj):
        raise FloodInputError(path or "(scenario)", obj, "a finite number")
    if isinstance(obj, dict):
        for k, v in obj.items():
            _check_finite(v, f"{path}.{k}" if path else str(k))
    elif isinstance(obj, list):
        for i, v in enumerate(obj):
            _check_finite(v, f"{path}[{i}]")


def parse_scenario_text(text: str, base_dir=None, source: str = "scenario") -> Scenario:
    """Parse and validate scenario JSON text; see :func:`parse_scenario`."""
    try:
        data = json.loads(text)
    except json.JSONDecodeError as exc:
        raise FloodInputError(source, f"line {exc.lineno} column {exc.colno}", "valid JSON", exc.msg) from None
    return parse_scenario(data, base_dir)


def load_scenario(path) -> Scenario:
    """Read, parse and validate a scenario JSON file.

    Raises
    ------
    FloodInputError
        Unreadable or oversized file, invalid JSON or any invalid value.
    """
    path = Path(path)
    text = _read_text(path, "scenario file")
    return parse_scenario_text(text, base_dir=path.parent, source=str(path))


def _read_text(path: Path, what: str) -> str:
    try:
        size = path.stat().st_size
        if size > MAX_FILE_BYTES:
            raise FloodInputError(str(path), f"{size} bytes", f"a {what} of at most {MAX_FILE_BYTES} bytes")
        return path.read_text(encoding="utf-8")
    except FloodInputError:
        raise
    except (OSError, UnicodeDecodeError) as exc:
        raise FloodInputError(str(path), "(unreadable)", f"a readable UTF-8 {what}",
                              exc.strerror or type(exc).__name__) from None


def read_relperm_csv_text(text: str, field_name: str = "relperm.file"):
    """Parse a relative-permeability CSV (header row with columns sw, krw, kro; extra columns ignored).

    Returns
    -------
    sw, krw, kro : numpy.ndarray
    """
    cols = read_csv_columns(text, field_name, ("sw", "krw", "kro"))
    return cols["sw"], cols["krw"], cols["kro"]


def read_layer_csv_text(text: str, field_name: str = "layers.file"):
    """Parse a layer CSV: header ``thickness_ft, permeability_md[, porosity]``, one row per layer.

    Returns
    -------
    thickness_ft, permeability_md, porosity : numpy.ndarray
        ``porosity`` is NaN where the column is absent or a cell is blank.
    """
    cols = read_csv_columns(text, field_name, ("thickness_ft", "permeability_md"), ("porosity",))
    return cols["thickness_ft"], cols["permeability_md"], cols["porosity"]


def read_csv_columns(text: str, field_name: str, required, optional=()):
    """Numeric columns of a CSV with a header row (names case-insensitive; extra columns ignored).

    Returns
    -------
    dict of numpy.ndarray
        One array per required and optional column; an absent optional column or a blank optional
        cell is NaN.

    Raises
    ------
    FloodInputError
        Unparseable CSV, a missing required column, or a cell that is not a number (the message
        names the row and column).
    """
    import io

    import pandas as pd

    header = ", ".join(required) + (f" ({', '.join(optional)} optional)" if optional else "")
    try:
        df = pd.read_csv(io.StringIO(text), comment="#", skipinitialspace=True)
    except (ValueError, pd.errors.ParserError) as exc:
        raise FloodInputError(field_name, "(CSV)", f"a CSV table with a header row {header}",
                              str(exc).splitlines()[0]) from None
    cols = {str(c).strip().lower(): c for c in df.columns}
    missing = [c for c in required if c not in cols]
    if missing:
        raise FloodInputError(field_name, list(df.columns)[:6], f"a header row with columns {header}",
                              f"missing {', '.join(missing)}")
    out = {}
    for name in (*required, *optional):
        if name not in cols:
            out[name] = np.full(len(df), np.nan)
            continue
        raw = df[cols[name]]
        col = pd.to_numeric(raw, errors="coerce")
        bad = col.isna().to_numpy() & (raw.notna().to_numpy() | (name in required))
        if bad.any():
            i = int(np.argmax(bad))
            raise FloodInputError(f"{field_name}[{i}].{name}", raw.iloc[i], "a number")
        out[name] = col.to_numpy(dtype=float)
    return out


# ----------------------------------------------------------------------------------------------
# From a scenario to the engine's inputs


@dataclass(frozen=True)
class FloodCase:
    """Engine inputs derived from a scenario (field units)."""

    name: str
    relperm: object
    mu_w: float
    mu_o: float
    swc: float
    sor: float
    swi: float
    sgi: float
    bo: float
    bw: float
    area_acres: float
    thickness_ft: float
    porosity: float
    permeability_md: float
    gravity: float
    injection: InjectionPlan
    economic_water_cut: float
    max_pvi: float
    layers: object = None  # flood.layers.LayerSet when the scenario has "layers"


def build_relperm(sc: Scenario, base_dir=None):
    """Relative-permeability model of a scenario (Corey or lab table)."""
    s = sc.saturations
    rp = sc.relperm
    if isinstance(rp, CoreyRelperm):
        return Corey(s.swc, s.sor, rp.krw_max, rp.kro_max, rp.nw, rp.no)
    if rp.table is not None:
        arr = np.asarray(rp.table, dtype=float)
        return LabTable(arr[:, 0], arr[:, 1], arr[:, 2], s.swc, s.sor, field_name="relperm.table")
    text = _read_side_file(sc, base_dir, rp.file, "relperm.file", "relative permeability CSV")
    sw, krw, kro = read_relperm_csv_text(text, "relperm.file")
    return LabTable(sw, krw, kro, s.swc, s.sor, field_name="relperm.file")


def _read_side_file(sc: Scenario, base_dir, name: str, field_name: str, what: str) -> str:
    """Text of a file named in a scenario, relative to the scenario's folder unless absolute."""
    base = Path(base_dir) if base_dir else getattr(sc, "_base_dir", Path.cwd())
    path = Path(name)
    path = path if path.is_absolute() else base / path
    try:
        return _read_text(path, what)
    except FloodInputError as exc:
        raise FloodInputError(field_name, name, "a readable CSV file (relative to the scenario file)",
                              exc.reason or exc.expected) from None


def build_case(sc: Scenario, base_dir=None) -> FloodCase:
    """Turn a validated scenario into engine inputs (relperm model, injection plan, gravity term)."""
    from .fractional_flow import gravity_number

    res, sat, fl, inj = sc.reservoir, sc.saturations, sc.fluids, sc.injection
    relperm = build_relperm(sc, base_dir)
    plan = (InjectionPlan.constant(inj.rate_bwpd) if inj.rate_bwpd is not None
            else InjectionPlan.from_schedule(inj.schedule))
    gravity = 0.0
    if res.dip_deg != 0.0:
        area = res.cross_section_ft2 or math.sqrt(res.area_acres * 43560.0) * res.thickness_ft
        q_ref = inj.gravity_reference_rate_bwpd or plan.mean_rate()
        gravity = float(gravity_number(res.permeability_md, area, q_ref * fl.bw_rb_stb,
                                       fl.water_specific_gravity - fl.oil_specific_gravity, res.dip_deg))
    return FloodCase(
        name=sc.name, relperm=relperm, mu_w=fl.mu_w_cp, mu_o=fl.mu_o_cp, swc=sat.swc, sor=sat.sor,
        swi=sat.swc if sat.swi is None else sat.swi, sgi=sat.sgi, bo=fl.bo_rb_stb, bw=fl.bw_rb_stb,
        area_acres=res.area_acres, thickness_ft=res.thickness_ft, porosity=res.porosity,
        permeability_md=res.permeability_md, gravity=gravity, injection=plan,
        economic_water_cut=sc.limits.economic_water_cut, max_pvi=sc.limits.max_pvi,
        layers=build_layers(sc, base_dir))


def build_layers(sc: Scenario, base_dir=None):
    """The :class:`flood.layers.LayerSet` of a scenario's ``layers`` (None without layers).

    A table or CSV file gives the layers as listed (blank porosity = ``reservoir.porosity``);
    a variation generates ``count`` equal-thickness layers sharing ``reservoir.thickness_ft``,
    median ``reservoir.permeability_md`` (see :func:`flood.layers.generate_layers`).
    """
    from .layers import generate_layers, layer_set

    lay, res = sc.layers, sc.reservoir
    if lay is None:
        return None
    if lay.variation is not None:
        h, k = generate_layers(lay.variation.v, lay.variation.count, res.permeability_md, res.thickness_ft)
        return layer_set(lay.method, h, k, res.porosity, "layers.variation", "variation")
    if lay.table is not None:
        rows = lay.table
        h = [r.thickness_ft for r in rows]
        k = [r.permeability_md for r in rows]
        phi = [res.porosity if r.porosity is None else r.porosity for r in rows]
        return layer_set(lay.method, h, k, phi, "layers.table", "table")
    text = _read_side_file(sc, base_dir, lay.file, "layers.file", "layer CSV")
    h, k, phi = read_layer_csv_text(text, "layers.file")
    phi = np.where(np.isnan(phi), res.porosity, phi)
    return layer_set(lay.method, h, k, phi, "layers.file", "file")


def scenario_to_dict(sc: Scenario) -> dict:
    """The scenario as a JSON-ready dict (defaults left out, so it loads back unchanged)."""
    return sc.model_dump(mode="json", exclude_none=True)
