"""Mixer: adiabatic; outlet at the lowest pressure of the inlets that carry flow, enthalpy and
component flows conserved (h_out = sum n_i h_i / sum n_i)."""
from __future__ import annotations


from .base import StepResult, point_path, state_ph


def run(spec, inlets, ctx) -> StepResult:
    streams = [inlets[k] for k in sorted(inlets, key=lambda s: int(s[2:]) if s[2:].isdigit() else 0)]
    flowing = [s for s in streams if s.n > 0]
    notes = []
    if not flowing:
        s0 = min(streams, key=lambda s: s.p)
        return StepResult(spec.id, spec.kind, {"out": s0.with_flow(0.0)}, (point_path(s0.state),),
                          notes=("no inlet carries flow",))
    n = sum(s.n for s in flowing)
    comp = sum(s.n * s.x for s in flowing)
    x = comp / n
    h = sum(s.n * s.h for s in flowing) / n
    p = min(s.p for s in flowing)
    p_hi = max(s.p for s in flowing)
    if p_hi > p * 1.0000001:
        notes.append(f"inlets at {p / 1e5:.4g} to {p_hi / 1e5:.4g} bar: the higher-pressure streams are let down to "
                     f"{p / 1e5:.4g} bar (isenthalpic)")
    fluid = ctx.fluid(x)
    T_guess = sum(s.n * s.T for s in flowing) / n
    st = state_ph(fluid, p, h, T_guess)
    return StepResult(spec.id, spec.kind, {"out": ctx.stream(x, n, st, fluid)}, (point_path(st),),
                      notes=tuple(notes), extras={"inlet_pressures": tuple(s.p for s in streams)})
