"""Plotly figures of the report: drawn only from what the analysis computed.

Every text that came from the scenario file (route and step names) is escaped before it reaches a
figure, because plotly renders a subset of HTML in names, labels and hover text.
"""
from __future__ import annotations

import html

import numpy as np
import plotly.graph_objects as go

from ..units import display_unit, from_si

ROUTE_COLOURS = ("#0f5257", "#c2571a", "#5b3c88", "#2f7d32", "#8a6d1d", "#1f4e79", "#a4343a", "#3d6b8c")
BOUNDARY = "#1b263b"
DOME_FILL = "rgba(27, 38, 59, 0.10)"
SUPERCRIT_FILL = "rgba(15, 82, 87, 0.07)"
SOLID_FILL = "rgba(90, 120, 160, 0.18)"
PAPER = "#fbfaf7"


def esc(text) -> str:
    return html.escape(str(text), quote=True)


class Units:
    """Axis conversion from SI to the display system."""

    def __init__(self, system="engineering"):
        self.system = system
        self.u_p = display_unit("pressure", system)
        self.u_T = display_unit("temperature", system)
        self.u_h = display_unit("specific_energy", system)
        self.u_s = display_unit("specific_heat", system)
        self.u_rho = display_unit("density", system)

    def p(self, v):
        return from_si(np.asarray(v, dtype=float), "pressure", self.u_p)

    def T(self, v):
        return from_si(np.asarray(v, dtype=float), "temperature", self.u_T)

    def h(self, v):
        return from_si(np.asarray(v, dtype=float), "specific_energy", self.u_h)

    def s(self, v):
        return from_si(np.asarray(v, dtype=float), "specific_heat", self.u_s)

    def rho(self, v):
        return from_si(np.asarray(v, dtype=float), "density", self.u_rho)


def _layout(fig, title, xtitle, ytitle, ylog=False, height=560):
    fig.update_layout(title=dict(text=title, x=0.01, font=dict(size=16, color=BOUNDARY)), paper_bgcolor=PAPER,
                      plot_bgcolor="white", height=height, margin=dict(l=70, r=20, t=50, b=60),
                      legend=dict(orientation="h", y=-0.15, font=dict(size=11)), hovermode="closest",
                      font=dict(family="Segoe UI, Helvetica, Arial, sans-serif", size=12, color="#222"))
    fig.update_xaxes(title=xtitle, gridcolor="#e6e2da", zeroline=False)
    fig.update_yaxes(title=ytitle, gridcolor="#e6e2da", zeroline=False, type="log" if ylog else "linear")
    return fig


def _hover(state_row: dict, u: Units) -> str:
    parts = [f"T {float(u.T(state_row['T'])):.2f} {u.u_T}", f"p {float(u.p(state_row['p'])):.3f} {u.u_p}"]
    for k, label, conv, unit in (("rho_mass", "rho", u.rho, u.u_rho), ("h_mass", "h", u.h, u.u_h),
                                 ("s_mass", "s", u.s, u.u_s)):
        if state_row.get(k) is not None:
            parts.append(f"{label} {float(conv(state_row[k])):.4g} {unit}")
    if state_row.get("Z") is not None:
        parts.append(f"Z {state_row['Z']:.4f}")
    parts.append(f"phase {state_row.get('phase', '')}")
    if state_row.get("vapor_fraction") is not None:
        parts.append(f"vapour fraction {state_row['vapor_fraction']:.3f}")
    return "<br>".join(parts)


