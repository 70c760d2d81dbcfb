"""Expander or turbine: isentropic efficiency, h2 = h1 - eta (h1 - h2s), h2s = h(p2, s1).

Outlet by p_out or the ratio p_in/p_out. Power = n (h2 - h1) < 0 (work leaves the fluid). The
sampled path is the constant-efficiency polytropic expansion through the same end states.
"""
from __future__ import annotations

from ..errors import InputError
from .base import StepResult, only_inlet, where
from .compress import machine_stage


def run(spec, inlets, ctx) -> StepResult:
    s_in = only_inlet(inlets)
    prm = spec.params
    p_out = float(prm["p_out"]) if prm.get("p_out") is not None else s_in.p / float(prm["ratio"])
    if p_out >= s_in.p:
        raise InputError(f"an expander lowers the pressure: outlet {p_out / 1e5:.4g} bar is not below the inlet "
                         f"{s_in.p / 1e5:.4g} bar", where(spec))
    eta = float(prm["efficiency"])
    out, path, eta_p, _ = machine_stage(s_in.fluid, s_in.state, p_out, eta_s=eta, expand=True)
    power = s_in.n * (float(out.h) - s_in.h)
    return StepResult(spec.id, spec.kind, {"out": ctx.stream(s_in.x, s_in.n, out, s_in.fluid)}, (path,),
                      power=power, efficiency=eta, extras={"polytropic_efficiency": eta_p})
