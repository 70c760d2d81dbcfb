"""Bubble and dew points of a mixture (one point of the phase envelope): Newton in (ln K, ln T, ln p)
with one of them specified, to max residual 1e-12; the residual and its analytic Jacobian from the
cubic phase kernel. Used by the envelope tracer, the quality lines and the facade's bubble/dew points.

Reference: Michelsen, Fluid Phase Equilib. 4 (1980) 1-10 (phase envelope calculation).
"""
from __future__ import annotations

import math

import numpy as np

from ...errors import ConvergenceError
from .result import SolverReport
from .stability import solve_dense_many


def sat_residual(model, z, X, incipient_is_y, z_root, w_root):
    """Residuals and Jacobian of the saturation system (Michelsen 1980).

    F_i = ln K_i + ln phi_i(y) - ln phi_i(x), F_nc = sum(y - x). With ``incipient_is_y`` the feed
    is x and y = K z (bubble-type), else the feed is y and x = z/K (dew-type). Returns F (nc+1,),
    J (nc+1, nc+2), x, y (normalised), and the phase densities rho_x, rho_y [mol m-3].
    """
    F, J, x, y, rx, ry = _sat_lists(model, np.asarray(z, dtype=float).tolist(),
                                    np.asarray(X, dtype=float).tolist(), incipient_is_y, z_root, w_root)
    return np.array(F), np.array(J), np.array(x), np.array(y), rx, ry


def _phases(model, z, X, incipient_is_y, z_root, w_root):
    """The two phases of a bubble/dew point at X = (ln K, ln T, ln p): (nc, T, P, K, kernel, root labels
    rx, ry, unnormalised and normalised compositions; x and y sums Sx, Sy)."""
    nc = len(z)
    exp = math.exp
    T, P = exp(X[nc]), exp(X[nc + 1])
    K = [exp(v) for v in X[:nc]]
    kern = model.phase_kernel(T)
    if incipient_is_y:
        nx, ny = z, [k * zi for k, zi in zip(K, z)]
        rx, ry = z_root, w_root
    else:
        nx, ny = [zi / k for zi, k in zip(z, K)], z
        rx, ry = w_root, z_root
    Sx, Sy = sum(nx), sum(ny)
    return nc, T, P, K, kern, rx, ry, nx, ny, Sx, Sy, [v / Sx for v in nx], [v / Sy for v in ny]


def _sat_lists(model, z, X, incipient_is_y, z_root, w_root):
    """:func:`sat_residual` on lists of Python floats (F, J as lists; x, y lists; densities floats).

    Only the incipient phase's composition derivatives enter J; they are taken in factored form
    (``dn_parts``) and J assembled in one pass."""
    nc, T, P, K, kern, rx, ry, nx, ny, Sx, Sy, x, y = _phases(model, z, X, incipient_is_y, z_root, w_root)
    w = y if incipient_is_y else x
    if kern._lists is not None:
        feed, inc, rf, ri = (x, y, rx, ry) if incipient_is_y else (y, x, ry, rx)
        lpf, Vf, _, _, _, _, _, _, _, dTf, dPf = kern.dn_parts(feed, P, rf, True)
        lpi, Vi, b, u, wv, c, aij, Pv, q, dTi, dPi = kern.dn_parts(inc, P, ri, True)
        # J_ij = delta_ij + (n d ln phi_i/d n_j) w_j of the incipient phase
        J = [[(1.0 + bi * uj + bj * wi + c * aij_ + Pi * qj) * wj for uj, bj, aij_, qj, wj in zip(u, b, row, q, w)]
             for bi, wi, Pi, row in zip(b, wv, Pv, aij)]
        if incipient_is_y:
            lpx, dTx, dPx, Vx, lpy, dTy, dPy, Vy = lpf, dTf, dPf, Vf, lpi, dTi, dPi, Vi
        else:
            lpx, dTx, dPx, Vx, lpy, dTy, dPy, Vy = lpi, dTi, dPi, Vi, lpf, dTf, dPf, Vf
    else:
        lpx, dnx, dTx, dPx, Vx = kern.derivs_list(x, P, rx)
        lpy, dny, dTy, dPy, Vy = kern.derivs_list(y, P, ry)
        dm = dny if incipient_is_y else dnx
        J = [[dij * wj for dij, wj in zip(row, w)] for row in dm]
    F = [X[i] + lpy[i] - lpx[i] for i in range(nc)]
    F.append(Sy - Sx)
    for i in range(nc):
        row = J[i]
        row[i] += 1.0
        row.append(T * (dTy[i] - dTx[i]))
        row.append(P * (dPy[i] - dPx[i]))
    J.append(list(ny if incipient_is_y else nx) + [0.0, 0.0])
    return F, J, x, y, kern.density(x, Vx), kern.density(y, Vy)


