"""Phase stability by Michelsen's tangent-plane distance, with several trial phases.

For a phase of composition z at (T, p), the modified tangent-plane distance of a trial phase W
(mole numbers) is tm(W) = 1 + sum_i W_i (ln W_i + ln phi_i(w) - d_i - 1), d_i = ln z_i + ln phi_i(z);
z is unstable if tm < 0 anywhere. Trial phases: Wilson K vapour-like (W = z K) and liquid-like
(W = z / K) and one near-pure phase per component present (a phase made almost only of that
component), so that a separate water (or other heavy) phase is not missed.

References: M. L. Michelsen, Fluid Phase Equilib. 9 (1982) 1-19, doi:10.1016/0378-3812(82)85001-2;
Michelsen & Mollerup, Thermodynamic Models (2nd ed., 2007), ch. 10.

Notes
-----
Method: successive substitution (at most ``ss_iter`` steps) followed by Newton steps on
alpha_i = 2 sqrt(W_i) (Hessian I + sqrt(W_i W_j) d ln phi_i / d W_j), each step checked to lower tm,
else a substitution step is taken. A trial is stopped as trivial when w approaches z (sum (w - z)^2
< 1e-8 with tm near zero). Unstable when the lowest tm < -1e-10. With ``first_unstable`` the test
stops at the first trial that proves instability (a flash needs one negative-tm trial to start its
split; it runs the left-out trials if that split fails); a stable answer always runs every trial. The iterations run on Python floats (a handful of
components, where numpy's per-call overhead would dominate).
"""
from __future__ import annotations

import functools
import math
from dataclasses import dataclass

import numpy as np

TM_TOL = -1e-10  # [-] tm below this: unstable (common practice: above round-off of tm)


@dataclass(frozen=True)
class StabilityResult:
    """stable, tm_min [-], trial composition w (nc,), w_is_vapor (trial lighter than z), K guess y/x (nc,)."""

    stable: bool
    tm_min: float
    w: np.ndarray | None
    w_is_vapor: bool
    K: np.ndarray | None
    iterations: int
    complete: bool = True  # False: trials were left out after one proved instability


def wilson_K(T, p, Tc, pc, omega):
    """Wilson K-values K_i = (pc_i/p) exp(5.373 (1 + omega_i)(1 - Tc_i/T)) [-] (Wilson 1969)."""
    return pc / p * np.exp(5.373 * (1.0 + omega) * (1.0 - Tc / T))


def solve_dense(A, b):
    """Solution of the small dense system A x = b (lists of Python floats) by Gaussian elimination with
    partial pivoting; A and b are not modified. Raises ZeroDivisionError if A is singular.

    For the handful of unknowns of the flash, stability and envelope Newton steps, where
    numpy.linalg.solve costs more in call overhead than the elimination itself."""
    return solve_dense_many(A, [b])[0]


def solve_dense_many(A, bs):
    """:func:`solve_dense` for several right-hand sides bs (a list of lists) with one elimination."""
    n, m = len(A), len(bs)
    M = [row[:] + [b[i] for b in bs] for i, row in enumerate(A)]
    return _eliminator(n, m)(M)


@functools.cache
def _eliminator(n: int, m: int):
    """Gaussian elimination with partial pivoting and back substitution for an n x n system with m
    right-hand sides stored as extra columns of the rows of M (modified in place), written out for
    this n and m (the row updates without loop overhead); returns the m solution lists."""
    w = n + m
    lines = ["def eliminate(M):"]
    for k in range(n):
        lines += [f"    piv, big = {k}, abs(M[{k}][{k}])",
                  f"    for r in range({k + 1}, {n}):",
                  f"        v = abs(M[r][{k}])",
                  "        if v > big:",
                  "            piv, big = r, v",
                  "    if big == 0.0:",
                  "        raise ZeroDivisionError('singular matrix')",
                  f"    if piv != {k}:",
                  f"        M[{k}], M[piv] = M[piv], M[{k}]",
                  f"    rk = M[{k}]",
                  f"    inv = 1.0 / rk[{k}]"]
        if k + 1 < n:
            lines += [f"    for r in range({k + 1}, {n}):",
                      "        row = M[r]",
                      f"        f = row[{k}] * inv",
                      "        if f != 0.0:"]
            lines += [f"            row[{c}] -= f * rk[{c}]" for c in range(k + 1, w)]
    lines.append("    out = []")
    for j in range(m):
        cj = n + j
        for k in range(n - 1, -1, -1):
            terms = "".join(f" - M[{k}][{c}] * x{c}" for c in range(k + 1, n))
            lines.append(f"    x{k} = (M[{k}][{cj}]{terms}) / M[{k}][{k}]")
        lines.append("    out.append([" + ", ".join(f"x{k}" for k in range(n)) + "])")
    lines.append("    return out")
    scope = {}
    exec("\n".join(lines) + "\n", scope)  # noqa: S102 (text generated above from n and m only)
    return scope["eliminate"]


