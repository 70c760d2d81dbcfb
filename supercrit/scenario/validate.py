"""Load and validate a scenario file: every problem of the file reported at once, with its place.

:func:`load_scenario` reads YAML (safely, :mod:`supercrit.io`), checks every key, value, unit and
reference against :mod:`supercrit.scenario.schema`, resolves derived routes (``based_on``) into
full routes, and returns a frozen :class:`~supercrit.scenario.schema.Scenario` in SI. If anything
is wrong it raises one :class:`ScenarioError` listing each problem as
``FILE:LINE:COL: routes[0] (base) steps[2] (heater-1) T_out: <what is wrong; what would be valid>``.
The optional ``sweep:`` section is checked against the validated routes, feeds and limits by
:func:`check_sweep` (its values, the count of variants and the ``max_variants`` guard).
"""
from __future__ import annotations

import difflib
import hashlib
import math
import os
import re
from dataclasses import dataclass
from pathlib import Path

from ..errors import DataError, InputError
from ..io import Location, YamlError, YamlList, YamlMap, load_yaml, load_yaml_file
from ..units import noun, parse_quantity, parse_quantity_of
from .schema import (DISPLAY_SYSTEMS, KIND_SYNONYMS, LIMIT_FIELDS, MAX_VARIANTS_DEFAULT, STEP_KINDS, SWEEP_COMBINE,
                     FeedSpec, FluidSpec, Limits, Param, PortRef, RouteSpec, Scenario, StepKind, StepSpec, SweepAxis,
                     SweepSpec, frozen_map)

ID_PATTERN = re.compile(r"^[A-Za-z0-9][A-Za-z0-9_-]{0,63}$")
TOP_KEYS = ("name", "description", "display_units", "fluid", "feeds", "feed", "limits", "routes", "sweep")
FLUID_KEYS = ("components", "basis", "model", "kij", "kij_set")
FEED_KEYS = ("id", "description", "T", "p", "flow", "composition")
ROUTE_KEYS = ("id", "description", "steps", "based_on", "changes", "remove", "add")
SUM_TOL = 1e-6  # fractions must add up to 1 within this


@dataclass(frozen=True)
class Problem:
    """One problem in a scenario file: ``location`` (file, line, col), ``path`` (e.g.
    ``routes[0] (base) steps[2] (heater-1) T_out``) and ``message``."""

    location: Location | None
    path: str
    message: str

    def __str__(self) -> str:
        parts = [str(self.location)] if self.location else []
        if self.path:
            parts.append(self.path)
        return ": ".join(parts + [self.message])


class ScenarioError(InputError):
    """A scenario file with one or more problems; ``problems`` lists each (a tuple of :class:`Problem`).

    The message has one line per problem, ``FILE:LINE:COL: path: what is wrong; what is valid``.
    """

    def __init__(self, problems, file: str):
        self.problems = tuple(problems)
        self.file = file
        n = len(self.problems)
        head = f"{file}: {n} problem{'s' if n != 1 else ''} in the scenario:"
        super().__init__("\n".join([head] + [f"  {p}" for p in self.problems]))
        self.where = file


class Collector:
    """Gathers problems (deduplicated, in file order) while validation continues past each one."""

    def __init__(self, file: str):
        self.file = file
        self.problems: list[Problem] = []
        self._seen: set = set()

    def add(self, location: Location | None, path: str, message: str) -> None:
        key = (location, message)
        if key not in self._seen:
            self._seen.add(key)
            self.problems.append(Problem(location, path, message))

    def quantity(self, value, kind: str, location, path: str, name: str):
        """SI value of a quantity, or None after recording the problem."""
        try:
            return parse_quantity(value, kind, name)
        except InputError as exc:
            self.add(location, path, exc.detail)
            return None

    def check_keys(self, mapping: YamlMap, allowed, path: str, what: str) -> None:
        """Record every key of ``mapping`` not in ``allowed``, with a suggestion."""
        for key in mapping:
            if key not in allowed:
                self.add(mapping.key_where.get(key), path,
                         f"unknown key {key!r} in {what}.{did_you_mean(key, allowed)} "
                         f"Valid keys: {', '.join(allowed)}.")

    def expect_map(self, value, location, path: str, what: str, example: str) -> bool:
        if isinstance(value, YamlMap):
            return True
        self.add(location, path, f"{what} must be a mapping of keys to values, e.g. {example}; got {_shown(value)}")
        return False

    def text(self, mapping: YamlMap, key: str, path: str, default: str = "") -> str:
        value = mapping.get(key, default)
        if value is None:
            return default
        if not isinstance(value, (str, int, float)) or isinstance(value, bool):
            self.add(mapping.loc(key), path, f"{key} must be text; got {_shown(value)}")
            return default
        return str(value)

    def ident(self, value, location, path: str, what: str) -> str | None:
        """A plain id, or None after recording the problem."""
        if value is None:
            self.add(location, path, f"{what} has no id; add 'id: <name>' (letters, digits, '-', '_')")
            return None
        if not isinstance(value, (str, int)) or isinstance(value, bool) or not ID_PATTERN.match(str(value)):
            fix = re.sub(r"[^A-Za-z0-9_-]+", "-", str(value)).strip("-_") or "name-1"
            self.add(location, path, f"{what} id {_shown(value)} must be letters, digits, '-' and '_' (starting "
                                     f"with a letter or digit, at most 64), e.g. {fix!r}")
            return None
        return str(value)


def did_you_mean(word, options, cutoff: float = 0.6) -> str:
    """`` Did you mean 'x'?`` for the closest options (case-insensitive too), or ``""``."""
    word = str(word)
    options = [str(o) for o in options]
    lower = {o.lower(): o for o in options}
    close = [lower[word.lower()]] if word.lower() in lower else difflib.get_close_matches(word, options, 2, cutoff)
    if not close:
        close = [lower[c] for c in difflib.get_close_matches(word.lower(), list(lower), 2, cutoff)]
    return f" Did you mean {' or '.join(repr(c) for c in close)}?" if close else ""


def _shown(value) -> str:
    if isinstance(value, bool):
        return str(value).lower()
    if value is None:
        return "nothing"
    if isinstance(value, (YamlMap, dict)):
        return "a mapping"
    if isinstance(value, (YamlList, list)):
        return "a list"
    return repr(value) if isinstance(value, str) else str(value)


def load_scenario(path_or_text, *, name_hint: str | None = None) -> Scenario:
    """Read, check and resolve a scenario.

    Parameters
    ----------
    path_or_text : str or os.PathLike or bytes
        A path (``pathlib.Path``, or a ``str`` without newline that names an existing file or ends
        in ``.yaml``/``.yml``), or the YAML text itself.
    name_hint : str, optional
        Scenario name when the file has no ``name:`` (default: the file stem), and the label of
        text input in messages (default ``<text>``).

    Returns
    -------
    Scenario
        Frozen, SI, derived routes resolved.

    Raises
    ------
    ScenarioError
        Listing every problem found (YAML syntax, unsafe tags, unknown keys, units, ranges,
        references, compositions, ...), each with file:line:col.
    """
    if isinstance(path_or_text, os.PathLike) or (
            isinstance(path_or_text, str) and "\n" not in path_or_text
            and (path_or_text.endswith((".yaml", ".yml")) or os.path.isfile(path_or_text))):
        file = str(path_or_text)
        stem = Path(file).stem
        try:
            doc = load_yaml_file(path_or_text)
        except YamlError as exc:
            raise ScenarioError([Problem(exc.location, "", exc.detail)], file) from None
        data, sha = doc.data, doc.sha256
    else:
        file = f"<{name_hint}>" if name_hint else "<text>"
        stem = name_hint or "scenario"
        raw = path_or_text if isinstance(path_or_text, bytes) else str(path_or_text).encode("utf-8")
        sha = hashlib.sha256(raw).hexdigest()
        try:
            data = load_yaml(raw, file)
        except YamlError as exc:
            raise ScenarioError([Problem(exc.location, "", exc.detail)], file) from None
    ctx = Collector(file)
    scenario = _validate(ctx, data, file, sha, name_hint or stem)
    if ctx.problems or scenario is None:
        if not ctx.problems:  # pragma: no cover - _validate returns None only after recording
            ctx.add(Location(file, 1, 1), "", "the scenario could not be read")
        raise ScenarioError(sorted(ctx.problems, key=_order), file)
    return scenario


