"""Small builders of layout pieces: a slider paired with a box, a numeric box, cards, uploads."""

from __future__ import annotations

import math

from dash import dcc, html

from flood.scenario import MAX_FILE_BYTES

from . import ids
from .adapter import SUMMARY_ITEMS, format_quantity

CAUTION = ("Screening estimates only. Reserves, design and operating decisions rest with licensed "
           "professionals and the regulations that apply where you work.")


def _log_marks(lo, hi):
    marks = {}
    for e in range(math.floor(math.log10(lo)), math.ceil(math.log10(hi)) + 1):
        for m in (1, 3):
            v = m * 10.0 ** e
            if lo <= v <= hi:
                marks[round(math.log10(v), 4)] = f"{v:g}"
    return marks


def _linear_marks(lo, hi):
    return {lo: f"{lo:g}", hi: f"{hi:g}"}


def control_row(control, value) -> html.Div:
    """Label, slider (optional) and numeric box of one control, with its inline message line."""
    box = dcc.Input(id=ids.box(control.name), type="number", value=value, debounce=True,
                    className="num-box", step="any", inputMode="decimal")
    parts = [html.Label(control.label, htmlFor=ids.box(control.name), className="control-label")]
    if control.slider:
        if control.log:
            sv = math.log10(value) if value and value > 0 else 0.0
            slider = dcc.Slider(id=ids.slider(control.name), min=math.log10(control.lo), max=math.log10(control.hi),
                                step=0.01, value=sv, marks=_log_marks(control.lo, control.hi),
                                allow_direct_input=False, updatemode="mouseup", className="slider")
        else:
            slider = dcc.Slider(id=ids.slider(control.name), min=control.lo, max=control.hi, step=control.step,
                                value=value, marks=_linear_marks(control.lo, control.hi),
                                allow_direct_input=False, updatemode="mouseup", className="slider")
        parts.append(html.Div([html.Div(slider, className="slider-cell"), box], className="slider-row"))
    else:
        parts.append(box)
    parts.append(html.Div(id=ids.field_message(control.name), className="field-message", role="alert"))
    return html.Div(parts, className="control")


def summary_cards(summary: dict) -> list:
    """One card per summary quantity (values from the engine's summary dict)."""
    cards = []
    for key, (label, unit, _) in SUMMARY_ITEMS.items():
        cards.append(html.Div([html.Div(label, className="card-label"),
                               html.Div(format_quantity(key, summary.get(key)), className="card-value",
                                        id=f"card-{key}"),
                               html.Div(unit, className="card-unit")], className="card"))
    return cards


def upload_box(upload_id, message_id, text, accept) -> html.Div:
    """A drop/click upload area with its message line."""
    return html.Div([
        dcc.Upload(id=upload_id, children=html.Div([text, html.Span(" (drop or click)", className="muted")]),
                   accept=accept, multiple=False, className="upload"),
        html.Div(id=message_id, className="upload-message", role="status"),
    ], className="upload-group")


def upload_cap_text() -> str:
    """Stated size cap of uploads."""
    return f"Files up to {MAX_FILE_BYTES / 1e6:g} MB."


def cases_table(pins: list) -> html.Div:
    """Table of pinned cases' summaries with a remove button each."""
    if not pins:
        return html.Div("No pinned cases yet. Pin the current case to compare it with later changes.",
                        className="muted")
    head = html.Tr([html.Th("Case")] + [html.Th(f"{SUMMARY_ITEMS[k][0]} [{SUMMARY_ITEMS[k][1]}]")
                                        for k in SUMMARY_ITEMS] + [html.Th("")])
    rows = []
    for p in pins:
        rows.append(html.Tr([html.Td(p["label"])]
                            + [html.Td(format_quantity(k, p["summary"].get(k))) for k in SUMMARY_ITEMS]
                            + [html.Td(html.Button("Remove", id=ids.unpin(p["key"]), className="small-button",
                                                   n_clicks=0))]))
    return html.Table([html.Thead(head), html.Tbody(rows)], className="cases")


def graph(fig_id, figure=None):
    """A dcc.Graph with our configuration."""
    return dcc.Graph(id=fig_id, figure=figure or {}, config={"displaylogo": False}, responsive=True,
                     className="graph")


