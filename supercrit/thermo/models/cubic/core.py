"""Generic two-parameter cubic equation of state as one residual-Helmholtz function.

p = R T / (v - B) - a(T) / ((v + D1)(v + D2)),  B = b - c, D1 = delta1 b + c, D2 = delta2 b + c,
where c is a constant volume translation (zero unless translated). With rho = 1/v:

alpha_r = -ln(1 - B rho) - a/(R T) * Lambda(rho),
Lambda = ln((1 + D1 rho)/(1 + D2 rho)) / (D1 - D2)   (D1 != D2),   rho / (1 + D rho)   (D1 = D2).

Families: van der Waals (delta1 = delta2 = 0), Redlich-Kwong and SRK (1, 0), Peng-Robinson
(1 + sqrt 2, 1 - sqrt 2). The family constants Omega_a, Omega_b and Zc follow from the critical
conditions (triple root of the cubic in Z) and are computed, not typed, in :func:`critical_constants`.
"""
from __future__ import annotations

import functools
from dataclasses import dataclass, field

import numpy as np
from scipy.optimize import brentq

from ....errors import ModelRangeError
from ..base import AlpharDerivs, CriticalPoint
from .mixing import a_mix


@functools.cache
def critical_constants(delta1: float, delta2: float) -> tuple[float, float, float]:
    """(Omega_a, Omega_b, Zc) of a cubic family from the triple-root critical condition.

    (Z - Zc)^3 = Z^3 + ((s-1)Ob - 1) Z^2 + (Oa + P Ob^2 - s Ob (Ob+1)) Z - (Oa Ob + P Ob^2 (Ob+1)),
    s = delta1 + delta2, P = delta1 delta2. Gives vdW (27/64, 1/8, 3/8), SRK
    (1/(9(2^(1/3)-1)), (2^(1/3)-1)/3, 1/3) and PR (0.457235529, 0.0777960739, 0.307401309).
    """
    s, P = delta1 + delta2, delta1 * delta2

    def parts(Ob):
        Zc = (1.0 - (s - 1.0) * Ob) / 3.0
        Oa = 3.0 * Zc**2 - P * Ob**2 + s * Ob * (Ob + 1.0)
        return Zc, Oa

    def resid(Ob):
        Zc, Oa = parts(Ob)
        return Zc**3 - (Oa * Ob + P * Ob**2 * (Ob + 1.0))

    Ob = brentq(resid, 1e-6, 0.3, xtol=1e-17, rtol=4 * np.finfo(float).eps, maxiter=500)
    Zc, Oa = parts(Ob)
    return Oa, Ob, Zc


def _cubic_real_roots(a2, a1, a0):
    """Real roots of z^3 + a2 z^2 + a1 z + a0 = 0, vectorised; shape (..., 3), NaN where complex."""
    a2, a1, a0 = np.broadcast_arrays(*(np.asarray(v, dtype=float) for v in (a2, a1, a0)))
    P = a1 - a2 * a2 / 3.0
    Q = 2.0 * a2**3 / 27.0 - a2 * a1 / 3.0 + a0
    D = (Q / 2.0) ** 2 + (P / 3.0) ** 3
    shift = -a2 / 3.0
    out = np.full(a2.shape + (3,), np.nan)
    one = D > 0
    sq = np.sqrt(np.where(one, D, 0.0))
    t1 = np.cbrt(-Q / 2.0 + sq) + np.cbrt(-Q / 2.0 - sq)
    out[..., 0] = np.where(one, t1 + shift, np.nan)
    three = ~one
    Pm = np.where(three, np.minimum(P, -1e-300), -1.0)
    r = 2.0 * np.sqrt(-Pm / 3.0)
    arg = np.clip(3.0 * Q / (Pm * r), -1.0, 1.0)
    phi = np.arccos(arg) / 3.0
    for k in range(3):
        out[..., k] = np.where(three, r * np.cos(phi - 2.0 * np.pi * k / 3.0) + shift, out[..., k])
    # polish every root with two Newton steps on the polynomial
    for _ in range(2):
        z = out
        f = ((z + a2[..., None]) * z + a1[..., None]) * z + a0[..., None]
        df = (3.0 * z + 2.0 * a2[..., None]) * z + a1[..., None]
        step = np.where(np.abs(df) > 0, f / np.where(df == 0, 1.0, df), 0.0)
        out = z - step
    return np.sort(out, axis=-1)


