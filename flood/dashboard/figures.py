"""Pure figure builders: engine results in, ``plotly.graph_objects.Figure`` out.

Colours are the Okabe-Ito colour-blind-safe palette (Okabe & Ito, 2008, "Color Universal Design").
The current case is drawn solid; pinned cases are drawn dashed, one colour each.
"""

from __future__ import annotations

import numpy as np
import plotly.graph_objects as go

from flood.fractional_flow import fractional_flow, fractional_flow_derivative

OKABE_ITO = {"black": "#000000", "orange": "#E69F00", "sky": "#56B4E9", "green": "#009E73",
             "yellow": "#F0E442", "blue": "#0072B2", "vermillion": "#D55E00", "purple": "#CC79A7"}
CURRENT = OKABE_ITO["blue"]
SECOND = OKABE_ITO["vermillion"]
MARK = OKABE_ITO["black"]
PINNED = (OKABE_ITO["orange"], OKABE_ITO["green"], OKABE_ITO["purple"], OKABE_ITO["sky"], OKABE_ITO["black"])

_SAT_POINTS = 201


def _base(title: str, x_title: str, y_title: str, **layout) -> go.Figure:
    fig = go.Figure()
    settings = dict(
        title={"text": title, "x": 0.01, "font": {"size": 14}},
        template="plotly_white", margin={"l": 60, "r": 60, "t": 40, "b": 45}, height=320,
        legend={"orientation": "h", "y": -0.22, "x": 0, "font": {"size": 11}},
        xaxis_title=x_title, yaxis_title=y_title, uirevision="keep", hovermode="x unified")
    settings.update(layout)
    fig.update_layout(**settings)
    return fig


def _pinned_style(i):
    return {"color": PINNED[i % len(PINNED)], "dash": "dash", "width": 1.6}


def fractional_flow_curves(solution):
    """Sw grid, fw and dfw/dSw of one solution (engine functions), over [Swi, 1 − Sor] [fraction]."""
    sw = np.linspace(solution.relperm.swc, solution.sw_injected, _SAT_POINTS)
    fw = fractional_flow(solution.relperm, sw, solution.mu_w, solution.mu_o, solution.gravity)
    dfw = fractional_flow_derivative(solution.relperm, sw, solution.mu_w, solution.mu_o, solution.gravity)
    return sw, fw, dfw


def fractional_flow_figure(result, pinned=()) -> go.Figure:
    """fw(Sw) with the Welge tangent, the front and average saturations marked, and dfw/dSw."""
    sol = result.solution
    sw, fw, dfw = fractional_flow_curves(sol)
    fig = _base("Fractional flow and Welge tangent", "Water saturation Sw [fraction]",
                "Water fractional flow fw [fraction]",
                yaxis2={"title": "dfw/dSw [1/fraction]", "overlaying": "y", "side": "right", "showgrid": False,
                        "rangemode": "tozero"})
    fig.update_layout(hovermode="closest")
    fig.add_trace(go.Scatter(x=sw, y=fw, name="fw", line={"color": CURRENT, "width": 2.4}))
    fig.add_trace(go.Scatter(x=sw, y=dfw, name="dfw/dSw", yaxis="y2", line={"color": SECOND, "width": 1.6}))
    sbar = sol.average_saturation_at_breakthrough
    fig.add_trace(go.Scatter(x=[sol.swi, sol.front_saturation, sbar], y=[sol.fw_initial, sol.front_fw, 1.0],
                             name="Welge tangent", mode="lines", line={"color": MARK, "width": 1.2, "dash": "dot"}))
    fig.add_trace(go.Scatter(x=[sol.front_saturation], y=[sol.front_fw], mode="markers+text",
                             name=f"front Swf = {sol.front_saturation:.3f}", text=["Swf"], textposition="top left",
                             marker={"color": MARK, "size": 9, "symbol": "circle"}))
    fig.add_trace(go.Scatter(x=[sbar], y=[1.0], mode="markers+text", name=f"average at breakthrough = {sbar:.3f}",
                             text=["S̄w,bt"], textposition="bottom right",
                             marker={"color": MARK, "size": 9, "symbol": "diamond"}))
    for i, (label, res) in enumerate(pinned):
        psw, pfw, _ = fractional_flow_curves(res.solution)
        fig.add_trace(go.Scatter(x=psw, y=pfw, name=f"fw: {label}", line=_pinned_style(i)))
    fig.update_layout(xaxis_range=[0, 1], yaxis_range=[0, 1.02])
    return fig


def profile_figure(result, pvi: float) -> go.Figure:
    """Water saturation versus dimensionless distance at ``pvi`` pore volumes injected."""
    sol = result.solution
    xd = np.linspace(0.0, 1.0, 401)
    front = sol.front_speed * pvi
    if 0.0 < front < 1.0:  # draw the shock as a vertical step
        xd = np.sort(np.concatenate((xd, [front * (1 - 1e-9), front * (1 + 1e-9)])))
    sw = sol.profile(xd, pvi)
    fig = _base(f"Saturation profile at {pvi:.2f} PV injected", "Distance from injector xD = x/L [-]",
                "Water saturation Sw [fraction]")
    fig.update_layout(hovermode="closest")
    fig.add_trace(go.Scatter(x=xd, y=sw, name="Sw", fill="tozeroy", fillcolor="rgba(86,180,233,0.25)",
                             line={"color": CURRENT, "width": 2.4}))
    fig.add_hline(y=sol.sw_injected, line={"color": MARK, "dash": "dot", "width": 1},
                  annotation_text="1 − Sor", annotation_position="top right")
    fig.update_xaxes(range=[0, 1])
    fig.update_yaxes(range=[0, 1])
    return fig


