"""Compressor, pump, expander, throttle and heater against closed forms and a reference library."""
import math

import numpy as np
import pytest

from supercrit.scenario import load_scenario
from supercrit.steps import solve_route

ARGON = """
name: {name}
fluid: {{components: argon, model: ideal-gas}}
feeds: [{{id: f, T: 300 K, p: 1 bar, flow: 1 mol/s}}]
routes:
  - id: r
    steps:
      - {{id: src, kind: feed}}
{steps}
      - {{id: out, kind: sink}}
"""


def _argon(steps, name="t"):
    return load_scenario(ARGON.format(name=name, steps=steps))


# Ideal gas with constant cp: argon's ideal-gas cp is exactly 5/2 R (monatomic; the reference EOS of
# Tegeler et al. 1999 has no Planck-Einstein terms), so k = 5/3. Closed form of an isentropic
# compression: T2 = T1 (P2/P1)^((k-1)/k); with isentropic efficiency eta: T2 = T1 (1 + (r^((k-1)/k) - 1)/eta)
# (any thermodynamics textbook; e.g. Cengel & Boles, Thermodynamics, Eq. 7-45 and 7-60, from memory).
@pytest.mark.parametrize("eta", [1.0, 0.8])
def test_ideal_gas_isentropic_compression_matches_closed_form(eta):
    sc = _argon(f"      - {{id: c, kind: compress, p_out: 5 bar, efficiency: {eta}}}")
    res = solve_route(sc, "r")
    k = 5.0 / 3.0
    T2 = 300.0 * (1.0 + (5.0 ** ((k - 1) / k) - 1.0) / eta)
    assert res.stream("c").T == pytest.approx(T2, rel=1e-9)
    R = 8.31446261815324  # CODATA 2018
    assert res.steps["c"].power == pytest.approx(2.5 * R * (T2 - 300.0), rel=1e-9)  # n cp (T2 - T1), n = 1 mol/s
    path = res.steps["c"].path
    assert len(path.states) >= 21 and path.p[0] == pytest.approx(1e5) and path.p[-1] == pytest.approx(5e5)
    assert np.all(np.diff(path.T) > 0)


def test_ideal_gas_polytropic_compression_matches_closed_form():
    # constant cp ideal gas, dh = v dp / eta_p  =>  T2 = T1 r^((k-1)/(k eta_p)) (closed form of the ODE)
    sc = _argon("      - {id: c, kind: compress, p_out: 8 bar, polytropic_efficiency: 0.8}")
    res = solve_route(sc, "r")
    k = 5.0 / 3.0
    assert res.stream("c").T == pytest.approx(300.0 * 8.0 ** ((k - 1) / (k * 0.8)), rel=1e-5)


def test_equivalent_polytropic_efficiency_of_an_isentropic_spec_is_the_ideal_gas_value():
    sc = _argon("      - {id: c, kind: compress, p_out: 4 bar, efficiency: 0.75}")
    res = solve_route(sc, "r")
    k, r = 5.0 / 3.0, 4.0
    m = (k - 1) / k
    eta_p = m * math.log(r) / math.log(1 + (r ** m - 1) / 0.75)  # ideal-gas relation, constant cp
    assert res.steps["c"].extras["polytropic_efficiency"][0] == pytest.approx(eta_p, rel=1e-4)
    assert res.steps["c"].path.states[-2].T < res.stream("c").T


def test_ideal_gas_throttle_keeps_temperature():
    # ideal gas: h = h(T) only, so an isenthalpic throttle keeps T exactly (Joule-Thomson coefficient 0)
    sc = _argon("      - {id: v, kind: throttle, p_out: 0.2 bar}")
    res = solve_route(sc, "r")
    assert res.stream("v").T == pytest.approx(300.0, rel=1e-12)
    assert all(s.T == pytest.approx(300.0, rel=1e-12) for s in res.steps["v"].path.states)


def test_ideal_gas_expander_closed_form():
    sc = _argon("      - {id: e, kind: expand, p_out: 0.25 bar, efficiency: 0.85}")
    res = solve_route(sc, "r")
    k = 5.0 / 3.0
    T2 = 300.0 * (1.0 - 0.85 * (1.0 - 0.25 ** ((k - 1) / k)))
    assert res.stream("e").T == pytest.approx(T2, rel=1e-9)
    assert res.steps["e"].power < 0


