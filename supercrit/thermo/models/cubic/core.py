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
import math
import math as _math
from dataclasses import dataclass, field
from typing import TYPE_CHECKING

import numpy as np
from scipy.optimize import brentq

from ....errors import ModelRangeError
from ..base import AlpharDerivs, CriticalPoint
from .mixing import a_mix

if TYPE_CHECKING:
    from .phase_kernel import CubicPhaseKernel


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
    """Real roots of z^3 + a2 z^2 + a1 z + a0 = 0, vectorised; shape (..., 3) ascending, NaN where complex.

    The root of largest magnitude comes from the trigonometric/Cardano form; the other two from the
    deflated quadratic z^2 + (a2 + r1) z - a0/r1 = 0 by the cancellation-free formula, so that tiny
    roots (liquid Z ~ B at very low pressure) keep full relative precision. Two Newton steps polish.
    """
    a2, a1, a0 = np.broadcast_arrays(*(np.asarray(v, dtype=float) for v in (a2, a1, a0)))
    P = a1 - a2 * a2 / 3.0
    Q = 2.0 * a2**3 / 27.0 - a2 * a1 / 3.0 + a0
    D = (Q / 2.0) ** 2 + (P / 3.0) ** 3
    shift = -a2 / 3.0
    one = D > 0
    sq = np.sqrt(np.where(one, D, 0.0))
    u = -Q / 2.0
    # Cardano with the larger-magnitude cube root first (no cancellation)
    c1 = np.cbrt(u + np.where(u >= 0, sq, -sq))
    c2 = np.where(c1 != 0, -P / (3.0 * np.where(c1 != 0, c1, 1.0)), 0.0)
    r_one = c1 + c2 + shift
    # the trigonometric form only where there are three real roots (element-wise the same arithmetic)
    r1 = r_one.copy() if r_one.ndim else np.array(r_one)
    three = ~one
    if np.any(three):
        Pm = np.minimum(P[three], -1e-300)
        r = 2.0 * np.sqrt(-Pm / 3.0)
        arg = np.clip(3.0 * Q[three] / (Pm * r), -1.0, 1.0)
        phi = np.arccos(arg) / 3.0
        sh = shift[three]
        trig = np.stack([r * np.cos(phi - 2.0 * np.pi * k / 3.0) + sh for k in range(3)], axis=-1)
        big_idx = np.argmax(np.abs(trig), axis=-1)
        r1[three] = np.take_along_axis(trig, big_idx[..., None], axis=-1)[..., 0]
    # deflate: the other two roots solve z^2 + b z + c = 0 with b = a2 + r1, c = -a0 / r1
    r1s = np.where(r1 != 0, r1, 1.0)
    b = a2 + r1
    c = np.where(r1 != 0, -a0 / r1s, a1)
    disc = b * b - 4.0 * c
    real2 = disc >= 0
    r1 = _newton_polish(r1, a2, a1, a0)
    out = np.full(r1.shape + (3,), np.nan)
    out[..., 0] = r1
    # the other two roots (and the sort) only where they are real; element by element the same
    # arithmetic as on the whole array, NaN elsewhere (a NaN stays NaN through the polish)
    if np.any(real2):
        b, c = b[real2], c[real2]
        sd = np.sqrt(b * b - 4.0 * c)
        q = -0.5 * (b + np.where(b >= 0, sd, -sd))
        qs = np.where(q != 0, q, 1.0)
        A2, A1, A0 = a2[real2], a1[real2], a0[real2]
        r2 = _newton_polish(np.where(q != 0, q, 0.0), A2, A1, A0)
        r3 = _newton_polish(np.where(q != 0, c / qs, 0.0), A2, A1, A0)
        out[real2] = np.sort(np.stack([r1[real2], r2, r3], axis=-1), axis=-1)
    return out


