"""The main job in one call: load a scenario, solve every route, analyse, and write the outputs.

>>> run = run_scenario("scenarios/co2_extraction_loop.yaml")          # doctest: +SKIP
>>> paths = write_outputs(run, "output")                               # doctest: +SKIP

Outputs (written whole or not at all): ``<name>.json`` (verdicts, key figures, streams, steps; the same
bytes for the same input), ``<name>-streams.csv``, ``<name>-steps.csv`` and ``<name>.html`` (the report).
"""
from __future__ import annotations

import csv
import dataclasses
import io
import json
import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from . import __version__
from .analysis.analyze import ScenarioAnalysis, analyze_scenario
from .analysis.diagrams import phase_diagram
from .analysis.model_spread import model_spread
from .errors import ConvergenceError, InputError, ModelRangeError, SupercritError
from .io import sanitize_name, write_atomic
from .scenario import load_scenario
from .steps.solve import ScenarioResult, solve_route


@dataclass
class Run:
    """A scenario run: the scenario, the solved routes, the analysis, and routes that could not be computed."""

    scenario: object
    result: ScenarioResult
    analysis: ScenarioAnalysis
    errors: dict = field(default_factory=dict)


def run_scenario(source, *, model: str | None = None) -> Run:
    """Load (unless given a Scenario), solve every route and analyse them.

    Parameters
    ----------
    source : path, YAML text or Scenario
    model : str, optional
        Override the scenario's equation of state (e.g. ``"peng-robinson"``) for a comparison run.

    Raises
    ------
    InputError (ScenarioError)
        The file is invalid; nothing is computed.

    A route whose recycle or flash does not converge, or that leaves the model's range, is recorded in
    ``errors`` and analysed as "not computed"; the other routes are still computed.
    """
    sc = source if hasattr(source, "routes") and hasattr(source, "fluid") else load_scenario(source)
    if model is not None:
        from .thermo.build import canonical_model_name

        fl = dataclasses.replace(sc.fluid, model=canonical_model_name(model))
        sc = dataclasses.replace(sc, fluid=fl)
    routes, errors = {}, {}
    for rt in sc.routes:
        try:
            routes[rt.id] = solve_route(sc, rt.id)
        except (ConvergenceError, ModelRangeError) as exc:
            errors[rt.id] = f"not computed: {exc}"
    result = ScenarioResult(sc, routes)
    return Run(sc, result, analyze_scenario(sc, result, errors), errors)


def output_value(v):
    """A value as the outputs keep it: floats to 10 significant digits, None for missing or non-finite,
    dicts and lists element by element (the same bytes for the same input)."""
    if v is None:
        return None
    if isinstance(v, (bool, np.bool_)):
        return bool(v)
    if isinstance(v, (int, np.integer)):
        return int(v)
    if isinstance(v, (float, np.floating)):
        v = float(v)
        return None if not math.isfinite(v) else float(f"{v:.10g}")
    if isinstance(v, dict):
        return {str(k): output_value(x) for k, x in v.items()}
    if isinstance(v, (list, tuple)):
        return [output_value(x) for x in v]
    return v


def results_document(run: Run) -> dict:
    """Everything the JSON output holds (SI units; deterministic for the same input)."""
    sc = run.scenario
    routes = []
    for ra in run.analysis.routes:
        rr = run.result.routes.get(ra.route_id)
        routes.append({
            "route": ra.route_id, "rank": ra.rank, "verdict": str(ra.verdict.level),
            "reasons": [{"level": str(r.level), "step": r.step_id, "rule": r.rule, "text": r.text,
                         "margin": output_value(r.margin), "margin_kind": r.margin_kind} for r in ra.verdict.reasons],
            "key_figures": output_value(ra.figures),
            "steps": [{"step": sa.step_id, "kind": sa.kind, "verdict": str(sa.verdict.level),
                       "crossings": [{"kind": c.kind, "side": c.side, "T": output_value(c.T), "p": output_value(c.p),
                                      "before": c.before, "after": c.after} for c in sa.crossings]}
                      for sa in ra.steps],
            "streams": output_value(rr.stream_table()) if rr else [],
            "step_table": output_value(rr.step_table()) if rr else [],
            "recycle_iterations": rr.iterations if rr else None,
            "balance": {"mass": output_value(rr.balance.mass), "energy": output_value(rr.balance.energy)} if rr else None,
            "error": run.errors.get(ra.route_id),
        })
    return {"scenario": sc.name, "description": sc.description, "input_sha256": getattr(sc, "source_hash", ""),
            "supercrit": __version__, "model": sc.fluid.model, "components": output_value(dict(sc.fluid.components)),
            "units": "SI (K, Pa, kg/m3, J/kg, J/kg/K, kg/s, W)", "ranking_rule": run.analysis.ranking_rule,
            "routes": routes}


