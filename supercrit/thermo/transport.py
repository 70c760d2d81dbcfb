"""Viscosity of the fluid at a state: reference correlation for pure CO2, Chung et al. for the rest.

* Pure CO2: Laesecke & Muzny, J. Phys. Chem. Ref. Data 46 (2017) 013107, doi:10.1063/1.4977429:
  eta = eta_0(T) + eta_0(T) B_eta(T) rho + Delta eta_r(rho, T) (their Eqs. 4, 5-7, 8-9). Coefficients
  transcribed from CoolProp 8.0.0 (fluid JSON 'TRANSPORT' block of CO2 and the hardcoded routines
  ``viscosity_dilute_CO2_LaeseckeJPCRD2017`` / ``viscosity_CO2_higher_order_hardcoded_LaeseckeJPCRD2017``).
  Range stated by the paper: 100-2000 K for the dilute gas, 216.59-700 K up to 8000 MPa overall.
* Any other fluid or a mixture: Chung, Ajlan, Lee & Starling, Ind. Eng. Chem. Res. 27 (1988) 671,
  doi:10.1021/ie00076a024, dense-fluid method with its mixing rules (their Eqs. 11-17 and Table II;
  also printed in Poling, Prausnitz & O'Connell, The Properties of Gases and Liquids, 5th ed. (2001),
  Eqs. 9-4.10, 9-5.24 to 9-5.44, 9-6.18 to 9-6.21 and Table 9-6). Stated accuracy: about 5-10 % for
  nonpolar dense fluids (from memory).

The density is the one of the state, so the EOS chosen for the fluid carries into the viscosity. A
two-phase state has no single viscosity: the caller takes the liquid's and vapour's.
"""
from __future__ import annotations

import numpy as np

from ..errors import DataError, PropertyUndefinedError

N_A = 6.02214076e23  # [mol-1] CODATA 2018, exact
R_LM = 8.314462618  # [J mol-1 K-1] CODATA 2018 (the eta_tL scale factor; CoolProp uses its EOS value)

# --- Laesecke & Muzny (2017), pure CO2 ---------------------------------------------------------
# Eq. 4, dilute gas: eta_0 [mPa s] = 1.0055 sqrt(T) / (a0 + a1 T^(1/6) + a2 exp(a3 T^(1/3))
#                                     + (a4 + a5 T^(1/3)) / exp(T^(1/3)) + a6 sqrt(T))
_LM_A = (1749.354893188350, -369.069300007128, 5423856.34887691, -2.21283852168356,
         -269503.247933569, 73145.021531826, 5.34368649509278)  # Laesecke & Muzny 2017, Table 2 (via CoolProp 8.0.0)
# Eqs. 5-7, second viscosity virial (Rainwater-Friend form): B_eta* = sum b_i (T*)^t_i, T* = T/(eps/k)
_LM_B = (-19.572881, 219.73999, -1015.3226, 2471.0125, -3375.1717, 2491.6597, -787.26086, 14.085455,
         -0.34664158)  # Laesecke & Muzny 2017 (via CoolProp 8.0.0 JSON 'initial_density')
_LM_T = (0.0, -0.25, -0.5, -0.75, -1.0, -1.25, -1.5, -2.5, -5.5)  # same source
_LM_EPS_K = 200.76  # [K] eps/k, CoolProp 8.0.0 JSON 'epsilon_over_k' (paper: 200.760 K)
_LM_SIGMA = 3.78421e-10  # [m] sigma, CoolProp 8.0.0 JSON 'sigma_eta' (paper: 0.378421 nm)
# Eqs. 8-9, residual: Delta eta = eta_tL (c1 Tr rho_r^3 + (rho_r^2 + rho_r^gamma) / (Tr - c2))
_LM_C1, _LM_C2, _LM_GAMMA = 0.360603235428487, 0.121550806591497, 8.06282737481277  # Laesecke & Muzny 2017, Table 3
_LM_TT = 216.592  # [K] triple-point temperature, Span & Wagner 1996 (as used by Laesecke & Muzny)
_LM_RHO_TL = 1178.53  # [kg m-3] triple-point liquid density, Laesecke & Muzny 2017 (Span & Wagner 1996)
_LM_M = 0.0440098  # [kg mol-1] Span & Wagner 1996


