"""Compressor: isentropic or polytropic efficiency, optional stages with intercooling.

Isentropic efficiency (per stage): h2 = h1 + (h2s - h1)/eta, h2s = h(p2, s1).
Polytropic efficiency (per stage): the path dh = v dp / eta_p is integrated in ln p (4th-order Runge-Kutta,
>= 4 steps per stage, |d ln p| <= 0.1); the outlet is the path's end; the path is sampled at 20 equal steps
in ln p (between the integration's nodes on their cubic Hermite interpolant). Multistage: equal pressure ratios chosen so
that, with ``intercool_dp`` lost in each intercooler, the last stage ends at ``p_out``; between
stages the gas is cooled to ``intercool_T`` (if given). Power = n (h_out - h_in) per stage, summed.

The sampled path of a stage follows a constant-efficiency polytropic path. With an isentropic
efficiency, the polytropic efficiency that joins the same end states is found (first guess from the
ideal-gas relation, one correction by the ratio of enthalpy rises of a coarse 4-step first pass, second pass,
with |d ln p| <= 0.25, kept); its value is reported in ``extras['polytropic_efficiency']`` and the path's
last state is the outlet.
References: ASME PTC 10-1997, polytropic head definition (from memory).
"""
from __future__ import annotations

import math

import numpy as np
from scipy.optimize import brentq

from ..errors import InputError
from ..thermo.solvers.flash_near import continue_phase
from .base import N_SEGMENTS, SAMPLE_PATHS, StepPath, StepResult, only_inlet, sample_ph, state_ph, where


def polytropic_path(fluid, st1, p2: float, eta_p: float, expand: bool = False, n_steps: int | None = None,
                    max_step: float = 0.1):
    """States along dh = v dp / eta_p (compression) or dh = eta_p v dp (expansion).

    Integrated in ln p with the classical 4th-order Runge-Kutta method, dh/d(ln p) = f p v, with
    ``n_steps`` steps, or else at least 4 and |d ln p| <= ``max_step`` per step. Returns (pressures [Pa],
    states) at ``N_SEGMENTS`` + 1 pressures equally spaced in ln p (or at the integration nodes when there
    are at least that many, or when ``n_steps`` is given); the last state is the integrated end. Between
    the nodes h is the cubic Hermite interpolant in ln p of the nodes' h and slopes (fourth-order, like the
    integration), and each sampled state is a full (p, h) flash. The three slope evaluations inside a step
    continue the phase of the step's start (no stability check), and a step whose end state has another
    phase than its start is repeated with full flashes throughout."""
    p1 = float(st1.p)
    lr = math.log(p2 / p1)
    n = n_steps or max(4, int(math.ceil(abs(lr) / max_step)))
    ps = p1 * np.exp(np.linspace(0.0, lr, n + 1))
    d = lr / n
    f = eta_p if expand else 1.0 / eta_p
    states = [st1]
    st = st1

    def rate(state):
        return f * float(state.p) / float(state.rho_molar)

    def fast_step(st, pa, pm, pb, ha, k1):
        # slopes inside the step on the phase of its start (no stability check); None where Newton fails
        T0, r0 = float(st.T), float(st.rho_molar)
        a = continue_phase(fluid, pm, ha + 0.5 * d * k1, "h", T0, r0)
        if a is None:
            return None
        k2 = f * pm / a[1]
        b = continue_phase(fluid, pm, ha + 0.5 * d * k2, "h", *a)
        if b is None:
            return None
        k3 = f * pm / b[1]
        c = continue_phase(fluid, pb, ha + d * k3, "h", *b)
        if c is None:
            return None
        k4 = f * pb / c[1]
        return ha + d * (k1 + 2 * k2 + 2 * k3 + k4) / 6.0

    slopes = []
    for k in range(n):
        pa, pb = float(ps[k]), float(ps[k + 1])
        pm = pa * math.exp(0.5 * d)
        ha = float(st.h)
        k1 = rate(st)
        slopes.append(k1)
        start_phase = str(st.phase)
        new = None
        if start_phase in ("gas", "liquid", "supercritical"):
            h_end = fast_step(st, pa, pm, pb, ha, k1)
            if h_end is not None:
                new = state_ph(fluid, pb, h_end, st)
                if str(new.phase) != start_phase:
                    new = None  # the phase changed within the step: repeat it with full flashes
        if new is None:
            s2 = state_ph(fluid, pm, ha + 0.5 * d * k1, st)
            k2 = rate(s2)
            s3 = state_ph(fluid, pm, ha + 0.5 * d * k2, s2)
            k3 = rate(s3)
            s4 = state_ph(fluid, pb, ha + d * k3, s3)
            k4 = rate(s4)
            new = state_ph(fluid, pb, ha + d * (k1 + 2 * k2 + 2 * k3 + k4) / 6.0, s4)
        st = new
        states.append(st)
    if n_steps is not None or n >= N_SEGMENTS:
        return ps, states
    slopes.append(rate(st))
    hs = [float(s.h) for s in states]
    u_nodes = np.linspace(0.0, lr, n + 1)
    u_out = np.linspace(0.0, lr, N_SEGMENTS + 1)
    out = [st1]
    prev = st1
    for j in range(1, N_SEGMENTS):
        u = float(u_out[j])
        k = min(int(u / d), n - 1)
        w = (u - float(u_nodes[k])) / d  # cubic Hermite on [node k, node k+1] in ln p
        w2, w3 = w * w, w * w * w
        h = ((2 * w3 - 3 * w2 + 1) * hs[k] + (w3 - 2 * w2 + w) * d * slopes[k]
             + (-2 * w3 + 3 * w2) * hs[k + 1] + (w3 - w2) * d * slopes[k + 1])
        prev = state_ph(fluid, p1 * math.exp(u), h, prev)
        out.append(prev)
    out.append(states[-1])
    return p1 * np.exp(u_out), out


