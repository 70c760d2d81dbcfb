"""States are values: one frozen object per (batch of) state(s), with properties derived on demand.

A :class:`State` holds T, overall density, composition and phase for one state or a batch (arrays
of equal shape). Two-phase elements carry their coexisting phase densities and compositions and
the molar vapour fraction; their h, s, u, g and density are phase-weighted averages. Properties that
have no single value inside the two-phase region (cp, cv, w, mu_JT, kappa_T, alpha_p) raise
:class:`~supercrit.errors.PropertyUndefinedError` there instead of returning NaN.

States with solid (pure CO2 below its triple point, :mod:`supercrit.thermo.solvers.solid_flash`)
carry the molar solid fraction and the solid's molar h, s and density; their h, s, u, g and
density are averaged over solid, liquid and vapour (vapour fraction ``q_``, liquid fraction
1 - solid - vapour).
"""
from __future__ import annotations

import dataclasses
import enum
import functools
from dataclasses import dataclass

import numpy as np

from ..errors import PropertyUndefinedError
from .properties import all_properties


class Phase(enum.Enum):
    """Phase label; ``str(Phase.GAS) == "gas"``."""

    GAS = "gas"
    LIQUID = "liquid"
    SUPERCRITICAL = "supercritical"
    TWO_PHASE = "two-phase"
    SOLID_VAPOR = "solid-vapour"
    SOLID_LIQUID_VAPOR = "solid-liquid-vapour"

    def __str__(self) -> str:
        return self.value


PHASES = (Phase.GAS, Phase.LIQUID, Phase.SUPERCRITICAL, Phase.TWO_PHASE, Phase.SOLID_VAPOR,
          Phase.SOLID_LIQUID_VAPOR)
GAS, LIQUID, SUPERCRITICAL, TWO_PHASE, SOLID_VAPOR, SOLID_LIQUID_VAPOR = range(6)


def _out(a):
    t = type(a)
    if t is float:
        return a
    if t is np.float64:
        return float(a)
    a = np.asarray(a)
    return a.item() if a.ndim == 0 else a


