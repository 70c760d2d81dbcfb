"""Pure-fluid (p, h) and (p, s) specifications, including inside the two-phase dome; vectorised.

Method: below the model's critical pressure the saturation temperature and the saturated liquid and
vapour values of h (or s) at p come first; a value between them is two-phase with the vapour
fraction from the lever rule. Every other element is single-phase on one branch: liquid (T below
Tsat, densest root), vapour (T above Tsat, lightest root), or the stable root at or above the
critical pressure and for models without a two-phase region. On its branch h(T) at constant p rises
monotonically (cp > 0), so T is found by a safeguarded Newton iteration with the exact slope
(dh/dT)_p = cp, (ds/dT)_p = cp/T, inside a bracket that a 12-point scan of the branch narrows first.
All elements of a batch iterate together (numpy), so a path of states costs about one solve.

Notes
-----
Tolerance: |dT| <= 1e-9 K or |h - h*| <= 1e-10 |h*| + 1e-8 J/mol. A target outside the branch's
[T_min, T_max] raises ModelRangeError naming the bound; a non-converged element raises
ConvergenceError with the report.
"""
from __future__ import annotations

import numpy as np

from ...errors import ConvergenceError, ModelRangeError
from ..properties import all_properties
from .density import density_roots, stable_density
from .result import SolverReport
from .saturation import saturation_temperature

STABLE, LIQUID_BRANCH, VAPOR_BRANCH = 0, 1, 2


def _branch_density(model, T, p, x, branch, rho_c):
    """Density on the requested branch [mol m-3]; NaN where that branch has no root."""
    roots = density_roots(model, T, p, x, rho_c)
    ok = np.isfinite(roots)
    has = ok.any(axis=-1)
    hi = np.where(has, np.nanmax(np.where(ok, roots, -np.inf), axis=-1), np.nan)
    lo = np.where(has, np.nanmin(np.where(ok, roots, np.inf), axis=-1), np.nan)
    rho = np.where(branch == LIQUID_BRANCH, hi, lo)
    st = branch == STABLE
    if np.any(st):
        rho = rho.copy()
        rho[st] = stable_density(model, T[st], p[st], x[st], rho_c)
    return rho


def _prop(model, ideal, M, T, rho, x, key):
    pr = all_properties(model, ideal, M, T, rho, x)
    slope = pr["cp"] if key == "h" else pr["cp"] / T
    return pr[key], slope


