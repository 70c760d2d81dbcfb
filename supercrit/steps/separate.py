"""Separator: adiabatic flash drum at p_in - dp; vapour and liquid outlets.

Two-phase feed: the vapour outlet carries n q of composition y, the liquid n (1 - q) of composition
x (molar vapour fraction q). Single-phase feed: all of it leaves by the liquid outlet if it is
liquid, else by the vapour outlet (gas or supercritical; noted), the other outlet carrying no flow.
A feed holding solid CO2 is refused (no solid outlet).
"""
from __future__ import annotations

from ..errors import ModelRangeError
from ..thermo.state import GAS, LIQUID, SUPERCRITICAL, TWO_PHASE
from .base import StepResult, only_inlet, point_path, require_positive_pressure, state_ph, where


def run(spec, inlets, ctx) -> StepResult:
    s_in = only_inlet(inlets)
    p = require_positive_pressure(spec, s_in.p - float(spec.params.get("dp") or 0.0), s_in.p)
    st = state_ph(s_in.fluid, p, s_in.h, s_in.state) if p != s_in.p else s_in.state
    code = int(st.phase_)
    n = s_in.n
    notes = []
    if code == TWO_PHASE:
        q = float(st.vapor_fraction)
        V, L = st.vapor, st.liquid
        vap = ctx.stream(ctx.x_from_state(V), n * q, V)
        liq = ctx.stream(ctx.x_from_state(L), n * (1.0 - q), L)
        extras = {"vapor_fraction": q, "density_ratio": float(L.rho_mass) / float(V.rho_mass)}
    elif code in (GAS, SUPERCRITICAL, LIQUID):
        one = ctx.stream(s_in.x, n, st, s_in.fluid)
        none = one.with_flow(0.0)
        if code == LIQUID:
            vap, liq = none, one
        else:
            vap, liq = one, none
        notes.append(f"the feed is single-phase ({st.phase}) at {p / 1e5:.4g} bar: nothing separates; it leaves by "
                     f"the {'liquid' if code == LIQUID else 'vapor'} outlet")
        extras = {"vapor_fraction": None if code == SUPERCRITICAL else (0.0 if code == LIQUID else 1.0)}
    else:
        raise ModelRangeError(f"{where(spec)}: the separator feed holds solid CO2 ({st.phase}); a flash drum has no "
                              f"solid outlet. Keep the pressure above the triple point (5.18 bar) or heat first.")
    return StepResult(spec.id, spec.kind, {"vapor": vap, "liquid": liq}, (point_path(st),), notes=tuple(notes),
                      extras=extras)
