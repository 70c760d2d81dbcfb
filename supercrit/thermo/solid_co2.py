"""Solid CO2 boundaries: triple point, sublimation and melting lines, enthalpy of sublimation.

Below the triple point (216.592 K, 0.51795 MPa) CO2 cannot exist as a liquid: a throttle or a
blow-down that ends there deposits dry ice. This module gives the published solid-fluid phase
boundaries of Span & Wagner (1996) and the enthalpy of sublimation from the Clausius-Clapeyron
equation. It does not model the solid phase itself.

Units: T [K], p [Pa], v [m3 mol-1], h [J mol-1].

References
----------
R. Span, W. Wagner, J. Phys. Chem. Ref. Data 25 (1996) 1509-1596, doi:10.1063/1.555991:
melting pressure Eq. 3.10, sublimation pressure Eq. 3.12, triple point (216.592 K, 0.51795 MPa).
"""
from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np

from ..errors import ConvergenceError, DataError, ModelRangeError
from .models.helmholtz.span_wagner import load_span_wagner_data


@dataclass(frozen=True)
class TriplePoint:
    """Triple point of a pure substance [K, Pa]."""

    T: float
    p: float


def _published() -> dict:
    raw = load_span_wagner_data()
    c = raw["constants"]
    return {"Tt": float(c["Tt_K"]), "pt": float(c["pt_MPa"]) * 1e6, "M": float(c["M_g_mol"]) * 1e-3,
            "sub": np.array(raw["sublimation"]["terms"], dtype=float),
            "melt": np.array(raw["melting"]["terms"], dtype=float)}


@functools.cache
def _data() -> dict:
    d = _published()
    if d["melt"].shape != (2, 2) or not np.array_equal(d["melt"][:, 1], [1.0, 2.0]):
        raise DataError("span_wagner_co2.yaml melting: expected the published quadratic form of Span & Wagner "
                        "(1996) Eq. 3.10, terms [[a1, 1], [a2, 2]]")
    return d


TRIPLE_POINT = TriplePoint(T=_data()["Tt"], p=_data()["pt"])  # [K, Pa] Span & Wagner 1996: 216.592 K, 0.51795 MPa

# Density of solid CO2 (CO2-I, dry ice): 1.562 g cm-3, SSHADE solid-phase database, entry "Cubic CO2-I ice"
# (https://www.sshade.eu/data/solid/SOLID_CO2-I-ice); the page states no temperature; that it refers to about
# 195 K is from memory. Solid CO2 is denser at lower T; the uncertainty moves dh_sub by well under 0.1 %.
RHO_SOLID_CO2_KG_M3 = 1562.0  # [kg m-3] SSHADE, CO2-I ice (see comment above)
V_SOLID_CO2 = 0.0440098 / RHO_SOLID_CO2_KG_M3  # [m3 mol-1] with M = 44.0098 g/mol (Span & Wagner 1996)


def _check(ok, what, msg):
    if not np.all(ok):
        raise ModelRangeError(f"{what} for CO2: {msg}")


def _sub_parts(T):
    """ln(p_sub/pt) and d ln(p_sub)/dT [K-1] from Span & Wagner (1996) Eq. 3.12."""
    d = _data()
    Tt, a, t = d["Tt"], d["sub"][:, 0], d["sub"][:, 1]
    th = (1.0 - T / Tt)[..., None]
    S = np.sum(a * th ** t, axis=-1)
    dS = np.sum(a * t * th ** (t - 1.0), axis=-1)        # dS/dtheta; exponents t - 1 >= 0
    return Tt / T * S, -Tt * S / T ** 2 - dS / T


def sublimation_pressure(T) -> np.ndarray:
    """Sublimation pressure of CO2 [Pa], Span & Wagner (1996) Eq. 3.12.

    ln(p_sub/pt) = (Tt/T) [a1 (1 - T/Tt) + a2 (1 - T/Tt)^1.9 + a3 (1 - T/Tt)^2.9].

    Parameters
    ----------
    T : array_like
        Temperature [K], 0 < T <= Tt = 216.592 K.

    Returns
    -------
    ndarray
        Pressure [Pa], shape of ``T``.

    Raises
    ------
    ModelRangeError
        If any T is above the triple point or not positive.
    """
    T = np.asarray(T, dtype=float)
    _check((T > 0) & (T <= TRIPLE_POINT.T), "sublimation_pressure",
           f"T must lie in (0, {TRIPLE_POINT.T}] K (sublimation exists only below the triple point); "
           f"got T from {np.min(T)} to {np.max(T)} K")
    lnp, _ = _sub_parts(T)
    return _data()["pt"] * np.exp(lnp)


def sublimation_dpdT(T) -> np.ndarray:
    """Slope of the sublimation line dp_sub/dT [Pa K-1], analytic from Eq. 3.12; T [K] as in
    :func:`sublimation_pressure`."""
    T = np.asarray(T, dtype=float)
    p = sublimation_pressure(T)
    return p * _sub_parts(T)[1]


