"""Span-Wagner (1996) CO2 model: reference-library oracle, derivative identities, published tables.

Published values: R. Span, W. Wagner, J. Phys. Chem. Ref. Data 25 (1996) 1509,
doi:10.1063/1.555991 (Tables 34 and 35 as listed in /work/shared/DOMAIN.md section 2.6).
Oracle: CoolProp 8.0.0, HEOS backend (its CO2 equation is Span-Wagner 1996).
"""
import copy
import dataclasses

import numpy as np
import pytest

from supercrit.errors import DataError, ModelRangeError
from supercrit.thermo.models.base import AlpharDerivs, CriticalPoint
from supercrit.thermo.models.helmholtz import span_wagner as sw

FIELDS2 = ("A00", "A10", "A01", "A20", "A11", "A02")
FIELDS3 = ("A30", "A21", "A12", "A03")
M_CO2 = 0.0440098  # [kg mol-1] Span & Wagner 1996 (molar mass used by the EOS)


@pytest.fixture(scope="module")
def model():
    return sw.span_wagner_co2()


def _points():
    """320 (T, rho) points: gas, liquid, supercritical, and within 1 K / 1 % of the critical point."""
    rng = np.random.default_rng(20240601)
    m = sw.span_wagner_co2()
    Tsub = rng.uniform(216.6, 303.0, 80)
    liq, vap = m.saturation_guess(Tsub)
    T_gas = np.concatenate([Tsub[:40], rng.uniform(305.0, 1100.0, 40)])
    rho_gas = np.concatenate([vap[:40] * rng.uniform(0.001, 0.95, 40), rng.uniform(1.0, 3000.0, 40)])
    T_liq, rho_liq = Tsub[40:], liq[40:] * rng.uniform(1.0, 1.12, 40)
    T_liq = np.concatenate([T_liq, rng.uniform(216.6, 300.0, 40)])
    rho_liq = np.concatenate([rho_liq, rng.uniform(22000.0, 30000.0, 40)])
    T_sc = rng.uniform(305.0, 1100.0, 80)
    rho_sc = rng.uniform(3000.0, 32000.0, 80)
    T_cr = m.Tc + rng.uniform(-1.0, 1.0, 80)
    rho_cr = m.rhoc * (1.0 + rng.uniform(-0.01, 0.01, 80))
    T = np.concatenate([T_gas, T_liq, T_sc, T_cr])
    rho = np.concatenate([rho_gas, rho_liq, rho_sc, rho_cr])
    return T, rho


@pytest.fixture(scope="module")
def coolprop_reference():
    # CoolProp 8.0.0, HEOS backend: residual Helmholtz derivatives, scaled here by tau^i delta^j.
    CP = pytest.importorskip("CoolProp")
    AS = CP.AbstractState("HEOS", "CO2")
    T, rho = _points()
    ref = {k: np.empty(T.size) for k in FIELDS2 + FIELDS3}
    for k, (r, t) in enumerate(zip(rho, T)):
        AS.update(CP.DmolarT_INPUTS, r, t)
        tau, de = AS.tau(), AS.delta()
        ref["A00"][k] = AS.alphar()
        ref["A10"][k] = tau * AS.dalphar_dTau()
        ref["A01"][k] = de * AS.dalphar_dDelta()
        ref["A20"][k] = tau ** 2 * AS.d2alphar_dTau2()
        ref["A11"][k] = tau * de * AS.d2alphar_dDelta_dTau()
        ref["A02"][k] = de ** 2 * AS.d2alphar_dDelta2()
        ref["A30"][k] = tau ** 3 * AS.d3alphar_dTau3()
        ref["A21"][k] = tau ** 2 * de * AS.d3alphar_dDelta_dTau2()
        ref["A12"][k] = tau * de ** 2 * AS.d3alphar_dDelta2_dTau()
        ref["A03"][k] = de ** 3 * AS.d3alphar_dDelta3()
    return T, rho, ref


def _all_fields(m, T, rho):
    x = np.ones(np.shape(T) + (1,))
    d, d3 = m.alphar_derivs(T, rho, x), m.alphar_derivs3(T, rho, x)
    return {**{k: getattr(d, k) for k in FIELDS2}, **{k: getattr(d3, k) for k in FIELDS3}}


