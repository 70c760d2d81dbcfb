"""Pipeline or well segment: friction, hydrostatics and heat exchange with the surroundings.

Integrated along the length in segments (``segments``, default 20) with Heun's predictor-corrector:

* momentum: dp/dx = -f G^2 / (2 rho D) - rho g dz/dx, plus the acceleration term -G^2 d(1/rho)
  (G = m/A mass flux); Darcy friction factor f from the Colebrook equation (C. F. Colebrook,
  J. Inst. Civ. Eng. 11 (1939) 133, doi:10.1680/ijoti.1939.13150), solved by Newton from Haaland's
  explicit form (S. E. Haaland, J. Fluids Eng. 105 (1983) 89, doi:10.1115/1.3240948); laminar
  f = 64/Re below Re = 2300 (Hagen-Poiseuille; transition Re 2300 common practice);
* energy: n dh = U pi D (T_surr - T) dx - m g dz - m d(u^2/2), the heat over a segment from
  the exact solution of n cp dT/dx = U pi D (T_surr - T) - m g dz/dx at the segment's mean cp
  (exponential approach, NTU = U pi D dx/(n cp); stable for any U; two-phase: trapezoid of the
  local fluxes), so that the step's energy balance
  n (h_out - h_in) + mechanical = duty holds, ``mechanical`` being the rise of potential and kinetic
  energy flow;
* viscosity: :func:`supercrit.thermo.transport.viscosity` (Laesecke & Muzny 2017 for pure CO2,
  Chung et al. 1988 otherwise); two-phase: homogeneous flow with the McAdams et al. mixture
  viscosity 1/mu = x/mu_V + (1 - x)/mu_L, x the mass quality (W. H. McAdams, W. K. Woods,
  L. C. Heroman, Trans. ASME 64 (1942) 193).

``elevation_change`` is outlet minus inlet height: negative down an injection well, where the
hydrostatic head raises the pressure.
"""
from __future__ import annotations

import math

import numpy as np

from ..errors import ModelRangeError, PropertyUndefinedError
from ..thermo.state import TWO_PHASE
from ..thermo.transport import viscosity
from .base import G_STANDARD, N_SEGMENTS, StepPath, StepResult, only_inlet, state_ph, where

RE_LAMINAR = 2300.0  # common practice: upper Reynolds number of laminar pipe flow


def friction_factor(Re: float, rel_roughness: float) -> float:
    """Darcy friction factor [-]: 64/Re (laminar, Re < 2300), else the Colebrook equation
    1/sqrt(f) = -2 log10(eps/(3.7 D) + 2.51/(Re sqrt(f))) solved to 1e-14 in 1/sqrt(f)."""
    if Re <= 0:
        raise ModelRangeError(f"Reynolds number {Re:.4g}: the pipe carries no flow")
    if Re < RE_LAMINAR:
        return 64.0 / Re
    a = rel_roughness / 3.7
    b = 2.51 / Re
    y = -1.8 * math.log10((rel_roughness / 3.7) ** 1.11 + 6.9 / Re)  # Haaland (1983) Eq. 8 as start
    for _ in range(50):
        g = y + 2.0 * math.log10(a + b * y)
        dg = 1.0 + 2.0 * b / ((a + b * y) * math.log(10.0))
        dy = -g / dg
        y += dy
        if abs(dy) < 1e-14 * y:
            break
    return 1.0 / (y * y)


def _viscosity(fluid, st) -> float:
    if int(st.phase_) == TWO_PHASE:
        L, V = st.liquid, st.vapor
        q = float(st.vapor_fraction)
        xm = q * float(V.M) / (q * float(V.M) + (1.0 - q) * float(L.M))
        return 1.0 / (xm / viscosity(fluid, V) + (1.0 - xm) / viscosity(fluid, L))
    return viscosity(fluid, st)


