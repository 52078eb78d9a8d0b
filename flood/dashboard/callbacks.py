"""Callbacks: adapt the inputs, call the engine through the adapter, build figures, return.

The callback bodies are plain module-level functions (``update_view``, ``load_files``,
``update_pins``, ``download``) so tests can call them directly; :func:`register` wires them to an app.
"""

from __future__ import annotations

import base64

from dash import ALL, Input, Output, State, ctx, no_update

from flood.errors import FloodInputError

from . import adapter, components, figures, ids
from .adapter import CONTROL_NAMES, CONTROLS

_SLIDERS = tuple(c for c in CONTROLS if c.slider)
_BOXES = tuple(ids.box(n) for n in CONTROL_NAMES)

#: Keys of the dict returned by :func:`compute_view`, in the order of the registered outputs.
VIEW_KEYS = ("fig_rate_cut", "fig_fractional_flow", "fig_recovery", "fig_wor", "fig_profile", "cards",
             "field_messages", "general_message", "current", "box_values", "slider_values", "profile_max",
             "profile_marks", "notes", "corey_button_style", "case_name", "layer_section", "layer_note",
             "layer_button_style")


def _blank_view():
    return {k: no_update for k in VIEW_KEYS}


def compute_view(values: dict, base: dict, pins: list, pvi: float, triggered: set, sliders=None) -> dict:
    """Everything the main view shows for one set of control values.

    Parameters
    ----------
    values : dict
        Control name -> typed value (None when a box is empty or not a number).
    sliders : dict, optional
        Control name -> slider position; a moved slider (its id in ``triggered``) overrides its box.
    base : dict
        The loaded scenario (demo or upload).
    pins : list
        Pinned cases (see :func:`flood.dashboard.adapter.pin_case`).
    pvi : float
        PVI of the saturation profile [total PV].
    triggered : set
        Component ids whose change fired the callback (empty on the first call).

    Returns
    -------
    dict
        Keys :data:`VIEW_KEYS`; ``dash.no_update`` where nothing changes. On a bad value only the
        messages change and the last good case stays on screen.
    """
    out = _blank_view()
    values, boxes, positions = dict(values), {}, {}
    for c in _SLIDERS:
        if ids.slider(c.name) in triggered and (sliders or {}).get(c.name) is not None:
            values[c.name] = boxes[c.name] = adapter.value_from_slider(c, sliders[c.name])
        elif ids.box(c.name) in triggered:
            position = adapter.slider_position(c, values.get(c.name))
            if position is not None:
                positions[c.name] = position
    out["box_values"], out["slider_values"] = boxes, positions
    derive = bool(triggered) and triggered <= {ids.box("mobility_ratio"), ids.slider("mobility_ratio")}
    messages = {n: "" for n in CONTROL_NAMES}
    try:
        scenario = adapter.scenario_from_controls(base, values, derive_oil_viscosity=derive)
        data, result = adapter.evaluate(scenario)
    except FloodInputError as err:
        name = adapter.control_for_error(err)
        if name:
            messages[name] = str(err)
            out["general_message"] = ""
        else:
            out["general_message"] = str(err)
        out["field_messages"] = messages
        return out
    out["field_messages"] = messages
    out["general_message"] = ""
    end = float(data["limits"]["max_pvi"])
    pvi = min(max(float(pvi or 0.0), 0.0), end)
    out["fig_profile"] = figures.profile_figure(result, pvi)
    layers = getattr(result, "layers", None)
    out["layer_section"] = components.no_layers_note() if layers is None else components.layer_section(
        figures.layer_fronts_figure(layers, adapter.days_at_pvi(data, pvi), pvi),
        figures.layer_coverage_figure(layers), result.summary)
    if triggered == {ids.PROFILE_PVI}:
        return out
    pinned = adapter.pinned_results(pins or [])
    out.update(
        fig_rate_cut=figures.rate_cut_figure(result, pinned),
        fig_fractional_flow=figures.fractional_flow_figure(result, pinned),
        fig_recovery=figures.recovery_figure(result, pinned),
        fig_wor=figures.wor_figure(result, pinned),
        cards=components.summary_cards(result.summary),
        current=data,
        profile_max=end,
        profile_marks={0: "0", end: f"{end:g}"},
        case_name=data.get("name", ""),
    )
    if derive:
        boxes["mu_o_cp"] = data["fluids"]["mu_o_cp"]
    else:
        m = float(f"{result.summary['endpoint_mobility_ratio']:.4g}")
        boxes["mobility_ratio"] = m
        positions["mobility_ratio"] = adapter.slider_position(CONTROLS[0], m)
    out["notes"] = _notes(data)
    out["corey_button_style"] = {} if not adapter.uses_corey(data) else {"display": "none"}
    table = adapter.uses_layer_table(data)
    out["layer_note"] = (f"Layer table in use ({len(data['layers']['table'])} layers): V and the layer count do "
                         "not apply." if table else "")
    out["layer_button_style"] = {} if table else {"display": "none"}
    return out


