"""The fast paths of the mixture solvers give the answers of the plain methods they replace.

Identities only (the answers themselves are checked against thermopack 2.2.3 and published values in
test_mixture_vs_thermopack.py and test_mixture_flash.py): Python-float phase-kernel derivatives against
the numpy formulas and against finite differences; the small dense solver against numpy; the PT flash
with early Newton and early-stopped stability against plain substitution and the complete stability
test; the saturation Newton with residual-only checks against plain Newton; every envelope point on
the equations; the pure-fluid limit of bubble and dew points against its first-order (Henry) term.
"""
import math

import numpy as np
import pytest

import supercrit.thermo.solvers.flash as flash_mod
import supercrit.thermo.solvers.saturation_point as satpt_mod
from supercrit import Fluid
from supercrit.thermo.mixture import mixture_envelope
from supercrit.thermo.models.cubic.core import CubicPhaseKernel
from supercrit.thermo.solvers.flash import SecondLiquidError, _guards_pass, _split, flash_Tp
from supercrit.thermo.solvers.saturation_point import sat_residual, solve_sat_point
from supercrit.thermo.solvers.stability import solve_dense, solve_dense_many, stability_test, wilson_K

FIVE = {"CO2": 0.96, "N2": 0.02, "O2": 0.01, "Ar": 0.005, "CH4": 0.005}


def consts(f):
    return (np.array([c.Tc for c in f._comps]), np.array([c.pc for c in f._comps]),
            np.array([c.omega for c in f._comps]))


def _rel(a, b, scale):
    return np.max(np.abs(np.asarray(a) - np.asarray(b)) / (np.abs(np.asarray(b)) + scale))


@pytest.mark.parametrize("model", ["pr", "srk", "prt"])
@pytest.mark.parametrize("phase", ["stable", "liq", "vap"])
def test_list_derivatives_equal_numpy_formulas(model, phase):
    f = Fluid(FIVE, model=model)
    rng = np.random.default_rng(17)
    for T in (225.0, 270.0, 330.0):
        fast = f.model.phase_kernel(T)
        slow = CubicPhaseKernel(f.model, T)
        slow._lists = None  # force the numpy formulas
        for _ in range(15):
            x = rng.dirichlet(np.ones(5))
            p = float(np.exp(rng.uniform(np.log(1e5), np.log(2e7))))
            a, b = fast.ln_phi_and_derivs(x, p, phase), slow.ln_phi_and_derivs(x, p, phase)
            assert _rel(a[0], b[0], 1e-12) < 1e-11
            assert _rel(a[1], b[1], 1e-9) < 1e-10  # dn: entries near 1 that cancel to small values
            assert _rel(a[2], b[2], 1e-8) < 1e-10 and _rel(a[3], b[3], 1e-15) < 1e-10
            assert a[4] == pytest.approx(b[4], rel=1e-13)
            # the factored form rebuilds the same matrix
            lp, V, bb, u, w, c, aij, P, q, dT, dP = fast.dn_parts(x.tolist(), p, phase, True)
            dn = 1.0 + np.outer(bb, u) + np.outer(w, bb) + c * np.array(aij) + np.outer(P, q)
            assert _rel(dn, a[1], 1e-9) < 1e-10
            assert _rel(dT, a[2], 1e-8) < 1e-12 and _rel(dP, a[3], 1e-15) < 1e-12


def test_list_derivatives_equal_finite_differences():
    f = Fluid(FIVE)
    T, p = 260.0, 40e5
    kern = f.model.phase_kernel(T)
    n = np.array([0.91, 0.04, 0.02, 0.01, 0.02])
    for phase in ("liq", "vap"):
        lp, dn, dT, dP, _ = kern.derivs_list((n / n.sum()).tolist(), p, phase)
        h = 1e-6
        for j in range(5):
            e = np.zeros(5)
            e[j] = h
            up = np.array(kern.ln_phi_list(((n + e) / (n + e).sum()).tolist(), p, phase)[0])
            dm = np.array(kern.ln_phi_list(((n - e) / (n - e).sum()).tolist(), p, phase)[0])
            # n d ln phi_i / d n_j with n = sum(n) = 1.0 here
            np.testing.assert_allclose(np.array(dn)[:, j], (up - dm) / (2 * h), rtol=1e-6, atol=1e-7)
        hT = 1e-4
        kp, km = CubicPhaseKernel(f.model, T + hT), CubicPhaseKernel(f.model, T - hT)
        x = (n / n.sum()).tolist()
        fdT = (np.array(kp.ln_phi_list(x, p, phase)[0]) - np.array(km.ln_phi_list(x, p, phase)[0])) / (2 * hT)
        np.testing.assert_allclose(dT, fdT, rtol=1e-6, atol=1e-9)
        hp = 1.0
        fdp = (np.array(kern.ln_phi_list(x, p + hp, phase)[0]) - np.array(kern.ln_phi_list(x, p - hp, phase)[0])) / 2
        np.testing.assert_allclose(dP, fdp, rtol=1e-6, atol=1e-14)


