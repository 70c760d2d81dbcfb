"""Checks of the optional ``sweep:`` section against the validated routes, feeds and limits.

Each swept setting (``steps.<id>.<parameter>``, ``feeds.<id>.T|p|flow``, ``limits.<name>``), its
values (``values``, ``range`` or ``log_range``, in range for every step it reaches), the routes
swept, ``combine`` (grid or paired), the count of variants and the ``max_variants`` guard.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

from ..errors import InputError
from ..io import Location, YamlList, YamlMap
from ..units import parse_quantity_of
from .problems import Collector, did_you_mean, shown
from .schema import LIMIT_FIELDS, MAX_VARIANTS_DEFAULT, STEP_KINDS, SWEEP_COMBINE, SweepAxis, SweepSpec

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
        ctx.add(loc, path, f"a setting is written {example}; got {shown(text)}")
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
            ctx.add(loc, path, f"{what} is a whole number, e.g. 3; got {shown(raw)}")
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
                ctx.add(node.loc("step"), vpath, f"range step must be above zero; got {shown(node['step'])}")
                return None
            if hi < lo:
                ctx.add(node.loc("to"), vpath, f"range to ({shown(node['to'])}) is below from "
                                               f"({shown(node['from'])}); write from the low value to the high one")
                return None
            n = int(math.floor((hi - lo) / step * (1.0 + 1e-12) + 1e-9)) + 1
        else:
            if kind == "int":
                ctx.add(loc, vpath, "a count (such as stages) takes values: or range:, not log_range:")
                return None
            if not step >= 2:
                ctx.add(node.loc("points"), vpath, f"log_range points must be 2 or more; got {shown(step)}")
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
                                                          f"[{', '.join(route_ids[:2]) or 'base'}]; got {shown(raw)}")
        else:
            chosen = []
            for i, rid in enumerate(items):
                rloc = raw.loc(i) if isinstance(raw, YamlList) else node.loc("routes")
                if not isinstance(rid, str) or rid not in route_ids:
                    if complete:
                        ctx.add(rloc, path + " routes", f"{shown(rid)} is not a route.{did_you_mean(rid, route_ids)}"
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
                                                                      f"e.g. 20000; got {shown(mv)}")
        else:
            max_variants = mv
    axes = []
    if "vary" not in node:
        ctx.add(node.where, path, "the sweep has no vary:; list the settings to vary, e.g. vary: [{setting: "
                                  "steps.pump-1.p_out, values: [250 bar, 300 bar]}]")
    elif not isinstance(node["vary"], YamlList) or not node["vary"]:
        ctx.add(node.loc("vary"), path + " vary", f"vary is a list of settings with their values; got "
                                                  f"{shown(node['vary'])}")
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
