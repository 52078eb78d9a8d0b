"""Pure figure builders: engine results in, Plotly figure dicts out.

Each builder returns a plain Plotly figure dict ``{"data": [trace, ...], "layout": {...}}`` -- the
JSON form of ``plotly.graph_objects.Figure`` (``go.Figure(fig)`` gives the object). Plain dicts skip
plotly's Python-side validation, which cost about 20 ms per figure and dominated the slider latency.
Array values are numpy arrays (sent to the browser as typed arrays).

Colours are the Okabe-Ito colour-blind-safe palette (Okabe & Ito, 2008, "Color Universal Design").
The current case is drawn solid; pinned cases are drawn dashed, one colour each.
"""

from __future__ import annotations

import numpy as np

from flood.fractional_flow import fractional_flow, fractional_flow_derivative

OKABE_ITO = {"black": "#000000", "orange": "#E69F00", "sky": "#56B4E9", "green": "#009E73",
             "yellow": "#F0E442", "blue": "#0072B2", "vermillion": "#D55E00", "purple": "#CC79A7"}
CURRENT = OKABE_ITO["blue"]
SECOND = OKABE_ITO["vermillion"]
MARK = OKABE_ITO["black"]
PINNED = (OKABE_ITO["orange"], OKABE_ITO["green"], OKABE_ITO["purple"], OKABE_ITO["sky"], OKABE_ITO["black"])

_SAT_POINTS = 201
_FONT = {"family": "system-ui, -apple-system, Segoe UI, Roboto, sans-serif", "size": 12, "color": "#1d2430"}


def _axis(title: str, **extra) -> dict:
    return {"title": {"text": title}, "gridcolor": "#e6eaf0", "zerolinecolor": "#c9d1dc", "linecolor": "#9aa5b5",
            "showline": True, "ticks": "outside", "tickcolor": "#9aa5b5", **extra}


def _second_axis(title: str, **extra) -> dict:
    return _axis(title, overlaying="y", side="right", showgrid=False, **{"tickmode": "auto", "nticks": 6, **extra})


def _figure(title: str, x_axis: dict, y_axis: dict, hovermode="x unified", **layout) -> dict:
    return {"data": [], "layout": {
        "title": {"text": title, "x": 0.01, "font": {"size": 14}}, "font": _FONT,
        "paper_bgcolor": "#ffffff", "plot_bgcolor": "#ffffff", "autosize": True,
        "margin": {"l": 60, "r": 60, "t": 40, "b": 45}, "uirevision": "keep", "hovermode": hovermode,
        "legend": {"orientation": "h", "y": -0.22, "x": 0, "font": {"size": 11}},
        "xaxis": x_axis, "yaxis": y_axis, **layout}}


def _line(x, y, name, color=CURRENT, width=2.4, **extra) -> dict:
    return {"type": "scatter", "mode": "lines", "x": x, "y": y, "name": name,
            "line": {"color": color, "width": width}, **extra}


def _pinned_line(i, x, y, name, **extra) -> dict:
    trace = _line(x, y, name, PINNED[i % len(PINNED)], 1.6, **extra)
    trace["line"]["dash"] = "dash"
    return trace


def _marker(x, y, name, symbol="circle", **extra) -> dict:
    return {"type": "scatter", "mode": "markers", "x": list(x), "y": list(y), "name": name,
            "marker": {"color": MARK, "size": 9, "symbol": symbol}, **extra}


def fractional_flow_curves(solution):
    """Sw grid over [Swc, 1 − Sor], fw and dfw/dSw of one solution (engine functions) [fraction]."""
    sw = np.linspace(solution.relperm.swc, solution.sw_injected, _SAT_POINTS)
    fw = fractional_flow(solution.relperm, sw, solution.mu_w, solution.mu_o, solution.gravity)
    dfw = fractional_flow_derivative(solution.relperm, sw, solution.mu_w, solution.mu_o, solution.gravity)
    return sw, fw, dfw


