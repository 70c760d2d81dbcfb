"""Lines of constant vapour fraction inside a mixture's phase envelope, by continuation.

For a feed z and a vapour mole fraction beta in (0, 1), the line is the set of (T, p) where the
PT flash splits z into a vapour fraction beta. Unknowns X = (ln K_1..ln K_nc, ln T, ln p) with
K = y/x; equations

    ln K_i + ln phi_i(y) - ln phi_i(x) = 0,   x = z / (1 + beta (K - 1)),  y = K x,
    sum(y - x) = 0,

plus one specification X_s = S (the same system as the envelope's, which is its beta = 0 and
beta = 1 case). The start is at the envelope's low-temperature end: with T fixed there, beta is
stepped from the nearer envelope point (dew point, beta = 1, or bubble point, beta = 0) to the
asked value. The line is then followed upwards with a linear predictor from dX/dS, the specified
variable re-chosen as the one changing fastest, the step adapted to the Newton iteration count.
It ends at the mixture critical point, where every quality line meets the envelope: tracing stops
when the largest |ln K| has fallen to ``lnK_end``, the critical end is estimated by Hermite
extrapolation of (ln T, ln p) to ln K = 0, and the envelope's own critical point closes the curve.

References: M. L. Michelsen, Fluid Phase Equilib. 4 (1980) 1-10, doi:10.1016/0378-3812(80)80001-X
(continuation in (ln K, ln T, ln p)); Michelsen & Mollerup, Thermodynamic Models (2nd ed., 2007),
ch. 12 (phase envelopes; chapter from memory). Cross-checked against thermopack 2.2.3, whose Fortran
envelope tracer takes the vapour fraction of the traced line as an argument
(tests/thermo/test_quality_lines.py).

Notes
-----
Every traced point satisfies the equations to max|F| < ``tol`` (default 1e-11). Not traced: the
last stretch before the critical point, |ln K| < ``lnK_end`` (default 0.02; within 0.07 K of T_c for
the CO2 + N2 / CH4 / five-component feeds tested); the curve is closed there by the straight segment
to the critical point, and the line's own extrapolation to ln K = 0 (``critical_estimate``) agrees
with the Heidemann-Khalil critical point to ~2e-6 K for those feeds (measured). If
the envelope has no critical point (open envelope) the line is traced until ``p_max`` or until the
continuation fails, and reported as not reaching a critical point, with the reason.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ...errors import ConvergenceError, InputError
from .envelope import Envelope, EnvelopePoint
from .result import SolverReport

LNK_END = 0.02  # [-] tracing stops once max|ln K| reaches this (chosen here; see the module notes)


@dataclass(frozen=True)
class QualityLine:
    """A line of constant vapour fraction beta [-], ordered from the low-temperature end.

    T [K], p [Pa]: points for plotting; the last one is the mixture critical point when the line
    reaches it (``ends_at_critical``). solved (bool array): True where the point is a solved
    equilibrium point (all but the critical end). lnK (n, nc): ln(y/x) of each point (zero at the
    critical end); x, y (n, nc): liquid and vapour mole fractions [-]. critical: the envelope's
    critical point (or None); critical_estimate: where this line extrapolates to ln K = 0.
    """

    beta: float
    T: np.ndarray
    p: np.ndarray
    solved: np.ndarray
    lnK: np.ndarray
    x: np.ndarray
    y: np.ndarray
    critical: EnvelopePoint | None
    critical_estimate: EnvelopePoint | None
    ends_at_critical: bool
    reason: str
    report: SolverReport


def quality_residual(model, z, X, beta):
    """Residuals F (nc+1,), Jacobian J (nc+1, nc+2) in X and dF/dbeta (nc+1,), and phases x, y.

    Liquid x uses the smaller-volume root, vapour y the larger (cubic kernel roots 'liq', 'vap').
    """
    nc = len(z)
    lnK, T, P = X[:nc], np.exp(X[nc]), np.exp(X[nc + 1])
    K = np.exp(lnK)
    D = 1.0 + beta * (K - 1.0)
    nx = z / D
    ny = K * nx
    Sx, Sy = nx.sum(), ny.sum()
    x, y = nx / Sx, ny / Sy
    kern = model.phase_kernel(T)
    lpx, dnx, dTx, dPx, _ = kern.ln_phi_and_derivs(x, P, "liq")
    lpy, dny, dTy, dPy, _ = kern.ln_phi_and_derivs(y, P, "vap")
    F = np.empty(nc + 1)
    F[:nc] = lnK + lpy - lpx
    F[nc] = Sy - Sx
    # mole-number sensitivities: d nx_j / d ln K_j, d ny_j / d ln K_j, and d/d beta
    nx_l = -nx * beta * K / D
    ny_l = ny * (1.0 - beta) / D
    nx_b = -nx * (K - 1.0) / D
    ny_b = K * nx_b
    Ax, Ay = dnx / Sx, dny / Sy  # d ln phi_i / d n_j for unnormalised mole numbers
    J = np.zeros((nc + 1, nc + 2))
    J[:nc, :nc] = np.eye(nc) + Ay * ny_l[None, :] - Ax * nx_l[None, :]
    J[nc, :nc] = ny_l - nx_l
    J[:nc, nc] = T * (dTy - dTx)
    J[:nc, nc + 1] = P * (dPy - dPx)
    Fb = np.empty(nc + 1)
    Fb[:nc] = Ay @ ny_b - Ax @ nx_b
    Fb[nc] = float(np.sum(ny_b - nx_b))
    return F, J, Fb, x, y


def solve_quality_point(model, z, beta, X0, s, value, tol=1e-11, max_iter=15, max_step=1.0):
    """Newton on the quality-line system with X[s] = value, from X0; returns (X, iterations).

    Raises ConvergenceError (with its SolverReport) after ``max_iter`` iterations or on a failed step.
    """
    nc = len(z)
    X = np.array(X0, dtype=float)
    X[s] = value
    free = [i for i in range(nc + 2) if i != s]
    res = np.inf
    for it in range(1, max_iter + 1):
        try:
            F, J, _, x, y = quality_residual(model, z, X, beta)
        except (ArithmeticError, ValueError, FloatingPointError):
            break
        res = float(np.max(np.abs(F)))
        if not np.isfinite(res):
            break
        if res < tol:
            return X, it
        try:
            d = np.linalg.solve(J[:, free], -F)
        except np.linalg.LinAlgError:
            break
        m = float(np.max(np.abs(d)))
        if m > max_step:
            d *= max_step / m
        X[free] += d
        if not np.all(np.isfinite(X)):
            break
    raise ConvergenceError(f"quality line (beta = {beta:g}): Newton did not converge",
                           SolverReport(False, max_iter, float(res), "Newton (ln K, ln T, ln p)"))


def _sens(J, s):
    """dX/dX_s along the curve (unit component s)."""
    n = J.shape[1]
    A = np.vstack([J, np.eye(n)[s]])
    rhs = np.zeros(n)
    rhs[-1] = 1.0
    return np.linalg.solve(A, rhs)


def _start(model, z, env: Envelope, beta, tol):
    """Point of the line at the envelope's low-temperature end: T fixed, beta stepped from an envelope point."""
    nc = len(z)
    iT = nc
    X_dew = np.concatenate([env.lnK[0], [np.log(env.T[0]), np.log(env.p[0])]])  # dew: K = y/x as traced
    ends = [(1.0, X_dew)]
    last = len(env.T) - 1
    if env.branch[last] == "bubble" and abs(env.T[last] - env.T[0]) < 1e-9 * env.T[0]:
        # bubble branch traced with the feed as phase 'y': K there is x/y, so flip the sign
        ends.append((0.0, np.concatenate([-env.lnK[last], [np.log(env.T[last]), np.log(env.p[last])]])))
    ends.sort(key=lambda e: abs(e[0] - beta))
    for b0, X in ends:
        b, h = b0, 0.1 * np.sign(beta - b0)
        X = X.copy()
        its = 0
        while b != beta:
            step_ok = False
            for _ in range(12):
                bn = beta if abs(beta - b) <= abs(h) else b + h
                F, J, Fb, *_ = quality_residual(model, z, X, b)
                free = [i for i in range(nc + 2) if i != iT]
                dXb = np.zeros(nc + 2)
                dXb[free] = np.linalg.solve(J[:, free], -Fb)
                try:
                    Xn, it = solve_quality_point(model, z, bn, X + (bn - b) * dXb, iT, X[iT], tol)
                except ConvergenceError:
                    h *= 0.5
                    continue
                if float(np.max(np.abs(Xn[:nc]))) < 1e-6:  # fell onto the trivial solution K = 1
                    h *= 0.5
                    continue
                X, b, its, step_ok = Xn, bn, its + it, True
                if it <= 3:
                    h *= 1.5
                break
            if not step_ok:
                break
        if b == beta:
            return X, its
    raise ConvergenceError(f"quality line (beta = {beta:g}): no start point at T = {env.T[0]:.3f} K between "
                           f"the envelope's bubble and dew points",
                           SolverReport(False, 0, float("nan"), "continuation in beta at fixed T"))


