"""Mixture flashes for cubic models: (T, p), (p, h), (p, s); bubble/dew points are in
:mod:`.saturation_point`.

PT flash: stability test first (:mod:`.stability`; it stops at the first trial phase that proves
instability), then the phase split: three steps of successive substitution on ln K with Rachford-Rice
inside, then Newton on the Gibbs energy in the vapour mole numbers; if that Newton solve does not
converge monotonically, substitution goes on (dominant-eigenvalue (GDEM) acceleration every fifth
step) and Newton takes over after twelve steps (near the critical point). Every two-phase answer passes the guards before it is returned:
|ln K| not all near 0, distinct phase densities, material balance, Gibbs energy below the single
phase; a split that fails them is reported as the single phase. Vapour-liquid only: a split whose
lighter phase is liquid-like (phase identification parameter above 1 below its pseudo-critical
temperature), or whose phases are not stable (a third phase: a second liquid, or a gas leaving a
dense phase), raises SecondLiquidError naming it; three-phase equilibrium is not computed.

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

import math
from dataclasses import dataclass
from operator import mul as _mul

import numpy as np

from ...errors import SecondLiquidError
from ..properties import phase_identification_parameter
from .result import SolverReport
from .stability import _stability_lists, solve_dense

LNK_MIN = 1e-7  # [-] guard: a split with max|ln K| below this is the trivial solution (common practice)
RHO_RATIO_MIN = 1e-7  # [-] guard: |rho_L/rho_V - 1| must exceed this (common practice)
# [-] a near-pure trial phase of a component is tried in a phase holding less than this of it; above it the
# trial starts at the phase itself (common practice). 0.5 missed a 99 % water liquid splitting from a liquid
# of 51 % water and 47 % ethanol (CO2/N2/ethanol/water at 373 K, 12 bar; found by the long fuzz)
NEAR_PURE_MAX = 0.9


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


def rachford_rice(z, K, tol=1e-14, max_iter=60, beta0=0.5):
    """Vapour fraction beta of sum z_i (K_i - 1)/(1 + beta (K_i - 1)) = 0 on the negative-flash window.

    Returns beta [-] (may lie outside [0, 1]: negative flash). Safeguarded Newton with bisection.
    Raises ValueError if all K lie on one side of 1 (no root).
    """
    return _rachford_rice_lists(np.asarray(z, dtype=float).tolist(), np.asarray(K, dtype=float).tolist(),
                                tol, max_iter, beta0)


def _rachford_rice_lists(zl, Kl, tol=1e-14, max_iter=60, beta0=0.5):
    """:func:`rachford_rice` on lists of Python floats (a handful of components: no numpy overhead).

    Written as sum_i z_i / (c_i + beta) with c_i = 1/(K_i - 1) (components with K_i = 1 add nothing)."""
    kmax, kmin = max(Kl), min(Kl)
    if not (kmax > 1.0 > kmin):
        raise ValueError("Rachford-Rice has no root: all K on one side of 1")
    zc = [(zi, 1.0 / (k - 1.0)) for zi, k in zip(zl, Kl) if k != 1.0]
    lo, hi = 1.0 / (1.0 - kmax), 1.0 / (1.0 - kmin)
    b = beta0
    if not lo < b < hi:
        b = 0.5 * (lo + hi)
    for _ in range(max_iter):
        f = df = 0.0
        for zi, ci in zc:
            r = 1.0 / (ci + b)
            t = zi * r
            f += t
            df += t * r
        if f == 0.0:
            return b
        if f > 0.0:
            lo = b
        else:
            hi = b
        bn = b + f / df
        if not lo < bn < hi:
            bn = 0.5 * (lo + hi)
        if abs(bn - b) <= tol * max(1.0, abs(b)):
            return bn
        b = bn
    return b


def _gibbs(x, lp):
    """sum_i x_i (ln x_i + ln phi_i) over x_i > 0 [-] (lists)."""
    return sum([xi * (math.log(xi) + li) for xi, li in zip(x, lp) if xi > 0])


NEWTON_AFTER = 3  # [-] substitution steps before the split tries Newton (a speed setting; SS continues if Newton fails)


def _split(kern, z, p, lnK, max_ss=12, max_newton=40, max_ss_after=300):
    """Phase split from ln K (lists); returns (beta, x, y, lnK, lpx, lpy, Zx, Zy, iterations, method) or None.

    Successive substitution with GDEM every fifth step; after ``NEWTON_AFTER`` steps a Newton solve is
    tried from the current K (it must converge monotonically, away from the trivial solution), and if it
    does not, substitution continues to ``max_ss`` steps and Newton takes over from there. If both Newton
    variants give up, substitution goes on (up to ``max_ss_after`` more steps) while it converges: with a
    component almost absent from one phase (N2 in a water-rich liquid, x ~ 1e-6) Newton's steps are cut
    to nothing by the bound 0 < v < z, while substitution converges linearly.
    """
    n = len(z)
    idx = [i for i in range(n) if z[i] > 0]
    state = {"beta": 0.5, "hist": [], "method": "SS", "err": math.inf}

    def ss_steps(lnK, first, last, newton_at=None):
        """Substitution steps first..last from lnK: ('done', out), ('fail', None) or ('more', lnK)."""
        exp = math.exp
        zp = [z[i] for i in idx]
        ln_phi = kern.ln_phi_list
        hist = state["hist"]
        for it in range(first, last + 1):
            K = [exp(v) for v in lnK]
            try:
                beta = state["beta"] = _rachford_rice_lists(zp, [K[i] for i in idx], beta0=state["beta"])
            except ValueError:
                return "fail", None
            x = [zi / (1.0 + beta * (Ki - 1.0)) for zi, Ki in zip(z, K)]
            y = [Ki * xi for Ki, xi in zip(K, x)]
            Sx, Sy = sum(x), sum(y)
            xs, ys = [v / Sx for v in x], [v / Sy for v in y]
            lpx, Zx, _ = ln_phi(xs, p, "stable")
            lpy, Zy, _ = ln_phi(ys, p, "stable")
            new = [(a - b) if zi > 0 else 0.0 for a, b, zi in zip(lpx, lpy, z)]
            dl = [a - b for a, b in zip(new, lnK)]
            lnK = new
            err = max([abs(v) for v in dl])
            if err < 1e-12:
                return "done", (beta, xs, ys, lnK, lpx, lpy, Zx, Zy, it, state["method"])
            if max([abs(v) for v in lnK]) < 1e-5:
                return "fail", None  # heading to the trivial solution
            if newton_at is None and err > state["err"] and it % 5 != 1:
                return "fail", None  # the continued substitution stopped converging
            state["err"] = err
            hist.append(dl)
            if len(hist) >= 3 and it % 5 == 0:  # GDEM / dominant eigenvalue extrapolation
                d1, d0 = hist[-1], hist[-2]
                lam = sum(map(_mul, d1, d0)) / sum(map(_mul, d0, d0))
                if 0.0 < lam < 0.99:
                    f = lam / (1.0 - lam)
                    lnK = [a + b * f for a, b in zip(lnK, d1)]
                    state["method"] = "SS+GDEM"
            if it == newton_at:
                out = _newton_split(kern, z, p, lnK, idx, 10, it, state["method"] + "+Newton", strict=True,
                                    beta0=beta)
                if out is not None:
                    return "done", out
        return "more", lnK

    status, res = ss_steps(lnK, 1, max_ss, newton_at=NEWTON_AFTER)
    if status != "more":
        return res
    lnK = res
    method = state["method"] + "+Newton"
    out = _newton_split(kern, z, p, lnK, idx, max_newton, max_ss, method, strict=False)
    if out is None:  # the modified Newton gave up: Newton on the plain Hessian (it finds splits the other misses)
        out = _newton_split(kern, z, p, lnK, idx, max_newton, max_ss, method, strict=False, modified=False)
    if out is None and max_ss_after > 0:
        state["err"] = math.inf
        status, res = ss_steps(lnK, max_ss + 1, max_ss + max_ss_after)
        out = res if status == "done" else None
    return out


def _newton_split(kern, z, p, lnK, idx, max_newton, it, method, strict, beta0=0.5, modified=True):
    """Newton on the Gibbs energy in the vapour mole numbers v (liquid l = z - v), from ln K (lists).

    Hessian H_ij = (n^V dln phi^V_i/dn_j - 1)/V + (n^L dln phi^L_i/dn_j - 1)/L + delta_ij z_i/(v_i l_i),
    assembled in one pass from the kernel's factored derivatives. ``strict``: give up (None) as soon
    as the residual grows or the phases approach each other (max |ln K| < 1e-5), so that the caller
    can go on with substitution. Once the residual is below 1e-6 the next point is first checked with
    ln phi alone (the step from there is expected to land within 1e-12)."""
    exp, log = math.exp, math.log
    K = [exp(v) for v in lnK]
    zp = [z[i] for i in idx]
    try:
        beta = _rachford_rice_lists(zp, [K[i] for i in idx], beta0=beta0)
    except ValueError:
        return None
    v = [beta * Ki * zi / (1.0 + beta * (Ki - 1.0)) if zi > 0 else 0.0 for zi, Ki in zip(z, K)]
    if not strict and max([abs(q) for q in lnK]) < 1e-7:
        return None
    parts, ln_phi = kern.dn_parts, kern.ln_phi_list
    small = kern._lists is not None  # factored derivatives (few components), else full matrices
    full = len(idx) == len(z)
    pick = (lambda a: a) if full else (lambda a: [a[i] for i in idx])
    err_old = math.inf
    cheap = False
    m = len(idx)
    for _ in range(max_newton):
        it += 1
        l = [zi - vi for zi, vi in zip(z, v)]
        V, L = sum(v), sum(l)
        if not (V > 0 and L > 0) or any(v[i] <= 0 or l[i] <= 0 for i in idx):
            return None
        y, x = [q / V for q in v], [q / L for q in l]
        if cheap:
            lpy, Zy, _ = ln_phi(y, p, "stable")
            lpx, Zx, _ = ln_phi(x, p, "stable")
            g = [(log(y[i]) + lpy[i]) - (log(x[i]) + lpx[i]) for i in idx]
            if max([abs(q) for q in g]) < 1e-12:
                return _split_out(z, V, x, y, lpx, lpy, Zx, Zy, it, method)
        if small:
            lpy, Vy, b, uy, wy, cy, aij, Py, qy, _, _ = parts(y, p, "stable")
            lpx, Vx, _, ux, wx, cx, _, Px, qx, _, _ = parts(x, p, "stable")
        else:
            lpy, dny, _, _, Vy = kern.derivs_list(y, p, "stable", False)
            lpx, dnx, _, _, Vx = kern.derivs_list(x, p, "stable", False)
        g = [(log(y[i]) + lpy[i]) - (log(x[i]) + lpx[i]) for i in idx]
        err = max([abs(q) for q in g])
        if err < 1e-12:
            RT = kern.RT
            return _split_out(z, V, x, y, lpx, lpy, Vx * p / RT, Vy * p / RT, it, method)
        if strict and (err > err_old or max([abs(log(y[i] / x[i])) for i in idx]) < 1e-5):
            return None
        err_old = err
        iV, iL = 1.0 / V, 1.0 / L
        if small:
            U = [a * iV + c * iL for a, c in zip(uy, ux)]
            W = [a * iV + c * iL for a, c in zip(wy, wx)]
            Qy = [a * iV for a in qy]
            Qx = [a * iL for a in qx]
            cc = cy * iV + cx * iL
            if not full:
                b, U, W, Py, Px, Qy, Qx = (pick(a) for a in (b, U, W, Py, Px, Qy, Qx))
                aij = [pick(aij[i]) for i in idx]
            H = [[bi * Uj + bj * Wi + cc * aij_ + Pyi * Qyj + Pxi * Qxj
                  for Uj, bj, aij_, Qyj, Qxj in zip(U, b, row, Qy, Qx)]
                 for bi, Wi, Pyi, Pxi, row in zip(b, W, Py, Px, aij)]
        else:
            H = [[(dny[i][j] - 1.0) * iV + (dnx[i][j] - 1.0) * iL for j in idx] for i in idx]
        D = [z[i] / (v[i] * l[i]) for i in idx]
        for a in range(m):
            H[a][a] += D[a]
        if not strict and modified:
            # near the critical point the Gibbs surface is not convex between the start and the solution
            # (and very flat): Newton on the raw Hessian then heads for a saddle or the edge 0 < v < z.
            # Here the Hessian, scaled by its ideal part D, has its eigenvalues replaced by their absolute
            # values (floored at 1e-8 of the largest), so every step lowers G and a flat, non-convex valley
            # is crossed in a few long steps; steps are accepted only if G decreases (Armijo). Near the
            # solution H is positive definite and this is Newton's method (Michelsen & Mollerup 2007,
            # ch. 10: second-order Gibbs-energy minimisation; absolute-eigenvalue modification:
            # Nocedal & Wright, Numerical Optimization (2nd ed., 2006), sec. 3.4)
            G0 = _gibbs_split(v, l, y, x, lpy, lpx, idx)
            sd = [1.0 / math.sqrt(d) for d in D]
            lam, Q = np.linalg.eigh(np.array(H) * np.outer(sd, sd))
            if not np.all(np.isfinite(lam)):
                return None
            lam = np.maximum(np.abs(lam), 1e-8 * float(np.max(np.abs(lam))))
            gs = np.array(g) * sd
            dv = ((Q @ ((Q.T @ -gs) / lam)) * sd).tolist()
        else:
            try:
                dv = solve_dense(H, [-q for q in g])
            except ZeroDivisionError:
                return None
        # keep 0 < v < z
        s = 1.0
        for _ in range(60):
            if all(0.0 < v[i] + s * dv[a] < z[i] for a, i in enumerate(idx)):
                break
            s *= 0.5
        if not strict and modified:  # backtrack until G decreases (Armijo, slope g.dv < 0 for positive-definite H)
            slope = sum([ga * da for ga, da in zip(g, dv)])
            for _ in range(40):
                vt = v[:]
                for a in range(m):
                    vt[idx[a]] += s * dv[a]
                lt = [zi - vi for zi, vi in zip(z, vt)]
                Vt, Lt = sum(vt), sum(lt)
                yt, xt = [q / Vt for q in vt], [q / Lt for q in lt]
                Gt = _gibbs_split(vt, lt, yt, xt, ln_phi(yt, p, "stable")[0], ln_phi(xt, p, "stable")[0], idx)
                if Gt <= G0 + 1e-4 * s * slope or abs(Gt - G0) <= 1e-15 * (abs(G0) + 1.0):
                    break
                s *= 0.5
            else:
                return None
        v = v[:]
        for a in range(m):
            v[idx[a]] += s * dv[a]
        cheap = err < 1e-6 and s == 1.0
    return None


def _gibbs_split(v, l, y, x, lpy, lpx, idx):
    """G/RT of the split [-]: sum_i v_i (ln y_i + ln phi_i^V) + l_i (ln x_i + ln phi_i^L) over the present components."""
    log = math.log
    return sum([v[i] * (log(y[i]) + lpy[i]) + l[i] * (log(x[i]) + lpx[i]) for i in idx])


def _split_out(z, V, x, y, lpx, lpy, Zx, Zy, it, method):
    lnK = [math.log(yi / (xi if xi > 0 else 1.0)) if zi > 0 else 0.0 for zi, xi, yi in zip(z, x, y)]
    return V, x, y, lnK, lpx, lpy, Zx, Zy, it, method


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
    kern : CubicPhaseKernel, optional
        The model's phase kernel at T (default ``model.phase_kernel(T)``).
    check_second_liquid : bool
        Test the split for a second liquid phase (SecondLiquidError if found).

    Returns
    -------
    FlashResult

    Raises
    ------
    SecondLiquidError
        The split is into two liquids (its lighter phase is liquid-like), or its liquid or its vapour is
        itself unstable with a liquid-like trial phase (a second liquid: three phases).
    """
    T, p = float(T), float(p)
    z = np.asarray(z, dtype=float)
    zl = z.tolist()
    nc = len(zl)
    kern = kern or model.phase_kernel(T)
    lpz, Zz, gz = kern.ln_phi_list(zl, p, "stable")
    Tcl = np.asarray(Tc, dtype=float).tolist()
    Kw = [pci / p * math.exp(5.373 * (1.0 + wi) * (1.0 - Tci / T))  # wilson_K, on Python floats
          for Tci, pci, wi in zip(Tcl, np.asarray(pc, dtype=float).tolist(), np.asarray(omega, dtype=float).tolist())]
    K0l = None
    if K0 is not None:
        K0l = np.asarray(K0, dtype=float).tolist()
        if not all(math.isfinite(k) for k in K0l):
            K0l = None
    trials = [[zi * k for zi, k in zip(zl, Kw)], [zi / k for zi, k in zip(zl, Kw)]]
    if K0l is not None and max([abs(math.log(k)) for k in K0l]) > 1e-5:
        trials += [[zi * k for zi, k in zip(zl, K0l)], [zi / k for zi, k in zip(zl, K0l)]]
    n_skippable = len(trials)
    # near-pure trials for components that can condense as their own phase: subcritical (T < Tc) and not
    # nearly all of the feed (whose near-pure trial is the feed itself, NEAR_PURE_MAX); common practice,
    # cf. DOMAIN 4.1
    for i in range(nc):
        if T < Tcl[i] and 0.0 < zl[i] < NEAR_PURE_MAX:
            t = [1e-3 * v for v in zl]
            t[i] = 1.0
            trials.append(t)
    # one Wilson or warm-start trial proving instability is enough to start the split; the near-pure
    # trials always run (the lowest tm wins), and if the split fails every trial is run and it is retried
    st = _stability_lists(kern, zl, p, trials, lpz, Zz, skippable=n_skippable)
    iters = st.iterations
    if st.stable:
        return _single(kern, z, p, T, Zz, st.tm_min, iters, "stability: stable")
    out = None
    # the unstable trial's K first; the Wilson K-values last (a split from a strongly non-ideal trial,
    # e.g. an ethanol-rich liquid, can fail where the classic start finds the vapour-liquid split:
    # O2/propane/ethane/ethanol at 277.9 K, 53.9 bar; found by the long fuzz)
    starts = [st.K.tolist(), Kw]
    if K0l is not None:
        starts.insert(0, K0l)
    tried, outside = [], None
    while out is None and starts:
        Ks = starts.pop(0)
        tried.append(Ks)
        lnK = [math.log(k) if zi > 0 else 0.0 for k, zi in zip(Ks, zl)]
        out = _split(kern, zl, p, lnK)
        if out is not None and not _guards_pass(zl, out, lpz):
            out = None
        if out is not None and not 0.0 < out[0] < 1.0:
            # a split outside (0, 1) from this start (e.g. a warm start from a vapour-liquid neighbour
            # while the feed here splits into two liquids): the feed was found unstable, so the other
            # starts are tried before the feed is called single phase
            outside, out = out, None
        if out is None and not starts and not st.complete:
            st = _stability_lists(kern, zl, p, trials, lpz, Zz)
            iters += st.iterations
            if not st.stable and st.K.tolist() not in tried:
                starts.append(st.K.tolist())
    if out is None and outside is not None:
        return _single(kern, z, p, T, Zz, st.tm_min, iters + outside[8],
                       f"{outside[9]}: beta={outside[0]:.3g} outside (0, 1)")
    if out is None:
        return _single(kern, z, p, T, Zz, st.tm_min, iters, "split rejected by guards: single phase")
    beta, x, y, lnK, lpx, lpy, Zx, Zy, it, method = out
    RT = kern.RT
    x, y = np.array(x), np.array(y)
    rho_x = kern.density(x, Zx * RT / p)
    rho_y = kern.density(y, Zy * RT / p)
    if rho_x < rho_y:  # label the denser phase liquid
        x, y, rho_x, rho_y, beta = y, x, rho_y, rho_x, 1.0 - beta
        lpx, lpy, Zx, Zy = lpy, lpx, Zy, Zx
    if check_second_liquid and _is_liquid_like(model, T, p, y, rho_y, Tcl):
        yl = y.tolist()
        raise SecondLiquidError(
            f"flash at T = {T:.3f} K, p = {p / 1e5:.4f} bar: the feed splits into two liquids (densities "
            f"{rho_x:.0f} and {rho_y:.0f} mol/m3; the lighter one is liquid-like, not a vapour); "
            f"liquid-liquid equilibrium is not reported as vapour-liquid and is not computed by supercrit. "
            f"Treat this state as unsafe (free second liquid, e.g. water). Mole fractions of the lighter "
            f"liquid: " + ", ".join(f"{n} {v:.4f}" for n, v in zip(model.components, yl)) + ".",
            SolverReport(True, iters + it, 0.0, "VLE flash: both phases liquid-like"))
    if check_second_liquid and nc > 1:
        # a phase of the split that is itself unstable with a trial phase other than the split's other phase
        # means a third phase: the liquid splits again (L-L-V), a liquid condenses from the vapour (e.g.
        # ethanol-rich beside a water-rich liquid), or a gas leaves a dense phase (H2 over two liquids); the
        # two-phase answer is then not the equilibrium
        s2 = _third_phase_trial(kern, x.tolist(), y.tolist(), lpx, Zx, zl, p, T, Tcl, Kw)
        if s2 is not None:
            # a gas if the third phase is at least as expanded as the split's vapour, else a second liquid
            kind = "a gas" if kern.ln_phi_list(s2.w.tolist(), p, "stable")[1] >= Zy else "a second liquid"
            raise SecondLiquidError(
                f"flash at T = {T:.3f} K, p = {p / 1e5:.4f} bar: the phases of the vapour-liquid split are not "
                f"stable (tangent-plane distance {s2.tm_min:.2e}): a third phase forms ({kind}, mole fractions "
                + ", ".join(f"{n} {v:.4f}" for n, v in zip(model.components, s2.w.tolist()))
                + "); a three-phase (L-L-V) region is not computed by supercrit. Treat this state as unsafe "
                "(free second liquid, e.g. water).",
                SolverReport(True, iters + it + s2.iterations, s2.tm_min, "VLE flash + stability of its phases"))
    return FlashResult(T, p, z, float(beta), x, y, y / x, float(rho_x), float(rho_y), None, None, st.tm_min,
                       SolverReport(True, iters + it, 0.0, method))


