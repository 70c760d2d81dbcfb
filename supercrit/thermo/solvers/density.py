"""Density roots at given (T, p, x), and the stable one.

Models with a closed-form density (cubics, virial, ideal gas) supply ``density_roots``. For the
others (multiparameter Helmholtz equations) two methods are used:

* Pure-fluid models with published ancillary equations (``saturation_guess`` and
  ``saturation_pressure_guess``, e.g. Span-Wagner CO2) are solved branch by branch, all states
  at once: below Tc the ancillary vapour pressure decides which branch is wanted (the vapour
  branch for p < 1.2 psat, the liquid branch for p > 0.8 psat, both in between so that the Gibbs
  choice and the flash solvers see the metastable root too). The vapour root is found by Newton in
  (ln rho, ln p) from the ideal-gas density (Z < 1 below Tc puts it left of the root, and ln p is
  concave in ln rho on the vapour branch, so the iterates rise monotonically to the root); the
  liquid root by Newton in (rho, p) from the ancillary liquid density (p is convex in rho on the
  liquid branch: after at most one overshoot the iterates fall monotonically to the root). At and
  above Tc a Newton-bisection hybrid in ln rho on the bracket (ideal-gas limit, max density) is used.
  Every root is checked (dp/drho > 0, right side of rho_c); states that fail, and states within
  0.01 K below Tc where the ancillaries lose their meaning, go to the grid scan below.
* Otherwise p(rho) is scanned on a grid that is dense near the model's critical density, every
  sign change of p(rho) - p is bracketed and refined by a vectorised Illinois (regula falsi)
  iteration.

Only mechanically stable roots (dp/drho > 0) are kept.

Notes
-----
Tolerance: |p(rho)/p - 1| <= 1e-13 or a relative density step <= 1e-14 (branch Newton), |p(rho) -
p| <= 1e-13 p (grid). Known failure region of the grid scan: two roots closer than the grid spacing
near the critical point are found only where the grid is dense (|rho/rho_c - 1| > 1e-6); the Gibbs
choice then still returns the stable root of those found.
"""
from __future__ import annotations

import math

import numpy as np

from ...errors import ConvergenceError, InputError, SupercritError
from ..properties import BLOCK, dp_drho, pressure, reduced_gibbs_residual
from .result import SolverReport


def check_Tp(T, p):
    """Raise InputError for non-physical T or p (non-positive or not finite)."""
    if np.ndim(T) == 0 and np.ndim(p) == 0:
        t, q = float(T), float(p)
        if math.isfinite(t) and t > 0 and math.isfinite(q) and q > 0:
            return
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
    if roots.shape[-1] > 1 and not getattr(model, "roots_are_stable", False):
        ok = np.isfinite(roots)
        Tb = np.broadcast_to(np.asarray(T, dtype=float)[..., None], roots.shape)
        xb = np.broadcast_to(np.asarray(x, dtype=float)[..., None, :], roots.shape + (np.shape(x)[-1],))
        stable = np.zeros(roots.shape, dtype=bool)
        stable[ok] = dp_drho(model, Tb[ok], roots[ok], xb[ok]) > 0  # only where a root was found
        roots = np.where(ok & stable, roots, np.nan)
    return roots


