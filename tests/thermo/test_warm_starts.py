"""Neighbour-started and single-state fast paths give the same answers as the general solvers.

The checks are internal consistency only (the same equations solved two ways); every reference
comparison of these states lives in the other thermo tests.
"""
import numpy as np
import pytest

from supercrit import Fluid
from supercrit.thermo.solvers import saturation as sat_mod
from supercrit.thermo.solvers.density import _branch_density_scalar, stable_density
from supercrit.thermo.solvers.flash_near import isobar_walker, single_phase_p_prop

PURE_MODELS = ["span-wagner", "peng-robinson", "soave-redlich-kwong"]


@pytest.mark.parametrize("model", PURE_MODELS)
def test_near_start_gives_the_full_flash_answer(model):
    """(p, h) from a neighbour equals the (p, h) flash of a batch (which never uses the neighbour path),
    across gas, liquid, supercritical and two-phase targets, with neighbours on the other side of the
    saturation line too."""
    f = Fluid("CO2", model=model)
    rng = np.random.default_rng(7)
    T = rng.uniform(222.0, 420.0, 60)
    p = rng.uniform(6e5, 2.0e7, 60)
    ref = f.state(T=T, p=p)
    h = ref.h
    nb = f.state(T=np.clip(T + rng.uniform(-25, 25, 60), 220.0, 450.0), p=p * rng.uniform(0.8, 1.25, 60))
    batch = f.state(p=np.append(p, p[:1]), h=np.append(h, h[:1]))  # n > 1: the general batch path
    for i in range(60):
        near = f.state(T=float(nb.T[i]), p=float(nb.p[i]))
        st = f.state(p=float(p[i]), h=float(h[i]), near=near)
        assert float(st.T) == pytest.approx(float(batch.T[i]), abs=1e-7)
        assert str(st.phase) == str(batch.phase[i])
        assert float(st.h) == pytest.approx(float(h[i]), rel=1e-10, abs=1e-6)


@pytest.mark.parametrize("model", PURE_MODELS)
def test_two_phase_target_from_a_single_phase_neighbour_is_two_phase(model):
    """A neighbour-started Newton lands on a metastable single phase inside the dome; it must be refused."""
    f = Fluid("CO2", model=model)
    sat = f.saturation(p=40e5)
    h = 0.5 * (float(sat.liquid.h) + float(sat.vapor.h))
    near = f.state(T=float(sat.T) + 3.0, p=40e5)  # superheated vapour next door
    st = f.state(p=40e5, h=h, near=near)
    assert str(st.phase) == "two-phase"
    assert float(st.vapor_fraction) == pytest.approx(0.5, abs=1e-9)


def test_near_start_for_a_mixture_keeps_the_flash_answer():
    f = Fluid({"CO2": 0.95, "N2": 0.03, "CH4": 0.02}, model="peng-robinson")
    for T, p in [(320.0, 80e5), (260.0, 20e5), (250.0, 40e5), (300.0, 120e5)]:
        ref = f.state(T=T, p=p)
        near = f.state(T=T + 8.0, p=p * 1.05)
        st = f.state(p=p, h=float(ref.h), near=near)
        assert float(st.T) == pytest.approx(T, abs=1e-6)
        assert str(st.phase) == str(ref.phase)


def test_single_phase_newton_solves_both_specifications():
    f = Fluid("N2", model="peng-robinson")
    ref = f.state(T=250.0, p=150e5)
    for key in ("h", "s"):
        got = single_phase_p_prop(f.model, f.ideal, f.M_i, f.x, 150e5, float(getattr(ref, key)), key, 300.0,
                                  5000.0, 60.0, 1000.0)
        assert got is not None
        assert got[0] == pytest.approx(250.0, abs=1e-8)
        assert got[1] == pytest.approx(float(ref.rho_molar), rel=1e-10)


def test_branch_density_scalar_equals_the_array_path():
    f = Fluid("CO2", model="span-wagner")
    rng = np.random.default_rng(3)
    T = rng.uniform(217.0, 450.0, 300)
    p = rng.uniform(5.3e5, 3e7, 300)
    arr = stable_density(f.model, T, p, np.broadcast_to(f.x, (300, 1)))
    decided = 0
    for Ti, pi, ra in zip(T, p, arr):
        r = _branch_density_scalar(f.model, float(Ti), float(pi), (1.0,))
        if r is not None:
            decided += 1
            assert r == pytest.approx(float(ra), rel=1e-11)
    assert decided >= 280  # only states within 0.5 % of the vapour pressure or 0.5 K of Tc are left to the array path


