"""Mixture states for the Fluid facade: (T, p) and (p, h)/(p, s) flashes, envelope, critical point.

Phase labels of single-phase mixture states (the rule used): with the mixture critical point
(T_c, p_c, rho_c) of the feed, a state with T >= T_c and p >= p_c is SUPERCRITICAL; any other
single-phase state is LIQUID if its density exceeds rho_c, else GAS. If the critical point cannot
be found (open envelope), the cubic root type decides (smaller-volume root: LIQUID).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq

from ..errors import ConvergenceError, InputError, ModelRangeError
from .properties import all_properties
from .solvers.critical import critical_point_hk
from .solvers.envelope import Envelope, EnvelopePoint, trace_envelope
from .solvers.flash import FlashResult, flash_Tp, solve_sat_point
from .solvers.result import SolverReport
from .state import GAS, LIQUID, SUPERCRITICAL, TWO_PHASE, State

T_TRIPLE_CO2 = 216.592  # [K] Span & Wagner, J. Phys. Chem. Ref. Data 25 (1996) 1509, Table 34


def _consts(fluid):
    c = fluid._comps
    return (np.array([k.Tc for k in c]), np.array([k.pc for k in c]), np.array([k.omega for k in c]))


def _cache(fluid) -> dict:
    d = fluid.__dict__.setdefault("_mixture_cache", {})
    return d


def lowest_temperature(fluid) -> float:
    """Lower bound of envelope tracing [K]: the CO2 triple point if CO2 is present (solid CO2 below,
    Span & Wagner 1996), else the highest triple point of the components (common practice)."""
    names = fluid.components
    if "CO2" in names and fluid.x[names.index("CO2")] > 0:
        return T_TRIPLE_CO2
    return float(max(k.Tt for k, xi in zip(fluid._comps, fluid.x) if xi > 0))


def mixture_envelope(fluid) -> Envelope:
    """The traced phase envelope of the fluid's composition (cached per Fluid)."""
    cache = _cache(fluid)
    if "envelope" not in cache:
        Tc, pc, w = _consts(fluid)
        present = fluid.x > 0
        if int(present.sum()) == 1:
            raise InputError("the composition has one component present; use a pure Fluid for saturation", "envelope")
        cache["envelope"] = trace_envelope(fluid.model, fluid.x, Tc, pc, w, lowest_temperature(fluid))
    return cache["envelope"]


@dataclass(frozen=True)
class _Crit:
    T: float
    p: float
    rho: float


def _critical(fluid):
    cache = _cache(fluid)
    if "critical" not in cache:
        crit = None
        try:
            env = mixture_envelope(fluid)
            if env.critical is not None:
                try:
                    T, p, rho, _ = critical_point_hk(fluid.model, fluid.x, env.critical.T, env.critical.p)
                    if abs(T - env.critical.T) < 0.5 and abs(p / env.critical.p - 1.0) < 1e-2:
                        crit = _Crit(T, p, rho)
                except ConvergenceError:
                    pass
                if crit is None:
                    k = fluid.model.phase_kernel(env.critical.T)
                    Z = k.ln_phi(fluid.x, env.critical.p)[1]
                    crit = _Crit(env.critical.T, env.critical.p, k.density(fluid.x, Z * k.RT / env.critical.p))
        except ConvergenceError:
            crit = None
        cache["critical"] = crit
    return cache["critical"]


def mixture_critical_point(fluid):
    """CriticalState of the mixture: Heidemann-Khalil, started from (and checked against) the envelope."""
    from .fluid import CriticalState

    c = _critical(fluid)
    if c is None:
        env = mixture_envelope(fluid)
        raise ModelRangeError(f"no vapour-liquid critical point found for {fluid!r}: {env.reason}")
    return CriticalState(T=float(c.T), p=float(c.p), rho_molar=float(c.rho), rho_mass=float(c.rho * fluid.M))