def fractional_flow_figure(result, pinned=()) -> dict:
    """fw(Sw) with the Welge tangent, the front and average saturations marked, and dfw/dSw."""
    sol = result.solution
    sw, fw, dfw = fractional_flow_curves(sol)
    fig = _figure("Fractional flow and Welge tangent", _axis("Water saturation Sw [fraction]", range=[0, 1]),
                  _axis("Water fractional flow fw [fraction]", range=[0, 1.02]), hovermode="closest",
                  yaxis2=_second_axis("dfw/dSw [1/fraction]", rangemode="tozero"))
    sbar = sol.average_saturation_at_breakthrough
    fig["data"] += [
        _line(sw, fw, "fw"),
        _line(sw, dfw, "dfw/dSw", SECOND, 1.6, yaxis="y2"),
        {"type": "scatter", "mode": "lines", "x": [sol.swi, sol.front_saturation, sbar],
         "y": [sol.fw_initial, sol.front_fw, 1.0], "name": "Welge tangent",
         "line": {"color": MARK, "width": 1.2, "dash": "dot"}},
        _marker([sol.front_saturation], [sol.front_fw], f"front Swf = {sol.front_saturation:.3f}",
                mode="markers+text", text=["Swf"], textposition="top left"),
        _marker([sbar], [1.0], f"average at breakthrough = {sbar:.3f}", "diamond",
                mode="markers+text", text=["S̄w,bt"], textposition="bottom right"),
    ]
    for i, (label, res) in enumerate(pinned):
        psw, pfw, _ = fractional_flow_curves(res.solution)
        fig["data"].append(_pinned_line(i, psw, pfw, f"fw: {label}"))
    return fig


def profile_figure(result, pvi: float) -> dict:
    """Water saturation versus dimensionless distance at ``pvi`` pore volumes injected."""
    sol = result.solution
    xd = np.linspace(0.0, 1.0, 401)
    front = sol.front_speed * pvi
    if 0.0 < front < 1.0:  # draw the shock as a vertical step
        xd = np.sort(np.concatenate((xd, [front * (1 - 1e-9), front * (1 + 1e-9)])))
    sw = sol.profile(xd, pvi)
    fig = _figure(f"Saturation profile at {pvi:.2f} PV injected",
                  _axis("Distance from injector xD = x/L [-]", range=[0, 1]),
                  _axis("Water saturation Sw [fraction]", range=[0, 1]), hovermode="closest")
    fig["data"].append(_line(xd, sw, "Sw", fill="tozeroy", fillcolor="rgba(86,180,233,0.25)"))
    fig["layout"]["shapes"] = [{"type": "line", "xref": "x domain", "x0": 0, "x1": 1, "yref": "y",
                                "y0": sol.sw_injected, "y1": sol.sw_injected,
                                "line": {"color": MARK, "dash": "dot", "width": 1}}]
    fig["layout"]["annotations"] = [{"xref": "x domain", "x": 1, "xanchor": "right", "yref": "y",
                                     "y": sol.sw_injected, "yanchor": "bottom", "text": "1 − Sor",
                                     "showarrow": False}]
    return fig


def recovery_figure(result, pinned=()) -> dict:
    """Recovery factor versus pore volumes injected, breakthrough marked."""
    t, s = result.table, result.summary
    fig = _figure("Recovery versus water injected", _axis("Pore volumes injected [total PV]"),
                  _axis("Recovery factor [% OOIP]", rangemode="tozero"))
    fig["data"] += [_line(t["pvi"].to_numpy(), 100 * t["recovery_factor"].to_numpy(), "recovery"),
                    _marker([s["breakthrough_pvi"]], [100 * s["recovery_factor_at_breakthrough"]], "breakthrough")]
    for i, (label, res) in enumerate(pinned):
        fig["data"].append(_pinned_line(i, res.table["pvi"].to_numpy(), 100 * res.table["recovery_factor"].to_numpy(),
                                        label))
    return fig


def rate_cut_figure(result, pinned=()) -> dict:
    """Oil rate and surface water cut versus time since injection start."""
    t = result.table
    days = t["days"].to_numpy()
    fig = _figure("Oil rate and water cut", _axis("Time since injection start [day]"),
                  _axis("Oil rate [STB/d]", rangemode="tozero"),
                  yaxis2=_second_axis("Water cut [%]", range=[0, 100], tickmode="linear", dtick=20))
    fig["data"] += [_line(days, t["oil_rate_stb_d"].to_numpy(), "oil rate"),
                    _line(days, 100 * t["water_cut"].to_numpy(), "water cut", SECOND, 2.0, yaxis="y2")]
    for i, (label, res) in enumerate(pinned):
        fig["data"].append(_pinned_line(i, res.table["days"].to_numpy(), 100 * res.table["water_cut"].to_numpy(),
                                        f"water cut: {label}", yaxis="y2"))
    return fig