@pytest.mark.parametrize("model", PURE_MODELS)
def test_one_saturation_temperature_equals_the_array_solver(model):
    f = Fluid("CO2", model=model)
    c = f._crit
    ps = np.linspace(5.3e5, 0.99 * c.p, 25)
    arr = sat_mod.saturation_temperature(f.model, ps, c, f.x, T_min=216.592)  # batch: the array solver
    # within 0.05 K of Tc the single-state Newton stands aside and the array solver answers
    assert sat_mod._saturation_T_one(f.model, 0.9999 * c.p, c, 216.592) is None
    assert float(f.saturation(p=0.9999 * c.p).T) < c.T
    for pi, Ta, rl, rv in zip(ps, arr.T, arr.rho_liq, arr.rho_vap):
        one = sat_mod._saturation_T_one(f.model, float(pi), c, 216.592)
        assert one is not None
        assert one.T == pytest.approx(float(Ta), abs=1e-9)
        assert one.rho_liq == pytest.approx(float(rl), rel=1e-9)
        assert one.rho_vap == pytest.approx(float(rv), rel=1e-9)


def test_isobar_walker_follows_the_state_cp():
    f = Fluid("CO2", model="span-wagner")
    cp = isobar_walker(f, 80e5, "cp")
    for T in (305.0, 307.5, 308.0, 309.0, 315.0, 340.0):
        assert cp(T) == pytest.approx(float(f.state(T=T, p=80e5).cp), rel=1e-9)


@pytest.mark.parametrize("model", PURE_MODELS)
def test_near_start_from_a_dense_supercritical_neighbour_does_not_stop_inside_the_dome(model):
    """Found while checking the analysis of the bundled extraction sweep: an isenthalpic throttle path of
    CO2 (h = -8043 J/mol) from 76 bar, 305 K into the dome. From the dense supercritical neighbour the
    Newton in (T, rho) ended on a spurious root inside the dome (300.9 K, 68.1 bar, 10,230 mol/m3, between
    the saturated densities 6,400 and 15,100, where Span-Wagner's loop has dp/drho > 0) and the state was
    returned as gas, vapour fraction 1. The state
    must be the two-phase one of the full flash."""
    f = Fluid("CO2", model=model)
    h = -8043.214548195305
    near = f.state(p=7622500.0, h=h)
    assert str(near.phase) == "supercritical"
    for p in (6811250.0, 6836601.5625, 6849277.34375):
        s = f.state(p=p, h=h, near=near)
        full = f.state(p=np.array([p, p]), h=np.array([h, h]))
        assert str(s.phase) == "two-phase"
        assert float(s.T) == pytest.approx(float(full.T[0]), abs=1e-9)
        assert float(s.vapor_fraction) == pytest.approx(float(full.vapor_fraction[0]), abs=1e-9)


@pytest.mark.parametrize("model", PURE_MODELS)
def test_two_phase_neighbour_goes_straight_to_the_flash(model, monkeypatch):
    """A path sample inside the dome started from a two-phase neighbour (a condenser, a heater after a
    valve): the answer is the full flash's, and it costs no more model evaluations than that flash (a
    single-phase Newton tried first from the neighbour cost 23 evaluations instead of 8 with Span-Wagner)."""
    f = Fluid("CO2", model=model)
    sat = f.saturation(p=59.9e5)
    hL, hV = float(sat.liquid.h), float(sat.vapor.h)
    near = f.state(p=59.91e5, h=0.5 * (hL + hV))
    target = 0.45 * hL + 0.55 * hV
    calls = [0]
    cls = type(f.model)
    for name in ("alphar_derivs", "alphar_derivs_scalar"):
        orig = getattr(cls, name, None)
        if orig is None:
            continue

        def counted(*a, _orig=orig, **k):
            calls[0] += 1
            return _orig(*a, **k)
        monkeypatch.setattr(cls, name, counted)
    f.state(p=59.89e5, h=target)  # warm any per-fluid caches
    calls[0] = 0
    full = f.state(p=59.88e5, h=target)
    n_full = calls[0]
    calls[0] = 0
    st = f.state(p=59.88e5, h=target, near=near)
    assert calls[0] <= n_full
    assert str(st.phase) == "two-phase"
    assert float(st.T) == float(full.T) and float(st.vapor_fraction) == pytest.approx(float(full.vapor_fraction),
                                                                                        rel=1e-12)
