"""Every property, derived once for every model from alpha_r derivatives plus the ideal-gas part.

With A_ij from :class:`~supercrit.thermo.models.base.AlpharDerivs` and R the model's gas constant:
p = rho R T (1 + A01); (dp/drho)_T = R T (1 + 2 A01 + A02); (dp/dT)_rho = rho R (1 + A01 - A11);
h = h0(T) + R T (A10 + A01); s = s0(T, rho) + R (A10 - A00); cv = cp0 - R - R A20;
cp = cv + T (dp/dT)^2 / (rho^2 dp/drho); w^2 = (cp/cv)(dp/drho)/M;
mu_JT = (T (dp/dT)/(rho^2 dp/drho) - 1/rho)/cp; kappa_T = 1/(rho dp/drho); alpha_p = (dp/dT)/(rho dp/drho);
ln phi_i = d(n alpha_r)/dn_i - ln Z.
The ideal-gas part and the h/s reference state are those of :mod:`supercrit.thermo.ideal_gas`.
"""
from __future__ import annotations

import math

import numpy as np

from .constants import P_REF

# [-] states per block of a batched evaluation: a speed setting, not a numerical one (every formula
# works element by element). Blocks keep numpy's temporaries small (64 kB of float64), so that the
# allocator reuses them instead of mapping fresh memory and faulting it in for every operation, and
# they stay in cache; larger batches are evaluated block by block and joined.
BLOCK = 8192


def pressure(model, T, rho, x):
    """Pressure [Pa]: p = rho R T (1 + A01)."""
    T, rho = np.asarray(T, dtype=float), np.asarray(rho, dtype=float)
    return rho * model.R(x) * T * (1.0 + model.alphar_derivs(T, rho, x).A01)


def dp_drho(model, T, rho, x):
    """(dp/drho)_T [Pa m3 mol-1] = R T (1 + 2 A01 + A02)."""
    d = model.alphar_derivs(T, rho, x)
    return model.R(x) * np.asarray(T, dtype=float) * (1.0 + 2.0 * d.A01 + d.A02)


def phase_identification_parameter(model, T: float, rho: float, x) -> float:
    """Phase identification parameter Pi [-] of one state (Venkatarathnam & Oellrich, Fluid Phase Equilib.
    301 (2011) 225-233, doi:10.1016/j.fluid.2010.12.001): Pi = V [(d2p/dV dT)/(dp/dT)_V -
    (d2p/dV2)_T/(dp/dV)_T], written in density as Pi = 2 - rho (d2p/drho dT)/(dp/dT) + rho
    (d2p/drho2)/(dp/drho). Pi > 1: liquid-like; Pi < 1: vapour-like (the ideal gas has Pi = 1; a gas with a
    positive second virial coefficient also has Pi > 1, so callers combine Pi with a temperature criterion).
    The second derivatives of p are central differences of the analytic (dp/drho)_T (relative steps 1e-5 in
    rho and T).
    """
    T, rho = float(T), float(rho)
    x = np.asarray(x, dtype=float)
    hr, hT = 1e-5 * rho, 1e-5 * T
    R = float(model.R(x))
    Ts, rhos = (T, T, T, T + hT, T - hT), (rho, rho + hr, rho - hr, rho, rho)
    scalar = getattr(model, "alphar_derivs_scalar", None)
    if scalar is not None:  # optional hook (Python floats): A00, A10, A01, A20, A11, A02
        xt = tuple(x.tolist())
        d = [scalar(Ti, ri, xt) for Ti, ri in zip(Ts, rhos)]
        A01, A11 = d[0][2], d[0][4]
        dpr = [R * Ti * (1.0 + 2.0 * di[2] + di[5]) for Ti, di in zip(Ts, d)]
    else:
        da = model.alphar_derivs(np.array(Ts), np.array(rhos), x)
        A01, A11 = float(da.A01[0]), float(da.A11[0])
        dpr = (R * np.array(Ts) * (1.0 + 2.0 * da.A01 + da.A02)).tolist()
    dp_drho_ = dpr[0]
    d2p_drho2 = (dpr[1] - dpr[2]) / (2.0 * hr)
    d2p_drhodT = (dpr[3] - dpr[4]) / (2.0 * hT)
    dp_dT = rho * R * (1.0 + A01 - A11)
    return 2.0 - rho * d2p_drhodT / dp_dT + rho * d2p_drho2 / dp_drho_


