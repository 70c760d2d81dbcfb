"""What every step takes and gives: streams, the step context, the sampled path and the result.

A :class:`Stream` is a flow of fluid: molar flow, composition over the scenario's components and
its thermodynamic :class:`~supercrit.State`. A step module exposes ``run(spec, inlets, ctx) ->
StepResult``; ``inlets`` maps inlet names (``in``, ``in1``..., ``hot``, ``cold``) to Streams.
Every state is computed through the :class:`supercrit.Fluid` facade.

Sign convention: ``power`` (shaft) and ``duty`` (heat) are positive into the fluid [W].
"""
from __future__ import annotations

import contextvars
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Mapping

import numpy as np

from ..errors import InputError
from ..thermo.fluid import Fluid
from ..thermo.state import State

#: while a recycle iterates only the end states of a path are needed; the final pass samples the paths
SAMPLE_PATHS = contextvars.ContextVar("supercrit_sample_paths", default=True)
N_SEGMENTS = 20  # segments of a sampled path (>= 20 so that a band crossing is seen; common practice)
G_STANDARD = 9.80665  # [m s-2] standard acceleration of gravity, 3rd CGPM (1901)


@dataclass(frozen=True, eq=False)
class Stream:
    """A stream: ``x`` mole fractions over ``components`` (the scenario's), ``n`` molar flow
    [mol s-1], ``state`` (scalar State) and the ``fluid`` (Fluid of this composition) it came from."""

    components: tuple[str, ...]
    x: np.ndarray
    n: float
    state: State
    fluid: Fluid

    T = property(lambda self: float(self.state.T), doc="[K]")
    p = property(lambda self: float(self.state.p), doc="[Pa]")
    h = property(lambda self: float(self.state.h), doc="Molar enthalpy [J mol-1].")
    M = property(lambda self: float(self.fluid.M), doc="[kg mol-1]")
    mass_flow = property(lambda self: self.n * float(self.fluid.M), doc="[kg s-1]")

    @property
    def composition(self) -> dict[str, float]:
        return {c: float(v) for c, v in zip(self.components, self.x)}

    def with_flow(self, n: float) -> "Stream":
        return Stream(self.components, self.x, float(n), self.state, self.fluid)


@dataclass(frozen=True, eq=False)
class StepPath:
    """States sampled along a step's physical path.

    ``coordinate`` (array) along ``coordinate_name``: ``"p"`` [Pa] for machines and valves,
    ``"duty_fraction"`` [-] for heaters, coolers and exchangers, ``"length"`` [m] for pipes,
    ``"point"`` for steps without extent. ``label`` says which path (``main``, ``stage 2``,
    ``hot``, ...).
    """

    label: str
    coordinate_name: str
    coordinate: np.ndarray
    states: tuple[State, ...]

    @property
    def T(self) -> np.ndarray:
        return np.array([float(s.T) for s in self.states])

    @property
    def p(self) -> np.ndarray:
        return np.array([float(s.p) for s in self.states])


@dataclass(frozen=True, eq=False)
class StepResult:
    """The result of one step.

    Attributes
    ----------
    step_id, kind : str
    outlets : mapping port -> Stream
    paths : tuple of StepPath (``path`` is the first)
    power : float [W], shaft power into the fluid
    duty : float [W], heat into the fluid (net; an exchanger's internal duty is in ``extras``)
    mechanical : float [W], rise of potential plus kinetic energy flow (pipes), part of the energy balance
    efficiency : float or None, the efficiency used (isentropic unless ``notes`` say otherwise)
    notes : tuple of str
    extras : mapping of step-specific results (SI; names carry the quantity)
    """

    step_id: str
    kind: str
    outlets: Mapping[str, Stream]
    paths: tuple[StepPath, ...] = ()
    power: float = 0.0
    duty: float = 0.0
    mechanical: float = 0.0
    efficiency: float | None = None
    notes: tuple[str, ...] = ()
    extras: Mapping[str, object] = field(default_factory=lambda: MappingProxyType({}))

    @property
    def path(self) -> StepPath | None:
        return self.paths[0] if self.paths else None


