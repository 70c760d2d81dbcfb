"""The HTML page of a design-space sweep: where each route is feasible over the swept settings, what it
costs there, and the trade-off between specific energy and the smallest margin.

Drawn only from the sweep's tidy table (rows of variant, settings, route, verdict, deciding reason, key
figures, margins). One self-contained page: plotly.js embedded once, nothing loaded from the network,
every text from the scenario (names, descriptions, reasons, errors) escaped with html.escape, figure JSON
embedded with '<', '>' and '&' as \\u escapes (as in :mod:`supercrit.report.html`).
"""
from __future__ import annotations

import math
from datetime import datetime, timezone

import plotly.graph_objects as go
from plotly.offline import get_plotlyjs
from plotly.subplots import make_subplots

from .. import __version__
from ..units import PLAIN_KINDS, SYSTEMS, display_unit, format_quantity, from_si
from .figures import ROUTE_COLOURS, _layout, esc
from .html import CAUTIONS, CSS, _json

LEVELS = ("feasible", "feasible with warnings", "infeasible", "not computed")
LEVEL_COLOURS = ("#2d6a4f", "#e0a526", "#9b2226", "#9aa0a6")
MISSING = "not yet run"
BEST_LISTED = 12


def _level(row) -> int:
    return LEVELS.index(row["verdict"]) if row.get("verdict") in LEVELS else 3


class _Axis:
    """A swept setting as shown: display unit, values converted, label."""

    def __init__(self, ax, column, system):
        self.ax, self.column = ax, column
        quantity = ax.kind not in PLAIN_KINDS and ax.kind != "int" and ax.kind in SYSTEMS["SI"]
        self.unit = display_unit(ax.kind, system) if quantity else ""
        self.kind, self.system, self.quantity = ax.kind, system, quantity
        more = f" (with {len(ax.targets) - 1} more)" if len(ax.targets) > 1 else ""
        self.label = f"{ax.name}{more}" + (f" [{self.unit}]" if self.unit else "")
        self.log = "log range" in ax.written

    def show(self, v):
        if v is None:
            return None
        return from_si(float(v), self.kind, self.unit) if self.quantity else v

    def text(self, v):
        if v is None:
            return "-"
        return format_quantity(float(v), self.kind, self.system, 5) if self.quantity else f"{v:g}"


def _settings_text(axes, row) -> str:
    return "<br>".join(f"{esc(a.ax.name)} = {esc(a.text(row.get(a.column)))}" for a in axes)


def _kwh_t(v):
    return None if v is None else v / 3600.0  # [J/kg] -> [kWh/t]


def _metric(rows):
    """(column, label, transform, lower_is_better) of the main figure of merit in these rows."""
    if any(r.get("specific_energy [J/kg]") is not None for r in rows):
        return "specific_energy [J/kg]", "specific energy [kWh/t]", _kwh_t, True
    if any(r.get("thermal_efficiency [-]") is not None for r in rows):
        return "thermal_efficiency [-]", "thermal efficiency [%]", lambda v: None if v is None else 100 * v, False
    return "shaft_power [W]", "shaft power [kW]", lambda v: None if v is None else v / 1e3, True


def _hover(axes, row) -> str:
    reason = row.get("reason") or row.get("error") or ""
    text = f"{esc(row['route'])}: <b>{esc(row['verdict'])}</b><br>{_settings_text(axes, row)}"
    if reason:
        text += "<br>" + esc(_wrap(reason))
    others = [f for f in (row.get("findings") or "").split("; ") if f and f != row.get("rule")]
    if others:
        text += "<br>also: " + esc(", ".join(others))
    return text


def _wrap(text: str, width: int = 90) -> str:
    words, lines, cur = str(text).split(), [], ""
    for w in words:
        if cur and len(cur) + len(w) + 1 > width:
            lines.append(cur)
            cur = w
        else:
            cur = f"{cur} {w}".strip()
    lines.append(cur)
    return "\n".join(lines[:6]).replace("\n", "\u2028")


def _fix_breaks(s: str) -> str:
    return s.replace("\u2028", "<br>")


