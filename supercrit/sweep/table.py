"""The tidy table of a sweep: one row per variant and route, sorted by variant (then route order).

Columns: ``variant``; one column per swept setting (SI, unit in brackets; settings moved together share
one column, named by the first); ``route``, ``verdict``, the deciding ``reason`` with its ``rule`` and
``step``, and every rule with a finding (``findings``, worst first); the key figures; the smallest temperature margin with its rule and step; the smallest margin of
every rule met in the sweep; ``error``. Written as CSV and JSON (and Parquet when pyarrow is importable),
each whole or not at all. Rows and numbers come only from the results log, so 1 process, N processes and a
Dask cluster give the same bytes.
"""
from __future__ import annotations

import csv
import io
import json

from ..io import write_atomic
from ..units import SYSTEMS
from .evaluate import FIGURES

LEVEL_WORDS = ("feasible", "feasible with warnings", "infeasible", "not computed")


def si_unit(kind: str) -> str:
    """SI unit text of a quantity kind (``-`` for plain numbers and counts)."""
    return SYSTEMS["SI"].get(kind, "-")


def setting_columns(spec) -> list[str]:
    return [f"{ax.name} [{si_unit(ax.kind)}]" for ax in spec.axes]


def margin_rules(records) -> dict[str, str]:
    """Every rule with a numeric margin met in the records -> the SI unit of its margin (sorted by rule)."""
    rules = {}
    for rec in records:
        for rr in rec.get("routes", ()):
            for rule, m in rr.get("margins", {}).items():
                rules.setdefault(rule, si_unit(m.get("kind") or ""))
    return dict(sorted(rules.items()))


def build_table(scenario, records: dict) -> tuple[list[str], list[dict]]:
    """(columns, rows) of the tidy table from the variant records (index -> record)."""
    spec = scenario.sweep
    recs = [records[i] for i in sorted(records)]
    rules = margin_rules(recs)
    cols = (["variant"] + setting_columns(spec) + ["route", "verdict", "reason", "rule", "step", "findings"]
            + [f"{k} [{u}]" for k, u in FIGURES.items()]
            + ["smallest_margin [K]", "smallest_margin_rule", "smallest_margin_step"]
            + [f"margin {rule} [{u}]" for rule, u in rules.items()] + ["error"])
    names = setting_columns(spec)
    order = {rid: i for i, rid in enumerate(spec.routes)}
    rows = []
    for rec in recs:
        base = {"variant": rec["variant"]}
        base.update({n: v for n, v in zip(names, rec["values"])})
        if rec.get("error") or not rec.get("routes"):
            for rid in spec.routes:
                row = dict.fromkeys(cols)
                row.update(base, route=rid, verdict=LEVEL_WORDS[3], error=rec.get("error") or "no result")
                rows.append(row)
            continue
        for rr in sorted(rec["routes"], key=lambda r: order.get(r["route"], len(order))):
            row = dict.fromkeys(cols)
            row.update(base, route=rr["route"], verdict=rr["verdict"], reason=rr["reason"], rule=rr["rule"],
                       step=rr["step"], findings="; ".join(rr.get("findings", ())), error=rr.get("error"))
            for k, u in FIGURES.items():
                row[f"{k} [{u}]"] = rr["figures"].get(k)
            temps = [(m["value"], rule, m["step"]) for rule, m in rr["margins"].items()
                     if m.get("kind") == "temperature_difference" and m.get("value") is not None]
            if temps:
                v, rule, step = min(temps)
                row.update({"smallest_margin [K]": v, "smallest_margin_rule": rule, "smallest_margin_step": step})
            for rule, u in rules.items():
                m = rr["margins"].get(rule)
                row[f"margin {rule} [{u}]"] = m["value"] if m else None
            rows.append(row)
    return cols, rows


def table_csv(cols, rows) -> str:
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(cols)
    for r in rows:
        w.writerow(["" if r[c] is None else r[c] for c in cols])
    return buf.getvalue()


def table_json(scenario, cols, rows) -> str:
    spec = scenario.sweep
    doc = {"scenario": scenario.name, "input_sha256": scenario.source_hash, "model": scenario.fluid.model,
           "units": "SI; each column's unit in brackets",
           "settings": [{"column": c, "targets": list(ax.targets), "kind": ax.kind, "written": ax.written,
                         "values": list(ax.values)} for c, ax in zip(setting_columns(spec), spec.axes)],
           "combine": spec.combine, "routes": list(spec.routes), "variants": spec.count,
           "columns": cols, "rows": rows}
    return json.dumps(doc, indent=1, allow_nan=False) + "\n"


def write_results(outcome, paths: dict, *, report: bool = True) -> dict:
    """Write the table (CSV, JSON, Parquet if possible) and the report; returns name -> Path written."""
    sc = outcome.scenario
    cols, rows = build_table(sc, outcome.records)
    out = {"csv": write_atomic(paths["csv"], table_csv(cols, rows)),
           "json": write_atomic(paths["json"], table_json(sc, cols, rows))}
    try:
        import pyarrow as pa
        import pyarrow.parquet as pq
    except ImportError:
        pa = None
    if pa is not None:
        buf = pa.BufferOutputStream()
        pq.write_table(pa.Table.from_pylist(rows), buf)
        out["parquet"] = write_atomic(paths["parquet"], buf.getvalue().to_pybytes())
    if report:
        from ..report.sweep import build_sweep_report

        out["html"] = write_atomic(paths["html"], build_sweep_report(sc, sc.sweep, cols, rows))
    return out


__all__ = ["build_table", "write_results", "table_csv", "table_json", "si_unit"]