def _hermite_zero(X0, d0, X1, d1, ref, iT, iP):
    """(T, p) where ln K_ref = 0, by cubic Hermite extrapolation of ln T, ln p in ln K_ref."""
    s0, s1 = X0[ref], X1[ref]
    h = s1 - s0
    t = -s0 / h
    h00, h10 = 2 * t**3 - 3 * t**2 + 1, t**3 - 2 * t**2 + t
    h01, h11 = -2 * t**3 + 3 * t**2, t**3 - t**2
    out = []
    for i in (iT, iP):
        m0, m1 = d0[i] / d0[ref], d1[i] / d1[ref]
        out.append(h00 * X0[i] + h10 * h * m0 + h01 * X1[i] + h11 * h * m1)
    return EnvelopePoint(float(np.exp(out[0])), float(np.exp(out[1])))


def trace_quality_line(model, z, envelope: Envelope, beta, T_min=None, p_max=1.0e8, lnK_end=LNK_END,
                       tol=1e-11, max_points=600, critical: EnvelopePoint | None = None) -> QualityLine:
    """Trace the line of constant vapour fraction ``beta`` from the envelope's low-T end to its critical point.

    Parameters
    ----------
    model : CubicModel
        A model with ``phase_kernel`` (cubic).
    z : ndarray (nc,)
        Feed mole fractions [-] (at least two components present), as used for ``envelope``.
    envelope : Envelope
        The feed's traced envelope (:func:`supercrit.thermo.solvers.envelope.trace_envelope`).
    beta : float
        Vapour mole fraction [-], 0 < beta < 1.
    T_min : float, optional
        Lowest temperature [K]; default the envelope's starting temperature.
    p_max : float
        Pressure [Pa] at which a still-rising line is reported open.
    lnK_end : float
        max|ln K| [-] at which tracing stops and the critical end is extrapolated.
    tol : float
        Newton tolerance on max|F| [-].
    critical : EnvelopePoint, optional
        Critical point (T [K], p [Pa]) that closes the line; default ``envelope.critical`` (the
        facade passes the Heidemann-Khalil refined point it reports with the envelope).

    Returns
    -------
    QualityLine

    Raises
    ------
    InputError
        beta outside (0, 1).
    ConvergenceError
        No start point could be found at the envelope's low-temperature end.

    Notes
    -----
    Method: Michelsen-type continuation (module docstring); tolerance ``tol`` on every point. Known
    failure region: within |ln K| < ``lnK_end`` of the critical point (not traced, see module notes).
    """
    try:
        beta = float(beta)
    except (TypeError, ValueError):
        raise InputError(f"vapour fraction {beta!r} is not a number", "beta") from None
    if not 0.0 < beta < 1.0:
        raise InputError(f"vapour fraction {beta} must lie strictly between 0 and 1 (0 is the bubble curve, "
                         f"1 the dew curve: use the envelope for those)", "beta")
    z = np.asarray(z, dtype=float)
    nc = len(z)
    iT, iP = nc, nc + 1
    T_min = float(envelope.T[0] if T_min is None else T_min)
    X, total_it = _start(model, z, envelope, beta, tol)
    ref = int(np.argmax(np.abs(X[:nc])))
    sign0 = np.sign(X[ref])
    F, J, *_ = quality_residual(model, z, X, beta)
    s = iT
    dX = _sens(J, s)
    if dX[iT] < 0:
        dX = -dX
    pts, sens = [X.copy()], [dX.copy()]
    dS = 0.02
    reason, reached = "", False
    while len(pts) < max_points:
        s_new = int(np.argmax(np.abs(dX)))
        if s_new != s:
            dX = dX / dX[s_new]
            s = s_new
        if len(pts) == 1:
            direction = 1.0 if dX[iT] > 0 else -1.0  # start by warming
        else:
            direction = 1.0 if float(dX @ (X - pts[-2])) > 0 else -1.0
        step = min(abs(dS), 0.08 / max(float(np.max(np.abs(dX))), 1e-12))
        # the end: land ln K_ref exactly on lnK_end instead of stepping past it
        Xp = X + direction * step * dX
        last = np.sign(Xp[ref]) != sign0 or abs(Xp[ref]) <= lnK_end
        if last and dX[ref] != 0.0:
            step = abs((abs(X[ref]) - lnK_end) / dX[ref])
        ok = False
        for _ in range(12):
            Xp = X + direction * step * dX
            spec, val = (ref, sign0 * lnK_end) if last else (s, Xp[s])
            try:
                Xn, it = solve_quality_point(model, z, beta, Xp, spec, val, tol)
            except ConvergenceError:
                step *= 0.5
                last = False
                continue
            if (float(np.max(np.abs(Xn[:nc]))) < 1e-6 or np.sign(Xn[ref]) != sign0
                    or abs(Xn[iT] - X[iT]) > 0.3 or abs(Xn[iP] - X[iP]) > 0.5):
                step *= 0.5
                last = False
                continue
            ok = True
            break
        if not ok:
            reason = (f"continuation failed after T = {np.exp(X[iT]):.3f} K, p = {np.exp(X[iP]) / 1e5:.3f} bar: "
                      f"the line does not reach a critical point")
            break
        total_it += it
        F, J, *_ = quality_residual(model, z, Xn, beta)
        dXn = _sens(J, s)
        if float(dXn @ (Xn - X)) < 0:
            dXn = -dXn
        Tn, Pn = np.exp(Xn[iT]), np.exp(Xn[iP])
        if Tn < T_min - 1e-9:
            reason = f"the line turns back below the lowest temperature {T_min:.3f} K before a critical point"
            break
        if Pn > p_max:
            reason = (f"the line rises past {p_max / 1e6:.0f} MPa at T = {Tn:.2f} K without reaching a critical "
                      f"point (open envelope)")
            break
        pts.append(Xn.copy())
        sens.append(dXn.copy())
        X, dX = Xn, dXn
        if last or abs(Xn[ref]) <= lnK_end * (1.0 + 1e-9):
            reached = True
            break
        dS = step * (1.5 if it <= 3 else (0.7 if it >= 6 else 1.0))
    else:
        reason = f"stopped after {max_points} points before reaching the critical point"
    Xs = np.array(pts)
    estimate = None
    crit = envelope.critical if critical is None else critical
    if reached and len(pts) >= 2:
        d0 = _sens(quality_residual(model, z, pts[-2], beta)[1], ref)
        d1 = _sens(quality_residual(model, z, pts[-1], beta)[1], ref)
        estimate = _hermite_zero(pts[-2], d0, pts[-1], d1, ref, iT, iP)
    ends = bool(reached and crit is not None)
    if reached and crit is None:
        reason = "ln K fell to the critical end, but the envelope has no critical point to close the line on"
    if ends:
        reason = (f"traced from {np.exp(Xs[0, iT]):.3f} K to max|ln K| = {lnK_end:g}, closed on the envelope's "
                  f"critical point")
    T, P = np.exp(Xs[:, iT]), np.exp(Xs[:, iP])
    lnK = Xs[:, :nc]
    K = np.exp(lnK)
    xl = z / (1.0 + beta * (K - 1.0))
    xl = xl / xl.sum(axis=1, keepdims=True)
    yv = K * xl
    yv = yv / yv.sum(axis=1, keepdims=True)
    solved = np.ones(len(T), dtype=bool)
    if ends:
        T, P = np.append(T, crit.T), np.append(P, crit.p)
        lnK = np.vstack([lnK, np.zeros(nc)])
        xl, yv = np.vstack([xl, z]), np.vstack([yv, z])
        solved = np.append(solved, False)
    rep = SolverReport(ends, total_it, 0.0, f"continuation at constant vapour fraction, {len(pts)} points")
    return QualityLine(beta, T, P, solved, lnK, xl, yv, crit, estimate, ends, reason, rep)
