"""Checks of the ``fluid:``, ``feeds:`` (or ``feed:``) and ``limits:`` sections of a scenario.

Component names and fractions (sum to 1, mass basis converted to mole), the model name, k_ij values
and sets; each feed's id, T, p, flow and composition; limit overrides (also used under a step's
``limits:``).
"""
from __future__ import annotations

from ..errors import DataError, InputError
from ..io import YamlList, YamlMap
from ..units import noun, parse_quantity_of
from .problems import SUM_TOL, Collector, did_you_mean, shown
from .schema import LIMIT_FIELDS, FeedSpec, FluidSpec, frozen_map

FLUID_KEYS = ("components", "basis", "model", "kij", "kij_set")
FEED_KEYS = ("id", "description", "T", "p", "flow", "composition")


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


def check_fluid(ctx: Collector, node, location) -> FluidSpec | None:
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


def check_feeds(ctx: Collector, data: YamlMap, fluid: FluidSpec | None) -> tuple[list[FeedSpec], list[str]]:
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
                    ctx.add(item.loc("flow"), path + " flow", f"flow {shown(item['flow'])} must be above zero")
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


def check_limits(ctx: Collector, node, location, path: str) -> dict[str, float]:
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