@dataclass(frozen=True, eq=False)
class State:
    """A thermodynamic state or a batch of states (never re-solved, never mutated).

    Attributes (SI; arrays for a batch)
    ------------------------------------
    T [K], p [Pa], rho_molar [mol m-3], rho_mass [kg m-3], Z [-], h, u, g [J mol-1] and h_mass,
    u_mass, g_mass [J kg-1], s, cp, cv [J mol-1 K-1] and s_mass, cp_mass, cv_mass [J kg-1 K-1],
    w [m s-1], mu_jt [K Pa-1], kappa_T [Pa-1], alpha_p [K-1], M [kg mol-1], phase (Phase),
    vapor_fraction [mol mol-1], solid_fraction [mol mol-1] and solid_fraction_mass [kg kg-1],
    composition (dict name -> mole fraction), liquid and vapor (States, two-phase only; vapor also for
    solid-vapour, both for solid-liquid-vapour). Enthalpy and entropy use supercrit's reference state (ideal gas, 298.15 K,
    101325 Pa, h = s = 0 for each pure component).
    """

    model: object
    ideal: object
    M_i: np.ndarray  # [kg mol-1], (nc,)
    T_: np.ndarray
    rho_: np.ndarray
    x_: np.ndarray  # (..., nc)
    phase_: np.ndarray  # int codes, see PHASES
    q_: np.ndarray | None = None  # molar vapour fraction (two-phase elements)
    rho_l_: np.ndarray | None = None
    rho_v_: np.ndarray | None = None
    x_l_: np.ndarray | None = None
    x_v_: np.ndarray | None = None
    solid_fraction_: np.ndarray | None = None  # molar solid fraction (solid-containing elements), else 0
    h_solid_: np.ndarray | None = None  # [J mol-1] molar enthalpy of the solid (same reference state)
    s_solid_: np.ndarray | None = None  # [J mol-1 K-1] molar entropy of the solid
    rho_solid_: np.ndarray | None = None  # [mol m-3] molar density of the solid

    # -- structure ---------------------------------------------------------------------
    @property
    def components(self) -> tuple[str, ...]:
        return tuple(self.model.components)

    @property
    def shape(self) -> tuple[int, ...]:
        return np.shape(self.T_)

    @functools.cached_property
    def _two(self) -> np.ndarray:
        return np.asarray(self.phase_) == TWO_PHASE

    @functools.cached_property
    def _solid(self) -> np.ndarray:
        codes = np.asarray(self.phase_)
        return (codes == SOLID_VAPOR) | (codes == SOLID_LIQUID_VAPOR)

    @functools.cached_property
    def _mixed(self) -> np.ndarray:
        """Elements with more than one phase (two-phase or solid-containing)."""
        return self._two | self._solid

    @functools.cached_property
    def _any_two(self) -> bool:
        return bool(np.any(self._two))

    @functools.cached_property
    def _any_solid(self) -> bool:
        return bool(np.any(self._solid))

    @functools.cached_property
    def _any_mixed(self) -> bool:
        return self._any_two or self._any_solid

    @staticmethod
    def _single_phase_template(model, ideal, M_i, x: np.ndarray, M=None, R=None) -> dict:
        """What every single-phase state of one fluid shares, for :meth:`_single_phase`: the model,
        ideal-gas part, molar masses, composition x (nc,) - shared, so pass a read-only array - and,
        where the caller has them, ``M`` (``x @ M_i``) and ``R`` (``model.R(x)``)."""
        d = dict(_SINGLE_PHASE_DEFAULTS)
        d.update(model=model, ideal=ideal, M_i=M_i, x_=x)
        if M is not None:
            d["_Mx"] = M
        if R is not None:
            d["_R"] = R
        return d

    @classmethod
    def _single_phase(cls, template: dict, T: float, rho: float, code: int, props: dict | None = None) -> "State":
        """One single-phase state from Python floats T [K], rho [mol m-3] and an int phase code, equal to
        ``State(model, ideal, M_i, np.asarray(T), np.asarray(rho), x, np.asarray(code))`` with the
        rest from ``template`` (:meth:`_single_phase_template`).

        Built without the dataclass ``__init__`` (one dict update instead of a frozen setattr per field),
        with the phase flags that a general state works out with numpy filled in (one phase, no solid)
        and ``props`` (:func:`all_properties` of this state) where the caller has them.
        """
        st = object.__new__(cls)
        d = st.__dict__
        d.update(template)
        d["T_"], d["rho_"], d["phase_"] = np.asarray(T), np.asarray(rho), _CODE_ARRAYS[code]
        d["_Tf"], d["_rhof"] = T, rho
        if props is not None:
            d["_single"] = props
        return st

    @functools.cached_property
    def _one(self) -> bool:
        """One state (not a batch)."""
        return np.ndim(self.T_) == 0

    @functools.cached_property
    def _Tf(self) -> float:
        return float(self.T_)

    @functools.cached_property
    def _rhof(self) -> float:
        return float(self.rho_)

    @functools.cached_property
    def _Mx(self):
        """Molar mass x @ M_i [kg mol-1] (array for a batch)."""
        return self.x_ @ self.M_i

    @functools.cached_property
    def _R(self):
        """The model's gas constant for this composition [J mol-1 K-1]."""
        return self.model.R(self.x_)

    @functools.cached_property
    def _single(self) -> dict:
        return all_properties(self.model, self.ideal, self.M_i, self.T_, self.rho_, self.x_)

    @functools.cached_property
    def _phases(self) -> tuple[dict, dict]:
        L = all_properties(self.model, self.ideal, self.M_i, self.T_, self.rho_l_, self.x_l_)
        V = all_properties(self.model, self.ideal, self.M_i, self.T_, self.rho_v_, self.x_v_)
        return L, V

    def _avg(self, key: str):
        """Molar property of the state: phase-weighted where two-phase (and solid-weighted where solid)."""
        if self._any_solid:
            L, V = self._phases
            f = np.where(self._solid, self.solid_fraction_, 0.0)
            q = self.q_
            S = {"h": self.h_solid_, "s": self.s_solid_}[key]
            mix = (1.0 - f - q) * L[key] + q * V[key] + f * np.where(self._solid, S, 0.0)
            return np.where(self._mixed, mix, self._single[key]) if np.ndim(self._two) else mix
        if not self._any_two:
            return self._single[key]
        L, V = self._phases
        q = self.q_
        mix = (1.0 - q) * L[key] + q * V[key]
        return np.where(self._two, mix, self._single[key]) if np.ndim(self._two) else mix

    def _single_only(self, key: str):
        if self._any_solid:
            n = int(np.sum(self._solid))
            raise PropertyUndefinedError(
                f"{key} has no single value in a state holding solid CO2 ({n} state(s) with solid); "
                f"use the vapor state's value")
        if self._any_two:
            n = int(np.sum(self._two))
            raise PropertyUndefinedError(
                f"{key} has no single value inside the two-phase region ({n} state(s) two-phase); "
                f"use the liquid and vapor states' values")
        return _out(self._single[key])

    # -- properties ----------------------------------------------------------------------
    @property
    def T(self):
        return _out(self.T_)

    @property
    def p(self):
        if not self._any_mixed:
            return _out(self._single["p"])
        return _out(np.where(self._mixed, self._phases[1]["p"], self._single["p"]) if np.ndim(self._two)
                    else self._phases[1]["p"])

    @property
    def rho_molar(self):
        return _out(self.rho_)

    @property
    def M(self):
        return _out(self._Mx)

    @property
    def rho_mass(self):
        if self._one:
            return _out(self._rhof * self._Mx)
        return _out(self.rho_ * self._Mx)

    @property
    def Z(self):
        if self._one:  # the same products in Python floats (IEEE double, as numpy's)
            return _out(self.p / (self._rhof * float(self._R) * self._Tf))
        return _out(np.asarray(self.p) / (self.rho_ * self._R * self.T_))

    h = property(lambda self: _out(self._avg("h")), doc="Molar enthalpy [J mol-1].")
    s = property(lambda self: _out(self._avg("s")), doc="Molar entropy [J mol-1 K-1].")
    u = property(lambda self: _out(self._avg("h") - np.asarray(self.p) / self.rho_), doc="Molar internal energy [J mol-1].")
    g = property(lambda self: _out(self._avg("h") - self.T_ * self._avg("s")), doc="Molar Gibbs energy [J mol-1].")
    h_mass = property(lambda self: _out(self._avg("h") / self._Mx), doc="[J kg-1]")
    s_mass = property(lambda self: _out(self._avg("s") / self._Mx), doc="[J kg-1 K-1]")
    u_mass = property(lambda self: _out(np.asarray(self.u) / self._Mx), doc="[J kg-1]")
    g_mass = property(lambda self: _out(np.asarray(self.g) / self._Mx), doc="[J kg-1]")
    cp = property(lambda self: self._single_only("cp"), doc="[J mol-1 K-1]")
    cv = property(lambda self: self._single_only("cv"), doc="[J mol-1 K-1]")
    cp_mass = property(lambda self: _out(self.cp / self._Mx), doc="[J kg-1 K-1]")
    cv_mass = property(lambda self: _out(self.cv / self._Mx), doc="[J kg-1 K-1]")
    w = property(lambda self: self._single_only("w"), doc="Speed of sound [m s-1].")
    mu_jt = property(lambda self: self._single_only("mu_jt"), doc="Joule-Thomson coefficient [K Pa-1].")
    kappa_T = property(lambda self: self._single_only("kappa_T"), doc="Isothermal compressibility [Pa-1].")
    alpha_p = property(lambda self: self._single_only("alpha_p"), doc="Isobaric thermal expansion [K-1].")

    @property
    def phase(self):
        """Phase label (a Phase; an object array of Phase for a batch)."""
        codes = np.asarray(self.phase_)
        if codes.ndim == 0:
            return PHASES[int(codes)]
        out = np.empty(codes.shape, dtype=object)
        for i, ph in enumerate(PHASES):
            out[codes == i] = ph
        return out

    @property
    def vapor_fraction(self):
        """Molar vapour fraction [-]: 1 for gas, 0 for liquid, between for two-phase.

        Raises PropertyUndefinedError for supercritical states: one phase, neither vapour nor liquid.
        """
        codes = np.asarray(self.phase_)
        if np.any(codes == SUPERCRITICAL):
            raise PropertyUndefinedError("vapour fraction is undefined for a supercritical state (one dense "
                                         "phase, neither vapour nor liquid)")
        q = np.where(codes == GAS, 1.0, 0.0)
        if self._any_mixed:
            q = np.where(self._mixed, self.q_, q)
        return _out(q)

    @property
    def solid_fraction(self):
        """Molar solid fraction [mol mol-1]: 0 for states without solid."""
        if self.solid_fraction_ is None:
            return _out(np.zeros(np.shape(self.T_)))
        return _out(np.where(self._solid, self.solid_fraction_, 0.0))

    @property
    def solid_fraction_mass(self):
        """Solid fraction by mass [kg kg-1]; the solid is pure, so for a pure fluid it equals the molar one."""
        f = np.asarray(self.solid_fraction, dtype=float)
        if not np.any(f):
            return _out(f)
        M_solid = self._Mx  # solid formed only from a pure fluid (pure CO2)
        return _out(f * M_solid / self._Mx)

    @property
    def composition(self) -> dict:
        """Mole fractions by component (floats for a state, arrays for a batch)."""
        return {n: _out(self.x_[..., i]) for i, n in enumerate(self.components)}

    def _phase_state(self, which: str) -> "State":
        codes = np.asarray(self.phase_)
        has = self._two | (codes == SOLID_LIQUID_VAPOR) | ((codes == SOLID_VAPOR) & (which == "vapor"))
        if np.all(has) and self._any_solid:
            rho, x, code = ((self.rho_l_, self.x_l_, LIQUID) if which == "liquid" else (self.rho_v_, self.x_v_, GAS))
            return State(self.model, self.ideal, self.M_i, self.T_, rho, x, np.full(np.shape(self.T_), code))
        if not np.all(self._two):
            raise PropertyUndefinedError(f"{which} exists only for two-phase states; this state is "
                                         f"{self.phase if np.ndim(self.phase_) == 0 else 'not all two-phase'}")
        rho, x, code = ((self.rho_l_, self.x_l_, LIQUID) if which == "liquid" else (self.rho_v_, self.x_v_, GAS))
        return State(self.model, self.ideal, self.M_i, self.T_, rho, x, np.full(np.shape(self.T_), code))

    @property
    def liquid(self) -> "State":
        return self._phase_state("liquid")

    @property
    def vapor(self) -> "State":
        return self._phase_state("vapor")

    def __repr__(self) -> str:
        if np.ndim(self.T_) == 0:
            return (f"State({'/'.join(self.components)}, {self.model.name}: T={float(self.T_):.3f} K, "
                    f"p={float(self.p) / 1e5:.4f} bar, rho={float(self.rho_mass):.3f} kg/m3, phase={self.phase})")
        return f"State({'/'.join(self.components)}, {self.model.name}: batch of {np.size(self.T_)})"


# what State._single_phase puts in a new state's __dict__ besides T, rho, x and the phase code: the
# optional fields at their defaults, and the phase flags of one single-phase state
_SINGLE_PHASE_DEFAULTS = {f.name: f.default for f in dataclasses.fields(State) if f.default is not dataclasses.MISSING}
_SINGLE_PHASE_DEFAULTS.update(_one=True, _two=np.False_, _solid=np.False_, _mixed=np.False_, _any_two=False,
                              _any_solid=False, _any_mixed=False)


def _read_only_code(k: int) -> np.ndarray:
    a = np.asarray(k)
    a.flags.writeable = False
    return a


# phase codes of single states as read-only 0-d arrays, shared (a State is never mutated)
_CODE_ARRAYS = tuple(_read_only_code(k) for k in range(len(PHASES)))