def _order(p: Problem):
    return (p.location.line, p.location.col) if p.location else (0, 0)


def _validate(ctx: Collector, data, file: str, sha: str, default_name: str) -> Scenario | None:
    top = Location(file, 1, 1)
    if data is None:
        ctx.add(top, "", "the file is empty; a scenario needs at least fluid:, feeds: and routes:")
        return None
    if not isinstance(data, YamlMap):
        ctx.add(top, "", f"a scenario is a mapping with keys {', '.join(TOP_KEYS)}; this file holds {_shown(data)}")
        return None
    ctx.check_keys(data, TOP_KEYS, "", "the scenario")
    name = ctx.text(data, "name", "name", default_name) or default_name
    description = ctx.text(data, "description", "description")
    display = ctx.text(data, "display_units", "display_units", "engineering")
    if display not in DISPLAY_SYSTEMS:
        ctx.add(data.loc("display_units"), "display_units",
                f"unknown unit system {display!r}.{did_you_mean(display, DISPLAY_SYSTEMS)} "
                f"Valid: {', '.join(DISPLAY_SYSTEMS)}.")
    for key in ("fluid", "routes"):
        if key not in data:
            ctx.add(data.where, "", f"the scenario has no {key}: section; add it (see docs/scenario-format.md)")
    fluid = _fluid(ctx, data["fluid"], data.loc("fluid")) if "fluid" in data else None
    feeds, feed_ids = _feeds(ctx, data, fluid)
    limits = _limits(ctx, data.get("limits"), data.loc("limits"), "limits") if "limits" in data else {}
    raw_routes = resolve_routes(ctx, data.get("routes"), data.loc("routes")) if "routes" in data else []
    routes = tuple(r for r in (validate_route_steps(ctx, rr, feed_ids) for rr in raw_routes) if r is not None)
    sweep = None
    if "sweep" in data:
        complete = len(routes) == len(raw_routes) and bool(routes)
        sweep = check_sweep(ctx, data["sweep"], data.loc("sweep"), routes, feeds, feed_ids, complete)
    if ctx.problems or fluid is None:
        return None
    return Scenario(name=name, description=description, display_units=display, fluid=fluid, feeds=tuple(feeds),
                    limits=Limits(**limits), routes=routes, source_file=file, source_hash=sha, sweep=sweep)


def _components(ctx: Collector, value, location, path: str, allowed=None) -> dict[str, float] | None:
    """Canonical component name -> fraction, checked (names, numbers, sum); None after problems."""
    from ..thermo.components import get_component

    if isinstance(value, str):
        value_map = {value: 1.0}
        locs = {value: location}
    elif isinstance(value, YamlMap) and value:
        value_map, locs = value, value.key_where
    else:
        ctx.add(location, path, "give the composition as a mapping of component names to fractions, e.g. "
                                "{CO2: 0.97, N2: 0.03}, or one name for a pure fluid")
        return None
    out, ok = {}, True
    for name, frac in value_map.items():
        loc = locs.get(name, location)
        try:
            comp = get_component(name)
        except DataError as exc:
            ctx.add(loc, path, str(exc))
            ok = False
            continue
        if allowed is not None and comp.name not in allowed:
            ctx.add(loc, path, f"{comp.name} is not a component of the fluid ({', '.join(allowed)}); a feed "
                               f"composition uses the fluid's components")
            ok = False
            continue
        if comp.name in out:
            ctx.add(loc, path, f"{comp.name} is listed twice (as {name!r}); list each component once")
            ok = False
            continue
        vloc = value_map.value_where.get(name, loc) if isinstance(value_map, YamlMap) else loc
        f = ctx.quantity(frac, "fraction", vloc, path, f"the fraction of {comp.name}")
        if f is None:
            ok = False
            continue
        out[comp.name] = f
    if not ok:
        return None
    total = sum(out.values())
    if abs(total - 1.0) > SUM_TOL:
        ctx.add(location, path, f"the fractions sum to {total:.9g}, not 1 (tolerance {SUM_TOL:g}); fix them so "
                                f"that they add up to 1")
        return None
    return {k: v / total for k, v in out.items()}


def _fluid(ctx: Collector, node, location) -> FluidSpec | None:
    from ..thermo.build import canonical_model_name

    path = "fluid"
    if not ctx.expect_map(node, location, path, "fluid", "{components: {CO2: 0.97, N2: 0.03}, model: "
                                                        "peng-robinson}"):
        return None
    ctx.check_keys(node, FLUID_KEYS, path, "fluid")
    if "components" not in node:
        ctx.add(node.where, path, "fluid has no components:; write e.g. components: {CO2: 0.97, N2: 0.03}")
        return None
    basis = ctx.text(node, "basis", path + " basis", "mole")
    if basis not in ("mole", "mass"):
        ctx.add(node.loc("basis"), path + " basis", f"basis {basis!r} is not 'mole' or 'mass'"
                                                     f"{did_you_mean(basis, ('mole', 'mass'))}")
        basis = "mole"
    comps = _components(ctx, node["components"], node.loc("components"), path + " components")
    if comps is None:
        return None
    if basis == "mass":
        from ..thermo.components import get_component

        moles = {k: w / get_component(k).M for k, w in comps.items()}
        total = sum(moles.values())
        comps = {k: n / total for k, n in moles.items()}
    pure_co2 = list(comps) == ["CO2"]
    model = "span-wagner" if pure_co2 else "peng-robinson"
    if "model" in node:
        try:
            model = canonical_model_name(ctx.text(node, "model", path + " model"))
        except InputError as exc:
            ctx.add(node.loc("model"), path + " model", exc.detail)
            return None
        if model == "span-wagner" and not pure_co2:
            ctx.add(node.loc("model"), path + " model", "span-wagner is the reference equation for pure CO2 "
                                                        "only; for mixtures choose e.g. peng-robinson")
            return None
    kij = _kij(ctx, node, list(comps))
    kij_set = ctx.text(node, "kij_set", path + " kij_set", "default") or "default"
    if kij is None:
        return None
    spec = FluidSpec(components=frozen_map(comps), model=model, kij=frozen_map(kij),
                     kij_set=None if kij_set == "default" else kij_set, basis=basis)
    try:  # the k_ij table checks the set name and the values against its own data
        from ..thermo.kij import kij_matrix
    except ImportError:  # pragma: no cover - older core without k_ij tables
        return spec
    try:
        kij_matrix(list(comps), model, {a: dict(r) for a, r in spec.kij_nested().items() if a != "set"} or None,
                   spec.kij_set)
    except (InputError, DataError) as exc:
        where = node.loc("kij_set") if "kij_set" in node else node.loc("kij")
        ctx.add(where, path + " kij_set", getattr(exc, "detail", str(exc)))
        return None
    return spec


