"""Ideal-gas part of every fluid: cp0(T), and h and s with supercrit's reference state.

Reference state (documented, used by every model): for each pure component h = 0 and s = 0 for
the ideal gas at T_REF = 298.15 K and P_REF = 101325 Pa. Mixtures add ideal mixing,
s = sum x_i s_i - R sum x_i ln x_i. Tables that use another reference state (e.g. IIR, NBP) agree
with supercrit in *differences* of h and s, never in absolute values.

The correlation is the ideal-gas Helmholtz energy of each component's reference equation of
state (Planck-Einstein and power terms, see components.yaml). Models never contain this part;
:mod:`supercrit.thermo.properties` adds it to the residual part with the model's own gas constant.
"""
from __future__ import annotations

import functools
import math
from dataclasses import dataclass

import numpy as np

from .components import Component
from .constants import T_REF


@dataclass(frozen=True, eq=False)
class IdealGasParts:
    """Ideal-gas cp0 of a set of components, stacked for vectorised evaluation (shape (nc, K))."""

    names: tuple[str, ...]
    c0: np.ndarray
    pe_n: np.ndarray
    pe_theta: np.ndarray
    pw_n: np.ndarray
    pw_t: np.ndarray
    pw_Tred: np.ndarray
    T_min: np.ndarray
    T_max: np.ndarray

    @classmethod
    def from_components(cls, comps: tuple[Component, ...]) -> "IdealGasParts":
        nc = len(comps)
        kpe = max(1, max(len(c.cp0.pe_n) for c in comps))
        kpw = max(1, max(len(c.cp0.pw_n) for c in comps))
        pe_n, pe_th = np.zeros((nc, kpe)), np.ones((nc, kpe))
        pw_n, pw_t, pw_tr = np.zeros((nc, kpw)), np.full((nc, kpw), 2.0), np.ones((nc, kpw))
        for i, c in enumerate(comps):
            k = len(c.cp0.pe_n)
            pe_n[i, :k], pe_th[i, :k] = c.cp0.pe_n, c.cp0.pe_theta
            k = len(c.cp0.pw_n)
            pw_n[i, :k], pw_t[i, :k], pw_tr[i, :k] = c.cp0.pw_n, c.cp0.pw_t, c.cp0.pw_Tred
        return cls(tuple(c.name for c in comps), np.array([c.cp0.c0 for c in comps]), pe_n, pe_th, pw_n, pw_t,
                   pw_tr, np.array([c.cp0.T_min for c in comps]), np.array([c.cp0.T_max for c in comps]))

    def _u(self, T):
        return self.pe_theta / np.asarray(T, dtype=float)[..., None, None]

    def cp0_R(self, T) -> np.ndarray:
        """cp0/R per component [-], shape (..., nc)."""
        T = np.asarray(T, dtype=float)
        u = self._u(T)
        em1 = np.expm1(u)
        pe = np.sum(self.pe_n * u * u * (em1 + 1.0) / (em1 * em1), axis=-1)
        pw = np.sum(-self.pw_n * self.pw_t * (self.pw_t - 1) * (self.pw_Tred / T[..., None, None]) ** self.pw_t, axis=-1)
        return self.c0 + pe + pw

    def _H(self, T):  # antiderivative of cp0/R dT [K]
        T = np.asarray(T, dtype=float)
        u = self._u(T)
        pe = np.sum(self.pe_n * self.pe_theta / np.expm1(u), axis=-1)
        Tb = T[..., None, None]
        pw = np.sum(self.pw_n * self.pw_t * self.pw_Tred ** self.pw_t * Tb ** (1 - self.pw_t), axis=-1)
        return self.c0 * T[..., None] + pe + pw

    def _S(self, T):  # antiderivative of cp0/(R T) dT [-]
        T = np.asarray(T, dtype=float)
        u = self._u(T)
        pe = np.sum(self.pe_n * (u / np.expm1(u) - np.log(-np.expm1(-u))), axis=-1)
        pw = np.sum(self.pw_n * (self.pw_t - 1) * (self.pw_Tred / T[..., None, None]) ** self.pw_t, axis=-1)
        return self.c0 * np.log(T)[..., None] + pe + pw

    def all_R(self, T):
        """(cp0/R, (h0 - h0_ref)/R [K], (s0 - s0_ref)/R) per component, sharing one set of exponentials.

        One Planck-Einstein term at a time on (..., nc) arrays, summed in term order (as
        :meth:`all_R_scalar`), with the buffers reused in place."""
        T = np.asarray(T, dtype=float)
        Tb = T[..., None]
        cp = H = S = None
        for k in range(self.pe_n.shape[1]):
            n, th = self.pe_n[:, k], self.pe_theta[:, k]
            u = th / Tb
            em1 = np.expm1(u)
            t = n * u  # cp term n u^2 (em1 + 1)/em1^2, in that order of operations
            t *= u
            w = em1 + 1.0
            t *= w
            np.multiply(em1, em1, out=w)
            t /= w
            tH = np.divide(n * th, em1)
            np.negative(u, out=w)
            np.expm1(w, out=w)
            np.negative(w, out=w)
            np.log(w, out=w)  # ln(1 - e^-u), overflow-safe
            np.divide(u, em1, out=u)
            u -= w
            u *= n
            if cp is None:
                cp, H, S = t, tH, u
            else:
                cp += t
                H += tH
                S += u
        cp = self.c0 + cp
        H = self.c0 * Tb + H
        S = self.c0 * np.log(T)[..., None] + S
        if self._has_power:  # power terms (N2 only among the packaged components)
            Tb = T[..., None, None]
            tr = (self.pw_Tred / Tb) ** self.pw_t
            cp = cp + np.sum(-self.pw_n * self.pw_t * (self.pw_t - 1) * tr, axis=-1)
            H = H + np.sum(self.pw_n * self.pw_t * tr * Tb, axis=-1)
            S = S + np.sum(self.pw_n * (self.pw_t - 1) * tr, axis=-1)
        H -= self._H_ref
        S -= self._S_ref
        return cp, H, S

    @functools.cached_property
    def _has_power(self) -> bool:
        return bool(np.any(self.pw_n != 0.0))

    def all_R_scalar(self, T: float):
        """:meth:`all_R` for one temperature, as lists of Python floats (same terms in the same order;
        power terms with a zero coefficient - the padding - are left out, as adding a signed zero
        changes no sum)."""
        memo = self.__dict__.get("_all_R_memo")
        if memo is not None and memo[0] == T:
            return memo[1]
        rows = self.__dict__.get("_scalar_rows")
        if rows is None:
            rows = [(float(self.c0[i]), [(n, th, n * th) for n, th in zip(self.pe_n[i].tolist(),
                                                                         self.pe_theta[i].tolist())],
                     [t for t in zip(self.pw_n[i].tolist(), self.pw_t[i].tolist(), self.pw_Tred[i].tolist())
                      if t[0] != 0.0],
                     float(self._H_ref[i]), float(self._S_ref[i])) for i in range(len(self.c0))]
            object.__setattr__(self, "_scalar_rows", rows)
        lnT = math.log(T)
        expm1, log = math.expm1, math.log
        cp, H, S = [], [], []
        for c0, pe, pw, Href, Sref in rows:
            s_cp = s_H = s_S = None
            for n, th, nth in pe:
                u = th / T
                em1 = expm1(u)
                t_cp = n * u * u * (em1 + 1.0) / (em1 * em1)
                t_H = nth / em1  # n th / em1, the product n th made once
                t_S = n * (u / em1 - log(-expm1(-u)))
                if s_cp is None:
                    s_cp, s_H, s_S = t_cp, t_H, t_S
                else:
                    s_cp, s_H, s_S = s_cp + t_cp, s_H + t_H, s_S + t_S
            if not pw:
                cp.append(c0 + s_cp)
                H.append(c0 * T + s_H - Href)
                S.append(c0 * lnT + s_S - Sref)
                continue
            w_cp = w_H = w_S = None
            for n, t, Tr in pw:
                tr = (Tr / T) ** t
                t_cp = -n * t * (t - 1) * tr
                t_H = n * t * tr * T
                t_S = n * (t - 1) * tr
                if w_cp is None:
                    w_cp, w_H, w_S = t_cp, t_H, t_S
                else:
                    w_cp, w_H, w_S = w_cp + t_cp, w_H + t_H, w_S + t_S
            cp.append(c0 + s_cp + w_cp)
            H.append(c0 * T + s_H + w_H - Href)
            S.append(c0 * lnT + s_S + w_S - Sref)
        out = (cp, H, S)
        object.__setattr__(self, "_all_R_memo", (T, out))
        return out

    @functools.cached_property
    def _H_ref(self):
        return self._H(T_REF)

    @functools.cached_property
    def _S_ref(self):
        return self._S(T_REF)

    def h0_R(self, T) -> np.ndarray:
        """(h0(T) - h0(T_REF))/R per component [K], shape (..., nc)."""
        return self._H(T) - self._H(T_REF)

    def s0_R(self, T) -> np.ndarray:
        """(s0(T, P_REF) - s0(T_REF, P_REF))/R per component [-], shape (..., nc)."""
        return self._S(T) - self._S(T_REF)