def pattern_forecast_figure(table, linear) -> dict:
    """Pattern forecast (stream tubes x displacement) beside the linear forecast: oil rate and water cut."""
    fig = _figure("Pattern forecast: oil rate and water cut", _axis("Time since injection start [day]"),
                  _axis("Oil rate [STB/d]", rangemode="tozero"),
                  yaxis2=_second_axis("Water cut [%]", range=[0, 100], tickmode="linear", dtick=20))
    days = table["days"].to_numpy()
    t = linear.table
    fig["data"] += [_line(days, table["oil_rate_stb_d"].to_numpy(), "oil rate, pattern"),
                    _line(days, 100 * table["water_cut"].to_numpy(), "water cut, pattern", SECOND, 2.0, yaxis="y2"),
                    _pinned_line(0, t["days"].to_numpy(), t["oil_rate_stb_d"].to_numpy(), "oil rate, linear"),
                    _pinned_line(1, t["days"].to_numpy(), 100 * t["water_cut"].to_numpy(), "water cut, linear",
                                 yaxis="y2")]
    return fig


def wor_figure(result, pinned=()) -> dict:
    """Surface water-oil ratio versus cumulative oil, log WOR axis (WOR > 0 only)."""
    fig = _figure("Water-oil ratio versus cumulative oil", _axis("Cumulative oil [STB]"),
                  _axis("Water-oil ratio [STB/STB]", type="log"))
    for i, (label, res) in enumerate([("WOR", result)] + list(pinned)):
        t = res.table
        keep = t["wor"].to_numpy() > 0
        x, y = t["cum_oil_stb"].to_numpy()[keep], t["wor"].to_numpy()[keep]
        fig["data"].append(_line(x, y, label) if i == 0 else _pinned_line(i - 1, x, y, label))
    return fig


def layer_fronts_figure(layers, days: float, pvi: float) -> dict:
    """Water-front position of each layer at ``days`` (``pvi`` pore volumes injected), layered model."""
    lt = layers.layer_table
    front = np.asarray(layers.front_positions([days]))[0]
    labels = [f"{int(n)}: {k:,.0f} md" for n, k in zip(lt["layer"], lt["permeability_md"])]
    fig = _figure(f"Layer fronts at {pvi:.2f} PV injected ({days:,.0f} days)",
                  _axis("Front position x/L [-]", range=[0, 1]),
                  _axis("Layer (permeability)", autorange="reversed", type="category"),
                  hovermode="closest", showlegend=False, bargap=0.25)
    fig["data"].append({"type": "bar", "orientation": "h", "x": front, "y": labels, "name": "front",
                        "marker": {"color": [SECOND if f >= 1.0 else CURRENT for f in front]},
                        "hovertemplate": "%{y}: x/L = %{x:.3f}<extra></extra>"})
    return fig


def layer_coverage_figure(layers) -> dict:
    """Vertical coverage versus surface water-oil ratio (layered model), breakthroughs marked."""
    cov, bt = layers.coverage_table, layers.breakthrough_table
    fig = _figure("Vertical coverage versus water-oil ratio", _axis("Water-oil ratio [STB/STB]", type="log"),
                  _axis("Vertical coverage [fraction]", range=[0, 1.02]), hovermode="closest")
    keep = cov["wor_surface"].to_numpy() > 0
    fig["data"].append(_line(cov["wor_surface"].to_numpy()[keep], cov["vertical_coverage"].to_numpy()[keep],
                             "coverage"))
    keep = bt["wor_surface"].to_numpy() > 0
    fig["data"].append({**_marker(bt["wor_surface"].to_numpy()[keep], bt["vertical_coverage"].to_numpy()[keep],
                                  "layer breakthrough"), "marker": {"color": MARK, "size": 7}})
    return fig