def _assert_close(mine, ref, tol, label):
    # relative tolerance where |value| >= 1, absolute tolerance tol below that
    err = np.abs(mine - ref) / np.maximum(np.abs(ref), 1.0)
    k = int(np.argmax(err))
    assert err[k] <= tol, f"{label}: scaled error {err[k]:.3g} at point {k} (mine {mine[k]!r}, ref {ref[k]!r})"


def test_point_set_covers_every_region(model):
    T, rho = _points()
    near = (np.abs(T - model.Tc) <= 1.0) & (np.abs(rho / model.rhoc - 1.0) <= 0.01)
    assert T.size >= 300
    assert near.sum() >= 80
    assert ((T < model.Tc) & (rho < model.rhoc)).sum() >= 40       # gas
    assert ((T < model.Tc) & (rho > 1.5 * model.rhoc)).sum() >= 40  # liquid
    assert ((T > model.Tc) & ~near).sum() >= 80                      # supercritical


@pytest.mark.parametrize("field", FIELDS2 + FIELDS3)
def test_every_field_matches_coolprop(model, coolprop_reference, field):
    # CoolProp 8.0.0 HEOS. Difference budget: n3 of Table 31 (-5.58671885349) against CoolProp's rounded
    # copy (-5.5867188535) shifts A00, A10, A01 by up to 4e-11; everything else agrees to ~1e-12.
    T, rho, ref = coolprop_reference
    _assert_close(_all_fields(model, T, rho)[field], ref[field], 1e-10, field)


def test_only_the_rounded_n3_separates_us_from_coolprop(model, coolprop_reference):
    # CoolProp 8.0.0 HEOS: with CoolProp's own copy of n3 the residual functions agree to round-off.
    T, rho, ref = coolprop_reference
    n = model._sep.n.copy()
    assert n[2] == -5.58671885349  # Span & Wagner 1996 Table 31, n3 as printed
    n[2] = -5.5867188535  # CoolProp 8.0.0 fluid data, n3
    twin = dataclasses.replace(model, _sep=dataclasses.replace(model._sep, n=n))
    mine = _all_fields(twin, T, rho)
    for field in FIELDS2 + FIELDS3:
        _assert_close(mine[field], ref[field], 1e-11 if field in FIELDS2 else 1e-10, field)


# -------------------------------------------------------------------- identities
def _stencil(f, x0, h):
    """First and second derivative of f at x0 by the 5-point central formulas (error O(h^4))."""
    fm2, fm1, f0, fp1, fp2 = (f(x0 + k * h) for k in (-2, -1, 0, 1, 2))
    d1 = (fm2 - 8 * fm1 + 8 * fp1 - fp2) / (12 * h)
    d2 = (-fm2 + 16 * fm1 - 30 * f0 + 16 * fp1 - fp2) / (12 * h * h)
    return d1, d2


def _away_from_critical(model):
    T, rho = _points()
    keep = (np.abs(model.Tc / T - 1.0) > 0.02) | (np.abs(rho / model.rhoc - 1.0) > 0.2)
    return T[keep], rho[keep]


def test_first_and_second_order_fields_are_derivatives_of_alphar(model):
    # Numerical derivatives in ln(tau) and ln(delta): tau d/dtau = d/dln(tau). A20 = d2/dlt2 - d/dlt,
    # A02 = d2/dld2 - d/dld, A11 = d2/dlt dld. 5-point stencils, h = 3e-4: the tau^28 and tau^24 terms
    # make truncation and round-off meet near 1e-7, so tol = 1e-6; a wrong term would miss by O(1).
    T, rho = _away_from_critical(model)
    x = np.ones(T.shape + (1,))
    lt, ld = np.log(model.Tc / T), np.log(rho / model.rhoc)
    a = lambda lt_, ld_: model.alphar(model.Tc / np.exp(lt_), model.rhoc * np.exp(ld_), x)  # noqa: E731
    h = 3e-4
    dt1, dt2 = _stencil(lambda v: a(v, ld), lt, h)
    dd1, dd2 = _stencil(lambda v: a(lt, v), ld, h)
    dtd, _ = _stencil(lambda v: _stencil(lambda w: a(v, w), ld, h)[0], lt, h)
    d = model.alphar_derivs(T, rho, x)
    tol = 1e-6
    _assert_close(d.A00, model.alphar(T, rho, x), 0.0, "A00 vs alphar")
    _assert_close(d.A10, dt1, tol, "A10")
    _assert_close(d.A01, dd1, tol, "A01")
    _assert_close(d.A20, dt2 - dt1, tol, "A20")
    _assert_close(d.A02, dd2 - dd1, tol, "A02")
    _assert_close(d.A11, dtd, tol, "A11")