def flash_p_prop_batch(model, ideal, M, x1, p, target, key, crit, T_min, T_max, *, T_guess=None,
                       max_iter=60):
    """Solve pure-fluid states from p [Pa] and h [J mol-1] (key 'h') or s [J mol-1 K-1] (key 's').

    Parameters
    ----------
    p, target : ndarray (n,)
    crit : CriticalPoint or None
    T_min, T_max : float
        Temperature range supported by the fluid's data and model [K].
    T_guess : ndarray (n,), optional
        Warm start, e.g. the neighbouring state of a path [K].

    Returns
    -------
    dict of ndarray (n,)
        T [K], rho [mol m-3], two (bool), q (vapour fraction, 0 where single-phase), rho_l, rho_v
        (two-phase elements), report (SolverReport).

    Raises
    ------
    ModelRangeError
        If a target lies outside the temperatures the model and data support at its pressure.
    ConvergenceError
        If the Newton iteration fails for an element.
    """
    p = np.atleast_1d(np.asarray(p, dtype=float))
    target = np.atleast_1d(np.asarray(target, dtype=float))
    n = p.size
    nc = len(model.components)
    x = np.broadcast_to(np.asarray(x1, dtype=float), (n, nc))
    name = {"h": "enthalpy", "s": "entropy"}[key]
    rho_c = crit.rho if crit is not None else None
    branch = np.full(n, STABLE)
    lo, hi = np.full(n, float(T_min)), np.full(n, float(T_max))
    two = np.zeros(n, dtype=bool)
    q = np.zeros(n)
    T = np.full(n, np.nan)
    rho = np.full(n, np.nan)
    rl, rv = np.full(n, np.nan), np.full(n, np.nan)
    sub = np.zeros(n, dtype=bool)
    if getattr(model, "has_two_phase", True) and crit is not None:
        sub = p < crit.p
    iters = 0
    if np.any(sub):
        sat = saturation_temperature(model, p[sub], crit, x[0], T_min=min(T_min, 0.5 * crit.T))
        Ts = np.atleast_1d(sat.T)
        rL, rV = np.atleast_1d(sat.rho_liq), np.atleast_1d(sat.rho_vap)
        xs = x[sub]
        pL, _ = _prop(model, ideal, M, Ts, rL, xs, key)
        pV, _ = _prop(model, ideal, M, Ts, rV, xs, key)
        ts = target[sub]
        tol = 1e-9 * (np.abs(pL) + np.abs(pV)) + 1e-9  # saturated states given to round-off count as on the line
        tw = (pL - tol <= ts) & (ts <= pV + tol)
        qq = np.clip(np.where(tw, (ts - pL) / np.where(pV > pL, pV - pL, 1.0), 0.0), 0.0, 1.0)
        idx = np.nonzero(sub)[0]
        two[idx] = tw
        q[idx] = qq
        T[idx[tw]] = Ts[tw]
        rl[idx], rv[idx] = rL, rV
        rho[idx[tw]] = 1.0 / ((1.0 - qq[tw]) / rL[tw] + qq[tw] / rV[tw])
        liq = ~tw & (ts < pL)
        vap = ~tw & (ts > pV)
        branch[idx[liq]] = LIQUID_BRANCH
        hi[idx[liq]] = Ts[liq]
        branch[idx[vap]] = VAPOR_BRANCH
        lo[idx[vap]] = Ts[vap]
        iters = sat.report.iterations
    todo = np.nonzero(~two)[0]
    if todo.size == 1 and n == 1 and hasattr(model, "alphar_derivs_scalar"):
        got = _one_state_newton(model, ideal, M, x[0], float(p[0]), float(target[0]), key, int(branch[0]),
                                float(lo[0]), float(hi[0]), crit, float(rl[0]), float(rv[0]),
                                None if T_guess is None else float(np.ravel(T_guess)[0]))
        if got is not None:
            T[0], rho[0] = got
            todo = todo[:0]
    if todo.size:
        Tt, rt, it = _solve_branch(model, ideal, M, x[todo], p[todo], target[todo], key, branch[todo], lo[todo],
                                   hi[todo], rho_c, None if T_guess is None else np.atleast_1d(T_guess)[todo],
                                   name, max_iter)
        T[todo], rho[todo] = Tt, rt
        iters += it
    return dict(T=T, rho=rho, two=two, q=q, rho_l=np.where(two, rl, rho), rho_v=np.where(two, rv, rho),
                report=SolverReport(True, iters, 0.0, "saturation + lever rule / Newton on T with cp"))


def _one_state_newton(model, ideal, M, x, p, target, key, branch, lo, hi, crit, rho_l, rho_v, T_guess):
    """One single-phase element by Newton in (T, rho) (solvers/flash_near.py), started on its branch:
    from the saturated liquid or vapour at this pressure (their temperature is exact here, so the
    answer is certainly stable if it stays on that side: liquid colder than Tsat and denser than
    rho_c, vapour warmer and lighter), else from the (T, p) state at the warm start or at
    max(Tc, 300 K) (at or above the critical pressure, and for models without a two-phase region,
    there is one root). None where the batch path must decide."""
    from .flash_near import single_phase_p_prop

    try:
        if branch == LIQUID_BRANCH:
            sol = single_phase_p_prop(model, ideal, M, x, p, target, key, hi, rho_l, lo, hi)
            ok = sol is not None and sol[0] <= hi and sol[1] > crit.rho
        elif branch == VAPOR_BRANCH:
            sol = single_phase_p_prop(model, ideal, M, x, p, target, key, lo, rho_v, lo, hi)
            ok = sol is not None and sol[0] >= lo and sol[1] < crit.rho
        else:
            T0 = T_guess if T_guess is not None and lo <= T_guess <= hi else \
                min(max(crit.T if crit is not None else 300.0, 300.0, lo), hi)
            r0 = float(stable_density(model, T0, p, x, crit.rho if crit is not None else None))
            sol = single_phase_p_prop(model, ideal, M, x, p, target, key, T0, r0, lo, hi)
            ok = sol is not None
    except (ArithmeticError, ValueError, ModelRangeError):
        return None
    return sol if ok else None


