"""Truncated virial equation in density: Z = 1 + B(T) rho [+ C(T) rho^2].

alpha_r = B rho + C rho^2 / 2. B from the Tsonopoulos correlation (nonpolar form),
B pc/(R Tc) = f0(Tr) + omega f1(Tr) (Tsonopoulos, AIChE J. 20 (1974) 263, doi:10.1002/aic.690200209);
optional C from Orbey & Vera, C pc^2/(R Tc)^2 = g0(Tr) + omega g1(Tr) (AIChE J. 29 (1983) 107,
doi:10.1002/aic.690290115; coefficients from memory, see below).

Mixtures: B = sum x_i x_j B_ij with Tc_ij = sqrt(Tc_i Tc_j)(1 - k_ij), Vc_ij = ((Vc_i^(1/3) + Vc_j^(1/3))/2)^3,
Zc_ij = (Zc_i + Zc_j)/2, pc_ij = Zc_ij R Tc_ij / Vc_ij, omega_ij = (omega_i + omega_j)/2 (Prausnitz-type
combining rules as given by Poling et al. 5th ed., ch. 5; from memory). The three-term form is
offered for pure fluids only.

Validity (common practice): the two-term form (B only) up to half the critical density, the
three-term form (B and C) up to the critical density; gas phase only, no two-phase region.
Densities beyond these bounds are refused with ModelRangeError.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ...errors import ModelRangeError
from .base import AlpharDerivs

# (coefficient, power of 1/Tr)
_TSON_F0 = ((0.1445, 0), (-0.330, 1), (-0.1385, 2), (-0.0121, 3), (-0.000607, 8))  # Tsonopoulos 1974, eq. 2
_TSON_F1 = ((0.0637, 0), (0.331, 2), (-0.423, 3), (-0.008, 8))  # Tsonopoulos 1974, eq. 3
_OV_G0 = ((0.01407, 0), (0.02432, 2.8), (-0.00313, 10.5))  # Orbey & Vera 1983 (from memory)
_OV_G1 = ((-0.02676, 0), (0.01770, 2.8), (0.040, 3), (-0.003, 6), (-0.00228, 10.5))  # Orbey & Vera 1983 (from memory)


def _series(terms, Tr):
    """f, Tr df/dTr, Tr^2 d2f/dTr2 of sum c Tr^-n."""
    f = sum(c * Tr**-n for c, n in terms)
    f1 = sum(-n * c * Tr**-n for c, n in terms)
    f2 = sum(n * (n + 1) * c * Tr**-n for c, n in terms)
    return f, f1, f2


@dataclass(frozen=True, eq=False)
class VirialModel:
    """Tsonopoulos second (and optionally Orbey-Vera third) virial coefficient model.

    Attributes: Tc [K], pc [Pa], omega [-], rhoc [mol m-3] per component (arrays (nc,)), kij (nc, nc),
    third (bool: include C), gas_constant [J mol-1 K-1].
    """

    components: tuple[str, ...]
    Tc: np.ndarray
    pc: np.ndarray
    omega: np.ndarray
    rhoc: np.ndarray
    kij: np.ndarray
    gas_constant: float
    third: bool = False
    name: str = "virial"  # "virial-3term" when third=True (set in __post_init__)
    has_two_phase: bool = False

    def __post_init__(self):
        if self.third:
            object.__setattr__(self, "name", "virial-3term")
        R = self.gas_constant
        Tc, Vc = self.Tc, 1.0 / self.rhoc
        Zc = self.pc * Vc / (R * Tc)
        Tcij = np.sqrt(np.outer(Tc, Tc)) * (1.0 - self.kij)
        Vcij = ((Vc[:, None] ** (1 / 3) + Vc[None, :] ** (1 / 3)) / 2.0) ** 3
        pcij = (Zc[:, None] + Zc[None, :]) / 2.0 * R * Tcij / Vcij
        np.fill_diagonal(pcij, self.pc)
        object.__setattr__(self, "_Tcij", Tcij)
        object.__setattr__(self, "_pcij", pcij)
        object.__setattr__(self, "_wij", (self.omega[:, None] + self.omega[None, :]) / 2.0)

    def R(self, x):
        return np.full(np.shape(x)[:-1], self.gas_constant)

    def coefficients(self, T, x):
        """B [m3 mol-1], C [m6 mol-2] of the mixture and T dB/dT, T^2 d2B/dT2, T dC/dT, T^2 d2C/dT2."""
        T = np.asarray(T, dtype=float)[..., None, None]
        x = np.asarray(x, dtype=float)
        Tr = T / self._Tcij
        scale = self.gas_constant * self._Tcij / self._pcij
        f0 = _series(_TSON_F0, Tr)
        f1 = _series(_TSON_F1, Tr)
        Bij = [scale * (u + self._wij * v) for u, v in zip(f0, f1)]
        xx = x[..., :, None] * x[..., None, :]
        B, TB1, T2B2 = (np.sum(xx * b, axis=(-2, -1)) for b in Bij)
        if not self.third:
            z = np.zeros_like(B)
            return B, z, TB1, T2B2, z, z
        g0 = _series(_OV_G0, Tr)  # pure fluids only (checked by the callers)
        g1 = _series(_OV_G1, Tr)
        C, TC1, T2C2 = (scale[..., 0, 0] ** 2 * (u[..., 0, 0] + self._wij[0, 0] * v[..., 0, 0]) for u, v in zip(g0, g1))
        return B, C, TB1, T2B2, TC1, T2C2

    def _check_mixture_C(self, x):
        if self.third and np.shape(x)[-1] > 1:
            raise ModelRangeError("the three-term virial model is available for pure fluids only; "
                                  "use model 'virial' (B only) for mixtures")

    def alphar(self, T, rho, x):
        self._check_mixture_C(x)
        B, C, *_ = self.coefficients(T, x)
        rho = np.asarray(rho, dtype=float)
        return B * rho + 0.5 * C * rho * rho

    def alphar_derivs(self, T, rho, x) -> AlpharDerivs:
        self._check_mixture_C(x)
        B, C, TB1, T2B2, TC1, T2C2 = self.coefficients(T, x)
        rho = np.asarray(rho, dtype=float)
        r2 = rho * rho
        return AlpharDerivs(
            A00=B * rho + 0.5 * C * r2,
            A10=-(TB1 * rho + 0.5 * TC1 * r2),
            A01=B * rho + C * r2,
            A20=(2.0 * TB1 + T2B2) * rho + 0.5 * (2.0 * TC1 + T2C2) * r2,
            A11=-(TB1 * rho + TC1 * r2),
            A02=C * r2,
        )

    def ndalphar_dni(self, T, rho, x):
        self._check_mixture_C(x)
        T = np.asarray(T, dtype=float)
        x = np.asarray(x, dtype=float)
        Tr = T[..., None, None] / self._Tcij
        scale = self.gas_constant * self._Tcij / self._pcij
        Bij = scale * (_series(_TSON_F0, Tr)[0] + self._wij * _series(_TSON_F1, Tr)[0])
        out = 2.0 * np.einsum("...ij,...j->...i", Bij, x) * np.asarray(rho, dtype=float)[..., None]
        if self.third:  # pure fluid: d(n alpha_r)/dn = alpha_r + A01 = 2 B rho + 1.5 C rho^2
            C = self.coefficients(T, x)[1]
            out = out + 1.5 * (C * np.asarray(rho, dtype=float) ** 2)[..., None]
        return out

    def max_density(self, x):
        """Validity bound [mol m-3]: rho_c/2 (B only) or rho_c (with C); common practice."""
        rhoc_mix = 1.0 / (np.asarray(x, dtype=float) @ (1.0 / self.rhoc))
        return rhoc_mix * (1.0 if self.third else 0.5)

    def density_roots(self, T, p, x):
        """The gas-branch root of p/(R T) = rho + B rho^2 + C rho^3 [mol m-3], shape (..., 1).

        Raises
        ------
        ModelRangeError
            If the pressure is beyond the virial branch or the root is denser than the validity bound.
        """
        self._check_mixture_C(x)
        T, p = np.asarray(T, dtype=float), np.asarray(p, dtype=float)
        B, C, *_ = self.coefficients(T, x)
        y = p / (self.gas_constant * T)
        disc = 1.0 + 4.0 * B * y
        rho = 2.0 * y / (1.0 + np.sqrt(np.maximum(disc, 0.0)))
        if self.third:
            for _ in range(50):  # Newton on the gas branch from the two-term root
                f = rho + B * rho**2 + C * rho**3 - y
                df = 1.0 + 2.0 * B * rho + 3.0 * C * rho**2
                df = np.where(df > 0, df, np.nan)
                step = f / df
                rho = rho - step
                if np.all(np.abs(step) <= 1e-14 * np.abs(rho)):
                    break
            bad = ~np.isfinite(rho) | (rho <= 0)
        else:
            bad = disc < 0
        lim = self.max_density(x)
        bad = bad | (rho > lim)
        if np.any(bad):
            i = np.argmax(np.ravel(bad))
            Tb, pb = np.ravel(np.broadcast_to(T, bad.shape))[i], np.ravel(np.broadcast_to(p, bad.shape))[i]
            form = "three-term (B, C)" if self.third else "two-term (B only)"
            raise ModelRangeError(
                f"{form} virial model at T = {Tb:.2f} K, p = {pb / 1e5:.3f} bar: the state is denser than the "
                f"model's validity bound ({'the critical density' if self.third else 'half the critical density'}, "
                f"common practice). Use a cubic or reference model for dense gas and liquid.")
        return rho[..., None]