def feasibility_map(axes, rows, route, grid: bool):
    """Feasibility over the first two swept settings for one route (worst level over any further settings)."""
    a0, a1 = axes[0], axes[1]
    xs = list(dict.fromkeys(a0.ax.values))
    ys = list(dict.fromkeys(a1.ax.values))
    z = [[None] * len(xs) for _ in ys]
    hover = [[f"{esc(a0.ax.name)} = {esc(a0.text(x))}<br>{esc(a1.ax.name)} = {esc(a1.text(y))}<br>{MISSING}"
              for x in xs] for y in ys]
    worst: dict = {}
    for r in rows:
        if r["route"] != route:
            continue
        key = (r[a0.column], r[a1.column])
        cur = worst.get(key)
        if cur is None or _level(r) > _level(cur[0]):
            worst[key] = (r, (cur[1] if cur else 0) + 1)
        else:
            worst[key] = (cur[0], cur[1] + 1)
    ix, iy = {x: i for i, x in enumerate(xs)}, {y: i for i, y in enumerate(ys)}
    for (x, y), (r, n) in worst.items():
        if x in ix and y in iy:
            z[iy[y]][ix[x]] = _level(r)
            more = f"<br>(worst of {n} variants over the other settings)" if len(axes) > 2 else ""
            hover[iy[y]][ix[x]] = _fix_breaks(_hover(axes, r)) + more
    scale = []
    for i, c in enumerate(LEVEL_COLOURS):
        scale += [[i / 4, c], [(i + 1) / 4, c]]
    fig = go.Figure(go.Heatmap(
        x=[a0.show(x) for x in xs], y=[a1.show(y) for y in ys], z=z, text=hover, hovertemplate="%{text}<extra></extra>",
        zmin=-0.5, zmax=3.5, colorscale=scale, xgap=1, ygap=1,
        colorbar=dict(tickvals=[0, 1, 2, 3], ticktext=list(LEVELS), title="verdict")))
    _layout(fig, esc(f"Feasibility of route {route}"), esc(a0.label), esc(a1.label), height=480)
    if a0.log:
        fig.update_xaxes(type="log")
    if a1.log:
        fig.update_yaxes(type="log")
    return fig


def feasibility_strip(axes, rows, routes):
    """Feasibility along one setting (or paired settings): one row of markers per route."""
    a0 = axes[0]
    fig = go.Figure()
    for lvl, colour in enumerate(LEVEL_COLOURS):
        sel = [r for r in rows if _level(r) == lvl]
        if not sel:
            continue
        fig.add_trace(go.Scatter(x=[a0.show(r[a0.column]) for r in sel], y=[esc(r["route"]) for r in sel],
                                 mode="markers", marker=dict(color=colour, size=13, symbol="square"),
                                 name=LEVELS[lvl], hovertext=[_fix_breaks(_hover(axes, r)) for r in sel],
                                 hoverinfo="text"))
    _layout(fig, "Feasibility over the swept setting", esc(a0.label), "route", height=140 + 60 * len(routes))
    fig.update_yaxes(categoryorder="array", categoryarray=[esc(r) for r in routes])
    if a0.log:
        fig.update_xaxes(type="log")
    return fig


FIGURE_ROWS = (("specific_energy [J/kg]", "specific energy", "kWh/t", _kwh_t),
               ("thermal_efficiency [-]", "thermal efficiency", "%", lambda v: None if v is None else 100 * v),
               ("shaft_power [W]", "net shaft power in", "power", None),
               ("heating_duty [W]", "heating duty", "power", None),
               ("cooling_duty [W]", "cooling duty", "power", None))


def _nice_step(raw: float) -> float:
    """The smallest of 1, 2, 2.5, 5 x 10^k not below ``raw`` (contour spacing that reads well)."""
    if not raw > 0:
        return 1.0
    mag = 10.0 ** math.floor(math.log10(raw))
    return next(m * mag for m in (1.0, 2.0, 2.5, 5.0, 10.0) if m * mag >= raw * (1 - 1e-12))