def _solve_branch(model, ideal, M, x, p, target, key, branch, lo, hi, rho_c, T_guess, name, max_iter):
    n = p.size
    # scan each branch on 12 temperatures to bracket the target (batched)
    k = 12
    frac = np.linspace(0.0, 1.0, k)
    Tg = lo[:, None] + frac * (hi - lo)[:, None]
    Tg[:, 0] = lo + 1e-9 * np.maximum(hi - lo, 1.0) * (branch == VAPOR_BRANCH)
    Tg[:, -1] = hi - 1e-9 * np.maximum(hi - lo, 1.0) * (branch == LIQUID_BRANCH)
    bb = np.repeat(branch, k)
    rg = _branch_density(model, Tg.ravel(), np.repeat(p, k), np.repeat(x, k, axis=0), bb, rho_c)
    ok = np.isfinite(rg)
    vals = np.full(n * k, np.nan)
    if np.any(ok):
        vals[ok] = _prop(model, ideal, M, Tg.ravel()[ok], rg[ok], np.repeat(x, k, axis=0)[ok], key)[0]
    vals = vals.reshape(n, k)
    f = vals - target[:, None]
    fin = np.isfinite(f)
    below = np.where(fin, f <= 0, False)
    above = np.where(fin, f >= 0, False)
    # the bracket: last scan point at or below the target, first at or above it
    i_lo = np.where(below.any(axis=1), k - 1 - np.argmax(below[:, ::-1], axis=1), -1)
    i_hi = np.where(above.any(axis=1), np.argmax(above, axis=1), -1)
    bad = (i_lo < 0) | (i_hi < 0)
    if np.any(bad):
        j = int(np.nonzero(bad)[0][0])
        edge_low = i_lo[j] < 0
        label = {STABLE: "single-phase", LIQUID_BRANCH: "liquid", VAPOR_BRANCH: "vapour"}[int(branch[j])]
        raise ModelRangeError(
            f"{name} {target[j]:.6g} at p = {p[j] / 1e5:.4f} bar is {'below' if edge_low else 'above'} every {label} "
            f"state between {lo[j]:.2f} K and {hi[j]:.2f} K, the temperatures supported here "
            f"({'lowest' if edge_low else 'highest'} bound reached).")
    ar = np.arange(n)
    a, b = Tg[ar, i_lo], Tg[ar, i_hi]
    fa, fb = f[ar, i_lo], f[ar, i_hi]
    rg = rg.reshape(n, k)
    ra, rb = rg[ar, i_lo], rg[ar, i_hi]
    same = a == b
    w = np.where(same, 0.0, -fa / np.where(fb != fa, fb - fa, 1.0))
    T = a + w * (b - a)
    rho = ra + w * (rb - ra)
    T_lo, T_hi = np.minimum(a, b), np.maximum(a, b)
    r_lo, r_hi = np.minimum(ra, rb), np.maximum(ra, rb)
    # Newton in (T, rho) on p(T, rho) = p*, h(T, rho) = h* (or s), kept inside the scanned box, where the
    # branch root is the only root; one property evaluation per iteration
    done = same.copy()
    rho = np.where(same, ra, rho)
    it = 0
    for it in range(1, 40):
        ia = np.nonzero(~done)[0]
        if ia.size == 0:
            break
        pr = all_properties(model, ideal, M, T[ia], rho[ia], x[ia])
        F1 = pr["p"] - p[ia]
        F2 = pr[key] - target[ia]
        r_ = rho[ia]
        if key == "h":
            a11, a12 = pr["dpdT"], pr["dpdrho"]
            a21, a22 = pr["cv"] + pr["dpdT"] / r_, (pr["dpdrho"] - T[ia] * pr["dpdT"] / r_) / r_
        else:
            a11, a12 = pr["dpdT"], pr["dpdrho"]
            a21, a22 = pr["cv"] / T[ia], -pr["dpdT"] / (r_ * r_)
        det = a11 * a22 - a12 * a21
        dT = (-F1 * a22 + a12 * F2) / det
        dr = (-a11 * F2 + a21 * F1) / det
        Tn = np.clip(T[ia] + dT, T_lo[ia], T_hi[ia])
        rn = np.clip(r_ + dr, r_lo[ia], r_hi[ia])
        ok = np.isfinite(Tn) & np.isfinite(rn)
        conv = ok & (np.abs(Tn - T[ia]) <= 1e-10 * T[ia]) & (np.abs(rn - r_) <= 1e-12 * r_) \
            & (np.abs(F1) <= 1e-9 * p[ia])
        T[ia] = np.where(ok, Tn, T[ia])
        rho[ia] = np.where(ok, rn, rho[ia])
        done[ia] = conv
    # elements the box Newton did not settle go through the safeguarded Newton on T with cp
    left = np.nonzero(~done)[0]
    if left.size:
        Tl, rl_, it2 = _newton_T(model, ideal, M, x[left], p[left], target[left], key, branch[left], T_lo[left],
                                 T_hi[left], T[left], rho_c, max_iter)
        T[left], rho[left] = Tl, rl_
        it += it2
    return T, rho, it


