"""Checks of the ``routes:`` section's structure: routes written in full or derived (``based_on``).

Each route id, its ``steps:`` list (a step without ``from`` follows the one before it) and, for a
derived route, its base (unknown names and cycles), ``remove:``, ``changes:`` and ``add:``; the
result is every route as a full list of raw steps, checked step by step in :mod:`.steps`.
"""
from __future__ import annotations

from dataclasses import dataclass

from ..io import Location, YamlList, YamlMap
from .problems import Collector, did_you_mean, shown
from .schema import STEP_KINDS, StepKind

ROUTE_KEYS = ("id", "description", "steps", "based_on", "changes", "remove", "add")


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
                                f"got {shown(node)}")
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
        ctx.add(location, "routes", "routes: is a list of routes, each {id: ..., steps: [...]}; got " + shown(node))
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
            ctx.add(item.loc("based_on"), path, f"based_on names {shown(base_id)}, which is not a route id."
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
                ctx.add(loc, path + " remove", f"{shown(sid)} is not a step of route {base.id!r}."
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