def pt_diagram(diag, routes, u: Units, title="Pressure-temperature: where the routes go"):
    """P-T diagram: boundary, critical point, cricondenbar/-therm, CO2 triple point and solid region,
    the supercritical region shaded, every route along its sampled path with arrows, labels and crossings.

    routes: list of dicts with name, colour, segments (list of (step label, T[], p[])), crossings (list of
    (kind, T, p, hover text)).
    """
    fig = go.Figure()
    allT = [diag.T] + [np.asarray(s[1]) for r in routes for s in r["segments"]]
    allp = [diag.p] + [np.asarray(s[2]) for r in routes for s in r["segments"]]
    Tmax = max((float(np.max(a)) for a in allT if np.size(a)), default=400.0) + 20.0
    pmax = max((float(np.max(a)) for a in allp if np.size(a)), default=1e7) * 1.3
    pmin = min((float(np.min(a)) for a in allp if np.size(a)), default=1e5) / 1.5
    if diag.critical is not None:
        Tc, pc = diag.critical
        fig.add_trace(go.Scatter(x=u.T([Tc, Tmax, Tmax, Tc, Tc]), y=u.p([pc, pc, pmax, pmax, pc]), fill="toself",
                                 fillcolor=SUPERCRIT_FILL, line=dict(width=0), name="supercritical region",
                                 hoverinfo="skip"))
    if diag.sublimation:
        Ts, ps = diag.sublimation
        Tm, pm = diag.melting
        # the solid region lies left of the sublimation line and, above the triple point, of the melting line
        xs = np.concatenate([Ts, Tm, [Ts[0], Ts[0]]])
        ys = np.concatenate([ps, pm, [pm[-1], ps[0]]])
        fig.add_trace(go.Scatter(x=u.T(Ts), y=u.p(ps), mode="lines", line=dict(color="#5a78a0", width=1.5),
                                 name="CO2 sublimation line (Span & Wagner 1996)"))
        fig.add_trace(go.Scatter(x=u.T(Tm), y=u.p(pm), mode="lines", line=dict(color="#5a78a0", width=1.5, dash="dot"),
                                 name="CO2 melting line (Span & Wagner 1996)"))
        fig.add_trace(go.Scatter(x=u.T(xs), y=u.p(ys), fill="toself", fillcolor=SOLID_FILL, line=dict(width=0), name="solid CO2 (dry ice)",
                                 hoverinfo="skip"))
        Tt, pt = diag.triple
        fig.add_trace(go.Scatter(x=u.T([Tt]), y=u.p([pt]), mode="markers", marker=dict(symbol="triangle-up", size=10,
                                 color="#5a78a0"), name="CO2 triple point",
                                 hovertext=f"triple point {float(u.T(Tt)):.2f} {u.u_T}, {float(u.p(pt)):.4f} {u.u_p}",
                                 hoverinfo="text"))
    if np.size(diag.T):
        br = np.array(diag.branch)
        for name, mask, dash in (("bubble line", br == "bubble", "solid"), ("dew line", br == "dew", "dash"),
                                 ("saturation line", br == "saturation", "solid")):
            if np.any(mask):
                fig.add_trace(go.Scatter(x=u.T(diag.T[mask]), y=u.p(diag.p[mask]), mode="lines",
                                         line=dict(color=BOUNDARY, width=2, dash=dash), name=name))
    for label, pt_ in (("critical point", diag.critical), ("cricondenbar", diag.cricondenbar),
                       ("cricondentherm", diag.cricondentherm)):
        if pt_ is None or (label != "critical point" and diag.critical is not None and pt_ == diag.critical):
            continue
        sym = {"critical point": "star", "cricondenbar": "diamond", "cricondentherm": "square"}[label]
        fig.add_trace(go.Scatter(x=u.T([pt_[0]]), y=u.p([pt_[1]]), mode="markers",
                                 marker=dict(symbol=sym, size=12, color=BOUNDARY, line=dict(color="white", width=1)),
                                 name=label, hovertext=f"{label}: {float(u.T(pt_[0])):.2f} {u.u_T}, "
                                                        f"{float(u.p(pt_[1])):.3f} {u.u_p}", hoverinfo="text"))
    yrange = [np.log10(float(u.p(pmin))), np.log10(float(u.p(pmax)))]
    _route_traces(fig, routes, "T", "p", u.T, u.p, ylog=True, yspan=tuple(yrange))
    _layout(fig, title, f"temperature [{u.u_T}]", f"pressure [{u.u_p}]", ylog=True)
    fig.update_yaxes(range=yrange)
    return fig


def _route_traces(fig, routes, xkey, ykey, fx, fy, ylog=False, yspan=None):
    labels = []
    for r in routes:
        first = True
        for label, *xy in r["segments"]:
            data = dict(zip(("T", "p", "h", "s", "rho"), xy))
            x, y = np.asarray(data[xkey]), np.asarray(data[ykey])
            if x.size == 0:
                continue
            fig.add_trace(go.Scatter(
                x=fx(x), y=fy(y), mode="lines+markers", legendgroup=esc(r["name"]), showlegend=first,
                name=esc(r["name"]), line=dict(color=r["colour"], width=2.5),
                marker=dict(symbol="arrow", angleref="previous", size=[0] * (x.size - 1) + [11], color=r["colour"]),
                hovertext=esc(f"{r['name']}: {label}"), hoverinfo="text"))
            labels.append((float(fx(x[-1:])[0]), float(fy(y[-1:])[0]), str(label), r["colour"], esc(r["name"])))
            first = False
        cr = r.get("crossings", [])
        if cr:
            fig.add_trace(go.Scatter(x=fx([c[xkey] for c in cr]), y=fy([c[ykey] for c in cr]), mode="markers",
                                     marker=dict(symbol="x-thin", size=12, line=dict(width=2.5, color=r["colour"])),
                                     legendgroup=esc(r["name"]), name=esc(f"{r['name']}: crossings"),
                                     hovertext=[c["hover"] for c in cr], hoverinfo="text"))
    _place_labels(fig, labels, ylog, yspan)


