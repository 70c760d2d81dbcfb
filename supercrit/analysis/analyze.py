"""Route and scenario analysis: crossings on every step's path, rules with margins, verdicts, key figures,
the uncertainty that matters (k_ij spread, model spread), and the ranking of alternatives.

Rules (limits from the scenario; defaults and their basis in supercrit.scenario.schema.Limits):
- every path: no solid CO2; no metal below the minimum design metal temperature; not above the design
  pressure (if given); a state inside the near-critical band (|T - Tc| < band_T and |p - pc| < band_p)
  is a warning (property spike, low confidence);
- compressor: inlet single-phase gas at least ``compressor_dew_margin`` above its dew point (liquid at the
  inlet is infeasible); a dense-phase inlet within ``critical_band_T`` of the pseudo-critical line is a
  warning; discharge of every stage at most ``max_discharge_T``; stage ratio at most ``max_stage_ratio``;
- pump: inlet liquid (or dense) at least ``pump_subcooling`` below its bubble point; gas or two-phase at
  the inlet is infeasible;
- heater / cooler / exchanger / pipe: a pseudo-critical crossing is a warning (cp peaks inside; design in
  segments); exchangers keep ``min_approach_T`` along the whole exchanger (internal pinch);
- separator: liquid/vapour density ratio at least ``separator_density_ratio``;
- vessel: supercritical and inside its density window, if given;
- pipe: pressure at least ``cricondenbar_margin`` above the cricondenbar along its length;
- ideal-gas model: a warning where the Peng-Robinson Z of a stream is outside 1 +- ``ideal_gas_Z_band``.
"""
from __future__ import annotations

from dataclasses import dataclass, field

from ..errors import SupercritError
from ..units import format_quantity
from .crossings import Crossing, find_crossings, pseudo_critical_temperature
from .margins import bubble_temperature, cricondenbar, dew_temperature
from .paths import path_function
from .verdict import Level, Reason, Verdict

RANKING_RULE = ("feasible first, then feasible with warnings, infeasible, not computed; within a level, "
                "lower specific energy first (higher thermal efficiency for closed power cycles); "
                "ties by the larger smallest margin")


@dataclass(frozen=True)
class StepAnalysis:
    step_id: str
    kind: str
    crossings: tuple[Crossing, ...]
    reasons: tuple[Reason, ...]
    verdict: Verdict


@dataclass(frozen=True)
class RouteAnalysis:
    route_id: str
    steps: tuple[StepAnalysis, ...]
    verdict: Verdict
    figures: dict
    kij_checks: tuple[Reason, ...] = ()
    rank: int | None = None


@dataclass(frozen=True)
class ScenarioAnalysis:
    routes: tuple[RouteAnalysis, ...]
    ranking_rule: str = RANKING_RULE
    errors: dict = field(default_factory=dict)  # route id -> message, for routes that could not be computed


class _Fmt:
    def __init__(self, system):
        self.system = system

    def T(self, v):
        return format_quantity(v, "temperature", self.system, 4)

    def dT(self, v):
        return format_quantity(v, "temperature_difference", self.system, 3)

    def p(self, v):
        return format_quantity(v, "pressure", self.system, 4)

    def dp(self, v):
        return format_quantity(v, "pressure_difference", self.system, 3)

    def at(self, s):
        return f"{self.T(float(s.T))} and {self.p(float(s.p))}"


def _inlets(rr, sid):
    return [rec.stream for rec in rr.streams if rec.dst == sid]


def _next_kinds(rr, sid):
    out = []
    for rec in rr.streams:
        if rec.src == sid and rec.dst in rr.steps:
            out.append((rec.dst, rr.steps[rec.dst].kind))
    return out


def _fluid_of_path(res, label):
    outs = res.outlets
    if label in outs:
        return outs[label].fluid
    return next(iter(outs.values())).fluid if outs else None


