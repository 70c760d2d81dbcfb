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

from ..errors import ConvergenceError, InputError, ModelRangeError, SecondLiquidError
from .properties import all_properties
from .solvers.critical import critical_point_hk
from .solvers.envelope import Envelope, EnvelopePoint, trace_envelope
from .solvers.flash import FlashResult, flash_Tp
from .solvers.saturation_point import solve_sat_point
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


_ENVELOPES: dict = {}  # traced envelopes shared by Fluids with the same model, constants, k_ij and feed


def mixture_envelope(fluid) -> Envelope:
    """The traced phase envelope of the fluid's composition (cached per Fluid, and per process for every
    Fluid with the same model, constants, k_ij and feed: routes of one scenario and the variants of a
    sweep share their feed's envelope; tracing is deterministic, so sharing never changes an answer)."""
    cache = _cache(fluid)
    if "envelope" not in cache:
        key = fluid.signature
        env = _ENVELOPES.get(key)
        if env is None:
            Tc, pc, w = _consts(fluid)
            present = fluid.x > 0
            if int(present.sum()) == 1:
                raise InputError("the composition has one component present; use a pure Fluid for saturation",
                                 "envelope")
            env = trace_envelope(fluid.model, fluid.x, Tc, pc, w, lowest_temperature(fluid))
            if len(_ENVELOPES) >= 64:
                _ENVELOPES.clear()
            _ENVELOPES[key] = env
        cache["envelope"] = env
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
            if env.critical is not None and "critical_rho" in env.extra:  # refined by Heidemann-Khalil there
                crit = _Crit(env.critical.T, env.critical.p, env.extra["critical_rho"])
            elif env.critical is not None:
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
        try:
            fb = f(b)
        except SecondLiquidError:
            # the widening step overshot into a liquid-liquid region beyond the answer: step back and
            # shorten; if the region lies right next to a, the answer may be inside it: say so
            if abs(step) < 0.01:
                raise
            step *= 0.25
            continue
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
    miss = _prop(fluid, r, key) - target
    R_T = 8.314462618 * Ts  # [J mol-1] scale of the tolerance (R from CODATA 2018)
    scale = abs(target) + R_T if key == "h" else abs(target) + 8.314462618
    if abs(miss) > 1e-6 * scale:
        # Brent closed on a jump of h(T) (or s(T)): the PT flash changes phase discontinuously there (e.g.
        # a second liquid the vapour-liquid flash does not split off) - no state with this h or s exists
        # in the model's two-phase description; never return the nearest one as if it were the answer
        raise ConvergenceError(
            f"(p = {p / 1e5:.4f} bar, {key} = {target:.6g}): {key} of {fluid!r} jumps at T = {Ts:.3f} K "
            f"(by {miss:+.4g}); the state lies in a region the vapour-liquid flash does not describe "
            f"(three phases, e.g. a second liquid); three-phase equilibrium is not computed",
            SolverReport(False, 200, abs(miss), "Brent on T around the PT flash"))
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


def _curve_nodes(env, nc):
    """The traced envelope as curve nodes: (X, branch) in order, X = (ln K, ln T, ln p) lists, with the
    critical point (ln K = 0, branch 'critical') between the branches where the trace passed it."""
    nodes = [(list(k) + [float(np.log(T)), float(np.log(p))], b)
             for k, T, p, b in zip(env.lnK.tolist(), env.T, env.p, env.branch)]
    if env.critical is not None and env.critical_index is not None and 0 < env.critical_index < len(nodes):
        nodes.insert(env.critical_index, ([0.0] * nc + [float(np.log(env.critical.T)), float(np.log(env.critical.p))],
                                          "critical"))
    n_traced, extremes = env.extra.get("extremum_nodes", (None, ()))
    if n_traced == len(nodes):  # the refined cricondenbar/-therm split the stretches they lie in
        for pos, _, X, br in sorted(extremes, key=lambda e: (e[0], e[1]), reverse=True):
            nodes.insert(pos, ([float(v) for v in X], br))
    return nodes