def _third_phase_trial(kern, xl, yl, lp, Zp, z, p, T, Tc, Kw):
    """The stability test of the split's liquid ``xl`` (its ln phi ``lp`` and Z ``Zp`` from the split; the
    vapour ``yl`` lies on the same tangent plane, so one test serves both phases). Trial phases: Wilson
    vapour-like and liquid-like trials from the vapour (a gas leaving a dense vapour, heavy components
    condensing from it; only with two or more subcritical components) and near-pure trials of the components
    that are subcritical (T < Tc) (common practice: only these can form their own liquid) and not already
    nearly all of the liquid (that trial would be the liquid itself; NEAR_PURE_MAX). A trial reaching the
    vapour stops there (tm = 0). Returns the test's answer when a trial phase lowers the Gibbs energy below
    the split's tangent plane and is not the vapour (a third phase), else None."""
    # the Wilson trials only where two components are subcritical: a third phase needs a second
    # condensable component (common practice); they roughly double the cost of a stable split's check
    n_cond = sum(1 for i in range(len(xl)) if T < Tc[i] and z[i] > 0)
    trials = [[yi * k for yi, k in zip(yl, Kw)], [yi / k for yi, k in zip(yl, Kw)]] if n_cond >= 2 else []
    for i in range(len(xl)):
        if T < Tc[i] and xl[i] < NEAR_PURE_MAX and z[i] > 0:
            t = [1e-3 * v for v in xl]
            t[i] = 1.0
            trials.append(t)
    if not trials:
        return None
    s2 = _stability_lists(kern, xl, p, trials, lp, Zp, known=(yl,))
    if not s2.stable and sum([(wi - yi) ** 2 for wi, yi in zip(s2.w.tolist(), yl)]) > 1e-6:
        return s2
    return None