def _crossing_reasons(step_id, kind, cr: Crossing, fluid, fmt, nexts) -> list[Reason]:
    out = []
    if cr.kind == "pseudo-critical":
        lvl = Level.WARN if kind in ("heat", "cool", "exchange", "pipe", "compress", "pump") else Level.FEASIBLE
        out.append(Reason(lvl, step_id, "pseudo-critical",
                          f"{step_id}: crosses the pseudo-critical line (cp maximum) at {fmt.at(cr.state)}; "
                          f"properties spike there - design this {kind} step in segments"))
    elif cr.kind == "solid-CO2" or "solid" in cr.after:
        out.append(Reason(Level.INFEASIBLE, step_id, "solid-CO2",
                          f"{step_id}: reaches the CO2 freezing line at {fmt.T(cr.T)} and {fmt.p(cr.p)}: solid CO2 "
                          f"(dry ice) can form and block the line"))
    elif cr.kind == "model-range":
        pt = 517950.0  # [Pa] CO2 triple point, Span & Wagner 1996 Table 34
        if "CO2" in fluid.components and cr.p <= pt * 1.01:
            out.append(Reason(Level.INFEASIBLE, step_id, "solid-CO2",
                              f"{step_id}: falls to the CO2 triple-point pressure ({fmt.p(pt)}) at {fmt.T(cr.T)}: below "
                              f"it dry ice forms; the {fluid.model_name} model has no solid phase (span-wagner gives "
                              f"the solid fraction)"))
        else:
            out.append(Reason(Level.NOT_COMPUTED, step_id, "model-range",
                              f"{step_id}: the path leaves the model's range after {fmt.at(cr.state)}: {cr.text}"))
    elif cr.kind == "min-metal-T":
        out.append(Reason(Level.INFEASIBLE, step_id, "min-metal-T",
                          f"{step_id}: fluid colder than the minimum design metal temperature from {fmt.at(cr.state)}"))
    elif cr.kind == "max-p":
        out.append(Reason(Level.INFEASIBLE, step_id, "max-p",
                          f"{step_id}: pressure above the design pressure from {fmt.at(cr.state)}"))
    elif cr.kind == "two-phase-entry":
        verb = "condenses" if cr.before in ("gas", "supercritical") else "boils"
        if kind == "throttle":
            verb = "flashes" if cr.before == "liquid" else "condenses"
        nxt = ", ".join(f"{k} {s}" for s, k in nexts if k in ("compress", "pump"))
        tail = f" - the next step is {nxt}" if nxt else ""
        out.append(Reason(Level.FEASIBLE, step_id, "two-phase",
                          f"{step_id}: stream {verb} from {fmt.at(cr.state)} ({cr.side}){tail}"))
    elif cr.kind == "two-phase-exit":
        what = "fully condensed" if cr.after == "liquid" else "fully evaporated" if cr.after == "gas" else "single-phase"
        out.append(Reason(Level.FEASIBLE, step_id, "two-phase", f"{step_id}: {what} at {fmt.at(cr.state)}"))
    elif cr.kind in ("critical-isotherm", "critical-isobar"):
        into = cr.after == "supercritical"
        out.append(Reason(Level.FEASIBLE, step_id, "supercritical",
                          f"{step_id}: {'enters' if into else 'leaves'} the supercritical region across the critical "
                          f"{'isotherm' if cr.kind == 'critical-isotherm' else 'isobar'} at {fmt.at(cr.state)}"))
    return out


def _band(fluid, state, lim):
    if not fluid.is_pure or fluid._crit is None:
        return None
    c = fluid.critical_point()
    dT, dp = abs(float(state.T) - c.T), abs(float(state.p) - c.p)
    if dT < lim.critical_band_T and dp < lim.critical_band_p:
        return dT, dp
    return None


