"""Span-Wagner (1996) reference equation of state for carbon dioxide (residual part).

The model gives the reduced residual Helmholtz energy alpha_r(tau, delta) of the Span-Wagner
equation, tau = Tc/T, delta = rho/rhoc, and its analytic derivatives up to third order. It has
42 terms: 7 polynomial, 27 exponential, 5 Gaussian bell-shaped and 3 non-analytic terms that
shape the critical region. Coefficients come from ``data/span_wagner_co2.yaml``; the ideal-gas
part is not a model concern (``ideal_gas.py``).

Units: T [K], rho [mol m-3], x [mol mol-1] of shape (..., 1), R [J mol-1 K-1]. Range of
validity: 216.592 K to 1100 K, pressures up to 800 MPa.

Notes
-----
The non-analytic terms n Delta^b delta psi contain |delta - 1|^(1/beta) and Delta^(b - k): the
published derivative formulas divide by (delta - 1) and by Delta. Here every power of
|delta - 1| is written with a non-negative exponent (the loader checks that 1/beta > 3 and
2a > 3), so nothing is evaluated as 0 * inf on the critical isochore, and Delta (> 0 everywhere
except exactly at tau = delta = 1, where it is 0; in float64 it never underflows near that
point) is replaced by 1 exactly where it vanishes. At exactly (Tc, rhoc) the fields then take
their limits: A00, A10, A01, A02, A11, A03 and A12 are finite; A20 is -inf (cv diverges on
the critical isochore); A21 and A30 have no limit (the value depends on the direction of
approach) and are NaN there, and only there.

References
----------
R. Span, W. Wagner, "A New Equation of State for Carbon Dioxide Covering the Fluid Region from the
Triple-Point Temperature to 1100 K at Pressures up to 800 MPa", J. Phys. Chem. Ref. Data 25 (1996)
1509-1596, doi:10.1063/1.555991. Residual part: Table 31; ancillary equations: Eqs. 3.13-3.15.
"""
from __future__ import annotations

import functools
import math
from dataclasses import dataclass
from importlib import resources

import numpy as np
import yaml

from ....errors import DataError, ModelRangeError
from ..base import AlpharDerivs, CriticalPoint

_DATA_FILE = "span_wagner_co2.yaml"
_SOURCES_OK = ("span1996",)  # every block of the data file must cite the paper


@dataclass(frozen=True)
class AlpharDerivs3:
    """Third-order scaled derivatives ``A_ij = tau^i delta^j d^(i+j) alpha_r / d tau^i d delta^j`` [-]."""

    A30: np.ndarray
    A21: np.ndarray
    A12: np.ndarray
    A03: np.ndarray


@functools.cache
def load_span_wagner_data() -> dict:
    """Read ``data/span_wagner_co2.yaml`` once; check that every block names its source.

    Returns
    -------
    dict
        The parsed file (units as the keys say: K, MPa, kg m-3, mol m-3, g mol-1).

    Raises
    ------
    DataError
        If a block has no ``source`` or cites something other than the Span-Wagner paper.
    """
    text = resources.files("supercrit.thermo.data").joinpath(_DATA_FILE).read_text(encoding="utf-8")
    return _checked(yaml.safe_load(text))


def _checked(raw: dict) -> dict:
    """Return ``raw`` if every block cites the paper; raise DataError naming the block otherwise."""
    names = ("constants", "validity", "max_density", "residual", "melting", "sublimation")
    blocks = {k: raw.get(k) for k in names}
    blocks.update({f"ancillary.{k}": raw.get("ancillary", {}).get(k)
                   for k in ("vapor_pressure", "liquid_density", "vapor_density")})
    for where, block in blocks.items():
        if not isinstance(block, dict):
            raise DataError(f"{_DATA_FILE}: block {where!r} is missing")
        if block.get("source") not in _SOURCES_OK:
            raise DataError(f"{_DATA_FILE} {where}: source {block.get('source')!r} is not span1996; every "
                            f"block of the Span-Wagner data must cite the paper (table or equation in 'where')")
    return raw


@dataclass(frozen=True)
class _Separable:
    """Polynomial, exponential and Gaussian terms in one array form, shape (nterms,).

    term = n delta^d tau^t exp(-s delta^c - alpha (delta - eps)^2 - beta (tau - gamma)^2).
    """

    n: np.ndarray
    d: np.ndarray
    t: np.ndarray
    c: np.ndarray
    s: np.ndarray      # 1 for exponential terms, 0 otherwise
    alpha: np.ndarray
    eps: np.ndarray
    beta: np.ndarray
    gamma: np.ndarray