def _kij(ctx: Collector, node: YamlMap, names: list[str]) -> dict | None:
    from ..thermo.components import get_component

    path = "fluid kij"
    if "kij" not in node or node["kij"] is None:
        return {}
    if not ctx.expect_map(node["kij"], node.loc("kij"), path, "kij", "{CO2: {N2: -0.036}}"):
        return None
    out, ok = {}, True
    for a, row in node["kij"].items():
        if not ctx.expect_map(row, node["kij"].loc(a), path, f"kij of {a}", "{N2: -0.036}"):
            ok = False
            continue
        for b, value in row.items():
            loc = row.key_where[b]
            try:
                ca, cb = get_component(a).name, get_component(b).name
            except DataError as exc:
                ctx.add(loc, path, str(exc))
                ok = False
                continue
            if ca not in names or cb not in names:
                ctx.add(loc, path, f"kij names {ca if ca not in names else cb}, which is not a component of the "
                                   f"fluid ({', '.join(names)})")
                ok = False
                continue
            if ca == cb:
                ctx.add(loc, path, f"kij of {ca} with itself has no meaning; give pairs of different components")
                ok = False
                continue
            v = ctx.quantity(value, "dimensionless", row.loc(b), path, f"kij {ca}-{cb}")
            if v is None:
                ok = False
                continue
            if not -1.0 < v < 1.0:
                ctx.add(row.loc(b), path, f"kij {ca}-{cb} = {v:g} is outside (-1, 1)")
                ok = False
                continue
            pair = (ca, cb) if names.index(ca) < names.index(cb) else (cb, ca)
            if pair in out and out[pair] != v:
                ctx.add(loc, path, f"kij {pair[0]}-{pair[1]} is given twice with different values; give it once")
                ok = False
            out[pair] = v
    return out if ok else None


def _feeds(ctx: Collector, data: YamlMap, fluid: FluidSpec | None) -> tuple[list[FeedSpec], list[str]]:
    """The valid feeds, and the ids of all feeds written (so that steps can name a feed with problems)."""
    if "feeds" in data and "feed" in data:
        ctx.add(data.key_where["feed"], "feed", "give either feeds: (a list) or feed: (one feed), not both")
        return [], []
    if "feed" in data:
        items, locs, one = [data["feed"]], [data.loc("feed")], True
    elif "feeds" in data:
        node = data["feeds"]
        if not isinstance(node, YamlList) or not node:
            ctx.add(data.loc("feeds"), "feeds", "feeds: is a list of feeds, e.g. - {id: feed-1, T: 25 degC, "
                                                "p: 55 bar, flow: 12 t/h}")
            return [], []
        items, locs, one = list(node), node.item_where, False
    else:
        ctx.add(data.where, "", "the scenario has no feeds: section; add one, e.g. feeds: [{id: feed-1, "
                                "T: 25 degC, p: 55 bar, flow: 12 t/h}]")
        return [], []
    feeds, seen = [], {}
    for i, (item, loc) in enumerate(zip(items, locs)):
        path = "feed" if one else f"feeds[{i}]"
        if not ctx.expect_map(item, loc, path, "a feed", "{id: feed-1, T: 25 degC, p: 55 bar, flow: 12 t/h}"):
            continue
        fid = item.get("id", "feed" if one else None)
        fid = ctx.ident(fid, item.loc("id") if "id" in item else item.where, path, "the feed")
        if fid is not None:
            path = f"{path} ({fid})"
            if fid in seen:
                ctx.add(item.loc("id"), path, f"feed id {fid!r} is used twice (first at line {seen[fid].line}); "
                                              f"feed ids must be unique")
            seen.setdefault(fid, item.loc("id") if "id" in item else item.where)
        ctx.check_keys(item, FEED_KEYS, path, "a feed")
        vals = {}
        for key, kind in (("T", "temperature"), ("p", "pressure")):
            if key not in item:
                ctx.add(item.where, path, f"the feed has no {key}; add e.g. {key}: "
                                          f"{'25 degC' if key == 'T' else '55 bar'}")
            else:
                vals[key] = ctx.quantity(item[key], kind, item.loc(key), path + f" {key}", key)
        flow, flow_kind = None, None
        if "flow" not in item:
            ctx.add(item.where, path, "the feed has no flow; add e.g. flow: 12 t/h (mass) or flow: 100 kmol/h (molar)")
        else:
            try:
                flow, flow_kind = parse_quantity_of(item["flow"], ("mass_flow", "molar_flow"), "flow")
                if not flow > 0:
                    ctx.add(item.loc("flow"), path + " flow", f"flow {_shown(item['flow'])} must be above zero")
                    flow = None
            except InputError as exc:
                ctx.add(item.loc("flow"), path + " flow", exc.detail)
        comp = None
        if "composition" in item and fluid is not None:
            comp = _components(ctx, item["composition"], item.loc("composition"), path + " composition",
                               allowed=list(fluid.components))
            if comp is not None:
                comp = frozen_map({k: comp.get(k, 0.0) for k in fluid.components})
        if fid is None or None in vals.values() or len(vals) < 2 or flow is None:
            continue
        feeds.append(FeedSpec(id=fid, T=vals["T"], p=vals["p"],
                              flow_mass=flow if flow_kind == "mass_flow" else None,
                              flow_molar=flow if flow_kind == "molar_flow" else None, composition=comp,
                              description=ctx.text(item, "description", path), where=item.where))
    return feeds, list(seen)


def _limits(ctx: Collector, node, location, path: str) -> dict[str, float]:
    """Limit overrides (name -> SI value) from a ``limits:`` mapping; shared by scenario and steps."""
    if not ctx.expect_map(node, location, path, "limits", "{max_discharge_T: 135 degC}"):
        return {}
    out = {}
    for key, value in node.items():
        f = LIMIT_FIELDS.get(key)
        if f is None:
            ctx.add(node.key_where[key], path, f"unknown limit {key!r}.{did_you_mean(key, LIMIT_FIELDS)} "
                                               f"Valid: {', '.join(LIMIT_FIELDS)}.")
            continue
        v = ctx.quantity(value, f.metadata["kind"], node.loc(key), f"{path} {key}", key)
        if v is None:
            continue
        if f.metadata["kind"] in ("temperature_difference", "pressure_difference", "ratio") and not v > 0:
            ctx.add(node.loc(key), f"{path} {key}", f"{key} must be above zero (a {noun(f.metadata['kind'])})")
            continue
        out[key] = v
    return out




# --- routes: written in full or derived (based_on) ----------------------------------------------------

STEP_COMMON_KEYS = ("id", "kind", "from", "description", "limits")


@dataclass
class RawStep:
    """A step as written (key -> (value, value location, key location)), before its checks."""

    data: dict
    where: Location
    implicit_from: bool = False

    @classmethod
    def from_map(cls, m: YamlMap) -> "RawStep":
        return cls({k: (v, m.value_where[k], m.key_where[k]) for k, v in m.items()}, m.where)

    def get(self, key, default=None):
        return self.data[key][0] if key in self.data else default

    def loc(self, key) -> Location:
        return self.data[key][1] if key in self.data else self.where

    def key_loc(self, key) -> Location:
        return self.data[key][2] if key in self.data else self.where

    def copy(self) -> "RawStep":
        return RawStep(dict(self.data), self.where, self.implicit_from)

    @property
    def id(self):
        sid = self.get("id")
        return str(sid) if isinstance(sid, (str, int)) and not isinstance(sid, bool) else None


@dataclass
class RawRoute:
    """A route resolved to its full list of raw steps; ``removed`` lists ids dropped from its base."""

    index: int
    id: str
    steps: list
    description: str = ""
    based_on: str | None = None
    where: Location | None = None
    removed: frozenset = frozenset()

    @property
    def path(self) -> str:
        return f"routes[{self.index}] ({self.id})"


def _raw_steps(ctx: Collector, node, location, path: str, what: str) -> list[RawStep]:
    if not isinstance(node, YamlList) or not node:
        ctx.add(location, path, f"{what} is a list of steps, e.g. - {{id: pump-1, kind: pump, p_out: 300 bar}}; "
                                f"got {_shown(node)}")
        return []
    out = []
    for i, item in enumerate(node):
        if not ctx.expect_map(item, node.loc(i), f"{path}[{i}]", "a step", "{id: pump-1, kind: pump, p_out: 300 bar}"):
            continue
        out.append(RawStep.from_map(item))
    return out