def analyze_step(scenario, rr, sid, res, fmt) -> StepAnalysis:
    spec = rr.specs.get(sid) if rr.specs else None
    lim = scenario.limits_for(spec) if spec is not None else scenario.limits
    kind = res.kind
    reasons: list[Reason] = []
    crossings: list[Crossing] = []
    limits = {"min_metal_T": lim.min_metal_T}
    if lim.max_pressure:
        limits["max_p"] = lim.max_pressure
    nexts = _next_kinds(rr, sid)
    all_states = []
    for sp in res.paths:
        fluid = _fluid_of_path(res, sp.label)
        if fluid is None:
            continue
        all_states.extend(sp.states)
        built = path_function(fluid, sp)
        if built is None:
            continue
        path, t, states = built
        try:
            cr = find_crossings(fluid, path, t, limits=limits, samples=states)
        except SupercritError as exc:
            reasons.append(Reason(Level.NOT_COMPUTED, sid, "crossings", f"{sid}: crossings not computed: {exc}"))
            continue
        crossings.extend(cr)
        for c in cr:
            reasons.extend(_crossing_reasons(sid, kind, c, fluid, fmt, nexts))
        # states already below the metal limit at the start of the path
        s0 = states[0]
        if float(s0.T) < lim.min_metal_T and not any(c.kind == "min-metal-T" for c in cr):
            if not [r for r in reasons if r.rule == "min-metal-T"]:
                reasons.append(Reason(Level.INFEASIBLE, sid, "min-metal-T",
                                      f"{sid}: fluid at {fmt.T(float(s0.T))}, below the minimum design metal "
                                      f"temperature {fmt.T(lim.min_metal_T)}", float(s0.T) - lim.min_metal_T,
                                      "temperature_difference"))
    # near-critical band on any sampled state
    fl_main = _fluid_of_path(res, "main")
    for s in all_states if fl_main is not None else ():
        b = _band(fl_main, s, lim)
        if b is not None:
            reasons.append(Reason(Level.WARN, sid, "near-critical",
                                  f"{sid}: within {fmt.dT(b[0])} and {fmt.dp(b[1])} of the critical point at "
                                  f"{fmt.at(s)}: property spike, low confidence"))
            break
    inl = _inlets(rr, sid)
    reasons.extend(_kind_rules(scenario, rr, sid, res, inl, lim, fmt))
    min_T_path = min((float(s.T) for s in all_states), default=None)
    if min_T_path is not None and not [r for r in reasons if r.rule == "min-metal-T"]:
        reasons.append(Reason(Level.FEASIBLE, sid, "min-metal-T", f"{sid}: coldest fluid {fmt.T(min_T_path)}",
                              min_T_path - lim.min_metal_T, "temperature_difference"))
    # de-duplicate identical sentences
    seen, uniq = set(), []
    for r in reasons:
        if r.text not in seen:
            seen.add(r.text)
            uniq.append(r)
    return StepAnalysis(sid, kind, tuple(crossings), tuple(uniq), Verdict.of(uniq))


def _pseudo_critical_inlet(sid, machine, s, lim, fmt) -> list[Reason]:
    """A dense-phase machine inlet within ``critical_band_T`` of the pseudo-critical line: a warning."""
    fl = s.fluid
    if not fl.is_pure or fl._crit is None:
        return []
    try:
        Tpc = pseudo_critical_temperature(fl, s.p)
    except SupercritError:
        return []
    m = abs(s.T - Tpc)
    if m >= lim.critical_band_T:
        return []
    return [Reason(Level.WARN, sid, "pseudo-critical-inlet",
                   f"{sid}: dense-phase {machine} inlet {fmt.dT(m)} from the pseudo-critical temperature {fmt.T(Tpc)} "
                   f"at {fmt.p(s.p)}; {fmt.dT(lim.critical_band_T)} asked", m, "temperature_difference")]


