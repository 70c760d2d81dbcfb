"""Mixture critical point by the Heidemann-Khalil criteria for cubic models.

At fixed composition z, in (T, V): the matrix Q_ij = d2(A/RT)/dn_i dn_j (T, V) has a zero
eigenvalue (lambda_min = 0, eigenvector u), and the cubic form C = d3(A/RT)/ds3 along n + s u is zero.
Q is analytic (residual part from Michelsen & Mollerup ch. 3, ideal part delta_ij / n_i); C is
the central difference of u'Q(n + s u)u in s. Both equations are solved by Newton in (T, ln V)
from a starting point (usually the envelope's interpolated critical point).

References: R. A. Heidemann, A. M. Khalil, AIChE J. 26 (1980) 769-779, doi:10.1002/aic.690260510;
M. L. Michelsen, R. A. Heidemann, AIChE J. 27 (1981) 521-523, doi:10.1002/aic.690270326.

Notes
-----
Converged when |lambda_min| < 1e-10 and |C| < 1e-8 (both dimensionless). Fails (ConvergenceError)
when started far from a critical point; the envelope's estimate is a good start.
"""
from __future__ import annotations

import math

import numpy as np

from ...errors import ConvergenceError
from ..models.cubic.phase_kernel import _volume_terms
from .result import SolverReport


def _Q(model, T, V, n):
    """d2(A/RT)/dn_i dn_j at (T, V) [mol-1] for mole numbers n (untranslated cubic)."""
    kern = model.phase_kernel(T)
    R, b = kern.R, kern.b
    N = float(n.sum())
    Bm = float(b @ n)
    D = float(n @ kern.aij @ n)
    Di = 2.0 * (kern.aij @ n)
    f, _, fB, _, _, fBB, _, _, gB, _, gBB, _ = _volume_terms(float(V), Bm, kern.d1, kern.d2, R)
    FnB = -gB
    FBD = -fB / T
    FBB = -N * gBB - D / T * fBB
    FD = -f / T
    Fij = FnB * (b[:, None] + b[None, :]) + FBD * (np.outer(b, Di) + np.outer(Di, b)) \
        + FBB * np.outer(b, b) + FD * 2.0 * kern.aij
    with np.errstate(divide="ignore"):
        return Fij + np.diag(1.0 / n)


def _criteria(model, T, V, z, eps=1e-4):
    Q = _Q(model, T, V, z)
    s = np.sqrt(z)
    Qs = Q * np.outer(s, s)  # scaled so that the ideal part is the identity (better conditioned)
    w, vec = np.linalg.eigh(Qs)
    lam = float(w[0])
    u = vec[:, 0] * s
    u = u / np.sqrt(float(u @ u))
    h = eps * float(np.min(z / np.maximum(np.abs(u), 1e-300)))
    h = min(h, eps)
    qp = float(u @ _Q(model, T, V, z + h * u) @ u)
    qm = float(u @ _Q(model, T, V, z - h * u) @ u)
    C = (qp - qm) / (2.0 * h)
    return lam, C


def critical_point_hk(model, z, T0, p0, tol_lam=1e-10, max_iter=50):
    """Critical (T [K], p [Pa], rho [mol m-3]) of composition z, Newton from (T0, p0).

    Raises
    ------
    ConvergenceError
        Newton did not converge (report attached).
    """
    z = np.asarray(z, dtype=float)
    kern = model.phase_kernel(T0)
    Z = kern.ln_phi(z, p0, "stable")[1]
    T, lnV = float(T0), float(np.log(Z * kern.RT / p0))
    lnB = math.log(float(kern.b @ z))  # the volume stays above the co-volume B (b does not depend on T)
    res = np.inf
    for it in range(1, max_iter + 1):
        F = np.array(_criteria(model, T, np.exp(lnV), z))
        res = float(np.max(np.abs(F)))
        if abs(F[0]) < tol_lam and abs(F[1]) < 1e-8 * max(1.0, abs(F[1]) * 0 + 1.0):
            break
        dT, dv = 1e-5 * T, 1e-7
        J = np.empty((2, 2))
        J[:, 0] = (np.array(_criteria(model, T + dT, np.exp(lnV), z)) - F) / dT
        J[:, 1] = (np.array(_criteria(model, T, np.exp(lnV + dv), z)) - F) / dv
        try:
            d = np.linalg.solve(J, -F)
        except np.linalg.LinAlgError:
            break
        d[0] = np.clip(d[0], -0.1 * T, 0.1 * T)
        d[1] = np.clip(d[1], -0.3, 0.3)
        T += d[0]
        # a step to or below the co-volume (no fluid there) goes halfway to it instead
        lnV = lnV + d[1] if lnV + d[1] > lnB + 1e-6 else 0.5 * (lnV + lnB + 1e-6)
        if abs(d[0]) < 1e-10 * T and abs(d[1]) < 1e-12:
            F = np.array(_criteria(model, T, np.exp(lnV), z))
            res = float(np.max(np.abs(F)))
            break
    else:
        raise ConvergenceError("mixture critical point (Heidemann-Khalil) did not converge",
                               SolverReport(False, max_iter, res, "Heidemann-Khalil Newton in (T, ln V)"))
    if not (abs(F[0]) < 1e-7 and abs(F[1]) < 1e-4):
        raise ConvergenceError("mixture critical point (Heidemann-Khalil) did not converge",
                               SolverReport(False, it, res, "Heidemann-Khalil Newton in (T, ln V)"))
    V = float(np.exp(lnV))
    k = model.phase_kernel(T)
    Bm, a = float(k.b @ z), float(z @ k.aij @ z)
    p = k.RT / (V - Bm) - a / ((V + k.d1 * Bm) * (V + k.d2 * Bm))
    return T, float(p), k.density(z, V), SolverReport(True, it, res, "Heidemann-Khalil Newton in (T, ln V)")
