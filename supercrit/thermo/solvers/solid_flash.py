"""Pure-CO2 (p, h) and (p, s) states below and at the triple-point pressure, with solid CO2.

Below the triple point (216.592 K, 0.51795 MPa; Span & Wagner 1996) no liquid exists: a throttle or
a blow-down that ends there gives vapour, or vapour and dry ice on the sublimation line. This module
completes the pure-fluid flash of :mod:`flash_pure` for Span-Wagner CO2:

* p < pt: the sublimation temperature T_sub(p) of Span & Wagner (1996) Eq. 3.12 fixes T. The
  saturated vapour there comes from the fluid model at (T_sub, p); the solid's enthalpy is
  h_S = h_V - dh_sub with the enthalpy of sublimation from the Clausius-Clapeyron equation,
  dh_sub = T (v_V - v_S) dp_sub/dT (:func:`supercrit.thermo.solid_co2.sublimation_enthalpy`: slope of
  Eq. 3.12, v_V from the EOS, v_S from the solid density), and s_S = s_V - dh_sub/T. A target between
  the solid and the vapour value is solid-vapour with the lever rule; above the vapour value the
  state is single-phase vapour (Brent on T on the vapour branch, T_sub < T <= T_max); below the solid
  value the state is all solid, which needs a solid heat capacity that supercrit does not have from
  a published source, so ModelRangeError is raised.
* p = pt (relative 1e-12): T = Tt. A target at or above the saturated liquid value is the ordinary
  liquid-vapour (or vapour) state of :mod:`flash_pure`. Between the solid and the liquid value, the
  (p, h) pair alone does not fix how the mass splits over three coexisting phases (the volume
  would); supercrit returns the split continuous with the states just above pt, solid and liquid
  with vapour fraction 0, labelled solid-liquid-vapour; the solid fraction is
  (h_L - h)/(h_L - h_S) with h_L - h_S = dh_sub(Tt) - dh_vap(Tt), the enthalpy of fusion.
* p > pt: :mod:`flash_pure` through the fluid facade, unchanged.

Units: SI inside (K, Pa, mol m-3, J mol-1, J mol-1 K-1).

Notes
-----
Tolerance: T_sub to 1e-10 K (Newton on Eq. 3.12); vapour branch Brent |dT| <= 1e-10 K. The
energy (or entropy) balance closes to round-off by construction: the returned State's h (or s)
is the fraction-weighted sum of the solid and fluid values. The vapour below 216.592 K lies
outside the published range of the EOS (216.592-1100 K); it is the EOS extrapolated along the
sublimation line at low density, where the equation is close to its virial limit.

References
----------
R. Span, W. Wagner, J. Phys. Chem. Ref. Data 25 (1996) 1509, doi:10.1063/1.555991 (triple point,
sublimation line Eq. 3.12, EOS).
"""
from __future__ import annotations

import numpy as np
from scipy.optimize import brentq

from ...errors import ModelRangeError
from ..properties import all_properties
from ..solid_co2 import TRIPLE_POINT, V_SOLID_CO2, sublimation_enthalpy, sublimation_temperature
from ..state import GAS, SOLID_LIQUID_VAPOR, SOLID_VAPOR, State
from .density import density_roots
from .saturation import saturation_pressure

_AT_TRIPLE = 1e-12  # relative pressure window treated as exactly the triple-point pressure


def _vapor_density(model, T, p, x, rho_c):
    """Lightest stable density root [mol m-3] at (T, p): the vapour."""
    roots = density_roots(model, T, p, x, rho_c)
    rho = np.min(np.where(np.isfinite(roots), roots, np.inf), axis=-1)
    if not np.all(np.isfinite(rho)):
        raise ModelRangeError(f"{model.name}: no vapour density found on the sublimation line of CO2")
    return rho


def _solid_values(fluid, T, rho_v, x):
    """Saturated-vapour and solid values at T on the sublimation line: dict of h, s [SI] for V and S."""
    V = all_properties(fluid.model, fluid.ideal, fluid.M_i, T, rho_v, x)
    dh = sublimation_enthalpy(T, 1.0 / rho_v)
    return V, {"h": V["h"] - dh, "s": V["s"] - dh / T}, dh


def _all_solid_error(p, target, key, bound):
    name = {"h": "enthalpy", "s": "entropy"}[key]
    unit = {"h": "J/mol", "s": "J/(mol K)"}[key]
    return ModelRangeError(
        f"CO2 at p = {p / 1e5:.5f} bar with {name} {target:.6g} {unit}: below the value of solid CO2 on the "
        f"sublimation line ({bound:.6g} {unit}), the state is all solid (dry ice) colder than the sublimation "
        f"temperature. supercrit has no published solid-CO2 heat capacity to compute that temperature; the "
        f"state is solid CO2 below {sublimation_temperature(min(p, TRIPLE_POINT.p)):.3f} K.")


def _vapor_branch(fluid, p, target, key, T_lo, T_hi):
    """Single-phase vapour at p < pt: T from Brent on the vapour branch; returns (T, rho)."""
    model = fluid.model
    x1 = fluid.x

    def f(T):
        rho = _vapor_density(model, T, p, x1, model.rhoc)
        return all_properties(model, fluid.ideal, fluid.M_i, T, rho, x1)[key] - target

    if f(T_hi) < 0:
        name = {"h": "enthalpy", "s": "entropy"}[key]
        raise ModelRangeError(f"CO2 at p = {p / 1e5:.5f} bar: {name} {target:.6g} is above the vapour value at "
                              f"{T_hi:.2f} K, the highest temperature supported ({fluid.model_name}).")
    T = brentq(f, T_lo, T_hi, xtol=1e-10, rtol=4 * np.finfo(float).eps, maxiter=200)
    return T, float(_vapor_density(model, T, p, x1, model.rhoc))