def key_figure(axes, rows, routes, column, title, unit, fn, grid2: bool, system):
    """Contours over the first two settings (one panel per route), or lines along the first setting."""
    if unit == "power":
        unit = display_unit("power", system)
        fn = lambda v: None if v is None else from_si(v, "power", unit)  # noqa: E731
    computed = [r for r in rows if _level(r) < 3 and r.get(column) is not None]
    if not computed:
        return None
    a0 = axes[0]
    if grid2:
        a1 = axes[1]
        rest = {a.column: a.ax.values[0] for a in axes[2:]}
        fig = make_subplots(rows=1, cols=len(routes), subplot_titles=[esc(r) for r in routes],
                            horizontal_spacing=0.08)
        xs, ys = list(dict.fromkeys(a0.ax.values)), list(dict.fromkeys(a1.ax.values))
        grids = []
        for route in routes:
            z = [[None] * len(xs) for _ in ys]
            for r in computed:
                if r["route"] == route and all(r.get(c) == v for c, v in rest.items()):
                    z[ys.index(r[a1.column])][xs.index(r[a0.column])] = fn(r[column])
            grids.append(z)
        vals = [v for z in grids for row in z for v in row if v is not None]
        lo, hi = (min(vals), max(vals)) if vals else (0.0, 1.0)
        step = _nice_step((hi - lo) / 10.0)
        levels = dict(start=math.floor(lo / step) * step, end=math.ceil(hi / step) * step, size=step,
                      showlabels=True)  # the same levels and colours in every panel
        for k, (route, z) in enumerate(zip(routes, grids)):
            fig.add_trace(go.Contour(x=[a0.show(x) for x in xs], y=[a1.show(y) for y in ys], z=z,
                                     colorscale="Viridis", autocontour=False, contours=levels, zmin=lo, zmax=hi,
                                     connectgaps=False,
                                     showscale=k == len(routes) - 1, colorbar=dict(title=esc(unit)),
                                     hovertemplate=f"{esc(a0.ax.name)} %{{x}}<br>{esc(a1.ax.name)} %{{y}}<br>"
                                                   f"{esc(title)} %{{z:.4g}} {esc(unit)}<extra>{esc(route)}</extra>"),
                          row=1, col=k + 1)
            fig.update_xaxes(title=esc(a0.label), row=1, col=k + 1, type="log" if a0.log else "linear")
            fig.update_yaxes(title=esc(a1.label) if k == 0 else None, row=1, col=k + 1,
                             type="log" if a1.log else "linear")
        note = ""
        if rest:
            note = " at " + ", ".join(f"{a.ax.name} = {a.text(a.ax.values[0])}" for a in axes[2:])
        fig.update_layout(title=dict(text=esc(f"{title} [{unit}]{note}"), x=0.01), height=460,
                          paper_bgcolor="#fbfaf7", plot_bgcolor="white", margin=dict(l=70, r=20, t=70, b=60))
        return fig
    fig = go.Figure()
    for k, route in enumerate(routes):
        sel = sorted((r for r in computed if r["route"] == route), key=lambda r: r["variant"])
        if not sel:
            continue
        fig.add_trace(go.Scatter(x=[a0.show(r[a0.column]) for r in sel], y=[fn(r[column]) for r in sel],
                                 mode="lines+markers", name=esc(route),
                                 line=dict(color=ROUTE_COLOURS[k % len(ROUTE_COLOURS)]),
                                 hovertext=[_fix_breaks(_hover(axes, r)) for r in sel], hoverinfo="text+y"))
    _layout(fig, esc(title), esc(a0.label), esc(f"{title} [{unit}]"), height=420)
    if a0.log:
        fig.update_xaxes(type="log")
    return fig


def pareto_front(points, lower_is_better: bool):
    """Indices of the points (metric, margin) no other point beats in both (lower or higher metric as
    asked, larger margin), sorted by metric from best."""
    sign = 1.0 if lower_is_better else -1.0
    order = sorted(range(len(points)), key=lambda i: (sign * points[i][0], -points[i][1]))
    front, best_margin = [], -math.inf
    for i in order:
        if points[i][1] > best_margin:
            front.append(i)
            best_margin = points[i][1]
    return front