def stable_density(model, T, p, x, rho_c=None):
    """The density root with the lowest Gibbs energy [mol m-3], shape (...).

    Raises
    ------
    ConvergenceError
        If no stable root exists (only possible for models with a restricted range).
    """
    if np.ndim(T) == 0 and np.ndim(p) == 0 and np.ndim(x) == 1 and hasattr(model, "alphar_derivs_scalar"):
        xt = tuple(np.asarray(x, dtype=float).tolist())
        if hasattr(model, "density_roots_scalar"):
            rho = _stable_density_scalar(model, float(T), float(p), xt)
        elif hasattr(model, "saturation_pressure_guess") and len(xt) == 1:
            rho = _branch_density_scalar(model, float(T), float(p), xt)
        else:
            rho = None
        if rho is not None:
            return np.asarray(rho)
    if hasattr(model, "density_roots"):  # closed-form roots, element by element: block by block
        shape = np.broadcast_shapes(np.shape(T), np.shape(p), np.shape(x)[:-1])
        n = math.prod(shape)
        if n > BLOCK:
            nc = np.shape(x)[-1]
            Tf = np.broadcast_to(np.asarray(T, dtype=float), shape).reshape(-1)
            pf = np.broadcast_to(np.asarray(p, dtype=float), shape).reshape(-1)
            xf = np.broadcast_to(np.asarray(x, dtype=float), shape + (nc,)).reshape(-1, nc)
            rho = np.empty(n)
            for i in range(0, n, BLOCK):
                rho[i:i + BLOCK] = stable_density(model, Tf[i:i + BLOCK], pf[i:i + BLOCK], xf[i:i + BLOCK], rho_c)
            return rho.reshape(shape)
    roots = density_roots(model, T, p, x, rho_c)
    if roots.shape[-1] == 1:
        rho = roots[..., 0]
    else:
        ok = np.isfinite(roots)
        nroot = ok.sum(axis=-1)
        # roots come ascending, NaN-padded: where at most one was found it is in the first slot
        rho = roots[..., 0].copy()
        many = nroot > 1
        if np.any(many):
            # the Gibbs energy is needed only where more than one root was found
            k = roots.shape[-1]
            sub, oks = roots[many], ok[many]
            Ts = np.broadcast_to(np.asarray(T, dtype=float), nroot.shape)[many]
            xs = np.broadcast_to(np.asarray(x, dtype=float), nroot.shape + (np.shape(x)[-1],))[many]
            Tb = np.broadcast_to(Ts[:, None], sub.shape)
            xb = np.broadcast_to(xs[:, None, :], sub.shape + (xs.shape[-1],))
            g = np.full(sub.shape, np.inf)
            g[oks] = reduced_gibbs_residual(model, Tb[oks], sub[oks], xb[oks])
            # ties (exactly on the saturation line) go to the denser root
            g = g - 1e-15 * np.arange(k)
            idx = np.argmin(g, axis=-1)
            rho[many] = np.take_along_axis(sub, idx[:, None], axis=-1)[:, 0]
    if not np.all(np.isfinite(rho)):
        rep = SolverReport(False, 0, float("nan"), "density root search")
        raise ConvergenceError(f"{model.name}: no stable density root found at some (T, p)", rep)
    return rho


def _stable_density_scalar(model, T: float, p: float, x: tuple):
    """:func:`stable_density` of one state with the model's scalar hooks (same root filter, Gibbs choice
    and tie rule as the array path); None where the array path must decide (no root, or a domain error)."""
    r = _stable_density_derivs_scalar(model, T, p, x)
    return None if r is None else r[0]


def _stable_density_derivs_scalar(model, T: float, p: float, x: tuple):
    """(rho [mol m-3], A_ij tuple or None) of the stable root of one state, as
    :func:`_stable_density_scalar`; the alpha_r derivatives at the chosen root are returned where the
    Gibbs choice (or the stability check) already evaluated them, else None. None where the array path
    must decide."""
    try:
        if hasattr(model, "density_roots_derivs_scalar") and getattr(model, "roots_are_stable", False):
            # the model's roots with their A_ij: the same roots, and the same Gibbs choice and tie rule
            # as below on the same numbers, without a second evaluation at the chosen root
            found = model.density_roots_derivs_scalar(T, p, x)
            if len(found) == 1:
                return found[0]
            best, g_best = None, float("inf")
            log1p = math.log1p
            for k, (r, d) in enumerate(found):
                g = (d[0] + d[2] - log1p(d[2])) - 1e-15 * k
                if g < g_best:
                    best, g_best = k, g
            return None if best is None else found[best]
        roots = model.density_roots_scalar(T, p, x)
        derivs = [None] * len(roots)
        if len(roots) > 1 and not getattr(model, "roots_are_stable", False):
            R = float(model.gas_constant)
            for k, r in enumerate(roots):
                if r == r:
                    d = derivs[k] = model.alphar_derivs_scalar(T, r, x)
                    if not R * T * (1.0 + 2.0 * d[2] + d[5]) > 0:
                        roots[k] = float("nan")
        ok = [k for k, r in enumerate(roots) if r == r]
        if not ok:
            return None
        if len(ok) == 1:
            return roots[ok[0]], derivs[ok[0]]
        best, g_best = None, float("inf")
        log1p = math.log1p
        for k in ok:
            d = derivs[k]
            if d is None:
                d = derivs[k] = model.alphar_derivs_scalar(T, roots[k], x)
            g = (d[0] + d[2] - log1p(d[2])) - 1e-15 * k
            if g < g_best:
                best, g_best = k, g
        if best is None:
            return None
        return roots[best], derivs[best]
    except (ArithmeticError, ValueError):
        return None


