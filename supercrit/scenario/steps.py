"""Checks of the steps of a resolved route: step ids, kinds and their parameters, and the connections.

Each step's kind (an unknown kind gets a suggestion, synonyms such as ``compressor`` included), its
keys and parameter values against the table of step kinds (:data:`~supercrit.scenario.schema.STEP_KINDS`:
units, ranges, exclusive and required groups, defaults), its ``limits:``, and its ``from:`` (inlets,
ports, outlets used once); the result is a :class:`~supercrit.scenario.schema.RouteSpec`.
"""
from __future__ import annotations

from ..io import Location, YamlList, YamlMap
from .fluid import check_limits
from .problems import ID_PATTERN, SUM_TOL, Collector, did_you_mean, shown
from .routes import RawRoute, RawStep
from .schema import KIND_SYNONYMS, STEP_KINDS, Param, PortRef, RouteSpec, StepKind, StepSpec, frozen_map

STEP_COMMON_KEYS = ("id", "kind", "from", "description", "limits")


def _kind_of(ctx: Collector, step: RawStep, path: str) -> StepKind | None:
    if "kind" not in step.data:
        ctx.add(step.where, path, f"the step has no kind:; valid kinds: {', '.join(STEP_KINDS)}")
        return None
    kind = step.get("kind")
    if isinstance(kind, str) and kind in STEP_KINDS:
        return STEP_KINDS[kind]
    key = str(kind).strip().lower().replace(" ", "_").replace("-", "_")
    hint = f" Did you mean {KIND_SYNONYMS[key]!r}?" if key in KIND_SYNONYMS else did_you_mean(kind, STEP_KINDS)
    ctx.add(step.loc("kind"), path, f"unknown step kind {shown(kind)}.{hint} Valid kinds: {', '.join(STEP_KINDS)}.")
    return None


def _check_range(ctx: Collector, p: Param, v: float, loc, path: str, written) -> bool:
    bad = ((p.low is not None and (v < p.low or (p.low_open and v == p.low)))
           or (p.high is not None and (v > p.high or (p.high_open and v == p.high))))
    if bad:
        extra = {"efficiency": " (0.75 means 75 %)", "polytropic_efficiency": " (0.8 means 80 %)",
                 "ratio": " (outlet over inlet for compress; inlet over outlet for expand)"}.get(p.name, "")
        unit = "" if p.kind in ("fraction", "ratio", "dimensionless", "int") else " in SI"
        ctx.add(loc, path, f"{p.name} = {shown(written)} is outside its range {p.range_text()}{unit}{extra}")
    return not bad


def _param(ctx: Collector, p: Param, step: RawStep, path: str, feed_ids) -> object:
    value, loc = step.get(p.name), step.loc(p.name)
    ppath = f"{path} {p.name}"
    if p.kind == "int":
        if isinstance(value, bool) or not isinstance(value, int):
            ctx.add(loc, ppath, f"{p.name} is a whole number, e.g. {p.name}: 3; got {shown(value)}")
            return None
        return value if _check_range(ctx, p, value, loc, ppath, value) else None
    if p.kind == "str":
        return ctx.text(RawMap(step), p.name, ppath) or None
    if p.kind == "feed_ref":
        if not isinstance(value, str) or value not in feed_ids:
            ctx.add(loc, ppath, f"feed {shown(value)} is not a feed id.{did_you_mean(value, feed_ids)} "
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
            ctx.add(value.loc(name), path, f"fraction of branch {name} = {shown(frac)} must lie strictly between "
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
        limits = check_limits(ctx, step.get("limits"), step.loc("limits"), path + " limits") if "limits" in step.data \
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
                                f"{shown(value)}{more}")
            return None
        refs = [(value, loc, "in")]
    elif kind.inlets == "many":
        if not isinstance(value, YamlList) or len(value) < 2:
            ctx.add(loc, fpath, f"a mix step joins two or more streams: from: [a, b]; got {shown(value)}")
            return None
        refs = [(v, value.loc(j), f"in{j + 1}") for j, v in enumerate(value)]
    else:
        if not isinstance(value, YamlMap) or set(value) != {"hot", "cold"}:
            ctx.add(loc, fpath, f"an exchange step takes from: {{hot: <step-id>, cold: <step-id>}}; got "
                                f"{shown(value) if not isinstance(value, YamlMap) else 'keys ' + ', '.join(value)}")
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
        ctx.add(loc, path, f"from names a step as <step-id> or <step-id>.<port>; got {shown(ref)}")
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