def _trial(kern, d, p, W, z, ss_iter=40, newton_iter=30, known=()):
    """Minimise tm from trial mole numbers W (lists); returns (tm, w, Z_w, iterations).

    Stops early once tm < TM_TOL (instability proven), when w collapses onto z (trivial) or onto one of
    the ``known`` compositions (phases in equilibrium with z, where tm = 0), or when substitution
    converges; slow substitution continues with Newton steps.
    """
    exp = math.exp
    lnW = [math.log(v) for v in W]
    ln_phi = kern.ln_phi_list
    it = 0
    for it in range(1, ss_iter + 1):
        Wn = [exp(v) for v in lnW]
        S = sum(Wn)
        w = [v / S for v in Wn]
        lp, Zw, _ = ln_phi(w, p, "stable")
        new = [di - li for di, li in zip(d, lp)]
        tm = 1.0 + sum([Wi * (lw - nw - 1.0) for Wi, lw, nw in zip(Wn, lnW, new)])
        if tm < TM_TOL and it > 1:
            return tm, w, Zw, it
        if sum([(wi - zi) ** 2 for wi, zi in zip(w, z)]) < 1e-8:  # collapsing onto the tested phase: trivial
            return tm, w, Zw, it
        if known and any(sum([(wi - ki) ** 2 for wi, ki in zip(w, k)]) < 1e-8 for k in known):
            return tm, w, Zw, it
        step = max([abs(nw - lw) for nw, lw in zip(new, lnW)])
        lnW = new
        if step < 1e-10:
            return tm, w, Zw, it
        if it >= 8 and step > 1e-6:
            return _newton(kern, d, p, lnW, it, newton_iter)
    Wn = [exp(v) for v in lnW]
    S = sum(Wn)
    w = [v / S for v in Wn]
    lp, Zw, _ = ln_phi(w, p, "stable")
    tm = 1.0 + sum([Wi * (lw + li - di - 1.0) for Wi, lw, li, di in zip(Wn, lnW, lp, d)])
    return tm, w, Zw, it


def _newton(kern, d, p, lnW, it0, max_iter):
    W = [math.exp(v) for v in lnW]
    n = len(W)
    it = it0
    for it in range(it0 + 1, it0 + max_iter + 1):
        S = sum(W)
        w = [v / S for v in W]
        lp, dn, _, _, _ = kern.derivs_list(w, p, "stable", False)
        g = [math.log(Wi) + li - di for Wi, li, di in zip(W, lp, d)]
        tm = 1.0 + sum([Wi * (gi - 1.0) for Wi, gi in zip(W, g)])
        sW = [math.sqrt(v) for v in W]
        grad = [si * gi for si, gi in zip(sW, g)]
        if max([abs(v) for v in g]) < 1e-12:
            break
        H = [[sW[i] * sW[j] * dn[i][j] / S for j in range(n)] for i in range(n)]
        for i in range(n):
            H[i][i] += 1.0 + 0.5 * g[i]
        try:
            da = solve_dense(H, [-v for v in grad])
        except ZeroDivisionError:
            da = [-v for v in grad]
        Wn = [max((0.5 * (2.0 * si + di)) ** 2, 1e-300) for si, di in zip(sW, da)]
        Sn = sum(Wn)
        lpn, _, _ = kern.ln_phi_list([v / Sn for v in Wn], p, "stable")
        tmn = 1.0 + sum([Wi * (math.log(Wi) + li - di - 1.0) for Wi, li, di in zip(Wn, lpn, d)])
        if tmn > tm + 1e-14:  # Newton did not lower tm: take a substitution step instead
            Wn = [math.exp(di - li) for di, li in zip(d, lp)]
        W = Wn
    S = sum(W)
    w = [v / S for v in W]
    lp, Zw, _ = kern.ln_phi_list(w, p, "stable")
    tm = 1.0 + sum([Wi * (math.log(Wi) + li - di - 1.0) for Wi, li, di in zip(W, lp, d)])
    return tm, w, Zw, it