#: how far from the ancillary vapour pressure [relative] and from Tc [K] a subcritical (T, p) must lie for
#: its side of the saturation line to be certain without an exact saturation solve: a safety margin of our
#: choice, over 100 times the largest deviation of the Span-Wagner ancillary vapour pressure from the
#: equation's own (0.0042 %, measured against CoolProp 8.0.0 in tests/thermo/test_span_wagner.py)
ANCILLARY_P_MARGIN, ANCILLARY_T_MARGIN = 0.005, 0.5


def ancillary_side(model, T: float, p: float) -> str | None:
    """'liquid' or 'vapor': the side of the saturation line of a pure fluid with ancillary saturation
    equations (reference EOS) on which (T, p) lies below Tc, when p is at least ``ANCILLARY_P_MARGIN``
    above or below the ancillary vapour pressure; None where that is not certain (within the margin,
    within ``ANCILLARY_T_MARGIN`` of Tc, or a model without ancillary equations)."""
    guess_p = getattr(model, "saturation_pressure_guess", None)
    if guess_p is None or T > model.critical_point().T - ANCILLARY_T_MARGIN:
        return None
    ps = float(guess_p(T))
    if p >= (1.0 + ANCILLARY_P_MARGIN) * ps:
        return "liquid"
    if p <= (1.0 - ANCILLARY_P_MARGIN) * ps:
        return "vapor"
    return None


def _branch_density_scalar(model, T: float, p: float, x: tuple):
    """The stable density of one state of a pure fluid with ancillary saturation equations (reference
    EOS), by the branch Newton iterations of the array path in Python floats; None where the array
    path must decide (within 0.5 % of the ancillary vapour pressure or 0.5 K of Tc, no convergence).

    Above Tc: the one root, Newton-bisection in ln rho split at the critical density (concave below,
    started from the ideal gas; convex above, started from the dense end). Below Tc: p at least 0.5 %
    above the ancillary vapour pressure - the liquid root, Newton from the ancillary liquid density;
    at least 0.5 % below - the vapour root, Newton in (ln rho, ln p) from the ideal gas. On the chosen
    side of the saturation line that root is the stable one.
    """
    crit = model.critical_point()
    R = float(model.gas_constant)
    RT = R * T
    scal = model.alphar_derivs_scalar

    def pd(r):
        d = scal(T, r, x)
        return r * RT * (1.0 + d[2]), RT * (1.0 + 2.0 * d[2] + d[5])

    try:
        if T < crit.T:
            side = ancillary_side(model, T, p)
            if side is None:
                return None
            if side == "liquid":  # liquid branch, convex: Newton from the saturated liquid
                r = float(model.saturation_guess(T)[0])
                rmax = float(model.max_density(np.asarray(x))[()])
                for _ in range(60):
                    pr, dp = pd(r)
                    if not (dp > 0 and r > crit.rho):
                        return None
                    F = pr - p
                    step = -F / dp
                    if abs(F) <= 1e-13 * p or abs(step) <= 1e-14 * r:
                        return r
                    r = min(max(r + step, crit.rho), rmax)
                return None
            if side == "vapor":  # vapour branch, concave: Newton in (ln rho, ln p) from the ideal gas
                lr = math.log(p / RT)
                lrc = math.log(crit.rho)
                for _ in range(60):
                    r = math.exp(lr)
                    pr, dp = pd(r)
                    if not (pr > 0 and dp > 0 and r < crit.rho):
                        return None
                    F = math.log(pr / p)
                    step = -F * pr / (r * dp)
                    if abs(F) <= 1e-13 or abs(step) <= 1e-14:
                        return r
                    lr = min(lr + step, lrc)
                return None
            return None
        rmax = float(model.max_density(np.asarray(x))[()])
        p_hi, _ = pd(rmax)
        if not p_hi > p:
            return None
        p_c, _ = pd(crit.rho)
        lrc = math.log(crit.rho)
        if p > p_c:
            lo, hi = lrc, math.log(rmax)
            frac = min(max(math.log(p / p_c) / math.log(max(p_hi, p_c * (1 + 1e-12)) / p_c), 0.0), 1.0)
            lx = lrc + (hi - lrc) * frac
        else:
            lo, hi = math.log(1e-3 * p / RT), lrc
            lx = min(max(math.log(p / RT), lo), lrc)
        for _ in range(200):
            r = math.exp(lx)
            pr, dp = pd(r)
            F = math.log(max(pr, 1e-300) / p)
            if F < 0:
                lo = lx
            elif F > 0:
                hi = lx
            step = -F * pr / (r * dp) if dp > 0 else float("nan")
            if abs(F) <= 1e-13 or abs(step) <= 1e-14 or hi - lo <= 1e-14:
                return r
            new = lx + step
            lx = new if (lo < new < hi and math.isfinite(new)) else 0.5 * (lo + hi)
        return None
    except (ArithmeticError, ValueError, SupercritError):
        return None