def _kind_rules(scenario, rr, sid, res, inl, lim, fmt) -> list[Reason]:
    out: list[Reason] = []
    kind = res.kind
    if kind == "compress" and inl:
        s = inl[0]
        st, fl = s.state, s.fluid
        ph = _effective_phase(st)
        if ph == "liquid" and fl.is_pure:
            Ts = dew_temperature(fl, s.p)
            if Ts is not None and abs(s.T - Ts) <= 1e-6:
                ph = "gas"  # on the saturation line to round-off: saturated vapour, read with its 0 K margin below
        if ph in ("liquid", "two-phase") or "solid" in ph:
            q = ""
            if ph == "two-phase":
                try:
                    q = f" ({(1 - float(st.vapor_fraction)) * 100:.0f} % liquid)"
                except SupercritError:
                    q = ""
            out.append(Reason(Level.INFEASIBLE, sid, "compressor-inlet",
                              f"{sid}: {ph} at the compressor inlet{q} at {fmt.at(st)}: liquid damages the machine"))
        elif ph == "gas":
            Td = dew_temperature(fl, s.p)
            if Td is not None:
                m = s.T - Td
                m = 0.0 if abs(m) < 1e-6 else m  # on the dew line to round-off
                need = lim.compressor_dew_margin
                lvl = Level.INFEASIBLE if m <= 1e-6 else Level.WARN if m < need else Level.FEASIBLE
                out.append(Reason(lvl, sid, "dew-margin",
                                  f"{sid}: inlet {fmt.dT(m)} above its dew point ({fmt.T(Td)} at {fmt.p(s.p)}); "
                                  f"{fmt.dT(need)} asked", m, "temperature_difference"))
        elif ph == "supercritical":
            out.extend(_pseudo_critical_inlet(sid, "compressor", s, lim, fmt))
        stage_out = [sp.states[-1] for sp in res.paths if sp.label.startswith("stage") or sp.label == "main"]
        stage_in = [sp.states[0] for sp in res.paths if sp.label.startswith("stage") or sp.label == "main"]
        for k, (a, b) in enumerate(zip(stage_in, stage_out)):
            Tb = float(b.T)
            m = lim.max_discharge_T - Tb
            lvl = Level.INFEASIBLE if m < 0 else Level.FEASIBLE
            out.append(Reason(lvl, sid, "discharge-T", f"{sid}: stage {k + 1} discharge {fmt.T(Tb)}; limit "
                                                      f"{fmt.T(lim.max_discharge_T)}", m, "temperature_difference"))
            ratio = float(b.p) / float(a.p)
            if ratio > lim.max_stage_ratio:
                out.append(Reason(Level.WARN, sid, "stage-ratio",
                                  f"{sid}: stage {k + 1} pressure ratio {ratio:.2f} above {lim.max_stage_ratio:.2f}",
                                  lim.max_stage_ratio - ratio, "ratio"))
    elif kind == "pump" and inl:
        s = inl[0]
        st, fl = s.state, s.fluid
        ph = _effective_phase(st)
        if ph in ("gas", "two-phase"):
            out.append(Reason(Level.INFEASIBLE, sid, "pump-inlet",
                              f"{sid}: {ph} at the pump inlet at {fmt.at(st)}: the pump cavitates or vapour-locks"))
        elif ph == "liquid":
            Tb = bubble_temperature(fl, s.p)
            if Tb is not None:
                m = Tb - s.T
                m = 0.0 if abs(m) < 1e-6 else m  # on the bubble line to round-off
                need = lim.pump_subcooling
                lvl = Level.INFEASIBLE if m <= 1e-6 else Level.WARN if m < need else Level.FEASIBLE
                out.append(Reason(lvl, sid, "subcooling",
                                  f"{sid}: inlet subcooled {fmt.dT(m)} below its bubble point ({fmt.T(Tb)} at "
                                  f"{fmt.p(s.p)}); {fmt.dT(need)} asked", m, "temperature_difference"))
        elif ph == "supercritical":
            out.extend(_pseudo_critical_inlet(sid, "pump", s, lim, fmt))
    elif kind == "exchange":
        dT = res.extras.get("min_approach_T") if res.extras else None
        if dT is not None:
            need = lim.min_approach_T
            lvl = Level.INFEASIBLE if dT < 0 else Level.WARN if dT < need else Level.FEASIBLE
            frac = res.extras.get("min_approach_at_duty_fraction")
            where = f" at {frac * 100:.0f} % of the duty" if frac is not None else ""
            out.append(Reason(lvl, sid, "approach",
                              f"{sid}: smallest internal approach {fmt.dT(dT)}{where}; {fmt.dT(need)} asked",
                              float(dT), "temperature_difference"))
    elif kind == "separate" and inl:
        liq = res.outlets.get("liquid")
        vap = res.outlets.get("vapor")
        if liq is not None and vap is not None and liq.n > 0 and vap.n > 0:
            ratio = float(liq.state.rho_mass) / float(vap.state.rho_mass)
            need = lim.separator_density_ratio
            lvl = Level.WARN if ratio < need else Level.FEASIBLE
            out.append(Reason(lvl, sid, "separation",
                              f"{sid}: liquid/vapour density ratio {ratio:.2f}; {need:.2f} asked (near-critical "
                              f"separators carry over)", ratio - need, "ratio"))
        elif inl[0].fluid.is_pure:
            out.append(Reason(Level.FEASIBLE, sid, "separation",
                              f"{sid}: the {inl[0].fluid.components[0]} arrives single-phase ({_effective_phase(inl[0].state)}): "
                              f"only what is not modelled (an extract) drops out here"))
        else:
            out.append(Reason(Level.WARN, sid, "separation", f"{sid}: the feed is single-phase: nothing separates"))
    elif kind == "vessel":
        st = next(iter(res.outlets.values())).state if res.outlets else None
        if st is not None:
            ph = str(st.phase)
            if ph != "supercritical":
                out.append(Reason(Level.WARN, sid, "supercritical",
                                  f"{sid}: vessel contents {ph} at {fmt.at(st)}, not supercritical"))
            spec = rr.specs.get(sid) if rr.specs else None
            win = (spec.params.get("density_window") if spec is not None else None)
            if win:
                lo, hi = float(win[0]), float(win[1])
                rho = float(st.rho_mass)
                m = min(rho - lo, hi - rho)
                lvl = Level.INFEASIBLE if m < 0 else Level.FEASIBLE
                out.append(Reason(lvl, sid, "density-window",
                                  f"{sid}: solvent density {rho:.1f} kg/m3; window {lo:.0f}-{hi:.0f} kg/m3", m,
                                  "density"))
    elif kind == "pipe" and res.paths:
        fl = _fluid_of_path(res, "main")
        pcb = cricondenbar(fl) if fl is not None else None
        states = res.paths[0].states
        pmin = min(float(s.p) for s in states)
        if pcb is not None and any(str(s.phase) in ("liquid", "supercritical") for s in states):
            m = pmin - pcb
            need = lim.cricondenbar_margin
            lvl = Level.WARN if m < need else Level.FEASIBLE
            if any(str(s.phase) == "two-phase" for s in states):
                lvl = Level.INFEASIBLE
            out.append(Reason(lvl, sid, "cricondenbar",
                              f"{sid}: lowest pressure {fmt.p(pmin)}, {fmt.dp(m)} above the "
                              f"{'critical pressure' if fl.is_pure else 'cricondenbar'} {fmt.p(pcb)}; {fmt.dp(need)} asked",
                              m, "pressure_difference"))
    return out