def _label_single(fluid, T, p, r: FlashResult):
    c = _critical(fluid)
    if c is None:
        return LIQUID if r.single == "liq" else GAS
    if T >= c.T and p >= c.p:
        return SUPERCRITICAL
    return LIQUID if r.rho > c.rho else GAS


def flash_points(fluid, T, p):
    """PT flashes of the feed over flattened arrays, each warm-started from the previous split."""
    Tc, pc, w = _consts(fluid)
    out, K0 = [], None
    for Ti, pi in zip(np.ravel(T), np.ravel(p)):
        r = flash_Tp(fluid.model, Ti, pi, fluid.x, Tc, pc, w, K0=K0)
        if r.two_phase:
            K0 = r.K
        out.append(r)
    return out


def _state_from(fluid, results, shape):
    nc = len(fluid.x)
    n = len(results)
    T = np.array([r.T for r in results])
    rho = np.empty(n)
    codes = np.empty(n, dtype=int)
    q = np.zeros(n)
    rl, rv = np.empty(n), np.empty(n)
    xl, xv = np.tile(fluid.x, (n, 1)), np.tile(fluid.x, (n, 1))
    for i, r in enumerate(results):
        if r.two_phase:
            codes[i] = TWO_PHASE
            q[i] = r.beta
            rl[i], rv[i] = r.rho_l, r.rho_v
            xl[i], xv[i] = r.x, r.y
            rho[i] = 1.0 / ((1.0 - r.beta) / r.rho_l + r.beta / r.rho_v)
        else:
            codes[i] = _label_single(fluid, r.T, r.p, r)
            rho[i] = rl[i] = rv[i] = r.rho
    x = np.broadcast_to(fluid.x, shape + (nc,))
    rs = lambda a: a.reshape(shape)  # noqa: E731
    if not np.any(codes == TWO_PHASE):
        return State(fluid.model, fluid.ideal, fluid.M_i, rs(T), rs(rho), x, rs(codes))
    return State(fluid.model, fluid.ideal, fluid.M_i, rs(T), rs(rho), x, rs(codes), rs(q), rs(rl), rs(rv),
                 xl.reshape(shape + (nc,)), xv.reshape(shape + (nc,)))


def mixture_state_Tp(fluid, T, p) -> State:
    """Stable mixture state(s) at T [K], p [Pa] (arrays of equal shape give a batch)."""
    T, p = np.broadcast_arrays(np.asarray(T, dtype=float), np.asarray(p, dtype=float))
    if T.ndim == 0:
        # one state has no warm start, so its flash is a function of (T, p) alone: kept per Fluid
        # (path steps and Newton iterations on h(T) revisit the same states)
        memo = _cache(fluid).setdefault("Tp", {})
        key = (float(T), float(p))
        r = memo.get(key)
        if r is None:
            if len(memo) >= 4096:
                memo.clear()
            r = memo[key] = flash_points(fluid, T, p)[0]
        return _state_from(fluid, [r], T.shape)
    return _state_from(fluid, flash_points(fluid, T, p), T.shape)


def _prop(fluid, r: FlashResult, key):
    if not r.two_phase:
        return float(all_properties(fluid.model, fluid.ideal, fluid.M_i, r.T, r.rho, fluid.x)[key])
    L = all_properties(fluid.model, fluid.ideal, fluid.M_i, r.T, r.rho_l, r.x)[key]
    V = all_properties(fluid.model, fluid.ideal, fluid.M_i, r.T, r.rho_v, r.y)[key]
    return float((1.0 - r.beta) * L + r.beta * V)


