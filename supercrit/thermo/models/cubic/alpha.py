"""Temperature functions alpha(T) of cubic equations of state, as q = sqrt(alpha) and its T-derivatives.

Each returns ``(q, dq/dT, d2q/dT2)`` with shape (..., nc); a_i(T) = ac_i q_i(T)^2.
"""
from __future__ import annotations

import math as _math
from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True, eq=False)
class ConstantAlpha:
    """alpha = 1 (van der Waals 1873)."""

    Tc: np.ndarray  # [K], shape (nc,)

    def q(self, T):
        one = np.ones(np.shape(T) + self.Tc.shape)
        return one, 0.0 * one, 0.0 * one

    def q_scalar(self, T: float):
        """As :meth:`q` for one temperature, as lists of Python floats (small-nc fast path)."""
        n = len(self.Tc)
        return [1.0] * n, [0.0] * n, [0.0] * n


@dataclass(frozen=True, eq=False)
class RedlichKwongAlpha:
    """alpha = Tr^-1/2 (Redlich & Kwong, Chem. Rev. 44 (1949) 233, doi:10.1021/cr60137a013)."""

    Tc: np.ndarray  # [K], shape (nc,)

    def q(self, T):
        T = np.asarray(T, dtype=float)[..., None]
        q = (T / self.Tc) ** -0.25
        return q, -0.25 * q / T, 0.3125 * q / (T * T)

    def q_scalar(self, T: float):
        """As :meth:`q` for one temperature, as lists of Python floats (small-nc fast path)."""
        q = [(T / Tc) ** -0.25 for Tc in self.Tc.tolist()]
        return q, [-0.25 * v / T for v in q], [0.3125 * v / (T * T) for v in q]


@dataclass(frozen=True, eq=False)
class SoaveAlpha:
    """alpha = [1 + m (1 - sqrt(Tr))]^2 with m(omega) from the chosen publication.

    m_SRK = 0.480 + 1.574 w - 0.176 w^2 (Soave, Chem. Eng. Sci. 27 (1972) 1197, doi:10.1016/0009-2509(72)80096-4);
    m_PR76 = 0.37464 + 1.54226 w - 0.26992 w^2 (Peng & Robinson, Ind. Eng. Chem. Fundam. 15 (1976) 59,
    doi:10.1021/i160057a011); m_PR78 as PR76 for w <= 0.491, else
    0.379642 + 1.48503 w - 0.164423 w^2 + 0.016666 w^3 (Robinson & Peng, GPA RR-28, 1978).
    """

    Tc: np.ndarray  # [K], shape (nc,)
    m: np.ndarray  # [-], shape (nc,)

    def q(self, T):
        T = np.asarray(T, dtype=float)
        if self.Tc.shape == (1,):  # one component: the same arithmetic on T's own shape (numpy is much
            Tc, m = float(self.Tc[0]), float(self.m[0])  # slower on (..., 1) arrays), then the axis
            sTTc = np.sqrt(T * Tc)
            q = 1.0 + m * (1.0 - np.sqrt(T / Tc))
            return q[..., None], (-m / (2.0 * sTTc))[..., None], (m / (4.0 * T * sTTc))[..., None]
        T = T[..., None]
        sTTc = np.sqrt(T * self.Tc)
        q = 1.0 + self.m * (1.0 - np.sqrt(T / self.Tc))
        return q, -self.m / (2.0 * sTTc), self.m / (4.0 * T * sTTc)

    def q_scalar(self, T: float):
        """As :meth:`q` for one temperature, as lists of Python floats (small-nc fast path)."""
        pairs = self.__dict__.get("_pairs")
        if pairs is None:
            pairs = tuple(zip(self.Tc.tolist(), self.m.tolist()))
            object.__setattr__(self, "_pairs", pairs)
        sqrt = _math.sqrt
        if len(pairs) == 1:
            Tc, m = pairs[0]
            sTTc = sqrt(T * Tc)
            return [1.0 + m * (1.0 - sqrt(T / Tc))], [-m / (2.0 * sTTc)], [m / (4.0 * T * sTTc)]
        q, dq, d2q = [], [], []
        for Tc, m in pairs:
            sTTc = sqrt(T * Tc)
            q.append(1.0 + m * (1.0 - sqrt(T / Tc)))
            dq.append(-m / (2.0 * sTTc))
            d2q.append(m / (4.0 * T * sTTc))
        return q, dq, d2q


def m_srk(omega):
    """Soave (1972) slope m(omega) for SRK [-]."""
    w = np.asarray(omega, dtype=float)
    return 0.480 + 1.574 * w - 0.176 * w * w  # Soave 1972, eq. 13


def m_pr1976(omega):
    """Peng & Robinson (1976) slope m(omega) [-]."""
    w = np.asarray(omega, dtype=float)
    return 0.37464 + 1.54226 * w - 0.26992 * w * w  # Peng & Robinson 1976, eq. 18


def m_pr1978(omega):
    """Robinson & Peng (1978) slope m(omega) [-]: the 1976 form below omega = 0.491, a cubic above."""
    w = np.asarray(omega, dtype=float)
    heavy = 0.379642 + 1.48503 * w - 0.164423 * w**2 + 0.016666 * w**3  # Robinson & Peng 1978 (GPA RR-28)
    return np.where(w > 0.491, heavy, m_pr1976(w))