def _effective_phase(st) -> str:
    """Phase label, with a saturated state (vapour fraction 0 or 1 to 1e-9) read as the liquid or gas on
    the saturation line, where its margin is zero."""
    ph = str(st.phase)
    if ph == "two-phase":
        try:
            q = float(st.vapor_fraction)
        except SupercritError:
            return ph
        if q <= 1e-9:
            return "liquid"
        if q >= 1.0 - 1e-9:
            return "gas"
    return ph


def route_figures(scenario, rr, steps: tuple[StepAnalysis, ...]) -> dict:
    """Key figures [SI]: shaft power, heating and cooling duty, product flow, specific energy,
    net power and thermal efficiency of closed cycles, smallest margin per rule, crossings."""
    shaft = sum(r.power for r in rr.steps.values() if r.kind in ("compress", "pump", "expand"))
    heating = sum(r.duty for r in rr.steps.values() if r.duty > 0)
    cooling = -sum(r.duty for r in rr.steps.values() if r.duty < 0)
    product = sum(rec.stream.mass_flow for rec in rr.streams if rec.dst in rr.steps
                  and rr.steps[rec.dst].kind == "sink")
    has_expander = any(r.kind == "expand" for r in rr.steps.values())
    closed = has_expander and _returns_to_feed(rr)
    margins = {}
    for sa in steps:
        for r in sa.reasons:
            if r.margin is not None:
                cur = margins.get(r.rule)
                if cur is None or r.margin < cur["value"]:
                    margins[r.rule] = {"value": r.margin, "kind": r.margin_kind, "step": r.step_id}
    fig = {
        "shaft_power": shaft,
        "heating_duty": heating,
        "cooling_duty": cooling,
        "product_flow": product,
        "specific_energy": shaft / product if product > 0 and not closed else None,
        "closed_cycle": closed,
        "net_power": -shaft if closed else None,
        "thermal_efficiency": (-shaft / heating) if closed and heating > 0 else None,
        "crossings": sum(len(sa.crossings) for sa in steps),
        "smallest_margins": dict(sorted(margins.items())),
        "recycle_iterations": rr.iterations,
    }
    return fig