class StepContext:
    """Shared by the steps of a scenario: its components, model and k_ij, a cache of Fluids per
    composition, the feeds and limits."""

    def __init__(self, scenario):
        self.scenario = scenario
        self.components = tuple(scenario.fluid.components)
        self.model = scenario.fluid.model
        self._kij = scenario.fluid.kij_nested()
        self._fluids: dict = {}

    def fluid(self, x) -> Fluid:
        """The Fluid of composition ``x`` (over the scenario's components; zero fractions dropped)."""
        x = np.asarray(x, dtype=float)
        x = np.where(x < 1e-15, 0.0, x)
        x = x / x.sum()
        key = tuple(np.round(x, 15))
        f = self._fluids.get(key)
        if f is None:
            comp = {c: float(v) for c, v in zip(self.components, x) if v > 0}
            kij = {a: {b: v for b, v in row.items() if b in comp} for a, row in self._kij.items()
                   if a != "set" and a in comp}
            kij = {a: row for a, row in kij.items() if row}
            if "set" in self._kij:
                kij["set"] = self._kij["set"]
            f = Fluid(comp, model=self.model, kij=kij or None)
            if len(self._fluids) > 256:
                self._fluids.clear()
            self._fluids[key] = f
        return f

    def stream(self, x, n: float, state: State, fluid: Fluid | None = None) -> Stream:
        x = np.asarray(x, dtype=float)
        return Stream(self.components, x / x.sum(), float(n), state, fluid or self.fluid(x))

    def x_of(self, composition: Mapping[str, float]) -> np.ndarray:
        x = np.array([float(composition.get(c, 0.0)) for c in self.components])
        return x / x.sum()

    def x_from_state(self, state: State) -> np.ndarray:
        """Composition of a state over the scenario's components."""
        comp = state.composition
        return np.array([float(comp.get(c, 0.0)) for c in self.components])


def state_ph(fluid: Fluid, p: float, h: float, near=None) -> State:
    """State at p [Pa], molar h [J mol-1] through the facade, started from ``near`` (a neighbouring
    State of the same fluid or a temperature [K]) when one is known; the facade keeps the
    neighbour-started answer only where it is the stable state (see Fluid.state)."""
    if near is not None and not isinstance(near, State) and not np.isfinite(float(near)):
        near = None
    return fluid.state(p=p, h=h, near=near)


def sample_ph(fluid: Fluid, p, h, first: State, last: State) -> tuple[State, ...]:
    """States at (p_k, h_k) between two known end states (the ends are used as given).

    While a recycle is still iterating (SAMPLE_PATHS false) only the two ends are returned: the interior
    states change nothing in the balances, and the converged pass samples them in full.
    """
    if not SAMPLE_PATHS.get():
        return (first, last)
    states = [first]
    prev = first
    for pk, hk in zip(p[1:-1], h[1:-1]):
        prev = state_ph(fluid, float(pk), float(hk), prev)
        states.append(prev)
    states.append(last)
    return tuple(states)


def point_path(state: State, label: str = "main") -> StepPath:
    return StepPath(label, "point", np.zeros(1), (state,))


def require_positive_pressure(spec, p_out: float, p_in: float) -> float:
    if not np.isfinite(p_out) or p_out <= 0:
        raise InputError(f"the outlet pressure would be {p_out / 1e5:.4g} bar (inlet {p_in / 1e5:.4g} bar); "
                         f"choose a smaller pressure drop", _where(spec))
    return p_out


def _where(spec) -> str:
    loc = f"{spec.where} " if getattr(spec, "where", None) is not None else ""
    return f"{loc}step {spec.id!r}"


def where(spec) -> str:
    """``file:line:col step 'id'`` for messages."""
    return _where(spec)


def only_inlet(inlets: Mapping[str, Stream]) -> Stream:
    return inlets["in"]