def tradeoff(axes, rows, routes):
    """Figure and best-variant rows: the figure of merit against the smallest temperature margin."""
    column, label, fn, lower = _metric(rows)
    usable = [r for r in rows if _level(r) <= 1 and r.get(column) is not None
              and r.get("smallest_margin [K]") is not None]
    fig = go.Figure()
    for k, route in enumerate(routes):
        for lvl, symbol in ((0, "circle"), (1, "diamond"), (2, "x")):
            sel = [r for r in rows if r["route"] == route and _level(r) == lvl and r.get(column) is not None
                   and r.get("smallest_margin [K]") is not None]
            if not sel:
                continue
            colour = ROUTE_COLOURS[k % len(ROUTE_COLOURS)] if lvl < 2 else "#b9b4aa"
            fig.add_trace(go.Scatter(x=[r["smallest_margin [K]"] for r in sel], y=[fn(r[column]) for r in sel],
                                     mode="markers", marker=dict(color=colour, symbol=symbol, size=8, opacity=0.85),
                                     name=esc(f"{route}: {LEVELS[lvl]}"),
                                     hovertext=[_fix_breaks(_hover(axes, r)) for r in sel], hoverinfo="text+x+y"))
    front = pareto_front([(r[column], r["smallest_margin [K]"]) for r in usable], lower)
    best = [usable[i] for i in front]
    on_front = {id(r) for r in best}
    sign = 1.0 if lower else -1.0
    rest = sorted((r for r in usable if id(r) not in on_front), key=lambda r: (sign * r[column], r["variant"]))
    listed = [(r, True) for r in best[:BEST_LISTED]] + [(r, False) for r in rest[:max(0, BEST_LISTED - len(best))]]
    if best:
        fig.add_trace(go.Scatter(x=[r["smallest_margin [K]"] for r in best], y=[fn(r[column]) for r in best],
                                 mode="lines", line=dict(color="#1b263b", width=2, dash="dot", shape="hv"),
                                 name="trade-off front (feasible)", hoverinfo="skip"))
    _layout(fig, esc(f"Trade-off: {label.split(' [')[0]} against the smallest temperature margin"),
            "smallest temperature margin [K]", esc(label), height=520)
    return fig, listed, (column, label, fn)


def _best_table(axes, best, metric) -> str:
    column, label, fn = metric
    if not best:
        return "<p class=note>No feasible variant with both figures: no front to list.</p>"
    head = ("<tr><th>variant</th><th class=t>on the front</th><th class=t>route</th>" + "".join(f"<th>{esc(a.label)}</th>" for a in axes)
            + f"<th class=t>verdict</th><th>{esc(label)}</th><th>smallest margin [K]</th><th class=t>at</th></tr>")
    body = []
    for r, front in best:
        lvl = _level(r)
        v = fn(r[column])
        body.append(f"<tr><td>{r['variant']}</td><td class=t>{'yes' if front else 'no'}</td>"
                    f"<td class=t>{esc(r['route'])}</td>"
                    + "".join(f"<td>{esc(a.text(r.get(a.column)))}</td>" for a in axes)
                    + f"<td class=t><span class='badge l{lvl}'>{esc(r['verdict'])}</span></td><td>{v:.4g}</td>"
                    f"<td>{r['smallest_margin [K]']:.3g}</td><td class=t>{esc(r.get('smallest_margin_rule') or '')}"
                    f" ({esc(r.get('smallest_margin_step') or '')})</td></tr>")
    return f"<table>{head}{''.join(body)}</table>"


def _summary(rows, routes, count) -> str:
    out = ["<table><tr><th class=t>route</th>" + "".join(f"<th>{esc(w)}</th>" for w in LEVELS)
           + f"<th>{MISSING}</th></tr>"]
    for route in routes:
        sel = [r for r in rows if r["route"] == route]
        n = [sum(1 for r in sel if _level(r) == i) for i in range(4)]
        out.append(f"<tr><td class=t>{esc(route)}</td>" + "".join(f"<td>{k}</td>" for k in n)
                   + f"<td>{count - len(sel)}</td></tr>")
    return "".join(out) + "</table>"


def _failures(rows) -> str:
    failed = [r for r in rows if r.get("error")]
    if not failed:
        return ""
    items = "".join(f"<li>variant {r['variant']} ({esc(r['route'])}): {esc(r['error'])}</li>" for r in failed[:50])
    more = f"<p class=note>... and {len(failed) - 50} more (see the table).</p>" if len(failed) > 50 else ""
    return (f"<details><summary>{len(failed)} route evaluation(s) not computed - their errors</summary>"
            f"<ul class=reasons>{items}</ul>{more}</details>")


