"""The lean one-state (T, p) path of ``Fluid.state`` gives the general paths' answers.

Identities only (the general paths are checked against published values and CoolProp elsewhere):
one state on Python floats (pure fluid, cubic model) against (a) a State built the ordinary way from
the same (T, rho) - equal exactly, the same formulas run - and (b) the batched numpy path - equal to
round-off (1e-12 relative; h, s, u, g on the scale of R T as they are differences from a reference
state). States: gas, liquid, supercritical, within 1e-6 .. 1e-3 of the saturation pressure on both
sides, and states where the cubic has two stable roots so that the Gibbs energy decides.
"""
import numpy as np
import pytest

import supercrit as sc
from supercrit.errors import InputError, ModelRangeError, PropertyUndefinedError
from supercrit.thermo.components import get_component
from supercrit.thermo.ideal_gas import IdealGasParts
from supercrit.thermo.properties import reduced_gibbs_residual
from supercrit.thermo.solvers.density import stable_density
from supercrit.thermo.state import State

PROPS = ("T", "p", "rho_molar", "rho_mass", "Z", "h", "s", "u", "g", "h_mass", "s_mass", "u_mass", "g_mass",
         "cp", "cv", "cp_mass", "cv_mass", "w", "mu_jt", "kappa_T", "alpha_p", "M")
CASES = [("CO2", "pr"), ("CO2", "srk"), ("CO2", "prt"), ("CO2", "vdw"), ("CO2", "rk"), ("N2", "pr"),
         ("propane", "pr78")]


def _states(f, n=60, seed=3):
    """(T, p) arrays: random gas/liquid/supercritical states plus states hugging the saturation line."""
    rng = np.random.default_rng(seed)
    c = f.critical_point()
    lo, hi = f._T_limits()
    T_lo = max(lo, get_component(f.components[0]).Tt, 0.5 * c.T)
    T = rng.uniform(T_lo, min(hi, 2.2 * c.T), n)
    p = np.exp(rng.uniform(np.log(1e-3 * c.p), np.log(6.0 * c.p), n))
    Ts = rng.uniform(T_lo + 1.0, c.T - 0.05, 12)
    ps = np.asarray(f.saturation(T=Ts).p)
    rel = np.array([1e-6, 1e-4, 1e-3])
    Tn = np.repeat(Ts, 6)
    pn = np.concatenate([ps[:, None] * (1.0 - rel), ps[:, None] * (1.0 + rel)], axis=1).ravel()
    return np.concatenate([T, Tn]), np.concatenate([p, pn])


def _close(a, b, scale=0.0):
    return abs(a - b) <= 1e-12 * (abs(b) + scale)


@pytest.mark.parametrize("name, model", CASES)
def test_one_state_equals_ordinary_state_exactly(name, model):
    f = sc.Fluid({name: 1.0}, model=model)
    T, p = _states(f)
    for Ti, pi in zip(T.tolist(), p.tolist()):
        st = f.state(T=Ti, p=pi)
        assert "_single" in st.__dict__  # made by the lean path (properties computed with the root)
        ref = State(f.model, f.ideal, f.M_i, np.asarray(Ti), np.asarray(st.rho_molar), f._xb(()),
                    np.asarray(st.phase_))
        assert float(stable_density(f.model, Ti, pi, f.x)) == st.rho_molar
        for k in PROPS:
            a, b = getattr(st, k), getattr(ref, k)
            assert type(a) is float and a == b, (k, Ti, pi, a, b)
        assert st.phase is ref.phase
        assert st.composition == ref.composition


@pytest.mark.parametrize("name, model", CASES)
def test_one_state_equals_batched_path(name, model):
    f = sc.Fluid({name: 1.0}, model=model)
    T, p = _states(f, seed=5)
    batch = f.state(T=T, p=p)
    vals = {k: np.asarray(getattr(batch, k)) for k in PROPS}
    phases = batch.phase
    for i, (Ti, pi) in enumerate(zip(T.tolist(), p.tolist())):
        st = f.state(T=Ti, p=pi)
        assert st.phase is phases[i], (Ti, pi)
        for k in PROPS:
            scale = 0.0
            if k.split("_")[0] in ("h", "s", "u", "g"):  # differences from the reference state: R T scale
                scale = 8.3145 * Ti / (st.M if k.endswith("_mass") else 1.0)
            assert _close(getattr(st, k), float(vals[k][i]), scale), (k, Ti, pi)


@pytest.mark.parametrize("name, model", [("CO2", "pr"), ("CO2", "srk"), ("CO2", "prt"), ("propane", "pr78")])
def test_two_root_states_take_the_lower_gibbs_root(name, model):
    f = sc.Fluid({name: 1.0}, model=model)
    c = f.critical_point()
    rng = np.random.default_rng(17)
    Ts = rng.uniform(max(0.6 * c.T, get_component(name).Tt), 0.99 * c.T, 25)
    ps = np.asarray(f.saturation(T=Ts).p)
    seen = 0
    for Ti, psi in zip(Ts.tolist(), ps.tolist()):
        for pi in (psi * 0.97, psi * 0.9999, psi * 1.0001, psi * 1.03):
            roots = f.model.density_roots(np.asarray(Ti), np.asarray(pi), f.x)
            ok = roots[np.isfinite(roots)]
            if ok.size < 2:
                continue
            seen += 1
            g = reduced_gibbs_residual(f.model, np.full(ok.shape, Ti), ok, np.broadcast_to(f.x, ok.shape + (1,)))
            st = f.state(T=Ti, p=pi)
            assert st.rho_molar == pytest.approx(float(ok[np.argmin(g)]), rel=1e-13)
            assert str(st.phase) == ("liquid" if pi > psi else "gas")
            scalar_roots = f.model.density_roots_scalar(Ti, pi, (1.0,))
            for a, b in zip(scalar_roots, roots.tolist()):
                assert (np.isnan(a) and np.isnan(b)) or _close(a, b)
    assert seen >= 50


