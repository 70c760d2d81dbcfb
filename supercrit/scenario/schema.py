"""A validated scenario: frozen dataclasses, every quantity in SI; and the table of step kinds.

:func:`supercrit.scenario.validate.load_scenario` builds a :class:`Scenario` from a YAML file;
nothing here reads text. The step-kind table :data:`STEP_KINDS` is the single description of each
kind's connections, parameters, units, ranges and exclusive groups: the validator checks against
it and ``docs/scenario-format.md`` documents it.

SI units throughout: K, Pa (absolute), kg/s, mol/s, W, m, kg/m3, J/kg, W/m2/K; fractions 0..1.
"""
from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Mapping

from ..io import Location

__all__ = ["Location", "PortRef", "Limits", "FluidSpec", "FeedSpec", "StepSpec", "RouteSpec", "Scenario",
           "Param", "StepKind", "STEP_KINDS", "DISPLAY_SYSTEMS", "LIMIT_FIELDS", "SweepAxis", "SweepSpec",
           "SWEEP_COMBINE", "MAX_VARIANTS_DEFAULT"]

DISPLAY_SYSTEMS = ("engineering", "SI", "US")
_EMPTY: Mapping = MappingProxyType({})


def frozen_map(d) -> Mapping:
    """A read-only view of a copy of ``d`` (used for every mapping field)."""
    return MappingProxyType(dict(d or {}))


@dataclass(frozen=True)
class PortRef:
    """One inlet stream of a step: it comes from outlet ``port`` of step ``step_id``.

    ``inlet`` names the receiving side: ``"in"`` for one-inlet steps, ``"in1"``, ``"in2"``, ...
    for ``mix`` (in the order written), ``"hot"`` / ``"cold"`` for ``exchange``.
    """

    step_id: str
    port: str = "out"
    inlet: str = "in"

    def __str__(self) -> str:
        return f"{self.step_id}.{self.port}"


def _limit(default, kind: str, source: str, doc: str):
    return field(default=default, metadata={"kind": kind, "source": source, "doc": doc})


@dataclass(frozen=True)
class Limits:
    """Equipment and safety limits and margins used by the analysis, SI.

    Each default names its basis (standard, ``from memory`` when recalled unchecked, or
    ``common practice`` for a rule of thumb); a scenario overrides them under ``limits:``, a step
    under its own ``limits:``.
    """

    min_metal_T: float = _limit(
        244.15, "temperature", "ASME B31.3 / ASME VIII-1 UCS-66, carbon steel without impact test (from memory)",
        "lowest metal temperature allowed (MDMT); -29 degC")
    max_discharge_T: float = _limit(
        423.15, "temperature", "API 618 5th ed., reciprocating compressors (from memory)",
        "highest compressor discharge temperature; 150 degC (135 degC is usual for H2-rich gas)")
    max_stage_ratio: float = _limit(
        3.5, "ratio", "common practice (centrifugal CO2 stage; reciprocating usually limited by discharge T)",
        "highest pressure ratio per compressor stage")
    compressor_dew_margin: float = _limit(
        10.0, "temperature_difference", "common practice (liquid slugs damage impellers and valves)",
        "superheat above the dew point required at a gas compressor inlet")
    pump_subcooling: float = _limit(
        3.0, "temperature_difference", "common practice (3-5 K; API 610 NPSH margins, from memory)",
        "subcooling below the bubble point required at a pump inlet")
    critical_band_T: float = _limit(
        5.0, "temperature_difference", "common practice (cp peak width of CO2, computed with Span-Wagner)",
        "half-width of the near-critical band around the pseudo-critical temperature")
    critical_band_p: float = _limit(
        0.5e6, "pressure_difference", "common practice (cp peak width of CO2, computed with Span-Wagner)",
        "half-width of the near-critical band around the critical pressure")
    cricondenbar_margin: float = _limit(
        1.0e6, "pressure_difference", "common practice (dense-phase pipelines)",
        "pressure kept above the cricondenbar / bubble pressure in dense-phase lines")
    min_approach_T: float = _limit(
        5.0, "temperature_difference", "common practice (gas/gas recuperators)",
        "smallest internal temperature approach of a heat exchanger")
    min_approach_T_condensing: float = _limit(
        3.0, "temperature_difference", "common practice (condensers)",
        "smallest internal temperature approach when one side condenses")
    separator_density_ratio: float = _limit(
        2.0, "ratio", "common practice (liquid/vapour density ratio below ~1.5-2: near-critical, poor separation)",
        "lowest liquid/vapour density ratio for a working separator")
    ideal_gas_Z_band: float = _limit(
        0.05, "fraction", "common practice",
        "warn when the ideal-gas model is used where abs(Z - 1) exceeds this")
    max_tank_T: float = _limit(
        358.15, "temperature", "SAE J2601 / UN GTR 13 composite tank service range -40..85 degC (from memory)",
        "highest gas temperature in a storage tank during filling; 85 degC")
    max_pressure: float | None = _limit(
        None, "pressure", "user-supplied (no default)", "design pressure of the equipment, if given")

    def with_overrides(self, overrides: Mapping[str, float] | None) -> "Limits":
        """A copy with step-level overrides applied (names as the fields, SI values)."""
        return dataclasses.replace(self, **dict(overrides or {}))


