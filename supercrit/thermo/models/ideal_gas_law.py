"""The ideal gas law as a model: alpha_r = 0, Z = 1 everywhere, no two-phase region."""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..constants import R_CODATA_2018
from .base import AlpharDerivs


@dataclass(frozen=True, eq=False)
class IdealGasLaw:
    """p v = R T. No critical point and no saturation; Z = 1 at every state."""

    components: tuple[str, ...]
    name: str = "ideal-gas"
    gas_constant: float = R_CODATA_2018
    has_two_phase: bool = False

    def R(self, x):
        return np.full(np.shape(x)[:-1], self.gas_constant)

    def alphar(self, T, rho, x):
        return np.zeros(np.broadcast_shapes(np.shape(T), np.shape(rho), np.shape(x)[:-1]))

    def alphar_derivs(self, T, rho, x) -> AlpharDerivs:
        z = self.alphar(T, rho, x)
        return AlpharDerivs(z, z, z, z, z, z)

    def ndalphar_dni(self, T, rho, x):
        shp = np.broadcast_shapes(np.shape(T), np.shape(rho), np.shape(x)[:-1])
        return np.zeros(shp + (len(self.components),))

    def max_density(self, x):
        return np.full(np.shape(x)[:-1], np.inf)

    def density_roots(self, T, p, x):
        """rho = p/(R T) [mol m-3], shape (..., 1)."""
        return (np.asarray(p, dtype=float) / (self.gas_constant * np.asarray(T, dtype=float)))[..., None]