def _fill_implicit_from(steps: list[RawStep], start: int = 0) -> None:
    """A step without ``from`` (other than a feed) takes the outlet of the step before it in the list."""
    for i in range(max(start, 1), len(steps)):
        step, prev = steps[i], steps[i - 1]
        if "from" not in step.data and step.get("kind") != "feed" and prev.id is not None:
            step.data["from"] = (prev.id, step.where, step.where)
            step.implicit_from = True


def resolve_routes(ctx: Collector, node, location) -> list[RawRoute]:
    """Every route as a full list of raw steps, derived routes resolved; problems recorded."""
    if not isinstance(node, YamlList) or not node:
        ctx.add(location, "routes", "routes: is a list of routes, each {id: ..., steps: [...]}; got " + _shown(node))
        return []
    written: dict[str, tuple[int, YamlMap]] = {}
    for i, item in enumerate(node):
        path = f"routes[{i}]"
        if not ctx.expect_map(item, node.loc(i), path, "a route", "{id: base, steps: [...]}"):
            continue
        rid = ctx.ident(item.get("id"), item.loc("id"), path, "the route")
        if rid is None:
            continue
        path = f"{path} ({rid})"
        ctx.check_keys(item, ROUTE_KEYS, path, "a route")
        if rid in written:
            ctx.add(item.loc("id"), path, f"route id {rid!r} is used twice (first at line "
                                          f"{written[rid][1].loc('id').line}); route ids must be unique")
            continue
        written[rid] = (i, item)
    resolved: dict[str, RawRoute | None] = {}

    def resolve(rid: str, chain: tuple[str, ...]) -> RawRoute | None:
        if rid in resolved:
            return resolved[rid]
        i, item = written[rid]
        path = f"routes[{i}] ({rid})"
        description = ctx.text(item, "description", path)
        if "steps" in item:
            for key in ("based_on", "changes", "remove", "add"):
                if key in item:
                    ctx.add(item.key_where[key], path, f"a route with steps: is written in full and takes no {key}:;"
                                                       f" derive it instead with based_on: (and no steps:)")
            steps = _raw_steps(ctx, item["steps"], item.loc("steps"), path + " steps", "steps:")
            _fill_implicit_from(steps)
            resolved[rid] = RawRoute(i, rid, steps, description, None, item.where)
            return resolved[rid]
        if "based_on" not in item:
            ctx.add(item.where, path, "the route has no steps:; give its steps, or derive it from another route "
                                      "with based_on: <route-id> and changes:/remove:/add:")
            resolved[rid] = None
            return None
        base_id = item["based_on"]
        if not isinstance(base_id, str) or base_id not in written:
            ctx.add(item.loc("based_on"), path, f"based_on names {_shown(base_id)}, which is not a route id."
                                                f"{did_you_mean(base_id, written)} Routes: {', '.join(written)}.")
            resolved[rid] = None
            return None
        if base_id in chain or base_id == rid:
            cycle = " -> ".join(chain[chain.index(base_id):] + (rid, base_id)) if base_id in chain else \
                f"{rid} -> {rid}"
            ctx.add(item.loc("based_on"), path, f"routes are based on each other in a cycle ({cycle}); one of them "
                                                f"must list its steps in full")
            resolved[rid] = None
            return None
        resolved[rid] = None  # guards against cycles while the base resolves
        base = resolve(base_id, chain + (rid,))
        if base is None:
            return None
        resolved[rid] = _derive(ctx, item, i, rid, description, base)
        return resolved[rid]

    out = []
    for rid in written:
        r = resolve(rid, ())
        if r is not None:
            out.append(r)
    return out


def _known_kind(value) -> StepKind | None:
    return STEP_KINDS.get(value) if isinstance(value, str) else None


def _derive(ctx: Collector, item: YamlMap, index: int, rid: str, description: str, base: RawRoute) -> RawRoute:
    path = f"routes[{index}] ({rid})"
    steps = [s.copy() for s in base.steps]
    ids = [s.id for s in steps]
    removed = set(base.removed)
    if "remove" in item:
        node = item["remove"]
        if isinstance(node, str):
            node_items, locs = [node], [item.loc("remove")]
        elif isinstance(node, YamlList):
            node_items, locs = list(node), node.item_where
        else:
            ctx.add(item.loc("remove"), path + " remove", "remove: is a list of step ids, e.g. [heater-2]")
            node_items, locs = [], []
        for sid, loc in zip(node_items, locs):
            if not isinstance(sid, str) or sid not in ids:
                ctx.add(loc, path + " remove", f"{_shown(sid)} is not a step of route {base.id!r}."
                                               f"{did_you_mean(sid, [x for x in ids if x])}")
                continue
            gone = steps[ids.index(sid)]
            steps.pop(ids.index(sid))
            ids = [s.id for s in steps]
            removed.add(sid)
            upstream = gone.get("from")
            kind = _known_kind(gone.get("kind"))
            if isinstance(upstream, str) and kind is not None and kind.outlets == ("out",):
                for s in steps:  # reconnect what the removed step fed to what fed it
                    f = s.get("from")
                    if f in (sid, f"{sid}.out"):
                        s.data["from"] = (upstream, s.loc("from"), s.key_loc("from"))
    if "changes" in item:
        node = item["changes"]
        if ctx.expect_map(node, item.loc("changes"), path + " changes", "changes",
                          "{pump-1: {p_out: 250 bar}}"):
            for sid, change in node.items():
                cpath = f"{path} changes {sid}"
                if sid not in ids:
                    why = " (it is removed in this route)" if sid in removed else ""
                    ctx.add(node.key_where[sid], cpath, f"{sid!r} is not a step of route {base.id!r}{why}."
                                                        f"{did_you_mean(sid, [x for x in ids if x])}")
                    continue
                if not ctx.expect_map(change, node.loc(sid), cpath, f"the changes of {sid}", "{p_out: 250 bar}"):
                    continue
                step = steps[ids.index(sid)]
                kind = _known_kind(change.get("kind", step.get("kind")))
                for key, value in change.items():
                    if key == "id":
                        ctx.add(change.key_where[key], cpath, "a step's id cannot be changed; remove the step and "
                                                              "add a new one instead")
                        continue
                    if value is None:
                        if key in ("kind", "from"):
                            ctx.add(change.loc(key), cpath, f"{key} cannot be removed, only changed")
                        step.data.pop(key, None)
                        continue
                    if kind is not None:  # a new member of an exclusive group replaces the others
                        for other in kind.group_of(key):
                            if other != key:
                                step.data.pop(other, None)
                    step.data[key] = (value, change.loc(key), change.key_where[key])
                    if key == "from":
                        step.implicit_from = False
    n_before = len(steps)
    if "add" in item:
        steps.extend(_raw_steps(ctx, item["add"], item.loc("add"), path + " add", "add:"))
        _fill_implicit_from(steps, n_before)
    return RawRoute(index, rid, steps, description or base.description, base.id, item.where, frozenset(removed))


# --- steps ----------------------------------------------------------------------------------------------

def _kind_of(ctx: Collector, step: RawStep, path: str) -> StepKind | None:
    if "kind" not in step.data:
        ctx.add(step.where, path, f"the step has no kind:; valid kinds: {', '.join(STEP_KINDS)}")
        return None
    kind = step.get("kind")
    if isinstance(kind, str) and kind in STEP_KINDS:
        return STEP_KINDS[kind]
    key = str(kind).strip().lower().replace(" ", "_").replace("-", "_")
    hint = f" Did you mean {KIND_SYNONYMS[key]!r}?" if key in KIND_SYNONYMS else did_you_mean(kind, STEP_KINDS)
    ctx.add(step.loc("kind"), path, f"unknown step kind {_shown(kind)}.{hint} Valid kinds: {', '.join(STEP_KINDS)}.")
    return None


