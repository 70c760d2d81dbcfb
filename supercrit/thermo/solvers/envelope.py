"""Phase envelope of a mixture by Michelsen continuation, through the critical point.

Unknowns X = (ln K_1..ln K_nc, ln T, ln p); equations ln K_i + ln phi_i(y) - ln phi_i(x) = 0,
sum(y - x) = 0, plus one specification X_s = S. The trace starts on the dew branch (feed = vapour,
incipient liquid x = z/K) at the lower temperature bound, follows the curve with a predictor from
the sensitivities dX/dS (the tangent line, or on smooth stretches the cubic through the last two
points and their tangents), re-chooses the specified variable as the one changing fastest, adapts
the step to the Newton iteration count, and passes the critical point where all
ln K change sign (the feed phase then is the liquid: bubble branch). The critical point is located
by Hermite interpolation of (T, ln p) in the specified ln K at its sign change; cricondenbar and
cricondentherm are refined by a bounded 1-D search on the curve.

References: M. L. Michelsen, Fluid Phase Equilib. 4 (1980) 1-10, doi:10.1016/0378-3812(80)80001-X;
Michelsen & Mollerup, Thermodynamic Models (2nd ed., 2007), ch. 12.

Notes
-----
Every point satisfies the equations to max|F| < 1e-11 (Newton, analytic Jacobian; the last point
of each solve is verified by a residual evaluation, and the sensitivities come with the last Newton
elimination). The iterations run on Python floats (a handful of unknowns). The trace stops at ``T_min`` (for CO2-bearing
mixtures the CO2 triple point 216.592 K, Span & Wagner 1996: solid CO2 forms below), or when
p exceeds ``p_max``, or when the continuation fails after repeated step halving: an envelope that does
not reach its critical point and come back down to ``T_min`` is reported as open, with the reason.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from scipy.optimize import minimize_scalar

from ...errors import ConvergenceError
from .saturation_point import _sat_lists, _solve_sat_lists, solve_sat_point
from .result import SolverReport
from .stability import solve_dense, wilson_K


@dataclass(frozen=True)
class EnvelopePoint:
    T: float  # [K]
    p: float  # [Pa]


@dataclass(frozen=True)
class Envelope:
    """A traced phase envelope: arrays ordered along the curve (dew branch first), SI units.

    T [K], p [Pa], branch ('dew' or 'bubble'), lnK (n, nc), rho_feed, rho_incipient [mol m-3];
    critical, cricondenbar, cricondentherm (EnvelopePoint or None); closed (bool) and reason (str).
    """

    T: np.ndarray
    p: np.ndarray
    branch: np.ndarray
    lnK: np.ndarray
    rho_feed: np.ndarray
    rho_incipient: np.ndarray
    critical: EnvelopePoint | None
    cricondenbar: EnvelopePoint | None
    cricondentherm: EnvelopePoint | None
    closed: bool
    reason: str
    report: SolverReport
    critical_index: int | None = None  # points[:critical_index] are dew, the rest bubble
    extra: dict = field(default_factory=dict)


def wilson_dew_pressure(T, z, Tc, pc, omega):
    """Dew pressure [Pa] from Wilson K-values: 1/p = sum z_i / psat_i."""
    ps = wilson_K(T, 1.0, Tc, pc, omega)
    return 1.0 / float(np.sum(z / ps))


def _labels(crossed):
    return ("liq", "vap") if crossed else ("vap", "liq")  # (feed root, incipient root)


def _sign(v):
    v = float(v)
    return (v > 0) - (v < 0)  # np.sign, on a Python float


def _sens(J, s):
    """Sensitivities dX/dX_s of the saturation system along the curve: J dX = 0 with dX_s = 1 (lists)."""
    n = len(J[0])
    es = [0.0] * n
    es[s] = 1.0
    rhs = [0.0] * n
    rhs[-1] = 1.0
    return solve_dense(J + [es], rhs)


PREDICT_CUBIC_MAX = 0.01  # [-] largest |cubic - linear| prediction for which the cubic is used (speed setting)


def _predict(X, dX, X0, dX0, s, ds):
    """Predicted X at X_s + ds dX_s: the tangent line, replaced by the cubic Hermite in X_s through the
    last two points and their tangents (Michelsen 1980) where the two agree to ``PREDICT_CUBIC_MAX``
    (a smooth stretch of the curve: the cubic then saves Newton iterations; near folds and turns
    the tangent line is kept)."""
    lin = [a + ds * b for a, b in zip(X, dX)]
    if X0 is None or dX0[s] == 0.0 or dX[s] == 0.0 or X[s] == X0[s]:
        return lin
    h = X[s] - X0[s]
    t = 1.0 + ds * dX[s] / h
    t2, t3 = t * t, t * t * t
    h00, h10, h01, h11 = 2 * t3 - 3 * t2 + 1, t3 - 2 * t2 + t, -2 * t3 + 3 * t2, t3 - t2
    c0, c1 = h10 * h / dX0[s], h11 * h / dX[s]
    cub = [h00 * a0 + c0 * d0 + h01 * a1 + c1 * d1 for a0, d0, a1, d1 in zip(X0, dX0, X, dX)]
    cub[s] = lin[s]  # the specified value itself, exactly
    if max([abs(a - b) for a, b in zip(cub, lin)]) > PREDICT_CUBIC_MAX:
        return lin
    return cub


def trace_envelope(model, z, Tc, pc, omega, T_min, p_max=1.0e8, max_points=600, T_start=None):
    """Trace the vapour-liquid envelope of feed z from the dew point at T_start (default T_min).

    Parameters
    ----------
    model : CubicModel
    z : ndarray (nc,)
        Feed mole fractions [-], at least two components present.
    Tc, pc, omega : ndarray (nc,)
        For the Wilson start [K], [Pa], [-].
    T_min : float
        Lowest temperature traced [K] (freezing line).
    p_max : float
        Pressure at which a still-rising branch is declared open [Pa].

    Returns
    -------
    Envelope

    Raises
    ------
    ConvergenceError
        No dew point could be found at the starting temperature.
    """
    z = np.asarray(z, dtype=float)
    zl = z.tolist()
    nc = len(z)
    iT, iP = nc, nc + 1
    T0 = float(T_start if T_start is not None else T_min)
    X = _start_dew(model, z, T0, Tc, pc, omega).tolist()
    ref = max(range(nc), key=lambda i: abs(X[i]))
    sign0 = _sign(X[ref])
    pts, branch = [], []
    crossed = False
    crit = None
    crit_index = None
    s = iP
    dS = 0.02
    closed, reason = False, ""
    total_it = 0
    fr, wr = _labels(False)
    F, J, x, y, rx, ry = _sat_lists(model, zl, X, False, fr, wr)
    pts.append((X[:], ry, rx))
    branch.append("dew")
    dX = _sens(J, s)
    prevX = prevdX = None
    n = nc + 2
    while len(pts) < max_points:
        # choose the specification: the variable changing fastest along the curve
        s_new = max(range(n), key=lambda i: abs(dX[i]))
        if s_new != s:
            d = dX[s_new]
            dX = [v / d for v in dX]
            s = s_new
        # direction: keep moving forward along the curve
        if len(pts) == 1:
            direction = 1.0 if dX[iP] > 0 else -1.0  # start by raising the pressure
        else:
            prev = pts[-2][0]
            direction = 1.0 if sum([a * (b - c) for a, b, c in zip(dX, X, prev)]) > 0 else -1.0
        step = abs(dS)
        # cap the change of every variable (|d ln K|, |d ln T|, |d ln p|)
        cap = 0.08 / max(max([abs(v) for v in dX]), 1e-12)
        step = min(step, cap)
        # jump the critical point: mirror ln K_s when the step would land near zero
        if s < nc and not crossed:
            Xs_pred = X[s] + direction * step * dX[s]
            if _sign(Xs_pred) != _sign(X[s]) or abs(Xs_pred) < 0.3 * abs(X[s]):
                step = abs(2.0 * X[s] / dX[s])
        ok = False
        for _ in range(12):
            ds = direction * step
            Xp = _predict(X, dX, prevX, prevdX, s, ds)
            will_cross = _sign(Xp[ref]) != sign0
            fr, wr = _labels(will_cross)
            try:
                Xn, xx, yy, rxx, ryy, it, dXn = _solve_sat_lists(model, zl, Xp, s, Xp[s], False, fr, wr, tol=1e-11,
                                                                 max_iter=12, max_step=1.0, sens=True)
            except ConvergenceError:
                step *= 0.5
                continue
            # reject a jump back onto the trivial solution or across the wrong branch
            if max([abs(v) for v in Xn[:nc]]) < 1e-6 or (_sign(Xn[ref]) != _sign(Xp[ref])):
                step *= 0.5
                continue
            if abs(Xn[iT] - X[iT]) > 0.3 or abs(Xn[iP] - X[iP]) > 0.5:
                step *= 0.5
                continue
            ok = True
            break
        if not ok:
            reason = (f"continuation failed after T = {math.exp(X[iT]):.3f} K, p = {math.exp(X[iP]) / 1e5:.3f} bar "
                      f"({'bubble' if crossed else 'dew'} branch): the envelope is reported open there")
            break
        total_it += it
        if dXn is None:  # the last Newton step moved X after its Jacobian: evaluate at Xn
            F, Jn, xx, yy, rxx, ryy = _sat_lists(model, zl, Xn, False, fr, wr)
            dXn = _sens(Jn, s)
        if sum([a * (b - c) for a, b, c in zip(dXn, Xn, X)]) < 0:
            dXn = [-v for v in dXn]
        if (not crossed) and will_cross:
            # tangents at both points evaluated there (the step's tangents may come from the Newton
            # iterate before a checked point), so that the estimate depends on the two points alone
            fr0, wr0 = _labels(False)
            t0 = _sens(_sat_lists(model, zl, X, False, fr0, wr0)[1], s)
            t1 = _sens(_sat_lists(model, zl, Xn, False, fr, wr)[1], s)
            crit = _hermite_critical(X, t0, Xn, t1, ref, iT, iP)
            crossed = True
            crit_index = len(pts)
        Tn, Pn = math.exp(Xn[iT]), math.exp(Xn[iP])
        if Tn < T_min:
            # land exactly on the lower temperature bound and stop
            try:
                Xe, xx, yy, rxx, ryy, _ = solve_sat_point(model, z, Xn, iT, np.log(T_min), False, fr, wr,
                                                          max_iter=20)
                pts.append((Xe.tolist(), ryy, rxx))
                branch.append("bubble" if crossed else "dew")
            except ConvergenceError:
                pass
            if crossed:
                closed = True
                reason = (f"complete between the lower temperature bound {T_min:.3f} K on both branches "
                          f"and through the critical point")
            else:
                reason = f"returned to {T_min:.3f} K without passing a critical point"
            break
        if Pn > p_max:
            reason = (f"{'bubble' if crossed else 'dew'} branch rises past {p_max / 1e6:.0f} MPa at "
                      f"T = {Tn:.2f} K without closing: open envelope (no vapour-liquid critical point "
                      f"on this branch; typical of CO2 with H2, He or water)")
            break
        pts.append((Xn, ryy, rxx))
        branch.append("bubble" if crossed else "dew")
        # step control: aim at 3-4 Newton iterations
        dS = step * (1.5 if it <= 3 else (0.7 if it >= 6 else 1.0))
        prevX, prevdX = X, dX
        X, dX = Xn, dXn
    else:
        reason = f"stopped after {max_points} points without reaching the lower temperature bound"
    extra = {}
    ref_c = None
    if crit_index is not None and 0 < crit_index < len(pts):
        pts, branch, crit_index, crit, ref_c, crit_rho = _near_critical(model, zl, pts, branch, crit_index, crit)
        if crit_rho is not None:
            extra["critical_rho"] = crit_rho
    Xs = np.array([q[0] for q in pts])
    T, P = np.exp(Xs[:, iT]), np.exp(Xs[:, iP])
    nodes = [q[0] for q in pts]
    labels = [_labels(b == "bubble") for b in branch]
    if ref_c is not None:  # the critical point is a point of the curve (ln K = 0), between the branches
        nodes.insert(crit_index, [0.0] * nc + [math.log(crit.T), math.log(crit.p)])
        labels.insert(crit_index, None)
    cb, cb_node = _refine_extremum(model, zl, nodes, labels, iP, ref_c)
    ct, ct_node = _refine_extremum(model, zl, nodes, labels, iT, ref_c)
    # the refined extrema as curve nodes (where they lie inside a stretch): a stretch that folds in T or p
    # (the cricondentherm, the cricondenbar) is split there, so every point at a given T or p is bracketed
    extra["extremum_nodes"] = (len(nodes), tuple(n for n in (cb_node, ct_node) if n is not None))
    rep = SolverReport(closed, total_it, 0.0, f"Michelsen continuation, {len(pts)} points")
    return Envelope(T, P, np.array(branch), Xs[:, :nc], np.array([q[1] for q in pts]),
                    np.array([q[2] for q in pts]), crit, cb, ct, closed, reason, rep, crit_index, extra)


NEAR_CRITICAL_FRACTIONS = (0.5, 0.25, 0.1, 0.03, 0.01)  # [-] of the last ln K before the critical point
                                                            # at which extra points are solved (speed/accuracy setting)


def _near_critical(model, z, pts, branch, ci, crit):
    """Fill the gap the trace jumps across at the critical point, and locate the critical point in it.

    The trace steps over the critical point (ln K mirrored), leaving a gap between its last dew and
    first bubble points where bubble/dew points and the cricondenbar or cricondentherm may lie. Here the
    curve is solved with the ln K that changes most across the gap (ln K_r) specified at fractions
    ``NEAR_CRITICAL_FRACTIONS`` of its value at the two gap ends: with ln K_r fixed away from zero the
    trivial solution (K = 1) is excluded by construction. Starts are the linear interpolation in ln K_r
    between the gap end and the critical estimate (near the critical point ln K varies linearly, T and
    p slowly). The critical point is then the Hermite interpolation in ln K_r between the innermost
    points, refined by Heidemann-Khalil where that agrees (within 0.01 K and 1e-4 relative in p).

    Returns (pts, branch, crit_index, crit, r, rho_c) with the points inserted in curve order; r is
    the index of ln K_r and rho_c the critical density [mol m-3] (None without Heidemann-Khalil).
    """
    from .critical import critical_point_hk

    nc = len(z)
    iT, iP = nc, nc + 1
    Xa, Xb = pts[ci - 1][0], pts[ci][0]
    r = max(range(nc), key=lambda i: abs(Xa[i] - Xb[i]))
    Xc = [0.0] * nc + [math.log(crit.T), math.log(crit.p)]

    def side(Xe, crossed, fractions):
        fr, wr = _labels(crossed)
        out = []
        for f in fractions:
            guess = [c + f * (e - c) for c, e in zip(Xc, Xe)]
            try:
                Xn, _, _, rx, ry, _ = _solve_sat_lists(model, z, guess, r, guess[r], False, fr, wr, tol=1e-11,
                                                       max_iter=20, max_step=0.5)[:6]
            except ConvergenceError:
                continue
            # the point must lie on this branch between the gap end and the critical point: ln K of the
            # same signs as at the gap end, T and p no further from the critical estimate than there
            if any(abs(e) > 1e-9 and _sign(v) != _sign(e) for v, e in zip(Xn[:nc], Xe[:nc])):
                continue
            if abs(Xn[iT] - Xc[iT]) > 2.0 * abs(Xe[iT] - Xc[iT]) + 1e-4 or \
                    abs(Xn[iP] - Xc[iP]) > 2.0 * abs(Xe[iP] - Xc[iP]) + 1e-4:
                continue
            out.append((Xn, ry, rx))
        return out

    dew = side(Xa, False, NEAR_CRITICAL_FRACTIONS)
    bub = side(Xb, True, NEAR_CRITICAL_FRACTIONS)
    rho_c = None
    if dew and bub:
        X0, X1 = dew[-1][0], bub[-1][0]  # tangents evaluated at the two points themselves
        d0 = _sens(_sat_lists(model, z, X0, False, *_labels(False))[1], r)
        d1 = _sens(_sat_lists(model, z, X1, False, *_labels(True))[1], r)
        crit = _hermite_critical(X0, d0, X1, d1, r, iT, iP)
        try:
            Th, ph, rho_h, _ = critical_point_hk(model, np.asarray(z), crit.T, crit.p)
            if abs(Th - crit.T) < 0.01 and abs(ph / crit.p - 1.0) < 1e-4:
                crit, rho_c = EnvelopePoint(float(Th), float(ph)), float(rho_h)
        except ConvergenceError:
            pass
    new = pts[:ci] + dew + bub[::-1] + pts[ci:]
    new_branch = branch[:ci] + ["dew"] * len(dew) + ["bubble"] * len(bub) + branch[ci:]
    return new, new_branch, ci + len(dew), crit, r, rho_c


def _start_dew(model, z, T0, Tc, pc, omega):
    nc = len(z)
    K = wilson_K(T0, 1.0, Tc, pc, omega)
    p0 = wilson_dew_pressure(T0, z, Tc, pc, omega)
    X0 = np.concatenate([np.log(K / p0), [np.log(T0), np.log(p0)]])
    last = None
    for damp in (1.0, 0.5, 0.25):
        try:
            X, *_ = solve_sat_point(model, z, X0, nc, np.log(T0), False, "vap", "liq", max_iter=60, max_step=damp)
            if float(np.max(np.abs(X[:nc]))) > 1e-4:
                return X
        except ConvergenceError as e:
            last = e
    # fall back: start at low pressure, temperature free
    p_lo = 1e4
    X0 = np.concatenate([np.log(wilson_K(T0, p_lo, Tc, pc, omega)), [np.log(T0), np.log(p_lo)]])
    try:
        X, *_ = solve_sat_point(model, z, X0, nc + 1, np.log(p_lo), False, "vap", "liq", max_iter=80, max_step=0.5)
        return X
    except ConvergenceError as e:
        raise ConvergenceError(f"no dew point found near T = {T0:.3f} K to start the envelope",
                               e.report or (last.report if last else None)) from None


def _hermite_critical(X0, d0, X1, d1, ref, iT, iP):
    """Critical point where ln K_ref = 0, by cubic Hermite interpolation of ln T, ln p in ln K_ref."""
    s0, s1 = X0[ref], X1[ref]
    h = s1 - s0
    t = (0.0 - s0) / h

    def herm(v0, v1, m0, m1):
        h00, h10 = 2 * t**3 - 3 * t**2 + 1, t**3 - 2 * t**2 + t
        h01, h11 = -2 * t**3 + 3 * t**2, t**3 - t**2
        return h00 * v0 + h10 * h * m0 + h01 * v1 + h11 * h * m1

    out = []
    for i in (iT, iP):
        m0 = d0[i] / d0[ref] if d0[ref] != 0 else 0.0
        m1 = d1[i] / d1[ref] if d1[ref] != 0 else 0.0
        out.append(herm(X0[i], X1[i], m0, m1))
    return EnvelopePoint(float(np.exp(out[0])), float(np.exp(out[1])))


def _refine_extremum(model, z, nodes, labels, i_max, ref_c):
    """Maximum of X[i_max] (ln p: cricondenbar; ln T: cricondentherm) along the curve.

    ``nodes`` are the curve's points in order (lists X), the critical point among them (``labels`` None
    there, ln K = 0) so that the maximum is never below it. Around the best node the curve is searched
    on each neighbouring stretch by a bounded 1-D search in the variable that changes most along that
    stretch (other than X[i_max], which folds at the maximum); on a stretch ending at the critical point
    that is ln K_``ref_c``, kept away from 0 (where K = 1 solves the equations for any T, p). Each trial
    point is solved from the linear interpolation of the stretch's ends, with the stretch's phase labels,
    so the search cannot jump to the other branch or onto the trivial solution.

    Returns (EnvelopePoint, node): node is None where the maximum is a traced node, else
    (insert position in ``nodes``, fraction along that stretch, X, branch name).
    """
    nc = len(z)
    k = max(range(len(nodes)), key=lambda i: nodes[i][i_max])
    best = nodes[k]
    node = None  # (insert position in nodes, fraction along that stretch, X, branch) of a refined maximum
    sides = [j for j in (k - 1, k + 1) if 0 <= j < len(nodes)]
    if len(sides) == 2:
        # search first the side where a parabola through the three nodes (in chord length) has its vertex;
        # the other side only if the maximum found there is at node k (then it may lie beyond it)
        d0 = math.dist(nodes[k - 1], nodes[k])
        d1 = math.dist(nodes[k], nodes[k + 1])
        y0, y1, y2 = nodes[k - 1][i_max], nodes[k][i_max], nodes[k + 1][i_max]
        vertex = 0.0
        if d0 > 0 and d1 > 0:  # y = a s^2 + b s + y1 through (-d0, y0), (0, y1), (d1, y2)
            a = (d1 * (y0 - y1) + d0 * (y2 - y1)) / (d0 * d1 * (d0 + d1))
            b = ((y2 - y1) - a * d1 * d1) / d1
            vertex = -b / (2.0 * a) if a < 0 else 0.0
        sides = [k - 1, k + 1] if vertex < 0 else [k + 1, k - 1]
    for j in sides:
        if node is not None and node[1] not in (0.0, 1.0) and min(node[1], 1.0 - node[1]) > 1e-3:
            break  # an interior maximum on the first side searched
        if not 0 <= j < len(nodes):
            continue
        a, b = nodes[k], nodes[j]
        lab = labels[k] or labels[j]
        if lab is None:
            continue
        if labels[k] is None or labels[j] is None:  # stretch ending at the critical point
            par = ref_c
            far = b if labels[k] is None else a
            lo, hi = sorted((far[par], 1e-6 * far[par]))
        else:
            par = max((i for i in range(nc + 2) if i != i_max), key=lambda i: abs(a[i] - b[i]))
            lo, hi = sorted((a[par], b[par]))
        if not hi - lo > 1e-14:
            continue
        found = {}

        def neg(val, a=a, b=b, par=par, lab=lab, found=found):
            t = (val - a[par]) / (b[par] - a[par])
            Xg = [u + t * (v - u) for u, v in zip(a, b)]
            try:
                Xn, *_ = _solve_sat_lists(model, z, Xg, par, float(val), False, lab[0], lab[1], max_iter=30,
                                          max_step=0.5)
            except ConvergenceError:
                return -best[i_max] + 1.0
            big = max(range(nc), key=lambda i: abs(Xg[i]))
            if max([abs(v) for v in Xn[:nc]]) < 1e-9 or _sign(Xn[big]) != _sign(Xg[big]):
                return -best[i_max] + 1.0  # trivial or other-branch solution: not a point of this stretch
            found[float(val)] = Xn
            return -Xn[i_max]

        # the maximum is flat (quadratic) in the stretch variable: 1e-7 in it leaves ~1e-14 in X[i_max]
        res = minimize_scalar(neg, bounds=(lo, hi), method="bounded", options={"xatol": 1e-7})
        Xb = found.get(float(res.x))
        if Xb is not None and Xb[i_max] > best[i_max]:
            best = Xb
            t = (float(res.x) - a[par]) / (b[par] - a[par])  # position along the stretch k -> j
            node = (max(k, j), t if j > k else 1.0 - t, list(Xb), "bubble" if lab == _labels(True) else "dew")
    return EnvelopePoint(float(math.exp(best[nc])), float(math.exp(best[nc + 1]))), node