#: nominal plot area [px] and label metrics used to keep step labels apart (the figures are 560 px high
#: with a plot area of about 400 px; the width follows the page, 1000 px or more on a desktop screen); the
#: character width is our estimate for 10 px text, checked against the rendered charts in headless Chromium
_PLOT_W, _PLOT_H, _CHAR_W, _LINE_H, _GAP = 1000.0, 400.0, 6.0, 13.0, 8.0
#: a label beside its point is padded on the point's side with two no-break spaces (about 2.8 px each at 10 px:
#: a space is about 0.28 em in Helvetica, from memory), so that labels left and right of one point stand apart
_SIDE_PAD_TEXT, _SIDE_PAD = "\u00a0\u00a0", 5.6
_POSITIONS = (("top right", 1, 1), ("bottom right", 1, -1), ("top left", -1, 1), ("bottom left", -1, -1),
              ("middle right", 1, 0), ("middle left", -1, 0), ("top center", 0, 1), ("bottom center", 0, -1))


def _axis_span(values, log: bool):
    v = np.concatenate([np.asarray(a, dtype=float).ravel() for a in values]) if values else np.zeros(0)
    v = v[np.isfinite(v)]
    if log:
        v = np.log10(v[v > 0])
    if v.size == 0:
        return 0.0, 1.0
    lo, hi = float(v.min()), float(v.max())
    return (lo, hi) if hi > lo else (lo - 0.5, hi + 0.5)


def _label_box(px: float, py: float, text: str, sx: int, sy: int) -> tuple[float, float, float, float]:
    """The estimated box [px] of a label's visible text at a position (sx, sy: -1, 0, 1 for left/centre/right,
    bottom/middle/top) around its point (px, py)."""
    w, h = _CHAR_W * len(text) + 4.0, _LINE_H
    bx0 = px + 2.0 + _SIDE_PAD if sx > 0 else px - 2.0 - _SIDE_PAD - w if sx < 0 else px - w / 2
    by0 = py + 2.0 if sy > 0 else py - 2.0 - h if sy < 0 else py - h / 2
    return bx0, by0, bx0 + w, by0 + h


def _place_labels(fig, labels, ylog: bool, yspan=None) -> None:
    """The step labels at the ends of the route segments, each put at the first of eight positions around
    its point where it covers no label placed before it and keeps 8 px from any beside it on the same line,
    inside the plot area where one such position is (estimated on a nominal 1000 x 400 px plot area over the
    data's extent; a label beside its point stands a little off it, so that labels left and right of one
    point do not run together). The same label at the same point for two routes is written once; a label
    with no free position is left out (the segment's hover text still names the step)."""
    xs = [tr.x for tr in fig.data if getattr(tr, "x", None) is not None and len(tr.x)]
    ys = [tr.y for tr in fig.data if getattr(tr, "y", None) is not None and len(tr.y)]
    try:
        x0, x1 = _axis_span(xs, False)
        y0, y1 = yspan if yspan is not None else _axis_span(ys, ylog)
    except (TypeError, ValueError):  # non-numeric data in another trace: the labels' own extent instead
        x0, x1 = _axis_span([[lb[0] for lb in labels]], False)
        y0, y1 = yspan if yspan is not None else _axis_span([[lb[1] for lb in labels]], ylog)
    placed: list[tuple[float, float, float, float]] = []
    seen: list[tuple[float, float, str]] = []
    for x, y, text, colour, group in labels:
        if not (np.isfinite(x) and np.isfinite(y)) or (ylog and y <= 0):
            continue
        px = (x - x0) / (x1 - x0) * _PLOT_W
        py = ((np.log10(y) if ylog else y) - y0) / (y1 - y0) * _PLOT_H
        if any(t == text and abs(px - qx) < 4.0 and abs(py - qy) < 4.0 for qx, qy, t in seen):
            continue
        choice = None
        for inside in (True, False):  # within the plot area if possible
            for position, sx, sy in _POSITIONS:
                box = _label_box(px, py, text, sx, sy)
                if inside and not (box[0] >= 0.0 and box[2] <= _PLOT_W and box[1] >= 0.0 and box[3] <= _PLOT_H):
                    continue
                # side by side, a gap of _GAP px at least: two labels on one line must not read as one
                if not any(box[0] < b[2] + _GAP and b[0] < box[2] + _GAP and box[1] < b[3] and b[1] < box[3]
                           for b in placed):
                    choice = position, sx, box
                    break
            if choice is not None:
                break
        if choice is None:
            continue
        position, sx, box = choice
        placed.append(box)
        seen.append((px, py, text))
        shown = _SIDE_PAD_TEXT + esc(text) if sx > 0 else esc(text) + _SIDE_PAD_TEXT if sx < 0 else esc(text)
        fig.add_trace(go.Scatter(x=[x], y=[y], mode="text", text=[shown], textposition=position,
                                 textfont=dict(size=10, color=colour), legendgroup=group, showlegend=False,
                                 hoverinfo="skip"))