@dataclass(frozen=True)
class _NonAnalytic:
    """Non-analytic terms n Delta^b delta psi, shape (nterms,)."""

    n: np.ndarray
    a: np.ndarray
    b: np.ndarray
    beta: np.ndarray
    A: np.ndarray
    B: np.ndarray
    C: np.ndarray
    D: np.ndarray


def _log_derivs(x, k, s, c, alpha, eps):
    """g = D ln f, D g, D^2 g with D = x d/dx, for f = x^k exp(-s x^c - alpha (x - eps)^2)."""
    xc = s * x ** c
    g = k - c * xc - 2.0 * alpha * x * (x - eps)
    g1 = -c * c * xc - 2.0 * alpha * x * (2.0 * x - eps)
    g2 = -c ** 3 * xc - 2.0 * alpha * x * (4.0 * x - eps)
    return g, g1, g2


def _scaled_factors(g, g1, g2, order):
    """Factors Y_j = x^j f^(j) / f for j = 0..order from D-log-derivatives."""
    y = [np.ones_like(g), g]
    if order >= 2:
        d2 = g * g + g1                       # D^2 f / f
        y.append(d2 - g)                      # x^2 f'' = D^2 f - D f
    if order >= 3:
        d3 = g ** 3 + 3.0 * g * g1 + g2      # D^3 f / f
        y.append(d3 - 3.0 * d2 + 2.0 * g)     # x^3 f''' = D^3 - 3 D^2 + 2 D
    return y