def _check_range(ctx: Collector, p: Param, v: float, loc, path: str, written) -> bool:
    bad = ((p.low is not None and (v < p.low or (p.low_open and v == p.low)))
           or (p.high is not None and (v > p.high or (p.high_open and v == p.high))))
    if bad:
        extra = {"efficiency": " (0.75 means 75 %)", "polytropic_efficiency": " (0.8 means 80 %)",
                 "ratio": " (outlet over inlet for compress; inlet over outlet for expand)"}.get(p.name, "")
        unit = "" if p.kind in ("fraction", "ratio", "dimensionless", "int") else " in SI"
        ctx.add(loc, path, f"{p.name} = {_shown(written)} is outside its range {p.range_text()}{unit}{extra}")
    return not bad


def _param(ctx: Collector, p: Param, step: RawStep, path: str, feed_ids) -> object:
    value, loc = step.get(p.name), step.loc(p.name)
    ppath = f"{path} {p.name}"
    if p.kind == "int":
        if isinstance(value, bool) or not isinstance(value, int):
            ctx.add(loc, ppath, f"{p.name} is a whole number, e.g. {p.name}: 3; got {_shown(value)}")
            return None
        return value if _check_range(ctx, p, value, loc, ppath, value) else None
    if p.kind == "str":
        return ctx.text(RawMap(step), p.name, ppath) or None
    if p.kind == "feed_ref":
        if not isinstance(value, str) or value not in feed_ids:
            ctx.add(loc, ppath, f"feed {_shown(value)} is not a feed id.{did_you_mean(value, feed_ids)} "
                                f"Feeds: {', '.join(feed_ids) or '(none valid)'}.")
            return None
        return value
    if p.kind == "fractions":
        return _fractions(ctx, value, loc, ppath)
    if p.kind == "solubility":
        return _solubility(ctx, value, loc, ppath)
    if p.kind == "density_window":
        if not isinstance(value, YamlList) or len(value) != 2:
            ctx.add(loc, ppath, "density_window is [low, high], e.g. [600 kg/m3, 900 kg/m3]")
            return None
        lo = ctx.quantity(value[0], "density", value.loc(0), ppath, "density_window low")
        hi = ctx.quantity(value[1], "density", value.loc(1), ppath, "density_window high")
        if lo is None or hi is None:
            return None
        if not 0 < lo < hi:
            ctx.add(loc, ppath, "density_window needs 0 < low < high")
            return None
        return (lo, hi)
    v = ctx.quantity(value, p.kind, loc, ppath, p.name)
    if v is None:
        return None
    return v if _check_range(ctx, p, v, loc, ppath, value) else None


class RawMap(YamlMap):
    """A read-only YamlMap view of a RawStep's values (for Collector.text)."""

    def __init__(self, step: RawStep):
        super().__init__(step.where)
        for k, (v, vloc, kloc) in step.data.items():
            self[k], self.value_where[k], self.key_where[k] = v, vloc, kloc


def _fractions(ctx: Collector, value, loc, path: str):
    if not isinstance(value, YamlMap) or len(value) < 2:
        ctx.add(loc, path, "fractions maps two or more branch names to fractions, e.g. {to-a: 0.7, to-b: 0.3}")
        return None
    out, ok = {}, True
    for name, frac in value.items():
        if not ID_PATTERN.match(name):
            ctx.add(value.key_where[name], path, f"branch name {name!r} must be letters, digits, '-' and '_'")
            ok = False
        f = ctx.quantity(frac, "fraction", value.loc(name), path, f"fraction of branch {name}")
        if f is None:
            ok = False
        elif not 0.0 < f < 1.0:
            ctx.add(value.loc(name), path, f"fraction of branch {name} = {_shown(frac)} must lie strictly between "
                                           f"0 and 1 (a branch with no flow is no branch)")
            ok = False
        else:
            out[name] = f
    if ok and abs(sum(out.values()) - 1.0) > SUM_TOL:
        ctx.add(loc, path, f"the split fractions sum to {sum(out.values()):.9g}, not 1 (tolerance {SUM_TOL:g})")
        ok = False
    return frozen_map(out) if ok else None


def _solubility(ctx: Collector, value, loc, path: str):
    if not isinstance(value, YamlMap):
        ctx.add(loc, path, "solubility takes the Chrastil constants {k: 10.7, a: -18708 K, b: 40.4} (user-supplied)")
        return None
    ctx.check_keys(value, ("k", "a", "b"), path, "solubility")
    out, ok = {}, True
    for key, kind in (("k", "dimensionless"), ("a", "temperature_difference"), ("b", "dimensionless")):
        if key not in value:
            ctx.add(value.where, path, f"solubility needs {key} (Chrastil constants k, a [K], b)")
            ok = False
            continue
        raw = value[key]
        if key == "a" and isinstance(raw, (int, float)) and not isinstance(raw, bool):
            raw = f"{raw} K"  # a is in kelvin; a bare number is read as K
        v = ctx.quantity(raw, kind, value.loc(key), path, f"solubility {key}")
        if v is None:
            ok = False
        else:
            out[key] = v
    if ok and not out["k"] > 0:
        ctx.add(value.loc("k"), path, "solubility k (association number) must be above zero")
        ok = False
    return frozen_map(out) if ok else None


def _step_params(ctx: Collector, kind: StepKind, step: RawStep, path: str, feed_ids) -> tuple[dict, dict]:
    params, where = {}, {}
    for p in kind.params:
        if p.name in step.data:
            v = _param(ctx, p, step, path, feed_ids)
            if v is not None:
                params[p.name] = v
                where[p.name] = step.loc(p.name)
        elif p.required:
            ctx.add(step.where, path, f"{kind.name} needs {p.name} ({p.doc})")
    given = set(step.data)
    for group in kind.exactly_one:
        present = [g for g in group if g in given]
        if not present:
            ctx.add(step.where, path, f"{kind.name} needs one of {_or(group)}; add e.g. {_example(kind, group[0])}")
        elif len(present) > 1:
            ctx.add(step.key_loc(present[1]), path, f"give only one of {_or(group)} ({' and '.join(present)} given)")
    for group in kind.at_most_one:
        present = [g for g in group if g in given]
        if len(present) > 1:
            ctx.add(step.key_loc(present[1]), path, f"give at most one of {_or(group)} ({' and '.join(present)} given)")
    for a, b in kind.requires:
        if a in given and b not in given:
            ctx.add(step.key_loc(a), path, f"{a} needs {b} as well")
    for p in kind.params:  # defaults, when no member of the parameter's group is given
        if p.default is not None and p.name not in given and not (set(kind.group_of(p.name)) & given):
            params[p.name] = p.default
    if kind.name == "compress" and params.get("stages", 1) < 2:
        for key in ("intercool_T", "intercool_dp"):
            if key in given:
                ctx.add(step.key_loc(key), path, f"{key} needs stages: 2 or more (intercoolers sit between stages)")
    if kind.name == "pipe" and {"roughness", "diameter"} <= set(params) and params["roughness"] >= params["diameter"]:
        ctx.add(step.loc("roughness"), path, "roughness must be much smaller than the diameter (e.g. 0.045 mm)")
    if kind.name == "pipe" and {"elevation_change", "length"} <= set(params) \
            and abs(params["elevation_change"]) > params["length"]:
        ctx.add(step.loc("elevation_change"), path, "the elevation change cannot exceed the pipe length")
    return params, where


_EXAMPLES = {"p_out": "p_out: 80 bar", "ratio": "ratio: 3", "dp": "dp: 2 bar", "T_out": "T_out: 45 degC",
             "hot_T_out": "hot_T_out: 60 degC", "feed": "feed: feed-1"}


def _example(kind: StepKind, name: str) -> str:
    return _EXAMPLES.get(name, f"{name}: ...")


def _or(group) -> str:
    return ", ".join(group[:-1]) + f" or {group[-1]}" if len(group) > 1 else group[0]