def _solve_on_stretch(fluid, a, b, lab, spec, val):
    """The point of the envelope with X[spec] = val on the stretch between nodes a and b (lists X; one may be
    the critical point), or None.

    First Newton with X[spec] fixed from the linear interpolation of a and b, accepted if it stays on the
    stretch (largest ln K of the same sign, no |ln K| collapse, the stretch's leading variable within the
    stretch); otherwise (near the critical point, where the Newton start is close to the trivial
    solution or the other branch) the stretch is followed as a curve: its leading variable u is
    specified and u is solved for X[spec](u) = val by Brent's method, then Newton polishes X[spec] = val."""
    from .solvers.saturation_point import _solve_sat_lists

    nc = len(fluid.x)
    zl = fluid.x.tolist()
    model = fluid.model
    crit_end = max(abs(v) for v in a[:nc]) == 0.0 or max(abs(v) for v in b[:nc]) == 0.0
    far = b if max(abs(v) for v in a[:nc]) == 0.0 else a
    big = max(range(nc), key=lambda i: abs(far[i]))
    fr, wr = lab
    t = (val - a[spec]) / (b[spec] - a[spec])
    X0 = [u + t * (v - u) for u, v in zip(a, b)]
    if crit_end:
        par = big
        # not closer to the critical point than 5 % of the stretch: there (|ln K| below ~1e-5) Newton on
        # the saturation equations is drawn to the trivial solution K = 1 (known limit, within ~1e-3 K of T_c)
        lo, hi = sorted((far[par], 0.05 * far[par]))
    else:
        par = max((i for i in range(nc + 2) if i != spec), key=lambda i: abs(a[i] - b[i]))
        lo, hi = sorted((a[par], b[par]))

    def on_stretch(X, slack):
        if _sgn(X[big]) != _sgn(far[big]) or max(abs(v) for v in X[:nc]) < 1e-3 * max(abs(v) for v in far[:nc]):
            return False
        w = (hi - lo) * slack
        return lo - w <= X[par] <= hi + w

    if not crit_end:
        try:
            X, x, y, rx, ry, it, _ = _solve_sat_lists(model, zl, X0, spec, val, False, fr, wr, max_iter=40)
            if on_stretch(X, 0.02):
                return X, x, y, rx, ry, it
        except ConvergenceError:
            pass
    # follow the curve: X(u) with u = X[par] specified, started from the interpolation of the ends
    memo = {}

    def g(u):
        tt = (u - a[par]) / (b[par] - a[par])
        Xg = [p0 + tt * (p1 - p0) for p0, p1 in zip(a, b)]
        X = _solve_sat_lists(model, zl, Xg, par, float(u), False, fr, wr, tol=1e-12, max_iter=30, max_step=0.5)[0]
        memo[float(u)] = X
        return X[spec] - val

    try:
        ga, gb = g(lo), g(hi)
        if ga * gb > 0:
            return None
        u = brentq(g, lo, hi, xtol=1e-14, rtol=4e-16, maxiter=100) if ga * gb < 0 else (lo if ga == 0 else hi)
        Xu = memo.get(float(u))
        if Xu is None:
            g(u)
            Xu = memo[float(u)]
        X, x, y, rx, ry, it, _ = _solve_sat_lists(model, zl, Xu, spec, val, False, fr, wr, max_iter=20)
    except (ConvergenceError, ValueError, RuntimeError):
        return None
    if not on_stretch(X, 1e-6) or max(abs(p - q) for p, q in zip(X, Xu)) > 1e-6:
        return None
    return X, x, y, rx, ry, it


def _sgn(v):
    return (v > 0) - (v < 0)


def envelope_points_at(fluid, T=None, p=None, branch=None):
    """Every point of the traced envelope at T [K] (or p [Pa]) on ``branch`` ('bubble', 'dew' or None for
    both), ordered along the curve: a list of (branch, X, x, y, rho_x, rho_y, iterations) with
    X = (ln K, ln T, ln p), x the incipient phase and y the feed. Each is solved on the curve (see
    ``_solve_on_stretch``), so that near the critical point no point is the trivial solution or one of
    the other branch."""
    env = mixture_envelope(fluid)
    nc = len(fluid.x)
    spec = nc if T is not None else nc + 1
    val = float(np.log(T if T is not None else p))
    nodes = _curve_nodes(env, nc)
    out = []
    for (a, ba), (b, bb) in zip(nodes[:-1], nodes[1:]):
        br = ba if ba != "critical" else bb
        if "critical" in (ba, bb) and (a if ba == "critical" else b)[spec] == val:
            if branch is None and ba == "critical":  # exactly at the critical point: one point, K = 1
                out.append(("critical", a, list(fluid.x), list(fluid.x), None, None, 0))
            continue
        if branch is not None and br != branch:
            continue
        if not ((a[spec] - val) * (b[spec] - val) <= 0 and a[spec] != b[spec]):
            continue
        # incipient-phase labels: on the dew branch the feed is vapour, on the bubble branch liquid
        lab = ("vap", "liq") if br == "dew" else ("liq", "vap")
        sol = _solve_on_stretch(fluid, a, b, lab, spec, val)
        if sol is not None and not any(max(abs(u - w) for u, w in zip(sol[0], q[1])) < 1e-9 for q in out):
            out.append((br,) + tuple(sol))  # (a traced node exactly at val ends one stretch and starts the next)
    return out