def ph_diagram(diag, routes, u: Units):
    """Pressure-enthalpy diagram with the two-phase dome, isotherms and the routes."""
    fig = go.Figure()
    _dome(fig, diag.h_liq, diag.p_liq, diag.h_vap, diag.p_vap, u.h, u.p)
    for Ti, ps, hs, _ in diag.isotherms:
        fig.add_trace(go.Scatter(x=u.h(hs), y=u.p(ps), mode="lines", line=dict(color="#b8b2a6", width=1),
                                 name=f"{float(u.T(Ti)):.0f} {u.u_T}", legendgroup="isotherms", showlegend=False,
                                 hovertext=f"isotherm {float(u.T(Ti)):.1f} {u.u_T}", hoverinfo="text"))
    _route_traces(fig, routes, "h", "p", u.h, u.p, ylog=True)
    return _layout(fig, "Pressure-enthalpy: duties read as horizontal distances", f"specific enthalpy [{u.u_h}]",
                   f"pressure [{u.u_p}]", ylog=True)


def ts_diagram(diag, routes, u: Units):
    """Temperature-entropy diagram with the two-phase dome and the routes."""
    fig = go.Figure()
    _dome(fig, diag.s_liq, diag.T_liq, diag.s_vap, diag.T_vap, u.s, u.T)
    _route_traces(fig, routes, "s", "T", u.s, u.T)
    return _layout(fig, "Temperature-entropy", f"specific entropy [{u.u_s}]", f"temperature [{u.u_T}]")


def _dome(fig, xl, yl, xv, yv, fx, fy):
    if np.size(xl) + np.size(xv) == 0:
        return
    xl, yl, xv, yv = (np.asarray(a) for a in (xl, yl, xv, yv))
    ol, ov = np.argsort(yl), np.argsort(yv)[::-1]
    x = np.concatenate([xl[ol], xv[ov]])
    y = np.concatenate([yl[ol], yv[ov]])
    fig.add_trace(go.Scatter(x=fx(x), y=fy(y), mode="lines", fill="toself", fillcolor=DOME_FILL,
                             line=dict(color=BOUNDARY, width=2), name="two-phase region"))


def density_spread_figure(spread_rows, u: Units):
    """Density against pressure along each route's streams under the chosen and the lighter models.

    spread_rows: list of dicts route, model, p[], rho[] (None where the model is out of range).
    """
    fig = go.Figure()
    dashes = ("solid", "dot", "dash", "longdash", "dashdot", "longdashdot", "solid")
    models = sorted({r["model"] for r in spread_rows})
    for r in spread_rows:
        p = np.asarray(r["p"], dtype=float)
        rho = np.array([np.nan if v is None else v for v in r["rho"]], dtype=float)
        dash = dashes[models.index(r["model"]) % len(dashes)]
        fig.add_trace(go.Scatter(x=u.p(p), y=u.rho(rho), mode="lines+markers", connectgaps=False,
                                 line=dict(color=r["colour"], dash=dash, width=2 if r.get("chosen") else 1.2),
                                 marker=dict(size=5), name=esc(f"{r['route']} - {r['model']}"),
                                 hovertext=esc(f"{r['route']} - {r['model']}"), hoverinfo="text+x+y"))
    _layout(fig, "Density along the streams: chosen model against lighter models", f"pressure [{u.u_p}]",
            f"density [{u.u_rho}]")
    fig.update_xaxes(type="log")
    return fig


def comparison_figure(rows, u: Units):
    """Bar chart of shaft power, heating and cooling duty per route (rows: route, power, heating, cooling [W])."""
    unit = display_unit("power", u.system)
    names = [esc(r["route"]) for r in rows]
    fig = go.Figure()
    for key, label, colour in (("power", "net shaft power", "#0f5257"), ("heating", "heating duty", "#c2571a"),
                               ("cooling", "cooling duty", "#3d6b8c")):
        fig.add_trace(go.Bar(x=names, y=[from_si(r[key], "power", unit) for r in rows], name=label,
                             marker_color=colour))
    _layout(fig, "Side by side: power and duties", "route", f"[{unit}]", height=420)
    fig.update_layout(barmode="group")
    return fig
