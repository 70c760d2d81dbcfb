"""The phase kernel of a cubic model: fugacity coefficients at fixed T for any (p, x), with analytic
derivatives in composition, T and p - the workhorse of the mixture stability test, flashes and the
phase envelope (built by :meth:`supercrit.thermo.models.cubic.core.CubicModel.phase_kernel`).
"""
from __future__ import annotations

import functools
import math
import math as _math
from typing import TYPE_CHECKING

import numpy as np

from .core import _cubic_raw_roots, _cubic_roots_scalar, _polish_root

if TYPE_CHECKING:
    from .core import CubicModel


SMALL_NC = 8  # [-] up to this many components the phase kernel runs in Python floats (a speed setting)


def _volume_terms(V: float, Bm: float, d1: float, d2: float, R: float) -> tuple:
    """The volume functions of F = A_r/(RT) for a two-parameter cubic and their V, B derivatives
    (Michelsen & Mollerup 2007, ch. 3): f, f_V, f_B, f_VV, f_VB, f_BB, g, g_V, g_B, g_BV, g_BB, g_VV."""
    e1, e2 = V + d1 * Bm, V + d2 * Bm
    VB = V - Bm
    f = math.log(e1 / e2) / (R * Bm * (d1 - d2)) if d1 != d2 else 1.0 / (R * e1)
    fV = -1.0 / (R * e1 * e2)
    fB = -(f + V * fV) / Bm
    fVV = -fV * (1.0 / e1 + 1.0 / e2)
    fVB = -(2.0 * fV + V * fVV) / Bm
    fBB = -(2.0 * fB + V * fVB) / Bm
    g = math.log1p(-Bm / V)
    gBV = 1.0 / (VB * VB)
    return f, fV, fB, fVV, fVB, fBB, g, Bm / (V * VB), -1.0 / VB, gBV, -gBV, -gBV + 1.0 / (V * V)