@pytest.mark.parametrize("region", ["away", "near-critical"])
def test_third_order_fields_are_derivatives_of_second_order_fields(model, region):
    # A30 = dA20/dlt - 2 A20, A21 = dA20/dld, A12 = dA02/dlt, A03 = dA02/dld - 2 A02 (lt = ln tau,
    # ld = ln delta); also A11 = dA10/dld = dA01/dlt. Near Tc (0.03-1 K, 0.01-1 % from the critical point)
    # the step is 1 % of the distance to it, and A20 there is large, so round-off limits tol to 1e-5.
    if region == "away":
        T, rho = _away_from_critical(model)
        h, tol = 1e-4, 1e-8
    else:
        rng = np.random.default_rng(7)
        T = model.Tc * (1.0 + rng.choice([-1, 1], 60) * 10 ** rng.uniform(-4, -2.5, 60))
        rho = model.rhoc * (1.0 + rng.choice([-1, 1], 60) * 10 ** rng.uniform(-4, -2, 60))
        h = 0.01 * np.minimum(np.abs(np.log(model.Tc / T)), np.abs(np.log(rho / model.rhoc)))
        tol = 1e-5
    x = np.ones(T.shape + (1,))
    lt, ld = np.log(model.Tc / T), np.log(rho / model.rhoc)
    f = lambda lt_, ld_: model.alphar_derivs(model.Tc / np.exp(lt_), model.rhoc * np.exp(ld_), x)  # noqa: E731
    d, d3 = model.alphar_derivs(T, rho, x), model.alphar_derivs3(T, rho, x)
    dT = [_stencil(lambda v: getattr(f(v, ld), k), lt, h)[0] for k in ("A20", "A02", "A01")]
    dD = [_stencil(lambda v: getattr(f(lt, v), k), ld, h)[0] for k in ("A20", "A02", "A10")]
    _assert_close(d3.A30, dT[0] - 2 * d.A20, tol, "A30")
    _assert_close(d3.A12, dT[1], tol, "A12")
    _assert_close(d3.A21, dD[0], tol, "A21")
    _assert_close(d3.A03, dD[1] - 2 * d.A02, tol, "A03")
    _assert_close(d.A11, dT[2], tol, "A11 = dA01/dlt")
    _assert_close(d.A11, dD[2], tol, "A11 = dA10/dld")


# -------------------------------------------------------------------- critical region
def test_finite_at_and_around_the_critical_point(model):
    # Grid through (Tc, rhoc) including the lines tau = 1 and delta = 1 exactly: nothing overflows or
    # turns NaN except the fields that diverge at the point itself (module Notes).
    e = np.concatenate([-np.logspace(-15, -1, 15), [0.0], np.logspace(-15, -1, 15)])
    T = (model.Tc / (1.0 + e))[:, None]
    rho = (model.rhoc * (1.0 + e))[None, :]
    with np.errstate(all="raise"):
        f = _all_fields(model, np.broadcast_to(T, (31, 31)), np.broadcast_to(rho, (31, 31)))
    crit = np.zeros((31, 31), bool)
    crit[15, 15] = True
    for k in ("A00", "A10", "A01", "A11", "A02", "A12", "A03"):
        assert np.all(np.isfinite(f[k])), k
    for k in ("A20", "A21", "A30"):
        assert np.all(np.isfinite(f[k][~crit])), k
    assert f["A20"][crit][0] == -np.inf          # cv_r/R = -A20 -> +inf on the critical isochore
    assert np.isnan(f["A21"][crit][0]) and np.isnan(f["A30"][crit][0])


