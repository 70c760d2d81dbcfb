"""Density roots at given (T, p, x), and the stable one.

Models with a closed-form density (cubics, virial, ideal gas) supply ``density_roots``; for the
others (multiparameter Helmholtz equations) this module scans p(rho) on a grid that is dense near
the model's critical density, brackets every sign change of p(rho) - p and refines it by a
vectorised Illinois (regula falsi) iteration. Only mechanically stable roots (dp/drho > 0) are kept.

Notes
-----
Tolerance: |p(rho) - p| <= 1e-12 p (refined roots). Known failure region: two roots closer than
the grid spacing near the critical point are found only where the grid is dense (|rho/rho_c - 1|
> 1e-6); the Gibbs choice then still returns the stable root of those found.
"""
from __future__ import annotations

import numpy as np

from ...errors import ConvergenceError, InputError
from ..properties import dp_drho, pressure, reduced_gibbs_residual
from .result import SolverReport


def check_Tp(T, p):
    """Raise InputError for non-physical T or p (non-positive or not finite)."""
    T, p = np.asarray(T, dtype=float), np.asarray(p, dtype=float)
    if not np.all(np.isfinite(T)) or np.any(T <= 0):
        raise InputError(f"temperature must be a finite positive number of kelvin; got {_first_bad(T, T > 0)} K",
                         "T")
    if not np.all(np.isfinite(p)) or np.any(p <= 0):
        raise InputError(f"pressure must be a finite positive absolute pressure; got {_first_bad(p, p > 0)} Pa", "p")


def _first_bad(a, ok):
    a = np.ravel(a)
    ok = np.ravel(ok) & np.isfinite(a)
    return a[np.argmin(ok)] if a.size else a


def density_roots(model, T, p, x, rho_c=None):
    """Every mechanically stable density root [mol m-3], ascending, NaN-padded; shape (..., k)."""
    if hasattr(model, "density_roots"):
        roots = model.density_roots(T, p, x)
    else:
        roots = _scan_roots(model, T, p, x, rho_c)
    if roots.shape[-1] > 1:
        ok = np.isfinite(roots)
        safe = np.where(ok, roots, 1.0)
        Tb = np.broadcast_to(np.asarray(T, dtype=float)[..., None], roots.shape)
        xb = np.broadcast_to(np.asarray(x, dtype=float)[..., None, :], roots.shape + (np.shape(x)[-1],))
        stable = dp_drho(model, Tb, safe, xb) > 0
        roots = np.where(ok & stable, roots, np.nan)
    return roots


def stable_density(model, T, p, x, rho_c=None):
    """The density root with the lowest Gibbs energy [mol m-3], shape (...).

    Raises
    ------
    ConvergenceError
        If no stable root exists (only possible for models with a restricted range).
    """
    roots = density_roots(model, T, p, x, rho_c)
    if roots.shape[-1] == 1:
        rho = roots[..., 0]
    else:
        ok = np.isfinite(roots)
        Tb = np.broadcast_to(np.asarray(T, dtype=float)[..., None], roots.shape)
        xb = np.broadcast_to(np.asarray(x, dtype=float)[..., None, :], roots.shape + (np.shape(x)[-1],))
        g = np.where(ok, reduced_gibbs_residual(model, Tb, np.where(ok, roots, 1.0), xb), np.inf)
        # ties (exactly on the saturation line) go to the denser root
        g = g - 1e-15 * np.arange(roots.shape[-1])
        idx = np.argmin(g, axis=-1)
        rho = np.take_along_axis(roots, idx[..., None], axis=-1)[..., 0]
    if not np.all(np.isfinite(rho)):
        rep = SolverReport(False, 0, float("nan"), "density root search")
        raise ConvergenceError(f"{model.name}: no stable density root found at some (T, p)", rep)
    return rho


def _scan_roots(model, T, p, x, rho_c=None, n_grid=160, max_iter=200):
    T, p = np.broadcast_arrays(np.asarray(T, dtype=float), np.asarray(p, dtype=float))
    shape = T.shape
    x = np.broadcast_to(np.asarray(x, dtype=float), shape + (np.shape(x)[-1],))
    R = model.R(x)
    rmax = 0.999 * model.max_density(x)
    rlo = 1e-4 * p / (R * T)
    t = np.linspace(0.0, 1.0, n_grid)
    grid = np.exp(np.log(rlo)[..., None] + t * (np.log(rmax) - np.log(rlo))[..., None])
    if rho_c is not None:
        off = np.concatenate([-np.logspace(-6, -0.3, 30), np.logspace(-6, -0.3, 30)])
        extra = np.broadcast_to(rho_c * (1.0 + off), shape + off.shape)
        grid = np.sort(np.concatenate([grid, extra], axis=-1), axis=-1)
    k = grid.shape[-1]
    Tg = np.broadcast_to(T[..., None], grid.shape)
    xg = np.broadcast_to(x[..., None, :], grid.shape + (x.shape[-1],))
    f = pressure(model, Tg, grid, xg) / p[..., None] - 1.0
    sign_change = (f[..., :-1] * f[..., 1:] <= 0) & np.isfinite(f[..., :-1]) & np.isfinite(f[..., 1:])
    nroot = max(1, int(sign_change.sum(axis=-1).max()) if sign_change.size else 1)
    # gather brackets, at most nroot per state
    order = np.argsort(~sign_change, axis=-1, kind="stable")[..., :nroot]
    has = np.take_along_axis(sign_change, order, axis=-1)
    a = np.take_along_axis(grid[..., :-1], order, axis=-1)
    b = np.take_along_axis(grid[..., 1:], order, axis=-1)
    fa = np.take_along_axis(f[..., :-1], order, axis=-1)
    fb = np.take_along_axis(f[..., 1:], order, axis=-1)
    Tb = np.broadcast_to(T[..., None], a.shape)
    pb = np.broadcast_to(p[..., None], a.shape)
    xb = np.broadcast_to(x[..., None, :], a.shape + (x.shape[-1],))
    side = np.zeros(a.shape)
    for it in range(max_iter):
        c = np.where(has, (a * fb - b * fa) / np.where(fb != fa, fb - fa, 1.0), a)
        c = np.where((c > np.minimum(a, b)) & (c < np.maximum(a, b)), c, 0.5 * (a + b))
        fc = pressure(model, Tb, c, xb) / pb - 1.0
        left = fa * fc < 0  # root in [a, c]
        # Illinois modification: halve the retained end's f when the same side is kept twice
        b_new, fb_new = np.where(left, c, b), np.where(left, fc, fb)
        a_new, fa_new = np.where(left, a, c), np.where(left, fa, fc)
        fa_new = np.where(left & (side == 1), 0.5 * fa_new, fa_new)
        fb_new = np.where(~left & (side == -1), 0.5 * fb_new, fb_new)
        side = np.where(left, 1, -1)
        a, b, fa, fb = a_new, b_new, fa_new, fb_new
        done = (np.abs(fc) <= 1e-13) | (np.abs(b - a) <= 1e-14 * np.abs(c)) | ~has
        if np.all(done):
            break
    else:
        rep = SolverReport(False, max_iter, float(np.nanmax(np.abs(fc))), "density scan + Illinois")
        raise ConvergenceError(f"{model.name}: density root refinement did not converge", rep)
    return np.sort(np.where(has, c, np.nan), axis=-1)