def _newton_T(model, ideal, M, x, p, target, key, branch, lo_b, hi_b, T, rho_c, max_iter):
    """Safeguarded Newton on T with the exact slope, a density solve per iteration (robust fallback)."""
    n = p.size
    lo_b, hi_b, T = lo_b.copy(), hi_b.copy(), T.copy()
    done = np.zeros(n, dtype=bool)
    rho = np.full(n, np.nan)
    for it in range(1, max_iter + 1):
        ia = np.nonzero(~done)[0]
        r = _branch_density(model, T[ia], p[ia], x[ia], branch[ia], rho_c)
        rho[ia] = r
        good = np.isfinite(r)
        val = np.full(ia.size, np.nan)
        slope = np.full(ia.size, np.nan)
        if np.any(good):
            v, s_ = _prop(model, ideal, M, T[ia][good], r[good], x[ia][good], key)
            val[good], slope[good] = v, s_
        fval = val - target[ia]
        lo_b[ia] = np.where(good & (fval < 0), T[ia], lo_b[ia])
        hi_b[ia] = np.where(good & (fval > 0), T[ia], hi_b[ia])
        step = np.where(good & (slope > 0), fval / np.where(slope > 0, slope, 1.0), np.nan)
        Tn = T[ia] - step
        outside = ~np.isfinite(Tn) | (Tn <= lo_b[ia]) | (Tn >= hi_b[ia])
        Tn = np.where(outside, 0.5 * (lo_b[ia] + hi_b[ia]), Tn)
        conv = good & ((np.abs(Tn - T[ia]) <= 1e-9) |
                       (np.abs(fval) <= 1e-10 * np.abs(target[ia]) + 1e-8) |
                       (hi_b[ia] - lo_b[ia] <= 1e-10))
        T[ia] = np.where(conv, T[ia], Tn)
        done[ia] = conv
        if np.all(done):
            return T, rho, it
    j = int(np.nonzero(~done)[0][0])
    raise ConvergenceError(f"p-{key} flash did not converge at p = {p[j] / 1e5:.4f} bar",
                           SolverReport(False, max_iter, float("nan"), "Newton on T with cp"))
