"""(p, h) and (p, s) states started from a neighbouring state: Newton in (T, rho) on one phase.

Path sampling and step outlets know a nearby state (the previous point of a path, a step's inlet).
Starting there, the two equations p(T, rho) = p* and h(T, rho) = h* (or s = s*) are solved by
Newton's method with the analytic Jacobian (fixed composition):

    (dp/dT)_rho, (dp/drho)_T                 from the alpha_r derivatives (properties.py);
    (dh/dT)_rho = cv + (dp/dT)_rho / rho      (dh/drho)_T = ((dp/drho)_T - T (dp/dT)_rho / rho) / rho;
    (ds/dT)_rho = cv / T                      (ds/drho)_T = -(dp/dT)_rho / rho^2   (Maxwell relation).

The answer is *a* single-phase state with the given p and h (or s); whether it is the stable state
is for the caller to decide (the Fluid facade checks it against the saturation line, the root
choice or the mixture flash, and otherwise runs the full flash). Each iteration costs one
evaluation of the alpha_r derivatives, so a path of near neighbours costs a few evaluations a point.
"""
from __future__ import annotations

import math

import numpy as np

from ..properties import _all_properties_scalar, all_properties
from .density import warm_density


def _props(model, ideal, M, T: float, rho: float, x, scalar: bool):
    # scalar: the model has the single-state hooks; the same numbers as all_properties, as Python floats
    pr = _all_properties_scalar(model, ideal, M, T, rho, x, wrap=False) if scalar else \
        all_properties(model, ideal, M, T, rho, x)
    return (float(pr["p"]), float(pr["h"]), float(pr["s"]), float(pr["cv"]), float(pr["dpdT"]),
            float(pr["dpdrho"]))


def single_phase_p_prop(model, ideal, M, x, p: float, target: float, key: str, T0: float, rho0: float,
                        T_min: float, T_max: float, max_iter: int = 40):
    """(T [K], rho [mol m-3]) of one phase with pressure p [Pa] and h [J mol-1] (key 'h') or
    s [J mol-1 K-1] (key 's'), by Newton's method from (T0, rho0); None if it does not converge.

    Converged when the last full step changed T and rho by at most 1e-11 (relative), or by at most
    1e-7 after a previous step of at most 1e-3 (quadratic convergence leaves an error of order 1e-14).
    Steps are limited to 30 K and to 30 % of the density; the iteration gives up (None) on leaving
    [T_min, T_max], on a mechanically unstable density ((dp/drho)_T <= 0) or after ``max_iter`` steps.
    """
    x = np.asarray(x, dtype=float)
    scalar = x.ndim == 1 and hasattr(model, "alphar_derivs_scalar") and hasattr(ideal, "all_R_scalar")
    if scalar:
        x = tuple(x.tolist())  # no all_properties checks and numpy wrapping per iteration
    T, rho = float(T0), float(rho0)
    if not (T > 0 and rho > 0 and math.isfinite(T) and math.isfinite(rho)):
        return None
    is_h = key == "h"
    prev = float("inf")
    for _ in range(max_iter):
        try:
            pr, h, s, cv, dpdT, dpdrho = _props(model, ideal, M, T, rho, x, scalar)
        except (ArithmeticError, ValueError):
            return None
        if not (dpdrho > 0.0) or not math.isfinite(pr):
            return None
        if is_h:
            f2 = h - target
            a21, a22 = cv + dpdT / rho, (dpdrho - T * dpdT / rho) / rho
        else:
            f2 = s - target
            a21, a22 = cv / T, -dpdT / (rho * rho)
        f1 = pr - p
        if abs(f1) <= 1e-14 * p and abs(f2) <= 1e-14 * (abs(target) + 10.0 * T):
            return T, rho  # residuals at round-off already
        a11, a12 = dpdT, dpdrho
        det = a11 * a22 - a12 * a21
        if det == 0.0 or not math.isfinite(det):
            return None
        dT = -(a22 * f1 - a12 * f2) / det
        drho = -(-a21 * f1 + a11 * f2) / det
        scale = 1.0
        if abs(dT) > 30.0:
            scale = 30.0 / abs(dT)
        if abs(drho) > 0.3 * rho:
            scale = min(scale, 0.3 * rho / abs(drho))
        T += scale * dT
        rho += scale * drho
        if not (T_min <= T <= T_max) or rho <= 0.0:
            return None
        size = max(abs(dT) / T, abs(drho) / rho)
        # converged: a step at round-off, or (quadratic convergence) a step below 1e-7 after one below 1e-3,
        # which leaves an error of order 1e-14 after it
        if scale == 1.0 and (size <= 1e-11 or (size <= 1e-7 and prev <= 1e-3)):
            return T, rho
        prev = size if scale == 1.0 else float("inf")
    return None


def isobar_walker(fluid, p: float, key: str):
    """T -> property ``key`` [SI] along the isobar p [Pa] of a pure fluid above its critical temperature,
    where the (T, p) state has one density root: ``warm_density`` (Newton on p(rho)) from the previous
    call's density moved along the isobar's slope (the calls of a 1-D search along an isobar are near
    neighbours), the facade's full solve where that Newton does not settle. Raises ModelRangeError below the critical temperature."""
    from ...errors import ModelRangeError

    c = fluid._crit
    if c is None or not fluid.is_pure:
        raise ModelRangeError("isobar_walker is for pure fluids with a critical point")
    model, ideal, M, x = fluid.model, fluid.ideal, fluid.M_i, fluid.x
    last = {}

    def value(T: float) -> float:
        T = float(T)
        if T < c.T:
            raise ModelRangeError(f"isobar_walker: T = {T:.4f} K is below the critical temperature {c.T:.4f} K")
        rho = last.get("rho")
        if rho is not None:
            # predictor along the isobar: drho = -(dp/dT)_rho / (dp/drho)_T dT, then Newton on p(rho)
            pred = rho - last["slope"] * (T - last["T"])
            rho = warm_density(model, T, p, x, pred if pred > 0 else rho, c.rho)
        if rho is None:
            rho = float(fluid.state(T=T, p=p).rho_molar)
        pr = all_properties(model, ideal, M, T, rho, x)
        last.update(rho=rho, T=T, slope=float(pr["dpdT"]) / float(pr["dpdrho"]))
        return float(pr[key])

    return value


def continue_phase(fluid, p: float, target: float, key: str, T0: float, rho0: float):
    """(T [K], rho [mol m-3]) at (p, h) or (p, s) on the same single phase as the neighbour (T0, rho0),
    without a phase-stability check; None where Newton does not settle.

    For slope evaluations *inside* one integration step whose end states are flashed in full (the
    polytropic path of a compressor): where the end states show that the phase changed within the
    step, the caller repeats the step with full flashes."""
    lo, hi = fluid.__dict__.get("_T_lims") or fluid._T_limits()
    return single_phase_p_prop(fluid.model, fluid.ideal, fluid.M_i, fluid.x, p, target, key, T0, rho0, lo, hi)