def test_input_forms_give_the_same_state():
    f = sc.Fluid({"CO2": 1.0})
    ref = f.state(T=300.0, p=6.0e6)
    for T, p in [(300, 6000000), (np.float64(300.0), np.float64(6.0e6)), (np.asarray(300.0), np.asarray(6.0e6)),
                 (np.float32(300.0), 6.0e6)]:
        st = f.state(T=T, p=p)
        for k in PROPS:
            assert getattr(st, k) == getattr(ref, k), (k, type(T))


@pytest.mark.parametrize("T, p, err", [(0.0, 1e6, InputError), (-5.0, 1e6, InputError), (float("nan"), 1e6, InputError),
                                       (300.0, 0.0, InputError), (300.0, float("inf"), InputError),
                                       (300.0, float("nan"), InputError), (5000.0, 1e6, ModelRangeError),
                                       (20.0, 1e6, ModelRangeError)])
def test_bad_single_states_raise_as_before(T, p, err):
    f = sc.Fluid({"CO2": 1.0})
    with pytest.raises(err):
        f.state(T=T, p=p)


def test_single_state_flags_and_phase_parts():
    f = sc.Fluid({"CO2": 1.0})
    gas, liq, sup = f.state(T=280.0, p=2e6), f.state(T=280.0, p=8e6), f.state(T=320.0, p=9e6)
    assert (str(gas.phase), str(liq.phase), str(sup.phase)) == ("gas", "liquid", "supercritical")
    assert gas.vapor_fraction == 1.0 and liq.vapor_fraction == 0.0
    with pytest.raises(PropertyUndefinedError):
        sup.vapor_fraction
    with pytest.raises(PropertyUndefinedError):
        gas.liquid
    assert gas.solid_fraction == 0.0 and gas.shape == ()
    assert not gas.phase_.flags.writeable  # shared phase code of single states cannot be changed
    assert "CO2" in repr(gas)


def test_ideal_gas_array_terms_equal_scalar_terms():
    # N2 carries power terms, the others Planck-Einstein terms only; a mixture pads the term lists
    comps = tuple(get_component(n) for n in ("N2", "CO2", "CH4", "H2O"))
    ig = IdealGasParts.from_components(comps)
    T = np.random.default_rng(2).uniform(200.0, 1000.0, 300)
    arr = ig.all_R(T)
    for i, Ti in enumerate(T.tolist()):
        one = ig.all_R_scalar(Ti)
        for a, b in zip(one, arr):
            for k in range(len(comps)):
                assert _close(a[k], float(b[i, k]), 1.0)


@pytest.mark.parametrize("comp, model", [({"CO2": 1.0}, "pr"), ({"N2": 1.0}, "srk"), ({"CO2": 1.0}, "prt"),
                                         ({"CO2": 1.0}, "virial"), ({"CO2": 1.0}, "sw")])
def test_batches_in_blocks_equal_one_block(monkeypatch, comp, model):
    # large batches are evaluated block by block (properties.BLOCK, a speed setting): for the cubics
    # the same numbers exactly; for the others to round-off (numpy's vectorised exp/log may round an
    # element differently by its place in the array, so a batch was never bit-reproducible there)
    import supercrit.thermo.properties as props_mod
    import supercrit.thermo.solvers.density as density_mod

    f = sc.Fluid(comp, model=model)
    rng = np.random.default_rng(23)
    T = rng.uniform(250.0, 500.0, (7, 43)) * (0.5 if "N2" in comp else 1.0)
    p_max = 1e6 if model == "virial" else 2e7  # the virial model refuses dense states
    p = np.exp(rng.uniform(np.log(1e5), np.log(p_max), T.shape))
    names = ("rho_molar", "h", "s", "cp", "w", "Z", "mu_jt", "p")
    whole = f.state(T=T, p=p)
    ref = {k: np.asarray(getattr(whole, k)) for k in names}
    exact = model in ("pr", "srk", "prt")
    for block in (64, 100):
        monkeypatch.setattr(props_mod, "BLOCK", block)
        monkeypatch.setattr(density_mod, "BLOCK", block)
        st = f.state(T=T, p=p)
        for k in names:
            got = np.asarray(getattr(st, k))
            assert got.shape == T.shape
            if exact:
                assert np.array_equal(got, ref[k]), (k, block)
            else:
                scale = 8.3145 * T if k in ("h", "s") else 0.0
                assert np.all(np.abs(got - ref[k]) <= 1e-13 * (np.abs(ref[k]) + scale)), (k, block)
