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
< 1e-8 with tm near zero). Unstable when the lowest tm < -1e-10.
"""
from __future__ import annotations

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


def wilson_K(T, p, Tc, pc, omega):
    """Wilson K-values K_i = (pc_i/p) exp(5.373 (1 + omega_i)(1 - Tc_i/T)) [-] (Wilson 1969)."""
    return pc / p * np.exp(5.373 * (1.0 + omega) * (1.0 - Tc / T))


def _trial(kern, d, p, W, z, ss_iter=40, newton_iter=30):
    """Minimise tm from trial mole numbers W; returns (tm, w, Z_w, iterations).

    Stops early once tm < TM_TOL (instability proven), when w collapses onto z (trivial), or when
    substitution converges; slow substitution continues with Newton steps.
    """
    lnW = np.log(W)
    it = 0
    for it in range(1, ss_iter + 1):
        Wn = np.exp(lnW)
        S = Wn.sum()
        w = Wn / S
        lp, Zw, _ = kern.ln_phi(w, p, "stable")
        new = d - lp
        tm = 1.0 + float(Wn @ (lnW - new - 1.0))
        if tm < TM_TOL and it > 1:
            return tm, w, Zw, it
        dz = w - z
        if float(dz @ dz) < 1e-8:  # collapsing onto the tested phase: trivial
            return tm, w, Zw, it
        step = float(np.max(np.abs(new - lnW)))
        lnW = new
        if step < 1e-10:
            return tm, w, Zw, it
        if it >= 8 and step > 1e-6:
            return _newton(kern, d, p, lnW, it, newton_iter)
    Wn = np.exp(lnW)
    w = Wn / Wn.sum()
    lp, Zw, _ = kern.ln_phi(w, p, "stable")
    tm = 1.0 + float(Wn @ (lnW + lp - d - 1.0))
    return tm, w, Zw, it


def _newton(kern, d, p, lnW, it0, max_iter):
    W = np.exp(lnW)
    tm = None
    it = it0
    for it in range(it0 + 1, it0 + max_iter + 1):
        w = W / W.sum()
        lp, dn, _, _, _ = kern.ln_phi_and_derivs(w, p, "stable")
        g = np.log(W) + lp - d
        tm = 1.0 + float(W @ (g - 1.0))
        sW = np.sqrt(W)
        grad = sW * g
        if np.max(np.abs(g)) < 1e-12:
            break
        H = np.eye(len(W)) + np.outer(sW, sW) * dn / W.sum() + np.diag(0.5 * g)
        try:
            da = np.linalg.solve(H, -grad)
        except np.linalg.LinAlgError:
            da = -grad
        alpha = 2.0 * sW + da
        Wn = np.maximum((0.5 * alpha) ** 2, 1e-300)
        wn = Wn / Wn.sum()
        lpn, _, _ = kern.ln_phi(wn, p, "stable")
        tmn = 1.0 + float(Wn @ (np.log(Wn) + lpn - d - 1.0))
        if tmn > tm + 1e-14:  # Newton did not lower tm: take a substitution step instead
            Wn = np.exp(d - lp)
        W = Wn
    w = W / W.sum()
    lp, Zw, _ = kern.ln_phi(w, p, "stable")
    tm = 1.0 + float(W @ (np.log(W) + lp - d - 1.0))
    return tm, w, Zw, it


def stability_test(kern, z, p, K_wilson, lnphi_z=None, Z_z=None, pure_trials=True, extra_trials=(),
                   wilson_trials=True):
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
    pure_trials : bool
        Add one near-pure trial phase per component present.
    wilson_trials : bool
        Start from the Wilson vapour-like and liquid-like trials.
    extra_trials : sequence of ndarray
        Further trial compositions (e.g. the phases of the previous solution).

    Returns
    -------
    StabilityResult
    """
    z = np.asarray(z, dtype=float)
    present = z > 0
    if lnphi_z is None:
        lnphi_z, Z_z, _ = kern.ln_phi(z, p, "stable")
    with np.errstate(divide="ignore"):
        d = np.where(present, np.log(np.where(present, z, 1.0)) + lnphi_z, -np.inf)
    trials = [z * K_wilson, z / K_wilson] if wilson_trials else []
    nc = len(z)
    if pure_trials and nc > 1:
        for i in range(nc):
            if present[i]:
                t = np.where(present, 1e-3 * z, 0.0)
                t[i] = 1.0
                trials.append(t)
    trials.extend(np.asarray(t, dtype=float) for t in extra_trials)
    best = (np.inf, None, None)
    iters = 0
    sub = ~present
    for W in trials:
        if np.any(sub):  # only components present in z can appear in the trial phase
            W = np.where(present, W, 0.0)
        W = np.maximum(W, 1e-300) * present
        if np.all(np.abs(W / W.sum() - z) <= 1e-8 + 1e-5 * np.abs(z)):  # np.allclose(.., atol=1e-8), unwrapped
            continue
        if np.any(sub):
            tm, w, Zw, it = _trial_subset(kern, d, p, W, present)
        else:
            tm, w, Zw, it = _trial(kern, d, p, W, z)
        iters += it
        if np.sum((w - z) ** 2) < 1e-10:  # collapsed onto the tested phase: trivial
            continue
        if tm < best[0]:
            best = (tm, w, Zw)
    tm, w, Zw = best
    if w is None or not tm < TM_TOL:
        return StabilityResult(True, float(tm) if np.isfinite(tm) else 0.0, w, False, None, iters)
    vap = Zw > Z_z
    with np.errstate(divide="ignore", invalid="ignore"):
        K = np.where(present, (w / z) if vap else (z / w), 1.0)
    return StabilityResult(False, float(tm), w, bool(vap), K, iters)


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