def _notes(scenario: dict) -> list:
    notes = []
    if not adapter.uses_corey(scenario):
        rows = len(scenario["relperm"].get("table") or [])
        notes.append(f"Lab relative-permeability table in use ({rows} rows): the Corey exponent and endpoint "
                     "controls do not apply.")
    if not adapter.uses_constant_rate(scenario):
        notes.append("Injection schedule from the scenario file in use: the rate control does not apply.")
    return " ".join(notes)


def update_view(*args):
    """Main callback: control boxes, base scenario, pins and profile PVI -> every view."""
    n = len(CONTROL_NAMES)
    values = dict(zip(CONTROL_NAMES, args[:n]))
    sliders = dict(zip((c.name for c in _SLIDERS), args[n:n + len(_SLIDERS)]))
    values["layer_method"], base, pins, pvi = args[n + len(_SLIDERS):]
    triggered = {p.rsplit(".", 1)[0] for p in (ctx.triggered_prop_ids or {})}
    out = compute_view(values, base, pins, pvi, triggered, sliders)
    order = [o["id"]["field"] for o in ctx.outputs_list[VIEW_KEYS.index("field_messages")]]
    fm = out["field_messages"]
    out["field_messages"] = no_update if fm is no_update else [fm.get(k, "") for k in order]
    boxes, positions = out.pop("box_values"), out.pop("slider_values")
    return (*(out[k] for k in VIEW_KEYS if k not in ("box_values", "slider_values")),
            *(boxes.get(name, no_update) for name in CONTROL_NAMES),
            *(positions.get(c.name, no_update) for c in _SLIDERS))


# ----------------------------------------------------------------------------------------------


LOAD_KEYS = ("base", "boxes", "method", "msg_scenario", "msg_relperm", "msg_layers")


def load_files(trigger: str, contents, filename, current: dict, values: dict) -> dict:
    """Uploads and the back-to-Corey button -> new base scenario, box values and upload messages.

    A rejected file changes only its own message; the current case stays as it was.
    """
    out = {k: no_update for k in LOAD_KEYS}
    key = {ids.UPLOAD_SCENARIO: "msg_scenario", ids.UPLOAD_RELPERM: "msg_relperm",
           ids.UPLOAD_LAYERS: "msg_layers"}.get(trigger)
    try:
        if trigger == ids.UPLOAD_SCENARIO:
            base = adapter.scenario_from_upload(contents, filename)
            out["boxes"] = adapter.controls_from_scenario(base)
            out["method"] = out["boxes"]["layer_method"]
            out[key] = f"Loaded {filename}: {base.get('name', '')}"
        elif trigger == ids.UPLOAD_RELPERM:
            base = adapter.scenario_with_relperm_table(current, contents, filename)
            out[key] = f"Loaded {filename}: {len(base['relperm']['table'])} rows"
        elif trigger == ids.UPLOAD_LAYERS:
            base = adapter.scenario_with_layer_table(current, contents, filename)
            out["method"] = base["layers"]["method"]
            out[key] = f"Loaded {filename}: {len(base['layers']['table'])} layers"
        elif trigger == ids.COREY_BUTTON:
            base = adapter.scenario_with_corey(current, values)
        elif trigger == ids.LAYER_VARIATION_BUTTON:
            base = adapter.scenario_with_layer_variation(current)
        elif trigger == ids.DEMO_BUTTON:
            base = adapter.demo_scenario()
            out["boxes"] = adapter.controls_from_scenario(base)
            out["method"] = out["boxes"]["layer_method"]
        else:
            return out
    except FloodInputError as err:
        if key:
            out[key] = f"Rejected: {err}"
        return out
    out["base"] = base
    return out