@pytest.mark.parametrize("field", ["A00", "A10", "A01", "A11", "A02", "A12", "A03"])
def test_finite_fields_are_continuous_through_delta_one_and_the_critical_point(model, field):
    # The value exactly on delta = 1 (and at (Tc, rhoc)) is the limit of its neighbours; the non-analytic
    # terms vary like |delta - 1|^(1/3) at worst, so 1e-12 away the change stays below 1e-4.
    for T in (model.Tc, model.Tc * 1.001, model.Tc / 1.001):
        rho = model.rhoc * np.array([1.0 - 1e-12, 1.0, 1.0 + 1e-12])
        v = _all_fields(model, np.full(3, T), rho)[field]
        assert v[1] == pytest.approx(v[0], abs=1e-4) and v[1] == pytest.approx(v[2], abs=1e-4)


def test_published_critical_point_satisfies_the_critical_conditions(model):
    # Span & Wagner 1996: Tc = 304.1282 K, rhoc = 467.6 kg/m3, pc = 7.3773 MPa (5 digits: +-50 Pa).
    cp = model.critical_point()
    assert cp == CriticalPoint(T=304.1282, p=7377300.0, rho=10624.9063)
    assert cp.rho * M_CO2 == pytest.approx(467.6, abs=5e-5)
    d = model.alphar_derivs(cp.T, cp.rho, [1.0])
    A03 = model.alphar_derivs3(cp.T, cp.rho, [1.0]).A03
    p = cp.rho * model.R([1.0]) * cp.T * (1.0 + d.A01)
    assert p == pytest.approx(7.3773e6, abs=50.0)
    assert abs(1.0 + 2.0 * d.A01 + d.A02) < 1e-8             # (dp/drho)_T / RT = 0
    assert abs(2.0 * d.A01 + 4.0 * d.A02 + A03) < 1e-8       # (d2p/drho2)_T rho / RT = 0


# -------------------------------------------------------------------- published tables
def _p_and_slopes(model, T, rho):
    d = model.alphar_derivs(T, rho, [1.0])
    R = model.gas_constant
    return (rho * R * T * (1 + d.A01), R * T * (1 + 2 * d.A01 + d.A02), rho * R * (1 + d.A01 - d.A11))


# Span & Wagner 1996 Table 35 (single phase): T/K, p/MPa, rho/(kg/m3) as printed; the last two columns are
# the half-units of the last printed digit of rho and of T (226.679 K and 327.673 K are melting
# temperatures printed to 3 decimals). The pressures are the table's round isobars.
TABLE35 = [
    (240.0, 0.05, 1.1084, 5e-5, 0.0),
    (280.0, 0.5, 9.7568, 5e-5, 0.0),
    (230.0, 1.0, 1128.97, 5e-3, 0.0),
    (290.0, 5.0, 148.41, 5e-3, 0.0),
    (480.0, 10.0, 119.65, 5e-3, 0.0),
    (226.679, 50.0, 1229.78, 5e-3, 5e-4),
    (1100.0, 100.0, 371.36, 5e-3, 0.0),
    (327.673, 800.0, 1495.70, 5e-3, 5e-4),
]


@pytest.mark.parametrize("T, p_MPa, rho_kg_m3, drho, dT", TABLE35)
def test_pressure_matches_span_wagner_table35(model, T, p_MPa, rho_kg_m3, drho, dT):
    # The table prints rho to 5-6 significant digits, so p(T, rho_printed) may miss the isobar by at most
    # (dp/drho)_T * drho + (dp/dT)_rho * dT (converted to molar units); 1e-9 p covers float round-off.
    p, dpdrho, dpdT = _p_and_slopes(model, T, rho_kg_m3 / M_CO2)
    budget = abs(dpdrho) * drho / M_CO2 + abs(dpdT) * dT + 1e-9 * p_MPa * 1e6
    assert abs(p - p_MPa * 1e6) <= budget


# Span & Wagner 1996 Table 34 (saturation): T/K, p/MPa, rho'/(kg/m3), rho''/(kg/m3), and the half-units of
# the last printed digit of p, rho', rho''.
TABLE34 = [
    (216.592, 0.51796, 1178.46, 13.761, 5e-6, 5e-3, 5e-4),
    (240.0, 1.2825, 1088.87, 33.295, 5e-5, 5e-3, 5e-4),
    (260.0, 2.4188, 998.89, 64.417, 5e-5, 5e-3, 5e-4),
    (280.0, 4.1607, 883.58, 121.74, 5e-5, 5e-3, 5e-3),
    (300.0, 6.7131, 679.24, 268.58, 5e-5, 5e-3, 5e-3),
    (304.0, 7.3555, 530.30, 406.42, 5e-5, 5e-3, 5e-3),
]