def sublimation_temperature(p, tol: float = 1e-10, max_iter: int = 50) -> np.ndarray:
    """Sublimation temperature of CO2 [K] at pressure p: the inverse of :func:`sublimation_pressure`.

    Parameters
    ----------
    p : array_like
        Pressure [Pa], 0 < p <= pt = 517950 Pa.
    tol : float
        Convergence tolerance on the temperature step [K].
    max_iter : int
        Newton iterations allowed.

    Returns
    -------
    ndarray
        Temperature [K], shape of ``p``.

    Raises
    ------
    ModelRangeError
        If any p is above the triple-point pressure or not positive.
    ConvergenceError
        If Newton has not met ``tol`` after ``max_iter`` steps.

    Notes
    -----
    Newton's method on ln p_sub(T) - ln p, all points at once, started from the one-term form
    ln(p/pt) = a1 (Tt/T - 1). ln p_sub is smooth and increasing in T, and the start lies within a
    few kelvin of the root down to about 1 Pa, so 3-6 steps reach 1e-10 K. Steps are clipped to
    stay inside (0, Tt].
    """
    p = np.asarray(p, dtype=float)
    d = _data()
    _check((p > 0) & (p <= d["pt"]), "sublimation_temperature",
           f"p must lie in (0, {d['pt']:.0f}] Pa (below the triple-point pressure); got p from "
           f"{np.min(p)} to {np.max(p)} Pa")
    lnp_red = np.log(p / d["pt"])
    T = d["Tt"] / (1.0 + lnp_red / d["sub"][0, 0])
    step = np.full_like(T, np.inf)
    for it in range(1, max_iter + 1):
        f, df = _sub_parts(T)
        step = (f - lnp_red) / df
        T_new = np.clip(T - step, 0.5 * T, d["Tt"])
        step = T_new - T
        T = T_new
        if np.all(np.abs(step) <= tol):
            return T
    raise ConvergenceError(
        f"sublimation_temperature for CO2: Newton did not reach {tol} K in {max_iter} steps "
        f"(largest last step {np.max(np.abs(step)):.3g} K)")


def melting_pressure(T) -> np.ndarray:
    """Melting pressure of CO2 [Pa], Span & Wagner (1996) Eq. 3.10.

    p_melt/pt = 1 + a1 (T/Tt - 1) + a2 (T/Tt - 1)^2.

    Parameters
    ----------
    T : array_like
        Temperature [K], T >= Tt = 216.592 K. The EOS range of validity (800 MPa) ends on the
        melting line at about 327.67 K; the equation itself is not limited here.

    Returns
    -------
    ndarray
        Pressure [Pa], shape of ``T``.

    Raises
    ------
    ModelRangeError
        If any T is below the triple point.
    """
    T = np.asarray(T, dtype=float)
    d = _data()
    _check(T >= d["Tt"], "melting_pressure",
           f"T must be at least the triple-point temperature {d['Tt']} K; got min {np.min(T)} K")
    y = T / d["Tt"] - 1.0
    a1, a2 = d["melt"][:, 0]
    return d["pt"] * (1.0 + a1 * y + a2 * y * y)


def melting_temperature(p) -> np.ndarray:
    """Melting temperature of CO2 [K] at pressure p: exact inverse of :func:`melting_pressure`.

    Parameters
    ----------
    p : array_like
        Pressure [Pa], p >= pt = 517950 Pa.

    Returns
    -------
    ndarray
        Temperature [K], shape of ``p``.

    Raises
    ------
    ModelRangeError
        If any p is below the triple-point pressure.

    Notes
    -----
    Eq. 3.10 is quadratic in y = T/Tt - 1; the root is taken in the cancellation-free form
    y = 2 (p/pt - 1) / (a1 + sqrt(a1^2 + 4 a2 (p/pt - 1))).
    """
    p = np.asarray(p, dtype=float)
    d = _data()
    _check(p >= d["pt"], "melting_temperature",
           f"p must be at least the triple-point pressure {d['pt']:.0f} Pa; got min {np.min(p)} Pa")
    a1, a2 = d["melt"][:, 0]
    r = p / d["pt"] - 1.0
    return d["Tt"] * (1.0 + 2.0 * r / (a1 + np.sqrt(a1 * a1 + 4.0 * a2 * r)))


def sublimation_enthalpy(T, v_vapor, v_solid=V_SOLID_CO2) -> np.ndarray:
    """Molar enthalpy of sublimation of CO2 [J mol-1] from the Clausius-Clapeyron equation.

    dh_sub = T (v_vapor - v_solid) dp_sub/dT, with dp_sub/dT analytic from Span & Wagner (1996)
    Eq. 3.12.

    Parameters
    ----------
    T : array_like
        Temperature on the sublimation line [K], 0 < T <= Tt.
    v_vapor : array_like
        Molar volume of the saturated vapour at (T, p_sub(T)) [m3 mol-1]; the caller takes it
        from the fluid model (e.g. Span-Wagner), since only the fluid model knows it.
    v_solid : array_like, optional
        Molar volume of solid CO2 [m3 mol-1]; default from the density 1562 kg m-3 (see
        ``RHO_SOLID_CO2_KG_M3``). It is about 0.2 % of v_vapor at 0.1 MPa and 1 % at the triple
        point, so its uncertainty hardly moves the result.

    Returns
    -------
    ndarray
        Enthalpy of sublimation [J mol-1], broadcast shape of the arguments.

    Raises
    ------
    ModelRangeError
        If any T is above the triple point or not positive.

    Notes
    -----
    The fluid model gives the vapour enthalpy on the sublimation line, h_vapour_saturated(T), so
    the solid enthalpy on that line, on the same reference state, is
    h_solid(T) = h_vapour_saturated(T) - dh_sub(T).
    At the triple point the three phases coexist and the enthalpies close the cycle:
    dh_fus(Tt) = dh_sub(Tt) - dh_vap(Tt), with dh_vap(Tt) from the fluid model's saturation.
    """
    T = np.asarray(T, dtype=float)
    return T * (np.asarray(v_vapor, dtype=float) - np.asarray(v_solid, dtype=float)) * sublimation_dpdT(T)