def load_files_callback(scn, rp, lay, corey, layer_button, demo_button, scn_name, rp_name, lay_name, current,
                        *box_values):
    """Registered wrapper of :func:`load_files`."""
    trigger = ctx.triggered_id
    contents = {ids.UPLOAD_SCENARIO: (scn, scn_name), ids.UPLOAD_RELPERM: (rp, rp_name),
                ids.UPLOAD_LAYERS: (lay, lay_name)}.get(trigger, (None, None))
    out = load_files(trigger, contents[0], contents[1], current, dict(zip(CONTROL_NAMES, box_values)))
    boxes = out["boxes"]
    box_out = [no_update] * len(CONTROL_NAMES) if boxes is no_update else [boxes.get(n) for n in CONTROL_NAMES]
    msgs = [components.upload_message(out[k]) for k in ("msg_scenario", "msg_relperm", "msg_layers")]
    return (out["base"], *box_out, out["method"], *msgs)


RESTORE_KEYS = ("restored", "base", "boxes", "method", "pins", "cases_table")


def restore_session(saved) -> dict:
    """The case and pins saved in this browser tab -> what to put back after a page reload.

    ``saved`` is ``{"current": scenario dict, "pins": [...]}`` or None. The saved scenario goes
    through the same validation as an upload (``adapter.parse_inline``); anything that does not
    pass is dropped and the page stays on the demo.
    """
    out = {k: no_update for k in RESTORE_KEYS}
    out["restored"] = True
    if not isinstance(saved, dict):
        return out
    pins = saved.get("pins")
    if isinstance(pins, list) and pins and len(pins) <= adapter.MAX_PINS:
        try:
            adapter.pinned_results(pins)
        except (FloodInputError, KeyError, TypeError, ValueError):
            pins = None
        else:
            out["pins"], out["cases_table"] = pins, components.cases_table(pins)
    current = saved.get("current")
    if isinstance(current, dict) and current != adapter.demo_scenario():
        try:
            base = adapter.scenario_to_dict(adapter.parse_inline(current))
        except FloodInputError:
            return out
        out["base"] = base
        out["boxes"] = adapter.controls_from_scenario(base)
        out["method"] = out["boxes"]["layer_method"]
    return out


def restore_session_callback(gate, saved):
    """Registered wrapper of :func:`restore_session`."""
    out = restore_session(saved)
    boxes = out["boxes"]
    box_out = [no_update] * len(CONTROL_NAMES) if boxes is no_update else [boxes.get(n) for n in CONTROL_NAMES]
    return (out["restored"], out["base"], *box_out, out["method"], out["pins"], out["cases_table"])


#: Runs in the browser: pass the saved session's timestamp on once per page load.
_GATE_JS = "function(ts, restored) { return restored ? window.dash_clientside.no_update : (ts || -1); }"
#: Runs in the browser: copy the current case and the pins into the tab's session storage.
_SAVE_JS = ("function(current, pins, restored) { if (!restored) { return window.dash_clientside.no_update; }"
            " return {current: current, pins: pins || []}; }")


def update_pins(trigger, current: dict, pins: list, label: str):
    """Pin the current case or remove one: returns (pins, cases table, message)."""
    pins = list(pins or [])
    if trigger == ids.PIN_BUTTON:
        try:
            pins = adapter.pin_case(pins, current, label)
        except FloodInputError as err:
            return no_update, no_update, str(err)
        msg = f"Pinned {pins[-1]['label']} ({len(pins)} of at most {adapter.MAX_PINS})."
    elif isinstance(trigger, dict) and trigger.get("type") == ids.UNPIN_TYPE:
        pins = adapter.unpin_case(pins, trigger["key"])
        msg = "Removed."
    else:
        return no_update, no_update, no_update
    return pins, components.cases_table(pins), msg