def _returns_to_feed(rr) -> bool:
    """A power cycle written open: every sink receives the state a feed started from (1 K, 1 %)."""
    feeds = [r.outlets["out"] for r in rr.steps.values() if r.kind == "feed" and "out" in r.outlets]
    sinks = [rec.stream for rec in rr.streams if rec.dst in rr.steps and rr.steps[rec.dst].kind == "sink"]
    if not feeds or not sinks:
        return False
    return all(any(abs(s.T - f.T) < 1.0 and abs(s.p / f.p - 1.0) < 0.01 for f in feeds) for s in sinks)


_PERTURBED: dict = {}


def _kij_checks(scenario, rr, fmt) -> list[Reason]:
    """Re-evaluate envelope-dependent margins with each published alternative k_ij; say when a verdict flips."""
    from ..thermo.kij import kij_source

    comps = tuple(scenario.fluid.components)
    if len(comps) < 2:
        return []
    out = []
    model = scenario.fluid.model

    def perturbed(fluid, a, b, value):
        # the stream's own fluid (its k_ij set, overrides and constants) with one pair changed; one perturbed
        # Fluid, and so one envelope trace, per model, composition, k_ij table and change
        key = (fluid.signature, a, b, float(value))
        if key not in _PERTURBED:
            if len(_PERTURBED) >= 64:
                _PERTURBED.clear()
            _PERTURBED[key] = fluid.with_kij({(a, b): float(value)})
        return _PERTURBED[key]

    for sid, res in rr.steps.items():
        if res.kind not in ("compress", "pump", "pipe"):
            continue
        inl = _inlets(rr, sid)
        if not inl:
            continue
        s = inl[0]
        names = [c for c, v in s.composition.items() if v > 0]
        for i, a in enumerate(names):
            for b in names[i + 1:]:
                kv = kij_source(a, b, model)
                if kv is None or not kv.alternatives:
                    continue
                for set_name, value, _src in kv.alternatives:
                    try:
                        f2 = perturbed(s.fluid, a, b, value)
                        if res.kind == "compress":
                            Td = dew_temperature(f2, s.p)
                            if Td is None:
                                continue
                            m, base = s.T - Td, dew_temperature(s.fluid, s.p)
                            base_m = None if base is None else s.T - base
                            rule, need = "dew-margin", scenario.limits.compressor_dew_margin
                        elif res.kind == "pump":
                            Tb = bubble_temperature(f2, s.p)
                            if Tb is None:
                                continue
                            m, base = Tb - s.T, bubble_temperature(s.fluid, s.p)
                            base_m = None if base is None else base - s.T
                            rule, need = "subcooling", scenario.limits.pump_subcooling
                        else:
                            pcb = cricondenbar(f2)
                            if pcb is None:
                                continue
                            pmin = min(float(st.p) for st in res.paths[0].states) if res.paths else s.p
                            m, base_p = pmin - pcb, cricondenbar(s.fluid)
                            base_m = None if base_p is None else pmin - base_p
                            rule, need = "cricondenbar", scenario.limits.cricondenbar_margin
                    except SupercritError:
                        continue
                    if base_m is not None and abs(base_m) < 1e-6 and rule != "cricondenbar":
                        base_m = 0.0
                    flips = base_m is not None and ((base_m >= need) != (m >= need) or (base_m >= 0) != (m >= 0))
                    kindu = "pressure_difference" if rule == "cricondenbar" else "temperature_difference"
                    fm = fmt.dp if rule == "cricondenbar" else fmt.dT
                    text = (f"{sid}: {rule} margin {fm(base_m) if base_m is not None else 'n/a'} with the default k_ij "
                            f"{a}-{b}; {fm(m)} with the {set_name} value {float(value):+.4f}")
                    if flips:
                        text += " - the verdict could flip"
                    out.append(Reason(Level.WARN if flips else Level.FEASIBLE, sid, "kij-sensitivity", text, m, kindu))
    return out