def validate_route_steps(ctx: Collector, route: RawRoute, feed_ids) -> RouteSpec | None:
    """Check the steps of a resolved route and build its RouteSpec (None if anything was wrong)."""
    n_before = len(ctx.problems)
    checked = []  # (raw, path, id, kind, params, where, limits)
    first_at: dict[str, Location] = {}
    for i, step in enumerate(route.steps):
        path = f"{route.path} steps[{i}]"
        sid = ctx.ident(step.get("id"), step.loc("id"), path, "the step")
        if sid is not None:
            path = f"{path} ({sid})"
            if sid in first_at:
                ctx.add(step.loc("id"), path, f"step id {sid!r} is used twice in this route (first at line "
                                              f"{first_at[sid].line}); step ids must be unique")
                sid = None
            else:
                first_at[sid] = step.loc("id")
        kind = _kind_of(ctx, step, path)
        if kind is None:
            checked.append((step, path, sid, None, {}, {}, {}))
            continue
        allowed = STEP_COMMON_KEYS + tuple(p.name for p in kind.params)
        for key in step.data:
            if key not in allowed:
                others = [k.name for k in STEP_KINDS.values() if k.param(key)]
                note = f" ({key} belongs to {_or(others)})" if others else ""
                ctx.add(step.key_loc(key), path, f"unknown key {key!r} for a {kind.name} step{note}."
                                                 f"{did_you_mean(key, allowed)} Valid keys: {', '.join(allowed)}.")
        if kind.name == "feed" and "feed" not in step.data and len(feed_ids) == 1:
            step = step.copy()
            step.data["feed"] = (feed_ids[0], step.where, step.where)
        elif kind.name == "feed" and "feed" not in step.data:
            ctx.add(step.where, path, f"a feed step names its feed: feed: <id>; feeds: {', '.join(feed_ids) or '-'}")
        params, where = _step_params(ctx, kind, step, path, feed_ids)
        limits = _limits(ctx, step.get("limits"), step.loc("limits"), path + " limits") if "limits" in step.data \
            else {}
        checked.append((step, path, sid, kind, params, where, limits))

    outlets = {}
    for step, path, sid, kind, params, *_ in checked:
        if sid is not None:
            outlets[sid] = None if kind is None else (
                tuple(params["fractions"]) if kind.name == "split" and "fractions" in params
                else None if kind.outlets is None else kind.outlets)
    used: dict[tuple[str, str], str] = {}
    specs = []
    for step, path, sid, kind, params, where, limits in checked:
        if kind is None:
            continue
        inputs = _inputs(ctx, step, path, sid, kind, outlets, route, used)
        if sid is None or inputs is None:
            continue
        outs = kind.outlets if kind.outlets is not None else tuple(params.get("fractions", ()))
        specs.append(StepSpec(id=sid, kind=kind.name, inputs=inputs, outputs=outs, params=frozen_map(params),
                              limits=frozen_map(limits), description=str(step.get("description", "") or ""),
                              where=step.where, param_where=frozen_map(where)))
    if len(ctx.problems) > n_before:
        return None
    return RouteSpec(id=route.id, steps=tuple(specs), description=route.description, based_on=route.based_on,
                     where=route.where)


def _inputs(ctx: Collector, step: RawStep, path: str, sid, kind: StepKind, outlets, route: RawRoute, used):
    value, loc = step.get("from"), step.loc("from")
    fpath = path + " from"
    if kind.inlets == "none":
        if "from" in step.data and not step.implicit_from:
            ctx.add(step.key_loc("from"), fpath, "a feed step starts a route and takes no from:; remove it")
            return None
        return ()
    if "from" not in step.data:
        ctx.add(step.where, path, "the step has no from: (nothing before it in the list); write from: <step-id>, "
                                  "or start the route with a step of kind feed")
        return None
    if kind.inlets == "one":
        if not isinstance(value, str):
            more = "; to join streams use a mix step" if isinstance(value, YamlList) else ""
            ctx.add(loc, fpath, f"a {kind.name} step takes one inlet: from: <step-id> or <step-id>.<port>; got "
                                f"{_shown(value)}{more}")
            return None
        refs = [(value, loc, "in")]
    elif kind.inlets == "many":
        if not isinstance(value, YamlList) or len(value) < 2:
            ctx.add(loc, fpath, f"a mix step joins two or more streams: from: [a, b]; got {_shown(value)}")
            return None
        refs = [(v, value.loc(j), f"in{j + 1}") for j, v in enumerate(value)]
    else:
        if not isinstance(value, YamlMap) or set(value) != {"hot", "cold"}:
            ctx.add(loc, fpath, f"an exchange step takes from: {{hot: <step-id>, cold: <step-id>}}; got "
                                f"{_shown(value) if not isinstance(value, YamlMap) else 'keys ' + ', '.join(value)}")
            return None
        refs = [(value["hot"], value.loc("hot"), "hot"), (value["cold"], value.loc("cold"), "cold")]
    out, ok = [], True
    for ref, rloc, inlet in refs:
        port_ref = _port_ref(ctx, ref, rloc, fpath, sid, outlets, route, step.implicit_from)
        if port_ref is None:
            ok = False
            continue
        key = (port_ref[0], port_ref[1])
        if key in used and used[key] != sid:
            ctx.add(rloc, fpath, f"outlet {key[0]}.{key[1]} already feeds step {used[key]!r}; an outlet feeds one "
                                 f"step (divide a stream with a split step)")
            ok = False
            continue
        used[key] = sid
        out.append(PortRef(port_ref[0], port_ref[1], inlet))
    return tuple(out) if ok else None


def _port_ref(ctx: Collector, ref, loc, path: str, sid, outlets, route: RawRoute, implicit: bool):
    if not isinstance(ref, str) or not ref:
        ctx.add(loc, path, f"from names a step as <step-id> or <step-id>.<port>; got {_shown(ref)}")
        return None
    src, _, port = ref.rpartition(".") if "." in ref else (ref, "", "")
    if src not in outlets:
        if src in route.removed:
            ctx.add(loc, path, f"from names {src!r}, which this route removes; give the step a new from: under "
                               f"changes:")
        else:
            ids = [k for k in outlets if k]
            ctx.add(loc, path, f"from names {src!r}, which is not a step of route {route.id!r}.{did_you_mean(src, ids)}"
                               f" Steps: {', '.join(ids)}.")
        return None
    if src == sid:
        ctx.add(loc, path, f"step {sid!r} cannot take its inlet from itself")
        return None
    ports = outlets[src]
    if ports is None:  # the source has problems of its own, already reported
        return None
    if not ports:
        ctx.add(loc, path, f"{src!r} is a sink (the end of a route) and has no outlet")
        return None
    if not port:
        if len(ports) == 1:
            return src, ports[0]
        lead = f"the step has no from: and follows {src!r}" if implicit else f"{src!r}"
        ctx.add(loc, path, f"{lead}, which has outlets {', '.join(ports)}: write from: "
                           f"{' or '.join(f'{src}.{p}' for p in ports)}")
        return None
    if port not in ports:
        ctx.add(loc, path, f"{src!r} has no outlet {port!r}.{did_you_mean(port, ports)} Its outlets: "
                           f"{', '.join(ports)}.")
        return None
    return src, port


# --- the sweep section ------------------------------------------------------------------------------------

SWEEP_KEYS = ("routes", "combine", "max_variants", "vary")
AXIS_KEYS = ("setting", "values", "range", "log_range")
SWEEP_SECTIONS = ("steps", "feeds", "limits")
FEED_SETTINGS = {"T": "temperature", "p": "pressure", "flow": "flow"}
MAX_AXIS_VALUES = 100_000  # values of one axis; refused before they are built
_STEP_OF_KIND = {"temperature": "temperature_difference", "pressure": "pressure_difference"}
_NOT_SWEPT = ("str", "feed_ref", "fractions", "solubility", "density_window")


@dataclass
class _Target:
    """A resolved sweep setting: its quantity kind and the checks every value must pass."""

    text: str
    kind: str
    params: tuple = ()  # (Param, StepSpec) pairs of a step setting
    positive: bool = False  # limits of difference/ratio kinds, feed flows


