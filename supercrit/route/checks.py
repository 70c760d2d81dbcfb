"""Checks of a route graph, and the choice of tear streams for its recycles.

:func:`check_route` raises one :class:`~supercrit.errors.InputError` listing every problem found
(each naming the step's file:line), or returns the evaluation plan: the tear streams and the order
in which the steps are computed.

Tear-stream rule (documented choice): the loops are the simple cycles of the graph
(``networkx.simple_cycles``). A tear set is a set of streams whose removal leaves no cycle; supercrit
takes one of minimum size (exhaustive search over the streams that lie on a loop, by increasing
size). Among minimum sets it prefers (1) the most streams written as recycles, i.e. whose source
step is written at or after the receiving step (``from:`` naming a later step, as engineers write
a solvent return), then (2) the streams whose receiving steps come first in the file. Beyond
``MAX_EXACT`` candidate streams the search is greedy (repeatedly tear the stream on most remaining
loops, same tie-break); the plan says which rule was used.
"""
from __future__ import annotations

import itertools
from dataclasses import dataclass

import networkx as nx

from ..errors import InputError
from ..scenario import STEP_KINDS
from .build import where_of

MAX_EXACT = 16  # candidate streams up to which the minimum tear set is searched exhaustively (speed bound)
MAX_CYCLES = 2000  # loops enumerated before the search falls back to the greedy rule


@dataclass(frozen=True)
class RoutePlan:
    """How a checked route is evaluated.

    Attributes
    ----------
    tears : tuple of (src, dst)
        Torn streams (edges); empty for a route without recycles.
    order : tuple of str
        Step ids in evaluation order (topological after removing the torn streams).
    loops : tuple of tuple of str
        The loops found (each a tuple of step ids).
    tear_rule : str
        ``"minimum"`` (exhaustive) or ``"greedy"``.
    """

    tears: tuple[tuple[str, str], ...]
    order: tuple[str, ...]
    loops: tuple[tuple[str, ...], ...]
    tear_rule: str


def _expected_inlets(kind, spec):
    if kind.inlets == "none":
        return set(), "no inlet"
    if kind.inlets == "one":
        return {"in"}, "one inlet 'in'"
    if kind.inlets == "hot_cold":
        return {"hot", "cold"}, "inlets 'hot' and 'cold'"
    n = len(spec.inputs)
    return {f"in{i + 1}" for i in range(max(n, 2))}, "two or more inlets 'in1', 'in2', ..."


def _outlets(kind, spec) -> tuple[str, ...]:
    if kind.outlets is not None:
        return tuple(kind.outlets)
    return tuple(spec.params.get("fractions", {}) or spec.outputs)


