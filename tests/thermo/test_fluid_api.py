"""The public contract: Fluid(...).state / saturation / critical_point, batches, phases and errors."""
import numpy as np
import pytest

import supercrit as sc
from supercrit import Fluid, Phase


@pytest.mark.parametrize("alias, canonical", [("pr", "peng-robinson"), ("srk", "soave-redlich-kwong"),
                                              ("vdw", "van-der-waals"), ("ig", "ideal-gas"), ("rk", "redlich-kwong"),
                                              ("pr78", "peng-robinson-1978"), ("prt", "peng-robinson-translated"),
                                              ("virial", "virial")])
def test_model_names_and_aliases(alias, canonical):
    assert Fluid({"CO2": 1.0}, model=alias).model_name == canonical


def test_state_attributes_and_phase_strings():
    f = Fluid({"CO2": 1.0}, model="peng-robinson")
    st = f.state(T=313.15, p=10e6)
    assert str(st.phase) == "supercritical" and st.phase is Phase.SUPERCRITICAL
    for attr in ("T", "p", "rho_mass", "rho_molar", "Z", "h_mass", "s_mass", "cp_mass", "cv_mass", "w", "mu_jt"):
        assert np.isfinite(getattr(st, attr)), attr
    assert st.rho_mass == pytest.approx(st.rho_molar * 0.0440098, rel=1e-12)
    assert str(f.state(T=280.0, p=20e5).phase) == "gas"
    assert str(f.state(T=280.0, p=60e5).phase) == "liquid"
    assert str(f.state(T=320.0, p=50e5).phase) == "gas"
    assert st.composition == {"CO2": 1.0}


def test_batches_are_vectorised_and_match_scalars():
    f = Fluid("CO2")
    T = np.linspace(230.0, 500.0, 40)
    p = np.geomspace(1e5, 3e7, 40)
    b = f.state(T=T, p=p)
    assert b.rho_mass.shape == (40,) and b.phase.shape == (40,)
    for i in (0, 17, 39):
        s = f.state(T=T[i], p=p[i])
        assert b.rho_mass[i] == pytest.approx(s.rho_mass, rel=1e-14)
        assert b.cp_mass[i] == pytest.approx(s.cp_mass, rel=1e-12)
        assert str(b.phase[i]) == str(s.phase)
    grid = f.state(T=T.reshape(5, 8), rho=np.full((5, 8), 100.0))
    assert grid.p.shape == (5, 8)


def test_p_h_and_p_s_round_trips_including_two_phase():
    f = Fluid("CO2")
    for T, p in [(313.15, 10e6), (250.0, 30e5), (400.0, 5e5), (280.0, 60e5)]:
        st = f.state(T=T, p=p)
        assert f.state(p=p, h=st.h).T == pytest.approx(T, abs=1e-6)
        assert f.state(p=p, s=st.s).T == pytest.approx(T, abs=1e-6)
        assert f.state(p=p, h_mass=st.h_mass).T == pytest.approx(T, abs=1e-6)
    sat = f.saturation(p=50e5)
    h = 0.3 * sat.liquid.h + 0.7 * sat.vapor.h
    two = f.state(p=50e5, h=h)
    assert str(two.phase) == "two-phase"
    assert two.vapor_fraction == pytest.approx(0.7, abs=1e-9)
    assert two.T == pytest.approx(sat.T, abs=1e-9)
    assert two.liquid.rho_molar == pytest.approx(sat.liquid.rho_molar, rel=1e-9)
    assert two.vapor.composition == {"CO2": 1.0}
    with pytest.raises(sc.PropertyUndefinedError, match="two-phase"):
        two.cp_mass
    # isentropic expansion into the dome (DOMAIN §2.9 path, here with PR)
    s_in = f.state(T=313.15, p=10e6).s
    out = f.state(p=50e5, s=s_in)
    assert str(out.phase) == "two-phase" and 0.0 < out.vapor_fraction < 1.0


def test_T_rho_inside_the_dome_is_two_phase():
    f = Fluid("CO2")
    sat = f.saturation(T=280.0)
    rho = 0.5 * (sat.liquid.rho_molar + sat.vapor.rho_molar)
    st = f.state(T=280.0, rho=rho)
    assert str(st.phase) == "two-phase"
    assert st.p == pytest.approx(sat.p, rel=1e-12)
    v = 1.0 / rho
    q = (v - 1 / sat.liquid.rho_molar) / (1 / sat.vapor.rho_molar - 1 / sat.liquid.rho_molar)
    assert st.vapor_fraction == pytest.approx(q, rel=1e-12)