def _sweep_target(ctx: Collector, text, loc, path: str, routes, feeds, complete: bool) -> _Target | None:
    example = "steps.<step-id>.<parameter>, feeds.<feed-id>.T|p|flow or limits.<name>"
    if not isinstance(text, str) or not text.strip():
        ctx.add(loc, path, f"a setting is written {example}; got {_shown(text)}")
        return None
    parts = text.split(".")
    head = parts[0]
    if head not in SWEEP_SECTIONS:
        ctx.add(loc, path, f"setting {text!r} starts with {head!r}.{did_you_mean(head, SWEEP_SECTIONS)} Write "
                           f"{example}.")
        return None
    if head == "limits":
        if len(parts) != 2:
            ctx.add(loc, path, f"setting {text!r}: a limit is written limits.<name>, e.g. limits.max_discharge_T")
            return None
        f = LIMIT_FIELDS.get(parts[1])
        if f is None:
            ctx.add(loc, path, f"unknown limit {parts[1]!r}.{did_you_mean(parts[1], LIMIT_FIELDS)} "
                               f"Valid: {', '.join(LIMIT_FIELDS)}.")
            return None
        kind = f.metadata["kind"]
        return _Target(text, kind, positive=kind in ("temperature_difference", "pressure_difference", "ratio"))
    if len(parts) != 3:
        what = "steps.<step-id>.<parameter>, e.g. steps.pump-1.p_out" if head == "steps" else \
            "feeds.<feed-id>.T, .p or .flow"
        ctx.add(loc, path, f"setting {text!r} has {len(parts)} parts; write {what}")
        return None
    _, ident, name = parts
    if head == "feeds":
        ids = [f.id for f in feeds]
        if ident not in ids:
            ctx.add(loc, path, f"setting {text!r}: {ident!r} is not a feed.{did_you_mean(ident, ids)} Feeds: "
                               f"{', '.join(ids) or '(none valid)'}.")
            return None
        if name not in FEED_SETTINGS:
            ctx.add(loc, path, f"setting {text!r}: a feed's {name!r} cannot be swept.{did_you_mean(name, FEED_SETTINGS)}"
                               f" Sweepable: T, p, flow.")
            return None
        return _Target(text, FEED_SETTINGS[name], positive=name == "flow")
    found = [(rt, st) for rt in routes for st in rt.steps if st.id == ident]
    if not found:
        if complete:
            ids = list(dict.fromkeys(st.id for rt in routes for st in rt.steps))
            names = ", ".join(rt.id for rt in routes)
            ctx.add(loc, path, f"setting {text!r}: no step {ident!r} in the swept routes ({names})."
                               f"{did_you_mean(ident, ids)}")
        return None
    params = []
    for rt, st in found:
        kind = STEP_KINDS[st.kind]
        p = kind.param(name)
        if p is None:
            numeric = [q.name for q in kind.params if q.kind not in _NOT_SWEPT]
            ctx.add(loc, path, f"setting {text!r}: a {kind.name} step has no parameter {name!r}."
                               f"{did_you_mean(name, numeric)} Its numeric parameters: "
                               f"{', '.join(numeric) or '(none)'}.")
            return None
        if p.kind in _NOT_SWEPT:
            ctx.add(loc, path, f"setting {text!r}: {name} is not a number ({p.kind}); only numeric settings can "
                               f"be swept")
            return None
        params.append((p, st))
    kinds = {p.kind for p, _ in params}
    if len(kinds) > 1:
        ctx.add(loc, path, f"setting {text!r}: {name} means different quantities in the swept routes "
                           f"({', '.join(sorted(kinds))}); sweep one route at a time (sweep routes:)")
        return None
    return _Target(text, params[0][0].kind, params=tuple(params))


def _sweep_value_problem(target: _Target, v) -> str | None:
    """Why the SI value ``v`` cannot be given to ``target`` (None when it can)."""
    if target.positive and not v > 0:
        return f"{target.text} must be above zero"
    for p, st in target.params:
        bad = ((p.low is not None and (v < p.low or (p.low_open and v == p.low)))
               or (p.high is not None and (v > p.high or (p.high_open and v == p.high))))
        if bad:
            return f"{target.text} = {v:g} (SI) is outside its range {p.range_text()}"
        if st.kind == "compress" and p.name == "stages" and v < 2 and \
                ({"intercool_T", "intercool_dp"} & set(st.params)):
            return f"{target.text} = {v}: step {st.id} has intercoolers, which need stages: 2 or more"
    return None


def _sweep_number(ctx: Collector, raw, kind: str, loc, path: str, what: str):
    """One value of an axis in SI (int for counts), or None after recording the problem."""
    if kind == "int":
        if isinstance(raw, bool) or not isinstance(raw, int):
            ctx.add(loc, path, f"{what} is a whole number, e.g. 3; got {_shown(raw)}")
            return None
        return raw
    if kind == "flow":
        try:
            return parse_quantity_of(raw, ("mass_flow", "molar_flow"), what)
        except InputError as exc:
            ctx.add(loc, path, exc.detail)
            return None
    return ctx.quantity(raw, kind, loc, path, what)


def _round12(v: float) -> float:
    return float(f"{v:.12g}")


def _axis_values(ctx: Collector, item: YamlMap, kind: str, path: str):
    """(values in SI, kind, written text) of one axis, or None after recording problems."""
    given = [k for k in ("values", "range", "log_range") if k in item]
    if len(given) != 1:
        if given:
            ctx.add(item.key_where[given[1]], path, f"give only one of values, range or log_range "
                                                    f"({' and '.join(given)} given)")
        else:
            ctx.add(item.where, path, "give the values: values: [250 bar, 300 bar], range: {from: 100 bar, to: "
                                      "400 bar, step: 10 bar} or log_range: {from: 1 bar, to: 100 bar, points: 9}")
        return None
    how, node, loc = given[0], item[given[0]], item.loc(given[0])
    vpath = f"{path} {how}"
    flow_kinds = set()

    def number(raw, where, what, k=kind):
        v = _sweep_number(ctx, raw, k, where, vpath, what)
        if isinstance(v, tuple):
            flow_kinds.add(v[1])
            v = v[0]
        return v

    if how == "values":
        if not isinstance(node, YamlList) or not node:
            ctx.add(loc, vpath, "values is a list, e.g. values: [250 bar, 300 bar]")
            return None
        vals = [number(raw, node.loc(i), f"value {i + 1}") for i, raw in enumerate(node)]
        if None in vals:
            return None
        written = "values " + ", ".join(str(raw) for raw in node)
    else:
        keys = ("from", "to", "step") if how == "range" else ("from", "to", "points")
        if not ctx.expect_map(node, loc, vpath, how, "{from: 100 bar, to: 400 bar, step: 10 bar}" if how == "range"
                              else "{from: 1 bar, to: 100 bar, points: 9}"):
            return None
        ctx.check_keys(node, keys, vpath, how)
        missing = [k for k in keys if k not in node]
        if missing:
            ctx.add(node.where, vpath, f"{how} needs {', '.join(keys)}; {', '.join(missing)} missing")
            return None
        lo, hi = number(node["from"], node.loc("from"), f"{how} from"), number(node["to"], node.loc("to"), f"{how} to")
        if how == "range":
            step_kind = "int" if kind == "int" else _STEP_OF_KIND.get(kind, kind)
            step = number(node["step"], node.loc("step"), f"{how} step", step_kind)
        else:
            step = _sweep_number(ctx, node["points"], "int", node.loc("points"), vpath, "log_range points")
        if None in (lo, hi, step):
            return None
        if how == "range":
            if not step > 0:
                ctx.add(node.loc("step"), vpath, f"range step must be above zero; got {_shown(node['step'])}")
                return None
            if hi < lo:
                ctx.add(node.loc("to"), vpath, f"range to ({_shown(node['to'])}) is below from "
                                               f"({_shown(node['from'])}); write from the low value to the high one")
                return None
            n = int(math.floor((hi - lo) / step * (1.0 + 1e-12) + 1e-9)) + 1
        else:
            if kind == "int":
                ctx.add(loc, vpath, "a count (such as stages) takes values: or range:, not log_range:")
                return None
            if not step >= 2:
                ctx.add(node.loc("points"), vpath, f"log_range points must be 2 or more; got {_shown(step)}")
                return None
            if not (lo > 0 and hi > 0):
                ctx.add(node.where, vpath, "log_range from and to must both be above zero")
                return None
            n = step
        if n > MAX_AXIS_VALUES:
            ctx.add(loc, vpath, f"{how} gives {n:,} values on one axis (more than {MAX_AXIS_VALUES:,}); use a larger "
                                f"step or fewer points")
            return None
        if how == "range":
            vals = [lo + i * step if kind == "int" else _round12(lo + i * step) for i in range(n)]
            written = f"range {node['from']} .. {node['to']} step {node['step']}"
        else:
            vals = [_round12(lo * (hi / lo) ** (i / (n - 1))) for i in range(n)]
            written = f"log range {node['from']} .. {node['to']}, {n} points"
    if len(flow_kinds) > 1:
        ctx.add(loc, vpath, "flows of one setting are all mass flows or all molar flows; do not mix kg/h and kmol/h")
        return None
    if kind == "flow":
        kind = flow_kinds.pop() if flow_kinds else "mass_flow"
    if len(set(vals)) != len(vals):
        dup = next(v for v in vals if vals.count(v) > 1)
        ctx.add(loc, vpath, f"the value {dup:g} (SI) appears twice; every value of a setting is swept once")
        return None
    return vals, kind, written