def _newton_polish(z, a2, a1, a0):
    """Two Newton steps on z^3 + a2 z^2 + a1 z + a0 (no step where the derivative is 0 or not finite)."""
    for _ in range(2):
        f = ((z + a2) * z + a1) * z + a0
        df = (3.0 * z + 2.0 * a2) * z + a1
        ok = np.isfinite(df) & (df != 0)
        z = z - np.where(ok, f / np.where(ok, df, 1.0), 0.0)
    return z


_INF = float("inf")


def _derivs_scalar(T: float, rho: float, mix: tuple, R: float) -> tuple:
    """(A00, A10, A01, A20, A11, A02) at one (T, rho) from the mixed parameters ``mix`` of
    :meth:`CubicModel._mix_scalar`; the formulas of :meth:`CubicModel.alphar_derivs` in Python floats."""
    a, da, d2a, B, D1, D2 = mix[0], mix[1], mix[2], mix[3], mix[4], mix[5]
    e1, e2 = 1.0 + D1 * rho, 1.0 + D2 * rho
    if abs(D1 - D2) <= 1e-14 * max(abs(D1) + abs(D2), 1e-300):
        lam = rho / e1
    else:
        lam = _math.log(e1 / e2) / (D1 - D2)
    Q = e1 * e2
    lam1 = 1.0 / Q
    lam2 = -(D1 + D2 + 2.0 * D1 * D2 * rho) / (Q * Q)
    Brho = B * rho
    rep = Brho / (1.0 - Brho)
    psi = a / (R * T)
    g = (a - T * da) / (R * T)
    return (-_math.log1p(-Brho) - psi * lam, -lam * g, rep - psi * rho * lam1, -lam * T * d2a / R,
            -rho * lam1 * g, rep * rep - psi * rho * rho * lam2)


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
    roots_are_stable = True  # density_roots returns only the mechanically stable roots (see there)

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
        if x.shape[-1] == 1:  # x @ b with one component is the one product, on (...) arrays
            bm = x[..., 0] * float(self.b[0])
            cm = x[..., 0] * float(self.c[0])
        else:
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
        # of three real roots the middle one lies on the rising (dp/dv > 0) part of the isotherm: p(v) - p
        # is +inf at v = b and tends to -p at large v, so it changes sign - to + there; the outer two are
        # mechanically stable (hence ``roots_are_stable``)
        fin = np.isfinite(z)
        three = fin[..., 0] & fin[..., 1] & fin[..., 2]
        k = RT / p
        if not np.all(three | ~(fin[..., 1] | fin[..., 2])):  # not (three roots or one): generic form
            z = np.where(three[..., None] & (np.arange(3) == 1), np.nan, z)
            v = z * k[..., None] - cm[..., None]
            ok = (z > Bt[..., None]) & (v > 0)
            rho = np.where(ok, 1.0 / np.where(ok, v, 1.0), np.nan)
            return np.sort(rho, axis=-1)
        # the same numbers without the sort: the smallest z (liquid side) and, of three, the largest
        # (vapour side); v = z k - cm rises with z, so the vapour root is the lighter one
        out = np.full(z.shape, np.nan)
        zl, zv = z[..., 0], z[..., 2]
        vl, vv = zl * k - cm, zv * k - cm
        okl = (zl > Bt) & (vl > 0)
        okv = (zv > Bt) & (vv > 0)  # False where there is one root (zv NaN)
        rl = np.where(okl, 1.0 / np.where(okl, vl, 1.0), np.nan)
        rv = np.where(okv, 1.0 / np.where(okv, vv, 1.0), np.nan)
        out[..., 0] = np.where(okv, rv, rl)
        out[..., 1] = np.where(okv, rl, np.nan)
        return out

    # -- scalar fast path (one state, Python floats; the same formulas as the array path) ----
    def _mix_scalar(self, T: float, x: tuple):
        """(a, da/dT, d2a/dT2, B, D1, D2, bm, cm) for one T [K] and composition x (tuple of floats);
        the last (T, x) is kept, since solvers evaluate many densities at one state's T and x."""
        memo = self.__dict__.get("_mix_memo")
        if memo is not None and memo[0] == T and memo[1] == x:
            return memo[2]
        lists = self.__dict__.get("_scalar_lists")
        if lists is None:
            lists = self._scalar_consts()
        sac, omk, b, c, d1, d2, _ = lists
        q, dq, d2q = self.alpha.q_scalar(T)
        n = len(x)
        if n == 1:  # the general sums below with one term each (sum([v]) == v), written out
            x0, o = x[0], omk[0][0]
            xQ, xdQ, xd2Q = x0 * (sac[0] * q[0]), x0 * (sac[0] * dq[0]), x0 * (sac[0] * d2q[0])
            KxQ, KxdQ = xQ * o, xdQ * o
            a = xQ * KxQ
            da = 2.0 * (xdQ * KxQ)
            d2a = 2.0 * (xd2Q * KxQ + xdQ * KxdQ)
            bm, cm = x0 * b[0], x0 * c[0]
        else:
            xQ = [x[i] * (sac[i] * q[i]) for i in range(n)]
            xdQ = [x[i] * (sac[i] * dq[i]) for i in range(n)]
            xd2Q = [x[i] * (sac[i] * d2q[i]) for i in range(n)]
            KxQ = [sum(xQ[i] * omk[i][j] for i in range(n)) for j in range(n)]
            KxdQ = [sum(xdQ[i] * omk[i][j] for i in range(n)) for j in range(n)]
            a = sum(xQ[i] * KxQ[i] for i in range(n))
            da = 2.0 * sum(xdQ[i] * KxQ[i] for i in range(n))
            d2a = 2.0 * (sum(xd2Q[i] * KxQ[i] for i in range(n)) + sum(xdQ[i] * KxdQ[i] for i in range(n)))
            bm = sum(x[i] * b[i] for i in range(n))
            cm = sum(x[i] * c[i] for i in range(n))
        out = (a, da, d2a, bm - cm, d1 * bm + cm, d2 * bm + cm, bm, cm)
        object.__setattr__(self, "_mix_memo", (T, x, out))
        return out

    def _scalar_consts(self):
        """Constants of the scalar path as Python floats (lists): sqrt(ac), 1 - kij, b, c, delta1, delta2, R.
        Python floats, not numpy scalars: the same IEEE arithmetic at a third of the cost per operation."""
        lists = (np.sqrt(self.ac).tolist(), self._omk.tolist(), np.asarray(self.b, float).tolist(),
                 np.asarray(self.c, float).tolist(), float(self.delta1), float(self.delta2), float(self.gas_constant))
        object.__setattr__(self, "_scalar_lists", lists)
        return lists

    def alphar_derivs_scalar(self, T: float, rho: float, x: tuple) -> tuple:
        """(A00, A10, A01, A20, A11, A02) of one state as Python floats; x a tuple of floats.

        Same formulas as :meth:`alphar_derivs` (equal to round-off, tests/thermo/test_fast_paths.py),
        without the per-call overhead of numpy on 0-d arrays."""
        return _derivs_scalar(T, rho, self._mix_scalar(T, x), self._scalar_lists[6])

    def _roots_scalar(self, T: float, p: float, mix: tuple, R: float) -> list:
        """The density roots [mol m-3] of one state, ascending, without padding (see density_roots_scalar)."""
        a, bm, cm = mix[0], mix[6], mix[7]
        lists = self._scalar_lists
        d1, d2 = lists[4], lists[5]
        RT = R * T
        A, Bt = a * p / (RT * RT), bm * p / RT
        s, P = d1 + d2, d1 * d2
        zs = _cubic_real_roots_scalar((s - 1.0) * Bt - 1.0, A + P * Bt * Bt - s * Bt * (Bt + 1.0),
                                      -(A * Bt + P * Bt * Bt * (Bt + 1.0)))
        z0, z1, z2 = zs
        vol = RT / p
        if z1 == z1:  # three real roots (two finite means three); else the one real root
            if z0 == z0 and z2 == z2 and abs(z0) < _INF and abs(z1) < _INF and abs(z2) < _INF:
                zs = (z0, z2)  # the middle one lies on the mechanically unstable part of the isotherm
        else:
            zs = (z0,)
        out = []
        for z in zs:
            v = z * vol - cm
            if z > Bt and v > 0:
                out.append(1.0 / v)
        if len(out) > 1:
            out.sort()
        return out

    def density_roots_scalar(self, T: float, p: float, x: tuple) -> list:
        """:meth:`density_roots` of one state: three slots [mol m-3], ascending, NaN-padded (Python floats).

        As in the array path, of three real roots of the cubic the middle (mechanically unstable) one
        is dropped before the co-volume filter."""
        mix = self._mix_scalar(T, x)
        out = self._roots_scalar(T, p, mix, self._scalar_lists[6])
        while len(out) < 3:
            out.append(_math.nan)
        return out

    def density_roots_derivs_scalar(self, T: float, p: float, x: tuple) -> list:
        """[(rho [mol m-3], (A00, A10, A01, A20, A11, A02)), ...] for every root of
        :meth:`density_roots_scalar`, ascending: the roots with the alpha_r derivatives at each (what the
        stable-root choice and the properties of the chosen root need), from one mixing evaluation."""
        mix = self._mix_scalar(T, x)
        R = self._scalar_lists[6]
        return [(r, _derivs_scalar(T, r, mix, R)) for r in self._roots_scalar(T, p, mix, R)]

    def phase_kernel(self, T) -> "CubicPhaseKernel":
        """A :class:`CubicPhaseKernel` at temperature T [K] (mixture flash, stability and envelope work).

        Kernels are immutable and kept per temperature (the last 256), since path steps and 1-D solves
        flash repeatedly at the same T."""
        T = float(T)
        cache = self.__dict__.get("_kernels")
        if cache is None:
            cache = {}
            object.__setattr__(self, "_kernels", cache)
        kern = cache.get(T)
        if kern is None:
            from .phase_kernel import CubicPhaseKernel

            if len(cache) >= 256:
                cache.clear()
            kern = cache[T] = CubicPhaseKernel(self, T)
        return kern

    def critical_point(self) -> CriticalPoint:
        if self.crit is None:
            raise ModelRangeError(f"{self.name}: the critical point of a mixture is found by the mixture "
                                  f"critical-point solver, not from the pure-component constants")
        return self.crit