def build_sweep_report(scenario, spec, columns, rows, *, generated: str | None = None) -> str:
    """The whole HTML page of a sweep as text.

    Parameters
    ----------
    scenario : Scenario
        The swept scenario (name, description, fluid, model, source file and hash are shown).
    spec : SweepSpec
        Its sweep (axes in order; routes).
    columns : list of str
        Columns of the tidy table; the first ``len(spec.axes)`` after ``variant`` are the settings.
    rows : list of dict
        The tidy table (one row per variant and route).
    generated : str, optional
        Time stamp shown (default: now, UTC).
    """
    system = getattr(scenario, "display_units", "engineering") or "engineering"
    generated = generated or datetime.now(timezone.utc).strftime("%Y-%m-%d %H:%M UTC")
    axes = [_Axis(ax, col, system) for ax, col in zip(spec.axes, columns[1:1 + len(spec.axes)])]
    routes = list(spec.routes) or list(dict.fromkeys(r["route"] for r in rows))
    grid2 = spec.combine == "grid" and len(axes) >= 2
    figs = []
    if grid2:
        for route in routes:
            figs.append((f"fig-map-{len(figs)}", feasibility_map(axes, rows, route, True)))
    else:
        figs.append(("fig-map-0", feasibility_strip(axes, rows, routes)))
    n_maps = len(figs)
    for column, title, unit, fn in FIGURE_ROWS:
        fig = key_figure(axes, rows, routes, column, title, unit, fn, grid2, system)
        if fig is not None:
            figs.append((f"fig-key-{len(figs)}", fig))
    n_keys = len(figs)
    trade, best, metric = tradeoff(axes, rows, routes)
    figs.append(("fig-trade", trade))
    comps = ", ".join(f"{esc(k)} {v:g}" for k, v in scenario.fluid.components.items())
    settings = "".join(f"<li>{esc(a.label)}: {esc(a.ax.written)} ({len(a.ax.values)} values)"
                       + (f"; moved together: {esc(', '.join(a.ax.targets))}" if len(a.ax.targets) > 1 else "")
                       + "</li>" for a in axes)
    parts = [f"<!DOCTYPE html><html lang=en><head><meta charset=utf-8><title>supercrit sweep - {esc(scenario.name)}"
             f"</title><meta name=viewport content='width=device-width, initial-scale=1'><style>{CSS}</style>"
             f"<script>{get_plotlyjs()}</script></head><body>"]
    parts.append(f"<header><h1>Design-space sweep: {esc(scenario.name)}</h1><div class=meta>"
                 f"{esc(scenario.description)}<br>fluid {comps} (mole fractions) &middot; model "
                 f"{esc(scenario.fluid.model)} &middot; {spec.count} variants ({esc(spec.combine)}) x {len(routes)} "
                 f"route(s) &middot; generated {esc(generated)} &middot; supercrit {esc(__version__)} &middot; input "
                 f"{esc(getattr(scenario, 'source_file', ''))} sha256 {esc(getattr(scenario, 'source_hash', ''))}"
                 f"</div></header><main>")
    parts.append("<section class=caution id=read-first><h2>Read this first</h2><ul>"
                 + "".join(f"<li>{esc(c)}</li>" for c in CAUTIONS) + "</ul></section>")
    parts.append(f"<section id=settings><h2>What was swept</h2><ul>{settings}</ul>{_summary(rows, routes, spec.count)}"
                 f"{_failures(rows)}</section>")
    extra = (" With more than two settings each cell shows the worst verdict over the other settings." if
             grid2 and len(axes) > 2 else "")
    parts.append("<section id=feasibility><h2>Feasibility map</h2><p class=note>Verdict of every variant "
                 f"(hover for its settings and the deciding reason); grey cells could not be computed, empty cells "
                 f"are not run yet.{extra}</p>"
                 + "".join(f"<div id={fid} class=fig></div>" for fid, _ in figs[:n_maps]) + "</section>")
    parts.append("<section id=key-figures><h2>Key figures</h2><p class=note>Drawn for every computed variant, "
                 "infeasible ones included: read them together with the feasibility map.</p>"
                 + "".join(f"<div id={fid} class=fig></div>" for fid, _ in figs[n_maps:n_keys]) + "</section>")
    parts.append("<section id=trade-off><h2>Trade-off front</h2><p class=note>Each computed variant: figure of merit "
                 "against its smallest temperature margin (dew-point superheat, subcooling, approach, ...). The "
                 "dotted line joins the feasible variants that no other feasible variant beats in both; they are "
                 f"listed below, then the next best feasible variants by the figure of merit (up to {BEST_LISTED}).</p><div id=fig-trade class=fig></div>"
                 f"<h3>Best variants</h3>{_best_table(axes, best, metric)}</section>")
    parts.append("</main><footer>Pressures are absolute. Settings not swept are those of the scenario file. Produced "
                 "by supercrit; the page loads nothing from the network.</footer>")
    script = "".join(f"(function(){{var f={_json(fig)};Plotly.newPlot('{fid}',f.data,f.layout,"
                     f"{{responsive:true,displaylogo:false}});}})();" for fid, fig in figs)
    parts.append(f"<script>{script}</script></body></html>")
    return "".join(parts)


__all__ = ["build_sweep_report", "feasibility_map", "pareto_front"]