class CubicPhaseKernel:
    """Fugacity coefficients of one cubic model at fixed T, for any (p, x), with analytic derivatives.

    Built by :meth:`CubicModel.phase_kernel`. Works on the untranslated cubic: a constant Peneloux
    shift c_i changes ln phi_i by -c_i p/(R T) in every phase alike, so K-values, stability and phase
    splits are those of the untranslated model; densities are returned translated.
    Formulas: Michelsen & Mollerup, Thermodynamic Models (2nd ed., 2007), ch. 3 (F = A_r/(RT) in
    (T, V, n) and its derivatives for two-parameter cubics with vdW1 mixing).

    The T-dependent parts (a_ij = (1 - k_ij) sqrt(a_i a_j) and d a_ij/dT) are computed once per kernel.
    Up to ``SMALL_NC`` components every evaluation runs on Python floats (``*_list`` methods, used by
    the mixture solvers; numpy's per-call overhead dominates for a handful of components); the array
    methods give the same numbers (tests/thermo/test_fast_paths.py, test_mixture_speed_paths.py).
    """

    def __init__(self, model: "CubicModel", T: float):
        T = float(T)
        self.T = T
        self.R = float(model.gas_constant)
        self.RT = self.R * T
        self.b = np.asarray(model.b, dtype=float)
        self.c = np.asarray(model.c, dtype=float)
        self.d1, self.d2 = float(model.delta1), float(model.delta2)
        self.s, self.P = self.d1 + self.d2, self.d1 * self.d2
        nc = len(self.b)
        self._mv, self._dot = _row_products(nc), _dot(nc)
        q_scalar = getattr(model.alpha, "q_scalar", None)
        self._aij = self._daij = self._daij_l = None
        if nc <= SMALL_NC and q_scalar is not None:
            # Python floats: the same products as the array branch below, element by element; the
            # arrays and d a_ij/dT are made when first asked for (the envelope builds a kernel per T)
            sac, omk, b_l, c_l = _kernel_lists(model)
            q, dq, _ = q_scalar(T)
            Q = [s_ * q_ for s_, q_ in zip(sac, q)]
            self._Q, self._omk_l = Q, omk
            self._dQ = [s_ * d_ for s_, d_ in zip(sac, dq)]
            self._aij_l = [[o * (Qi * Qj) for o, Qj in zip(orow, Q)] for orow, Qi in zip(omk, Q)]
            self._lists = (self._aij_l, b_l)
            self._c_l = c_l
        else:
            q, dq, _ = model.alpha.q(np.array([T]))
            sac = np.sqrt(model.ac)
            Q, dQ = sac * q[0], sac * dq[0]
            omk = model._omk
            self._aij = omk * np.outer(Q, Q)  # [Pa m6 mol-2]
            self._daij = omk * (np.outer(dQ, Q) + np.outer(Q, dQ))  # [Pa m6 mol-2 K-1]
            self._lists = (self._aij.tolist(), self.b.tolist()) if nc <= SMALL_NC else None
            self._daij_l = self._daij.tolist()
            self._c_l = self.c.tolist()

    @property
    def aij(self) -> np.ndarray:
        """(1 - k_ij) sqrt(a_i a_j) at the kernel's T [Pa m6 mol-2], shape (nc, nc)."""
        if self._aij is None:
            self._aij = np.array(self._aij_l)
        return self._aij

    @property
    def daij(self) -> np.ndarray:
        """d a_ij / dT [Pa m6 mol-2 K-1], shape (nc, nc)."""
        if self._daij is None:
            self._daij = np.array(self._daij_list())
        return self._daij

    def _daij_list(self):
        if self._daij_l is None:
            Q, dQ = self._Q, self._dQ
            self._daij_l = [[o * (dQi * Qj + Qi * dQj) for o, Qj, dQj in zip(orow, Q, dQ)]
                            for orow, Qi, dQi in zip(self._omk_l, Q, dQ)]
        return self._daij_l

    # -- volume roots ------------------------------------------------------------------
    def _roots(self, a, bm, p):
        RT = self.RT
        p = float(p)
        A, B = a * p / (RT * RT), bm * p / RT
        s, P = self.s, self.P
        zs = _cubic_roots_scalar((s - 1.0) * B - 1.0, A + P * B * B - s * B * (B + 1.0),
                                 -(A * B + P * B * B * (B + 1.0)))
        zs = [z for z in zs if z > B]
        return zs, A, B

    def pick_Z(self, a, bm, p, phase):
        """Z of the chosen root: phase 'liq' (smallest), 'vap' (largest) or 'stable' (lowest residual Gibbs
        energy, compared as one difference of logarithms). The roots are those of :meth:`_roots`; of three,
        the middle one is polished only when it is needed."""
        RT = self.RT
        A, B = a * p / (RT * RT), bm * p / RT
        s, P = self.s, self.P
        a2 = (s - 1.0) * B - 1.0
        a1 = A + P * B * B - s * B * (B + 1.0)
        a0 = -(A * B + P * B * B * (B + 1.0))
        roots = _cubic_raw_roots(a2, a1, a0)
        if len(roots) == 1:
            z = _polish_root(roots[0], a2, a1, a0)
            if not z > B:
                raise ArithmeticError("no volume root above the co-volume")
            return z, A, B
        # three real roots: the middle root is polished only if it is needed
        for k in ((2,) if phase == "vap" else (0, 2)):
            roots[k] = _polish_root(roots[k], a2, a1, a0)
        if not roots[0] > B and phase != "vap":
            roots[1] = _polish_root(roots[1], a2, a1, a0)
            zs = [z for z in roots if z > B]
        else:
            zs = [z for z in (roots[0], roots[2]) if z > B]
        if not zs:
            raise ArithmeticError("no volume root above the co-volume")
        if len(zs) == 1 or phase == "vap":
            return zs[-1], A, B
        if phase == "liq":
            return zs[0], A, B
        # the root of lower residual Gibbs energy g_res/RT = Z - 1 - ln(Z - B) - A L(Z), as one difference
        zl, zv = zs[0], zs[-1]
        d1, d2 = self.d1, self.d2
        if d1 != d2:
            dL = _math.log((zv + d1 * B) * (zl + d2 * B) / ((zv + d2 * B) * (zl + d1 * B))) / (B * (d1 - d2))
        else:
            dL = 1.0 / (zv + d1 * B) - 1.0 / (zl + d1 * B)
        g_v_minus_l = (zv - zl) - _math.log((zv - B) / (zl - B)) - A * dL
        return (zl if g_v_minus_l > 0.0 else zv), A, B

    # -- fugacity coefficients ---------------------------------------------------------
    def ln_phi(self, x, p, phase="stable"):
        """(ln phi [-] (nc,), Z [-], g_res/RT [-]) at p [Pa], mole fractions x (nc,)."""

        if self._lists is not None:
            lnphi, Z, g = self.ln_phi_list(x.tolist() if isinstance(x, np.ndarray) else list(x), p, phase)
            return np.array(lnphi), Z, g
        ax = self.aij @ x
        a = float(x @ ax)
        bm = float(self.b @ x)
        Z, A, B = self.pick_Z(a, bm, p, phase)
        if self.d1 != self.d2:
            L = math.log((Z + self.d1 * B) / (Z + self.d2 * B)) / (B * (self.d1 - self.d2))
        else:
            L = 1.0 / (Z + self.d1 * B)
        bb = self.b / bm
        lnphi = bb * (Z - 1.0) - math.log(Z - B) - A * L * (2.0 * ax / a - bb)
        return lnphi, Z, Z - 1.0 - math.log(Z - B) - A * L

    def ln_phi_list(self, xs: list, p: float, phase="stable"):
        """:meth:`ln_phi` on Python floats (few components): xs a list of mole fractions; returns
        (ln phi as a list [-], Z [-], g_res/RT [-]). The same formulas term by term."""
        if self._lists is None:  # many components: the array formulas
            lnphi, Z, g = self.ln_phi(np.array(xs), p, phase)
            return lnphi.tolist(), Z, g
        aij, b = self._lists
        mv, dot = self._mv, self._dot
        ax = mv(aij, xs)
        a = dot(xs, ax)
        bm = dot(b, xs)
        Z, A, B = self.pick_Z(a, bm, p, phase)
        d1, d2 = self.d1, self.d2
        if d1 != d2:
            L = math.log((Z + d1 * B) / (Z + d2 * B)) / (B * (d1 - d2))
        else:
            L = 1.0 / (Z + d1 * B)
        Zm1, lzb, AL = Z - 1.0, math.log(Z - B), A * L
        # b_i/bm (Z - 1) - ln(Z - B) - A L (2 ax_i/a - b_i/bm), grouped
        cb, ca = (Zm1 + AL) / bm, 2.0 * AL / a
        lnphi = [cb * bi - ca * axi - lzb for bi, axi in zip(b, ax)]
        return lnphi, Z, Zm1 - lzb - AL

    def _ln_phi_lists(self, x, p, phase):
        """:meth:`ln_phi` with Python floats (kept for callers of the earlier name)."""
        lnphi, Z, g = self.ln_phi_list(x.tolist() if isinstance(x, np.ndarray) else list(x), p, phase)
        return np.array(lnphi), Z, g

    def ln_phi_and_derivs(self, x, p, phase="stable"):
        """ln phi and derivatives at (T, p, x) for one mole of phase.

        Returns
        -------
        lnphi : (nc,) [-]
        dn : (nc, nc) [-]
            n d ln phi_i / d n_j at constant T, p (symmetric; equals Michelsen's n-scaled matrix).
        dT : (nc,) [K-1]
            d ln phi_i / dT at constant p, n.
        dP : (nc,) [Pa-1]
            d ln phi_i / dp at constant T, n.
        V : float
            Untranslated molar volume [m3 mol-1].
        """
        if self._lists is not None:
            lnphi, dn, dT, dP, V = self.derivs_list(x.tolist() if isinstance(x, np.ndarray) else list(x), p, phase)
            return np.array(lnphi), np.array(dn), np.array(dT), np.array(dP), V
        R, T = self.R, self.T
        RT = self.RT
        b = self.b
        ax = self.aij @ x
        a = float(x @ ax)
        Bm = float(b @ x)
        Z, _, _ = self.pick_Z(a, Bm, p, phase)
        V = Z * RT / p
        f, fV, fB, fVV, fVB, fBB, g, gV, gB, gBV, gBB, gVV = _volume_terms(V, Bm, self.d1, self.d2, R)
        D = a
        Di = 2.0 * ax
        DT = float(x @ self.daij @ x)
        DiT = 2.0 * (self.daij @ x)
        n = 1.0
        FB = -n * gB - D / T * fB
        FD = -f / T
        Fi = -g + FB * b + FD * Di
        FnB = -gB
        FBD = -fB / T
        FBB = -n * gBB - D / T * fBB
        Fij = FnB * (b[:, None] + b[None, :]) + FBD * (np.outer(b, Di) + np.outer(Di, b)) \
            + FBB * np.outer(b, b) + FD * 2.0 * self.aij
        FBV = -n * gBV - D / T * fVB
        FiV = -gV + FBV * b - fV / T * Di
        FVV = -n * gVV - D / T * fVV
        dPdV = RT * (-FVV - n / V ** 2)
        dPdn = RT * (-FiV + 1.0 / V)
        Vi = -dPdn / dPdV
        lnphi = Fi - np.log(Z)
        dn = n * Fij + 1.0 + n * np.outer(dPdn, dPdn) / (RT * dPdV)
        # temperature derivatives
        cT = (D - T * DT) / T ** 2  # F_T = cT f; F_BT = cT fB; F_DT = f/T^2
        FiT = cT * fB * b + f / T ** 2 * Di - f / T * DiT
        FTV = cT * fV
        dPdT = -RT * FTV + p / T
        dT = FiT + 1.0 / T - Vi * dPdT / RT
        dP = Vi / RT - 1.0 / p
        return lnphi, dn, dT, dP, V

    def derivs_list(self, xs: list, p: float, phase="stable", temperature_pressure=True):
        """:meth:`ln_phi_and_derivs` on Python floats (few components), the same formulas term by term.

        Returns (lnphi list, dn list of lists, dT list, dP list, V); with ``temperature_pressure=False``
        dT and dP are None (the PT flash and the stability test need only dn).
        """
        if self._lists is None:  # many components: the array formulas
            lnphi, dn, dT, dP, V = self.ln_phi_and_derivs(np.array(xs), p, phase)
            return lnphi.tolist(), dn.tolist(), dT.tolist(), dP.tolist(), V
        lnphi, V, b, u, w, FD2, aij, P, q, tp = self._derivs_core(xs, p, phase)
        dn = [[bi * uj + bj * wi + FD2 * aij_ + 1.0 + Pi * qj for uj, bj, aij_, qj in zip(u, b, row, q)]
              for bi, wi, Pi, row in zip(b, w, P, aij)]
        if not temperature_pressure:
            return lnphi, dn, None, None, V
        dT, dP = self._tp_derivs(xs, p, b, P, tp)
        return lnphi, dn, dT, dP, V

    def dn_parts(self, xs: list, p: float, phase="stable", temperature_pressure=False):
        """ln phi with the composition derivatives in factored form (few components, Python floats).

        Returns (lnphi, V, b, u, w, c, aij, P, q, dT, dP) with
        n d ln phi_i/d n_j = 1 + b_i u_j + b_j w_i + c a_ij + P_i q_j (the matrix of :meth:`derivs_list`),
        so that a solver can assemble its own matrix in one pass; V untranslated [m3 mol-1]; dT [K-1]
        and dP [Pa-1] as in :meth:`derivs_list` (None unless ``temperature_pressure``).
        """
        if self._lists is None:
            raise ValueError(f"dn_parts works on the Python-float kernel (at most {SMALL_NC} components); "
                             f"use derivs_list")
        lnphi, V, b, u, w, c, aij, P, q, tp = self._derivs_core(xs, p, phase)
        if not temperature_pressure:
            return lnphi, V, b, u, w, c, aij, P, q, None, None
        dT, dP = self._tp_derivs(xs, p, b, P, tp)
        return lnphi, V, b, u, w, c, aij, P, q, dT, dP

    def _derivs_core(self, xs, p, phase):
        """Shared part of :meth:`derivs_list` and :meth:`dn_parts` (Michelsen & Mollerup ch. 3 notation:
        F = A_r/(RT) with f(V, B), g(V, B) and D = a; one mole of phase)."""
        aij, b = self._lists
        R, T, RT = self.R, self.T, self.RT
        mv, dot = self._mv, self._dot
        ax = mv(aij, xs)
        a = dot(xs, ax)
        Bm = dot(b, xs)
        Z, _, _ = self.pick_Z(a, Bm, p, phase)
        V = Z * RT / p
        f, fV, fB, fVV, fVB, fBB, g, gV, gB, gBV, gBB, gVV = _volume_terms(V, Bm, self.d1, self.d2, R)
        D = a
        DT_ = D / T
        FB = -gB - DT_ * fB
        FD = -f / T
        FnB = -gB
        FBD = -fB / T
        FBB = -gBB - DT_ * fBB
        FBV = -gBV - DT_ * fVB
        FVV = -gVV - DT_ * fVV
        dPdV = RT * (-FVV - 1.0 / V ** 2)
        # with D_i = 2 ax_i: ln phi_i = F_i - ln Z = -g + FB b_i + FD D_i - ln Z and
        # dp/dn_i = RT (gV - FBV b_i + fV/T D_i + 1/V)
        c0 = -g - math.log(Z)
        FD2, fVT2 = FD * 2.0, 2.0 * fV / T
        lnphi = [c0 + FB * bi + FD2 * axi for bi, axi in zip(b, ax)]
        c1 = gV + 1.0 / V
        dPdn = [RT * (c1 - FBV * bi + fVT2 * axi) for bi, axi in zip(b, ax)]
        # n d ln phi_i/d n_j = F_ij + 1 + dPdn_i dPdn_j/(RT dPdV), with
        # F_ij = FnB (b_i + b_j) + FBD (b_i D_j + D_i b_j) + FBB b_i b_j + 2 FD a_ij
        #      = b_i u_j + b_j w_i + 2 FD a_ij,  w_i = FnB + FBD D_i,  u_j = w_j + FBB b_j
        den = RT * dPdV
        FBD2 = 2.0 * FBD
        w = [FnB + FBD2 * v for v in ax]
        u = [wj + FBB * bj for wj, bj in zip(w, b)]
        q = [v / den for v in dPdn]
        return lnphi, V, b, u, w, FD2, aij, dPdn, q, (f, fB, fV, dPdV, ax, D)

    def _tp_derivs(self, xs, p, b, dPdn, tp):
        """d ln phi/dT [K-1] and d ln phi/dp [Pa-1] from the shared part (lists)."""
        f, fB, fV, dPdV, ax, D = tp
        T, RT = self.T, self.RT
        dax = self._mv(self._daij_list(), xs)
        DT = self._dot(xs, dax)
        T2 = T ** 2
        cT = (D - T * DT) / T2  # F_T = cT f; F_BT = cT fB; F_DT = f/T^2
        cfB, fT2, fT2d = cT * fB, 2.0 * f / T2, 2.0 * f / T
        dPdT = -RT * (cT * fV) + p / T
        # V_i = -dPdn_i/dPdV: dT_i = F_iT + 1/T - V_i dPdT/(RT), dP_i = V_i/(RT) - 1/p
        iT, ip = 1.0 / T, 1.0 / p
        kT, kP = dPdT / (RT * dPdV), -1.0 / (RT * dPdV)
        dT = [cfB * bi + fT2 * axi - fT2d * dai + iT + kT * Pi for bi, axi, dai, Pi in zip(b, ax, dax, dPdn)]
        dP = [kP * Pi - ip for Pi in dPdn]
        return dT, dP

    def density(self, x, V):
        """Translated molar density [mol m-3] from an untranslated molar volume V [m3 mol-1]."""
        if self._lists is not None:
            return 1.0 / (V - self._dot(self._c_l, x.tolist() if isinstance(x, np.ndarray) else x))
        return 1.0 / (V - float(self.c @ x))