def crosscheck_profiles_figure(check) -> dict:
    """Numerical (finite-volume) and analytic (Buckley-Leverett) saturation profiles at a few PVIs."""
    fig = _figure(f"Saturation profiles: {check.cells} cells beside Buckley-Leverett",
                  _axis("Distance from injector xD = x/L [-]", range=[0, 1]),
                  _axis("Water saturation Sw [fraction]", range=[0, 1]), hovermode="closest")
    for i, pvi in enumerate(check.profile_pvi):
        color = (CURRENT, SECOND, OKABE_ITO["green"], OKABE_ITO["purple"])[i % 4]
        fig["data"].append(_line(check.x, check.analytic_profiles[i], f"analytic {pvi:.2f} PV", color, 2.0))
        num = _line(check.x, check.numerical_profiles[i], f"finite volumes {pvi:.2f} PV", color, 1.6)
        num["line"]["dash"] = "dash"
        fig["data"].append(num)
    return fig


def crosscheck_curve_figure(check) -> dict:
    """Outlet fractional flow and recovery versus PVI: numerical beside analytic."""
    c = check.curve
    pvi = c["pvi"].to_numpy()
    fig = _figure("Outlet water fraction and recovery", _axis("Pore volumes injected [total PV]"),
                  _axis("Outlet reservoir fw [fraction]", range=[0, 1.02]),
                  yaxis2=_second_axis("Recovery [fraction of initial oil]", range=[0, 1]))
    fig["data"] += [_line(pvi, c["fw_analytic"].to_numpy(), "fw analytic"),
                    {**_line(pvi, c["fw_numerical"].to_numpy(), "fw finite volumes", CURRENT, 1.6),
                     "line": {"color": CURRENT, "width": 1.6, "dash": "dash"}},
                    _line(pvi, c["recovery_factor_analytic"].to_numpy(), "recovery analytic", SECOND, 2.0, yaxis="y2"),
                    {**_line(pvi, c["recovery_factor_numerical"].to_numpy(), "recovery finite volumes", SECOND, 1.6,
                             yaxis="y2"), "line": {"color": SECOND, "width": 1.6, "dash": "dash"}}]
    return fig


def sweep_map_figure(sweep) -> dict:
    """Water saturation (finite volumes) or swept cells (streamlines) over the symmetry element at the kept PVI."""
    if not sweep.swept_maps:
        fig = _figure("Swept-area map (streamline and finite-volume methods)", _axis("x [-]"), _axis("y [-]"))
        return fig
    pvi, field = next(iter(sweep.swept_maps.items()))
    field = np.asarray(field)
    if sweep.method == "streamline":
        title, scale = f"Swept area (streamlines, M = 1) at {pvi:.2f} PV injected", "swept [1 = yes]"
    else:
        title, scale = f"Water saturation over the symmetry element at {pvi:.2f} PV injected", "Sw [fraction]"
    fig = _figure(title,
                  _axis("x / element length [-]", range=[0, 1], showgrid=False),
                  _axis("y / element width [-]", range=[0, 1], showgrid=False, scaleanchor="x"),
                  hovermode="closest")
    ny, nx = field.shape
    fig["data"].append({"type": "heatmap", "z": field, "x": (np.arange(nx) + 0.5) / nx, "y": (np.arange(ny) + 0.5) / ny,
                        "colorscale": "Cividis", "colorbar": {"title": {"text": scale}}, "zsmooth": False})
    return fig


def sweep_curve_figure(sweep, correlation=None) -> dict:
    """Areal sweep and displacing-fluid fraction in production versus PVI (and a correlation's sweep)."""
    c = sweep.curve
    fig = _figure(f"Areal sweep, {sweep.pattern.replace('_', ' ')} ({sweep.method})",
                  _axis("Pore volumes injected [PV]"), _axis("Areal sweep [fraction]", range=[0, 1.02]),
                  yaxis2=_second_axis("Displacing fluid in production fd [fraction]", range=[0, 1.02]))
    fig["data"] += [_line(c["pvi"].to_numpy(), c["areal_sweep"].to_numpy(), "areal sweep"),
                    _line(c["pvi"].to_numpy(), c["fd"].to_numpy(), "fd", SECOND, 2.0, yaxis="y2"),
                    _marker([sweep.breakthrough_pvi], [sweep.areal_sweep_at_breakthrough], "breakthrough")]
    if correlation is not None:
        cc = correlation.curve
        trace = _line(cc["pvi"].to_numpy(), cc["areal_sweep"].to_numpy(),
                      f"areal sweep, Fassihi correlation (M = {correlation.mobility_ratio:.3g})", CURRENT, 1.6)
        trace["line"]["dash"] = "dash"
        fig["data"].append(trace)
    return fig