def recovery_figure(result, pinned=()) -> go.Figure:
    """Recovery factor versus pore volumes injected, breakthrough marked."""
    t = result.table
    s = result.summary
    fig = _base("Recovery versus water injected", "Pore volumes injected [total PV]", "Recovery factor [% OOIP]")
    fig.add_trace(go.Scatter(x=t["pvi"].to_numpy(), y=100 * t["recovery_factor"].to_numpy(), name="recovery",
                             line={"color": CURRENT, "width": 2.4}))
    fig.add_trace(go.Scatter(x=[s["breakthrough_pvi"]], y=[100 * s["recovery_factor_at_breakthrough"]],
                             mode="markers", name="breakthrough", marker={"color": MARK, "size": 9}))
    for i, (label, res) in enumerate(pinned):
        fig.add_trace(go.Scatter(x=res.table["pvi"].to_numpy(), y=100 * res.table["recovery_factor"].to_numpy(),
                                 name=label, line=_pinned_style(i)))
    fig.update_yaxes(rangemode="tozero")
    return fig


def rate_cut_figure(result, pinned=()) -> go.Figure:
    """Oil rate and surface water cut versus time since injection start."""
    t = result.table
    days = t["days"].to_numpy()
    fig = _base("Oil rate and water cut", "Time since injection start [day]", "Oil rate [STB/d]",
                yaxis2={"title": "Water cut [%]", "overlaying": "y", "side": "right", "range": [0, 100],
                        "showgrid": False, "tickmode": "linear", "dtick": 20})
    fig.add_trace(go.Scatter(x=days, y=t["oil_rate_stb_d"].to_numpy(), name="oil rate",
                             line={"color": CURRENT, "width": 2.4}))
    fig.add_trace(go.Scatter(x=days, y=100 * t["water_cut"].to_numpy(), name="water cut", yaxis="y2",
                             line={"color": SECOND, "width": 2.0}))
    for i, (label, res) in enumerate(pinned):
        fig.add_trace(go.Scatter(x=res.table["days"].to_numpy(), y=100 * res.table["water_cut"].to_numpy(),
                                 name=f"water cut: {label}", yaxis="y2", line=_pinned_style(i)))
    fig.update_yaxes(rangemode="tozero")
    return fig


def wor_figure(result, pinned=()) -> go.Figure:
    """Surface water-oil ratio versus cumulative oil, log WOR axis (WOR > 0 only)."""
    fig = _base("Water-oil ratio versus cumulative oil", "Cumulative oil [STB]", "Water-oil ratio [STB/STB]")
    fig.update_yaxes(type="log")
    for i, (label, res) in enumerate([("current", result)] + list(pinned)):
        t = res.table
        keep = t["wor"].to_numpy() > 0
        line = {"color": CURRENT, "width": 2.4} if i == 0 else _pinned_style(i - 1)
        fig.add_trace(go.Scatter(x=t["cum_oil_stb"].to_numpy()[keep], y=t["wor"].to_numpy()[keep],
                                 name="WOR" if i == 0 else label, line=line))
    return fig


def layer_fronts_figure(layers, days: float, pvi: float) -> go.Figure:
    """Water-front position of each layer at ``days`` (``pvi`` pore volumes injected), layered model."""
    lt = layers.layer_table
    front = np.asarray(layers.front_positions([days]))[0]
    labels = [f"{int(n)}: {k:,.0f} md" for n, k in zip(lt["layer"], lt["permeability_md"])]
    fig = _base(f"Layer fronts at {pvi:.2f} PV injected ({days:,.0f} days)", "Front position x/L [-]",
                "Layer (permeability)", hovermode="closest")
    colors = [SECOND if f >= 1.0 else CURRENT for f in front]
    fig.add_trace(go.Bar(x=front, y=labels, orientation="h", marker={"color": colors}, name="front",
                         hovertemplate="%{y}: x/L = %{x:.3f}<extra></extra>"))
    fig.update_layout(xaxis_range=[0, 1.0], yaxis={"autorange": "reversed", "type": "category"},
                      showlegend=False, bargap=0.25)
    return fig


def layer_coverage_figure(layers) -> go.Figure:
    """Vertical coverage versus surface water-oil ratio (layered model), breakthroughs marked."""
    cov = layers.coverage_table
    bt = layers.breakthrough_table
    fig = _base("Vertical coverage versus water-oil ratio", "Water-oil ratio [STB/STB]",
                "Vertical coverage [fraction]", hovermode="closest")
    keep = cov["wor_surface"].to_numpy() > 0
    fig.add_trace(go.Scatter(x=cov["wor_surface"].to_numpy()[keep], y=cov["vertical_coverage"].to_numpy()[keep],
                             mode="lines", name="coverage", line={"color": CURRENT, "width": 2.4}))
    keep = bt["wor_surface"].to_numpy() > 0
    fig.add_trace(go.Scatter(x=bt["wor_surface"].to_numpy()[keep], y=bt["vertical_coverage"].to_numpy()[keep],
                             mode="markers", name="layer breakthrough", marker={"color": MARK, "size": 7}))
    fig.update_layout(xaxis_type="log", yaxis_range=[0, 1.02])
    return fig
