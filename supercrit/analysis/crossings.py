"""Where a step's physical path crosses a boundary, located by root finding on the path parameter.

A path is a function ``t -> State`` for t in [0, 1] (the step's own physics: isobaric for a heater,
isenthalpic for a valve, constant-efficiency for a compressor) plus the samples the step took.
Boundaries:

- phase-label changes (gas, liquid, supercritical, two-phase): entering or leaving the two-phase
  region (the saturation line of a pure fluid, the bubble or dew side of a mixture's envelope) and
  entering or leaving the supercritical region across the critical isotherm (T = Tc above pc) or the
  critical isobar (p = pc above Tc). For a pure fluid located directly (Brent on t: h(t) - h_sat(p(t)),
  T(t) - Tc or p(t) - pc); otherwise (mixtures, other label changes) by bisection on t until the two
  bracketing states differ by less than 0.005 K and 500 Pa (the requirement is 0.01 K and 0.01 bar).
- the pseudo-critical line (pure fluids above pc): T = T_pc(p), the temperature of maximum cp along
  the isobar, interpolated through 70 exact solves (bounded maximisation of cp(T) at each node's
  pressure; within LINE_TOL = 0.12 K of the exact maximum, measured) from 1.0001 pc up to the end of
  the line, the highest pressure at which cp still has a maximum along the isobar (about 527.6 bar for
  Span-Wagner CO2; above it there is no such line and no crossing is reported);
- the freezing boundary of CO2 (solid CO2): T = T_sub(p) below the triple-point pressure and
  T = T_melt(p) above it, both from Span & Wagner (1996) eqs. 3.10 and 3.12. For CO2-rich mixtures the
  pure-CO2 lines are used: an approximation (impurities depress the freezing point a little, so the
  pure-CO2 line is the warmer, cautious choice; common practice for screening);
- user limits: minimum design metal temperature, maximum temperature, maximum pressure.

Scalar boundaries are located by Brent's method on t to 1e-10 in t.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Callable, Sequence

import numpy as np
from scipy.optimize import brentq, minimize_scalar

from ..errors import ConvergenceError, ModelRangeError, SupercritError
from ..thermo.constants import R_CODATA_2018

T_TOL, P_TOL = 0.005, 500.0  # [K], [Pa]: half the required 0.01 K / 0.01 bar


@dataclass(frozen=True)
class Crossing:
    """One boundary crossing on a step's path.

    kind: 'two-phase-entry', 'two-phase-exit', 'critical-isotherm', 'critical-isobar', 'pseudo-critical',
    'solid-CO2', 'min-metal-T', 'max-T', 'max-p', 'model-range'; t: path parameter [-];
    T [K], p [Pa] at the crossing; state: the State there (None for 'model-range');
    before / after: phase labels either side (for a scalar boundary 'allowed' or 'beyond'); side: 'bubble', 'dew' or 'saturation' for two-phase
    crossings; text: one sentence for the report.
    """

    kind: str
    t: float
    T: float
    p: float
    before: str
    after: str
    side: str = ""
    text: str = ""
    state: object = field(default=None, compare=False, repr=False)


def _label(state) -> str:
    return str(state.phase)


def pseudo_critical_temperature(fluid, p: float) -> float:
    """Temperature of maximum cp along the isobar p [Pa] (pure fluid, p above the model's pc) [K].

    Method: a scan of cp from Tc in 1 K steps (150 K at a time, continued while the largest value lies at
    the upper end), then bounded Brent maximisation around the largest value to 1e-6 K. (Path crossings
    use the interpolated line instead, see the module docstring.)

    Raises
    ------
    ModelRangeError
        For mixtures, at or below the critical pressure, or where cp has no maximum along the isobar
        (above :func:`pseudo_critical_line_end`).
    """
    return _pseudo_critical_T(fluid, p)


_LINES: dict = {}  # pseudo-critical lines shared by fluids of the same model and composition

#: the interpolated pseudo-critical line: 30 nodes uniform in ln(p/pc - 1) from 1.0001 pc to 2 pc, then 40 nodes
#: in p from 2 pc to the line's end, closer together towards the end (spacing ~ (1 - s)^2)
LINE_NODES_LOG, LINE_NODES_P = 30, 40
LINE_P_MIN = 1e-4  # the first node at (1 + LINE_P_MIN) pc; below it the exact solve is used
#: bound of |interpolated - exact|, measured at 400 random pressures per fluid when the nodes were chosen
#: (tests/analysis/test_crossings.py checks 63 per fluid): 0.03 K for Span-Wagner CO2 except 80-84 bar, where
#: that equation's cp has two humps of nearly equal height about 0.17 K apart and the exact maximum jumps
#: between them (0.11 K there); 0.053 K for Peng-Robinson N2 (largest just above pc)
LINE_TOL = 0.12


def _pseudo_critical_T(fluid, p: float) -> float:
    """The exact solve at p, cached per fluid and pressure."""
    cache = fluid.__dict__.setdefault("_pseudo_critical_cache", {})
    if p in cache:
        return cache[p]
    cache[p] = T = _pseudo_critical_T_solve(fluid, p)
    return T


def _cp_scan(fluid, p: float):
    """(T grid [K], index of its largest cp, whether the grid is the first window) of a scan of cp along the
    isobar p from Tc + 0.01 K up in steps of about 1 K, in windows of 150 K: a window whose largest value
    lies at its upper end is followed by the next one, up to the fluid's upper temperature limit (the
    maximum of a heavy component moves more than 150 K above Tc at a few times pc)."""
    c = fluid.critical_point()
    T_top = fluid._T_limits()[1]
    lo, first = c.T + 0.01, True
    while True:
        hi = min(lo + 149.99, T_top)
        T = np.linspace(lo, hi, 151)
        i = int(np.argmax(fluid.state(T=T, p=np.full_like(T, p)).cp))
        if i < len(T) - 1 or hi >= T_top:
            return T, i, first
        lo, first = float(T[-2]), False  # the last point becomes interior to the next window


def _has_cp_maximum(fluid, p: float) -> bool:
    """Whether cp along the isobar p has a maximum above Tc below the fluid's upper temperature limit:
    the scan's largest value neither at Tc + 0.01 K nor at the limit."""
    T, i, first = _cp_scan(fluid, p)
    return not (first and i == 0) and i < len(T) - 1