def ln_fugacity_coefficients(model, T, rho, x):
    """ln phi_i [-], shape (..., nc)."""
    d = model.alphar_derivs(T, rho, x)
    return model.ndalphar_dni(T, rho, x) - np.log1p(d.A01)[..., None]


def reduced_gibbs_residual(model, T, rho, x):
    """(g - g_ig(T, p))/(R T) at the state's own pressure [-] = A00 + A01 - ln(1 + A01).

    Used to choose between density roots at fixed (T, p, x): the lowest value is stable.
    """
    d = model.alphar_derivs(T, rho, x)
    return d.A00 + d.A01 - np.log1p(d.A01)


def all_properties(model, ideal, M, T, rho, x) -> dict[str, np.ndarray]:
    """Every single-phase property at (T, rho, x), arrays broadcast over (...).

    Parameters
    ----------
    model : Model
    ideal : IdealGasParts
    M : ndarray (nc,)
        Component molar masses [kg mol-1].
    T : array_like [K]
    rho : array_like [mol m-3]
    x : array_like (..., nc) [-]

    Returns
    -------
    dict
        p [Pa], Z [-], h, u, g [J mol-1], s, cp, cv [J mol-1 K-1], w [m s-1], mu_jt [K Pa-1],
        kappa_T [Pa-1], alpha_p [K-1], dpdrho [Pa m3 mol-1], dpdT [Pa K-1], M [kg mol-1].
    """
    T, rho, x = np.asarray(T, dtype=float), np.asarray(rho, dtype=float), np.asarray(x, dtype=float)
    if T.ndim == 0 and rho.ndim == 0 and x.ndim == 1 and hasattr(model, "alphar_derivs_scalar") \
            and hasattr(ideal, "all_R_scalar"):
        try:
            return _all_properties_scalar(model, ideal, M, float(T), float(rho), tuple(x.tolist()))
        except (ArithmeticError, ValueError):
            pass  # outside the real domain (e.g. at a pole): the array path gives numpy's inf/NaN
    shape = np.broadcast_shapes(T.shape, rho.shape, x.shape[:-1])
    n = math.prod(shape)
    if n > BLOCK:  # element by element the same numbers, block by block (see BLOCK)
        nc = x.shape[-1]
        Tf = np.broadcast_to(T, shape).reshape(-1)
        rf = np.broadcast_to(rho, shape).reshape(-1)
        xf = np.broadcast_to(x, shape + (nc,)).reshape(-1, nc)
        out = None
        for i in range(0, n, BLOCK):
            part = all_properties(model, ideal, M, Tf[i:i + BLOCK], rf[i:i + BLOCK], xf[i:i + BLOCK])
            if out is None:
                out = {k: np.empty(n) for k in part}
            for k, v in part.items():
                out[k][i:i + BLOCK] = v
        return {k: v.reshape(shape) for k, v in out.items()}
    d = model.alphar_derivs(T, rho, x)
    R = model.R(x)
    RT = R * T
    Z = 1.0 + d.A01
    p = rho * RT * Z
    dpdrho = RT * (1.0 + 2.0 * d.A01 + d.A02)
    dpdT = rho * R * (1.0 + d.A01 - d.A11)
    cp0_i, h0_i, s0_i = ideal.all_R(T)
    cp0_R = np.sum(x * cp0_i, axis=-1)
    h0_R = np.sum(x * h0_i, axis=-1)
    # one composition broadcast over a batch (the usual case): x ln x of that one row, broadcast
    xr = x[(0,) * (x.ndim - 1)] if x.ndim > 1 and not any(x.strides[:-1]) else x
    xlnx = np.sum(np.where(xr > 0, xr * np.log(np.where(xr > 0, xr, 1.0)), 0.0), axis=-1)
    s0_R = np.sum(x * s0_i, axis=-1) - np.log(rho * RT / P_REF) - xlnx
    h = R * h0_R + RT * (d.A10 + d.A01)
    s = R * s0_R + R * (d.A10 - d.A00)
    cv = R * (cp0_R - 1.0 - d.A20)
    cp = cv + T * dpdT * dpdT / (rho * rho * dpdrho)
    Mm = np.full(np.shape(x)[:-1], xr @ M)
    w = np.sqrt(np.maximum(cp / cv * dpdrho / Mm, 0.0))
    dvdT = dpdT / (rho * rho * dpdrho)
    return {
        "p": p, "Z": Z, "h": h, "s": s, "u": h - p / rho, "g": h - T * s, "cp": cp, "cv": cv, "w": w,
        "mu_jt": (T * dvdT - 1.0 / rho) / cp, "kappa_T": 1.0 / (rho * dpdrho), "alpha_p": dpdT / (rho * dpdrho),
        "dpdrho": dpdrho, "dpdT": dpdT, "M": Mm,
    }