def test_dense_solver_equals_numpy_and_refuses_singular():
    rng = np.random.default_rng(3)
    for n in (2, 5, 7, 9):
        A = rng.normal(size=(n, n))
        b1, b2 = rng.normal(size=n), rng.normal(size=n)
        x1, x2 = solve_dense_many(A.tolist(), [b1.tolist(), b2.tolist()])
        np.testing.assert_allclose(x1, np.linalg.solve(A, b1), rtol=1e-10, atol=1e-12)
        np.testing.assert_allclose(x2, np.linalg.solve(A, b2), rtol=1e-10, atol=1e-12)
        np.testing.assert_allclose(solve_dense(A.tolist(), b1.tolist()), x1, rtol=0, atol=0)
    with pytest.raises(ZeroDivisionError):
        solve_dense([[1.0, 2.0], [2.0, 4.0]], [1.0, 1.0])


@pytest.mark.parametrize("T, p", [(260.0, 40e5), (230.0, 20e5), (290.0, 65e5), (220.0, 10e5)])
def test_early_newton_split_equals_plain_substitution(T, p, monkeypatch):
    f = Fluid(FIVE)
    Tc, pc, w = consts(f)
    r = flash_Tp(f.model, T, p, f.x, Tc, pc, w)
    assert r.two_phase and "Newton" in r.report.method
    # plain substitution from the same start, to the same tolerance (no early Newton)
    kern = f.model.phase_kernel(T)
    st = stability_test(kern, f.x, p, wilson_K(T, p, Tc, pc, w))
    monkeypatch.setattr(flash_mod, "NEWTON_AFTER", 10 ** 9)
    out = _split(kern, f.x.tolist(), p, np.log(st.K).tolist(), max_ss=400)
    assert out is not None and out[-1].startswith("SS")
    beta, x, y = out[0], np.array(out[1]), np.array(out[2])
    if np.sum(x * r.x) < np.sum(y * r.x):  # the split's first phase may be the vapour
        x, y, beta = y, x, 1.0 - beta
    assert r.beta == pytest.approx(beta, abs=1e-10)
    np.testing.assert_allclose(r.x, x, atol=1e-10)
    np.testing.assert_allclose(r.y, y, atol=1e-10)


def test_flash_with_early_stopped_stability_equals_complete_stability_test():
    # CO2 + propane at 205 K: the first Wilson trial is (weakly) unstable but its split fails the guards;
    # the flash must then run every trial, as the complete test does, and find the liquid-liquid split
    # (which the default flash then reports as a second liquid, not as a vapour-liquid split)
    f = Fluid({"CO2": 0.8, "C3H8": 0.2})
    Tc, pc, w = consts(f)
    for T, p in ((205.17241379310346, 613793.103448276), (205.17241379310346, 2155172.413793104),
                 (240.0, 20e5), (260.0, 25e5)):
        r = flash_Tp(f.model, T, p, f.x, Tc, pc, w, check_second_liquid=False)
        if T < 210.0:
            with pytest.raises(SecondLiquidError, match="two liquids"):
                flash_Tp(f.model, T, p, f.x, Tc, pc, w)
        kern = f.model.phase_kernel(T)
        lpz = kern.ln_phi(f.x, p)[0]
        trials = [np.where(np.arange(2) == i, 1.0, 1e-3 * f.x) for i in range(2) if T < Tc[i] and f.x[i] < 0.5]
        st = stability_test(kern, f.x, p, wilson_K(T, p, Tc, pc, w), pure_trials=False, extra_trials=trials)
        assert r.two_phase == (not st.stable)
        if st.stable:
            continue
        out = _split(kern, f.x.tolist(), p, np.log(st.K).tolist())
        assert out is not None and _guards_pass(f.x.tolist(), out, lpz.tolist())
        beta, x = out[0], np.array(out[1])
        if abs(x[0] - r.x[0]) > abs(out[2][0] - r.x[0]):
            beta, x = 1.0 - beta, np.array(out[2])
        assert r.beta == pytest.approx(beta, abs=1e-9)
        np.testing.assert_allclose(r.x, x, atol=1e-9)