def pseudo_critical_line_end(fluid) -> float:
    """The highest pressure [Pa] at which cp of a pure fluid still has a maximum along the isobar above Tc,
    below the upper temperature limit of the fluid's data (bisection to 1e-5 relative between 2 pc and
    60 pc; 60 pc if it has one there). Above it there is no pseudo-critical line: for Span-Wagner CO2 at
    about 527.6 bar, where the line, having turned back to lower temperatures above about 340 bar, ends
    and cp falls monotonically with T along the isobar; for the cubic equations the line's end pressure
    depends on the equation (for Peng-Robinson CO2 the maximum is still there at 60 pc)."""
    _, end = _line(fluid)
    return end


def _line(fluid):
    key = fluid.signature
    if key not in _LINES:
        pc = fluid.critical_point().p
        lo, hi = 2.0 * pc, 60.0 * pc
        if _has_cp_maximum(fluid, hi):
            end = hi
        else:
            while hi - lo > 1e-5 * hi:
                mid = 0.5 * (lo + hi)
                if _has_cp_maximum(fluid, mid):
                    lo = mid
                else:
                    hi = mid
            end = lo
        from scipy.interpolate import PchipInterpolator

        u = np.linspace(np.log(LINE_P_MIN), 0.0, LINE_NODES_LOG)
        s = np.linspace(0.0, 1.0, LINE_NODES_P + 1)[1:]
        ps = np.concatenate([pc * (1.0 + np.exp(u)), end - (end - 2.0 * pc) * (1.0 - s) ** 2])
        Ts = []
        for k, pk in enumerate(ps):
            # start from the line extrapolated through the two previous nodes (linear in the node index)
            hint = None if k < 2 else 2.0 * Ts[-1] - Ts[-2]
            # solved afresh, not taken from the fluid's cache of single solves: the same line in every process
            Ts.append(_pseudo_critical_T_solve(fluid, float(pk), hint))
        n = LINE_NODES_LOG
        low = PchipInterpolator(u, np.array(Ts[:n]))
        high = PchipInterpolator(ps[n - 1:], np.array(Ts[n - 1:]))
        if len(_LINES) > 32:
            _LINES.clear()
        _LINES[key] = ((low, high, pc), end)
    return _LINES[key]


def _pseudo_critical_line(fluid):
    """T_pc(p) [K] of a pure fluid interpolated through exact solves (monotone cubic pieces through 70 nodes:
    ``LINE_NODES_LOG`` uniform in ln(p/pc - 1) up to 2 pc, ``LINE_NODES_P`` in p from 2 pc to the end of the line,
    :func:`pseudo_critical_line_end`), within ``LINE_TOL`` of the exact maximum. Cached per fluid signature
    (model, constants, k_ij, composition) and the same in every process. Returns NaN at or below pc and
    above the end of the line; between pc and the first node, 1.0001 pc, the exact solve."""
    (low, high, pc), end = _line(fluid)

    def T_pc(p):
        p = float(p)
        if not (p > pc) or p > end:
            return float("nan")
        if p <= 2.0 * pc:
            v = np.log(p / pc - 1.0)
            if v < np.log(LINE_P_MIN):
                try:
                    return _pseudo_critical_T(fluid, p)
                except SupercritError:
                    return float("nan")
            return float(low(v))
        return float(high(p))

    return T_pc


