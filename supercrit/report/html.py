"""One self-contained HTML page per scenario run: plotly.js embedded once, no network needed to open it.

Every text taken from the scenario file is escaped with html.escape; figure JSON is embedded with every
'<' written as \\u003c, so no scenario text can close a script element or start markup.
"""
from __future__ import annotations

from datetime import datetime, timezone

import numpy as np
import plotly.io as pio
from plotly.offline import get_plotlyjs

from .. import __version__
from ..units import format_quantity
from .figures import (ROUTE_COLOURS, Units, comparison_figure, density_spread_figure, esc, ph_diagram, pt_diagram,
                      ts_diagram, _hover)

CAUTIONS = (
    "This is a screening tool, not a design. Results depend on the equation of state chosen and on published "
    "data with their own uncertainties.",
    "Defer to local codes and standards and to licensed engineers before anything is built or operated.",
    "CO2 is an asphyxiant and heavier than air; it collects in low spaces. Depressurised CO2 forms dry ice at "
    "about -78 degC and can block lines; metal colder than its minimum design temperature can fracture.",
    "High-pressure equipment stores energy and can fail violently.",
)

CSS = """
:root{--ink:#1b263b;--paper:#fbfaf7;--line:#e6e2da;--ok:#2d6a4f;--warn:#b7791f;--bad:#9b2226;--none:#6c757d}
*{box-sizing:border-box}body{margin:0;font-family:"Segoe UI",Helvetica,Arial,sans-serif;color:#222;background:#f3f1ec}
header{background:var(--ink);color:#f3f1ec;padding:18px 28px}header h1{margin:0;font-size:22px;font-weight:600}
header .meta{font-size:12.5px;opacity:.85;margin-top:6px;line-height:1.6}main{padding:18px 28px;max-width:1500px}
section{background:var(--paper);border:1px solid var(--line);border-radius:6px;padding:14px 18px;margin:0 0 18px}
h2{font-size:17px;margin:0 0 10px;color:var(--ink)}h3{font-size:15px;margin:14px 0 6px;color:var(--ink)}
.caution{border-left:6px solid var(--bad)}.caution li{margin:3px 0}
.cards{display:flex;flex-wrap:wrap;gap:12px}.card{flex:1 1 330px;border:1px solid var(--line);border-radius:6px;
background:white;padding:10px 12px}.card h3{margin:0 0 4px}.rank{font-size:12px;color:#555}
.badge{display:inline-block;padding:2px 8px;border-radius:10px;color:white;font-size:12px;font-weight:600}
.l0{background:var(--ok)}.l1{background:var(--warn)}.l2{background:var(--bad)}.l3{background:var(--none)}
table{border-collapse:collapse;font-size:12.5px;margin:6px 0 10px;background:white}
th,td{border:1px solid var(--line);padding:3px 7px;text-align:right;white-space:nowrap}
th{background:#efece5;color:var(--ink)}td.t,th.t{text-align:left;white-space:normal}
ul.reasons{margin:6px 0;padding-left:18px;font-size:13px}ul.reasons li.r2,ul.reasons li.r3{color:var(--bad)}
ul.reasons li.r1{color:#8a5a00}details{margin:6px 0}summary{cursor:pointer;color:var(--ink)}
.fig{min-height:420px}.note{font-size:12px;color:#555}footer{font-size:12px;color:#555;padding:0 28px 24px}
"""


def _json(fig) -> str:
    return pio.to_json(fig, validate=False).replace("<", "\\u003c").replace(">", "\\u003e").replace("&", "\\u0026")


def _segments(rr):
    """Per step the sampled path (T, p, h, s, rho arrays), in evaluation order."""
    segs = []
    for sid, res in rr.steps.items():
        for sp in res.paths:
            if len(sp.states) < 2:
                continue
            lab = sid if sp.label in ("main", "") else f"{sid} ({sp.label})"
            T = np.array([float(s.T) for s in sp.states])
            p = np.array([float(s.p) for s in sp.states])
            h = np.array([float(s.h_mass) for s in sp.states])
            s_ = np.array([float(s.s_mass) for s in sp.states])
            rho = np.array([float(s.rho_mass) for s in sp.states])
            segs.append((lab, T, p, h, s_, rho))
    return segs


def _crossing_points(ra, u):
    out = []
    for sa in ra.steps:
        for c in sa.crossings:
            st = c.state
            if st is None:
                continue
            row = {"T": float(st.T), "p": float(st.p), "rho_mass": float(st.rho_mass), "h_mass": float(st.h_mass),
                   "s_mass": float(st.s_mass), "Z": float(st.Z), "phase": str(st.phase)}
            try:
                row["vapor_fraction"] = float(st.vapor_fraction)
            except Exception:  # supercritical: undefined
                row["vapor_fraction"] = None
            hover = f"{esc(sa.step_id)}: {esc(c.kind)} {esc(c.side)}<br>" + _hover(row, u)
            out.append({"T": row["T"], "p": row["p"], "h": row["h_mass"], "s": row["s_mass"], "hover": hover})
    return out


