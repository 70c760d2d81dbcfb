"""Pure-fluid saturation: psat(T) and Tsat(p) with the coexisting densities, by equal fugacity.

Method: Newton in (rho_liq, rho_vap) on the Maxwell conditions p(rho_L) = p(rho_V) and
mu(rho_L) = mu(rho_V) (Akasaka, J. Therm. Sci. Tech. 3 (2008) 442, doi:10.1299/jtst.3.442), with
starting values from the model's ancillary equations where it has them, else from a grid
construction: p(rho) and mu(rho) are tabulated on the two mechanically stable branches (on a grid
dense near rho_c) and the equal-mu pressure is found by bisection on interpolated branches. The
van der Waals loop is therefore resolved by the equal-area (equal-fugacity) construction, never
by returning a mechanically unstable root.

Notes
-----
Tolerance: |p_L/p_V - 1| < 1e-13 and |mu_L - mu_V|/RT < 1e-13. Converges from the triple point
(or 0.5 Tc) to Tc - 1e-4 K for the cubic models; above the model's critical temperature there is
no saturation state and ModelRangeError is raised.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ...errors import ConvergenceError, InputError, ModelRangeError, SupercritError
from .result import SolverReport


@dataclass(frozen=True)
class Saturation:
    """Coexisting states of a pure fluid: T [K], p [Pa], rho_liq, rho_vap [mol m-3] (arrays or floats)."""

    T: np.ndarray
    p: np.ndarray
    rho_liq: np.ndarray
    rho_vap: np.ndarray
    report: SolverReport


def _JK(model, T, rho, x):
    """J = p/(R T) [mol m-3], K = mu_r/(R T) + ln rho, dJ/drho [-] on one branch."""
    d = model.alphar_derivs(T, rho, x)
    J = rho * (1.0 + d.A01)
    K = np.log(rho) + d.A00 + d.A01
    dJ = 1.0 + 2.0 * d.A01 + d.A02
    return J, K, dJ


def _no_saturation(model, T, Tc):
    if not getattr(model, "has_two_phase", True):
        raise ModelRangeError(f"the {model.name} model has no two-phase region: there is no saturation "
                              f"state. Choose a cubic or reference model to see condensation.")
    T = np.asarray(T, dtype=float)
    if np.any(T >= Tc):
        bad = float(np.max(T))
        raise ModelRangeError(
            f"saturation for {'/'.join(model.components)} ({model.name}) at T = {bad:.4f} K: at or above the "
            f"model's critical temperature {Tc:.4f} K there is no saturation state. Treat this state as "
            f"supercritical (p above pc) or gas.")


def grid_guess(model, T, crit, x):
    """Starting (rho_liq, rho_vap) [mol m-3] by the equal-mu construction on tabulated branches."""
    T = np.atleast_1d(np.asarray(T, dtype=float))
    x1 = np.asarray(x, dtype=float).reshape(-1, len(model.components))[0]
    rmax = float(model.max_density(x1))
    base = np.concatenate([np.geomspace(1e-15 * rmax, rmax, 500), np.linspace(crit.rho, rmax, 1500),
                           rmax * (1.0 - np.logspace(-12, -0.5, 200))])
    off = np.logspace(-8, -0.3, 120)
    grid = np.unique(np.concatenate([base, crit.rho * (1 - off), crit.rho * (1 + off)]))
    grid = grid[(grid > 0) & (grid < rmax)]
    rl, rv = np.empty_like(T), np.empty_like(T)
    xx = np.broadcast_to(x1, grid.shape + (len(model.components),))
    for i, Ti in enumerate(T):
        J, K, dJ = _JK(model, np.full(grid.shape, Ti), grid, xx)
        unstable = np.nonzero(~(dJ > 0))[0]
        if unstable.size == 0:
            raise ConvergenceError(f"{model.name}: no van der Waals loop found at T = {Ti:.6f} K "
                                   f"(too close to the critical point for the grid)",
                                   SolverReport(False, 0, float("nan"), "grid saturation guess"))
        iv, il = unstable[0], unstable[-1]
        Jv, Kv = J[:iv], K[:iv]
        Jl, Kl = J[il + 1:], K[il + 1:]
        rl_br, rv_br = grid[il + 1:], grid[:iv]
        lo = np.log(max(Jl[0], Jv[0]) if Jl[0] > 0 else Jv[0])
        hi = np.log(min(Jv[-1], Jl[-1]))
        lnJv = np.log(Jv)
        for _ in range(200):
            mid = 0.5 * (lo + hi)
            dk = np.interp(mid, lnJv, Kv) - np.interp(np.exp(mid), Jl, Kl)
            if dk < 0:
                lo = mid
            else:
                hi = mid
            if hi - lo < 1e-14:
                break
        Jm = np.exp(0.5 * (lo + hi))
        rv[i] = np.exp(np.interp(np.log(Jm), lnJv, np.log(rv_br)))
        rl[i] = np.interp(Jm, Jl, rl_br)
    return rl, rv


def _table(model, crit, x):
    """Saturation table of a pure model (cached on the model): T, p, rho_L, rho_V at 90 nodes from 0.2 Tc
    to Tc - 1e-4 K, dense near Tc; used only for starting values, so every answer is still a full solve."""
    cache = model.__dict__.setdefault("_saturation_table", {})
    key = (round(crit.T, 12), round(crit.p, 6))
    if key in cache:
        return cache[key]
    u = np.linspace(0.0, 1.0, 90)[1:]
    T = crit.T - 1e-4 - (crit.T - 1e-4 - 0.2 * crit.T) * u**2
    T = np.sort(T)
    xx = np.broadcast_to(np.asarray(x, dtype=float).reshape(-1)[: len(model.components)], T.shape + (len(model.components),))
    try:
        rl, rv = grid_guess(model, T, crit, xx)
        rl, rv, _ = _newton(model, T, rl, rv, xx, 1e-13, 60)
    except ConvergenceError:
        cache[key] = None
        return None
    R = model.R(xx)
    p = rv * R * T * (1.0 + model.alphar_derivs(T, rv, xx).A01)
    good = np.isfinite(p) & (p > 0) & (rl > rv)
    cache[key] = (T[good], p[good], rl[good], rv[good])
    return cache[key]


def _table_guess(model, T, crit, x):
    """Starting densities interpolated in u = sqrt(1 - T/Tc) from the cached table, or None."""
    tab = _table(model, crit, x)
    if tab is None:
        return None
    Tn, _, rl, rv = tab
    if np.any(T < Tn[0]) or np.any(T > crit.T):
        return None
    un = np.sqrt(1.0 - Tn / crit.T)[::-1]
    u = np.sqrt(np.maximum(1.0 - T / crit.T, 0.0))
    return np.interp(u, un, rl[::-1]), np.interp(u, un, rv[::-1])


def _newton(model, T, rl, rv, x, tol, max_iter):
    """Newton on the Maxwell conditions, element-wise convergence; returns (rho_L, rho_V, report)."""
    rl, rv = rl.copy(), rv.copy()
    res = prev = np.full(rl.shape, np.inf)
    done = np.zeros(rl.shape, dtype=bool)
    for it in range(1, max_iter + 1):
        JL, KL, dL = _JK(model, T, rl, x)
        JV, KV, dV = _JK(model, T, rv, x)
        F1, F2 = JV - JL, KV - KL
        # pressure residual relative to p_V, floored at the liquid's own precision (dJ/drho rho_L eps)
        scale = np.maximum(np.abs(JV), 1e-14 * np.abs(dL) * rl)
        prev, res = res, np.abs(F1) / scale + np.abs(F2)
        a, b, c, d = dV, -dL, dV / rv, -dL / rl
        det = a * d - b * c
        du = np.where(done, 0.0, (-F1 * d + b * F2) / det)
        dv = np.where(done, 0.0, (-a * F2 + c * F1) / det)
        lam = np.ones_like(rv)  # damping: keep 0 < rho_V < rho_L
        for _ in range(30):
            nv, nl = rv + lam * du, rl + lam * dv
            bad = (nv <= 0) | (nl <= nv) | ~np.isfinite(nv) | ~np.isfinite(nl)
            if not np.any(bad):
                break
            lam = np.where(bad, 0.5 * lam, lam)
        rv, rl = rv + lam * du, rl + lam * dv
        small = np.abs(du) / rv + np.abs(dv) / rl
        # round-off floor: near the triple point p_V is tiny against the liquid's internal pressure
        # scale, near Tc the conditions become degenerate; a relative step below 1e-12, or a residual
        # below 1e-10 that no longer halves, is as converged as double precision allows
        done |= (res < tol) | (small < 1e-12) | ((res < 1e-10) & (res > 0.5 * prev))
        if np.all(done):
            if np.any(rl <= rv * (1.0 + 1e-9)):
                raise ConvergenceError(f"{model.name}: saturation collapsed to the trivial solution rho_L = rho_V",
                                       SolverReport(False, it, float(np.max(res)), "Newton on Maxwell conditions"))
            return rl, rv, SolverReport(True, it, float(np.max(res)), "Newton on Maxwell conditions (rho_L, rho_V)")
    raise ConvergenceError(f"{model.name}: saturation did not converge",
                           SolverReport(False, max_iter, float(np.max(res)), "Newton on Maxwell conditions (rho_L, rho_V)"))


def saturation_pressure(model, T, crit, x=(1.0,), *, tol=1e-13, max_iter=60, guess=None) -> Saturation:
    """Saturation pressure and coexisting densities of a pure fluid at temperature(s) T.

    Parameters
    ----------
    model : Model
    T : float or ndarray [K]
    crit : CriticalPoint
        The model's own critical point [K, Pa, mol m-3].
    x : array_like (1,)
        Composition of the pure fluid, [1.0].
    tol : float
        Residual tolerance on the Maxwell conditions [-].
    guess : tuple of ndarray, optional
        Starting (rho_liq, rho_vap) [mol m-3], e.g. from a neighbouring temperature.

    Returns
    -------
    Saturation

    Raises
    ------
    ModelRangeError
        At or above the model's critical temperature, or for models without a two-phase region.
    ConvergenceError
        If Newton fails (never observed in the documented range).
    """
    scalar = np.ndim(T) == 0
    shape = np.shape(T)
    T = np.atleast_1d(np.asarray(T, dtype=float)).ravel()
    if np.any(~np.isfinite(T)) or np.any(T <= 0):
        raise InputError("temperature must be a finite positive number of kelvin", "T")
    if guess is not None:
        guess = tuple(np.broadcast_to(np.asarray(g, dtype=float), shape).ravel() for g in guess)
    _no_saturation(model, T, crit.T)
    xx = np.broadcast_to(np.asarray(x, dtype=float), T.shape + (len(model.components),))
    if guess is not None:
        rl, rv = (g.copy() for g in guess)
    elif hasattr(model, "saturation_guess"):
        rl, rv = (np.asarray(g, dtype=float) for g in model.saturation_guess(T))
    else:
        tg = _table_guess(model, T, crit, xx[0])
        rl, rv = tg if tg is not None else grid_guess(model, T, crit, xx)
    try:
        rl, rv, rep = _newton(model, T, rl, rv, xx, tol, max_iter)
    except ConvergenceError:
        rl, rv = grid_guess(model, T, crit, xx)
        rl, rv, rep = _newton(model, T, rl, rv, xx, tol, max_iter)
    R = model.R(xx)
    p = rv * R * T * (1.0 + model.alphar_derivs(T, rv, xx).A01)
    if scalar:
        return Saturation(float(T[0]), float(p[0]), float(rl[0]), float(rv[0]), rep)
    return Saturation(T.reshape(shape), p.reshape(shape), rl.reshape(shape), rv.reshape(shape), rep)


def _saturation_T_one(model, p: float, crit, T_min, tol=1e-12, max_iter=30):
    """One saturation temperature by Newton in (T, ln rho_L, ln rho_V) on ln p_L = ln p, ln p_V = ln p
    and equal reduced Gibbs energy, in Python floats with the model's scalar alpha_r derivatives.

    The Jacobian is analytic: d ln p/d ln rho = (1 + 2 A01 + A02)/(1 + A01),
    d ln p/dT = (1 - A11/(1 + A01))/T, d(g/RT)/d ln rho = 1 + 2 A01 + A02, d(g/RT)/dT = -(A10 + A11)/T.
    Starts from the model's ancillary equations (reference EOS) or the cached saturation table
    (cubics). Returns None (the array path decides) within 0.05 K of Tc, below T_min, or without
    convergence; the same tolerance as the array path (1e-12 on every residual).
    """
    import math

    x = (1.0,)
    scal = model.alphar_derivs_scalar
    lo = T_min if T_min is not None else 0.5 * crit.T
    try:
        if hasattr(model, "saturation_pressure_guess"):
            T = _invert_ancillary_one(model, p, lo, crit)
            if not (lo <= T < crit.T - 0.05):
                return None
            rl, rv = (float(np.ravel(g)[0]) for g in model.saturation_guess(T))
        else:
            tab = _table(model, crit, x)
            if tab is None or p < tab[1][0] or p > tab[1][-1]:
                return None
            lp = np.log(tab[1])
            T = float(np.interp(math.log(p), lp, tab[0]))
            rl = float(np.interp(math.log(p), lp, tab[2]))
            rv = float(np.interp(math.log(p), lp, tab[3]))
            if not (lo <= T < crit.T - 0.05):
                return None
        lrl, lrv = math.log(rl), math.log(rv)
        R = float(model.gas_constant)
        lnp = math.log(p)
        for it in range(1, max_iter + 1):
            rl, rv = math.exp(lrl), math.exp(lrv)
            L = scal(T, rl, x)
            V = scal(T, rv, x)
            zl, zv = 1.0 + L[2], 1.0 + V[2]
            if not (zl > 0 and zv > 0):
                return None
            lnRT = math.log(R * T)
            F1 = lrl + lnRT + math.log(zl) - lnp
            F2 = lrv + lnRT + math.log(zv) - lnp
            F3 = (L[0] + L[2] + lrl) - (V[0] + V[2] + lrv)
            kl, kv = 1.0 + 2.0 * L[2] + L[5], 1.0 + 2.0 * V[2] + V[5]
            # rows: [dF/dT, dF/dlnrl, dF/dlnrv]
            a = ((1.0 - L[4] / zl) / T, kl / zl, 0.0)
            b = ((1.0 - V[4] / zv) / T, 0.0, kv / zv)
            c = ((-(L[1] + L[4]) + (V[1] + V[4])) / T, kl, -kv)
            det = (a[0] * (b[1] * c[2] - b[2] * c[1]) - a[1] * (b[0] * c[2] - b[2] * c[0])
                   + a[2] * (b[0] * c[1] - b[1] * c[0]))
            if det == 0.0 or not math.isfinite(det):
                return None
            r = (-F1, -F2, -F3)
            dT = (r[0] * (b[1] * c[2] - b[2] * c[1]) - a[1] * (r[1] * c[2] - b[2] * r[2])
                  + a[2] * (r[1] * c[1] - b[1] * r[2])) / det
            d1 = (a[0] * (r[1] * c[2] - b[2] * r[2]) - r[0] * (b[0] * c[2] - b[2] * c[0])
                  + a[2] * (b[0] * r[2] - r[1] * c[0])) / det
            d2 = (a[0] * (b[1] * r[2] - r[1] * c[1]) - a[1] * (b[0] * r[2] - r[1] * c[0])
                  + r[0] * (b[0] * c[1] - b[1] * c[0])) / det
            if max(abs(F1), abs(F2), abs(F3)) < tol:
                if not (lrl - lrv > 1e-3 and lo <= T < crit.T):
                    return None
                pv = rv * R * T * zv
                return Saturation(T, pv, rl, rv, SolverReport(True, it, max(abs(F1), abs(F2), abs(F3)),
                                                              "Newton in (T, ln rho_L, ln rho_V)"))
            s = min(1.0, 5.0 / abs(dT) if dT else 1.0, 0.3 / max(abs(d1), abs(d2), 1e-300))
            T += s * dT
            lrl += s * d1
            lrv += s * d2
            if not (lo <= T < crit.T):
                return None
        return None
    except (ArithmeticError, ValueError, SupercritError):
        return None


def _invert_ancillary_one(model, p: float, T_lo: float, crit) -> float:
    """:func:`_invert_ancillary` for one pressure in Python floats, where the model publishes its
    ancillary as ln(p/pc) = (Tc/T) sum a_i theta^t_i, theta = 1 - T/Tc (rows ``_anc_p``); Newton on T."""
    import math

    rows = getattr(model, "_anc_p", None)
    if rows is None:
        return float(_invert_ancillary(model, np.array([p]), np.array([T_lo]), crit)[0])
    rows = [(float(a), float(t)) for a, t in rows]
    Tc, lpc, lp = float(crit.T), math.log(model.pc), math.log(p)
    T_lo = max(T_lo, 0.5 * Tc)
    pl = float(model.saturation_pressure_guess(T_lo))
    inv = 1.0 / T_lo + (lp - math.log(pl)) / (lpc - math.log(pl)) * (1.0 / Tc - 1.0 / T_lo)
    T = min(max(1.0 / inv, T_lo), Tc - 1e-6)
    for _ in range(30):
        th = 1.0 - T / Tc
        S = sum(a * th ** t for a, t in rows)
        dS = sum(-a * t * th ** (t - 1.0) / Tc for a, t in rows)
        f = lpc + Tc / T * S - lp
        df = -Tc / (T * T) * S + Tc / T * dS
        step = -f / df if df != 0 else 0.0
        Tn = min(max(T + step, T_lo), Tc - 1e-6)
        if abs(Tn - T) < 1e-10:
            return Tn
        T = Tn
    return T


def _invert_ancillary(model, p, T_lo, crit):
    """T [K] where the model's ancillary vapour pressure equals p [Pa]: Newton on ln psat against 1/T
    (nearly linear), from the straight line between T_lo and the critical point; 8 steps."""
    lp = np.log(p)
    T_lo = np.maximum(T_lo, 0.5 * crit.T)
    p_lo = model.saturation_pressure_guess(T_lo)
    inv = 1.0 / T_lo + (lp - np.log(p_lo)) / (np.log(crit.p) - np.log(p_lo)) * (1.0 / crit.T - 1.0 / T_lo)
    for _ in range(8):
        T = np.clip(1.0 / inv, T_lo, crit.T - 1e-6)
        inv = 1.0 / T
        e = 1e-7 * inv
        f = np.log(model.saturation_pressure_guess(T)) - lp
        f2 = np.log(model.saturation_pressure_guess(np.minimum(1.0 / (inv + e), crit.T))) - lp
        slope = (f2 - f) / e
        inv = inv - np.where(slope < 0, f / np.where(slope < 0, slope, -1.0), 0.0)
    return 1.0 / inv


def saturation_temperature(model, p, crit, x=(1.0,), *, T_min=None, tol=1e-12, max_iter=60) -> Saturation:
    """Saturation temperature and coexisting densities of a pure fluid at pressure(s) p.

    Newton on T with the Clapeyron slope dp/dT = (h_V - h_L)/(T (v_V - v_L)), safeguarded by a
    bracket [T_min, Tc); each inner saturation solve is warm-started from the previous one.

    Raises
    ------
    ModelRangeError
        At or above the model's critical pressure (no saturation state) or below the pressure at T_min.
    """
    scalar = np.ndim(p) == 0 or np.size(p) == 1
    shape1 = np.shape(p)
    p = np.atleast_1d(np.asarray(p, dtype=float))
    if np.any(~np.isfinite(p)) or np.any(p <= 0):
        raise InputError("pressure must be a finite positive absolute pressure", "p")
    if scalar and hasattr(model, "alphar_derivs_scalar") and len(model.components) == 1 \
            and getattr(model, "has_two_phase", True) and float(p[0]) < crit.p:
        got = _saturation_T_one(model, float(p[0]), crit, T_min)
        if got is not None:
            if shape1 == ():
                return got
            return Saturation(*(np.full(shape1, v) for v in (got.T, got.p, got.rho_liq, got.rho_vap)), got.report)
    scalar = shape1 == ()
    if not getattr(model, "has_two_phase", True):
        _no_saturation(model, np.array([0.0]), crit.T)
    if np.any(p >= crit.p):
        raise ModelRangeError(
            f"saturation for {'/'.join(model.components)} ({model.name}) at p = {np.max(p) / 1e5:.4f} bar: at or "
            f"above the model's critical pressure {crit.p / 1e5:.4f} bar there is no saturation state.")
    T_lo = np.full(p.shape, T_min if T_min is not None else 0.5 * crit.T)
    T_hi = np.full(p.shape, crit.T)
    cache = model.__dict__.setdefault("_psat_at_Tmin", {})
    if float(T_lo[0]) not in cache:
        cache[float(T_lo[0])] = float(saturation_pressure(model, float(T_lo[0]), crit, x).p)
    p_lo = cache[float(T_lo[0])]
    if np.any(p < p_lo * (1.0 - 1e-10)):
        raise ModelRangeError(
            f"saturation for {'/'.join(model.components)} at p = {np.min(p):.4g} Pa: below the saturation "
            f"pressure {p_lo:.4g} Pa at the lowest temperature supported ({T_lo[0]:.2f} K).")
    tab = None if hasattr(model, "saturation_guess") else _table(model, crit, x)
    if hasattr(model, "saturation_pressure_guess"):
        # start: the model's published ancillary vapour-pressure equation, inverted by Newton in 1/T
        T = np.clip(_invert_ancillary(model, p, T_lo, crit), T_lo, crit.T - 1e-6)
    elif tab is not None and p_lo >= tab[1][0]:
        # start: ln p against 1/T interpolated in the cached table
        T = np.interp(np.log(p), np.log(tab[1]), tab[0])
    else:
        # start: ln p linear in 1/T between (T_lo, p_lo) and the critical point
        inv = 1.0 / T_lo + (np.log(p) - np.log(p_lo)) / (np.log(crit.p) - np.log(p_lo)) * (1.0 / crit.T - 1.0 / T_lo)
        T = 1.0 / inv
    T = np.clip(T, T_lo, crit.T - 1e-6)
    sat = saturation_pressure(model, T, crit, x)
    xx = np.broadcast_to(np.asarray(x, dtype=float), T.shape + (len(model.components),))
    R = model.R(xx)
    for it in range(1, max_iter + 1):
        f = np.log(sat.p / p)
        T_lo = np.where(f < 0, T, T_lo)
        T_hi = np.where(f > 0, T, T_hi)
        if np.max(np.abs(f)) < tol:
            rep = SolverReport(True, it, float(np.max(np.abs(f))), "Newton on T with Clapeyron slope")
            if scalar:
                return Saturation(float(T[0]), float(sat.p[0]), float(sat.rho_liq[0]), float(sat.rho_vap[0]), rep)
            return Saturation(T, sat.p, sat.rho_liq, sat.rho_vap, rep)
        dL = model.alphar_derivs(T, sat.rho_liq, xx)
        dV = model.alphar_derivs(T, sat.rho_vap, xx)
        dh = R * T * ((dV.A10 + dV.A01) - (dL.A10 + dL.A01))
        dv = 1.0 / sat.rho_vap - 1.0 / sat.rho_liq
        dlnp_dinvT = -T * T * dh / (T * dv) / sat.p  # Clapeyron, in ln p against 1/T (nearly linear)
        T_new = 1.0 / (1.0 / T - f / dlnp_dinvT)
        out = ~((T_new > T_lo) & (T_new < T_hi)) | ~np.isfinite(T_new)
        T_new = np.where(out, 0.5 * (T_lo + T_hi), T_new)
        T_new = np.minimum(T_new, crit.T - 1e-9)
        stalled = np.max(np.abs(T_new - T) / T) < 1e-13
        try:
            sat = saturation_pressure(model, T_new, crit, x, guess=(sat.rho_liq, sat.rho_vap))
        except ConvergenceError:
            sat = saturation_pressure(model, T_new, crit, x)
        if not np.all(np.isfinite(sat.p)):
            raise ConvergenceError(f"{model.name}: saturation temperature iteration produced no saturation state "
                                   f"at T = {float(np.ravel(T_new)[np.argmin(np.isfinite(sat.p))]):.4f} K",
                                   SolverReport(False, it, float("nan"), "Newton on T with Clapeyron slope"))
        T = T_new
        if stalled:  # the temperature no longer moves: round-off floor of ln psat
            f = np.log(sat.p / p)
            rep = SolverReport(True, it, float(np.max(np.abs(f))), "Newton on T with Clapeyron slope")
            if scalar:
                return Saturation(float(T[0]), float(sat.p[0]), float(sat.rho_liq[0]), float(sat.rho_vap[0]), rep)
            return Saturation(T, sat.p, sat.rho_liq, sat.rho_vap, rep)
    raise ConvergenceError(f"{model.name}: saturation temperature did not converge",
                           SolverReport(False, max_iter, float(np.max(np.abs(f))), "Newton on T with Clapeyron slope"))