def _scan_roots(model, T, p, x, rho_c=None, n_grid=160, max_iter=200):
    """Mechanically stable density roots [mol m-3], ascending, NaN-padded; shape (..., k)."""
    if hasattr(model, "saturation_guess") and hasattr(model, "saturation_pressure_guess") \
            and len(getattr(model, "components", ())) == 1:
        return _branch_roots(model, T, p, x, rho_c, n_grid, max_iter)
    return _grid_roots(model, T, p, x, rho_c, n_grid, max_iter)


def _p_dpdrho(model, T, rho, x):
    """p [Pa] and (dp/drho)_T [Pa m3 mol-1] from one evaluation of the alpha_r derivatives."""
    d = model.alphar_derivs(T, rho, x)
    RT = model.R(x) * T
    return rho * RT * (1.0 + d.A01), RT * (1.0 + 2.0 * d.A01 + d.A02)


def _newton_vapor(model, T, p, x, rho0, rho_c, max_iter=60):
    """Vapour-branch root by Newton in (ln rho, ln p) from the left; NaN where there is none."""
    lr = np.log(rho0)
    rho = rho0.copy()
    act = np.arange(T.size)
    ok = np.zeros(T.size, dtype=bool)
    for _ in range(max_iter):
        if act.size == 0:
            break
        r = np.exp(lr[act])
        pr, dp = _p_dpdrho(model, T[act], r, x[act])
        good = (pr > 0) & (dp > 0) & (r < rho_c)
        F = np.log(np.where(good, pr, 1.0) / p[act])
        step = -F * pr / np.where(good, r * dp, 1.0)
        conv = good & ((np.abs(F) <= 1e-13) | (np.abs(step) <= 1e-14))
        rho[act] = r
        ok[act[conv]] = True
        lr[act] = np.minimum(lr[act] + np.where(good, step, 0.0), np.log(rho_c))
        act = act[good & ~conv]
    rho = np.where(ok, rho, np.nan)
    return rho


