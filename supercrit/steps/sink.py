"""Sink: the end of a route; takes its inlet stream out of the route."""
from __future__ import annotations

from .base import StepResult, only_inlet, point_path


def run(spec, inlets, ctx) -> StepResult:
    s_in = only_inlet(inlets)
    name = spec.params.get("name")
    return StepResult(spec.id, spec.kind, {}, (point_path(s_in.state),),
                      notes=(f"product: {name}",) if name else (), extras={"received": s_in})