def _pseudo_critical_T_solve(fluid, p: float, T_hint: float | None = None) -> float:
    if not fluid.is_pure:
        raise ModelRangeError("the pseudo-critical line is computed for pure fluids only")
    c = fluid.critical_point()
    if p <= c.p:
        raise ModelRangeError(f"no pseudo-critical temperature at p = {p / 1e5:.3f} bar: at or below the "
                              f"critical pressure {c.p / 1e5:.3f} bar")
    if T_hint is not None:  # a nearby answer: scan 13 points +-3 K (then +-12 K) around it along the isobar
        from ..thermo.solvers.flash_near import isobar_walker

        cp_of = isobar_walker(fluid, p, "cp")
        for width in (3.0, 12.0):
            T = np.linspace(max(c.T + 0.01, T_hint - width), max(c.T + 0.01, T_hint - width) + 2.0 * width, 13)
            cp = [cp_of(t) for t in T]
            i = int(np.argmax(cp))
            if 0 < i < len(T) - 1:
                return _refine_cp_max(fluid, p, T[i - 1], T[i + 1], cp_of)
    T, i, first = _cp_scan(fluid, p)
    if i == len(T) - 1:
        raise ModelRangeError(f"no pseudo-critical temperature at p = {p / 1e5:.3f} bar: cp still rises at the "
                              f"upper temperature limit of the fluid's data, {T[-1]:.1f} K")
    if first and i == 0 and p > 2.0 * c.p:  # (near pc the maximum lies within 0.01 K of Tc: the first point)
        raise ModelRangeError(f"no pseudo-critical temperature at p = {p / 1e5:.3f} bar: cp has no maximum "
                              f"along the isobar above Tc (the line ends at a lower pressure)")
    return _refine_cp_max(fluid, p, T[max(i - 1, 0)], T[min(i + 1, len(T) - 1)])


def _refine_cp_max(fluid, p, lo, hi, cp=None):
    from ..thermo.solvers.flash_near import isobar_walker

    if cp is None:
        cp = isobar_walker(fluid, p, "cp")  # the one root above Tc, each call started from the previous density
    res = minimize_scalar(lambda x: -cp(x), bounds=(lo, hi), method="bounded", options={"xatol": 1e-6})
    return float(res.x)


def _freeze_T(p):
    from ..thermo.solid_co2 import TRIPLE_POINT, melting_temperature, sublimation_temperature

    return float(sublimation_temperature(p)) if p < TRIPLE_POINT.p else float(melting_temperature(p))


def _classify(a: str, b: str, pure: bool) -> tuple[str, str]:
    if "solid" in b and "solid" not in a:
        return "solid-CO2", ""
    pair = {a, b}
    if "two-phase" in pair:
        other = (pair - {"two-phase"}).pop() if len(pair) == 2 else ""
        kind = "two-phase-entry" if b == "two-phase" else "two-phase-exit"
        side = "saturation" if pure else {"gas": "dew", "liquid": "bubble"}.get(other, "critical")
        return kind, side
    if pair == {"liquid", "supercritical"}:
        return "critical-isotherm", ""
    if pair == {"gas", "supercritical"}:
        return "critical-isobar", ""
    return "phase-change", ""


def _bisect_label(path, ta, sa, tb, sb, max_iter=80):
    la = _label(sa)
    for _ in range(max_iter):
        if abs(sa.T - sb.T) < T_TOL and abs(sa.p - sb.p) < P_TOL:
            break
        tm = 0.5 * (ta + tb)
        sm = path(tm)
        if _label(sm) == la:
            ta, sa = tm, sm
        else:
            tb, sb = tm, sm
    return ta, sa, tb, sb