def _newton_liquid(model, T, p, x, rho0, rho_c, rmax, max_iter=60):
    """Liquid-branch root by Newton in (rho, p) from the ancillary liquid density; NaN where none."""
    rho = rho0.copy()
    act = np.arange(T.size)
    ok = np.zeros(T.size, dtype=bool)
    for _ in range(max_iter):
        if act.size == 0:
            break
        r = rho[act]
        pr, dp = _p_dpdrho(model, T[act], r, x[act])
        good = (dp > 0) & (r > rho_c)
        F = pr - p[act]
        step = -F / np.where(good, dp, 1.0)
        conv = good & ((np.abs(F) <= 1e-13 * p[act]) | (np.abs(step) <= 1e-14 * r))
        ok[act[conv]] = True
        new = np.clip(r + np.where(good, step, 0.0), rho_c, rmax[act])
        # at the density bound with p still too high: the state is beyond the model's range
        good &= ~((new == rmax[act]) & (r == rmax[act]))
        rho[act] = np.where(conv, r, new)
        act = act[good & ~conv]
    return np.where(ok, rho, np.nan)


def _hybrid_single(model, T, p, x, rmax, max_iter=200):
    """The one root at and above Tc: Newton-bisection in ln rho on (ideal-gas limit, rmax); NaN if none."""
    R = model.R(x)
    crit = model.critical_point()
    lo = np.log(1e-3 * p / (R * T))
    hi = np.log(rmax)
    p_hi, _ = _p_dpdrho(model, T, rmax, x)
    has = p_hi > p
    # split at the critical density: concave part below (start from the ideal gas), convex above
    # (start from the dense end, where Newton on a convex function descends monotonically)
    p_c, _ = _p_dpdrho(model, T, np.full(T.shape, crit.rho), x)
    dense = p > p_c
    lo = np.where(dense, np.log(crit.rho), lo)
    hi = np.where(dense, hi, np.log(crit.rho))
    gas_start = np.clip(np.log(p / (R * T)), lo, np.log(crit.rho))
    lx = np.where(dense, np.log(crit.rho) + (hi - np.log(crit.rho)) * np.clip(
        np.log(p / p_c) / np.log(np.maximum(p_hi, p_c * (1 + 1e-12)) / p_c), 0.0, 1.0), gas_start)
    out = np.full(T.size, np.nan)
    act = np.nonzero(has)[0]
    for _ in range(max_iter):
        if act.size == 0:
            break
        r = np.exp(lx[act])
        pr, dp = _p_dpdrho(model, T[act], r, x[act])
        F = np.log(np.maximum(pr, 1e-300) / p[act])
        lo[act] = np.where(F < 0, lx[act], lo[act])
        hi[act] = np.where(F > 0, lx[act], hi[act])
        step = np.where(dp > 0, -F * pr / np.where(dp > 0, r * dp, 1.0), np.nan)
        conv = (np.abs(F) <= 1e-13) | (np.abs(step) <= 1e-14) | (hi[act] - lo[act] <= 1e-14)
        out[act[conv]] = r[conv]
        new = lx[act] + step
        inside = (new > lo[act]) & (new < hi[act]) & np.isfinite(new)
        lx[act] = np.where(inside, new, 0.5 * (lo[act] + hi[act]))
        act = act[~conv]
    return out