def check_sweep(ctx: Collector, node, location, routes, feeds, feed_ids, complete: bool) -> SweepSpec | None:
    """Check a ``sweep:`` section against the validated routes, feeds and limits; a SweepSpec (None after
    recording problems). ``complete`` says every route validated (else unknown step ids are not reported,
    as the route's own problems come first)."""
    path = "sweep"
    if not ctx.expect_map(node, location, path, "sweep", "{vary: [{setting: steps.pump-1.p_out, values: "
                                                       "[250 bar, 300 bar]}]}"):
        return None
    ctx.check_keys(node, SWEEP_KEYS, path, "sweep")
    n_before = len(ctx.problems)
    route_ids = [r.id for r in routes]
    chosen = route_ids
    if "routes" in node:
        raw = node["routes"]
        items = [raw] if isinstance(raw, str) else list(raw) if isinstance(raw, YamlList) and raw else None
        if items is None:
            ctx.add(node.loc("routes"), path + " routes", f"routes is a list of route ids, e.g. "
                                                          f"[{', '.join(route_ids[:2]) or 'base'}]; got {_shown(raw)}")
        else:
            chosen = []
            for i, rid in enumerate(items):
                rloc = raw.loc(i) if isinstance(raw, YamlList) else node.loc("routes")
                if not isinstance(rid, str) or rid not in route_ids:
                    if complete:
                        ctx.add(rloc, path + " routes", f"{_shown(rid)} is not a route.{did_you_mean(rid, route_ids)}"
                                                        f" Routes: {', '.join(route_ids)}.")
                elif rid in chosen:
                    ctx.add(rloc, path + " routes", f"route {rid!r} is listed twice")
                else:
                    chosen.append(rid)
    swept_routes = [r for r in routes if r.id in chosen] or list(routes)
    combine = ctx.text(node, "combine", path + " combine", "grid") or "grid"
    if combine not in SWEEP_COMBINE:
        ctx.add(node.loc("combine"), path + " combine", f"combine {combine!r} is not grid (every combination) or "
                                                        f"paired (the i-th values together).{did_you_mean(combine, SWEEP_COMBINE)}")
    max_variants = MAX_VARIANTS_DEFAULT
    if "max_variants" in node:
        mv = node["max_variants"]
        if isinstance(mv, bool) or not isinstance(mv, int) or mv < 1:
            ctx.add(node.loc("max_variants"), path + " max_variants", f"max_variants is a whole number above zero, "
                                                                      f"e.g. 20000; got {_shown(mv)}")
        else:
            max_variants = mv
    axes = []
    if "vary" not in node:
        ctx.add(node.where, path, "the sweep has no vary:; list the settings to vary, e.g. vary: [{setting: "
                                  "steps.pump-1.p_out, values: [250 bar, 300 bar]}]")
    elif not isinstance(node["vary"], YamlList) or not node["vary"]:
        ctx.add(node.loc("vary"), path + " vary", f"vary is a list of settings with their values; got "
                                                  f"{_shown(node['vary'])}")
    else:
        seen: dict[str, Location] = {}
        vary = node["vary"]
        for i, item in enumerate(vary):
            apath = f"{path} vary[{i}]"
            if not ctx.expect_map(item, vary.loc(i), apath, "a swept setting", "{setting: steps.pump-1.p_out, "
                                                                               "values: [250 bar, 300 bar]}"):
                continue
            ctx.check_keys(item, AXIS_KEYS, apath, "a swept setting")
            if "setting" not in item:
                ctx.add(item.where, apath, "name the setting: setting: steps.<step-id>.<parameter> (or a list of "
                                           "settings moved together)")
                continue
            raw = item["setting"]
            texts = [(raw, item.loc("setting"))] if not isinstance(raw, YamlList) else \
                [(t, raw.loc(j)) for j, t in enumerate(raw)]
            if not texts:
                ctx.add(item.loc("setting"), apath, "setting is empty; name one or more settings")
                continue
            targets = []
            for text, tloc in texts:
                t = _sweep_target(ctx, text, tloc, apath + " setting", swept_routes, feeds, complete)
                if t is None:
                    continue
                if t.text in seen:
                    ctx.add(tloc, apath + " setting", f"{t.text} is swept twice (first at line {seen[t.text].line}); "
                                                      f"sweep each setting once")
                    continue
                seen[t.text] = tloc
                targets.append(t)
            if len(targets) != len(texts):
                continue
            kinds = {"flow" if t.kind == "flow" else t.kind for t in targets}
            if len(kinds) > 1:
                ctx.add(item.loc("setting"), apath + " setting", f"settings moved together must be the same quantity; "
                                                                 f"these are {', '.join(sorted(kinds))}")
                continue
            got = _axis_values(ctx, item, targets[0].kind, apath)
            if got is None:
                continue
            vals, kind, written = got
            bad = [(v, t, why) for v in vals for t in targets if (why := _sweep_value_problem(t, v))]
            if bad:
                where = item.loc(next(k for k in ("values", "range", "log_range") if k in item))
                ctx.add(where, apath, bad[0][2] + (f" ({len(bad)} values out of range)" if len(bad) > 1 else ""))
                continue
            axes.append(SweepAxis(tuple(t.text for t in targets), kind, tuple(vals), written, item.where))
    if len(ctx.problems) > n_before or not axes:
        return None
    spec = SweepSpec(tuple(axes), combine, tuple(chosen), max_variants, node.where)
    if combine == "paired" and len({len(a.values) for a in axes}) > 1:
        lens = ", ".join(f"{a.name}: {len(a.values)}" for a in axes)
        ctx.add(node.loc("combine"), path + " combine", f"paired settings need the same number of values ({lens}); "
                                                        f"make them equal or use combine: grid")
        return None
    if spec.count > max_variants:
        sizes = " x ".join(str(len(a.values)) for a in axes) if combine == "grid" else "paired"
        ctx.add(node.loc("max_variants") if "max_variants" in node else node.where, path,
                f"the sweep has {spec.count:,} variants ({sizes}), more than max_variants {max_variants:,}; use "
                f"coarser steps or fewer values, or raise max_variants if you mean it")
        return None
    return spec
