"""Throttle valve: isenthalpic, h2 = h1 at p_out (or p_in - dp); the path is sampled at
equally spaced pressures along the isenthalp."""
from __future__ import annotations

import numpy as np

from ..errors import InputError
from .base import N_SEGMENTS, StepPath, StepResult, only_inlet, require_positive_pressure, sample_ph, state_ph, where


def run(spec, inlets, ctx) -> StepResult:
    s_in = only_inlet(inlets)
    prm = spec.params
    p_out = float(prm["p_out"]) if prm.get("p_out") is not None else s_in.p - float(prm["dp"])
    require_positive_pressure(spec, p_out, s_in.p)
    if p_out > s_in.p:
        raise InputError(f"a throttle lowers the pressure: outlet {p_out / 1e5:.4g} bar is above the inlet "
                         f"{s_in.p / 1e5:.4g} bar", where(spec))
    h = s_in.h
    out = state_ph(s_in.fluid, p_out, h, s_in.state)
    ps = np.linspace(s_in.p, p_out, N_SEGMENTS + 1)
    path = StepPath("main", "p", ps, sample_ph(s_in.fluid, ps, np.full_like(ps, h), s_in.state, out))
    return StepResult(spec.id, spec.kind, {"out": ctx.stream(s_in.x, s_in.n, out, s_in.fluid)}, (path,),
                      extras={"pressure_drop": s_in.p - p_out, "temperature_change": float(out.T) - s_in.T})
