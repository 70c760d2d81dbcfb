"""Splitter: the inlet state on every branch, the flow divided by the given fractions (sum 1)."""
from __future__ import annotations

from .base import StepResult, only_inlet, point_path


def run(spec, inlets, ctx) -> StepResult:
    s_in = only_inlet(inlets)
    fr = dict(spec.params["fractions"])
    total = sum(fr.values())
    outs = {b: s_in.with_flow(s_in.n * f / total) for b, f in fr.items()}
    return StepResult(spec.id, spec.kind, outs, (point_path(s_in.state),), extras={"fractions": fr})