def _all_properties_scalar(model, ideal, M, T: float, rho: float, x: tuple, derivs=None, wrap=True) -> dict:
    """:func:`all_properties` of one state with Python floats: the same formulas term by term, without
    numpy's per-call overhead on 0-d arrays (equal to round-off, tests/thermo/test_fast_paths.py).
    ``derivs``: the model's ``alphar_derivs_scalar(T, rho, x)`` where the caller has it already;
    ``wrap``: values as numpy float64 (as :func:`all_properties` gives them), else Python floats."""
    A00, A10, A01, A20, A11, A02 = model.alphar_derivs_scalar(T, rho, x) if derivs is None else derivs
    R = float(model.gas_constant)
    RT = R * T
    Z = 1.0 + A01
    p = rho * RT * Z
    dpdrho = RT * (1.0 + 2.0 * A01 + A02)
    dpdT = rho * R * (1.0 + A01 - A11)
    cp0_i, h0_i, s0_i = ideal.all_R_scalar(T)
    n = len(x)
    if n == 1:  # the sums below with one term (sum([v]) == v), written out
        x0 = x[0]
        cp0_R, h0_R, s0x = x0 * cp0_i[0], x0 * h0_i[0], x0 * s0_i[0]
        xlnx = x0 * math.log(x0) if x0 > 0 else 0.0
        Mm = x0 * float(M[0])
    else:
        cp0_R = sum(x[i] * cp0_i[i] for i in range(n))
        h0_R = sum(x[i] * h0_i[i] for i in range(n))
        xlnx = sum(xi * math.log(xi) if xi > 0 else 0.0 for xi in x)
        s0x = sum(x[i] * s0_i[i] for i in range(n))
        Mm = sum(x[i] * float(M[i]) for i in range(n))
    s0_R = s0x - math.log(rho * RT / P_REF) - xlnx
    h = R * h0_R + RT * (A10 + A01)
    s = R * s0_R + R * (A10 - A00)
    cv = R * (cp0_R - 1.0 - A20)
    rr_dp = rho * rho * dpdrho
    cp = cv + T * dpdT * dpdT / rr_dp
    w = math.sqrt(max(cp / cv * dpdrho / Mm, 0.0))
    dvdT = dpdT / rr_dp
    out = {
        "p": p, "Z": Z, "h": h, "s": s, "u": h - p / rho, "g": h - T * s, "cp": cp, "cv": cv, "w": w,
        "mu_jt": (T * dvdT - 1.0 / rho) / cp, "kappa_T": 1.0 / (rho * dpdrho), "alpha_p": dpdT / (rho * dpdrho),
        "dpdrho": dpdrho, "dpdT": dpdT, "M": Mm,
    }
    if wrap:
        f = np.float64
        return {k: f(v) for k, v in out.items()}
    return out