LIMIT_FIELDS: Mapping[str, dataclasses.Field] = MappingProxyType({f.name: f for f in dataclasses.fields(Limits)})


@dataclass(frozen=True)
class FluidSpec:
    """The fluid: ``components`` (canonical name -> mole fraction, sums to 1, in the order written),
    ``model`` (canonical model name), ``kij`` ((a, b) -> k_ij user overrides, a before b in the
    component order), ``kij_set`` (named k_ij source set, None = each pair's default),
    ``basis`` (``"mole"`` or ``"mass"``: how the fractions were written; stored as mole fractions)."""

    components: Mapping[str, float]
    model: str
    kij: Mapping[tuple[str, str], float] = field(default_factory=lambda: _EMPTY)
    kij_set: str | None = None
    basis: str = "mole"

    def kij_nested(self) -> dict[str, dict[str, float]]:
        """kij overrides as ``{"CO2": {"N2": -0.036}}``, plus ``"set"`` when a source set is chosen:
        the form :class:`supercrit.Fluid` takes."""
        out: dict = {}
        for (a, b), v in self.kij.items():
            out.setdefault(a, {})[b] = v
        if self.kij_set is not None:
            out["set"] = self.kij_set
        return out


@dataclass(frozen=True)
class FeedSpec:
    """A feed stream: ``T`` [K], ``p`` [Pa], exactly one of ``flow_mass`` [kg/s] / ``flow_molar``
    [mol/s], optional ``composition`` (mole fractions over the fluid's components; None = the
    fluid's), ``where`` (its place in the file)."""

    id: str
    T: float
    p: float
    flow_mass: float | None = None
    flow_molar: float | None = None
    composition: Mapping[str, float] | None = None
    description: str = ""
    where: Location | None = None


@dataclass(frozen=True)
class StepSpec:
    """One step of a route.

    Attributes
    ----------
    id : str
        Unique within the route; letters, digits, ``-``, ``_``.
    kind : str
        A key of :data:`STEP_KINDS`.
    inputs : tuple of PortRef
        Inlet streams (empty for ``feed``); may name later steps (recycles).
    outputs : tuple of str
        Outlet port names: ``("out",)``, ``("vapor", "liquid")`` for separate, the branch names for
        split, ``("hot", "cold")`` for exchange, ``()`` for sink.
    params : mapping
        Parameters in SI (floats), ``int`` for counts, ``str`` for names; ``fractions`` of split is
        a mapping branch -> fraction, ``solubility`` a mapping ``{k, a [K], b}``,
        ``density_window`` a tuple ``(lo, hi)`` [kg/m3]. Defaults of the kind are filled in.
    limits : mapping
        Overrides of :class:`Limits` for this step (SI).
    where : Location
        Where the step is written; ``param_where`` holds each parameter's location.
    """

    id: str
    kind: str
    inputs: tuple[PortRef, ...] = ()
    outputs: tuple[str, ...] = ("out",)
    params: Mapping[str, object] = field(default_factory=lambda: _EMPTY)
    limits: Mapping[str, float] = field(default_factory=lambda: _EMPTY)
    description: str = ""
    where: Location | None = None
    param_where: Mapping[str, Location] = field(default_factory=lambda: _EMPTY)


