"""Feed: starts a route with a stream at the conditions and flow of a feed (scenario ``feeds:``)."""
from __future__ import annotations

from .base import StepResult, point_path


def run(spec, inlets, ctx) -> StepResult:
    sc = ctx.scenario
    fid = spec.params.get("feed") or (sc.feeds[0].id if len(sc.feeds) == 1 else None)
    feed = sc.feed(fid)
    x = ctx.x_of(feed.composition if feed.composition else sc.fluid.components)
    fluid = ctx.fluid(x)
    st = fluid.state(T=feed.T, p=feed.p)
    n = feed.flow_molar if feed.flow_molar is not None else feed.flow_mass / fluid.M
    return StepResult(spec.id, spec.kind, {"out": ctx.stream(x, n, st, fluid)}, (point_path(st),),
                      extras={"feed": feed.id})