def _branch_roots(model, T, p, x, rho_c, n_grid, max_iter):
    """Vapour and liquid roots by branch Newton (module notes), shape (..., 2); grid scan where needed."""
    T, p = np.broadcast_arrays(np.asarray(T, dtype=float), np.asarray(p, dtype=float))
    shape = T.shape
    nc = np.shape(x)[-1]
    xf = np.broadcast_to(np.asarray(x, dtype=float), shape + (nc,)).reshape(-1, nc)
    Tf, pf = T.ravel(), p.ravel()
    crit = model.critical_point()
    rc = crit.rho if rho_c is None else rho_c
    R = model.R(xf)
    # bracket end a little beyond the densest valid state (max_density is itself a valid state, on the
    # melting line at the highest pressure), so that states on the edge of the range are found
    rmax = 1.02 * model.max_density(xf)
    out = np.full((Tf.size, 2), np.nan)
    fallback = np.zeros(Tf.size, dtype=bool)
    sub = Tf < crit.T - 0.01
    near = ~sub & (Tf < crit.T)
    fallback |= near
    if np.any(sub):
        i = np.nonzero(sub)[0]
        ps = np.full(Tf.size, np.nan)
        ps[i] = model.saturation_pressure_guess(Tf[i])
        rl_a = np.full(Tf.size, np.nan)
        rl_a[i] = model.saturation_guess(Tf[i])[0]
        iv = i[pf[i] < 1.2 * ps[i]]
        if iv.size:
            out[iv, 0] = _newton_vapor(model, Tf[iv], pf[iv], xf[iv], pf[iv] / (R[iv] * Tf[iv]), rc)
            fallback[iv[np.isnan(out[iv, 0]) & (pf[iv] < 0.98 * ps[iv])]] = True  # a stable vapour root must exist
        il = i[pf[i] > 0.8 * ps[i]]
        if il.size:
            out[il, 1] = _newton_liquid(model, Tf[il], pf[il], xf[il], rl_a[il], rc, rmax[il])
            fallback[il[np.isnan(out[il, 1]) & (pf[il] > 1.02 * ps[il])]] = True
    sup = Tf >= crit.T
    if np.any(sup):
        i = np.nonzero(sup)[0]
        out[i, 1] = _hybrid_single(model, Tf[i], pf[i], xf[i], rmax[i])
    if np.any(fallback):
        i = np.nonzero(fallback)[0]
        g = _grid_roots(model, Tf[i], pf[i], xf[i], rc, n_grid, max_iter)
        lightest = np.min(np.where(np.isfinite(g), g, np.inf), axis=-1)
        densest = np.max(np.where(np.isfinite(g), g, -np.inf), axis=-1)
        out[i, 0] = np.where(np.isfinite(lightest), lightest, np.nan)
        out[i, 1] = np.where(np.isfinite(densest) & (densest > lightest * (1.0 + 1e-12)), densest, np.nan)
    out = np.sort(out, axis=-1)
    return out.reshape(shape + (2,))


def _grid_roots(model, T, p, x, rho_c=None, n_grid=160, max_iter=200):
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


def warm_density(model, T: float, p: float, x, rho0: float, rho_c: float, max_iter: int = 30):
    """One state's density by Newton on p(rho) from a neighbouring state's density rho0 [mol m-3].

    Accepted only where the root it finds must be the stable one: above Tc (one root), or below Tc
    on the side of the saturation line that rho0 lies on, with the ancillary vapour pressure at least
    0.5 % away (so that the branch is certain). Returns None otherwise; the caller then solves in full.
    """
    crit = model.critical_point()
    if T < crit.T and ancillary_side(model, T, p) != ("liquid" if rho0 > rho_c else "vapor"):
        return None
    gc = getattr(model, "gas_constant", None)
    R = float(gc) if gc is not None else float(model.R(np.asarray(x, dtype=float)))
    rho = float(rho0)
    scalar = getattr(model, "alphar_derivs_scalar", None)
    xt = x if isinstance(x, tuple) else tuple(np.asarray(x, dtype=float).ravel().tolist())
    prev = float("inf")
    for _ in range(max_iter):
        if scalar is not None:  # the same numbers without numpy's per-call overhead
            _, _, A01, _, _, A02 = scalar(T, rho, xt)
        else:
            d = model.alphar_derivs(T, rho, x)
            A01, A02 = float(d.A01), float(d.A02)
        pr = rho * R * T * (1.0 + A01)
        dp = R * T * (1.0 + 2.0 * A01 + A02)
        if not (dp > 0.0):
            return None
        step = (p - pr) / dp
        step = max(min(step, 0.5 * rho), -0.5 * rho)
        rho += step
        if T < crit.T and ((rho > rho_c) != (rho0 > rho_c)):
            return None
        # converged: a step at round-off, or (quadratic convergence) one below 1e-8 after one below 1e-4,
        # which leaves an error of order 1e-16
        if abs(step) <= 1e-13 * rho or (abs(step) <= 1e-8 * rho and prev <= 1e-4 * rho):
            return rho
        prev = abs(step)
    return None