def _csv(rows, columns) -> str:
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(columns)
    for r in rows:
        w.writerow(["" if r.get(c) is None else (json.dumps(r[c], sort_keys=True) if isinstance(r.get(c), dict)
                                                else r.get(c)) for c in columns])
    return buf.getvalue()


def _spread_rows(run: Run, cache: dict) -> list[dict]:
    sc = run.scenario
    rows = []
    for rid, rr in run.result.routes.items():
        seen, T, p, two, comp = set(), [], [], [], None
        for rec in rr.streams:
            if rec.id in seen:
                continue
            seen.add(rec.id)
            T.append(rec.stream.T)
            p.append(rec.stream.p)
            two.append(str(rec.stream.state.phase) != "gas" and str(rec.stream.state.phase) not in
                       ("liquid", "supercritical"))
            comp = comp or {c: v for c, v in rec.stream.composition.items() if v > 0}
        if not T:
            continue
        order = np.argsort(p)
        T, p, two = np.asarray(T)[order], np.asarray(p)[order], np.asarray(two)[order]
        spread = model_spread(comp, sc.fluid.model, T, p, cache=cache, two_phase=two)
        for mname, entries in spread.items():
            rows.append({"route": rid, "model": mname, "chosen": mname == sc.fluid.model, "p": p.tolist(),
                         "rho": [e.rho_mass for e in entries]})
    return rows


def build_report_html(run: Run, generated: str | None = None) -> str:
    """The HTML report of a run (computes the phase diagram and model spread it draws)."""
    from .report.html import build_report
    from .steps.base import StepContext

    sc = run.scenario
    states = [s for rr in run.result.routes.values() for res in rr.steps.values() for sp in res.paths
              for s in sp.states]
    Ts = [float(s.T) for s in states] or [250.0, 350.0]
    ps = [float(s.p) for s in states] or [1e5, 1e7]
    ctx = StepContext(sc)
    feed_x = ctx.x_of(sc.feeds[0].composition or sc.fluid.components) if sc.feeds else ctx.x_of(sc.fluid.components)
    fluid = ctx.fluid(feed_x)
    diagram = phase_diagram(fluid, (min(Ts), max(Ts)), (min(ps), max(ps)))
    return build_report(sc, run.result, run.analysis, diagram, _spread_rows(run, {}), generated=generated)


def write_outputs(run: Run, out_dir="output", *, report: bool = True) -> dict:
    """Write the JSON, the two CSV tables and (optionally) the HTML report; returns name -> Path.

    File names derive from the scenario name, sanitised (no path separators or traversal); every file is
    written atomically into ``out_dir``.
    """
    out = Path(out_dir)
    base = sanitize_name(run.scenario.name)
    doc = results_document(run)
    paths = {}
    paths["json"] = write_atomic(out / f"{base}.json", json.dumps(doc, indent=1, sort_keys=True) + "\n")
    stream_cols = ["route", "stream", "from", "port", "to", "phase", "T", "p", "rho_mass", "Z", "vapor_fraction",
                   "h_mass", "s_mass", "cp_mass", "mass_flow", "molar_flow", "composition"]
    step_cols = ["route", "step", "kind", "power", "duty", "efficiency", "notes", "mass_balance", "energy_balance"]
    paths["streams_csv"] = write_atomic(out / f"{base}-streams.csv", _csv(run.result.stream_table(), stream_cols))
    paths["steps_csv"] = write_atomic(out / f"{base}-steps.csv", _csv(run.result.step_table(), step_cols))
    if report:
        paths["html"] = write_atomic(out / f"{base}.html", build_report_html(run))
    return paths


__all__ = ["Run", "run_scenario", "write_outputs", "results_document", "build_report_html", "InputError",
           "SupercritError"]