def check_route(graph: nx.DiGraph) -> RoutePlan:
    """Check a route graph and plan its evaluation.

    Checks: every step's kind is known; each inlet has exactly one source and carries a port the
    step has; each outlet feeds exactly one step (no dangling outlets, no outlet used twice); every
    step is reachable from a feed; every step leads to a sink (no loop without a way out); the
    route has a feed and a sink.

    Returns
    -------
    RoutePlan

    Raises
    ------
    InputError
        Listing every problem, each with the step's file:line and what would be valid.
    """
    problems: list[str] = []
    rid = graph.graph.get("route_id", "?")
    specs = {n: d["spec"] for n, d in graph.nodes(data=True)}
    for sid, spec in specs.items():
        kind = STEP_KINDS.get(spec.kind)
        if kind is None:
            problems.append(f"{where_of(spec)}: unknown step kind {spec.kind!r}; kinds: {', '.join(STEP_KINDS)}")
            continue
        expected, text = _expected_inlets(kind, spec)
        seen: dict[str, str] = {}
        for src, _, d in graph.in_edges(sid, data=True):
            port = d["dst_port"]
            if port in seen:
                problems.append(f"{where_of(spec)}: inlet {port!r} has two sources ({seen[port]} and {src}); "
                                f"one stream per inlet (join streams with a mix step)")
            seen[port] = src
            if port not in expected:
                problems.append(f"{where_of(spec)}: has no inlet {port!r} (stream from {src!r}); a {spec.kind} "
                                f"step takes {text}")
            sk = STEP_KINDS.get(specs[src].kind)
            if sk is not None and d["src_port"] not in _outlets(sk, specs[src]):
                problems.append(f"{where_of(spec)}: takes outlet {d['src_port']!r} of {src!r}, which has outlets "
                                f"{', '.join(_outlets(sk, specs[src])) or 'none (a sink)'}")
        missing = expected - set(seen) if kind.inlets != "many" else set()
        if kind.inlets == "many" and len(seen) < 2:
            problems.append(f"{where_of(spec)}: a mix step joins two or more streams; it has {len(seen)}")
        for port in sorted(missing):
            problems.append(f"{where_of(spec)}: inlet {port!r} has no source; write from: <step-id> for it")
        used: dict[str, str] = {}
        for _, dst, d in graph.out_edges(sid, data=True):
            if d["src_port"] in used:
                problems.append(f"{where_of(spec)}: outlet {d['src_port']!r} feeds both {used[d['src_port']]!r} and "
                                f"{dst!r}; an outlet feeds one step (divide a stream with a split step)")
            used[d["src_port"]] = dst
        for port in _outlets(kind, spec):
            if port not in used:
                problems.append(f"{where_of(spec)}: outlet {port!r} goes nowhere (dangling); connect it to a step "
                                f"(from: {sid}.{port}) or end it with a sink step")
    feeds = [n for n, s in specs.items() if s.kind == "feed"]
    sinks = [n for n, s in specs.items() if s.kind == "sink"]
    if not feeds:
        problems.append(f"route {rid!r} has no feed step; start it with kind: feed")
    if not sinks:
        problems.append(f"route {rid!r} has no sink step; end every stream that leaves the route with kind: sink")
    reach: set[str] = set()
    for f in feeds:
        reach |= nx.descendants(graph, f) | {f}
    for sid in specs:
        if feeds and sid not in reach:
            problems.append(f"{where_of(specs[sid])}: is not reachable from any feed (nothing flows into it); "
                            f"connect it with from: or remove it")
    leads: set[str] = set()
    for s in sinks:
        leads |= nx.ancestors(graph, s) | {s}
    for sid in specs:
        if sinks and sid not in leads:
            problems.append(f"{where_of(specs[sid])}: leads to no sink (its flow would accumulate in a loop without a "
                            f"way out); give the loop an outlet to a sink step")
    if problems:
        raise InputError(f"route {rid!r} cannot be evaluated:\n  " + "\n  ".join(problems))
    return plan_route(graph)


def _tear_key(graph, tears):
    order = nx.get_node_attributes(graph, "order")
    back = sum(order[u] >= order[v] for u, v in tears)
    return (-back, sorted(order[v] for _, v in tears), sorted(order[u] for u, _ in tears))


def plan_route(graph: nx.DiGraph) -> RoutePlan:
    """Loops, tear streams (rule in the module docstring) and evaluation order of a checked graph."""
    loops = []
    for cyc in nx.simple_cycles(graph):
        loops.append(tuple(cyc))
        if len(loops) > MAX_CYCLES:
            break
    if not loops:
        return RoutePlan((), tuple(nx.lexicographical_topological_sort(graph, key=_order_key(graph))), (), "minimum")
    cyc_edges = [frozenset(zip(c, c[1:] + c[:1])) for c in loops]
    candidates = sorted(set().union(*cyc_edges), key=lambda e: _tear_key(graph, [e]))
    best, rule = None, "minimum"
    if len(candidates) <= MAX_EXACT and len(loops) <= MAX_CYCLES:
        for k in range(1, len(candidates) + 1):
            sets = [set(c) for c in itertools.combinations(candidates, k)
                    if all(ce & set(c) for ce in cyc_edges)]
            sets = [s for s in sets if nx.is_directed_acyclic_graph(_without(graph, s))]
            if sets:
                best = min(sets, key=lambda s: _tear_key(graph, s))
                break
    if best is None:
        rule, best = "greedy", set()
        while not nx.is_directed_acyclic_graph(_without(graph, best)):
            rest = list(nx.simple_cycles(_without(graph, best)))
            counts: dict = {}
            for c in rest:
                for e in zip(c, c[1:] + c[:1]):
                    counts[e] = counts.get(e, 0) + 1
            best.add(min(counts, key=lambda e: (-counts[e], _tear_key(graph, [e]))))
    tears = tuple(sorted(best, key=lambda e: _tear_key(graph, [e])))
    dag = _without(graph, set(tears))
    order = tuple(nx.lexicographical_topological_sort(dag, key=_order_key(graph)))
    return RoutePlan(tears, order, tuple(loops), rule)


def _order_key(graph):
    order = nx.get_node_attributes(graph, "order")
    return lambda n: f"{order[n]:08d}"


def _without(graph, edges):
    g = nx.DiGraph(graph)
    g.remove_edges_from(edges)
    return g