def update_pins_callback(n_pin, n_unpin, current, pins, label):
    """Registered wrapper of :func:`update_pins` (ignores remove buttons that were only just drawn)."""
    trigger = ctx.triggered_id
    if isinstance(trigger, dict) and not any(t["value"] for t in ctx.triggered):
        return no_update, no_update, no_update
    return update_pins(trigger, current, pins, label)


def download(trigger, current: dict):
    """dcc.Download data for the forecast CSV, the workbook or the scenario JSON of the current case."""
    kind = {ids.DOWNLOAD_CSV: "csv", ids.DOWNLOAD_XLSX: "xlsx", ids.DOWNLOAD_JSON: "json"}.get(trigger)
    if kind is None or not current:
        return no_update
    data, filename = adapter.download_bytes(kind, current)
    return {"content": base64.b64encode(data).decode("ascii"), "filename": filename, "base64": True}


def download_callback(n_csv, n_xlsx, n_json, current):
    """Registered wrapper of :func:`download`."""
    return download(ctx.triggered_id, current)


def register(app) -> None:
    """Attach every callback to ``app``."""
    app.callback(
        Output(ids.FIG_RATE_CUT, "figure"), Output(ids.FIG_FRACTIONAL_FLOW, "figure"),
        Output(ids.FIG_RECOVERY, "figure"), Output(ids.FIG_WOR, "figure"), Output(ids.FIG_PROFILE, "figure"),
        Output(ids.CARDS, "children"), Output(ids.field_message(ALL), "children"),
        Output(ids.GENERAL_MESSAGE, "children"), Output(ids.CURRENT_STORE, "data"),
        Output(ids.PROFILE_PVI, "max"), Output(ids.PROFILE_PVI, "marks"), Output(ids.RELPERM_NOTE, "children"),
        Output(ids.COREY_BUTTON, "style"), Output("case-name", "children"), Output(ids.LAYER_SECTION, "children"),
        Output(ids.LAYER_NOTE, "children"), Output(ids.LAYER_VARIATION_BUTTON, "style"),
        *[Output(b, "value") for b in _BOXES], *[Output(ids.slider(c.name), "value") for c in _SLIDERS],
        *[Input(b, "value") for b in _BOXES], *[Input(ids.slider(c.name), "value") for c in _SLIDERS],
        Input(ids.LAYER_METHOD, "value"),
        Input(ids.BASE_STORE, "data"), Input(ids.PINS_STORE, "data"), Input(ids.PROFILE_PVI, "value"),
        prevent_initial_call=True,
    )(update_view)

    app.callback(
        Output(ids.BASE_STORE, "data"),
        *[Output(b, "value", allow_duplicate=True) for b in _BOXES], Output(ids.LAYER_METHOD, "value"),
        Output(ids.UPLOAD_MESSAGE_SCENARIO, "children"), Output(ids.UPLOAD_MESSAGE_RELPERM, "children"),
        Output(ids.UPLOAD_MESSAGE_LAYERS, "children"),
        Input(ids.UPLOAD_SCENARIO, "contents"), Input(ids.UPLOAD_RELPERM, "contents"),
        Input(ids.UPLOAD_LAYERS, "contents"), Input(ids.COREY_BUTTON, "n_clicks"),
        Input(ids.LAYER_VARIATION_BUTTON, "n_clicks"), Input(ids.DEMO_BUTTON, "n_clicks"),
        State(ids.UPLOAD_SCENARIO, "filename"), State(ids.UPLOAD_RELPERM, "filename"),
        State(ids.UPLOAD_LAYERS, "filename"), State(ids.CURRENT_STORE, "data"),
        *[State(b, "value") for b in _BOXES],
        prevent_initial_call=True,
    )(load_files_callback)

    app.callback(
        Output(ids.PINS_STORE, "data"), Output(ids.CASES_TABLE, "children"), Output(ids.PIN_MESSAGE, "children"),
        Input(ids.PIN_BUTTON, "n_clicks"), Input(ids.unpin(ALL), "n_clicks"),
        State(ids.CURRENT_STORE, "data"), State(ids.PINS_STORE, "data"), State(ids.PIN_LABEL, "value"),
        prevent_initial_call=True,
    )(update_pins_callback)

    app.clientside_callback(_GATE_JS, Output(ids.RESTORE_GATE, "data"),
                            Input(ids.SAVED_STORE, "modified_timestamp"), State(ids.RESTORED_STORE, "data"))
    app.callback(
        Output(ids.RESTORED_STORE, "data"), Output(ids.BASE_STORE, "data", allow_duplicate=True),
        *[Output(b, "value", allow_duplicate=True) for b in _BOXES],
        Output(ids.LAYER_METHOD, "value", allow_duplicate=True), Output(ids.PINS_STORE, "data", allow_duplicate=True),
        Output(ids.CASES_TABLE, "children", allow_duplicate=True),
        Input(ids.RESTORE_GATE, "data"), State(ids.SAVED_STORE, "data"),
        prevent_initial_call=True,
    )(restore_session_callback)
    app.clientside_callback(_SAVE_JS, Output(ids.SAVED_STORE, "data"),
                            Input(ids.CURRENT_STORE, "data"), Input(ids.PINS_STORE, "data"),
                            State(ids.RESTORED_STORE, "data"), prevent_initial_call=True)

    app.callback(
        Output(ids.DOWNLOAD, "data"),
        Input(ids.DOWNLOAD_CSV, "n_clicks"), Input(ids.DOWNLOAD_XLSX, "n_clicks"), Input(ids.DOWNLOAD_JSON, "n_clicks"),
        State(ids.CURRENT_STORE, "data"),
        prevent_initial_call=True,
    )(download_callback)


