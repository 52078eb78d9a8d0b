"""Page layout: the inputs sidebar, summary cards, figures, uploads, downloads and pinned cases."""

from __future__ import annotations

from dash import dcc, html

from . import components, ids
from .components import graph as _graph
from .adapter import (CONTROLS, LAYER_CONTROLS, LAYER_METHODS, SWEEP_METHODS, controls_from_scenario,
                      demo_scenario, evaluate)


def build_layout(numerical_patterns=()) -> html.Div:
    """The whole page with the demo scenario loaded (no module-level state: built per call).

    ``numerical_patterns``: pattern names of the numerical tab (no tab when empty).
    """
    from . import figures

    demo = demo_scenario()
    values = controls_from_scenario(demo)
    _, result = evaluate(demo)
    explore = [components.control_row(c, values[c.name]) for c in CONTROLS
               if c.slider and c.name not in LAYER_CONTROLS]
    layer_rows = [components.control_row(c, values[c.name]) for c in CONTROLS if c.name in LAYER_CONTROLS]
    panel = [components.control_row(c, values[c.name]) for c in CONTROLS if not c.slider]
    sidebar = html.Aside([
        html.H2("Explore"),
        html.P(["Moving the mobility ratio sets the oil viscosity: μo = M · μw · kro(Swc) / krw(1 − Sor), "
                "with the water viscosity and the endpoints held fixed. Changing μw or an endpoint keeps μo "
                "and moves M (shown live on the cards)."], className="note", id="mobility-note"),
        *explore,
        html.Div(id=ids.RELPERM_NOTE, className="note"),
        html.Button("Back to Corey curves", id=ids.COREY_BUTTON, n_clicks=0, className="small-button",
                    style={"display": "none"}),
        html.Details([html.Summary("Layers"),
                      dcc.RadioItems(id=ids.LAYER_METHOD, value=values["layer_method"], className="radio",
                                     options=[{"label": v, "value": k} for k, v in LAYER_METHODS.items()]),
                      *layer_rows,
                      html.Div(id=ids.LAYER_NOTE, className="note"),
                      html.Button("Use V and layer count", id=ids.LAYER_VARIATION_BUTTON, n_clicks=0,
                                  className="small-button", style={"display": "none"})],
                     open=True, className="panel"),
        html.Details([html.Summary("Reservoir and fluids"), *panel], open=True, className="panel"),
    ], className="sidebar")
    main = html.Main([
        html.Div(components.CAUTION, className="caution", id="caution"),
        html.Div(id=ids.GENERAL_MESSAGE, className="general-message", role="alert"),
        html.Div(components.summary_cards(result.summary), id=ids.CARDS, className="cards"),
        dcc.Tabs(id=ids.VIEW_TABS, value="production", className="tabs", children=[
            dcc.Tab(label="Rates and water cut", value="production", children=html.Div([
                _graph(ids.FIG_RATE_CUT, figures.rate_cut_figure(result)),
                _graph(ids.FIG_WOR, figures.wor_figure(result))], className="figures")),
            dcc.Tab(label="Displacement and recovery", value="displacement", children=html.Div([
                _graph(ids.FIG_FRACTIONAL_FLOW, figures.fractional_flow_figure(result)),
                _graph(ids.FIG_RECOVERY, figures.recovery_figure(result))], className="figures")),
            dcc.Tab(label="Saturation profile", value="profile", children=html.Div([
                _graph(ids.FIG_PROFILE, figures.profile_figure(result, 0.3)),
                html.Label("Profile at pore volumes injected [total PV]", htmlFor=ids.PROFILE_PVI,
                           className="control-label"),
                dcc.Slider(id=ids.PROFILE_PVI, min=0.0, max=float(demo["limits"]["max_pvi"]), step=0.01, value=0.3,
                           marks={0: "0", float(demo["limits"]["max_pvi"]): f"{demo['limits']['max_pvi']:g}"},
                           updatemode="mouseup", allow_direct_input=True, className="slider"),
            ], className="graph-cell")),
            dcc.Tab(label="Layers", value="layers", children=html.Div(
                components.no_layers_note(), id=ids.LAYER_SECTION, className="section-layers")),
            *([dcc.Tab(label="Numerical check", value="numerical",
                       children=components.numerical_tab(numerical_patterns, SWEEP_METHODS))]
              if numerical_patterns else []),
        ]),
        html.Section([
            html.H2("Compare cases"),
            html.Div([dcc.Input(id=ids.PIN_LABEL, type="text", placeholder="label (optional)", maxLength=40,
                                className="text-box"),
                      html.Button("Pin current case", id=ids.PIN_BUTTON, n_clicks=0, className="button"),
                      html.Span(id=ids.PIN_MESSAGE, className="muted")], className="row"),
            html.Div(components.cases_table([]), id=ids.CASES_TABLE),
        ], className="section"),
        html.Section([
            html.H2("Files"),
            html.Div([
                components.upload_box(ids.UPLOAD_SCENARIO, ids.UPLOAD_MESSAGE_SCENARIO, "Load scenario JSON",
                                      ".json,application/json"),
                components.upload_box(ids.UPLOAD_RELPERM, ids.UPLOAD_MESSAGE_RELPERM,
                                      "Load relative permeability CSV (sw, krw, kro)", ".csv,text/csv"),
                components.upload_box(ids.UPLOAD_LAYERS, ids.UPLOAD_MESSAGE_LAYERS,
                                      "Load layer table CSV (thickness_ft, permeability_md, porosity)",
                                      ".csv,text/csv"),
            ], className="uploads"),
            html.P(components.upload_cap_text() + " Files are checked exactly as by the command line; a rejected "
                   "file leaves the current case as it was.", className="muted"),
            html.Div([html.Button("Start again from the demo scenario", id=ids.DEMO_BUTTON, n_clicks=0,
                                  className="small-button"),
                      html.Span("The current case and pinned cases are kept over a page reload in this "
                                "browser tab.", className="muted")], className="row"),
            html.Div([html.Button("Forecast CSV", id=ids.DOWNLOAD_CSV, n_clicks=0, className="button"),
                      html.Button("Workbook XLSX", id=ids.DOWNLOAD_XLSX, n_clicks=0, className="button"),
                      html.Button("Scenario JSON", id=ids.DOWNLOAD_JSON, n_clicks=0, className="button")],
                     className="row"),
            dcc.Download(id=ids.DOWNLOAD),
        ], className="section"),
    ], className="main")
    header = html.Header([html.H1("flood"), html.Span("waterflood screening forecasts", className="tagline"),
                          html.Span(demo["name"], className="case-name", id="case-name")], className="header")
    stores = [dcc.Store(id=ids.BASE_STORE, data=demo), dcc.Store(id=ids.CURRENT_STORE, data=demo),
              dcc.Store(id=ids.PINS_STORE, data=[]),
              # per browser tab, kept over a reload, cleared when the tab closes
              dcc.Store(id=ids.SAVED_STORE, storage_type="session"),
              dcc.Store(id=ids.RESTORE_GATE), dcc.Store(id=ids.RESTORED_STORE, data=False)]
    return html.Div([*stores, header, html.Div([sidebar, main], className="page")], className="app")