def _fmt(v, kind, system, digits=4):
    if v is None:
        return "-"
    return esc(format_quantity(float(v), kind, system, digits))


def _stream_table(rr, system):
    cols = [("stream", None), ("phase", None), ("T", "temperature"), ("p", "pressure"), ("rho_mass", "density"),
            ("Z", None), ("vapor_fraction", None), ("h_mass", "specific_energy"), ("s_mass", "specific_heat"),
            ("cp_mass", "specific_heat"), ("mass_flow", "mass_flow")]
    head = "".join(f"<th{' class=t' if k in ('stream', 'phase') else ''}>{esc(k.replace('_mass', '').replace('_', ' '))}</th>"
                   for k, _ in cols)
    body = []
    for row in rr.stream_table():
        tds = []
        for k, kind in cols:
            v = row.get(k)
            if k in ("stream", "phase"):
                tds.append(f"<td class=t>{esc(v)}</td>")
            elif k == "Z":
                tds.append(f"<td>{v:.4f}</td>" if v is not None else "<td>-</td>")
            elif k == "vapor_fraction":
                tds.append(f"<td>{v:.3f}</td>" if v is not None else "<td>-</td>")
            else:
                tds.append(f"<td>{_fmt(v, kind, system)}</td>")
        body.append("<tr>" + "".join(tds) + "</tr>")
    return f"<table><tr>{head}</tr>{''.join(body)}</table>"


def _step_table(rr, system):
    rows = []
    for r in rr.step_table():
        eff = "-" if r["efficiency"] is None else f"{r['efficiency']:.3f}"
        rows.append(f"<tr><td class=t>{esc(r['step'])}</td><td class=t>{esc(r['kind'])}</td>"
                    f"<td>{_fmt(r['power'], 'power', system)}</td><td>{_fmt(r['duty'], 'power', system)}</td>"
                    f"<td>{eff}</td><td class=t>{esc(r['notes'])}</td></tr>")
    return ("<table><tr><th class=t>step</th><th class=t>kind</th><th>shaft power in</th><th>heat in</th>"
            "<th>efficiency</th><th class=t>notes</th></tr>" + "".join(rows) + "</table>")


def _reasons(reasons, only_findings=False):
    items = []
    for r in reasons:
        if only_findings and int(r.level) == 0:
            continue
        items.append(f"<li class=r{int(r.level)}>{esc(r.text)}</li>")
    return f"<ul class=reasons>{''.join(items)}</ul>" if items else "<p class=note>No findings.</p>"


def _figures_table(ra, system):
    f = ra.figures
    rows = [("net shaft power in", _fmt(f.get("shaft_power"), "power", system)),
            ("heating duty", _fmt(f.get("heating_duty"), "power", system)),
            ("cooling duty", _fmt(f.get("cooling_duty"), "power", system)),
            ("product flow", _fmt(f.get("product_flow"), "mass_flow", system))]
    se = f.get("specific_energy")
    rows.append(("specific energy", "-" if se is None else f"{se / 3600.0:.2f} kWh/t"))
    if f.get("closed_cycle"):
        rows.append(("net power out", _fmt(f.get("net_power"), "power", system)))
        te = f.get("thermal_efficiency")
        rows.append(("thermal efficiency", "-" if te is None else f"{te * 100:.1f} %"))
    rows.append(("boundary crossings", str(f.get("crossings", 0))))
    for rule, m in f.get("smallest_margins", {}).items():
        kind = m["kind"]
        val = _fmt(m["value"], kind, system) if kind not in (None, "ratio", "fraction") else f"{m['value']:.3g}"
        rows.append((f"smallest {rule} margin", f"{val} ({esc(m['step'])})"))
    return "<table>" + "".join(f"<tr><td class=t>{esc(k)}</td><td>{v}</td></tr>" for k, v in rows) + "</table>"


