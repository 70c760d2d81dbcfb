"""Evaluate routes: steps in topological order, recycles converged on tear streams, balances checked.

Method
------
The route graph (:func:`supercrit.route.build_graph`) is checked and planned
(:func:`supercrit.route.check_route`: tear streams of minimum number). Each tear stream is a vector
of component molar flows [mol s-1], molar enthalpy [J mol-1] and pressure [Pa]; it starts empty
(zero flow) at the conditions and composition of the route's first feed. One pass evaluates every
step in order and gives new tear values G(X). The first pass substitutes directly; later ones use
Wegstein's method per variable, X+ = q X + (1 - q) G(X) with q = s/(s - 1), s the secant slope,
q bounded to [-5, 0] (J. H. Wegstein, Commun. ACM 1 (1958) 9; bounds: common practice).
Converged when every |G(X) - X| <= tol times its scale (flows: total feed flow; enthalpy: R T;
pressure: p), tol = 1e-10; otherwise ConvergenceError after 50 passes.

Balances: for every step, component molar flows in = out, and
sum n h (out) - sum n h (in) + mechanical = power + duty, each to 1e-9 relative (scale: sum of
n (|h| + R T) over its streams plus |power| + |duty| + |mechanical|); likewise for the whole
route from feeds to sinks. A failed balance raises ConvergenceError (a state that missed its
target).
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Mapping

import numpy as np

from ..errors import ConvergenceError, InputError, SupercritError
from ..route import RoutePlan, build_graph, check_route
from ..thermo.constants import R_CODATA_2018
from ..thermo.solvers.result import SolverReport
from ..thermo.state import SUPERCRITICAL
from .base import SAMPLE_PATHS, StepContext, StepResult, Stream, state_ph

TOL = 1e-10  # tear-stream tolerance, relative
MAX_ITER = 50
BALANCE_TOL = 1e-9
Q_BOUNDS = (-20.0, 0.0)  # Wegstein q bounds: common practice is (-5, 0); -20 lets 95 % recycle loops converge in a few passes


@dataclass(frozen=True)
class Balance:
    """Relative residuals of a balance: ``mass`` (largest component, relative to the total flow) and
    ``energy`` (relative to the energy scale of the module docstring); ``energy_abs`` in W."""

    mass: float
    energy: float
    energy_abs: float


@dataclass(frozen=True, eq=False)
class StreamRecord:
    """A stream of the solved route: from ``src``.``src_port`` to ``dst``.``dst_port``."""

    src: str
    src_port: str
    dst: str
    dst_port: str
    stream: Stream
    torn: bool = False

    @property
    def id(self) -> str:
        return f"{self.src}.{self.src_port}->{self.dst}"


def _opt(fn):
    try:
        v = fn()
    except SupercritError:
        return None
    return None if v is None else float(v)


def stream_row(rec: StreamRecord) -> dict:
    """One row of the stream table (SI)."""
    s = rec.stream
    st = s.state
    code = int(np.asarray(st.phase_))
    return {"stream": rec.id, "from": rec.src, "port": rec.src_port, "to": rec.dst, "T": s.T, "p": s.p,
            "rho_mass": float(st.rho_mass), "Z": float(st.Z), "phase": str(st.phase),
            "vapor_fraction": None if code == SUPERCRITICAL else _opt(lambda: st.vapor_fraction),
            "h_mass": float(st.h_mass), "s_mass": float(st.s_mass), "cp_mass": _opt(lambda: st.cp_mass),
            "mass_flow": s.mass_flow, "molar_flow": s.n, "composition": s.composition}


@dataclass(frozen=True, eq=False)
class RouteResult:
    """A solved route.

    Attributes
    ----------
    route_id : str
    steps : mapping step id -> StepResult (in evaluation order)
    streams : tuple of StreamRecord
    plan : RoutePlan (tear streams, order, loops)
    report : SolverReport of the recycle iteration (iterations = route passes)
    step_balances : mapping step id -> Balance
    balance : Balance of the whole route
    """

    route_id: str
    steps: Mapping[str, StepResult]
    streams: tuple[StreamRecord, ...]
    plan: RoutePlan
    report: SolverReport
    step_balances: Mapping[str, Balance]
    balance: Balance
    specs: Mapping[str, object] = field(default_factory=dict)

    @property
    def iterations(self) -> int:
        return self.report.iterations

    @property
    def total_power(self) -> float:
        """Net shaft power into the fluid [W]."""
        return sum(r.power for r in self.steps.values())

    @property
    def total_duty(self) -> float:
        """Net heat into the fluid [W]."""
        return sum(r.duty for r in self.steps.values())

    def stream(self, src: str, port: str | None = None) -> Stream:
        """The stream leaving ``src`` (by ``port`` if it has several)."""
        for rec in self.streams:
            if rec.src == src and (port is None or rec.src_port == port):
                return rec.stream
        raise KeyError(f"{src}.{port}" if port else src)

    def stream_table(self) -> list[dict]:
        """Streams: T [K], p [Pa], rho_mass [kg m-3], Z, phase, vapor_fraction (None if supercritical),
        h_mass [J kg-1], s_mass [J kg-1 K-1], cp_mass (None where undefined), mass_flow [kg s-1],
        molar_flow [mol s-1], composition (mole fractions)."""
        return [stream_row(r) for r in self.streams]

    def step_table(self) -> list[dict]:
        """Steps: kind, power [W], duty [W] (both into the fluid), efficiency used, notes, balances."""
        rows = []
        for sid, r in self.steps.items():
            b = self.step_balances.get(sid)
            rows.append({"step": sid, "kind": r.kind, "power": r.power, "duty": r.duty,
                         "efficiency": r.efficiency, "notes": "; ".join(r.notes),
                         "mass_balance": b.mass if b else None, "energy_balance": b.energy if b else None})
        return rows


@dataclass(frozen=True, eq=False)
class ScenarioResult:
    """All routes of a scenario: ``routes`` maps route id -> RouteResult (order as written)."""

    scenario: object
    routes: Mapping[str, RouteResult]

    def stream_table(self) -> list[dict]:
        return [{"route": rid, **row} for rid, rr in self.routes.items() for row in rr.stream_table()]

    def step_table(self) -> list[dict]:
        return [{"route": rid, **row} for rid, rr in self.routes.items() for row in rr.step_table()]


def _located(exc: SupercritError, spec) -> SupercritError:
    loc = f"{spec.where}: " if getattr(spec, "where", None) is not None else ""
    if loc and str(spec.where) in str(exc):
        return exc
    msg = f"{loc}step {spec.id!r} ({spec.kind}): {exc}"
    if isinstance(exc, ConvergenceError):
        new = ConvergenceError(msg)
        new.report = exc.report
        return new
    try:
        return type(exc)(msg)
    except TypeError:  # pragma: no cover - subclasses with other signatures
        return exc


def _balance(ins, outs, power, duty, mech) -> Balance:
    scale_n = max(sum(s.n for s in ins), sum(s.n for s in outs), 1e-300)
    nc = len((ins or outs)[0].x)
    cin = sum((s.n * s.x for s in ins), np.zeros(nc))
    cout = sum((s.n * s.x for s in outs), np.zeros(nc))
    mass = float(np.max(np.abs(cout - cin))) / scale_n
    e = sum(s.n * s.h for s in outs) - sum(s.n * s.h for s in ins) + mech - power - duty
    scale_e = sum(s.n * (abs(s.h) + R_CODATA_2018 * s.T) for s in list(ins) + list(outs)) + abs(power) + \
        abs(duty) + abs(mech)
    return Balance(mass, abs(e) / max(scale_e, 1e-300), e)


class _Evaluator:
    def __init__(self, scenario, route, ctx):
        self.route = route
        self.ctx = ctx
        self.graph = build_graph(route)
        self.plan = check_route(self.graph)
        self.specs = {n: d["spec"] for n, d in self.graph.nodes(data=True)}

    def run(self, tear_streams: dict):
        streams: dict = dict(tear_streams)
        results: dict = {}
        used: dict = {}
        for sid in self.plan.order:
            spec = self.specs[sid]
            inlets = {}
            for src, _, d in self.graph.in_edges(sid, data=True):
                inlets[d["dst_port"]] = streams[(src, sid)]
            used[sid] = inlets
            from . import RUNNERS

            try:
                res = RUNNERS[spec.kind](spec, inlets, self.ctx)
            except SupercritError as exc:
                raise _located(exc, spec) from exc
            results[sid] = res
            for _, dst, d in self.graph.out_edges(sid, data=True):
                if (sid, dst) in tear_streams:
                    streams[("new", sid, dst)] = res.outlets[d["src_port"]]
                else:
                    streams[(sid, dst)] = res.outlets[d["src_port"]]
        return results, streams, used


def _vector(s: Stream) -> np.ndarray:
    return np.concatenate([s.n * s.x, [s.h, s.p]])


def _from_vector(ctx, v: np.ndarray, like: Stream) -> Stream:
    nc = len(ctx.components)
    flows = np.maximum(v[:nc], 0.0)
    n = float(flows.sum())
    x = flows / n if n > 0 else like.x
    fluid = ctx.fluid(x)
    st = state_ph(fluid, float(v[nc + 1]), float(v[nc]), like.state if like.fluid is fluid else like.T)
    return ctx.stream(x, n, st, fluid)


def solve_route(scenario, route_id: str, *, tol: float = TOL, max_iter: int = MAX_ITER,
                ctx: StepContext | None = None) -> RouteResult:
    """Evaluate one route of a scenario.

    Parameters
    ----------
    scenario : Scenario
    route_id : str
    tol : float
        Relative tolerance on the tear streams [-].
    max_iter : int
        Most passes through the route.

    Returns
    -------
    RouteResult

    Raises
    ------
    InputError
        Unknown route, or a graph that cannot be evaluated (names the steps, file:line).
    ConvergenceError
        Recycles not converged within ``max_iter`` passes, or a balance not closed to 1e-9.
    ModelRangeError
        A state outside the model's range (names the step).
    """
    try:
        route = scenario.route(route_id)
    except KeyError:
        raise InputError(f"no route {route_id!r}; routes: {', '.join(r.id for r in scenario.routes)}") from None
    ctx = ctx or StepContext(scenario)
    ev = _Evaluator(scenario, route, ctx)
    tears = ev.plan.tears
    guess: dict = {}
    if tears:
        feed_spec = next(s for s in route.steps if s.kind == "feed")
        from . import feed as feed_mod

        fs = feed_mod.run(feed_spec, {}, ctx).outlets["out"]
        for e in tears:
            guess[e] = fs.with_flow(0.0)
    feed_total = 0.0
    it = 0
    residual = 0.0
    if not tears:
        results, streams, used = ev.run({})
        it = 1
    else:
        X = {e: _vector(guess[e]) for e in tears}
        X_prev = G_prev = None
        token = SAMPLE_PATHS.set(False)  # end states only while iterating; the final pass samples the paths
        while True:
            it += 1
            try:
                results, streams, used = ev.run(guess)
            except BaseException:
                SAMPLE_PATHS.reset(token)
                raise
            if not feed_total:
                feed_total = sum(r.outlets["out"].n for sid, r in results.items() if ev.specs[sid].kind == "feed")
            G = {e: _vector(streams[("new",) + e]) for e in tears}
            nc = len(ctx.components)
            residual = 0.0
            for e in tears:
                g, x = G[e], X[e]
                scale = np.concatenate([np.full(nc, max(feed_total, 1e-300)),
                                        [R_CODATA_2018 * max(streams[("new",) + e].T, 1.0), max(abs(g[-1]), 1.0)]])
                residual = max(residual, float(np.max(np.abs(g - x) / scale)))
            if residual <= tol:
                SAMPLE_PATHS.set(True)
                results, streams, used = ev.run(guess)
                SAMPLE_PATHS.reset(token)
                break
            if it >= max_iter:
                SAMPLE_PATHS.reset(token)
                raise ConvergenceError(
                    f"route {route.id!r}: the recycle through {', '.join(f'{a}->{b}' for a, b in tears)} did not "
                    f"converge in {max_iter} passes (largest relative change {residual:.2e}, tolerance {tol:.0e}). "
                    f"Check that the loop has an outlet for every component and that its specifications can be met.",
                    SolverReport(False, it, residual, "Wegstein on tear streams"))
            X_new = {}
            for e in tears:
                if X_prev is None:
                    X_new[e] = G[e].copy()
                else:
                    dx = X[e] - X_prev[e]
                    dg = G[e] - G_prev[e]
                    with np.errstate(divide="ignore", invalid="ignore"):
                        s = np.where(np.abs(dx) > 1e-300, dg / dx, 0.0)
                        q = np.where(np.abs(s - 1.0) > 1e-12, s / (s - 1.0), 0.0)
                    q = np.clip(np.nan_to_num(q), *Q_BOUNDS)
                    X_new[e] = q * X[e] + (1.0 - q) * G[e]
            X_prev, G_prev = X, G
            X = X_new
            guess = {e: _from_vector(ctx, X[e], streams[("new",) + e]) for e in tears}
            # the guess actually used is what the next pass sees
            X = {e: _vector(guess[e]) for e in tears}
    report = SolverReport(True, it, residual, "Wegstein on tear streams" if tears else "single pass (no recycle)")
    return _assemble(ev, route, results, streams, used, guess, report)


def _assemble(ev, route, results, streams, used, guess, report) -> RouteResult:
    balances = {}
    for sid in ev.plan.order:
        spec = ev.specs[sid]
        res = results[sid]
        if spec.kind in ("feed", "sink"):
            continue
        ins = list(used[sid].values())
        outs = list(res.outlets.values())
        b = _balance(ins, outs, res.power, res.duty, res.mechanical)
        if b.mass > BALANCE_TOL or b.energy > BALANCE_TOL:
            raise ConvergenceError(f"{spec.where}: step {sid!r} ({spec.kind}) does not balance: mass residual "
                                   f"{b.mass:.2e}, energy residual {b.energy:.2e} (relative; allowed {BALANCE_TOL:.0e})")
        balances[sid] = b
    feeds_out = [results[s].outlets["out"] for s in ev.plan.order if ev.specs[s].kind == "feed"]
    sinks_in = [used[s]["in"] for s in ev.plan.order if ev.specs[s].kind == "sink"]
    power = sum(r.power for r in results.values())
    duty = sum(r.duty for r in results.values())
    mech = sum(r.mechanical for r in results.values())
    total = _balance(feeds_out, sinks_in, power, duty, mech)
    if total.mass > BALANCE_TOL or total.energy > BALANCE_TOL:
        raise ConvergenceError(f"route {route.id!r} does not balance: mass residual {total.mass:.2e}, energy residual "
                               f"{total.energy:.2e} (relative; allowed {BALANCE_TOL:.0e})", report)
    records = []
    for src, dst, d in ev.graph.edges(data=True):
        torn = (src, dst) in ev.plan.tears
        s = streams[("new", src, dst)] if torn else streams[(src, dst)]
        records.append(StreamRecord(src, d["src_port"], dst, d["dst_port"], s, torn))
    order = {sid: i for i, sid in enumerate(ev.plan.order)}
    records.sort(key=lambda r: (order[r.src], r.src_port))
    steps = {sid: results[sid] for sid in ev.plan.order}
    return RouteResult(route.id, steps, tuple(records), ev.plan, report, balances, total, ev.specs)


def solve_scenario(scenario, *, tol: float = TOL, max_iter: int = MAX_ITER) -> ScenarioResult:
    """Evaluate every route of a scenario (one shared fluid cache); see :func:`solve_route`."""
    ctx = StepContext(scenario)
    return ScenarioResult(scenario, {r.id: solve_route(scenario, r.id, tol=tol, max_iter=max_iter, ctx=ctx)
                                     for r in scenario.routes})