def test_saturation_newton_with_residual_checks_equals_plain_newton(monkeypatch):
    f = Fluid({"CO2": 0.9, "N2": 0.1})
    env = mixture_envelope(f)
    nc = 2
    i = 10
    X0 = np.concatenate([env.lnK[i] * 1.02, [np.log(env.T[i]) + 1e-3, np.log(env.p[i])]])
    fast = solve_sat_point(f.model, f.x, X0, nc, np.log(env.T[i]), False, "vap", "liq")
    monkeypatch.setattr(satpt_mod, "CHECK_ONLY_BELOW", -1.0)  # every iteration fully evaluated
    plain = solve_sat_point(f.model, f.x, X0, nc, np.log(env.T[i]), False, "vap", "liq")
    assert fast[5] == plain[5]  # iterations
    np.testing.assert_array_equal(fast[0], plain[0])
    assert fast[3] == pytest.approx(plain[3], rel=1e-13) and fast[4] == pytest.approx(plain[4], rel=1e-13)


@pytest.mark.parametrize("comp", [FIVE, {"CO2": 0.9, "N2": 0.1}, {"CO2": 0.95, "CH4": 0.05}])
def test_every_envelope_point_solves_the_saturation_equations(comp):
    f = Fluid(comp)
    env = mixture_envelope(f)
    assert env.closed, env.reason
    if comp is FIVE:
        assert len(env.T) >= 100  # issue 3 acceptance: a full envelope with at least 100 points
    nc = len(f.x)
    for k in range(len(env.T)):
        crossed = env.branch[k] == "bubble"
        X = np.concatenate([env.lnK[k], [np.log(env.T[k]), np.log(env.p[k])]])
        F = sat_residual(f.model, f.x, X, False, *(("liq", "vap") if crossed else ("vap", "liq")))[0]
        assert np.max(np.abs(F)) < 1e-10, (k, env.T[k], env.p[k])
        assert np.max(np.abs(env.lnK[k])) > 1e-6  # not the trivial solution
    assert np.all(np.isfinite(env.rho_feed)) and np.all(env.rho_feed > 0)
    assert nc == env.lnK.shape[1]


@pytest.mark.parametrize("T", [230.0, 260.0, 290.0])
def test_pure_fluid_limit_of_bubble_and_dew_points_is_the_henry_term(T):
    # Feed CO2 with a trace eps of N2. Differentiating sum x_i K_i = 1 (bubble) and sum y_i / K_i = 1 (dew)
    # at the pure limit, with d ln K_CO2/d ln p = Z_L - Z_V (Gibbs-Duhem removes the composition terms):
    #   (p_bubble/p_sat - 1)/eps -> (K_N2 - 1)/(Z_V - Z_L),  (p_dew/p_sat - 1)/eps -> (1 - 1/K_N2)/(Z_V - Z_L),
    # K_N2 = phi_N2^L/phi_N2^V at infinite dilution in saturated CO2 (identity; no published value needed).
    eps = 1e-10
    pure = Fluid("CO2")
    ps = pure.saturation(T=T).p
    f = Fluid({"CO2": 1.0 - eps, "N2": eps})
    kern = f.model.phase_kernel(T)
    x0 = np.array([1.0, 0.0])
    lpl, Zl, _ = kern.ln_phi(x0, ps, "liq")
    lpv, Zv, _ = kern.ln_phi(x0, ps, "vap")
    K2 = math.exp(lpl[1] - lpv[1])
    bubble = (f.bubble_point(T=T).p / ps - 1.0) / eps
    dew = (f.dew_point(T=T).p / ps - 1.0) / eps
    assert bubble == pytest.approx((K2 - 1.0) / (Zv - Zl), rel=2e-3)
    assert dew == pytest.approx((1.0 - 1.0 / K2) / (Zv - Zl), rel=2e-3)
    # so the limit agrees with the pure saturation pressure to the physical shift eps (K - 1)/(Z_V - Z_L)
    assert abs(f.bubble_point(T=T).p / ps - 1.0) < 1e-8