@dataclass(frozen=True)
class RouteSpec:
    """One alternative: ``steps`` in the order written (derived routes: inherited steps first,
    added ones last); ``based_on`` names the route it was derived from (None if written in full)."""

    id: str
    steps: tuple[StepSpec, ...]
    description: str = ""
    based_on: str | None = None
    where: Location | None = None

    def step(self, step_id: str) -> StepSpec:
        """The step with this id (KeyError if absent)."""
        for s in self.steps:
            if s.id == step_id:
                return s
        raise KeyError(step_id)


SWEEP_COMBINE = ("grid", "paired")
MAX_VARIANTS_DEFAULT = 5000  # guard against an accidental million variants; a sweep may raise it


@dataclass(frozen=True)
class SweepAxis:
    """One varied setting of a sweep.

    Attributes
    ----------
    targets : tuple of str
        The settings moved together, each ``steps.<step-id>.<param>``, ``feeds.<feed-id>.<T|p|flow>``
        or ``limits.<name>``; all of one quantity kind.
    kind : str
        Quantity kind of the values (a kind of :mod:`supercrit.units`, or ``int`` for counts such as
        ``stages``); ``flow`` of a feed is ``mass_flow`` or ``molar_flow`` by the unit written.
    values : tuple of float
        The values in SI (``int`` for counts), in the order they are swept.
    written : str
        How the values were written (``"range 100 bar .. 400 bar step 10 bar"``), for reports.
    where : Location
        Where the axis is written.
    """

    targets: tuple[str, ...]
    kind: str
    values: tuple
    written: str = ""
    where: Location | None = None

    @property
    def name(self) -> str:
        """The first target: the axis label in tables and reports."""
        return self.targets[0]


@dataclass(frozen=True)
class SweepSpec:
    """A design-space sweep: ``axes`` combined as a full ``grid`` (every combination, the first axis
    varying slowest) or ``paired`` (the i-th value of every axis together); evaluated on ``routes``
    (route ids; every route when the file names none); ``max_variants`` guards the count."""

    axes: tuple[SweepAxis, ...]
    combine: str = "grid"
    routes: tuple[str, ...] = ()
    max_variants: int = MAX_VARIANTS_DEFAULT
    where: Location | None = None

    @property
    def count(self) -> int:
        """Number of variants."""
        if not self.axes:
            return 0
        if self.combine == "paired":
            return len(self.axes[0].values)
        n = 1
        for ax in self.axes:
            n *= len(ax.values)
        return n


@dataclass(frozen=True)
class Scenario:
    """A validated scenario, SI throughout; ``source_hash`` is the sha256 of the file's bytes;
    ``sweep`` the design-space sweep written under ``sweep:`` (None when there is none)."""

    name: str
    description: str
    display_units: str
    fluid: FluidSpec
    feeds: tuple[FeedSpec, ...]
    limits: Limits
    routes: tuple[RouteSpec, ...]
    source_file: str
    source_hash: str
    sweep: SweepSpec | None = None

    def route(self, route_id: str) -> RouteSpec:
        """The route with this id (KeyError if absent)."""
        for r in self.routes:
            if r.id == route_id:
                return r
        raise KeyError(route_id)

    def feed(self, feed_id: str) -> FeedSpec:
        """The feed with this id (KeyError if absent)."""
        for f in self.feeds:
            if f.id == feed_id:
                return f
        raise KeyError(feed_id)

    def limits_for(self, step: StepSpec) -> Limits:
        """Scenario limits with the step's overrides applied."""
        return self.limits.with_overrides(step.limits)


# --- the step kinds ----------------------------------------------------------------------------------

@dataclass(frozen=True)
class Param:
    """One parameter of a step kind.

    ``kind`` is a quantity kind of :mod:`supercrit.units` or one of ``int``, ``str``, ``feed_ref``,
    ``fractions``, ``solubility``, ``density_window``. ``low``/``high`` bound the SI value
    (``low_open``/``high_open``: bound excluded); ``default`` is filled in when the parameter (and
    every other member of its group) is absent.
    """

    name: str
    kind: str
    doc: str
    required: bool = False
    default: object = None
    default_source: str = ""
    low: float | None = None
    high: float | None = None
    low_open: bool = False
    high_open: bool = False

    def range_text(self) -> str:
        """The allowed range as text, e.g. ``(0, 1]``; empty when unbounded."""
        if self.low is None and self.high is None:
            return ""
        lo = "(" if self.low_open or self.low is None else "["
        hi = ")" if self.high_open or self.high is None else "]"
        fmt = lambda v, inf: inf if v is None else (f"{v:g}")  # noqa: E731
        return f"{lo}{fmt(self.low, '-inf')}, {fmt(self.high, 'inf')}{hi}"