@pytest.mark.parametrize("T, p_MPa, rho_l, rho_v, dp, drl, drv", TABLE34)
def test_saturated_states_match_span_wagner_table34(model, T, p_MPa, rho_l, rho_v, dp, drl, drv):
    for rho, drho in ((rho_l, drl), (rho_v, drv)):
        p, dpdrho, _ = _p_and_slopes(model, T, rho / M_CO2)
        assert abs(p - p_MPa * 1e6) <= abs(dpdrho) * drho / M_CO2 + dp * 1e6


def test_max_density_is_the_table35_state_at_800_MPa(model):
    # Span & Wagner 1996 Table 35: 327.673 K, 800 MPa, 1495.70 kg/m3 on the melting line.
    rho_max = model.max_density(np.ones((2, 3, 1)))
    assert rho_max.shape == (2, 3)
    assert rho_max[0, 0] * M_CO2 == pytest.approx(1495.70, rel=1e-12)
    assert _p_and_slopes(model, 327.673, rho_max[0, 0])[0] == pytest.approx(8e8, rel=1e-4)


# -------------------------------------------------------------------- ancillaries
@pytest.fixture(scope="module")
def coolprop_saturation():
    # CoolProp 8.0.0 HEOS saturation (Maxwell solution of the same EOS), QT inputs.
    CP = pytest.importorskip("CoolProp")
    AS = CP.AbstractState("HEOS", "CO2")
    T = np.concatenate([np.linspace(216.592, 303.0, 60), 304.1282 - np.array([1.0, 0.5, 0.2, 0.1])])
    out = np.empty((T.size, 3))
    for k, t in enumerate(T):
        AS.update(CP.QT_INPUTS, 0.0, t)
        out[k, 0], out[k, 2] = AS.rhomolar(), AS.p()
        AS.update(CP.QT_INPUTS, 1.0, t)
        out[k, 1] = AS.rhomolar()
    return T, out


def test_ancillaries_follow_the_eos_saturation(model, coolprop_saturation):
    # Span & Wagner 1996 Eqs. 3.13-3.15 against the EOS saturation (CoolProp 8.0.0). The paper's own
    # accuracy statement for these equations is not re-checked here; the bounds are set from the
    # deviations seen against the EOS (max 0.0042 % in p, 0.09 % in rho' and 0.03 % in rho'' up to 303 K,
    # 0.7 % in rho' within 1 K of Tc, where the ancillaries follow the measured data rather than the EOS).
    T, ref = coolprop_saturation
    liq, vap = model.saturation_guess(T)
    p = model.saturation_pressure_guess(T)
    far = T <= 303.0
    assert np.max(np.abs(p / ref[:, 2] - 1)) < 1e-4
    assert np.max(np.abs(liq[far] / ref[far, 0] - 1)) < 1e-3
    assert np.max(np.abs(vap[far] / ref[far, 1] - 1)) < 1e-3
    assert np.max(np.abs(liq[~far] / ref[~far, 0] - 1)) < 1e-2
    assert np.max(np.abs(vap[~far] / ref[~far, 1] - 1)) < 1e-2


def test_ancillaries_at_the_triple_point_match_table34(model):
    # Span & Wagner 1996 Table 34, 216.592 K: 0.51796 MPa, 1178.46 and 13.761 kg/m3; ancillary accuracy as above.
    liq, vap = model.saturation_guess(216.592)
    assert liq * M_CO2 == pytest.approx(1178.46, rel=1e-3)
    assert vap * M_CO2 == pytest.approx(13.761, rel=1e-3)
    assert model.saturation_pressure_guess(216.592) == pytest.approx(0.51796e6, rel=1e-4)
    assert model.saturation_guess(model.Tc) == (pytest.approx(model.rhoc), pytest.approx(model.rhoc))