def _binom(n, k):
    return (1, 1, 1, 1, 2, 1, 1, 3, 3, 1)[n * (n + 1) // 2 + k]


@dataclass(frozen=True, eq=False)
class SpanWagnerCO2:
    """Span-Wagner (1996) reference equation of state for pure CO2.

    Attributes
    ----------
    components : tuple of str
        ``("CO2",)``.
    name : str
        ``"span-wagner"``.
    Tc : float
        Critical and reducing temperature [K].
    rhoc : float
        Critical and reducing density [mol m-3].
    pc : float
        Critical pressure [Pa].
    gas_constant : float
        Gas constant of the EOS, 8.31451 [J mol-1 K-1].
    M : float
        Molar mass [kg mol-1].
    validity : dict
        ``T_min``, ``T_max`` [K] and ``p_max`` [Pa] of the published range of validity.

    References
    ----------
    R. Span, W. Wagner, J. Phys. Chem. Ref. Data 25 (1996) 1509, doi:10.1063/1.555991.
    """

    components: tuple[str, ...]
    name: str
    Tc: float
    rhoc: float
    pc: float
    gas_constant: float
    M: float
    validity: dict
    rho_max: float
    _sep: _Separable
    _na: _NonAnalytic
    _anc_p: np.ndarray
    _anc_liq: np.ndarray
    _anc_vap: np.ndarray

    has_two_phase = True

    # ---------------------------------------------------------------- interface
    def R(self, x) -> np.ndarray:
        """Gas constant of the EOS [J mol-1 K-1], shape of ``x[..., 0]``."""
        return np.full(np.shape(x)[:-1], self.gas_constant)

    def alphar(self, T, rho, x) -> np.ndarray:
        """Reduced residual Helmholtz energy a_r/(R T) [-].

        Parameters
        ----------
        T : array_like
            Temperature [K], shape (...).
        rho : array_like
            Molar density [mol m-3], shape (...).
        x : array_like
            Mole fractions [mol mol-1], shape (..., 1).
        """
        return self._derivs2(T, rho, x)[(0, 0)]

    def alphar_derivs(self, T, rho, x) -> AlpharDerivs:
        """alpha_r and ``A_ij = tau^i delta^j d^(i+j) alpha_r/d tau^i d delta^j`` for i + j <= 2 [-].

        Parameters as :meth:`alphar`. At exactly (Tc, rhoc) A20 is -inf (see module Notes).
        """
        a = self._derivs2(T, rho, x)
        return AlpharDerivs(A00=a[(0, 0)], A10=a[(1, 0)], A01=a[(0, 1)],
                            A20=a[(2, 0)], A11=a[(1, 1)], A02=a[(0, 2)])

    def alphar_derivs_scalar(self, T: float, rho: float, x) -> tuple:
        """(A00, A10, A01, A20, A11, A02) of one state as Python floats (the scalar sums of
        :meth:`_derivs2_scalar`, which :meth:`alphar_derivs` itself uses for one state)."""
        tau, delta = self.Tc / T, rho / self.rhoc
        if (tau == 1.0 and delta == 1.0) or not delta > 0.0:
            d = self.alphar_derivs(T, rho, x)
            return tuple(float(v) for v in (d.A00, d.A10, d.A01, d.A20, d.A11, d.A02))
        v = self._derivs2_scalar(tau, delta)
        return v[(0, 0)], v[(1, 0)], v[(0, 1)], v[(2, 0)], v[(1, 1)], v[(0, 2)]

    def alphar_derivs3(self, T, rho, x) -> AlpharDerivs3:
        """Third-order ``A_ij`` (A30, A21, A12, A03) [-]; parameters as :meth:`alphar`.

        A21 and A30 are NaN at exactly (Tc, rhoc), where they have no limit (module Notes).
        """
        a = self._derivs(T, rho, x, 3)
        return AlpharDerivs3(A30=a[(3, 0)], A21=a[(2, 1)], A12=a[(1, 2)], A03=a[(0, 3)])

    def ndalphar_dni(self, T, rho, x) -> np.ndarray:
        """d(n alpha_r)/dn at constant T, V [-], shape (..., 1); for a pure fluid A00 + A01."""
        a = self._derivs2(T, rho, x)
        return (a[(0, 0)] + a[(0, 1)])[..., None]

    def max_density(self, x) -> np.ndarray:
        """Upper bound of physical density roots [mol m-3], shape of ``x[..., 0]``.

        The density on the melting line at 800 MPa (327.673 K), the densest fluid state inside the
        range of validity: 1495.70 kg m-3 [Span & Wagner 1996, Table 35].
        """
        return np.full(np.shape(x)[:-1], self.rho_max)

    def critical_point(self) -> CriticalPoint:
        """Published critical point: 304.1282 K, 7.3773 MPa, 467.6 kg m-3 [span1996]."""
        return CriticalPoint(T=self.Tc, p=self.pc, rho=self.rhoc)

    def saturation_guess(self, T):
        """Saturated liquid and vapour densities from the published ancillary equations.

        Parameters
        ----------
        T : array_like
            Temperature [K], Tt <= T <= Tc (below Tt the equations are extrapolated).

        Returns
        -------
        rho_liq, rho_vap : ndarray
            Densities [mol m-3] from Span & Wagner (1996) Eqs. 3.14 and 3.15.

        Raises
        ------
        ModelRangeError
            If any T is above the critical temperature or not positive.
        """
        theta = self._theta(T, "saturation_guess")
        liq = self.rhoc * np.exp(np.sum(self._anc_liq[:, 0] * theta[..., None] ** self._anc_liq[:, 1], axis=-1))
        vap = self.rhoc * np.exp(np.sum(self._anc_vap[:, 0] * theta[..., None] ** self._anc_vap[:, 1], axis=-1))
        return liq, vap

    def saturation_pressure_guess(self, T) -> np.ndarray:
        """Vapour pressure [Pa] from Span & Wagner (1996) Eq. 3.13; T [K] as in :meth:`saturation_guess`.

        Raises
        ------
        ModelRangeError
            If any T is above the critical temperature or not positive.
        """
        theta = self._theta(T, "saturation_pressure_guess")
        T = np.asarray(T, dtype=float)
        s = np.sum(self._anc_p[:, 0] * theta[..., None] ** self._anc_p[:, 1], axis=-1)
        return self.pc * np.exp(self.Tc / T * s)

    # ---------------------------------------------------------------- internals
    def _theta(self, T, what):
        T = np.asarray(T, dtype=float)
        bad = ~(T > 0) | (T > self.Tc)
        if np.any(bad):
            Tb = float(np.ravel(T)[np.argmax(np.ravel(bad))])
            raise ModelRangeError(
                f"{what} for CO2 (Span-Wagner) at T = {Tb:.4f} K: the ancillary saturation equations hold "
                f"from the triple point 216.592 K up to the critical temperature {self.Tc} K. Above Tc there is "
                f"no saturation state; treat the state as supercritical.")
        return 1.0 - T / self.Tc

    @functools.cached_property
    def _fast_tables(self):
        """Term tables of the fast second-order path (built once per model)."""
        p = self._sep
        plain = p.alpha == 0.0                                    # polynomial and exponential terms
        d, t, c, s, n = p.d[plain], p.t[plain], p.c[plain], p.s[plain], p.n[plain]
        ex = s > 0
        ce, de, te = c[ex], d[ex], t[ex]
        # columns: A00, A10, A20, A01, A11, A02 from sum(term * w) + sum(term u * w_u) + sum(term u^2 * w_uu)
        W = np.stack([np.ones_like(d), t, t * t - t, d, t * d, d * d - d], axis=1)
        Wu = np.stack([np.zeros_like(ce), np.zeros_like(ce), np.zeros_like(ce), -ce, -te * ce,
                       ce - 2.0 * de * ce - ce * ce], axis=1)
        Wuu = np.stack([np.zeros_like(ce)] * 5 + [ce * ce], axis=1)
        g = ~plain
        gauss = _Separable(n=p.n[g], d=p.d[g], t=p.t[g], c=p.c[g], s=p.s[g], alpha=p.alpha[g], eps=p.eps[g],
                           beta=p.beta[g], gamma=p.gamma[g])
        return dict(lnn_sign=np.sign(n), lnn=np.log(np.abs(n)), d=d, t=t, ex=np.nonzero(ex)[0],
                    cidx=ce.astype(int) - 1, cmax=int(ce.max()), W=W, Wu=Wu, Wuu=Wuu, gauss=gauss)

    def _derivs2(self, T, rho, x):
        """All ``A_ij`` with i + j <= 2, dict keyed (i, j): the fast path used by every solver.

        Polynomial and exponential terms are summed as matrix products of one exp() per term
        (term = n exp(d ln delta + t ln tau - delta^c)); Gaussian and non-analytic terms have
        their own closed forms. Agrees with the general ``_derivs`` to round-off (tested); at
        exactly (Tc, rhoc) it defers to ``_derivs`` for the limits described in the module Notes.
        """
        T = np.asarray(T, dtype=float)
        rho = np.asarray(rho, dtype=float)
        x = np.asarray(x, dtype=float)
        shape = np.broadcast_shapes(T.shape, rho.shape, x.shape[:-1])
        if T.size == 1 and rho.size == 1 and int(np.prod(shape)) == 1:
            tau1, delta1 = self.Tc / float(T.reshape(-1)[0]), float(rho.reshape(-1)[0]) / self.rhoc
            if not (tau1 == 1.0 and delta1 == 1.0) and delta1 > 0.0:
                vals = self._derivs2_scalar(tau1, delta1)
                return {key: np.full(shape, v) for key, v in vals.items()}
        tau = np.broadcast_to(self.Tc / T, shape)
        delta = np.broadcast_to(rho / self.rhoc, shape)
        if np.any((tau == 1.0) & (delta == 1.0)):
            return self._derivs(T, rho, x, 2)
        k = self._fast_tables
        with np.errstate(divide="ignore"):
            lnd, lnt = np.log(delta), np.log(tau)
        E = np.multiply.outer(lnd, k["d"]) + np.multiply.outer(lnt, k["t"]) + k["lnn"]
        pw = np.empty(shape + (k["cmax"],))
        pw[..., 0] = delta
        for j in range(1, k["cmax"]):
            pw[..., j] = pw[..., j - 1] * delta
        u = pw[..., k["cidx"]]
        E[..., k["ex"]] -= u
        term = np.exp(E) * k["lnn_sign"]
        tu = term[..., k["ex"]] * u
        S = term @ k["W"] + tu @ k["Wu"] + (tu * u) @ k["Wuu"]
        res = {key: S[..., i] for i, key in enumerate(((0, 0), (1, 0), (2, 0), (0, 1), (1, 1), (0, 2)))}
        for part in (self._gaussian2(tau, delta, k["gauss"]), self._nonanalytic2(tau, delta)):
            for key in res:
                res[key] = res[key] + part[key]
        return res

    @functools.cached_property
    def _scalar_tables(self):
        """Plain-Python term lists of the scalar path (built once per model)."""
        p = self._sep
        plain = p.alpha == 0.0
        terms = [(float(n), float(d), float(t), float(c), float(sv)) for n, d, t, c, sv in
                 zip(p.n[plain], p.d[plain], p.t[plain], p.c[plain], p.s[plain])]
        g = ~plain
        gauss = [tuple(float(v) for v in row) for row in zip(p.n[g], p.d[g], p.t[g], p.alpha[g], p.eps[g],
                                                            p.beta[g], p.gamma[g])]
        q = self._na
        na = [tuple(float(v) for v in row) for row in zip(np.broadcast_to(q.n, np.shape(q.n)),
                                                          *(np.broadcast_to(getattr(q, k), np.shape(q.n))
                                                            for k in ("a", "b", "beta", "A", "B", "C", "D")))]
        return terms, gauss, na

    def _derivs2_scalar(self, tau, delta):
        """The same sums as :meth:`_derivs2` for one state, in plain Python floats.

        A single state is dominated by numpy's per-call overhead; this path evaluates the 42 terms
        with the math module (tested equal to the array path to round-off). Not used at (Tc, rhoc).
        """
        terms, gauss, na = self._scalar_tables
        lnd, lnt = math.log(delta), math.log(tau)
        a00 = a10 = a20 = a01 = a11 = a02 = 0.0
        for n, d, t, c, sv in terms:
            if sv > 0.0:
                dc = delta ** c
                u = c * dc
                f = n * math.exp(d * lnd + t * lnt - dc)
            else:
                u = 0.0
                f = n * math.exp(d * lnd + t * lnt)
            g = d - u
            a00 += f
            a10 += f * t
            a20 += f * t * (t - 1.0)
            a01 += f * g
            a11 += f * t * g
            a02 += f * (g * (g - 1.0) - c * u)
        for n, d, t, al, eps, be, ga in gauss:
            dd, dt = delta - eps, tau - ga
            f = n * delta ** d * tau ** t * math.exp(-al * dd * dd - be * dt * dt)
            gd = d - 2.0 * al * delta * dd
            gt = t - 2.0 * be * tau * dt
            a00 += f
            a10 += f * gt
            a20 += f * (gt * gt - 2.0 * be * tau * (2.0 * tau - ga) - gt)
            a01 += f * gd
            a11 += f * gt * gd
            a02 += f * (gd * gd - 2.0 * al * delta * (2.0 * delta - eps) - gd)
        e = delta - 1.0
        ae = abs(e)
        se = 1.0 if e > 0 else (-1.0 if e < 0 else 0.0)
        t1 = tau - 1.0
        for n, a, b, beta, A, B, C, D in na:
            k1, k2 = 1.0 / beta, 2.0 * a
            p1 = ae ** (k1 - 2.0)
            p2 = ae ** (k2 - 2.0)
            th = -t1 + A * p1 * ae * ae
            th_d = A * k1 * se * p1 * ae
            th_dd = A * k1 * (k1 - 1.0) * p1
            Dl = th * th + B * p2 * ae * ae
            D_d = 2.0 * th * th_d + B * k2 * se * p2 * ae
            D_dd = 2.0 * th_d * th_d + 2.0 * th * th_dd + B * k2 * (k2 - 1.0) * p2
            D_t = -2.0 * th
            D_td = -2.0 * th_d
            P2 = b * (b - 1.0) * Dl ** (b - 2.0)
            P1 = P2 * Dl / (b - 1.0)
            F = P1 * Dl / b
            F_t, F_d = P1 * D_t, P1 * D_d
            F_tt = P2 * D_t * D_t + 2.0 * P1
            F_td = P2 * D_t * D_d + P1 * D_td
            F_dd = P2 * D_d * D_d + P1 * D_dd
            psi = math.exp(-C * e * e - D * t1 * t1)
            ps_d = -2.0 * C * e * psi
            ps_dd = (4.0 * C * C * e * e - 2.0 * C) * psi
            ps_t = -2.0 * D * t1 * psi
            ps_tt = (4.0 * D * D * t1 * t1 - 2.0 * D) * psi
            ps_td = 4.0 * C * D * e * t1 * psi
            H = psi + delta * ps_d
            a00 += n * F * delta * psi
            a10 += n * tau * delta * (F_t * psi + F * ps_t)
            a20 += n * tau * tau * delta * (F_tt * psi + 2.0 * F_t * ps_t + F * ps_tt)
            a01 += n * delta * (F * H + delta * F_d * psi)
            a11 += n * tau * delta * (F_t * H + delta * (F_td * psi + F_d * ps_t) + F * (ps_t + delta * ps_td))
            a02 += n * delta * delta * (F_dd * delta * psi + 2.0 * F_d * H + F * (2.0 * ps_d + delta * ps_dd))
        return {(0, 0): a00, (1, 0): a10, (2, 0): a20, (0, 1): a01, (1, 1): a11, (0, 2): a02}

    @staticmethod
    def _gaussian2(tau, delta, g):
        """Gaussian bell-shaped terms and their scaled derivatives up to second order."""
        tau, delta = tau[..., None], delta[..., None]
        dd, dt = delta - g.eps, tau - g.gamma
        term = g.n * delta ** g.d * tau ** g.t * np.exp(-g.alpha * dd * dd - g.beta * dt * dt)
        gd = g.d - 2.0 * g.alpha * delta * dd
        Y2 = gd * gd - 2.0 * g.alpha * delta * (2.0 * delta - g.eps) - gd
        gt = g.t - 2.0 * g.beta * tau * dt
        X2 = gt * gt - 2.0 * g.beta * tau * (2.0 * tau - g.gamma) - gt
        tg, tgt = term * gd, term * gt
        return {(0, 0): term.sum(-1), (1, 0): tgt.sum(-1), (2, 0): (term * X2).sum(-1),
                (0, 1): tg.sum(-1), (1, 1): (tgt * gd).sum(-1), (0, 2): (term * Y2).sum(-1)}

    def _nonanalytic2(self, tau, delta):
        """Non-analytic terms n Delta^b delta psi up to second order; Delta > 0 assumed (not at (Tc, rhoc))."""
        q = self._na
        tau, delta = tau[..., None], delta[..., None]
        e = delta - 1.0
        ae, se = np.abs(e), np.sign(e)
        t1 = tau - 1.0
        k1, k2 = 1.0 / q.beta, 2.0 * q.a
        p1 = ae ** (k1 - 2.0)                            # exponents > 1 (loader check): finite at e = 0
        p2 = ae ** (k2 - 2.0)
        th = -t1 + q.A * p1 * ae * ae
        th_d = q.A * k1 * se * p1 * ae
        th_dd = q.A * k1 * (k1 - 1.0) * p1
        Dl = th * th + q.B * p2 * ae * ae
        D_d = 2.0 * th * th_d + q.B * k2 * se * p2 * ae
        D_dd = 2.0 * th_d * th_d + 2.0 * th * th_dd + q.B * k2 * (k2 - 1.0) * p2
        D_t = -2.0 * th
        D_td = -2.0 * th_d
        b = q.b
        P2 = b * (b - 1.0) * Dl ** (b - 2.0)
        P1 = P2 * Dl / (b - 1.0)
        F = P1 * Dl / b
        F_t, F_d = P1 * D_t, P1 * D_d
        F_tt = P2 * D_t * D_t + 2.0 * P1
        F_td = P2 * D_t * D_d + P1 * D_td
        F_dd = P2 * D_d * D_d + P1 * D_dd
        psi = np.exp(-q.C * e * e - q.D * t1 * t1)
        ps_d = -2.0 * q.C * e * psi
        ps_dd = (4.0 * q.C * q.C * e * e - 2.0 * q.C) * psi
        ps_t = -2.0 * q.D * t1 * psi
        ps_tt = (4.0 * q.D * q.D * t1 * t1 - 2.0 * q.D) * psi
        ps_td = 4.0 * q.C * q.D * e * t1 * psi
        H = psi + delta * ps_d                            # d(delta psi)/d delta
        n = q.n
        return {(0, 0): (n * F * delta * psi).sum(-1),
                (1, 0): (n * tau * delta * (F_t * psi + F * ps_t)).sum(-1),
                (2, 0): (n * tau * tau * delta * (F_tt * psi + 2.0 * F_t * ps_t + F * ps_tt)).sum(-1),
                (0, 1): (n * delta * (F * H + delta * F_d * psi)).sum(-1),
                (1, 1): (n * tau * delta * (F_t * H + delta * (F_td * psi + F_d * ps_t)
                                            + F * (ps_t + delta * ps_td))).sum(-1),
                (0, 2): (n * delta * delta * (F_dd * delta * psi + 2.0 * F_d * H
                                              + F * (2.0 * ps_d + delta * ps_dd))).sum(-1)}

    def _derivs(self, T, rho, x, order):
        """All ``A_ij`` with i + j <= order, dict keyed (i, j); arrays of the broadcast shape."""
        T = np.asarray(T, dtype=float)
        rho = np.asarray(rho, dtype=float)
        x = np.asarray(x, dtype=float)
        shape = np.broadcast_shapes(T.shape, rho.shape, x.shape[:-1])
        tau = np.broadcast_to(self.Tc / T, shape)[..., None]
        delta = np.broadcast_to(rho / self.rhoc, shape)[..., None]
        out = self._separable(tau, delta, order)
        na = self._nonanalytic(tau, delta, order)
        return {k: out[k] + na[k] for k in out}

    def _separable(self, tau, delta, order):
        p = self._sep
        term = p.n * delta ** p.d * tau ** p.t * np.exp(
            -p.s * delta ** p.c - p.alpha * (delta - p.eps) ** 2 - p.beta * (tau - p.gamma) ** 2)
        res = {(0, 0): term.sum(axis=-1)}
        if order == 0:
            return res
        Y = _scaled_factors(*_log_derivs(delta, p.d, p.s, p.c, p.alpha, p.eps), order)
        X = _scaled_factors(*_log_derivs(tau, p.t, 0.0, 0.0, p.beta, p.gamma), order)
        for i in range(order + 1):
            for j in range(order + 1 - i):
                if i + j:
                    res[(i, j)] = (term * X[i] * Y[j]).sum(axis=-1)
        return res

    def _nonanalytic(self, tau, delta, order):
        """n Delta^b delta psi and its scaled derivatives; singularity-free form (module Notes)."""
        q = self._na
        e = delta - 1.0
        ae, se = np.abs(e), np.sign(e)
        t1 = tau - 1.0
        k1 = 1.0 / q.beta                      # theta = (1 - tau) + A |e|^k1
        k2 = 2.0 * q.a                         # Delta = theta^2 + B |e|^k2
        th = -t1 + q.A * ae ** k1
        th1 = q.A * k1 * se * ae ** (k1 - 1.0)
        th2 = q.A * k1 * (k1 - 1.0) * ae ** (k1 - 2.0)
        th3 = q.A * k1 * (k1 - 1.0) * (k1 - 2.0) * se * ae ** (k1 - 3.0)
        Dl = th * th + q.B * ae ** k2
        # partial derivatives of Delta: (tau order, delta order)
        dD = {(0, 1): 2.0 * th * th1 + q.B * k2 * se * ae ** (k2 - 1.0),
              (0, 2): 2.0 * th1 * th1 + 2.0 * th * th2 + q.B * k2 * (k2 - 1.0) * ae ** (k2 - 2.0),
              (0, 3): 6.0 * th1 * th2 + 2.0 * th * th3 + q.B * k2 * (k2 - 1.0) * (k2 - 2.0) * se * ae ** (k2 - 3.0),
              (1, 0): -2.0 * th, (2, 0): 2.0 * np.ones_like(th), (3, 0): np.zeros_like(th),
              (1, 1): -2.0 * th1, (1, 2): -2.0 * th2, (2, 1): np.zeros_like(th)}
        crit = Dl == 0.0                       # exactly tau = delta = 1
        Ds = np.where(crit, 1.0, Dl)
        b = q.b
        P = [np.where(crit, 0.0, Ds ** b), b * Ds ** (b - 1.0), b * (b - 1.0) * Ds ** (b - 2.0),
             b * (b - 1.0) * (b - 2.0) * Ds ** (b - 3.0)]
        # F = Delta^b: chain rule (Faa di Bruno) up to third order
        F = {(0, 0): P[0]}
        if order >= 1:
            for k in ((1, 0), (0, 1)):
                F[k] = P[1] * dD[k]
        if order >= 2:
            for (i, j) in ((2, 0), (1, 1), (0, 2)):
                u = (1, 0) if i else (0, 1)                 # first differentiation variable
                v = (i - u[0], j - u[1])                     # second
                F[(i, j)] = P[2] * dD[u] * dD[v] + P[1] * dD[(i, j)]
        if order >= 3:
            for (i, j) in ((3, 0), (2, 1), (1, 2), (0, 3)):
                v = [(1, 0)] * i + [(0, 1)] * j               # the three differentiation variables
                pair = lambda a, c: (v[a][0] + v[c][0], v[a][1] + v[c][1])  # noqa: E731
                F[(i, j)] = (P[3] * dD[v[0]] * dD[v[1]] * dD[v[2]]
                             + P[2] * (dD[pair(0, 1)] * dD[v[2]] + dD[pair(0, 2)] * dD[v[1]]
                                       + dD[pair(1, 2)] * dD[v[0]])
                             + P[1] * dD[(i, j)])
        # K = delta psi = [delta exp(-C e^2)] [exp(-D (tau - 1)^2)], separable
        Pe = np.exp(-q.C * e * e)
        Pd = [Pe, -2.0 * q.C * e * Pe, (4.0 * q.C ** 2 * e * e - 2.0 * q.C) * Pe,
              (-8.0 * q.C ** 3 * e ** 3 + 12.0 * q.C ** 2 * e) * Pe]
        H = [delta * Pd[0], Pd[0] + delta * Pd[1], 2.0 * Pd[1] + delta * Pd[2], 3.0 * Pd[2] + delta * Pd[3]]
        Qt = np.exp(-q.D * t1 * t1)
        Q = [Qt, -2.0 * q.D * t1 * Qt, (4.0 * q.D ** 2 * t1 * t1 - 2.0 * q.D) * Qt,
             (-8.0 * q.D ** 3 * t1 ** 3 + 12.0 * q.D ** 2 * t1) * Qt]
        res = {}
        for i in range(order + 1):
            for j in range(order + 1 - i):
                f = sum(_binom(i, a) * _binom(j, c) * F[(a, c)] * Q[i - a] * H[j - c]
                        for a in range(i + 1) for c in range(j + 1))
                res[(i, j)] = (q.n * f * tau ** i * delta ** j).sum(axis=-1)
        if order >= 2:
            at_crit = crit[..., 0]
            if np.any(at_crit):
                # limits at exactly (Tc, rhoc): A20 diverges with the sign of the slowest-decaying terms
                lead = np.sign(q.n[q.b == q.b.min()].sum())
                res[(2, 0)] = np.where(at_crit, lead * np.inf, res[(2, 0)])
                if order >= 3:
                    res[(2, 1)] = np.where(at_crit, np.nan, res[(2, 1)])
                    res[(3, 0)] = np.where(at_crit, np.nan, res[(3, 0)])
        return res


def _build(raw: dict) -> SpanWagnerCO2:
    c = raw["constants"]
    r = raw["residual"]
    pol = np.array(r["polynomial"], dtype=float)
    ex = np.array(r["exponential"], dtype=float)
    ga = np.array(r["gaussian"], dtype=float)
    na = np.array(r["nonanalytic"], dtype=float)
    n_p, n_e, n_g = len(pol), len(ex), len(ga)
    z = lambda k: np.zeros(k)  # noqa: E731
    sep = _Separable(
        n=np.concatenate([pol[:, 0], ex[:, 0], ga[:, 0]]),
        d=np.concatenate([pol[:, 1], ex[:, 1], ga[:, 1]]),
        t=np.concatenate([pol[:, 2], ex[:, 2], ga[:, 2]]),
        c=np.concatenate([z(n_p), ex[:, 3], z(n_g)]),
        s=np.concatenate([z(n_p), np.ones(n_e), z(n_g)]),
        alpha=np.concatenate([z(n_p + n_e), ga[:, 3]]),
        beta=np.concatenate([z(n_p + n_e), ga[:, 4]]),
        gamma=np.concatenate([z(n_p + n_e), ga[:, 5]]),
        eps=np.concatenate([z(n_p + n_e), ga[:, 6]]))
    nonan = _NonAnalytic(*(na[:, k] for k in range(8)))
    if np.any(1.0 / nonan.beta <= 3.0) or np.any(2.0 * nonan.a <= 3.0):
        raise DataError(f"{_DATA_FILE} residual.nonanalytic: the singularity-free derivative form needs "
                        f"1/beta > 3 and 2a > 3 (Span-Wagner 1996 Table 31: beta = 0.3, a = 3 or 3.5)")
    v = raw["validity"]
    mx = raw["max_density"]
    M = float(c["M_g_mol"]) * 1e-3
    anc = raw["ancillary"]
    return SpanWagnerCO2(
        components=("CO2",), name="span-wagner",
        Tc=float(c["Tc_K"]), rhoc=float(c["rhoc_mol_m3"]), pc=float(c["pc_MPa"]) * 1e6,
        gas_constant=float(c["R_J_mol_K"]), M=M,
        validity={"T_min": float(v["T_min_K"]), "T_max": float(v["T_max_K"]), "p_max": float(v["p_max_MPa"]) * 1e6},
        rho_max=float(mx["rho_kg_m3"]) / M,
        _sep=sep, _na=nonan,
        _anc_p=np.array(anc["vapor_pressure"]["terms"], dtype=float),
        _anc_liq=np.array(anc["liquid_density"]["terms"], dtype=float),
        _anc_vap=np.array(anc["vapor_density"]["terms"], dtype=float))


@functools.cache
def span_wagner_co2() -> SpanWagnerCO2:
    """The Span-Wagner CO2 model, built once from ``data/span_wagner_co2.yaml``.

    Returns
    -------
    SpanWagnerCO2

    References
    ----------
    R. Span, W. Wagner, J. Phys. Chem. Ref. Data 25 (1996) 1509, doi:10.1063/1.555991.
    """
    return _build(load_span_wagner_data())