def build_report(scenario, result, analysis, diagram, spread_rows, *, generated: str | None = None) -> str:
    """The whole HTML page as text."""
    system = getattr(scenario, "display_units", "engineering") or "engineering"
    u = Units(system)
    generated = generated or datetime.now(timezone.utc).strftime("%Y-%m-%d %H:%M UTC")
    by_id = {ra.route_id: ra for ra in analysis.routes}
    routes_fig, comp_rows = [], []
    for i, (rid, rr) in enumerate(result.routes.items()):
        colour = ROUTE_COLOURS[i % len(ROUTE_COLOURS)]
        ra = by_id.get(rid)
        routes_fig.append({"name": rid, "colour": colour, "segments": _segments(rr),
                           "crossings": _crossing_points(ra, u) if ra else []})
        f = ra.figures if ra else {}
        comp_rows.append({"route": rid, "power": f.get("shaft_power", 0.0), "heating": f.get("heating_duty", 0.0),
                          "cooling": f.get("cooling_duty", 0.0)})
    colours = {r["name"]: r["colour"] for r in routes_fig}
    for row in spread_rows:
        row["colour"] = colours.get(row["route"], "#555")
    figs = [("fig-pt", pt_diagram(diagram, routes_fig, u)), ("fig-ph", ph_diagram(diagram, routes_fig, u)),
            ("fig-ts", ts_diagram(diagram, routes_fig, u)), ("fig-rho", density_spread_figure(spread_rows, u)),
            ("fig-compare", comparison_figure(comp_rows, u))]
    comps = ", ".join(f"{esc(k)} {v:g}" for k, v in scenario.fluid.components.items())
    parts = [f"<!DOCTYPE html><html lang=en><head><meta charset=utf-8><title>supercrit - {esc(scenario.name)}</title>"
             f"<meta name=viewport content='width=device-width, initial-scale=1'><style>{CSS}</style>"
             f"<script>{get_plotlyjs()}</script></head><body>"]
    parts.append(f"<header><h1>Route screening: {esc(scenario.name)}</h1><div class=meta>{esc(scenario.description)}<br>"
                 f"fluid {comps} (mole fractions) &middot; model {esc(scenario.fluid.model)} &middot; generated "
                 f"{esc(generated)} &middot; supercrit {esc(__version__)} &middot; input "
                 f"{esc(getattr(scenario, 'source_file', ''))} sha256 {esc(getattr(scenario, 'source_hash', ''))}"
                 f"</div></header><main>")
    parts.append("<section class=caution id=read-first><h2>Read this first</h2><ul>"
                 + "".join(f"<li>{esc(c)}</li>" for c in CAUTIONS) + "</ul></section>")
    cards = []
    for ra in sorted(analysis.routes, key=lambda r: r.rank or 99):
        lvl = int(ra.verdict.level)
        cards.append(f"<div class=card><h3>{esc(ra.route_id)}</h3><div class=rank>rank {ra.rank} of "
                     f"{len(analysis.routes)}</div><span class='badge l{lvl}'>{esc(str(ra.verdict.level))}</span>"
                     f"{_figures_table(ra, system) if ra.figures else ''}"
                     f"{_reasons(ra.verdict.reasons, only_findings=True)}</div>")
    parts.append(f"<section id=at-a-glance><h2>At a glance</h2><div class=cards>{''.join(cards)}</div>"
                 f"<p class=note>Ranking: {esc(analysis.ranking_rule)}.</p></section>")
    note = esc(diagram.note) if diagram.note else ""
    env_note = ("" if len(scenario.fluid.components) == 1 else
                "The phase envelope is that of the feed composition; streams after a separator or mixer have other "
                "compositions and their own envelopes. ")
    parts.append("<section id=where-the-routes-go><h2>Where the routes go</h2>"
                 f"<p class=note>{env_note}Paths are drawn along the states each step sampled (not straight lines "
                 f"between end states); arrows show the direction, crosses mark located boundary crossings "
                 f"(hover for the full state). {note}</p>"
                 "<div id=fig-pt class=fig></div><div id=fig-ph class=fig></div><div id=fig-ts class=fig></div>"
                 "<div id=fig-rho class=fig></div></section>")
    parts.append("<section id=side-by-side><h2>Side by side</h2><div id=fig-compare class=fig></div></section>")
    for rid, rr in result.routes.items():
        ra = by_id.get(rid)
        det = []
        if ra:
            for sa in ra.steps:
                lvl = int(sa.verdict.level)
                det.append(f"<details><summary>{esc(sa.step_id)} ({esc(sa.kind)}) - <span class='badge l{lvl}'>"
                           f"{esc(str(sa.verdict.level))}</span></summary>{_reasons(sa.reasons)}</details>")
        kij = _reasons(ra.kij_checks) if ra and ra.kij_checks else ""
        parts.append(f"<section id=route-{esc(rid)}><h2>Route {esc(rid)}</h2>"
                     f"<p class=note>{esc(scenario.route(rid).description if hasattr(scenario, 'route') else '')}</p>"
                     f"<h3>Steps</h3>{_step_table(rr, system)}<h3>Streams</h3>{_stream_table(rr, system)}"
                     f"<h3>Step by step: crossings and margins</h3>{''.join(det)}"
                     f"{'<h3>Interaction-parameter sensitivity</h3>' + kij if kij else ''}</section>")
    parts.append("</main><footer>Enthalpy and entropy reference: ideal gas at 298.15 K and 101 325 Pa (h = s = 0 for "
                 "each pure component). Pressures are absolute. Produced by supercrit; the page loads nothing from "
                 "the network.</footer>")
    script = "".join(f"(function(){{var f={_json(fig)};Plotly.newPlot('{fid}',f.data,f.layout,"
                     f"{{responsive:true,displaylogo:false}});}})();" for fid, fig in figs)
    parts.append(f"<script>{script}</script></body></html>")
    return "".join(parts)