def saturation_point(fluid, kind, T=None, p=None) -> SaturationPoint:
    """Bubble ('bubble') or dew ('dew') point of the feed at T [K] or p [Pa].

    Started from the traced envelope (the stretch of the requested branch that brackets T or p, the
    critical point being the end of both branches), then Newton in (ln K, ln T, ln p) to max residual
    1e-12; near the critical point the stretch is followed as a curve (ln K specified) first, so the
    answer is never the trivial solution or a point of the other branch (closer to the critical point
    than the envelope's innermost points allow, within about 1e-3 K or 1e-5 relative in p of it,
    ConvergenceError is raised rather than a doubtful answer returned). At a temperature with two dew
    points (retrograde region) the lower-pressure one is returned; at a pressure with two, the first
    along the curve.

    Raises
    ------
    ModelRangeError
        The branch does not reach this T or p (e.g. above the cricondentherm or cricondenbar).
    ConvergenceError
        No bracketing stretch of the branch could be solved.
    """
    if (T is None) == (p is None):
        raise InputError(f"give either T or p for the {kind} point", f"{kind}_point")
    env = mixture_envelope(fluid)
    nc = len(fluid.x)
    want = "bubble" if kind == "bubble" else "dew"
    spec = nc if T is not None else nc + 1
    val = float(np.log(T if T is not None else p))
    branches = [want]
    if not (env.branch == want).any() and not env.closed:
        # the branch was not traced (open envelope, e.g. a near-pure feed): start from the other branch
        branches.append("dew" if want == "bubble" else "bubble")
    nodes = _curve_nodes(env, nc)
    spans = [(a[spec], b[spec]) for (a, ba), (b, bb) in zip(nodes[:-1], nodes[1:])
             if want in (ba, bb) or (len(branches) > 1 and ba != "critical" and bb != "critical")]
    if not any((u - val) * (w - val) <= 0 and u != w for u, w in spans):
        rng = env.T if T is not None else env.p
        what = f"T = {T:.3f} K" if T is not None else f"p = {p / 1e5:.4f} bar"
        raise ModelRangeError(f"{fluid!r} has no {kind} point at {what}: the traced {kind} branch spans "
                              f"{'T' if T is not None else 'p'} = {_span(rng[env.branch == want])} "
                              f"({'K' if T is not None else 'Pa'}).")
    sols = []
    for br in branches:
        sols = envelope_points_at(fluid, T=T, p=p, branch=br)
        if br != want:  # traced as the other branch: the roles of feed and incipient phase swap
            sols = []
        if sols:
            break
    if not sols and len(branches) > 1:
        sols = _flipped_start(fluid, env, want, spec, val)
    if not sols:
        raise ConvergenceError(f"{kind} point of {fluid!r} at {'T' if T is not None else 'p'} = "
                               f"{T if T is not None else p:.6g} did not converge on the traced envelope",
                               SolverReport(False, 0, float("nan"), "Newton (ln K, ln T, ln p) on the envelope"))
    if T is not None and want == "dew":
        sols.sort(key=lambda q: q[1][nc + 1])
    _, X, x, y, rx, ry, it = sols[0]
    Ts, ps = float(np.exp(X[nc])), float(np.exp(X[nc + 1]))
    # y is the feed, x the incipient phase
    feed, inc, rf, ri = np.array(y), np.array(x), ry, rx
    liq = (feed, rf) if want == "bubble" else (inc, ri)
    vap = (inc, ri) if want == "bubble" else (feed, rf)
    mk = lambda xx, rr, code: State(fluid.model, fluid.ideal, fluid.M_i, np.asarray(Ts), np.asarray(rr),  # noqa: E731
                                    np.asarray(xx), np.asarray(code))
    return SaturationPoint(Ts, ps, mk(liq[0], liq[1], LIQUID), mk(vap[0], vap[1], GAS), kind,
                           SolverReport(True, it, 0.0, "Newton (ln K, ln T, ln p) from the traced envelope"))


def _flipped_start(fluid, env, want, spec, val):
    """Open envelope with only the other branch traced: start from its points with ln K mirrored."""
    nc = len(fluid.x)
    other = "dew" if want == "bubble" else "bubble"
    Xs = np.column_stack([env.lnK, np.log(env.T), np.log(env.p)])
    fr, wr = ("liq", "vap") if want == "bubble" else ("vap", "liq")
    out = []
    for i in range(len(Xs) - 1):
        if env.branch[i] != other and env.branch[i + 1] != other:
            continue
        a, b = Xs[i, spec], Xs[i + 1, spec]
        if (a - val) * (b - val) <= 0 and a != b:
            X0 = Xs[i] + (val - a) / (b - a) * (Xs[i + 1] - Xs[i])
            X0[:nc] = -X0[:nc]
            try:
                X, x, y, rx, ry, it = solve_sat_point(fluid.model, fluid.x, X0, spec, val, False, fr, wr, max_iter=40)
            except ConvergenceError:
                continue
            out.append((want, X.tolist(), x.tolist(), y.tolist(), rx, ry, it))
    return out


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
