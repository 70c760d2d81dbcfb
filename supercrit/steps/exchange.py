"""Two-stream heat exchanger (recuperator), counter-current.

One of hot_T_out, cold_T_out or duty (heat passed from the hot to the cold side) fixes the duty Q;
the other side's outlet follows from its energy balance: h_cold,out = h_cold,in + Q/n_cold. Pressure
drops dp_hot, dp_cold are spread in proportion to the duty. The internal temperature approach
T_hot - T_cold is evaluated on >= 20 equal duty segments in counter-current arrangement (the hot
inlet meets the cold outlet), not only at the ends; its minimum, and where it occurs, are reported
(a negative value is a temperature cross: the exchanger as specified cannot work). Net duty of the
step is zero; Q is in ``extras['duty_transferred']``.
"""
from __future__ import annotations

import numpy as np

from ..errors import InputError
from .base import N_SEGMENTS, StepPath, StepResult, require_positive_pressure, sample_ph, state_ph, where


def run(spec, inlets, ctx) -> StepResult:
    hot, cold = inlets["hot"], inlets["cold"]
    prm = spec.params
    ph_out = require_positive_pressure(spec, hot.p - float(prm.get("dp_hot") or 0.0), hot.p)
    pc_out = require_positive_pressure(spec, cold.p - float(prm.get("dp_cold") or 0.0), cold.p)
    notes = []
    if hot.n <= 0 or cold.n <= 0:
        Q = 0.0
        notes.append("one side carries no flow: no heat passes")
    elif prm.get("hot_T_out") is not None:
        Q = hot.n * (hot.h - float(hot.fluid.state(T=float(prm["hot_T_out"]), p=ph_out).h))
    elif prm.get("cold_T_out") is not None:
        Q = cold.n * (float(cold.fluid.state(T=float(prm["cold_T_out"]), p=pc_out).h) - cold.h)
    else:
        Q = float(prm["duty"])
    if Q < 0:
        raise InputError(f"the specification makes heat flow from the cold to the hot side (Q = {Q / 1e3:.4g} kW); "
                         f"swap hot and cold, or change the outlet temperature", where(spec))
    h_hot_out = hot.h - Q / hot.n if hot.n > 0 else hot.h
    h_cold_out = cold.h + Q / cold.n if cold.n > 0 else cold.h
    hot_out = state_ph(hot.fluid, ph_out, h_hot_out, hot.state)
    cold_out = state_ph(cold.fluid, pc_out, h_cold_out, cold.state)
    f = np.linspace(0.0, 1.0, N_SEGMENTS + 1)  # duty fraction from the hot inlet end
    hh = hot.h + f * (h_hot_out - hot.h)
    ph = hot.p + f * (ph_out - hot.p)
    hot_states = sample_ph(hot.fluid, ph, hh, hot.state, hot_out)
    # cold side at the same position: its outlet at f = 0, its inlet at f = 1
    hc = h_cold_out + f * (cold.h - h_cold_out)
    pc = pc_out + f * (cold.p - pc_out)
    cold_rev = sample_ph(cold.fluid, pc[::-1], hc[::-1], cold.state, cold_out)
    cold_states = tuple(reversed(cold_rev))
    dT = np.array([float(a.T) - float(b.T) for a, b in zip(hot_states, cold_states)])
    i = int(np.argmin(dT))
    if dT[i] < 0:
        notes.append(f"temperature cross: the hot side is {-dT[i]:.3g} K colder than the cold side at "
                     f"{f[i]:.0%} of the duty")
    paths = (StepPath("hot", "duty_fraction", f, hot_states), StepPath("cold", "duty_fraction", f, cold_states))
    outs = {"hot": ctx.stream(hot.x, hot.n, hot_out, hot.fluid), "cold": ctx.stream(cold.x, cold.n, cold_out,
                                                                                       cold.fluid)}
    return StepResult(spec.id, spec.kind, outs, paths, duty=0.0, notes=tuple(notes),
                      extras={"duty_transferred": Q, "min_approach_T": float(dT[i]),
                              "min_approach_at_duty_fraction": float(f[i]),
                              "approach_T": tuple(float(v) for v in dT)})