@dataclass(frozen=True)
class StepKind:
    """A step kind: ``inlets`` is ``"none"`` (feed), ``"one"``, ``"many"`` (two or more, mix) or
    ``"hot_cold"`` (exchange); ``outlets`` the port names (``None``: the split's branch names);
    ``exactly_one`` / ``at_most_one`` groups of parameter names; ``requires`` pairs (a needs b)."""

    name: str
    doc: str
    inlets: str
    outlets: tuple[str, ...] | None
    params: tuple[Param, ...] = ()
    exactly_one: tuple[tuple[str, ...], ...] = ()
    at_most_one: tuple[tuple[str, ...], ...] = ()
    requires: tuple[tuple[str, str], ...] = ()

    def param(self, name: str) -> Param | None:
        """The parameter of this name, or None."""
        for p in self.params:
            if p.name == name:
                return p
        return None

    def group_of(self, name: str) -> tuple[str, ...]:
        """The exclusive group (exactly-one or at-most-one) ``name`` belongs to, or ``()``."""
        for g in self.exactly_one + self.at_most_one:
            if name in g:
                return g
        return ()


_EFF_DEFAULT = "common practice"
_P_OUT = Param("p_out", "pressure", "outlet pressure (absolute)")
_DP_LOSS = Param("dp", "pressure_difference", "pressure drop through the step (a loss, >= 0)", default=0.0,
                 low=0.0)


def _eff(doc: str, default=None) -> Param:
    return Param("efficiency", "fraction", doc, default=default, default_source=_EFF_DEFAULT if default else "",
                 low=0.0, high=1.0, low_open=True)