def state_p_prop_with_solid(fluid, p, target, key) -> State:
    """The stable state of pure CO2 from p [Pa] and h [J mol-1] (key 'h') or s [J mol-1 K-1] (key 's').

    Parameters
    ----------
    fluid : Fluid
        Pure CO2 with model ``span-wagner``.
    p : array_like
        Pressure [Pa]; any mix of values below, at and above the triple-point pressure.
    target : array_like
        Molar enthalpy [J mol-1] or entropy [J mol-1 K-1], same shape as ``p``.
    key : str
        ``"h"`` or ``"s"``.

    Returns
    -------
    State
        Phase solid-vapour (T = T_sub(p)), solid-liquid-vapour (at exactly pt), or what
        :mod:`flash_pure` gives (gas, liquid, two-phase, supercritical). ``solid_fraction`` and
        ``solid_fraction_mass`` give the dry ice formed.

    Raises
    ------
    ModelRangeError
        The target lies below the solid value (all solid: no published solid heat capacity here), or
        above the vapour value at the highest supported temperature.
    """
    p, target = np.broadcast_arrays(np.asarray(p, dtype=float), np.asarray(target, dtype=float))
    shape = p.shape
    pf, tf = p.ravel(), target.ravel()
    n = pf.size
    model, x1 = fluid.model, fluid.x
    Tt, pt = TRIPLE_POINT.T, TRIPLE_POINT.p
    T = np.empty(n)
    rho = np.empty(n)
    code = np.full(n, GAS)
    q = np.zeros(n)
    rl = np.empty(n)
    rv = np.empty(n)
    f_s = np.zeros(n)
    h_s = np.zeros(n)
    s_s = np.zeros(n)
    delegate = pf >= pt * (1.0 - _AT_TRIPLE)
    at = np.abs(pf / pt - 1.0) <= _AT_TRIPLE

    below = np.nonzero(~delegate)[0]
    if below.size:
        Ts = sublimation_temperature(pf[below])
        xb = np.broadcast_to(x1, (below.size, x1.size))
        rho_v = _vapor_density(model, Ts, pf[below], xb, model.rhoc)
        V, S, _ = _solid_values(fluid, Ts, rho_v, xb)
        tv, ts, tgt = V[key], S[key], tf[below]
        if np.any(tgt < ts):
            k = int(np.argmax(tgt < ts))
            raise _all_solid_error(float(pf[below][k]), float(tgt[k]), key, float(ts[k]))
        two = tgt <= tv
        f = np.where(two, (tv - tgt) / (tv - ts), 0.0)
        i2 = below[two]
        T[i2], code[i2], f_s[i2], q[i2] = Ts[two], SOLID_VAPOR, f[two], 1.0 - f[two]
        rl[i2] = rv[i2] = rho_v[two]
        h_s[i2], s_s[i2] = S["h"][two], S["s"][two]
        rho[i2] = 1.0 / (f[two] * V_SOLID_CO2 + (1.0 - f[two]) / rho_v[two])
        T_hi = fluid._T_limits()[1]
        for j in np.nonzero(~two)[0]:
            k = below[j]
            T[k], rho[k] = _vapor_branch(fluid, float(pf[k]), float(tf[k]), key, float(Ts[j]), T_hi)
            rl[k] = rv[k] = rho[k]

    if np.any(at):
        sat = saturation_pressure(model, Tt, model.critical_point(), x1)
        L = all_properties(model, fluid.ideal, fluid.M_i, Tt, sat.rho_liq, x1)
        V, S, _ = _solid_values(fluid, np.float64(Tt), np.float64(sat.rho_vap), x1)
        i3 = np.nonzero(at & (tf < L[key]))[0]
        for k in i3:
            if tf[k] < S[key]:
                raise _all_solid_error(float(pf[k]), float(tf[k]), key, float(S[key]))
        f = (L[key] - tf[i3]) / (L[key] - S[key])
        T[i3], code[i3], f_s[i3], q[i3] = Tt, SOLID_LIQUID_VAPOR, f, 0.0
        rl[i3], rv[i3] = sat.rho_liq, sat.rho_vap
        h_s[i3], s_s[i3] = S["h"], S["s"]
        rho[i3] = 1.0 / (f * V_SOLID_CO2 + (1.0 - f) / sat.rho_liq)
        delegate[i3] = False

    rest = np.nonzero(delegate)[0]
    if rest.size:
        sub = fluid._state_p_prop(pf[rest], tf[rest], key)
        T[rest], rho[rest], code[rest] = sub.T_, sub.rho_, sub.phase_
        q[rest] = sub.q_ if sub.q_ is not None else 0.0
        rl[rest] = sub.rho_l_ if sub.rho_l_ is not None else sub.rho_
        rv[rest] = sub.rho_v_ if sub.rho_v_ is not None else sub.rho_

    x = np.broadcast_to(x1, shape + (x1.size,))
    r = lambda a: a.reshape(shape)  # noqa: E731
    return State(model, fluid.ideal, fluid.M_i, r(T), r(rho), x, r(code), r(q), r(rl), r(rv), x, x,
                 solid_fraction_=r(f_s), h_solid_=r(h_s), s_solid_=r(s_s),
                 rho_solid_=r(np.full(n, 1.0 / V_SOLID_CO2)))