@dataclass(frozen=True, eq=False)
class CubicModel:
    """A two-parameter cubic EOS for one or more components (vdW one-fluid mixing).

    Attributes
    ----------
    components : tuple of str
    name : str
        Model name, e.g. ``"peng-robinson"``.
    delta1, delta2 : float
        Family constants of the attractive term [-].
    ac : ndarray (nc,)
        Omega_a R^2 Tc^2 / pc [Pa m6 mol-2].
    b : ndarray (nc,)
        Omega_b R Tc / pc [m3 mol-1].
    c : ndarray (nc,)
        Volume translation [m3 mol-1] (zeros if untranslated).
    alpha : object
        Provides ``q(T)`` = (sqrt(alpha), d/dT, d2/dT2), shape (..., nc).
    kij : ndarray (nc, nc)
        Binary interaction parameters [-], symmetric, zero diagonal.
    gas_constant : float
        [J mol-1 K-1].
    crit : CriticalPoint or None
        The model's own critical point (pure fluids only).
    """

    components: tuple[str, ...]
    name: str
    delta1: float
    delta2: float
    ac: np.ndarray
    b: np.ndarray
    c: np.ndarray
    alpha: object
    kij: np.ndarray
    gas_constant: float
    crit: CriticalPoint | None = None
    has_two_phase: bool = True
    _omk: np.ndarray = field(init=False, repr=False)

    def __post_init__(self):
        object.__setattr__(self, "_omk", 1.0 - np.asarray(self.kij, dtype=float))

    # -- the interface -------------------------------------------------------------------
    def R(self, x):
        return np.full(np.shape(x)[:-1], self.gas_constant)

    def max_density(self, x):
        """1/(b - c) mixed [mol m-3]: the repulsive pole; physical roots lie below it."""
        return 1.0 / (np.asarray(x, dtype=float) @ (self.b - self.c))

    def _params(self, T, x):
        x = np.asarray(x, dtype=float)
        q, dq, d2q = self.alpha.q(T)
        sac = np.sqrt(self.ac)
        a, da, d2a, ai = a_mix(sac * q, sac * dq, sac * d2q, x, self._omk)
        bm = x @ self.b
        cm = x @ self.c
        B = bm - cm
        D1 = self.delta1 * bm + cm
        D2 = self.delta2 * bm + cm
        return a, da, d2a, ai, B, D1, D2, bm

    def _lam(self, rho, D1, D2):
        e1, e2 = 1.0 + D1 * rho, 1.0 + D2 * rho
        same = np.abs(D1 - D2) <= 1e-14 * np.maximum(np.abs(D1) + np.abs(D2), 1e-300)
        dd = np.where(same, 1.0, D1 - D2)
        lam = np.where(same, rho / e1, np.log(e1 / e2) / dd)
        return lam, e1, e2

    def alphar(self, T, rho, x):
        T, rho = np.asarray(T, dtype=float), np.asarray(rho, dtype=float)
        a, _, _, _, B, D1, D2, _ = self._params(T, x)
        lam, _, _ = self._lam(rho, D1, D2)
        return -np.log1p(-B * rho) - a / (self.gas_constant * T) * lam

    def alphar_derivs(self, T, rho, x) -> AlpharDerivs:
        T, rho = np.asarray(T, dtype=float), np.asarray(rho, dtype=float)
        a, da, d2a, _, B, D1, D2, _ = self._params(T, x)
        R = self.gas_constant
        lam, e1, e2 = self._lam(rho, D1, D2)
        Q = e1 * e2
        lam1 = 1.0 / Q
        lam2 = -(D1 + D2 + 2.0 * D1 * D2 * rho) / (Q * Q)
        Brho = B * rho
        rep = Brho / (1.0 - Brho)
        psi = a / (R * T)
        g = (a - T * da) / (R * T)
        return AlpharDerivs(
            A00=-np.log1p(-Brho) - psi * lam,
            A10=-lam * g,
            A01=rep - psi * rho * lam1,
            A20=-lam * T * d2a / R,
            A11=-rho * lam1 * g,
            A02=rep * rep - psi * rho * rho * lam2,
        )

    def alphar_A03(self, T, rho, x):
        """rho^3 d3 alpha_r/d rho^3 [-] (critical-point conditions)."""
        T, rho = np.asarray(T, dtype=float), np.asarray(rho, dtype=float)
        a, _, _, _, B, D1, D2, _ = self._params(T, x)
        S, P = D1 + D2, D1 * D2
        Q = 1.0 + S * rho + P * rho * rho
        dQ = S + 2.0 * P * rho
        lam3 = -2.0 * P / Q**2 + 2.0 * dQ**2 / Q**3
        Brho = B * rho
        return 2.0 * (Brho / (1.0 - Brho)) ** 3 - a / (self.gas_constant * T) * rho**3 * lam3

    def ndalphar_dni(self, T, rho, x):
        """d(n alpha_r)/dn_i at constant T, V [-], shape (..., nc)."""
        T, rho = np.asarray(T, dtype=float), np.asarray(rho, dtype=float)
        a, _, _, ai, B, D1, D2, bm = self._params(T, x)
        R = self.gas_constant
        lam, e1, e2 = self._lam(rho, D1, D2)
        r = rho[..., None]
        Bi = self.b - self.c
        D1i = self.delta1 * self.b + self.c
        D2i = self.delta2 * self.b + self.c
        same = (np.abs(D1 - D2) <= 1e-14 * np.maximum(np.abs(D1) + np.abs(D2), 1e-300))[..., None]
        dd = np.where(same, 1.0, (D1 - D2)[..., None])
        dG_gen = (D1i * r / e1[..., None] - D2i * r / e2[..., None] - lam[..., None] * (D1i - D2i)) / dd
        dG_same = -D1i * r * r / (e1[..., None] ** 2)
        dG = np.where(same, dG_same, dG_gen)
        Brho = (B * rho)[..., None]
        RT = (R * T)[..., None]
        return (-np.log1p(-Brho) + Bi * r / (1.0 - Brho)
                - (2.0 * ai * lam[..., None] + a[..., None] * dG) / RT)

    # -- closed-form density roots (a model may replace a solver) -----------------------
    def density_roots(self, T, p, x):
        """Every real root rho [mol m-3] with v > b - c, sorted ascending, NaN-padded; shape (..., 3)."""
        T, p = np.asarray(T, dtype=float), np.asarray(p, dtype=float)
        a, _, _, _, _, _, _, bm = self._params(T, x)
        cm = np.asarray(x, dtype=float) @ self.c
        RT = self.gas_constant * T
        A, Bt = a * p / (RT * RT), bm * p / RT
        s, P = self.delta1 + self.delta2, self.delta1 * self.delta2
        z = _cubic_real_roots((s - 1.0) * Bt - 1.0, A + P * Bt * Bt - s * Bt * (Bt + 1.0),
                              -(A * Bt + P * Bt * Bt * (Bt + 1.0)))
        v = z * (RT / p)[..., None] - cm[..., None]
        ok = (z > Bt[..., None]) & (v > 0)
        rho = np.where(ok, 1.0 / np.where(ok, v, 1.0), np.nan)
        return np.sort(rho, axis=-1)

    def critical_point(self) -> CriticalPoint:
        if self.crit is None:
            raise ModelRangeError(f"{self.name}: the critical point of a mixture is found by the mixture "
                                  f"critical-point solver, not from the pure-component constants")
        return self.crit

