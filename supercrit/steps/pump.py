"""Pump: isentropic (hydraulic) efficiency, h2 = h1 + (h2s - h1)/eta, outlet by p_out or a pressure rise dp.

The sampled path is the constant-efficiency polytropic path through the same end states (as for
:mod:`supercrit.steps.compress`); power = n (h2 - h1).
"""
from __future__ import annotations

from ..errors import InputError
from .base import StepResult, only_inlet, where
from .compress import machine_stage


def run(spec, inlets, ctx) -> StepResult:
    s_in = only_inlet(inlets)
    prm = spec.params
    p_out = float(prm["p_out"]) if prm.get("p_out") is not None else s_in.p + float(prm["dp"])
    if p_out <= s_in.p:
        raise InputError(f"a pump raises the pressure: outlet {p_out / 1e5:.4g} bar is not above the inlet "
                         f"{s_in.p / 1e5:.4g} bar", where(spec))
    eta = float(prm.get("efficiency") or 0.75)
    out, path, eta_p, _ = machine_stage(s_in.fluid, s_in.state, p_out, eta_s=eta)
    power = s_in.n * (float(out.h) - s_in.h)
    return StepResult(spec.id, spec.kind, {"out": ctx.stream(s_in.x, s_in.n, out, s_in.fluid)}, (path,),
                      power=power, efficiency=eta, extras={"polytropic_efficiency": eta_p,
                                                           "pressure_rise": p_out - s_in.p})
