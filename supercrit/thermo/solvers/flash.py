"""Mixture flashes for cubic models: (T, p), (p, h), (p, s) and bubble/dew points.

PT flash: stability test first (:mod:`.stability`), then the phase split by successive substitution
on ln K with Rachford-Rice inside and dominant-eigenvalue (GDEM) acceleration every fifth step,
switching to Newton on the Gibbs energy in the vapour mole numbers when substitution is slow
(near the critical point). Every two-phase answer passes the guards before it is returned:
|ln K| not all near 0, distinct phase densities, material balance, Gibbs energy below the single
phase; a split that fails them is reported as the single phase. A second liquid (the liquid
itself unstable) raises ConvergenceError naming it: three-phase equilibrium is not computed.

References: Michelsen, Fluid Phase Equilib. 9 (1982) 21-40 (phase split, GDEM),
doi:10.1016/0378-3812(82)85002-4; Rachford & Rice, J. Pet. Technol. 4 (1952) 19;
Leibovici & Neoschil, Fluid Phase Equilib. 74 (1992) 303 (negative flash window);
Michelsen & Mollerup, Thermodynamic Models (2nd ed., 2007), ch. 10-12.

Notes
-----
Tolerances: split converged when max|ln K_new - ln K| < 1e-12 (SS) or max|ln f_V - ln f_L| < 1e-12
(Newton); Rachford-Rice to 1e-15 in beta. Bubble/dew points: Newton in (ln K, ln T, ln p) to
max residual 1e-12. Known weak region: within ~1e-3 K of a mixture critical point the split may
be reported as single phase (the two phases are then indistinguishable to the guards).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ...errors import ConvergenceError
from .result import SolverReport
from .stability import stability_test, wilson_K

LNK_MIN = 1e-7  # [-] guard: a split with max|ln K| below this is the trivial solution (common practice)
RHO_RATIO_MIN = 1e-7  # [-] guard: |rho_L/rho_V - 1| must exceed this (common practice)


@dataclass(frozen=True)
class FlashResult:
    """Outcome of a mixture flash at T [K], p [Pa].

    beta : vapour mole fraction [-] (None if single phase); x, y : liquid and vapour compositions;
    rho_l, rho_v : phase densities [mol m-3]; rho : overall density (single phase) [mol m-3];
    single : 'liq' or 'vap' root type of a single phase, None when two-phase; K : y/x.
    """

    T: float
    p: float
    z: np.ndarray
    beta: float | None
    x: np.ndarray | None
    y: np.ndarray | None
    K: np.ndarray | None
    rho_l: float | None
    rho_v: float | None
    rho: float | None
    single: str | None
    tm_min: float
    report: SolverReport

    @property
    def two_phase(self) -> bool:
        return self.beta is not None


class SecondLiquidError(ConvergenceError):
    """A second liquid phase appears (liquid-liquid or three-phase region): not computed here."""


def rachford_rice(z, K, tol=1e-14, max_iter=60, beta0=0.5):
    """Vapour fraction beta of sum z_i (K_i - 1)/(1 + beta (K_i - 1)) = 0 on the negative-flash window.

    Returns beta [-] (may lie outside [0, 1]: negative flash). Safeguarded Newton with bisection.
    Raises ValueError if all K lie on one side of 1 (no root).
    """
    # Python floats: a handful of components, where numpy's per-call overhead would dominate
    km1 = [k - 1.0 for k in np.asarray(K, dtype=float).tolist()]
    zl = np.asarray(z, dtype=float).tolist()
    n = len(zl)
    kmax, kmin = float(np.max(K)), float(np.min(K))
    if not (kmax > 1.0 > kmin):
        raise ValueError("Rachford-Rice has no root: all K on one side of 1")
    lo, hi = 1.0 / (1.0 - kmax), 1.0 / (1.0 - kmin)
    b = beta0
    if not lo < b < hi:
        b = 0.5 * (lo + hi)
    for _ in range(max_iter):
        f = df = 0.0
        for i in range(n):
            den = 1.0 + b * km1[i]
            t = zl[i] * km1[i] / den
            f += t
            df += t * km1[i] / den
        if f == 0.0:
            return b
        df = -df
        if f > 0.0:
            lo = b
        else:
            hi = b
        bn = b - f / df
        if not lo < bn < hi:
            bn = 0.5 * (lo + hi)
        if abs(bn - b) <= tol * max(1.0, abs(b)):
            return bn
        b = bn
    return b


def _gibbs_split(kern, p, beta, x, y, lpx, lpy):
    with np.errstate(divide="ignore", invalid="ignore"):
        gl = np.where(x > 0, x * (np.log(x) + lpx), 0.0).sum()
        gv = np.where(y > 0, y * (np.log(y) + lpy), 0.0).sum()
    return (1.0 - beta) * gl + beta * gv


def _split(kern, z, p, lnK, max_ss=12, max_newton=40):
    """Phase split from ln K; returns (beta, x, y, lnK, lpx, lpy, Zx, Zy, iterations, method) or None."""
    present = z > 0
    it = 0
    hist = []
    method = "SS"
    beta = 0.5
    for it in range(1, max_ss + 1):
        K = np.exp(lnK)
        try:
            beta = rachford_rice(z[present], K[present], beta0=beta)
        except ValueError:
            return None
        x = z / (1.0 + beta * (K - 1.0))
        y = K * x
        xs, ys = x / x.sum(), y / y.sum()
        lpx, Zx, _ = kern.ln_phi(xs, p, "stable")
        lpy, Zy, _ = kern.ln_phi(ys, p, "stable")
        new = np.where(present, lpx - lpy, 0.0)
        dl = new - lnK
        lnK = new
        err = float(np.max(np.abs(dl)))
        if err < 1e-12:
            return beta, xs, ys, lnK, lpx, lpy, Zx, Zy, it, method
        if float(np.max(np.abs(lnK))) < 1e-5:
            return None  # heading to the trivial solution
        hist.append(dl)
        if len(hist) >= 3 and it % 5 == 0:  # GDEM / dominant eigenvalue extrapolation
            d1, d0 = hist[-1], hist[-2]
            lam = float(d1 @ d0) / float(d0 @ d0)
            if 0.0 < lam < 0.99:
                lnK = lnK + d1 * lam / (1.0 - lam)
                method = "SS+GDEM"
    # Newton on the Gibbs energy in vapour mole numbers v (liquid l = z - v)
    method += "+Newton"
    K = np.exp(lnK)
    try:
        beta = rachford_rice(z[present], K[present])
    except ValueError:
        return None
    x = z / (1.0 + beta * (K - 1.0))
    v = beta * K * x
    v = np.where(present, v, 0.0)
    idx = np.nonzero(present)[0]
    for k in range(max_newton):
        it += 1
        l = z - v
        V, L = v.sum(), l.sum()
        if not (V > 0 and L > 0) or np.any(v[idx] <= 0) or np.any(l[idx] <= 0):
            return None
        y, x = v / V, l / L
        lpy, dny, _, _, _ = kern.ln_phi_and_derivs(y, p, "stable")
        lpx, dnx, _, _, _ = kern.ln_phi_and_derivs(x, p, "stable")
        g = (np.log(y[idx]) + lpy[idx]) - (np.log(x[idx]) + lpx[idx])
        err = float(np.max(np.abs(g)))
        if err < 1e-12:
            beta = V
            Zx = kern.ln_phi(x, p, "stable")[1]
            Zy = kern.ln_phi(y, p, "stable")[1]
            return beta, x, y, np.where(present, np.log(np.where(present, y / np.where(x > 0, x, 1), 1.0)), 0.0), \
                lpx, lpy, Zx, Zy, it, method
        zi = z[idx]
        H = (dny[np.ix_(idx, idx)] - 1.0) / V + (dnx[np.ix_(idx, idx)] - 1.0) / L \
            + np.diag(zi / (v[idx] * l[idx]))
        try:
            dv = np.linalg.solve(H, -g)
        except np.linalg.LinAlgError:
            return None
        # keep 0 < v < z
        s = 1.0
        for _ in range(60):
            vn = v[idx] + s * dv
            if np.all(vn > 0) and np.all(vn < zi):
                break
            s *= 0.5
        v = v.copy()
        v[idx] = v[idx] + s * dv
        if float(np.max(np.abs(lnK))) < 1e-7:
            return None
    return None


def flash_Tp(model, T, p, z, Tc, pc, omega, K0=None, kern=None, check_second_liquid=True):
    """Isothermal flash of feed z at T [K], p [Pa] with a stability test.

    Parameters
    ----------
    model : CubicModel
    T, p : float
        [K], [Pa].
    z : ndarray (nc,)
        Feed mole fractions [-].
    Tc, pc, omega : ndarray (nc,)
        Component constants for Wilson K-values [K], [Pa], [-].
    K0 : ndarray (nc,), optional
        K-values of a neighbouring solution (warm start); the stability test is still made.
    check_second_liquid : bool
        Test the liquid of a split for a second liquid phase (ConvergenceError if found).

    Returns
    -------
    FlashResult

    Raises
    ------
    SecondLiquidError
        The liquid of the vapour-liquid split is itself unstable (liquid-liquid split).
    """
    T, p = float(T), float(p)
    z = np.asarray(z, dtype=float)
    kern = kern or model.phase_kernel(T)
    lpz, Zz, gz = kern.ln_phi(z, p, "stable")
    Kw = wilson_K(T, p, Tc, pc, omega)
    extra = ()
    if K0 is not None and np.all(np.isfinite(K0)) and np.max(np.abs(np.log(K0))) > 1e-5:
        extra = (z * K0, z / K0)
    # near-pure trials for components that can condense as their own phase: subcritical (T < Tc) and not
    # the dominant component (whose near-pure trial is the feed itself); common practice, cf. DOMAIN 4.1
    pure = [i for i in np.nonzero((T < Tc) & (z > 0) & (z < 0.5))[0]]
    trials = list(extra)
    for i in pure:
        t = 1e-3 * z
        t[i] = 1.0
        trials.append(t)
    st = stability_test(kern, z, p, Kw, lpz, Zz, pure_trials=False, extra_trials=trials)
    iters = st.iterations
    if st.stable:
        return _single(kern, z, p, T, Zz, st.tm_min, iters, "stability: stable")
    out = None
    starts = [np.log(st.K)]
    if K0 is not None and np.all(np.isfinite(K0)):
        starts.insert(0, np.log(K0))
    for lnK in starts:
        out = _split(kern, z, p, np.where(z > 0, lnK, 0.0))
        if out is not None and _guards_pass(kern, z, p, out, gz, lpz):
            break
        out = None
    if out is None:
        return _single(kern, z, p, T, Zz, st.tm_min, iters, "split rejected by guards: single phase")
    beta, x, y, lnK, lpx, lpy, Zx, Zy, it, method = out
    if not 0.0 < beta < 1.0:
        return _single(kern, z, p, T, Zz, st.tm_min, iters + it, f"{method}: beta={beta:.3g} outside (0, 1)")
    RT = kern.RT
    rho_x = kern.density(x, Zx * RT / p)
    rho_y = kern.density(y, Zy * RT / p)
    if rho_x < rho_y:  # label the denser phase liquid
        x, y, rho_x, rho_y, beta = y, x, rho_y, rho_x, 1.0 - beta
    # second-liquid check: near-pure trials on the liquid for components that are subcritical
    # (T < Tc) and not already dominant in it (common practice: only these can form their own liquid)
    cand = np.nonzero((T < Tc) & (x < 0.5) & (z > 0))[0]
    if check_second_liquid and len(z) > 1 and cand.size:
        lpl, Zl, _ = kern.ln_phi(x, p, "stable")
        trials = []
        for i in cand:
            t = 1e-3 * x
            t[i] = 1.0
            trials.append(t)
        s2 = stability_test(kern, x, p, Kw, lpl, Zl, pure_trials=False, wilson_trials=False, extra_trials=trials)
        if not s2.stable and not s2.w_is_vapor and np.sum((s2.w - y) ** 2) > 1e-6:
            raise SecondLiquidError(
                f"flash at T = {T:.3f} K, p = {p / 1e5:.4f} bar: the liquid splits again into two liquids "
                f"(tangent-plane distance {s2.tm_min:.2e}); a three-phase (L-L-V) region is not computed by "
                f"supercrit. Treat this state as unsafe (free second liquid, e.g. water).",
                SolverReport(False, iters + it, s2.tm_min, "VLE flash + stability of the liquid"))
    return FlashResult(T, p, z, float(beta), x, y, y / x, float(rho_x), float(rho_y), None, None, st.tm_min,
                       SolverReport(True, iters + it, 0.0, method))


def _guards_pass(kern, z, p, out, gz, lpz):
    beta, x, y, lnK, lpx, lpy, Zx, Zy, it, method = out
    if not np.all(np.isfinite(x)) or not np.all(np.isfinite(y)):
        return False
    if float(np.max(np.abs(np.log(np.where(z > 0, y / np.where(x > 0, x, 1.0), 1.0))))) < LNK_MIN:
        return False
    if abs(Zx / Zy - 1.0) < RHO_RATIO_MIN:
        return False
    if float(np.max(np.abs((1.0 - beta) * x + beta * y - z))) > 1e-10:
        return False
    with np.errstate(divide="ignore", invalid="ignore"):
        g1 = np.where(z > 0, z * (np.log(z) + lpz), 0.0).sum()
    g2 = _gibbs_split(kern, p, beta, x, y, lpx, lpy)
    return bool(g2 < g1 + 1e-13) or not 0.0 < beta < 1.0


def _single(kern, z, p, T, Z, tm, iters, why):
    rho = kern.density(z, Z * kern.RT / p)
    # root type: liquid-like if the compressibility is below that of the vapour-like root at this p
    zs, _, B = kern._roots(float(z @ kern.aij @ z), float(kern.b @ z), p)
    kind = "liq" if (len(zs) > 1 and Z == zs[0]) or Z < 0.3 else "vap"  # Z < 0.3: dense (common practice)
    return FlashResult(T, p, z, None, None, None, None, None, None, float(rho), kind, tm,
                       SolverReport(True, iters, 0.0, why))


# ---------------------------------------------------------------------------------------------
# saturation points: Newton in X = (ln K, ln T, ln p) with one specified variable

def sat_residual(model, z, X, incipient_is_y, z_root, w_root):
    """Residuals and Jacobian of the saturation system (Michelsen 1980).

    F_i = ln K_i + ln phi_i(y) - ln phi_i(x), F_nc = sum(y - x). With ``incipient_is_y`` the feed
    is x and y = K z (bubble-type), else the feed is y and x = z/K (dew-type). Returns F (nc+1,),
    J (nc+1, nc+2), x, y (normalised), Zx-free densities via V's.
    """
    nc = len(z)
    lnK, lnT, lnP = X[:nc], X[nc], X[nc + 1]
    T, P = np.exp(lnT), np.exp(lnP)
    K = np.exp(lnK)
    kern = model.phase_kernel(T)
    if incipient_is_y:
        nx, ny = z, K * z
        rx, ry = z_root, w_root
    else:
        nx, ny = z / K, z
        rx, ry = w_root, z_root
    Sx, Sy = nx.sum(), ny.sum()
    x, y = nx / Sx, ny / Sy
    lpx, dnx, dTx, dPx, Vx = kern.ln_phi_and_derivs(x, P, rx)
    lpy, dny, dTy, dPy, Vy = kern.ln_phi_and_derivs(y, P, ry)
    F = np.empty(nc + 1)
    F[:nc] = lnK + lpy - lpx
    F[nc] = Sy - Sx
    J = np.zeros((nc + 1, nc + 2))
    J[:nc, :nc] = np.eye(nc)
    if incipient_is_y:
        J[:nc, :nc] += dny * y[None, :]
        J[nc, :nc] = ny
    else:
        J[:nc, :nc] += dnx * x[None, :]
        J[nc, :nc] = nx
    J[:nc, nc] = T * (dTy - dTx)
    J[:nc, nc + 1] = P * (dPy - dPx)
    return F, J, x, y, kern.density(x, Vx), kern.density(y, Vy)


def solve_sat_point(model, z, X0, spec_index, spec_value, incipient_is_y, z_root, w_root, tol=1e-12,
                    max_iter=30, max_step=None):
    """Newton solve of the saturation system with X[spec_index] = spec_value.

    Returns (X, x, y, rho_x, rho_y, iterations). Raises ConvergenceError.
    """
    nc = len(z)
    X = np.array(X0, dtype=float)
    X[spec_index] = spec_value
    res = np.inf
    for it in range(1, max_iter + 1):
        try:
            F, J, x, y, rx, ry = sat_residual(model, z, X, incipient_is_y, z_root, w_root)
        except (ArithmeticError, ValueError, FloatingPointError):
            raise ConvergenceError("saturation point: no volume root on the way",
                                   SolverReport(False, it, float(res), "Newton (ln K, ln T, ln p)"))
        res = float(np.max(np.abs(F)))
        if res < tol and it > 1:
            return X, x, y, rx, ry, it
        Jsq = np.delete(J, spec_index, axis=1)
        try:
            d = np.linalg.solve(Jsq, -F)
        except np.linalg.LinAlgError:
            break
        if max_step is not None:
            m = np.max(np.abs(d))
            if m > max_step:
                d *= max_step / m
        free = [i for i in range(nc + 2) if i != spec_index]
        X[free] += d
        if not np.all(np.isfinite(X)):
            break
        if res < tol:
            return X, x, y, rx, ry, it
    raise ConvergenceError("saturation point did not converge",
                           SolverReport(False, max_iter, float(res), "Newton (ln K, ln T, ln p)"))
