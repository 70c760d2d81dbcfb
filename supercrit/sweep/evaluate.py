"""One variant of a sweep, evaluated where it runs (this process, a worker process or a Dask worker).

A task carries the scenario file's bytes, not the parsed scenario: each process reads the file once (cached
by its sha256), then builds every variant from it with :func:`dataclasses.replace`. The record returned is
plain JSON-ready data; numbers are kept to 10 significant digits, as in the run outputs, so that the same
variant gives the same record wherever it is computed.
"""
from __future__ import annotations

import dataclasses
import traceback

from ..errors import SupercritError
from ..runner import output_value as num

#: key figures of a route kept per variant: name -> SI unit
FIGURES = {"shaft_power": "W", "heating_duty": "W", "cooling_duty": "W", "product_flow": "kg/s",
           "specific_energy": "J/kg", "thermal_efficiency": "-"}

_BASE: dict = {}  # sha256 -> validated Scenario, per process


def make_task(text: bytes, scenario, name_hint: str, index: int, values) -> dict:
    """The picklable description of one variant: the scenario file's bytes, the name it was read under, the
    variant's index and its values (SI)."""
    return {"text": text, "file": scenario.source_file, "sha": scenario.source_hash, "name_hint": name_hint,
            "index": int(index), "values": [v if isinstance(v, int) else float(v) for v in values]}


def base_scenario(task: dict):
    """The validated scenario of a task, read once per process."""
    sc = _BASE.get(task["sha"])
    if sc is None:
        from ..scenario import load_scenario

        sc = load_scenario(task["text"], name_hint=task["name_hint"])
        sc = dataclasses.replace(sc, source_file=task["file"], source_hash=task["sha"])
        _BASE[task["sha"]] = sc
    return sc


def _route_record(ra, error) -> dict:
    level = int(ra.verdict.level)
    deciding = next((r for r in ra.verdict.reasons if int(r.level) == level), None) if level > 0 else None
    f = ra.figures or {}
    margins = {rule: {"value": num(m["value"]), "kind": m["kind"], "step": m["step"]}
               for rule, m in sorted(f.get("smallest_margins", {}).items())}
    return {"route": ra.route_id, "level": level, "verdict": str(ra.verdict.level),
            "reason": deciding.text if deciding else "", "rule": deciding.rule if deciding else "",
            "step": deciding.step_id if deciding else "",
            "findings": list(dict.fromkeys(r.rule for r in ra.verdict.reasons if int(r.level) > 0)),
            "figures": {k: num(f.get(k)) for k in FIGURES}, "margins": margins, "error": error}


def evaluate_variant(task: dict) -> dict:
    """Evaluate one variant: one :func:`supercrit.runner.run_scenario` of the modified scenario, no report.

    Never raises for a failing variant: the error is recorded (``error`` of the variant, or of a route that
    did not converge) and the sweep goes on.
    """
    from ..runner import run_scenario
    from .variants import Variant, variant_scenario

    rec = {"variant": task["index"], "values": task["values"], "routes": [], "error": None}
    try:
        base = base_scenario(task)
        sc = variant_scenario(base, Variant(task["index"], tuple(task["values"])))
        run = run_scenario(sc)
        order = {r.id: i for i, r in enumerate(sc.routes)}
        for ra in sorted(run.analysis.routes, key=lambda r: order.get(r.route_id, len(order))):
            rec["routes"].append(_route_record(ra, run.errors.get(ra.route_id)))
    except SupercritError as exc:
        rec["error"] = f"{type(exc).__name__}: {exc}"
    except Exception as exc:  # noqa: BLE001 - a variant's failure is recorded, never stops the sweep
        last = traceback.extract_tb(exc.__traceback__)[-1:] or [None]
        at = f" (at {last[0].filename.rsplit('/', 1)[-1]}:{last[0].lineno})" if last[0] else ""
        rec["error"] = f"internal error {type(exc).__name__}: {exc}{at}"
    return rec


__all__ = ["evaluate_variant", "make_task", "FIGURES", "num"]