def solve_sat_point(model, z, X0, spec_index, spec_value, incipient_is_y, z_root, w_root, tol=1e-12,
                    max_iter=30, max_step=None):
    """Newton solve of the saturation system with X[spec_index] = spec_value.

    Returns (X, x, y, rho_x, rho_y, iterations). Raises ConvergenceError.
    """
    X, x, y, rx, ry, it, _ = _solve_sat_lists(model, np.asarray(z, dtype=float).tolist(),
                                              np.asarray(X0, dtype=float).tolist(), spec_index, float(spec_value),
                                              incipient_is_y, z_root, w_root, tol, max_iter, max_step)
    return np.array(X), np.array(x), np.array(y), rx, ry, it


def _sat_F_lists(model, z, X, incipient_is_y, z_root, w_root):
    """The residuals F of :func:`_sat_lists` alone (ln phi without derivatives), with x, y and the densities."""
    nc, T, P, K, kern, rx, ry, nx, ny, Sx, Sy, x, y = _phases(model, z, X, incipient_is_y, z_root, w_root)
    lpx, Zx, _ = kern.ln_phi_list(x, P, rx)
    lpy, Zy, _ = kern.ln_phi_list(y, P, ry)
    F = [X[i] + lpy[i] - lpx[i] for i in range(nc)]
    F.append(Sy - Sx)
    RT = kern.RT
    return F, x, y, kern.density(x, Zx * RT / P), kern.density(y, Zy * RT / P)


CHECK_ONLY_BELOW = 1e-6  # [-] a Newton step from a residual below this is checked with ln phi alone (speed setting)


def _solve_sat_lists(model, z, X, spec_index, spec_value, incipient_is_y, z_root, w_root, tol=1e-12,
                     max_iter=30, max_step=None, sens=False):
    """:func:`solve_sat_point` on lists. With ``sens`` it also returns the sensitivities dX/dX_s along
    the curve (J dX = 0, dX_s = 1), solved with the same elimination as the Newton step, from the last
    Jacobian evaluated (at the returned X, or at the Newton iterate before it when the returned point
    was only checked or when the start already met ``tol``).

    After a step taken from a residual below ``CHECK_ONLY_BELOW`` the new point is first checked with
    ln phi alone (its residual is then expected below ``tol``); if the check fails the full evaluation
    follows at the same point, so the iterates and the iteration count are those of plain Newton."""
    nc = len(z)
    X = list(X)
    X[spec_index] = spec_value
    free = [i for i in range(nc + 2) if i != spec_index]
    res = math.inf
    dX = None
    check_only = False
    for it in range(1, max_iter + 1):
        try:
            if check_only and it > 1:
                F, x, y, rx, ry = _sat_F_lists(model, z, X, incipient_is_y, z_root, w_root)
                if max([abs(v) for v in F]) < tol:
                    return X, x, y, rx, ry, it, dX
            F, J, x, y, rx, ry = _sat_lists(model, z, X, incipient_is_y, z_root, w_root)
        except (ArithmeticError, ValueError, FloatingPointError):
            raise ConvergenceError("saturation point: no volume root on the way",
                                   SolverReport(False, it, float(res), "Newton (ln K, ln T, ln p)"))
        res = max([abs(v) for v in F])
        if not res < math.inf:  # NaN or inf residual: the Newton step would be meaningless
            break
        Jf = [[row[i] for i in free] for row in J]
        done = res < tol and it > 1
        rhs = [] if done else [[-v for v in F]]
        if sens:
            rhs.append([-row[spec_index] for row in J])
        try:
            sol = solve_dense_many(Jf, rhs) if rhs else []
        except ZeroDivisionError:
            if done:
                return X, x, y, rx, ry, it, None
            break
        if sens:
            dX = [1.0] * (nc + 2)
            for k, i in enumerate(free):
                dX[i] = sol[-1][k]
        if done:
            return X, x, y, rx, ry, it, dX
        d = sol[0]
        if max_step is not None:
            m = max([abs(v) for v in d])
            if m > max_step:
                f = max_step / m
                d = [v * f for v in d]
        for k, i in enumerate(free):
            X[i] += d[k]
        if not all(math.isfinite(v) for v in X):
            break
        if res < tol:  # converged before the step (first evaluation): x, y, densities of the start
            return X, x, y, rx, ry, it, dX
        check_only = res < CHECK_ONLY_BELOW and (max_step is None or m <= max_step)
    raise ConvergenceError("saturation point did not converge",
                           SolverReport(False, max_iter, float(res), "Newton (ln K, ln T, ln p)"))