def _eta_p_guess(st1, st2s, r: float, eta_s: float, expand: bool) -> float:
    """Ideal-gas relation between isentropic and polytropic efficiency (exponent m from T2s/T1)."""
    m = math.log(float(st2s.T) / float(st1.T)) / math.log(r)
    if abs(m) < 1e-9:
        return eta_s
    if not expand:  # r = p2/p1 > 1
        return m * math.log(r) / math.log(1.0 + (r ** m - 1.0) / eta_s)
    # expansion, r = p2/p1 < 1: T2/T1 = 1 - eta_s (1 - r^m) = r^(m eta_p)
    return math.log(1.0 - eta_s * (1.0 - r ** m)) / (m * math.log(r))


def machine_stage(fluid, st1, p2: float, eta_s: float | None = None, eta_p: float | None = None,
                  expand: bool = False, label: str = "main"):
    """One compression or expansion from st1 to p2 [Pa].

    Returns (outlet State, StepPath, polytropic efficiency used, isentropic efficiency used)."""
    h1, s1 = float(st1.h), float(st1.s)
    st2s = fluid.state(p=p2, s=s1, near=st1)
    h2s = float(st2s.h)
    r = p2 / float(st1.p)
    if eta_p is not None:
        ps, states = polytropic_path(fluid, st1, p2, eta_p, expand)
        out = states[-1]
        dh = float(out.h) - h1
        eta_s_used = (h2s - h1) / dh if not expand else dh / (h2s - h1)
        return out, StepPath(label, "p", ps, tuple(states)), eta_p, eta_s_used
    h2 = h1 + (h2s - h1) / eta_s if not expand else h1 - eta_s * (h1 - h2s)
    out = state_ph(fluid, p2, h2, st2s)
    guess = _eta_p_guess(st1, st2s, r, eta_s, expand) if r != 1.0 else eta_s
    if not SAMPLE_PATHS.get():
        # a recycle is still iterating: the outlet above is exact; the path is sampled on the converged pass
        return out, StepPath(label, "p", np.array([float(st1.p), p2]), (st1, out)), guess, eta_s
    # first pass: only its enthalpy rise is used (for the correction), so 4 RK4 steps suffice
    _, coarse = polytropic_path(fluid, st1, p2, guess, expand, n_steps=4)
    dh_path = float(coarse[-1].h) - h1
    if dh_path != 0.0 and (h2 - h1) != 0.0:
        ratio = dh_path / (h2 - h1)
        guess = guess * ratio if not expand else guess / ratio
    # the outlet above is exact; the path only shows the way there, so longer integration steps suffice
    ps, states = polytropic_path(fluid, st1, p2, guess, expand, max_step=0.25)
    states[-1] = out
    return out, StepPath(label, "p", ps, tuple(states)), guess, eta_s