def test_multistage_power_equals_the_sum_of_its_single_stages():
    text = """
name: stages
fluid: {components: CO2, model: pr}
feeds: [{id: f, T: 35 degC, p: 1.5 bar, flow: 1 kg/s}]
routes:
  - id: multi
    steps:
      - {id: src, kind: feed}
      - {id: c, kind: compress, p_out: 16 bar, stages: 3, intercool_T: 35 degC, intercool_dp: 0.1 bar,
         efficiency: 0.8}
      - {id: out, kind: sink}
  - id: single
    steps:
      - {id: src, kind: feed}
      - {id: c1, kind: compress, ratio: %(r)r, efficiency: 0.8}
      - {id: ic1, kind: cool, T_out: 35 degC, dp: 0.1 bar}
      - {id: c2, kind: compress, ratio: %(r)r, efficiency: 0.8}
      - {id: ic2, kind: cool, T_out: 35 degC, dp: 0.1 bar}
      - {id: c3, kind: compress, p_out: 16 bar, efficiency: 0.8}
      - {id: out, kind: sink}
"""
    from supercrit.steps.compress import _stage_ratio

    r = _stage_ratio(1.5e5, 16e5, 3, 0.1e5)
    sc = load_scenario(text % {"r": r})
    multi = solve_route(sc, "multi")
    single = solve_route(sc, "single")
    assert multi.total_power == pytest.approx(sum(single.steps[s].power for s in ("c1", "c2", "c3")), rel=1e-9)
    assert multi.total_duty == pytest.approx(single.steps["ic1"].duty + single.steps["ic2"].duty, rel=1e-9)
    assert multi.stream("c").T == pytest.approx(single.stream("c3").T, rel=1e-9)
    assert multi.steps["c"].extras["stage_pressure_ratio"][0] == pytest.approx(r, rel=1e-12)


def test_pr_throttle_of_co2_matches_coolprop_pr():
    CP = pytest.importorskip("CoolProp.CoolProp")
    # Reference: CoolProp 8.0.0, AbstractState("PR", "CO2") (same Tc, pc, omega; ideal-gas part of
    # the Span-Wagner EOS as ours): isenthalpic from 60 bar / 20 degC to 10 bar. CoolProp 8.0.0's PR
    # (h, p) update raises "type not set" here, so its outlet is built from its own saturation states
    # at 10 bar by the lever rule: T = Tsat(10 bar), q = (h - h_L)/(h_V - h_L).
    A = CP.AbstractState("PR", "CO2")
    A.update(CP.PT_INPUTS, 60e5, 293.15)
    h = A.hmolar()
    A.update(CP.PQ_INPUTS, 10e5, 0.0)
    T_sat, h_L = A.T(), A.hmolar()
    A.update(CP.PQ_INPUTS, 10e5, 1.0)
    q = (h - h_L) / (A.hmolar() - h_L)
    text = f"""
name: pr-throttle
fluid: {{components: CO2, model: pr}}
feeds: [{{id: f, T: 20 degC, p: 60 bar, flow: 1 kg/s}}]
routes:
  - id: r
    steps:
      - {{id: src, kind: feed}}
      - {{id: v, kind: throttle, p_out: 10 bar}}
      - {{id: out, kind: sink}}
"""
    res = solve_route(load_scenario(text), "r")
    out = res.stream("v")
    assert out.T == pytest.approx(T_sat, abs=1e-6)
    assert out.state.vapor_fraction == pytest.approx(q, abs=1e-8)


def test_heater_to_vapor_fraction_and_duty():
    text = """
name: boil
fluid: {components: CO2, model: pr}
feeds: [{id: f, T: 0 degC, p: 30 bar, flow: 2 kg/s}]
routes:
  - id: r
    steps:
      - {id: src, kind: feed}
      - {id: h, kind: heat, vapor_fraction: 0.5, dp: 0.1 bar}
      - {id: k, kind: cool, duty: 50 kW}
      - {id: out, kind: sink}
"""
    res = solve_route(load_scenario(text), "r")
    assert res.stream("h").state.vapor_fraction == pytest.approx(0.5, abs=1e-9)
    assert res.stream("h").p == pytest.approx(29.9e5)
    assert res.steps["k"].duty == pytest.approx(-50e3, rel=1e-12)
    assert len(res.steps["h"].path.states) == 21
    # balances close to 1e-9 (checked by the solver; here their values)
    assert res.balance.energy < 1e-9 and res.balance.mass < 1e-12
    assert all(b.energy < 1e-9 for b in res.step_balances.values())