def analyze_route(scenario, rr) -> RouteAnalysis:
    fmt = _Fmt(getattr(scenario, "display_units", "engineering"))
    steps = tuple(analyze_step(scenario, rr, sid, res, fmt) for sid, res in rr.steps.items())
    kij = tuple(_kij_checks(scenario, rr, fmt))
    extra = list(kij)
    if scenario.fluid.model == "ideal-gas":
        extra.extend(_ideal_gas_check(scenario, rr, fmt))
    verdict = Verdict.of([r for sa in steps for r in sa.reasons] + extra)
    return RouteAnalysis(rr.route_id, steps, verdict, route_figures(scenario, rr, steps), kij)


def _ideal_gas_check(scenario, rr, fmt):
    from ..thermo.fluid import Fluid

    out = []
    band = scenario.limits.ideal_gas_Z_band
    for rec in rr.streams:
        s = rec.stream
        try:
            Z = float(Fluid(s.composition, model="peng-robinson").state(T=s.T, p=s.p).Z)
        except SupercritError:
            continue
        if abs(Z - 1.0) > band:
            out.append(Reason(Level.WARN, rec.src, "ideal-gas-model",
                              f"{rec.src}: the ideal-gas model is used where Peng-Robinson gives Z = {Z:.3f} "
                              f"at {fmt.T(s.T)} and {fmt.p(s.p)}", band - abs(Z - 1.0), "fraction"))
            break
    return out


def _rank_key(ra: RouteAnalysis):
    f = ra.figures
    if f.get("closed_cycle") and f.get("thermal_efficiency") is not None:
        perf = -f["thermal_efficiency"]
    elif f.get("specific_energy") is not None:
        perf = f["specific_energy"]
    else:
        perf = f.get("shaft_power", 0.0)
    mins = [v["value"] for v in f.get("smallest_margins", {}).values() if v["kind"] == "temperature_difference"]
    return (int(ra.verdict.level), perf, -(min(mins) if mins else 0.0), ra.route_id)


def analyze_scenario(scenario, result, errors: dict | None = None) -> ScenarioAnalysis:
    """Analyse every solved route and rank them (see RANKING_RULE)."""
    routes = [analyze_route(scenario, rr) for rr in result.routes.values()]
    errors = dict(errors or {})
    for rid, msg in errors.items():
        routes.append(RouteAnalysis(rid, (), Verdict(Level.NOT_COMPUTED, (Reason(Level.NOT_COMPUTED, "", "route", msg),)),
                                    {}, ()))
    ranked = sorted(routes, key=_rank_key)
    ranks = {ra.route_id: i + 1 for i, ra in enumerate(ranked)}
    out = tuple(RouteAnalysis(ra.route_id, ra.steps, ra.verdict, ra.figures, ra.kij_checks, ranks[ra.route_id])
                for ra in routes)
    return ScenarioAnalysis(out, RANKING_RULE, errors)


__all__ = ["analyze_route", "analyze_scenario", "RouteAnalysis", "StepAnalysis", "ScenarioAnalysis", "RANKING_RULE"]