def flash_p_prop_mixture(fluid, p, target, key, T_guess=300.0, K0=None, xtol=1e-9):
    """(p, h) or (p, s) flash of the feed: bracketed 1-D solve on T around the stability-checked PT flash.

    Parameters
    ----------
    p : float [Pa]; target : float [J mol-1] or [J mol-1 K-1]; key : 'h' or 's'.

    Returns
    -------
    FlashResult at the solved temperature.

    Raises
    ------
    ModelRangeError
        No temperature within the data's range gives the target.
    """
    Tc, pc, w = _consts(fluid)
    lo_lim, hi_lim = fluid._T_limits()
    memo = {"K": K0}

    def f(T):
        if T in memo:  # one answer per temperature, whatever warm start a later call would have
            return _prop(fluid, memo[T], key) - target
        r = flash_Tp(fluid.model, T, p, fluid.x, Tc, pc, w, K0=memo["K"])
        if r.two_phase:
            memo["K"] = r.K
        memo[T] = r
        return _prop(fluid, r, key) - target

    T0 = min(max(T_guess, lo_lim + 1e-6), hi_lim - 1e-6)
    f0 = f(T0)
    if f0 == 0.0:
        return memo[T0]
    step = 5.0 if f0 < 0 else -5.0
    a, fa = T0, f0
    for _ in range(60):
        b = min(max(a + step, lo_lim), hi_lim)
        fb = f(b)
        if np.sign(fb) != np.sign(fa) or fb == 0.0:
            break
        if b in (lo_lim, hi_lim):
            raise ModelRangeError(f"(p = {p / 1e5:.4f} bar, {key} = {target:.6g}): no temperature between "
                                  f"{lo_lim:.2f} and {hi_lim:.2f} K gives this {key} for {fluid!r}")
        a, fa = b, fb
        step *= 2.0
    try:
        Ts = brentq(f, min(a, b), max(a, b), xtol=xtol, rtol=1e-15, maxiter=200)
    except (ValueError, RuntimeError) as exc:
        raise ConvergenceError(f"(p = {p / 1e5:.4f} bar, {key} = {target:.6g}) flash of {fluid!r} did not converge: "
                               f"{exc}", SolverReport(False, 200, float("nan"), "Brent on T around the PT flash")) from None
    r = memo.get(Ts)
    if r is None:
        f(Ts)
        r = memo[Ts]
    return r


def mixture_state_p_prop(fluid, p, target, key, T_guess=300.0, K0=None) -> State:
    """Mixture state(s) from (p [Pa], h [J mol-1]) or (p, s [J mol-1 K-1]); batches loop with warm starts
    (the first element from ``T_guess`` [K] and K-values ``K0``, e.g. a neighbouring two-phase state's)."""
    p, target = np.broadcast_arrays(np.asarray(p, dtype=float), np.asarray(target, dtype=float))
    out, Tg = [], float(T_guess)
    for pi, ti in zip(p.ravel(), target.ravel()):
        r = flash_p_prop_mixture(fluid, float(pi), float(ti), key, T_guess=Tg, K0=K0)
        Tg = r.T
        K0 = r.K if r.two_phase else K0
        out.append(r)
    return _state_from(fluid, out, p.shape)


# ---------------------------------------------------------------------------------------------
def _span(a):
    return f"{np.min(a):.6g} to {np.max(a):.6g}" if a.size else "nothing (branch not traced)"


@dataclass(frozen=True)
class SaturationPoint:
    """A bubble or dew point: T [K], p [Pa], liquid and vapor States (with ``composition``)."""

    T: float
    p: float
    liquid: State
    vapor: State
    kind: str
    report: SolverReport


