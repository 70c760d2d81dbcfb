"""A route as a graph: steps are nodes, streams are edges with named ports.

>>> graph = build_graph(route)                      # doctest: +SKIP
>>> graph.nodes["pump-1"]["spec"].kind              # 'pump'
>>> graph.edges["sep-1", "condenser"]               # {'src_port': 'vapor', 'dst_port': 'in'}

Node attribute ``spec`` is the :class:`~supercrit.scenario.StepSpec`; edge attributes ``src_port``
(the outlet of the upstream step: ``out``, ``vapor``, ``liquid``, ``hot``, ``cold`` or a split
branch) and ``dst_port`` (the inlet of the downstream step: ``in``, ``in1``, ``in2``, ..., ``hot``,
``cold``). :func:`supercrit.route.checks.check_route` validates the graph.
"""
from __future__ import annotations

import networkx as nx

from ..errors import InputError
from ..scenario import RouteSpec


def where_of(spec) -> str:
    """``file:line:col (step id)`` of a step, for error messages."""
    loc = f"{spec.where}: " if getattr(spec, "where", None) is not None else ""
    return f"{loc}step {spec.id!r} ({spec.kind})"


def build_graph(route: RouteSpec) -> nx.DiGraph:
    """The directed graph of a route.

    Parameters
    ----------
    route : RouteSpec
        A validated route (inputs may name later steps: recycles).

    Returns
    -------
    networkx.DiGraph
        Node per step id (attribute ``spec``, and ``order``: position as written), edge per stream.

    Raises
    ------
    InputError
        Two steps with one id, an inlet naming a step that is not in the route, or two streams
        joining the same pair of steps (put a step between them).
    """
    graph = nx.DiGraph(route_id=route.id)
    for i, spec in enumerate(route.steps):
        if spec.id in graph:
            raise InputError(f"step id {spec.id!r} is used twice in route {route.id!r}; step ids must be unique",
                             str(spec.where) if spec.where else None)
        graph.add_node(spec.id, spec=spec, order=i)
    for spec in route.steps:
        for ref in spec.inputs:
            if ref.step_id not in graph:
                raise InputError(f"{where_of(spec)} takes its inlet {ref.inlet!r} from {ref.step_id!r}, which is "
                                 f"not a step of route {route.id!r}. Steps: {', '.join(graph.nodes)}.")
            if graph.has_edge(ref.step_id, spec.id):
                first = graph.edges[ref.step_id, spec.id]
                raise InputError(f"{where_of(spec)} takes two streams from {ref.step_id!r} "
                                 f"({ref.step_id}.{first['src_port']} and {ref}); supercrit keeps one stream per "
                                 f"pair of steps: put a step (e.g. a heat or throttle step) on one of them")
            graph.add_edge(ref.step_id, spec.id, src_port=ref.port, dst_port=ref.inlet)
    return graph
