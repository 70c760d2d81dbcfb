"""The one interface every equation of state provides: the reduced residual Helmholtz energy.

A model gives alpha_r(T, rho, x) = a_r / (R T), its derivatives, its gas constant and a density
bound; every property is derived from these in :mod:`supercrit.thermo.properties`.

Shapes broadcast: ``T`` and ``rho`` have shape ``(...)``, ``x`` has shape ``(..., nc)``.
Units: T [K], rho [mol m-3], x [mol mol-1].
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Protocol, runtime_checkable

import numpy as np


@dataclass(frozen=True)
class AlpharDerivs:
    """Reduced residual Helmholtz energy and its scaled derivatives.

    ``A_ij = (1/T)^i rho^j d^(i+j) alpha_r / d(1/T)^i d rho^j`` (all dimensionless). For a reference
    equation written in tau = Tc/T and delta = rho/rhoc the same numbers are
    ``tau^i delta^j d^(i+j) alpha_r / d tau^i d delta^j``.
    """

    A00: np.ndarray
    A10: np.ndarray
    A01: np.ndarray
    A20: np.ndarray
    A11: np.ndarray
    A02: np.ndarray


@dataclass(frozen=True)
class CriticalPoint:
    """Critical point of a model [K, Pa, mol m-3]."""

    T: float
    p: float
    rho: float


@runtime_checkable
class Model(Protocol):
    """What an equation of state must provide.

    Required: ``components``, ``R(x)``, ``alphar(T, rho, x)``, ``alphar_derivs(T, rho, x)``,
    ``ndalphar_dni(T, rho, x)`` and ``max_density(x)``.

    Optional hooks (a model may replace a solver, never call one):
    ``density_roots(T, p, x)`` -> array (..., 3) of real positive density roots, NaN-padded
    (only for models that solve the density in closed form); ``critical_point()`` -> CriticalPoint
    for pure models that know it exactly; ``saturation_guess(T)`` -> (rho_liq, rho_vap) starting
    values; ``validity`` -> dict of range limits; ``has_two_phase`` -> bool.
    """

    components: tuple[str, ...]
    name: str

    def R(self, x) -> np.ndarray:
        """Gas constant used by this model [J mol-1 K-1]."""

    def alphar(self, T, rho, x) -> np.ndarray:
        """Reduced residual Helmholtz energy a_r/(R T) [-]."""

    def alphar_derivs(self, T, rho, x) -> AlpharDerivs:
        """alpha_r and its scaled T and rho derivatives."""

    def ndalphar_dni(self, T, rho, x) -> np.ndarray:
        """d(n alpha_r)/dn_i at constant T, V and n_j [-], shape (..., nc)."""

    def max_density(self, x) -> np.ndarray:
        """Upper bound of physical density roots [mol m-3]."""