def _cubic_real_roots_scalar(a2: float, a1: float, a0: float) -> list:
    """:func:`_cubic_real_roots` for one cubic, step for step (same branches, deflation and polish),
    with Python floats; three slots ascending, NaN where complex."""
    P = a1 - a2 * a2 / 3.0
    Q = 2.0 * a2**3 / 27.0 - a2 * a1 / 3.0 + a0
    D = (Q / 2.0) ** 2 + (P / 3.0) ** 3
    shift = -a2 / 3.0
    if D > 0:
        sq = _math.sqrt(D)
        u = -Q / 2.0
        c1 = _math.cbrt(u + (sq if u >= 0 else -sq))
        c2 = -P / (3.0 * c1) if c1 != 0 else 0.0
        r1 = c1 + c2 + shift
    else:
        Pm = min(P, -1e-300)
        r = 2.0 * _math.sqrt(-Pm / 3.0)
        arg = min(max(3.0 * Q / (Pm * r), -1.0), 1.0)
        phi = _math.acos(arg) / 3.0
        r1 = r * _math.cos(phi) + shift
        for k in (1, 2):
            t = r * _math.cos(phi - 2.0 * _math.pi * k / 3.0) + shift
            if abs(t) > abs(r1):
                r1 = t
    b = a2 + r1
    c = -a0 / r1 if r1 != 0 else a1
    disc = b * b - 4.0 * c
    isfinite = _math.isfinite
    if disc >= 0:
        sd = _math.sqrt(disc)
        q = -0.5 * (b + (sd if b >= 0 else -sd))
        zs = (r1, q, c / q) if q != 0 else (r1, 0.0, 0.0)
    else:
        zs = (r1,)
    out = []
    for z in zs:  # two Newton steps on the cubic
        df = (3.0 * z + 2.0 * a2) * z + a1
        if isfinite(df) and df != 0:
            z = z - (((z + a2) * z + a1) * z + a0) / df
        df = (3.0 * z + 2.0 * a2) * z + a1
        if isfinite(df) and df != 0:
            z = z - (((z + a2) * z + a1) * z + a0) / df
        out.append(z)
    if len(out) == 1:
        return [out[0], _math.nan, _math.nan]
    z1, z2, z3 = out
    if z1 == z1 and z2 == z2 and z3 == z3:  # three numbers: sorted() by a stable exchange network
        if z1 > z2:
            z1, z2 = z2, z1
        if z2 > z3:
            z2, z3 = z3, z2
        if z1 > z2:
            z1, z2 = z2, z1
        return [z1, z2, z3]
    return sorted(out, key=_nan_last)


