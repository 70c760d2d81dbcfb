"""The public facade: ``Fluid(composition, model=...)`` with ``state``, ``saturation``, ``critical_point``.

SI in and out (K, Pa, mol m-3 or kg m-3, J mol-1 or J kg-1). Arrays of equal shape give batches.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Mapping

import numpy as np

from ..errors import InputError, ModelRangeError, SupercritError
from .build import build_model, canonical_model_name
from .components import Component, get_component
from .ideal_gas import IdealGasParts
from .phase_boundaries import PhaseBoundaries
from .solvers.density import check_Tp, stable_density
from .solvers.flash_pure import flash_p_prop_batch
from .solvers.result import SolverReport
from .solvers.saturation import saturation_pressure, saturation_temperature
from .state import GAS, LIQUID, SUPERCRITICAL, TWO_PHASE, State


@dataclass(frozen=True)
class CriticalState:
    """A critical point: T [K], p [Pa], rho_molar [mol m-3], rho_mass [kg m-3]."""

    T: float
    p: float
    rho_molar: float
    rho_mass: float


@dataclass(frozen=True)
class SaturationState:
    """Coexisting liquid and vapour of a pure fluid: T [K], p [Pa], liquid and vapor States."""

    T: object
    p: object
    liquid: State
    vapor: State
    report: SolverReport


def _composition(composition) -> tuple[tuple[Component, ...], np.ndarray]:
    if isinstance(composition, str):
        composition = {composition: 1.0}
    if not isinstance(composition, Mapping) or not composition:
        raise InputError("composition must map component names to mole fractions, e.g. "
                         "{'CO2': 0.97, 'N2': 0.03}", "composition")
    comps, x, seen = [], [], set()
    for name, frac in composition.items():
        comp = get_component(name)
        if comp.name in seen:
            raise InputError(f"component {comp.name} is listed twice (as {name!r}); list each once", "composition")
        seen.add(comp.name)
        try:
            f = float(frac)
        except (TypeError, ValueError):
            raise InputError(f"mole fraction of {name} is {frac!r}, not a number", "composition") from None
        if not np.isfinite(f) or f < 0 or f > 1:
            raise InputError(f"mole fraction of {name} is {f}; mole fractions lie between 0 and 1", "composition")
        comps.append(comp)
        x.append(f)
    x = np.array(x)
    total = x.sum()
    if abs(total - 1.0) > 1e-6:
        raise InputError(f"mole fractions sum to {total:.6g}, not 1 (tolerance 1e-6); "
                         f"fix them so that they add up to exactly 1", "composition")
    return tuple(comps), x / total


def _kij_matrix(comps, kij, model_name: str = "peng-robinson") -> np.ndarray:
    """k_ij from data/kij.yaml for the model's table, with user values on top.

    ``kij`` maps pairs ``{"CO2": {"N2": -0.02}}``; the extra key ``"set"`` chooses a named source set
    for every pair that has one (``{"set": "dechema"}``; see data/kij.yaml).
    """
    from .kij import kij_matrix

    names = [c.name for c in comps]
    if kij is not None and not isinstance(kij, Mapping):
        raise InputError("kij must be a nested mapping such as {'CO2': {'N2': -0.036}}", "kij")
    overrides = dict(kij or {})
    source_set = overrides.pop("set", None)
    return kij_matrix(names, model_name, overrides or None, source_set)


class Fluid(PhaseBoundaries):
    """A fluid of fixed composition under one equation of state.

    Parameters
    ----------
    composition : mapping of str to float, or str
        Component names (formula or common name) to mole fractions [-]; a single name means pure.
    model : str
        ``ideal-gas``, ``van-der-waals``, ``virial``, ``virial-3term``, ``redlich-kwong``,
        ``soave-redlich-kwong``, ``peng-robinson``, ``peng-robinson-1978``,
        ``peng-robinson-translated`` or ``span-wagner`` (aliases ``ig``, ``vdw``, ``rk``, ``srk``,
        ``pr``, ``pr78``, ``prt``, ``sw``).
    constants : mapping, optional
        Per-component overrides in SI, e.g. ``{"CO2": {"Tc": 304.1282, "pc": 7377300.0,
        "omega": 0.22394, "M": 0.0440098}}`` (K, Pa, -, kg/mol).
    kij : mapping, optional
        Binary interaction parameters ``{"CO2": {"N2": -0.036}}`` [-], symmetric.

    Raises
    ------
    InputError, DataError
        Bad composition, unknown component (with a suggestion), unknown model, bad constants or kij.
    """

    def __init__(self, composition, model: str = "peng-robinson", constants=None, kij=None):
        comps, x = _composition(composition)
        if constants:
            if not isinstance(constants, Mapping):
                raise InputError("constants must map component names to {Tc, pc, omega, M} in SI", "constants")
            pinned = {get_component(k).name: v for k, v in constants.items()}
            unknown = set(pinned) - {c.name for c in comps}
            if unknown:
                raise InputError(f"constants given for {sorted(unknown)}, which are not in the composition",
                                 "constants")
            comps = tuple(c.with_constants(**pinned[c.name]) if c.name in pinned else c for c in comps)
        self.model_name = canonical_model_name(model)
        self.components: tuple[str, ...] = tuple(c.name for c in comps)
        self.x = x
        self._comps = comps
        self.kij = _kij_matrix(comps, kij, self.model_name)
        self.model = build_model(self.model_name, comps, self.kij)
        self.ideal = IdealGasParts.from_components(comps)
        self.M_i = np.array([c.M for c in comps])
        self._crit = None
        if len(comps) == 1 and getattr(self.model, "has_two_phase", True):
            self._crit = self.model.critical_point()

    # -- helpers ------------------------------------------------------------------------
    @property
    def is_pure(self) -> bool:
        return len(self.components) == 1

    @property
    def signature(self) -> tuple:
        """Everything a computed state of this fluid depends on: model, component constants, k_ij and
        composition (as bytes). Fluids with equal signatures give equal answers; caches shared between
        Fluid objects (envelopes, pseudo-critical lines, perturbed fluids) are keyed by it."""
        m = self.model
        arrays = tuple(np.asarray(getattr(m, k), dtype=float).tobytes() for k in ("ac", "b", "c") if hasattr(m, k))
        return (self.model_name, self.components, self.x.tobytes(), np.asarray(self.kij, dtype=float).tobytes(),
                tuple((k.Tc, k.pc, k.omega, k.Tt, k.M) for k in self._comps), arrays)

    @property
    def M(self) -> float:
        """Molar mass [kg mol-1]."""
        return float(self.x @ self.M_i)

    def __repr__(self) -> str:
        comp = ", ".join(f"{n}: {v:g}" for n, v in zip(self.components, self.x))
        return f"Fluid({{{comp}}}, model={self.model_name!r})"

    def _xb(self, shape):
        return np.broadcast_to(self.x, tuple(shape) + (len(self.x),))

    def _T_limits(self):
        lo = float(self.ideal.T_min.max())
        hi = float(self.ideal.T_max.min())
        v = getattr(self.model, "validity", None)
        if v:
            lo, hi = max(lo, v.get("T_min", lo)), min(hi, v.get("T_max", hi))
        return lo, hi

    def _check_T(self, T):
        lims = self.__dict__.get("_T_lims")
        if lims is None:
            lims = self.__dict__["_T_lims"] = self._T_limits()
        lo, hi = lims
        if np.ndim(T) == 0 and lo <= float(T) <= hi:
            return
        T = np.asarray(T, dtype=float)
        if np.any(T < lo) or np.any(T > hi):
            bad = float(T.min()) if np.any(T < lo) else float(T.max())
            raise ModelRangeError(f"T = {bad:.3f} K is outside the range this fluid and model support "
                                  f"({lo:.2f}-{hi:.2f} K; {self.model_name}, ideal-gas data of "
                                  f"{', '.join(self.components)}).")

    def _label(self, T, p, rho):
        """Phase codes of single-phase states (pure fluids; mixtures are labelled by their flash)."""
        if self._crit is not None and np.ndim(T) == 0 and np.ndim(p) == 0 and np.ndim(rho) == 0:
            c, T, p, rho = self._crit, float(T), float(p), float(rho)  # one state: the same rule in floats
            code = (SUPERCRITICAL if p >= c.p else GAS) if T >= c.T else (LIQUID if rho > c.rho else GAS)
            return np.asarray(code)
        T, p, rho = np.broadcast_arrays(np.asarray(T, float), np.asarray(p, float), np.asarray(rho, float))
        if self._crit is not None:
            c = self._crit
            return np.where(T >= c.T, np.where(p >= c.p, SUPERCRITICAL, GAS), np.where(rho > c.rho, LIQUID, GAS))
        comp = self._comps[0] if self.is_pure else None
        Tc = comp.Tc if comp else float(self.x @ np.array([k.Tc for k in self._comps]))
        pc = comp.pc if comp else float(self.x @ np.array([k.pc for k in self._comps]))
        return np.where((T >= Tc) & (p >= pc), SUPERCRITICAL, GAS)

    def _require_pure(self, what):
        if not self.is_pure:
            raise InputError(f"{what} is defined for pure fluids; for mixtures use bubble_point/dew_point "
                             f"(phase envelope)", what)

    # -- public API ---------------------------------------------------------------------
    def state(self, T=None, p=None, rho=None, h=None, s=None, *, rho_mass=None, h_mass=None, s_mass=None,
              near=None) -> State:
        """The stable state from one pair of specifications (SI).

        Pairs: (T, p), (T, rho) or (T, rho_mass), (p, h) or (p, h_mass), (p, s) or (p, s_mass).
        Molar h [J mol-1], s [J mol-1 K-1]; mass-based with the ``_mass`` keywords.
        Arrays of equal shape give a batch (T, p and T, rho are vectorised).

        ``near`` (one (p, h) or (p, s) state only): a neighbouring State of this fluid, or a
        temperature [K], to start from - e.g. the previous point of a path. It changes the cost,
        never the answer: the neighbour-started solution is kept only if it is the stable state,
        otherwise the full flash decides.

        Raises
        ------
        InputError
            Wrong combination of specifications, or non-physical values.
        ModelRangeError
            State outside the model's or data's validity.
        ConvergenceError
            A solver failed (with its report).
        """
        if rho_mass is not None:
            rho = np.asarray(rho_mass, dtype=float) / self.M
        if h_mass is not None:
            h = np.asarray(h_mass, dtype=float) * self.M
        if s_mass is not None:
            s = np.asarray(s_mass, dtype=float) * self.M
        given = {k for k, v in dict(T=T, p=p, rho=rho, h=h, s=s).items() if v is not None}
        if given == {"T", "p"}:
            return self._state_Tp(T, p)
        if given == {"T", "rho"}:
            return self._state_Trho(T, rho)
        if given in ({"p", "h"}, {"p", "s"}):
            key = "h" if "h" in given else "s"
            target = h if key == "h" else s
            if near is not None and np.ndim(p) == 0 and np.ndim(target) == 0:
                st = self._state_p_prop_near(float(p), float(target), key, near)
                if st is not None:
                    return st
                if not self.is_pure and isinstance(near, State) and np.ndim(near.T) == 0 \
                        and getattr(self.model, "has_two_phase", True):
                    # the full flash, bracketed from the neighbour's temperature (and K-values if two-phase)
                    K0 = None
                    if int(np.asarray(near.phase_)) == TWO_PHASE and near.x_l_ is not None:
                        xl, xv = np.asarray(near.x_l_, float), np.asarray(near.x_v_, float)
                        if xl.shape == self.x.shape and np.all(xl > 0) and np.all(xv > 0):
                            K0 = xv / xl
                    from .mixture import mixture_state_p_prop

                    p_, t_ = np.broadcast_arrays(np.asarray(p, dtype=float), np.asarray(target, dtype=float))
                    check_Tp(np.ones_like(p_), p_)
                    if np.all(np.isfinite(t_)):
                        return mixture_state_p_prop(self, p_, t_, key, T_guess=float(near.T), K0=K0)
            return self._state_p_prop(p, target, key)
        raise InputError(f"give exactly one pair of specifications: (T, p), (T, rho), (p, h) or (p, s); "
                         f"got {sorted(given) or 'none'}", "state")

    def _state_Tp(self, T, p):
        # one state of a pure cubic-model fluid: a lean path on Python floats (the same root choice and
        # property formulas as the general path, tests/thermo/test_single_state_path.py); it hands every
        # state it cannot finish (bad input, out of range, no root, domain error) to the general path
        lean = self.__dict__.get("_lean_Tp")
        if lean is None or lean[0] is not self.x:  # set up once per composition
            from .properties import _all_properties_scalar
            from .solvers.density import _stable_density_derivs_scalar

            ok = (self._crit is not None and hasattr(self.model, "density_roots_scalar")
                  and hasattr(self.model, "alphar_derivs_scalar") and hasattr(self.ideal, "all_R_scalar"))
            c = self._crit
            lean = self.__dict__["_lean_Tp"] = (
                self.x, ok, tuple(self.x.tolist()), tuple(self.M_i.tolist()),
                State._single_phase_template(self.model, self.ideal, self.M_i, self._xb(()),
                                             float(self.x @ self.M_i), float(self.model.R(self.x))) if ok else None,
                (float(c.T), float(c.p), float(c.rho)) if ok else None,
                _stable_density_derivs_scalar, _all_properties_scalar)
        _, ok, xt, Mt, template, crit, stable_root, properties = lean
        if ok:
            Tf = None
            try:
                if isinstance(T, (float, int)) and isinstance(p, (float, int)):
                    Tf, pf = float(T), float(p)
                elif np.ndim(T) == 0 and np.ndim(p) == 0:
                    Tf, pf = float(T), float(p)
            except (TypeError, ValueError, OverflowError):
                Tf = None
            lims = self.__dict__.get("_T_lims")
            if lims is None:
                lims = self.__dict__["_T_lims"] = self._T_limits()
            # the checks of check_Tp and _check_T (NaN fails every comparison)
            if Tf is not None and lims[0] <= Tf <= lims[1] and 0.0 < pf < np.inf:
                r = stable_root(self.model, Tf, pf, xt)
                if r is not None:
                    rho, d = r
                    try:
                        props = properties(self.model, self.ideal, Mt, Tf, rho, xt, d, False)
                    except (ArithmeticError, ValueError):
                        props = None  # the State's own (array) evaluation decides
                    cT, cp, crho = crit  # the rule of _label for one pure-fluid state
                    code = (SUPERCRITICAL if pf >= cp else GAS) if Tf >= cT else (LIQUID if rho > crho else GAS)
                    return State._single_phase(template, Tf, rho, code, props)
        T, p = np.broadcast_arrays(np.asarray(T, dtype=float), np.asarray(p, dtype=float))
        check_Tp(T, p)
        self._check_T(T)
        if not self.is_pure and getattr(self.model, "has_two_phase", True):
            from .mixture import mixture_state_Tp

            return mixture_state_Tp(self, T, p)
        x = self._xb(T.shape)
        rho = None
        warm = self.__dict__.get("_warm_Tp")
        if T.ndim == 0 and warm is not None and not hasattr(self.model, "density_roots") and self._crit is not None:
            T0, p0, r0 = warm
            if abs(float(T) - T0) < 10.0 and abs(float(p) / p0 - 1.0) < 0.2:
                from .solvers.density import warm_density

                r = warm_density(self.model, float(T), float(p), self.x, r0, self._crit.rho)
                rho = None if r is None else np.asarray(r)
        if rho is None:
            rho = stable_density(self.model, T, p, x, self._crit.rho if self._crit else None)
        if T.ndim == 0:
            self.__dict__["_warm_Tp"] = (float(T), float(p), float(rho))
        return State(self.model, self.ideal, self.M_i, T, rho, x, self._label(T, p, rho))

    def _state_Trho(self, T, rho):
        T, rho = np.broadcast_arrays(np.asarray(T, dtype=float), np.asarray(rho, dtype=float))
        check_Tp(T, np.ones_like(T))
        if not np.all(np.isfinite(rho)) or np.any(rho <= 0):
            raise InputError("density must be a finite positive number (mol/m3, or kg/m3 with rho_mass=)", "rho")
        self._check_T(T)
        x = self._xb(T.shape)
        lim = self.model.max_density(x)
        if np.any(rho >= lim):
            raise ModelRangeError(f"density {float(np.max(rho)):.6g} mol/m3 is beyond the {self.model_name} model's "
                                  f"limit {float(np.min(lim)):.6g} mol/m3 for this fluid")
        if not self.is_pure and getattr(self.model, "has_two_phase", True):
            raise InputError("(T, rho) states of mixtures need the mixture flash; give (T, p) instead", "state")
        from .properties import pressure

        p = pressure(self.model, T, rho, x)
        codes = self._label(T, p, rho)
        c = self._crit
        if c is None or not np.any(T < c.T):
            if np.any(p <= 0):
                raise ModelRangeError(f"the {self.model_name} model gives a negative pressure at this (T, rho)")
            return State(self.model, self.ideal, self.M_i, T, rho, x, codes)
        inside = T < c.T
        Tin = np.where(inside, T, 0.5 * c.T)
        sat = saturation_pressure(self.model, Tin, c, self.x)
        rl, rv = np.asarray(sat.rho_liq), np.asarray(sat.rho_vap)
        two = inside & (rho > rv) & (rho < rl)
        if not np.any(two):
            return State(self.model, self.ideal, self.M_i, T, rho, x, codes)
        q = np.where(two, (1.0 / rho - 1.0 / rl) / (1.0 / rv - 1.0 / rl), 0.0)
        codes = np.where(two, TWO_PHASE, codes)
        return State(self.model, self.ideal, self.M_i, T, rho, x, codes, q, np.where(two, rl, rho),
                     np.where(two, rv, rho), x, x)

    def _state_p_prop_near(self, p: float, target: float, key: str, near):
        """One (p, h) or (p, s) state by Newton in (T, rho) from a neighbour (solvers/flash_near.py),
        kept only where it is certainly the stable state; None sends the caller to the full flash.

        Checks: models without a two-phase region - always; pure fluids - above Tc (one root), else
        the models' own stable-root choice at (T, p) (cubics) or the side of the ancillary vapour
        pressure with a 0.5 % margin and a density outside the ancillary saturated densities with a 1 %
        margin (Span-Wagner; none within 0.5 K of Tc, none at
        or below the triple-point pressure where solid CO2 can form); mixtures - the PT flash at the solution is
        single-phase with the same density.
        """
        from .solvers.density import _stable_density_scalar, ancillary_side
        from .solvers.flash_near import single_phase_p_prop

        if not (np.isfinite(p) and p > 0 and np.isfinite(target)):
            return None
        if isinstance(near, State):
            if np.ndim(near.T) != 0:
                return None
            if self.is_pure and int(np.asarray(near.phase_)) == TWO_PHASE:
                # a pure fluid's neighbour inside the dome: the full flash (saturation at p, lever rule) is the
                # direct answer there, and a single-phase Newton from the neighbour's T would end on a
                # metastable root that the checks below reject (23 model evaluations instead of 8, measured)
                return None
            T0 = float(near.T)
            rho0 = float(near.rho_molar) if int(np.asarray(near.phase_)) in (GAS, LIQUID, SUPERCRITICAL) else None
            if near.model is not self.model:
                rho0 = None
        else:
            T0, rho0 = float(near), None
        lo, hi = self.__dict__.get("_T_lims") or self._T_limits()
        if not (lo <= T0 <= hi):
            return None
        comp = self._comps[0] if self.is_pure else None
        if comp is not None and self.model_name == "span-wagner" and p <= comp.pt * 1.01:
            return None  # solid CO2 possible: the full solver with the solid phases decides
        try:
            if rho0 is None:
                rho0 = float(self._state_Tp(T0, p).rho_molar)
            sol = single_phase_p_prop(self.model, self.ideal, self.M_i, self.x, p, target, key, T0, rho0, lo, hi)
            if sol is None:
                return None
            T, rho = sol
            if not self.is_pure and getattr(self.model, "has_two_phase", True):
                from .mixture import mixture_state_Tp

                st = mixture_state_Tp(self, np.asarray(T), np.asarray(p))
                if int(np.asarray(st.phase_)) == TWO_PHASE or abs(float(st.rho_molar) - rho) > 1e-7 * rho:
                    return None
                return st
            c = self._crit
            if c is not None and T < c.T:
                if hasattr(self.model, "density_roots_scalar"):
                    r = _stable_density_scalar(self.model, T, p, tuple(self.x.tolist()))
                    if r is None or abs(r - rho) > 1e-7 * rho:
                        return None
                else:
                    guess_rho = getattr(self.model, "saturation_guess", None)
                    if guess_rho is None or ancillary_side(self.model, T, p) != ("liquid" if rho > c.rho else "vapor"):
                        return None
                    # the root must lie on the side's own branch, outside the ancillary saturated densities
                    # (1 % margin). Inside the dome the reference equation's loop has stretches with
                    # dp/drho > 0, which the Newton's own check lets through: from a dense supercritical
                    # neighbour it ended at 300.9 K, 68.1 bar, 10,230 mol/m3 (saturated densities 6,400 and
                    # 15,100), a two-phase state taken for gas
                    rho_l, rho_v = (float(v) for v in guess_rho(T))
                    if not ((rho > c.rho and rho >= 0.99 * rho_l) or (rho < c.rho and rho <= 1.01 * rho_v)):
                        return None
        except (SupercritError, ArithmeticError, ValueError):
            return None
        x = self.x
        return State(self.model, self.ideal, self.M_i, np.asarray(T), np.asarray(rho), x, self._label(T, p, rho))

    def _state_p_prop(self, p, target, key):
        p, target = np.broadcast_arrays(np.asarray(p, dtype=float), np.asarray(target, dtype=float))
        check_Tp(np.ones_like(p), p)
        if not np.all(np.isfinite(target)):
            raise InputError(f"{key} must be a finite number", key)
        if not self.is_pure and getattr(self.model, "has_two_phase", True):
            from .mixture import mixture_state_p_prop

            return mixture_state_p_prop(self, p, target, key)
        lo, hi = self._T_limits()
        comp = self._comps[0] if self.is_pure else None
        if self.model_name == "span-wagner" and np.any(p <= comp.pt):
            from .solvers.solid_flash import state_p_prop_with_solid  # solid CO2 below the triple point

            return state_p_prop_with_solid(self, p, target, key)
        shape = p.shape
        r = flash_p_prop_batch(self.model, self.ideal, self.M_i, self.x, p.ravel(), target.ravel(), key, self._crit,
                               lo, hi)
        two = r["two"]
        if comp is not None and np.any(two & (p.ravel() < comp.pt)) and self.model_name != "span-wagner":
            pi = float(p.ravel()[np.argmax(two & (p.ravel() < comp.pt))])
            raise ModelRangeError(
                f"{comp.name} at p = {pi / 1e5:.4f} bar is below its triple-point pressure "
                f"{comp.pt / 1e5:.4f} bar: no liquid can exist there and the state would hold solid. "
                f"The {self.model_name} model has no solid phase; use model 'span-wagner' for pure CO2.")
        T, rho = r["T"].reshape(shape), r["rho"].reshape(shape)
        x = self._xb(shape)
        codes = self._label(T, p, rho)
        if not np.any(two):
            return State(self.model, self.ideal, self.M_i, T, rho, x, codes)
        two = two.reshape(shape)
        return State(self.model, self.ideal, self.M_i, T, rho, x, np.where(two, TWO_PHASE, codes),
                     r["q"].reshape(shape), r["rho_l"].reshape(shape), r["rho_v"].reshape(shape), x, x)

    def saturation(self, T=None, p=None) -> SaturationState:
        """Saturated liquid and vapour of a pure fluid at T [K] or p [Pa] (arrays allowed).

        Raises
        ------
        ModelRangeError
            No two-phase region in the model, T outside [triple point, Tc), or p outside [pt, pc).
        """
        self._require_pure("saturation")
        if (T is None) == (p is None):
            raise InputError("give either T or p for saturation", "saturation")
        if self._crit is None:
            raise ModelRangeError(f"the {self.model_name} model has no two-phase region: there is no saturation "
                                  f"state. Choose a cubic or reference model to see condensation.")
        comp = self._comps[0]
        T_min = comp.Tt
        if T is not None:
            T = np.asarray(T, dtype=float)
            check_Tp(T, np.ones_like(T))
            if np.any(T < T_min):
                raise ModelRangeError(f"saturation of {comp.name} at T = {float(T.min()):.3f} K: below the triple "
                                      f"point {T_min:.3f} K the liquid is not stable (solid forms).")
            sat = saturation_pressure(self.model, T, self._crit, self.x)
        else:
            p = np.asarray(p, dtype=float)
            check_Tp(np.ones_like(p), p)
            sat = saturation_temperature(self.model, p, self._crit, self.x, T_min=T_min)
        Ts = np.asarray(sat.T)
        x = self._xb(Ts.shape)
        liq = State(self.model, self.ideal, self.M_i, Ts, np.asarray(sat.rho_liq), x, np.full(Ts.shape, LIQUID))
        vap = State(self.model, self.ideal, self.M_i, Ts, np.asarray(sat.rho_vap), x, np.full(Ts.shape, GAS))
        return SaturationState(sat.T, sat.p, liq, vap, sat.report)

    def critical_point(self) -> CriticalState:
        """The model's own critical point (pure fluids); mixtures arrive with the mixture solvers."""
        if not self.is_pure:
            from .mixture import mixture_critical_point

            return mixture_critical_point(self)
        if self._crit is None:
            raise ModelRangeError(f"the {self.model_name} model has no critical point (no two-phase region)")
        c = self._crit
        return CriticalState(T=float(c.T), p=float(c.p), rho_molar=float(c.rho), rho_mass=float(c.rho * self.M))