@functools.cache
def _row_products(nc: int):
    """A function (A, x) -> [sum_j A[i][j] x[j] for each row i] for lists of nc Python floats, written
    out term by term (same order of summation as ``sum(map(mul, row, x))``, without its call overhead)."""
    terms = " + ".join(f"r[{j}] * x[{j}]" for j in range(nc))
    scope = {}
    exec(f"def row_products(A, x):\n    return [{terms} for r in A]\n", scope)  # noqa: S102 (fixed text)
    return scope["row_products"]


@functools.cache
def _dot(nc: int):
    """A function (u, v) -> sum_i u[i] v[i] for lists of nc Python floats, written out term by term."""
    terms = " + ".join(f"u[{j}] * v[{j}]" for j in range(nc))
    scope = {}
    exec(f"def dot(u, v):\n    return {terms}\n", scope)  # noqa: S102 (fixed text)
    return scope["dot"]


def _kernel_lists(model):
    """(sqrt(ac), 1 - kij, b, c) of a model as Python lists, kept on it (phase kernels are built per T)."""
    lists = model.__dict__.get("_kernel_lists")
    if lists is None:
        lists = (np.sqrt(model.ac).tolist(), model._omk.tolist(), np.asarray(model.b, dtype=float).tolist(),
                 np.asarray(model.c, dtype=float).tolist())
        object.__setattr__(model, "_kernel_lists", lists)
    return lists