STEP_KINDS: Mapping[str, StepKind] = MappingProxyType({k.name: k for k in (
    StepKind("feed", "start of a route: a stream with the conditions of a feed", "none", ("out",),
             (Param("feed", "feed_ref", "id of a feed under feeds: (optional when there is exactly one feed)"),)),
    StepKind("compress", "compressor: isentropic or polytropic efficiency, optional stages with intercooling",
             "one", ("out",),
             (_P_OUT, Param("ratio", "ratio", "overall pressure ratio p_out/p_in", low=1.0, low_open=True),
              _eff("isentropic efficiency (per stage)", 0.75),
              Param("polytropic_efficiency", "fraction", "polytropic efficiency (per stage)", low=0.0, high=1.0,
                    low_open=True),
              Param("stages", "int", "number of stages with equal pressure ratios", default=1, low=1, high=20),
              Param("intercool_T", "temperature", "gas temperature after each intercooler (between stages)"),
              Param("intercool_dp", "pressure_difference", "pressure drop of each intercooler", low=0.0)),
             exactly_one=(("p_out", "ratio"),), at_most_one=(("efficiency", "polytropic_efficiency"),)),
    StepKind("pump", "pump: isentropic efficiency", "one", ("out",),
             (_P_OUT, Param("dp", "pressure_difference", "pressure rise", low=0.0, low_open=True),
              _eff("isentropic (hydraulic) efficiency", 0.75)),
             exactly_one=(("p_out", "dp"),)),
    StepKind("heat", "heater: to a temperature, by a duty, or to a vapour fraction", "one", ("out",),
             (Param("T_out", "temperature", "outlet temperature"),
              Param("duty", "power", "heat added (> 0)", low=0.0, low_open=True),
              Param("vapor_fraction", "fraction", "outlet vapour fraction (molar)", low=0.0, high=1.0), _DP_LOSS),
             exactly_one=(("T_out", "duty", "vapor_fraction"),)),
    StepKind("cool", "cooler: to a temperature, by a duty, or to a vapour fraction", "one", ("out",),
             (Param("T_out", "temperature", "outlet temperature"),
              Param("duty", "power", "heat removed (> 0)", low=0.0, low_open=True),
              Param("vapor_fraction", "fraction", "outlet vapour fraction (molar)", low=0.0, high=1.0), _DP_LOSS),
             exactly_one=(("T_out", "duty", "vapor_fraction"),)),
    StepKind("throttle", "throttle valve: isenthalpic", "one", ("out",),
             (_P_OUT, Param("dp", "pressure_difference", "pressure drop", low=0.0, low_open=True)),
             exactly_one=(("p_out", "dp"),)),
    StepKind("expand", "expander or turbine: isentropic efficiency", "one", ("out",),
             (_P_OUT, Param("ratio", "ratio", "pressure ratio p_in/p_out", low=1.0, low_open=True),
              Param("efficiency", "fraction", "isentropic efficiency", required=True, low=0.0, high=1.0,
                    low_open=True)),
             exactly_one=(("p_out", "ratio"),)),
    StepKind("separate", "adiabatic flash drum", "one", ("vapor", "liquid"), (_DP_LOSS,)),
    StepKind("mix", "mixer: outlet at the lowest inlet pressure, energy balance", "many", ("out",), ()),
    StepKind("split", "splitter: same state, flow divided by fractions", "one", None,
             (Param("fractions", "fractions", "branch name -> fraction of the inlet flow (sum 1)", required=True),)),
    StepKind("exchange", "two-stream heat exchanger / recuperator", "hot_cold", ("hot", "cold"),
             (Param("hot_T_out", "temperature", "hot-side outlet temperature"),
              Param("cold_T_out", "temperature", "cold-side outlet temperature"),
              Param("duty", "power", "heat passed from hot to cold side (> 0)", low=0.0, low_open=True),
              Param("dp_hot", "pressure_difference", "hot-side pressure drop", default=0.0, low=0.0),
              Param("dp_cold", "pressure_difference", "cold-side pressure drop", default=0.0, low=0.0)),
             exactly_one=(("hot_T_out", "cold_T_out", "duty"),)),
    StepKind("vessel", "holding or extraction vessel at set conditions (else the inlet's)", "one", ("out",),
             (Param("T", "temperature", "vessel temperature (default: inlet temperature)"),
              Param("p", "pressure", "vessel pressure (default: inlet pressure)"),
              Param("solubility", "solubility", "Chrastil constants {k, a, b}: c [g/L] = rho^k exp(a/T + b), "
                                                 "rho in g/L (= kg/m3), T in K; user-supplied"),
              Param("density_window", "density_window", "[lo, hi] solvent density window")),),
    StepKind("pipe", "pipeline or well segment: friction, hydrostatics, heat exchange with surroundings", "one",
             ("out",),
             (Param("length", "length", "length along the pipe", required=True, low=0.0, low_open=True),
              Param("diameter", "length", "inner diameter", required=True, low=0.0, low_open=True),
              Param("roughness", "length", "absolute wall roughness", required=True, low=0.0),
              Param("elevation_change", "length", "outlet height minus inlet height (negative down a well)",
                    default=0.0),
              Param("U", "heat_transfer_coefficient", "overall heat-transfer coefficient to the surroundings",
                    low=0.0),
              Param("T_surroundings", "temperature", "temperature of the surroundings"),
              Param("segments", "int", "number of segments (default: chosen by the pipe step)", low=1,
                    high=100000)),
             requires=(("U", "T_surroundings"), ("T_surroundings", "U"))),
    StepKind("sink", "end of a route", "one", (), (Param("name", "str", "name of the product or destination"),)),
)})

#: common kinds of mistake: words engineers use for a step, mapped to our kind
KIND_SYNONYMS: Mapping[str, str] = MappingProxyType({
    "source": "feed", "inlet": "feed", "compressor": "compress", "compression": "compress", "pumping": "pump",
    "heater": "heat", "heating": "heat", "cooler": "cool", "cooling": "cool", "condenser": "cool",
    "condense": "cool", "valve": "throttle", "letdown": "throttle", "expander": "expand", "turbine": "expand",
    "separator": "separate", "flash": "separate", "drum": "separate", "mixer": "mix", "merge": "mix",
    "splitter": "split", "tee": "split", "heat_exchanger": "exchange", "heatexchanger": "exchange",
    "exchanger": "exchange", "recuperator": "exchange", "hx": "exchange", "extractor": "vessel", "tank": "vessel",
    "pipeline": "pipe", "well": "pipe", "product": "sink", "outlet": "sink", "end": "sink"})