def run(spec, inlets, ctx) -> StepResult:
    s_in = only_inlet(inlets)
    prm = spec.params
    L, D, eps = float(prm["length"]), float(prm["diameter"]), float(prm["roughness"])
    dz_total = float(prm.get("elevation_change") or 0.0)
    U = float(prm.get("U") or 0.0)
    T_s = float(prm["T_surroundings"]) if prm.get("T_surroundings") is not None else None
    nseg = int(prm.get("segments") or N_SEGMENTS)
    fluid, n, m = s_in.fluid, s_in.n, s_in.mass_flow
    A = math.pi * D * D / 4.0
    G = m / A
    dx = L / nseg
    dz = dz_total / nseg
    sin_t = dz_total / L

    def local(st):
        rho = float(st.rho_mass)
        try:
            f = friction_factor(G * D / _viscosity(fluid, st), eps / D) if G > 0 else 0.0
        except PropertyUndefinedError:
            raise ModelRangeError(f"{where(spec)}: the line holds solid CO2 ({st.phase}) at "
                                  f"{float(st.p) / 1e5:.4g} bar; no flow model covers it") from None
        dpdx = -f * G * G / (2.0 * rho * D) - rho * G_STANDARD * sin_t
        qx = U * math.pi * D * (T_s - float(st.T)) if (U and T_s is not None) else 0.0
        try:
            cp = float(st.cp)
        except PropertyUndefinedError:  # two-phase: T follows saturation, no stiff relaxation
            cp = None
        return rho, dpdx, qx, f, cp

    def heat(qa, qb, cpa, cpb, Ta):
        """Heat over a segment [W]. With a single-phase cp: dT/dx = (U pi D (T_surr - T) - m g dz/dx)/(n cp)
        solved exactly over the segment (exponential approach with NTU = U pi D dx/(n cp), mean cp;
        stable for any U); Q = n cp dT + m g dz. Two-phase (no cp): trapezoid of the local fluxes."""
        if not (U and T_s is not None):
            return 0.0
        if cpa is not None and cpb is not None and n > 0:
            ncp = n * 0.5 * (cpa + cpb)
            ua_ = U * math.pi * D
            ntu = ua_ * dx / ncp
            T_eq = T_s - m * G_STANDARD * sin_t / ua_
            return ncp * (T_eq - Ta) * (-math.expm1(-ntu)) + m * G_STANDARD * dz
        return 0.5 * (qa + qb) * dx

    st = s_in.state
    states, xs = [st], [0.0]
    duty = mech = 0.0
    fr_max = 0.0
    for k in range(nseg):
        rho_a, dpdx_a, q_a, fa, cp_a = local(st)
        fr_max = max(fr_max, fa)
        pa, ha, ua = float(st.p), float(st.h), G / rho_a

        def advance(p_new, Qseg, u_new, T_guess):
            dmech = m * G_STANDARD * dz + 0.5 * m * (u_new * u_new - ua * ua)
            h_new = ha + (Qseg - dmech) / n if n > 0 else ha
            if p_new <= 0:
                raise ModelRangeError(f"{where(spec)}: the pressure falls to zero after {(k + 1) * dx:.4g} m of "
                                      f"{L:.4g} m; the line is too long or too narrow for {m:.4g} kg/s")
            return state_ph(fluid, p_new, h_new, T_guess), dmech

        p_pred = pa + dpdx_a * dx
        pred, _ = advance(p_pred, heat(q_a, q_a, cp_a, cp_a, float(st.T)), ua, st)
        rho_b, dpdx_b, q_b, _, cp_b = local(pred)
        Qseg = heat(q_a, q_b, cp_a, cp_b, float(st.T))
        p_new = pa + 0.5 * (dpdx_a + dpdx_b) * dx - G * G * (1.0 / rho_b - 1.0 / rho_a)
        u_b = G / rho_b
        new, dmech = advance(p_new, Qseg, u_b, pred)
        u_new = G / float(new.rho_mass)
        if abs(u_new - u_b) > 1e-9 * max(u_b, 1e-12):
            new, dmech = advance(p_new, Qseg, u_new, new)
        duty += Qseg
        mech += dmech
        st = new
        states.append(st)
        xs.append((k + 1) * dx)
    path = StepPath("main", "length", np.array(xs), tuple(states))
    notes = []
    dp_tot = s_in.p - float(st.p)
    return StepResult(spec.id, spec.kind, {"out": ctx.stream(s_in.x, n, st, fluid)}, (path,), duty=duty,
                      mechanical=mech, notes=tuple(notes),
                      extras={"pressure_drop": dp_tot, "velocity_in": G / float(s_in.state.rho_mass),
                              "velocity_out": G / float(st.rho_mass), "max_friction_factor": fr_max})