def _nan_last(z):
    return (z != z, z)


def _cubic_raw_roots(a2: float, a1: float, a0: float) -> list:
    """Real roots of z^3 + a2 z^2 + a1 z + a0 (Python floats, ascending), before polishing: Cardano's
    form for one real root, the trigonometric form for three."""
    P = a1 - a2 * a2 / 3.0
    Q = 2.0 * a2 * a2 * a2 / 27.0 - a2 * a1 / 3.0 + a0
    D = 0.25 * Q * Q + P * P * P / 27.0
    shift = -a2 / 3.0
    if D > 0.0:
        sq = _math.sqrt(D)
        u, v = -0.5 * Q + sq, -0.5 * Q - sq
        u = u ** (1.0 / 3.0) if u >= 0.0 else -((-u) ** (1.0 / 3.0))
        v = v ** (1.0 / 3.0) if v >= 0.0 else -((-v) ** (1.0 / 3.0))
        return [u + v + shift]
    r = 2.0 * _math.sqrt(-P / 3.0) if P < 0.0 else 0.0
    arg = 3.0 * Q / (P * r) if r > 0.0 else 0.0
    phi = _math.acos(-1.0 if arg < -1.0 else (1.0 if arg > 1.0 else arg)) / 3.0
    t = 2.0 * _math.pi / 3.0
    roots = [r * _math.cos(phi - t) + shift, r * _math.cos(phi - 2.0 * t) + shift, r * _math.cos(phi) + shift]
    roots.sort()
    return roots


def _polish_root(z: float, a2: float, a1: float, a0: float) -> float:
    """Two Newton steps on z^3 + a2 z^2 + a1 z + a0 from z."""
    for _ in range(2):
        df = (3.0 * z + 2.0 * a2) * z + a1
        if df == 0.0:
            break
        z -= (((z + a2) * z + a1) * z + a0) / df
    return z


def _cubic_roots_scalar(a2: float, a1: float, a0: float) -> list:
    """Real roots of z^3 + a2 z^2 + a1 z + a0 (Python floats, ascending), each polished by Newton steps."""
    return [_polish_root(z, a2, a1, a0) for z in _cubic_raw_roots(a2, a1, a0)]


def __getattr__(name):
    # CubicPhaseKernel and its helpers live in phase_kernel.py (which imports this module); kept importable
    # from here for existing callers
    if name in ("CubicPhaseKernel", "SMALL_NC"):
        from . import phase_kernel

        return getattr(phase_kernel, name)
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