def layer_section(fronts_figure, coverage_figure, summary: dict) -> list:
    """Children of the layered-reservoir section (shown only when the case has layers)."""
    facts = (f"{summary.get('layer_count', '?')} layers; permeability variation V = "
             f"{summary.get('dykstra_parsons_v', float('nan')):.3f} (log-probability fit R² = "
             f"{summary.get('dykstra_parsons_v_r_squared', float('nan')):.3f}); k50 = "
             f"{summary.get('k50_md', float('nan')):,.0f} md, k84.1 = {summary.get('k84_1_md', float('nan')):,.0f} md; "
             f"vertical coverage at the economic limit {summary.get('vertical_coverage_at_economic_limit', float('nan')):.3f}.")
    return [html.H2("Layered reservoir"), html.P(facts, className="muted", id="layer-facts"),
            html.Div([graph(ids.FIG_LAYER_FRONTS, fronts_figure), graph(ids.FIG_LAYER_COVERAGE, coverage_figure)],
                     className="figures")]


def no_layers_note():
    """Content of the layers tab for a homogeneous case."""
    return html.P("Choose a layer method under Layers in the sidebar, or load a layer table, to see the "
                  "layered view.", className="muted")


def _number_box(box_id, value, label, width="90px"):
    return html.Div([html.Label(label, htmlFor=box_id, className="control-label"),
                     dcc.Input(id=box_id, type="number", value=value, debounce=True, step="any",
                               className="num-box", style={"width": width})], className="inline-field")


def _run_row(run_id, cancel_id, progress_id):
    return html.Div([html.Button("Run", id=run_id, n_clicks=0, className="button"),
                     html.Button("Cancel", id=cancel_id, n_clicks=0, className="small-button", disabled=True),
                     html.Progress(id=progress_id, max=100, value=0, className="progress")], className="row")


def numerical_tab(patterns, sweep_methods: dict) -> html.Div:
    """The numerical-check tab: 1D cross-check and pattern areal sweep (background jobs)."""
    return html.Div([
        html.P("Finite-volume runs take a few seconds; they run in the background with a progress bar. "
               "They check the fast analytic forecast above and add pattern areal sweep.", className="muted"),
        html.H3("One-dimensional cross-check: finite volumes beside Buckley-Leverett"),
        html.Div([_number_box(ids.NUM_CELLS, 200, "Cells [-]"),
                  _number_box(ids.NUM_ENTRY_PRESSURE, 0, "Capillary entry pressure Pe [psi] (0 = off)"),
                  _number_box(ids.NUM_PORE_INDEX, 2, "Pore-size index λ [-]"),
                  dcc.Checklist(id=ids.NUM_GRAVITY, options=[{"label": "Include the dip (gravity)", "value": "on"}],
                                value=["on"], className="radio")], className="row"),
        _run_row(ids.NUM_RUN, ids.NUM_CANCEL, ids.NUM_PROGRESS),
        html.Div(id=ids.NUM_MESSAGE, className="muted", role="status"),
        html.Div([graph(ids.NUM_FIGURE), graph(ids.NUM_CURVE_FIGURE)], className="figures"),
        html.H3("Pattern areal sweep"),
        html.Div([html.Div([html.Label("Pattern", htmlFor=ids.SWEEP_PATTERN, className="control-label"),
                            dcc.Dropdown(id=ids.SWEEP_PATTERN, value=patterns[0], clearable=False,
                                         options=[{"label": p.replace("_", " "), "value": p} for p in patterns],
                                         style={"width": "180px"})], className="inline-field"),
                  _number_box(ids.SWEEP_D_OVER_A, 1.0, "d/a of line drives [-]"),
                  _number_box(ids.SWEEP_CELLS, 30, "Cells along the element [-]"),
                  _number_box(ids.SWEEP_MAP_PVI, 0.5, "Map at PVI [PV]")], className="row"),
        dcc.RadioItems(id=ids.SWEEP_METHOD, value="numerical", className="radio",
                       options=[{"label": v, "value": k} for k, v in sweep_methods.items()]),
        _run_row(ids.SWEEP_RUN, ids.SWEEP_CANCEL, ids.SWEEP_PROGRESS),
        html.Div(id=ids.SWEEP_MESSAGE, className="muted", role="status"),
        html.Div([graph(ids.SWEEP_FIGURE), graph(ids.SWEEP_CURVE_FIGURE)], className="figures"),
        html.P("Pattern forecast: the sweep's stream tubes, each a Buckley-Leverett displacement (and the "
               "scenario's layers, when it has them), to the economic water cut; the linear forecast is dashed.",
               className="muted"),
        html.Div([graph(ids.PATTERN_FORECAST_FIGURE)], className="figures"),
    ], className="numerical-tab")


def upload_message(text):
    """An upload's message line: rejections in the warning style (``no_update`` passes through)."""
    if not isinstance(text, str):
        return text
    return html.Span(text, className="rejected" if text.startswith("Rejected") else "accepted")