def _is_liquid_like(model, T, p, y, rho_y, Tc) -> bool:
    """Whether the lighter phase of a split is a liquid: the phase identification parameter Pi > 1
    (Venkatarathnam & Oellrich, Fluid Phase Equilib. 301 (2011) 225, doi:10.1016/j.fluid.2010.12.001) and T
    below the phase's pseudo-critical temperature sum y_i Tc_i (Kay's rule; Kay, Ind. Eng. Chem. 28 (1936)
    1014, citation from memory; this excludes dense supercritical fluids and gases with a positive second
    virial coefficient, which also have Pi > 1). Pi is only evaluated when the phase is dense, Z < 0.5 (a
    cost filter: the vapours of vapour-liquid splits in this tool's range have larger Z except close to a
    critical point; common practice)."""
    yl = y.tolist()
    if T >= sum(yi * ti for yi, ti in zip(yl, Tc)):
        return False
    if p / (rho_y * float(model.R(y)) * T) >= 0.5:
        return False
    return phase_identification_parameter(model, T, rho_y, y) > 1.0


def _guards_pass(z, out, lpz):
    """The checks of every two-phase answer (issue 3 item 6), on lists: finite compositions, |ln K| away
    from 0, distinct phase volumes, material balance to 1e-10, Gibbs energy below the single phase."""
    beta, x, y, lnK, lpx, lpy, Zx, Zy, it, method = out
    if not all(math.isfinite(v) for v in x) or not all(math.isfinite(v) for v in y):
        return False
    big = 0.0
    for zi, xi, yi in zip(z, x, y):
        if zi > 0:
            r = yi / (xi if xi > 0 else 1.0)
            big = max(big, abs(math.log(r)) if r > 0 else math.inf)
    if big < LNK_MIN:
        return False
    if abs(Zx / Zy - 1.0) < RHO_RATIO_MIN:
        return False
    if max([abs((1.0 - beta) * xi + beta * yi - zi) for zi, xi, yi in zip(z, x, y)]) > 1e-10:
        return False
    g1 = _gibbs(z, lpz)
    g2 = (1.0 - beta) * _gibbs(x, lpx) + beta * _gibbs(y, lpy)
    return bool(g2 < g1 + 1e-13) or not 0.0 < beta < 1.0


def _single(kern, z, p, T, Z, tm, iters, why):
    rho = kern.density(z, Z * kern.RT / p)
    # root type: liquid-like if the compressibility is below that of the vapour-like root at this p
    if kern._lists is not None:  # a and b as ln_phi computed them, so that Z is one of these roots exactly
        zl = z.tolist()
        aij, b = kern._lists
        a, bm = kern._dot(zl, kern._mv(aij, zl)), kern._dot(b, zl)
    else:
        a, bm = float(z @ (kern.aij @ z)), float(kern.b @ z)
    zs, _, B = kern._roots(a, bm, p)
    kind = "liq" if (len(zs) > 1 and Z == zs[0]) or Z < 0.3 else "vap"  # Z < 0.3: dense (common practice)
    return FlashResult(T, p, z, None, None, None, None, None, None, float(rho), kind, tm,
                       SolverReport(True, iters, 0.0, why))


# ---------------------------------------------------------------------------------------------
# saturation points: Newton in X = (ln K, ln T, ln p) with one specified variable
