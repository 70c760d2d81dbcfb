"""Pure-fluid (p, h) and (p, s) specifications, including inside the two-phase dome.

Method: below the model's critical pressure the saturation temperature and the saturated liquid
and vapour values of h (or s) at p are computed first; a value between them is two-phase with the
vapour fraction from the lever rule. Otherwise T is found on the liquid branch (T below Tsat,
densest root), the vapour branch (T above Tsat, lightest root) or, at or above the critical
pressure and for models without a two-phase region, on the single stable branch, by a bracketed
Brent solve of h(T, p) - h = 0 (h is monotone in T at constant p on each branch, cp > 0).

Notes
-----
Tolerance: |dT| <= 1e-10 K. Known failure region: none in the cubic models' range; a target
outside [T_min, T_max] (the ideal-gas correlation's range, or the triple point on the liquid
side) raises ModelRangeError.
"""
from __future__ import annotations

import numpy as np
from scipy.optimize import brentq

from ...errors import ConvergenceError, ModelRangeError
from ..properties import all_properties
from .density import density_roots
from .result import SolverReport
from .saturation import saturation_temperature


def _prop_at(model, ideal, M, x, T, p, branch, key, rho_c):
    roots = density_roots(model, T, p, x, rho_c)
    r = roots[np.isfinite(roots)]
    if r.size == 0:
        raise ModelRangeError(f"{model.name}: no density root at T = {T:.3f} K, p = {p / 1e5:.4f} bar")
    if branch == "liquid":
        rho = r.max()
    elif branch == "vapor":
        rho = r.min()
    else:
        from .density import stable_density

        rho = float(stable_density(model, T, p, x, rho_c))
    return all_properties(model, ideal, M, T, rho, x)[key], rho


def flash_p_prop(model, ideal, M, x, p, target, key, crit, T_min, T_max, *, xtol=1e-10):
    """Solve a pure-fluid state from p [Pa] and h [J mol-1] (key 'h') or s [J mol-1 K-1] (key 's').

    Returns
    -------
    dict
        T [K], rho [mol m-3], phase ('liquid', 'gas', 'supercritical', 'two-phase'), q (vapour
        fraction), rho_l, rho_v (two-phase), report (SolverReport).

    Raises
    ------
    ModelRangeError
        If the target lies outside the temperatures the model and data support at this p.
    """
    x = np.asarray(x, dtype=float)
    two_phase_model = getattr(model, "has_two_phase", True)
    name = {"h": "enthalpy", "s": "entropy"}[key]
    rho_c = crit.rho if crit is not None else None
    if two_phase_model and crit is not None and p < crit.p:
        sat = saturation_temperature(model, p, crit, x, T_min=min(T_min, 0.5 * crit.T))
        Ts = sat.T
        pL = all_properties(model, ideal, M, Ts, sat.rho_liq, x)[key]
        pV = all_properties(model, ideal, M, Ts, sat.rho_vap, x)[key]
        if pL <= target <= pV:
            q = (target - pL) / (pV - pL)
            rho = 1.0 / ((1.0 - q) / sat.rho_liq + q / sat.rho_vap)
            return dict(T=Ts, rho=rho, phase="two-phase", q=q, rho_l=sat.rho_liq, rho_v=sat.rho_vap,
                        report=SolverReport(True, sat.report.iterations, 0.0, "saturation + lever rule"))
        if target < pL:
            lo, hi, branch = T_min, Ts, "liquid"
        else:
            lo, hi, branch = Ts, T_max, "vapor"
    else:
        lo, hi, branch = T_min, T_max, "stable"

    def f(T):
        return _prop_at(model, ideal, M, x, T, p, branch, key, rho_c)[0] - target

    flo, fhi = f(lo), f(hi)
    if flo > 0 or fhi < 0:
        edge = "below" if flo > 0 else "above"
        bound = lo if flo > 0 else hi
        raise ModelRangeError(
            f"{name} {target:.6g} at p = {p / 1e5:.4f} bar is {edge} the {branch} value at T = {bound:.2f} K, the "
            f"{'lowest' if flo > 0 else 'highest'} temperature supported here ({T_min:.2f}-{T_max:.2f} K).")
    if flo == 0:
        T = lo
        it = 0
    elif fhi == 0:
        T = hi
        it = 0
    else:
        try:
            T, res = brentq(f, lo, hi, xtol=xtol, rtol=4 * np.finfo(float).eps, maxiter=200, full_output=True)
        except RuntimeError as exc:  # pragma: no cover - brentq on a bracketed monotone function
            raise ConvergenceError(f"p-{key} flash did not converge: {exc}",
                                   SolverReport(False, 200, float("nan"), "Brent on T")) from None
        it = res.iterations
    rho = _prop_at(model, ideal, M, x, T, p, branch, key, rho_c)[1]
    return dict(T=T, rho=rho, phase=None, q=None, rho_l=None, rho_v=None,
                report=SolverReport(True, it, 0.0, f"Brent on T ({branch} branch)"))
