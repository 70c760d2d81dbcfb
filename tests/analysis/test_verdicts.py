"""Verdicts on hand-made routes where the answer is known from the model itself or a published value."""
import pytest

from supercrit.analysis.verdict import Level
from supercrit.runner import run_scenario

FIVE = "{CO2: 0.96, N2: 0.02, O2: 0.01, Ar: 0.005, CH4: 0.005}"  # the five-component mixture of the tests


def _route(ra_list, rid):
    return next(r for r in ra_list if r.route_id == rid)


def _reasons(ra, rule):
    return [r for r in ra.verdict.reasons if r.rule == rule]


def test_compressor_fed_at_its_dew_point_is_flagged():
    """Saturated CO2 vapour (0 K dew-point margin) at a compressor inlet: infeasible."""
    from supercrit import Fluid

    T = Fluid("CO2", model="pr").saturation(p=30e5).T
    text = f"""
name: dew-inlet
fluid: {{components: CO2, model: peng-robinson}}
feed: {{T: {T} K, p: 30 bar, flow: 1 kg/s}}
routes:
  - id: r
    steps:
      - {{id: f, kind: feed}}
      - {{id: c1, kind: compress, p_out: 60 bar, efficiency: 0.8}}
      - {{id: s, kind: sink}}
"""
    run = run_scenario(text)
    ra = run.analysis.routes[0]
    dew = _reasons(ra, "dew-margin")
    assert dew and dew[0].level == Level.INFEASIBLE and dew[0].margin == pytest.approx(0.0, abs=1e-6)
    assert ra.verdict.level == Level.INFEASIBLE


def test_mixture_pumped_from_just_below_its_cricondenbar_is_two_phase_at_the_inlet():
    """The five-component mixture 1 bar below its PR cricondenbar, at the cricondenbar temperature, lies inside
    its phase envelope: the pump inlet is flagged two-phase."""
    from supercrit import Fluid

    fl = Fluid({"CO2": 0.96, "N2": 0.02, "O2": 0.01, "Ar": 0.005, "CH4": 0.005}, model="pr")
    cb = fl.envelope().cricondenbar
    text = f"""
name: pump-below-cricondenbar
fluid: {{components: {FIVE}, model: peng-robinson}}
feed: {{T: {cb.T} K, p: {(cb.p - 1e5) / 1e5} bar, flow: 10 kg/s}}
routes:
  - id: r
    steps:
      - {{id: f, kind: feed}}
      - {{id: p1, kind: pump, p_out: 120 bar, efficiency: 0.75}}
      - {{id: s, kind: sink}}
"""
    run = run_scenario(text)
    ra = run.analysis.routes[0]
    pump = _reasons(ra, "pump-inlet")
    assert pump and pump[0].level == Level.INFEASIBLE and "two-phase" in pump[0].text


def test_throttle_of_saturated_liquid_to_5_bar_flags_solid_co2():
    """60 bar saturated liquid CO2 throttled to 5 bar passes the triple point, 216.592 K and 5.1795 bar
    (Span & Wagner 1996, Table 34): solid CO2 forms; with Span-Wagner the outlet holds dry ice."""
    from supercrit import Fluid

    T = Fluid("CO2", model="sw").saturation(p=60e5).T - 1e-6
    text = f"""
name: letdown
fluid: {{components: CO2}}
feed: {{T: {T} K, p: 60 bar, flow: 1 kg/s}}
routes:
  - id: sw
    steps:
      - {{id: f, kind: feed}}
      - {{id: v1, kind: throttle, p_out: 5 bar}}
      - {{id: s, kind: sink}}
"""
    run = run_scenario(text)
    ra = run.analysis.routes[0]
    solid = _reasons(ra, "solid-CO2")
    assert solid and solid[0].level == Level.INFEASIBLE
    out = run.result.routes["sw"].steps["v1"].outlets["out"].state
    assert "solid" in str(out.phase) and out.solid_fraction > 0.0
    # the same route with Peng-Robinson stops at the triple-point pressure and still says solid CO2
    pr = run_scenario(text.replace("components: CO2}", "components: CO2, model: peng-robinson}"))
    assert pr.errors or _reasons(pr.analysis.routes[0], "solid-CO2")
