"""Recycle convergence, balances, exchanger approach, vessel and pipe."""
import math

import numpy as np
import pytest

from supercrit.errors import ConvergenceError
from supercrit.scenario import load_scenario
from supercrit.steps import solve_route

R = 8.31446261815324  # CODATA 2018

LOOP = """
name: loop
fluid: {components: argon, model: ideal-gas}
feeds: [{id: f, T: 300 K, p: 2 bar, flow: 1 mol/s}]
routes:
  - id: r
    steps:
      - {id: src, kind: feed}
      - {id: join, kind: mix, from: [src, back]}
      - {id: h, kind: heat, T_out: 400 K, dp: 0.1 bar}
      - {id: tee, kind: split, fractions: {purge: 0.3, recycle: 0.7}}
      - {id: purge, kind: sink, from: tee.purge}
      - {id: back, kind: compress, from: tee.recycle, p_out: 2.2 bar, efficiency: 0.7}
"""


def test_recycle_converges_with_the_analytic_flow():
    res = solve_route(load_scenario(LOOP), "r")
    assert res.plan.tears == (("back", "join"),)
    assert res.iterations < 50
    # steady state: n_loop = F + 0.7 n_loop  =>  n_loop = F / 0.3 (mass balance of the mixer)
    assert res.stream("join").n == pytest.approx(1.0 / 0.3, rel=1e-9)
    assert res.stream("tee", "purge").n == pytest.approx(1.0, rel=1e-9)
    # energy: the purge leaves at 400 K; route balance = heat + power = n cp (400 - 300) for n = 1
    assert res.total_power + res.total_duty == pytest.approx(2.5 * R * 100.0, rel=1e-8)
    assert res.balance.energy < 1e-9


def test_recycle_that_cannot_converge_in_the_allowed_passes_raises():
    with pytest.raises(ConvergenceError, match="did not converge"):
        solve_route(load_scenario(LOOP), "r", max_iter=2)


def test_exchanger_equal_capacity_rates_keep_a_constant_approach():
    text = """
name: hx
fluid: {components: argon, model: ideal-gas}
feeds:
  - {id: hot, T: 400 K, p: 1 bar, flow: 1 mol/s}
  - {id: cold, T: 300 K, p: 1 bar, flow: 1 mol/s}
routes:
  - id: r
    steps:
      - {id: h, kind: feed, feed: hot}
      - {id: c, kind: feed, feed: cold}
      - {id: x, kind: exchange, from: {hot: h, cold: c}, hot_T_out: 350 K}
      - {id: ho, kind: sink, from: x.hot}
      - {id: co, kind: sink, from: x.cold}
"""
    res = solve_route(load_scenario(text), "r")
    x = res.steps["x"]
    # ideal gas, constant cp, equal n cp: counter-current approach is the same at every section = 50 K
    assert res.stream("x", "cold").T == pytest.approx(350.0, rel=1e-10)
    assert np.allclose(x.extras["approach_T"], 50.0, rtol=1e-9)
    assert len(x.extras["approach_T"]) >= 21
    assert x.extras["duty_transferred"] == pytest.approx(2.5 * R * 50.0, rel=1e-10)


def test_vessel_chrastil_solubility_hand_value():
    text = """
name: vessel
fluid: {components: CO2, model: pr}
feeds: [{id: f, T: 40 degC, p: 200 bar, flow: 1 kg/s}]
routes:
  - id: r
    steps:
      - {id: src, kind: feed}
      - {id: ex, kind: vessel, solubility: {k: 4.0, a: -5000 K, b: -10.0}, density_window: [700 kg/m3, 800 kg/m3]}
      - {id: out, kind: sink}
"""
    res = solve_route(load_scenario(text), "r")
    ex = res.steps["ex"]
    rho = ex.extras["solvent_density"]
    # Chrastil, J. Phys. Chem. 86 (1982) 3016, Eq. 7: c = rho^k exp(a/T + b)
    assert ex.extras["solubility"] == pytest.approx(rho ** 4 * math.exp(-5000 / 313.15 - 10.0), rel=1e-12)
    assert rho == pytest.approx(res.stream("src").state.rho_mass)
    assert (700 <= rho <= 800) == (not ex.notes)


def test_isothermal_ideal_gas_column_follows_the_barometric_formula():
    # A slow flow up a vertical pipe held at its inlet temperature (large U, T_surroundings = T):
    # p2/p1 = exp(-M g dz / (R T)) (isothermal hydrostatics of an ideal gas); friction ~ 0 at this flow.
    text = """
name: column
fluid: {components: argon, model: ideal-gas}
feeds: [{id: f, T: 300 K, p: 10 bar, flow: 1e-6 kg/s}]
routes:
  - id: r
    steps:
      - {id: src, kind: feed}
      - {id: up, kind: pipe, length: 2000 m, diameter: 0.1 m, roughness: 0 m, elevation_change: 2000 m,
         U: 1000 W/m2/K, T_surroundings: 300 K, segments: 40}
      - {id: out, kind: sink}
"""
    res = solve_route(load_scenario(text), "r")
    M = 0.039948  # [kg/mol] argon, Tegeler et al. 1999
    g = 9.80665
    # rel 1e-5: Heun's scheme on 40 segments (measured error 3e-6)
    assert res.stream("up").p == pytest.approx(10e5 * math.exp(-M * g * 2000 / (R * 300.0)), rel=1e-5)
    assert all(abs(s.T - 300.0) < 1e-6 for s in res.steps["up"].path.states)
    assert res.steps["up"].mechanical == pytest.approx(1e-6 * g * 2000, rel=1e-3)


def test_injection_well_gains_pressure_and_a_long_line_loses_it():
    text = """
name: well
fluid: {components: CO2, model: pr}
feeds: [{id: f, T: 20 degC, p: 100 bar, flow: 30 kg/s}]
routes:
  - id: r
    steps:
      - {id: src, kind: feed}
      - {id: line, kind: pipe, length: 20 km, diameter: 0.3 m, roughness: 0.045 mm, U: 2 W/m2/K,
         T_surroundings: 10 degC}
      - {id: well, kind: pipe, length: 1500 m, diameter: 0.1 m, roughness: 0.05 mm, elevation_change: -1500 m}
      - {id: out, kind: sink}
"""
    res = solve_route(load_scenario(text), "r")
    assert res.stream("line").p < 100e5
    assert res.stream("line").T < 293.15
    assert res.stream("well").p > res.stream("line").p
    assert res.steps["line"].duty < 0
    assert all(b.energy < 1e-9 for b in res.step_balances.values())