def _stage_ratio(p_in: float, p_out: float, stages: int, dp_ic: float) -> float:
    """Equal stage ratio r with p_{k+1,suction} = r p_k - dp_ic and the last discharge = p_out."""
    if stages == 1:
        return p_out / p_in

    def last(r):
        p = p_in
        for _ in range(stages - 1):
            p = p * r - dp_ic
        return p * r - p_out

    hi = (p_out / p_in) ** (1.0 / stages) * 2.0 + dp_ic / p_in + 2.0
    while last(hi) < 0:
        hi *= 2.0
    return brentq(last, 1.0, hi, xtol=1e-14, rtol=1e-15)


def run(spec, inlets, ctx) -> StepResult:
    s_in = only_inlet(inlets)
    prm = spec.params
    p_in = s_in.p
    p_out = float(prm["p_out"]) if prm.get("p_out") is not None else p_in * float(prm["ratio"])
    if p_out <= p_in:
        raise InputError(f"a compressor raises the pressure: outlet {p_out / 1e5:.4g} bar is not above the inlet "
                         f"{p_in / 1e5:.4g} bar. Use throttle or expand to lower it.", where(spec))
    stages = int(prm.get("stages") or 1)
    T_ic = prm.get("intercool_T")
    dp_ic = float(prm.get("intercool_dp") or 0.0)
    eta_p = prm.get("polytropic_efficiency")
    eta_s = None if eta_p is not None else float(prm.get("efficiency") or 0.75)
    r = _stage_ratio(p_in, p_out, stages, dp_ic)
    fluid, st, n = s_in.fluid, s_in.state, s_in.n
    power = duty = 0.0
    paths, notes, eta_ps, eta_ss, stage_T, stage_r = [], [], [], [], [], []
    p_suc = p_in
    for k in range(stages):
        p_dis = p_suc * r if k < stages - 1 else p_out
        out, path, ep, es = machine_stage(fluid, st, p_dis, eta_s, eta_p, label=f"stage {k + 1}" if stages > 1
                                          else "main")
        power += n * (float(out.h) - float(st.h))
        paths.append(path)
        eta_ps.append(ep)
        eta_ss.append(es)
        stage_T.append(float(out.T))
        stage_r.append(p_dis / p_suc)
        st = out
        if k < stages - 1:
            p_next = p_dis - dp_ic
            if p_next <= 0:
                raise InputError(f"intercool_dp {dp_ic / 1e5:.4g} bar exceeds the stage discharge pressure",
                                 where(spec))
            if T_ic is not None:
                cooled = fluid.state(T=float(T_ic), p=p_next)
            else:
                cooled = state_ph(fluid, p_next, float(st.h), st)
            hs = np.linspace(float(st.h), float(cooled.h), N_SEGMENTS + 1)
            pp = np.linspace(p_dis, p_next, N_SEGMENTS + 1)
            paths.append(StepPath(f"intercooler {k + 1}", "duty_fraction", np.linspace(0, 1, N_SEGMENTS + 1),
                                  sample_ph(fluid, pp, hs, st, cooled)))
            duty += n * (float(cooled.h) - float(st.h))
            st = cooled
            p_suc = p_next
    if stages > 1:
        notes.append(f"{stages} stages, pressure ratio {r:.4g} each (last {stage_r[-1]:.4g})"
                     + (f", intercooled to {float(T_ic):.2f} K" if T_ic is not None else ", no intercooling"))
    if eta_p is not None:
        notes.append("polytropic efficiency given; isentropic efficiency of each stage in extras")
    outlet = ctx.stream(s_in.x, n, st, fluid)
    return StepResult(spec.id, spec.kind, {"out": outlet}, tuple(paths), power=power, duty=duty,
                      efficiency=float(eta_p) if eta_p is not None else eta_s, notes=tuple(notes),
                      extras={"stage_pressure_ratio": tuple(stage_r), "stage_discharge_T": tuple(stage_T),
                              "polytropic_efficiency": tuple(eta_ps), "isentropic_efficiency": tuple(eta_ss)})
