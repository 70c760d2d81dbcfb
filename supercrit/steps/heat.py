"""Heater and cooler: to an outlet temperature, by a duty, or to a vapour fraction; pressure drop dp.

Outlet pressure p_in - dp. ``duty`` of a heat step is heat added, of a cool step heat removed (both
written > 0); the result's ``duty`` is signed, positive into the fluid. To a vapour fraction q
(molar): pure fluids h = (1 - q) h_L + q h_V at the saturation temperature of p_out; mixtures: the
bubble (q = 0) or dew (q = 1) point, or a 1-D solve on h between them. The path is sampled on
>= 20 equal duty segments with the pressure drop spread in proportion to the duty.
"""
from __future__ import annotations

import numpy as np
from scipy.optimize import brentq

from ..errors import InputError, ModelRangeError
from .base import N_SEGMENTS, StepPath, StepResult, only_inlet, require_positive_pressure, sample_ph, state_ph, where


def state_at_vapor_fraction(fluid, p: float, q: float, spec=None):
    """State of ``fluid`` at p [Pa] with molar vapour fraction q [-]."""
    try:
        if fluid.is_pure:
            sat = fluid.saturation(p=p)
            h = (1.0 - q) * float(sat.liquid.h) + q * float(sat.vapor.h)
            return fluid.state(p=p, h=h)
        bub = fluid.bubble_point(p=p)
        dew = fluid.dew_point(p=p)
    except ModelRangeError as exc:
        raise ModelRangeError(f"{where(spec) if spec else ''}: no vapour fraction {q:g} at p = {p / 1e5:.4g} bar "
                              f"({exc}). Above the critical pressure (or cricondenbar) the fluid does not boil; "
                              f"give T_out or duty instead.") from None
    h_b = float(fluid.state(T=float(bub.T), p=p).h)
    h_d = float(fluid.state(T=float(dew.T), p=p).h)
    if q <= 0.0:
        return fluid.state(T=float(bub.T), p=p)
    if q >= 1.0:
        return fluid.state(T=float(dew.T), p=p)

    def f(h):
        st = fluid.state(p=p, h=h)
        return float(st.vapor_fraction) - q

    h = brentq(f, h_b, h_d, xtol=1e-9, rtol=1e-13)
    return fluid.state(p=p, h=h)


def run(spec, inlets, ctx) -> StepResult:
    s_in = only_inlet(inlets)
    prm = spec.params
    dp = float(prm.get("dp") or 0.0)
    p_out = require_positive_pressure(spec, s_in.p - dp, s_in.p)
    fluid, n = s_in.fluid, s_in.n
    sign = 1.0 if spec.kind == "heat" else -1.0
    notes = []
    if prm.get("T_out") is not None:
        out = fluid.state(T=float(prm["T_out"]), p=p_out)
    elif prm.get("duty") is not None:
        if n <= 0:
            raise InputError("a duty is given but the stream carries no flow", where(spec))
        out = state_ph(fluid, p_out, s_in.h + sign * float(prm["duty"]) / n, s_in.state)
    else:
        out = state_at_vapor_fraction(fluid, p_out, float(prm["vapor_fraction"]), spec)
    duty = n * (float(out.h) - s_in.h)
    if duty * sign < 0:
        notes.append(f"a {spec.kind} step that {'removes' if spec.kind == 'heat' else 'adds'} heat "
                     f"({duty / 1e3:.4g} kW into the fluid)")
    hs = np.linspace(s_in.h, float(out.h), N_SEGMENTS + 1)
    ps = np.linspace(s_in.p, p_out, N_SEGMENTS + 1)
    path = StepPath("main", "duty_fraction", np.linspace(0.0, 1.0, N_SEGMENTS + 1),
                    sample_ph(fluid, ps, hs, s_in.state, out))
    return StepResult(spec.id, spec.kind, {"out": ctx.stream(s_in.x, n, out, fluid)}, (path,), duty=duty,
                      notes=tuple(notes))