# ----------------------------------------------------------------------------------------------
# Numerical views (background jobs)


def _progress_reporter(set_progress):
    """engine progress(fraction) -> the progress bar, only when the whole percent changes."""
    last = [-1]

    def report(fraction):
        pct = int(100 * min(max(float(fraction), 0.0), 1.0))
        if pct != last[0]:
            last[0] = pct
            set_progress((pct,))

    return report


def crosscheck_outputs(current, cells, entry_pressure, pore_index, gravity, progress=None):
    """1D cross-check -> (profiles figure, curve figure, message); a bad input changes only the message."""
    try:
        check = adapter.run_crosscheck(current, cells, entry_pressure, pore_index, bool(gravity), progress)
    except FloodInputError as err:
        return no_update, no_update, f"Not run: {err}"
    s = check.summary()
    msg = (f"{s['cells']} cells, {s['time_steps']} steps in {s['seconds_numerical']:.2f} s (analytic "
           f"{1000 * s['seconds_analytic']:.1f} ms). Breakthrough {s['breakthrough_pvi_numerical']:.3f} PV "
           f"(analytic {s['breakthrough_pvi_analytic']:.3f}); recovery at 2 PV {s['recovery_factor_at_2pvi_numerical']:.3f} "
           f"(analytic {s['recovery_factor_at_2pvi_analytic']:.3f}); mean L1 profile difference "
           f"{s['l1_profile_difference']:.4f}; capillarity: {s['capillary']}; {s['time_stepping']} time stepping.")
    return figures.crosscheck_profiles_figure(check), figures.crosscheck_curve_figure(check), msg