def viscosity_co2(T, rho_mass):
    """Viscosity of pure CO2 [Pa s] at T [K] and mass density rho_mass [kg m-3].

    Laesecke & Muzny, J. Phys. Chem. Ref. Data 46 (2017) 013107, Eqs. 4-9; arrays broadcast.
    """
    T = np.asarray(T, dtype=float)
    rho = np.asarray(rho_mass, dtype=float)
    a = _LM_A
    t3 = np.cbrt(T)
    den = a[0] + a[1] * T ** (1 / 6) + a[2] * np.exp(a[3] * t3) + (a[4] + a[5] * t3) / np.exp(t3) + a[6] * np.sqrt(T)
    eta0 = 1.0055e-3 * np.sqrt(T) / den  # [Pa s]
    Ts = T / _LM_EPS_K
    B_star = sum(b * Ts ** t for b, t in zip(_LM_B, _LM_T))
    B_eta = N_A * _LM_SIGMA ** 3 * B_star  # [m3 mol-1]
    eta1 = eta0 * B_eta * rho / _LM_M
    Tr = T / _LM_TT
    rr = rho / _LM_RHO_TL
    eta_tL = _LM_RHO_TL ** (2 / 3) * np.sqrt(R_LM * _LM_TT) / (_LM_M ** (1 / 6) * N_A ** (1 / 3))  # [Pa s]
    d_eta = eta_tL * (_LM_C1 * Tr * rr ** 3 + (rr ** 2 + rr ** _LM_GAMMA) / (Tr - _LM_C2))
    out = eta0 + eta1 + d_eta
    return out.item() if out.ndim == 0 else out


# --- Chung et al. (1988), any fluid and mixtures ---------------------------------------------------
# Table II of Chung et al. 1988 (= Poling et al. 2001, Table 9-6): E_i = a_i + b_i omega + c_i mu_r^4 + d_i kappa
_CHUNG_E = np.array([
    [6.324, 50.412, -51.680, 1189.0],
    [1.210e-3, -1.154e-3, -6.257e-3, 0.03728],
    [5.283, 254.209, -168.48, 3898.0],
    [6.623, 38.096, -8.464, 31.42],
    [19.745, 7.630, -14.354, 31.53],
    [-1.900, -12.537, 4.985, -18.15],
    [24.275, 3.450, -11.291, 69.35],
    [0.7972, 1.117, 0.01235, -4.117],
    [-0.2382, 0.06770, -0.8163, 4.025],
    [0.06863, 0.3479, 0.5926, -0.727],
])  # Chung et al. 1988, Table II; checked against Poling et al. 2001 Table 9-6 as reproduced in public code
# Neufeld, Janzen & Aziz, J. Chem. Phys. 57 (1972) 1100, collision integral Omega(2,2)*:
_NEUFELD = (1.16145, 0.14874, 0.52487, 0.77320, 2.16178, 2.43787)  # Poling et al. 2001, Eq. 9-4.3

# Dipole moment [debye] and association factor kappa [-] per component (Chung's polar terms).
_POLAR = {
    "CO2": (0.0, 0.0),  # no permanent dipole (symmetric molecule)
    "N2": (0.0, 0.0),  # no permanent dipole
    "O2": (0.0, 0.0),  # no permanent dipole
    "Ar": (0.0, 0.0),  # monatomic
    "CH4": (0.0, 0.0),  # no permanent dipole (tetrahedral)
    "H2": (0.0, 0.0),  # no permanent dipole
    "C2H6": (0.0, 0.0),  # no permanent dipole
    "C3H8": (0.084, 0.0),  # CRC Handbook of Chemistry and Physics, dipole moments table (from memory)
    "C4H10": (0.05, 0.0),  # n-butane, Poling et al. 2001 Appendix A (from memory)
    "H2O": (1.8546, 0.075908),  # dipole: CRC Handbook (from memory); kappa: Chung et al. 1988 Table I (from memory)
    "C2H5OH": (1.69, 0.174677),  # dipole: CRC Handbook (from memory); kappa: Chung et al. 1988 Table I (from memory)
}


def _polar(names):
    try:
        return np.array([_POLAR[n] for n in names]).T
    except KeyError as exc:
        raise DataError(f"the Chung viscosity method needs the dipole moment and association factor of "
                        f"{exc.args[0]}, which supercrit does not have; known: {', '.join(sorted(_POLAR))}") from None