def saturation_point(fluid, kind, T=None, p=None) -> SaturationPoint:
    """Bubble ('bubble') or dew ('dew') point of the feed at T [K] or p [Pa].

    Started from the traced envelope (interpolated on the requested branch), then Newton in
    (ln K, ln T, ln p) to max residual 1e-12. At a temperature with two dew points (retrograde
    region) the lower-pressure one is returned; at a pressure with two, the first along the curve.

    Raises
    ------
    ModelRangeError
        The branch does not reach this T or p (e.g. above the cricondentherm or cricondenbar).
    """
    if (T is None) == (p is None):
        raise InputError(f"give either T or p for the {kind} point", f"{kind}_point")
    env = mixture_envelope(fluid)
    nc = len(fluid.x)
    spec = nc if T is not None else nc + 1
    val = float(np.log(T if T is not None else p))
    want = "bubble" if kind == "bubble" else "dew"
    Xs = np.column_stack([env.lnK, np.log(env.T), np.log(env.p)])
    def bracket(branch_name, flip):
        out = []
        for i in range(len(Xs) - 1):
            if env.branch[i] != branch_name and env.branch[i + 1] != branch_name:
                continue
            a, b = Xs[i, spec], Xs[i + 1, spec]
            if (a - val) * (b - val) <= 0 and a != b:
                X = Xs[i] + (val - a) / (b - a) * (Xs[i + 1] - Xs[i])
                if flip:
                    X = X.copy()
                    X[:nc] = -X[:nc]
                out.append(X)
        return out

    cands = bracket(want, False)
    if not cands and not env.closed:
        # the branch was not traced (open envelope, e.g. a near-pure feed): start from the other branch
        cands = bracket("dew" if want == "bubble" else "bubble", True)
    if not cands:
        rng = env.T if T is not None else env.p
        what = f"T = {T:.3f} K" if T is not None else f"p = {p / 1e5:.4f} bar"
        raise ModelRangeError(f"{fluid!r} has no {kind} point at {what}: the traced {kind} branch spans "
                              f"{'T' if T is not None else 'p'} = {_span(rng[env.branch == want])} "
                              f"({'K' if T is not None else 'Pa'}).")
    if T is not None and want == "dew":
        cands.sort(key=lambda X: X[nc + 1])
    X0 = cands[0]
    fr, wr = ("liq", "vap") if want == "bubble" else ("vap", "liq")
    X, x, y, rx, ry, it = solve_sat_point(fluid.model, fluid.x, X0, spec, val, False, fr, wr, max_iter=40)
    Ts, ps = float(np.exp(X[nc])), float(np.exp(X[nc + 1]))
    # y is the feed, x the incipient phase
    feed, inc, rf, ri = y, x, ry, rx
    liq = (feed, rf) if want == "bubble" else (inc, ri)
    vap = (inc, ri) if want == "bubble" else (feed, rf)
    mk = lambda xx, rr, code: State(fluid.model, fluid.ideal, fluid.M_i, np.asarray(Ts), np.asarray(rr),  # noqa: E731
                                    np.asarray(xx), np.asarray(code))
    return SaturationPoint(Ts, ps, mk(liq[0], liq[1], LIQUID), mk(vap[0], vap[1], GAS), kind,
                           SolverReport(True, it, 0.0, "Newton (ln K, ln T, ln p) from the traced envelope"))


@dataclass(frozen=True)
class EnvelopeCurve:
    """Phase envelope for plotting: T [K], p [Pa], branch ('bubble'/'dew') ordered along the curve;
    critical, cricondenbar, cricondentherm (objects with T, p); closed (bool) and reason (str)."""

    T: np.ndarray
    p: np.ndarray
    branch: np.ndarray
    critical: object
    cricondenbar: object
    cricondentherm: object
    closed: bool
    reason: str


def envelope_curve(fluid) -> EnvelopeCurve:
    """The envelope of the feed (mixture: traced; pure fluid: the saturation curve to the critical point)."""
    if fluid.is_pure:
        from .solvers.saturation import saturation_pressure

        c = fluid.model.critical_point()
        comp = fluid._comps[0]
        T = np.concatenate([np.linspace(comp.Tt, c.T, 200, endpoint=False)])
        sat = saturation_pressure(fluid.model, T, c, fluid.x)
        Tall = np.append(T, c.T)
        pall = np.append(np.asarray(sat.p), c.p)
        cp = EnvelopePoint(float(c.T), float(c.p))
        return EnvelopeCurve(Tall, pall, np.array(["bubble"] * len(Tall)), cp, cp, cp, True,
                             "pure fluid: saturation curve from the triple point to the critical point")
    env = mixture_envelope(fluid)
    c = _critical(fluid)
    crit = EnvelopePoint(c.T, c.p) if c is not None else None
    return EnvelopeCurve(env.T, env.p, env.branch, crit, env.cricondenbar, env.cricondentherm, env.closed,
                         env.reason)