def sweep_outputs(current, pattern, d_over_a, method, cells, map_pvi, progress=None):
    """Pattern areal sweep -> (map figure, curve figure, message, pattern forecast figure)."""
    two_runs = method == "numerical"  # the forecast then needs a piston-like run too
    first = progress if progress is None or not two_runs else (lambda f: progress(0.6 * f))
    try:
        sweep = adapter.run_sweep(current, pattern, d_over_a, method, cells, map_pvi, first)
    except FloodInputError as err:
        return no_update, no_update, f"Not run: {err}", no_update
    second = None if progress is None or not two_runs else (lambda f: progress(0.6 + 0.4 * f))
    try:
        forecast, linear = adapter.run_pattern_forecast(current, sweep, second)
    except FloodInputError as err:  # e.g. initial gas: the sweep stands, the forecast cannot be made
        forecast, linear, forecast_error = None, None, str(err)
    m_label = {"correlation": "M behind the front", "numerical": "endpoint M"}.get(method, "M")
    grid = f", {sweep.cells} cells, {sweep.stencil}-point" if sweep.stencil else ""
    msg = (f"{pattern.replace('_', ' ')}, {method}{grid}, {m_label} = {sweep.mobility_ratio:.3g}: areal sweep at "
           f"breakthrough {sweep.areal_sweep_at_breakthrough:.3f} at {sweep.breakthrough_pvi:.3f} PV "
           f"({sweep.seconds:.2f} s).")
    corr = adapter.sweep_correlation_beside(current, sweep)
    if corr is not None:
        msg += (f" Beside it, the Fassihi (1986) correlation at M = {corr.mobility_ratio:.3g}: "
                f"{corr.areal_sweep_at_breakthrough:.3f} at breakthrough.")
    if forecast is None:
        msg += f" Pattern forecast not made: {forecast_error}"
    else:
        last = forecast.iloc[-1]
        msg += (f" Pattern forecast: recovery {last['recovery_factor']:.3f} at {last['days']:.0f} days "
                f"(linear displacement {linear.summary['recovery_factor_at_economic_limit']:.3f} at "
                f"{linear.summary['economic_limit_days']:.0f} days).")
    # the curves share the PVI basis only when neither is a two-phase run (total pore volumes)
    overlay = corr if corr is not None and sweep.method == "streamline" else None
    pattern_fig = no_update if forecast is None else figures.pattern_forecast_figure(forecast, linear)
    return figures.sweep_map_figure(sweep), figures.sweep_curve_figure(sweep, overlay), msg, pattern_fig


def crosscheck_job(set_progress, n_clicks, current, cells, entry_pressure, pore_index, gravity):
    """Background wrapper of :func:`crosscheck_outputs`."""
    set_progress((0,))
    return crosscheck_outputs(current, cells, entry_pressure, pore_index, bool(gravity),
                              _progress_reporter(set_progress))


def sweep_job(set_progress, n_clicks, current, pattern, d_over_a, method, cells, map_pvi):
    """Background wrapper of :func:`sweep_outputs`."""
    set_progress((0,))
    out = sweep_outputs(current, pattern, d_over_a, method, cells, map_pvi, _progress_reporter(set_progress))
    set_progress((100,))
    return out


def register_background(app, manager) -> None:
    """Attach the numerical views' background callbacks (DiskcacheManager or CeleryManager)."""
    app.callback(
        Output(ids.NUM_FIGURE, "figure"), Output(ids.NUM_CURVE_FIGURE, "figure"), Output(ids.NUM_MESSAGE, "children"),
        Input(ids.NUM_RUN, "n_clicks"),
        State(ids.CURRENT_STORE, "data"), State(ids.NUM_CELLS, "value"), State(ids.NUM_ENTRY_PRESSURE, "value"),
        State(ids.NUM_PORE_INDEX, "value"), State(ids.NUM_GRAVITY, "value"),
        background=True, manager=manager, interval=200, prevent_initial_call=True,
        progress=[Output(ids.NUM_PROGRESS, "value")],
        running=[(Output(ids.NUM_RUN, "disabled"), True, False), (Output(ids.NUM_CANCEL, "disabled"), False, True)],
        cancel=[Input(ids.NUM_CANCEL, "n_clicks")],
    )(crosscheck_job)
    app.callback(
        Output(ids.SWEEP_FIGURE, "figure"), Output(ids.SWEEP_CURVE_FIGURE, "figure"),
        Output(ids.SWEEP_MESSAGE, "children"), Output(ids.PATTERN_FORECAST_FIGURE, "figure"),
        Input(ids.SWEEP_RUN, "n_clicks"),
        State(ids.CURRENT_STORE, "data"), State(ids.SWEEP_PATTERN, "value"), State(ids.SWEEP_D_OVER_A, "value"),
        State(ids.SWEEP_METHOD, "value"), State(ids.SWEEP_CELLS, "value"), State(ids.SWEEP_MAP_PVI, "value"),
        background=True, manager=manager, interval=200, prevent_initial_call=True,
        progress=[Output(ids.SWEEP_PROGRESS, "value")],
        running=[(Output(ids.SWEEP_RUN, "disabled"), True, False), (Output(ids.SWEEP_CANCEL, "disabled"), False, True)],
        cancel=[Input(ids.SWEEP_CANCEL, "n_clicks")],
    )(sweep_job)
