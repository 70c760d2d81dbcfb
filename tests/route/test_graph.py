"""Route graphs: construction, checks with errors naming the step, loops and tear streams."""
import pytest

from supercrit.errors import InputError
from supercrit.io import Location
from supercrit.route import build_graph, check_route
from supercrit.scenario import PortRef, RouteSpec, StepSpec


def S(sid, kind, inputs=(), outputs=("out",), line=1, **params):
    refs = tuple(PortRef(*i) if isinstance(i, tuple) else PortRef(i) for i in inputs)
    return StepSpec(id=sid, kind=kind, inputs=refs, outputs=outputs, params=params,
                    where=Location("routes.yaml", line, 7))


def _route(*steps):
    return RouteSpec(id="r", steps=tuple(steps))


def test_graph_nodes_and_edges_carry_specs_and_ports():
    g = build_graph(_route(S("f", "feed"), S("sep", "separate", ["f"], ("vapor", "liquid")),
                           S("v", "sink", [("sep", "vapor")], ()), S("l", "sink", [("sep", "liquid")], ())))
    assert g.nodes["sep"]["spec"].kind == "separate"
    assert g.edges["sep", "v"] == {"src_port": "vapor", "dst_port": "in"}
    plan = check_route(g)
    assert plan.tears == () and plan.order[0] == "f"


def _raises(route, *words):
    with pytest.raises(InputError) as exc:
        check_route(build_graph(route))
    for w in words:
        assert w in str(exc.value)
    return str(exc.value)


def test_dangling_outlet_names_the_step_and_its_line():
    _raises(_route(S("f", "feed"), S("sep", "separate", ["f"], ("vapor", "liquid"), line=12),
                   S("v", "sink", [("sep", "vapor")], ())),
            "routes.yaml:12:7", "'sep'", "'liquid' goes nowhere")


def test_unreachable_step():
    _raises(_route(S("f", "feed"), S("out", "sink", ["f"], ()), S("lonely", "heat", ["lonely2"], line=9),
                   S("lonely2", "cool", ["lonely"]),),
            "routes.yaml:9:7", "'lonely'", "not reachable from any feed")


def test_two_sources_for_one_stream():
    _raises(_route(S("f", "feed"), S("g", "feed"), S("h", "heat", [("f", "out", "in"), ("g", "out", "in")], line=4),
                   S("out", "sink", ["h"], ())),
            "routes.yaml:4:7", "inlet 'in' has two sources")


def test_bad_port():
    _raises(_route(S("f", "feed"), S("sep", "separate", ["f"], ("vapor", "liquid")),
                   S("v", "sink", [("sep", "vapour")], (), line=5), S("l", "sink", [("sep", "liquid")], ())),
            "routes.yaml:5:7", "outlet 'vapour'", "vapor, liquid")


def test_route_without_sink():
    _raises(_route(S("f", "feed"), S("m", "mix", [("f", "out", "in1"), ("c", "out", "in2")]),
                   S("c", "compress", ["m"], line=3)),
            "no sink step")


def test_loop_without_a_way_out():
    msg = _raises(_route(S("f", "feed"), S("t", "split", ["f"], ("a", "b"), fractions={"a": .5, "b": .5}),
                         S("out", "sink", [("t", "a")], ()),
                         S("m", "mix", [("t", "b", "in1"), ("c", "out", "in2")]), S("c", "compress", ["m"], line=3)),
                  "leads to no sink")
    assert "routes.yaml:3:7" in msg


def test_tear_set_is_minimum_and_prefers_the_written_recycle():
    # two loops sharing the stream m -> h: one tear (m -> h) would break both, but the rule prefers the
    # minimum number first: here 1 stream. Candidates of size 1 breaking both loops: m->h or h->t.
    r = _route(S("f", "feed"), S("m", "mix", [("f", "out", "in1"), ("t", "a", "in2"), ("k", "out", "in3")]),
               S("h", "heat", ["m"]), S("t", "split", ["h"], ("a", "b", "c"), fractions={"a": .2, "b": .3, "c": .5}),
               S("k", "cool", [("t", "b")]), S("out", "sink", [("t", "c")], ()))
    plan = check_route(build_graph(r))
    assert len(plan.tears) == 1 and len(plan.loops) == 2
    assert plan.tears[0] in {("m", "h"), ("h", "t")}


def test_two_independent_loops_need_two_tears_written_recycles_chosen():
    r = _route(S("f", "feed"), S("m1", "mix", [("f", "out", "in1"), ("t1", "back", "in2")]),
               S("t1", "split", ["m1"], ("back", "on"), fractions={"back": .5, "on": .5}),
               S("m2", "mix", [("t1", "on", "in1"), ("t2", "back", "in2")]),
               S("t2", "split", ["m2"], ("back", "on"), fractions={"back": .5, "on": .5}),
               S("out", "sink", [("t2", "on")], ()))
    plan = check_route(build_graph(r))
    assert set(plan.tears) == {("t1", "m1"), ("t2", "m2")}
    assert plan.order.index("m1") < plan.order.index("t1") < plan.order.index("m2")