def viscosity_chung(T, rho_molar, x, Tc, Vc, omega, M, dipole, kappa):
    """Dense-fluid viscosity [Pa s] by Chung et al. (1988) with their mixing rules.

    Parameters
    ----------
    T : float [K]; rho_molar : float [mol m-3]; x : array (nc,) mole fractions [-];
    Tc [K], Vc [m3 mol-1], omega [-], M [kg mol-1], dipole [debye], kappa [-] : arrays (nc,).

    Notes
    -----
    Chung et al., Ind. Eng. Chem. Res. 27 (1988) 671, Eqs. 11-17 (pure) and mixing rules
    sigma_i = 0.809 Vc_i^(1/3), eps_i/k = Tc_i/1.2593 with van der Waals one-fluid averaging
    (sigma_ij = sqrt(sigma_i sigma_j), eps_ij = sqrt(eps_i eps_j), omega_ij = (omega_i + omega_j)/2,
    M_ij = 2 M_i M_j / (M_i + M_j), kappa_ij = sqrt(kappa_i kappa_j)). One component gives the
    pure-fluid method exactly.
    """
    x = np.asarray(x, dtype=float)
    Vc_cm3 = np.asarray(Vc, dtype=float) * 1e6  # [cm3 mol-1]
    Mg = np.asarray(M, dtype=float) * 1e3  # [g mol-1]
    Tc = np.asarray(Tc, dtype=float)
    omega = np.asarray(omega, dtype=float)
    dipole = np.asarray(dipole, dtype=float)
    kappa = np.asarray(kappa, dtype=float)
    sig = 0.809 * np.cbrt(Vc_cm3)  # [Angstrom] Chung 1988 Eq. 4
    eps = Tc / 1.2593  # [K] Chung 1988 Eq. 5
    X = np.outer(x, x)
    sij = np.sqrt(np.outer(sig, sig))
    eij = np.sqrt(np.outer(eps, eps))
    s3ij = sij ** 3
    s3 = float((X * s3ij).sum())
    sm = np.cbrt(s3)
    em = float((X * eij * s3ij).sum()) / s3
    wm = float((X * 0.5 * (omega[:, None] + omega[None, :]) * s3ij).sum()) / s3
    Mij = 2.0 * np.outer(Mg, Mg) / (Mg[:, None] + Mg[None, :])
    Mm = (float((X * eij * sij ** 2 * np.sqrt(Mij)).sum()) / (em * sm ** 2)) ** 2
    mu4 = s3 * float((X * np.outer(dipole ** 2, dipole ** 2) / s3ij).sum())
    km = float((X * np.sqrt(np.outer(kappa, kappa))).sum())
    Vcm = (sm / 0.809) ** 3  # [cm3 mol-1]
    Tcm = 1.2593 * em
    mur = 131.3 * mu4 ** 0.25 / np.sqrt(Vcm * Tcm)  # Chung 1988 Eq. 8
    Fc = 1.0 - 0.2756 * wm + 0.059035 * mur ** 4 + km  # Chung 1988 Eq. 7
    Ts = 1.2593 * np.asarray(T, dtype=float) / Tcm
    A, B, C, D, E, F = _NEUFELD
    Omega = A * Ts ** (-B) + C * np.exp(-D * Ts) + E * np.exp(-F * Ts)
    Ei = _CHUNG_E @ np.array([1.0, wm, mur ** 4, km])
    y = np.asarray(rho_molar, dtype=float) * 1e-6 * Vcm / 6.0  # rho in mol/cm3
    G1 = (1.0 - 0.5 * y) / (1.0 - y) ** 3
    G2 = (Ei[0] * (-np.expm1(-Ei[3] * y)) / y + Ei[1] * G1 * np.exp(Ei[4] * y) + Ei[2] * G1) / \
        (Ei[0] * Ei[3] + Ei[1] + Ei[2])
    eta_kk = Ei[6] * y ** 2 * G2 * np.exp(Ei[7] + Ei[8] / Ts + Ei[9] / Ts ** 2)
    eta_k = np.sqrt(Ts) / Omega * Fc * (1.0 / G2 + Ei[5] * y)
    eta = (eta_k + eta_kk) * 36.344 * np.sqrt(Mm * Tcm) / Vcm ** (2 / 3)  # [micropoise]
    out = np.asarray(eta * 1e-7)  # [Pa s]
    return out.item() if out.ndim == 0 else out


def _one_phase_viscosity(state, components, comps):
    T = float(state.T)
    if tuple(components) == ("CO2",):
        return viscosity_co2(T, float(state.rho_mass))
    x = np.asarray(state.x_, dtype=float)
    dip, kap = _polar(components)
    return viscosity_chung(T, float(state.rho_molar), x, [c.Tc for c in comps], [c.Vc for c in comps],
                           [c.omega for c in comps], [c.M for c in comps], dip, kap)


def viscosity(fluid, state):
    """Dynamic viscosity [Pa s] of a single-phase scalar State of ``fluid`` (a :class:`supercrit.Fluid`).

    Pure CO2: Laesecke & Muzny (2017); otherwise Chung et al. (1988). The state's density is used.

    Raises
    ------
    PropertyUndefinedError
        For a two-phase or solid-containing state (no single viscosity): take the phases' values.
    DataError
        A component without dipole/association data for the Chung method.
    """
    from .state import GAS, LIQUID, SUPERCRITICAL

    code = int(np.asarray(state.phase_))
    if code not in (GAS, LIQUID, SUPERCRITICAL):
        raise PropertyUndefinedError(f"viscosity has no single value for a {state.phase} state; use the "
                                     f"liquid and vapour states' values")
    return _one_phase_viscosity(state, fluid.components, fluid._comps)