def _saturation_crossing(fluid, path, ta, sa, tb, sb):
    """A pure fluid's path entering or leaving the two-phase region between two samples, located directly:
    the root in t of h(t) - h_sat(p(t)) on the single-phase side (saturated liquid for a liquid sample,
    saturated vapour for a gas sample), Brent's method to 1e-12 in t; the crossing state is that
    saturated state. None (the caller bisects on labels) for any other label change or where the
    saturation line is not defined along the bracket."""
    la, lb = _label(sa), _label(sb)
    if "two-phase" not in (la, lb) or {la, lb} - {"two-phase", "liquid", "gas"} or \
            not hasattr(path, "p_of") or fluid._crit is None:
        return None
    single = lb if la == "two-phase" else la
    which = "liquid" if single == "liquid" else "vapor"

    def g(t):
        sat = fluid.saturation(p=path.p_of(t))
        return path.h_of(t) - float(getattr(sat, which).h)

    try:
        ga, gb = g(ta), g(tb)
        if not (np.isfinite(ga) and np.isfinite(gb)):
            return None
        # an end on the saturation line to round-off (e.g. a condenser's outlet at vapour fraction 0, where
        # the next step starts) is the crossing itself
        tol = 1e-12 * (abs(path.h_of(ta)) + R_CODATA_2018 * float(sa.T))
        ga = 0.0 if abs(ga) <= tol else ga
        gb = 0.0 if abs(gb) <= tol else gb
        if ga * gb > 0 or (ga == 0 and gb == 0):
            return None
        tstar = ta if ga == 0 else tb if gb == 0 else brentq(g, ta, tb, xtol=1e-12, rtol=1e-14)
        st = getattr(fluid.saturation(p=path.p_of(tstar)), which)
    except SupercritError:
        return None
    kind, side = _classify(la, lb, True)
    return Crossing(kind, float(tstar), float(st.T), float(st.p), la, lb, side, "", st)


def _critical_line_crossing(fluid, path, ta, sa, tb, sb):
    """A pure fluid's path entering or leaving the supercritical region between two samples, located
    directly: Brent's method to 1e-10 in t on T(t) - Tc (liquid <-> supercritical: the critical isotherm)
    or p(t) - pc (gas <-> supercritical: the critical isobar; from the path's own p(t) where it has one, so
    no state is evaluated until the crossing). None (the caller bisects on labels) for any other label
    change or when the bracket's ends do not straddle the line."""
    pair = {_label(sa), _label(sb)}
    if fluid._crit is None or pair not in ({"liquid", "supercritical"}, {"gas", "supercritical"}):
        return None
    c = fluid.critical_point()
    if pair == {"liquid", "supercritical"}:
        def g(t):
            return float(path(t).T) - c.T
        ga, gb = float(sa.T) - c.T, float(sb.T) - c.T
    else:
        p_of = getattr(path, "p_of", None)

        def g(t):
            return (p_of(t) if p_of is not None else float(path(t).p)) - c.p
        ga, gb = float(sa.p) - c.p, float(sb.p) - c.p
        if not (float(sa.T) >= c.T and float(sb.T) >= c.T):
            return None  # the temperature crosses Tc as well: let the labels decide
    try:
        if not (np.isfinite(ga) and np.isfinite(gb)) or ga * gb >= 0:
            return None
        ga2, gb2 = g(ta), g(tb)  # the same numbers through the path function (p_of may differ in the last digit)
        if ga2 * gb2 >= 0:
            return None
        tstar = brentq(g, ta, tb, xtol=1e-10, rtol=1e-12)
        st = path(tstar)
    except SupercritError:
        return None
    kind, side = _classify(_label(sa), _label(sb), True)
    return Crossing(kind, float(tstar), float(st.T), float(st.p), _label(sa), _label(sb), side, "", st)


def _label_crossings(fluid, path, ta, sa, tb, sb, pure, depth=6):
    """The crossings between two samples with different phase labels. A pure fluid's crossing is located
    directly where the bracket holds one transition the direct solvers know; otherwise the bracket is
    halved (up to ``depth`` times) and each half with a label change is handled alike, so that a bracket
    holding two transitions (supercritical -> liquid -> two-phase in one throttle sample) gives both, and
    one whose end lies above pc (no saturation there) is narrowed until the saturation solve applies.
    What remains is bisected on the labels."""
    if pure:
        direct = _saturation_crossing(fluid, path, ta, sa, tb, sb) or \
            _critical_line_crossing(fluid, path, ta, sa, tb, sb)
        if direct is not None:
            return [direct]
        if depth > 0:
            tm = 0.5 * (ta + tb)
            try:
                sm = path(tm)
            except SupercritError:
                sm = None
            if sm is not None:
                out = []
                if _label(sm) != _label(sa):
                    out += _label_crossings(fluid, path, ta, sa, tm, sm, pure, depth - 1)
                if _label(sm) != _label(sb):
                    out += _label_crossings(fluid, path, tm, sm, tb, sb, pure, depth - 1)
                return out
    a0, sa0, b0, sb0 = _bisect_label(path, ta, sa, tb, sb)
    kind, side = _classify(_label(sa0), _label(sb0), pure)
    st = sb0 if _label(sb0) == "two-phase" else sa0
    return [Crossing(kind, 0.5 * (a0 + b0), 0.5 * (sa0.T + sb0.T), 0.5 * (sa0.p + sb0.p), _label(sa0),
                     _label(sb0), side, "", st)]