def test_saturation_and_critical_point_contract():
    f = Fluid("CO2", model="pr")
    sat = f.saturation(T=280.0)
    assert {"T", "p", "liquid", "vapor"} <= set(dir(sat))
    assert sat.liquid.rho_mass > sat.vapor.rho_mass
    c = f.critical_point()
    assert (c.T, c.p) == (304.1282, 7377300.0)
    assert c.rho_mass == pytest.approx(c.rho_molar * 0.0440098)
    arr = f.saturation(T=np.array([250.0, 280.0, 300.0]))
    assert arr.p.shape == (3,) and np.all(np.diff(arr.p) > 0)


def test_constants_pin_component_data():
    f = Fluid({"CO2": 1.0}, constants={"CO2": {"Tc": 304.2, "pc": 7.376e6, "omega": 0.225, "M": 0.04401}})
    c = f.critical_point()
    assert (c.T, c.p) == (304.2, 7.376e6)
    assert f.M == 0.04401


@pytest.mark.parametrize("kwargs, err, fragment", [
    (dict(T=-5.0, p=1e5), sc.InputError, "temperature"),
    (dict(T=300.0, p=0.0), sc.InputError, "pressure"),
    (dict(T=300.0, p=np.nan), sc.InputError, "pressure"),
    (dict(T=300.0, rho=-1.0), sc.InputError, "density"),
    (dict(T=300.0), sc.InputError, "exactly one pair"),
    (dict(T=300.0, p=1e5, h=0.0), sc.InputError, "exactly one pair"),
    (dict(T=5000.0, p=1e5), sc.ModelRangeError, "outside the range"),
])
def test_bad_state_inputs_raise_clear_errors(kwargs, err, fragment):
    with pytest.raises(err, match=fragment):
        Fluid("CO2").state(**kwargs)


def test_bad_fluid_definitions():
    with pytest.raises(sc.DataError, match="Did you mean 'CO2'"):
        Fluid({"C02": 1.0})
    with pytest.raises(sc.DataError, match="nitrogen"):
        Fluid({"nitrogn": 1.0})
    with pytest.raises(sc.InputError, match="sum to 0.9"):
        Fluid({"CO2": 0.5, "N2": 0.4})
    with pytest.raises(sc.InputError, match="between 0 and 1"):
        Fluid({"CO2": 1.2, "N2": -0.2})
    with pytest.raises(sc.InputError, match="Did you mean 'peng-robinson'"):
        Fluid("CO2", model="peng-robinsen")
    with pytest.raises(sc.InputError, match="not in the composition"):
        Fluid({"CO2": 1.0}, constants={"N2": {"Tc": 126.0}})
    with pytest.raises(sc.DataError, match="valid keys"):
        Fluid({"CO2": 1.0}, constants={"CO2": {"Tcrit": 126.0}})
    with pytest.raises(sc.InputError, match="twice"):
        Fluid({"CO2": 0.5, "carbon dioxide": 0.5})


def test_virial_refuses_dense_states():
    f = Fluid("CO2", model="virial")
    with pytest.raises(sc.ModelRangeError, match="validity"):
        f.state(T=313.15, p=10e6)
    assert f.state(T=313.15, p=20e5).Z < 1.0


def test_below_triple_point_pressure_cubic_two_phase_is_refused():
    """A cubic has no solid phase: a p-h state below CO2's triple-point pressure (5.1795 bar, Span & Wagner
    1996 Table 34) that would be two-phase is refused rather than reported as metastable liquid-vapour."""
    f = Fluid("CO2", model="pr")
    h = f.state(T=293.15, p=60e5).h  # compressed liquid at 20 degC
    with pytest.raises(sc.ModelRangeError, match="triple-point pressure"):
        f.state(p=1.01325e5, h=h)


def test_errors_share_one_hierarchy():
    for e in (sc.InputError, sc.DataError, sc.ModelRangeError, sc.ConvergenceError, sc.PropertyUndefinedError):
        assert issubclass(e, sc.SupercritError)