def stability_test(kern, z, p, K_wilson, lnphi_z=None, Z_z=None, pure_trials=True, extra_trials=(),
                   wilson_trials=True, first_unstable=False):
    """Tangent-plane stability test of composition z at the kernel's T and pressure p [Pa].

    Parameters
    ----------
    kern : CubicPhaseKernel
        The model at T (see ``CubicModel.phase_kernel``).
    z : ndarray (nc,)
        Composition tested [-].
    p : float
        Pressure [Pa].
    K_wilson : ndarray (nc,)
        Wilson K-values at (T, p) for the vapour-like and liquid-like trials.
    lnphi_z, Z_z : ndarray (nc,) [-], float [-], optional
        ln phi and Z of z at (T, p), if already known.
    pure_trials : bool
        Add one near-pure trial phase per component present.
    wilson_trials : bool
        Start from the Wilson vapour-like and liquid-like trials.
    extra_trials : sequence of ndarray
        Further trial compositions (e.g. the phases of the previous solution).
    first_unstable : bool
        Stop at the first trial that proves instability (tm < -1e-10) instead of running every trial
        for the lowest tm; the answer ``stable`` is the same either way.

    Returns
    -------
    StabilityResult
    """
    z = np.asarray(z, dtype=float)
    if lnphi_z is None:
        lnphi_z, Z_z, _ = kern.ln_phi(z, p, "stable")
    zl = z.tolist()
    nc = len(zl)
    Kl = np.asarray(K_wilson, dtype=float).tolist()
    trials = [[zi * k for zi, k in zip(zl, Kl)], [zi / k for zi, k in zip(zl, Kl)]] if wilson_trials else []
    if pure_trials and nc > 1:
        for i in range(nc):
            if zl[i] > 0:
                t = [1e-3 * v for v in zl]
                t[i] = 1.0
                trials.append(t)
    trials.extend(np.asarray(t, dtype=float).tolist() for t in extra_trials)
    return _stability_lists(kern, zl, p, trials, np.asarray(lnphi_z, dtype=float).tolist(), Z_z,
                            len(trials) if first_unstable else 0)


def _stability_lists(kern, zl, p, trials, lpz, Z_z, skippable=0, known=()):
    """:func:`stability_test` on lists: z, the trial phases (mole numbers) and ln phi(z).

    Of the first ``skippable`` trials, those after one that proves instability are left out (the
    result then has ``complete=False``); the trials after them always run, and the lowest tm wins.
    ``known``: compositions in equilibrium with z (tm = 0 there); a trial reaching one of them stops."""
    subset = not all(v > 0 for v in zl)
    if subset:
        d = [math.log(zi) + li if zi > 0 else -math.inf for zi, li in zip(zl, lpz)]
    else:
        d = [math.log(zi) + li for zi, li in zip(zl, lpz)]
    best = (math.inf, None, None)
    iters = 0
    skip_to = 0
    skipped = False
    for n_trial, W in enumerate(trials):
        if n_trial < skip_to:
            skipped = True
            continue
        if subset:  # only components present in z can appear in the trial phase
            W = [wi if zi > 0 else 0.0 for wi, zi in zip(W, zl)]
        W = [max(wi, 1e-300) if zi > 0 else 0.0 for wi, zi in zip(W, zl)]
        S = sum(W)
        if all(abs(wi / S - zi) <= 1e-8 + 1e-5 * abs(zi) for wi, zi in zip(W, zl)):  # np.allclose(.., atol=1e-8)
            continue
        if subset:
            tm, w, Zw, it = _trial_subset(kern, np.array(d), p, np.array(W), np.array(zl) > 0)
            w = w.tolist()
        else:
            tm, w, Zw, it = _trial(kern, d, p, W, zl, known=known)
        iters += it
        if sum([(wi - zi) ** 2 for wi, zi in zip(w, zl)]) < 1e-10:  # collapsed onto the tested phase: trivial
            continue
        if tm < best[0]:
            best = (tm, w, Zw)
        if n_trial < skippable and tm < TM_TOL:
            skip_to = skippable
    tm, w, Zw = best
    complete = not skipped
    if w is None or not tm < TM_TOL:
        return StabilityResult(True, float(tm) if math.isfinite(tm) else 0.0,
                               None if w is None else np.array(w), False, None, iters, complete)
    vap = Zw > Z_z
    K = [((wi / zi) if vap else (zi / wi)) if zi > 0 else 1.0 for wi, zi in zip(w, zl)]
    return StabilityResult(False, float(tm), np.array(w), bool(vap), np.array(K), iters, complete)


def _trial_subset(kern, d, p, W, present):
    """Trial minimisation when some components are absent: iterate on the present ones only."""
    lnW = np.full(len(W), -np.inf)
    lnW[present] = np.log(W[present])
    it = 0
    for it in range(1, 100):
        Wn = np.exp(lnW)
        w = Wn / Wn.sum()
        lp, Zw, _ = kern.ln_phi(w, p, "stable")
        new = np.where(present, d - lp, -np.inf)
        step = np.max(np.abs(new[present] - lnW[present]))
        lnW = new
        if step < 1e-10:
            break
    Wn = np.exp(lnW)
    w = Wn / Wn.sum()
    lp, Zw, _ = kern.ln_phi(w, p, "stable")
    g = np.where(present, lnW + lp - d - 1.0, 0.0)
    return 1.0 + float(Wn[present] @ g[present]), w, Zw, it