def find_crossings(fluid, path: Callable[[float], object], t_samples: Sequence[float], *, step_id: str = "",
                   limits: dict | None = None, samples: Sequence | None = None) -> list[Crossing]:
    """Every boundary crossing along ``path`` between the given samples, in path order.

    Parameters
    ----------
    fluid : Fluid
    path : callable
        t -> State on [0, 1].
    t_samples : sequence of float
        Increasing path parameters already sampled (include 0 and 1).
    limits : dict, optional
        ``min_metal_T`` [K], ``max_T`` [K], ``max_p`` [Pa]; absent keys are not checked.
    samples : sequence of State, optional
        The states at ``t_samples`` if already computed.

    Returns
    -------
    list of Crossing
        Sorted by t. A path that leaves the model's range (e.g. a cubic below the CO2 triple-point
        pressure) ends with a 'model-range' crossing at the last point the model could compute.
    """
    limits = limits or {}
    ts = list(t_samples)
    states, good_t = [], []
    failure = None
    for i, t in enumerate(ts):
        try:
            s = samples[i] if samples is not None else path(t)
        except (ModelRangeError, ConvergenceError) as exc:
            failure = (t, exc)
            break
        states.append(s)
        good_t.append(t)
    out: list[Crossing] = []
    pure = fluid.is_pure
    for (ta, sa), (tb, sb) in zip(zip(good_t, states), zip(good_t[1:], states[1:])):
        if _label(sa) != _label(sb):
            out.extend(_label_crossings(fluid, path, ta, sa, tb, sb, pure))
    # scalar boundaries
    funcs: list[tuple[str, Callable]] = []
    if pure and fluid._crit is not None:
        pc = fluid.critical_point().p

        if any(float(s.p) > pc for s in states):
            T_pc = _pseudo_critical_line(fluid)
            funcs.append(("pseudo-critical", lambda s: np.nan if s.p <= pc else s.T - T_pc(float(s.p))))
    if "CO2" in fluid.components:
        # states that already hold solid lie on the sublimation line (g = 0 to round-off): their entry is the
        # phase-label change above, so the scalar test looks at fluid states only
        funcs.append(("solid-CO2", lambda s: np.nan if "solid" in str(s.phase) else s.T - _freeze_T(s.p)))
    if "min_metal_T" in limits:
        funcs.append(("min-metal-T", lambda s: s.T - limits["min_metal_T"]))
    if "max_T" in limits:
        funcs.append(("max-T", lambda s: limits["max_T"] - s.T))
    if "max_p" in limits:
        funcs.append(("max-p", lambda s: limits["max_p"] - s.p))
    for kind, g in funcs:
        vals = []
        for s in states:
            try:
                vals.append(g(s))
            except SupercritError:
                vals.append(np.nan)
        for i in range(len(states) - 1):
            ga, gb = vals[i], vals[i + 1]
            if not (np.isfinite(ga) and np.isfinite(gb)) or ga == gb or ga * gb > 0:
                continue
            if ga == 0.0:
                continue
            try:
                tstar = brentq(lambda t: g(path(t)), good_t[i], good_t[i + 1], xtol=1e-10, rtol=1e-12)
            except (ValueError, RuntimeError):  # the boundary is undefined somewhere inside (NaN): not located
                continue
            st = path(tstar)
            # g > 0 on the allowed side of the boundary (fluid, within the limit); g < 0 beyond it
            before, after = ("allowed", "beyond") if gb < 0 else ("beyond", "allowed")
            out.append(Crossing(kind, tstar, st.T, st.p, before, after, "", "", st))
    if failure is not None and good_t:
        t_fail, exc = failure
        ta, tb = good_t[-1], t_fail
        for _ in range(60):  # last computable point
            tm = 0.5 * (ta + tb)
            try:
                path(tm)
                ta = tm
            except (ModelRangeError, ConvergenceError):
                tb = tm
            if tb - ta < 1e-9:
                break
        s = path(ta)
        out.append(Crossing("model-range", ta, s.T, s.p, _label(s), "outside the model", "", str(exc), s))
    out.sort(key=lambda c: c.t)
    return out