def test_saturation_guess_above_tc_is_a_range_error(model):
    with pytest.raises(ModelRangeError, match="supercritical"):
        model.saturation_guess(np.array([300.0, 305.0]))
    with pytest.raises(ModelRangeError):
        model.saturation_pressure_guess(310.0)


# -------------------------------------------------------------------- interface
def test_shapes_broadcast_and_pure_fluid_identities(model):
    T = np.linspace(250.0, 400.0, 4)[:, None]
    rho = np.linspace(100.0, 20000.0, 5)[None, :]
    x = np.ones((1, 1, 1))
    d = model.alphar_derivs(T, rho, x)
    assert isinstance(d, AlpharDerivs)
    for k in FIELDS2:
        assert getattr(d, k).shape == (4, 5)
    assert model.alphar(T, rho, x).shape == (4, 5)
    mu = model.ndalphar_dni(T, rho, x)
    assert mu.shape == (4, 5, 1)
    np.testing.assert_array_equal(mu[..., 0], d.A00 + d.A01)
    # one state at a time gives the same numbers as the batch
    assert model.alphar_derivs(T[2, 0], rho[0, 3], [1.0]).A11 == pytest.approx(d.A11[2, 3], rel=1e-15)
    assert model.R(np.ones((4, 5, 1))).shape == (4, 5)
    assert np.all(model.R(np.ones((3, 1))) == 8.31451)  # Span & Wagner 1996: the EOS keeps its own R


def test_model_metadata(model):
    assert model.components == ("CO2",)
    assert model.name == "span-wagner"
    assert model.validity == {"T_min": 216.592, "T_max": 1100.0, "p_max": 8.0e8}  # Span & Wagner 1996 title
    assert sw.span_wagner_co2() is model   # built once


def test_zero_density_is_the_ideal_gas(model):
    d = model.alphar_derivs(np.array([220.0, 1000.0]), 0.0, [1.0])
    for k in FIELDS2:
        np.testing.assert_array_equal(getattr(d, k), 0.0)


def test_low_density_limit_gives_the_second_virial_coefficient(model):
    # B = lim A01/rho; Span-Wagner B(300 K) = -121.3 cm3/mol (DOMAIN.md 2.5, computed from the EOS with
    # CoolProp 8.0.0), a regression anchor within 0.1 cm3/mol printed precision.
    rho = 1e-3
    B = model.alphar_derivs(300.0, rho, [1.0]).A01 / rho
    assert B * 1e6 == pytest.approx(-121.3, abs=0.06)


def test_data_loader_refuses_an_unsourced_block():
    raw = copy.deepcopy(sw.load_span_wagner_data())
    raw["residual"]["source"] = "somewhere"
    with pytest.raises(DataError, match="residual"):
        sw._checked(raw)
    del raw["ancillary"]["vapor_density"]
    raw["residual"]["source"] = "span1996"
    with pytest.raises(DataError, match="vapor_density"):
        sw._checked(raw)


def test_builder_refuses_nonanalytic_exponents_it_cannot_handle_safely():
    raw = copy.deepcopy(sw.load_span_wagner_data())
    raw["residual"]["nonanalytic"][0][3] = 0.4   # beta = 0.4 -> 1/beta = 2.5 < 3
    with pytest.raises(DataError, match="1/beta"):
        sw._build(raw)


def test_fast_second_order_path_equals_the_general_form(model):
    # identity: the matrix-product path used by every solver (_derivs2) and the general term-by-term form
    # (_derivs) agree to round-off, including near (Tc, rhoc) and at zero density
    rng = np.random.default_rng(5)
    T = np.concatenate([rng.uniform(150.0, 1100.0, 400), model.Tc + rng.uniform(-1e-3, 1e-3, 100), [300.0]])
    rho = np.concatenate([rng.uniform(0.0, 36000.0, 400), model.rhoc * (1 + rng.uniform(-1e-4, 1e-4, 100)), [0.0]])
    x = np.ones((T.size, 1))
    fast, ref = model._derivs2(T, rho, x), model._derivs(T, rho, x, 2)
    for key in ref:
        err = np.abs(fast[key] - ref[key]) / np.maximum(np.abs(ref[key]), 1.0)
        assert err.max() < 1e-12, key
