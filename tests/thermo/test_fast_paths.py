"""The scalar fast paths give the array paths' numbers (to round-off), and the caches change nothing.

Identities only (the array paths are themselves checked against published values elsewhere):
plain-Python one-state kernels against the numpy kernels on random states, relative 1e-12.
"""
import numpy as np
import pytest
from scipy.optimize import brentq

import supercrit as sc
from supercrit.thermo.models.cubic.core import (CubicPhaseKernel, _cubic_real_roots, _cubic_real_roots_scalar)
from supercrit.thermo.properties import all_properties
from supercrit.thermo.solvers.density import stable_density
from supercrit.thermo.solvers.flash import rachford_rice

CASES = [({"CO2": 1.0}, "pr"), ({"CO2": 1.0}, "srk"), ({"CO2": 1.0}, "vdw"), ({"CO2": 1.0}, "rk"),
         ({"CO2": 1.0}, "prt"), ({"CO2": 0.9, "N2": 0.07, "CH4": 0.03}, "pr"),
         ({"CO2": 0.96, "N2": 0.02, "O2": 0.01, "Ar": 0.005, "CH4": 0.005}, "srk")]


def _close(a, b, scale=0.0):
    return abs(a - b) <= 1e-12 * (abs(b) + scale)


@pytest.mark.parametrize("comp, model", CASES)
def test_scalar_alphar_derivs_equal_array_path(comp, model):
    f = sc.Fluid(comp, model=model)
    rng = np.random.default_rng(7)
    T = rng.uniform(200.0, 700.0, 200)
    rho = rng.uniform(1e-3, 0.9, 200) * float(f.model.max_density(f.x))
    d = f.model.alphar_derivs(T, rho, np.broadcast_to(f.x, (200, len(f.x))))
    for i in range(200):
        ds = f.model.alphar_derivs_scalar(float(T[i]), float(rho[i]), tuple(f.x.tolist()))
        for k, name in enumerate(("A00", "A10", "A01", "A20", "A11", "A02")):
            assert _close(ds[k], float(getattr(d, name)[i]), 1e-300), (name, T[i], rho[i])


@pytest.mark.parametrize("comp, model", CASES)
def test_scalar_density_and_properties_equal_array_path(comp, model):
    f = sc.Fluid(comp, model=model)
    rng = np.random.default_rng(11)
    n = 150
    T = rng.uniform(220.0, 600.0, n)
    p = np.exp(rng.uniform(np.log(1e4), np.log(5e7), n))
    xb = np.broadcast_to(f.x, (n, len(f.x)))
    rb = stable_density(f.model, T, p, xb)
    props = all_properties(f.model, f.ideal, f.M_i, T, rb, xb)
    for i in range(n):
        r = float(stable_density(f.model, float(T[i]), float(p[i]), f.x))
        assert _close(r, float(rb[i]))
        one = all_properties(f.model, f.ideal, f.M_i, np.float64(T[i]), np.float64(rb[i]), f.x)
        assert set(one) == set(props)
        for k, v in one.items():
            # h, s, u, g are differences from the reference state: compare on the scale of R T
            assert _close(float(v), float(props[k][i]), 8.3145 * T[i] if k in "hsug" else 0.0), (k, T[i], p[i])


def test_scalar_cubic_roots_equal_array_roots():
    rng = np.random.default_rng(3)
    # random cubics with three real roots, one real root and a tiny root (liquid Z ~ B at low pressure)
    roots = rng.uniform(1e-6, 3.0, (300, 3))
    roots[:100, 0] = 10.0 ** rng.uniform(-9, -3, 100)
    a2 = -roots.sum(axis=1)
    a1 = roots[:, 0] * roots[:, 1] + roots[:, 0] * roots[:, 2] + roots[:, 1] * roots[:, 2]
    a0 = -roots.prod(axis=1)
    a1 = np.concatenate([a1, a1[:100] + 5.0])  # shifted: one real root only
    a2, a0 = np.concatenate([a2, a2[:100]]), np.concatenate([a0, a0[:100]])
    arr = _cubic_real_roots(a2, a1, a0)
    for i in range(len(a2)):
        one = _cubic_real_roots_scalar(float(a2[i]), float(a1[i]), float(a0[i]))
        for k in range(3):
            if np.isnan(arr[i, k]):
                assert np.isnan(one[k])
            else:
                assert abs(one[k] - arr[i, k]) <= 1e-12 * max(abs(arr[i, k]), 1e-300) + 1e-15 * abs(a2[i]), (i, k)


@pytest.mark.parametrize("phase", ["stable", "liq", "vap"])
def test_phase_kernel_python_ln_phi_equals_numpy(phase):
    f = sc.Fluid({"CO2": 0.96, "N2": 0.02, "O2": 0.01, "Ar": 0.005, "CH4": 0.005})
    rng = np.random.default_rng(5)
    for T in (230.0, 260.0, 300.0, 350.0):
        fast = f.model.phase_kernel(T)
        slow = CubicPhaseKernel(f.model, T)
        slow._lists = None  # force the numpy path
        assert fast._lists is not None
        for _ in range(30):
            x = rng.dirichlet(np.ones(5))
            p = float(np.exp(rng.uniform(np.log(1e5), np.log(2e7))))
            a, b = fast.ln_phi(x, p, phase), slow.ln_phi(x, p, phase)
            assert np.allclose(a[0], b[0], rtol=1e-12, atol=1e-13)
            assert _close(a[1], b[1]) and abs(a[2] - b[2]) <= 1e-12 * (abs(b[2]) + 1.0)


def test_phase_kernel_cache_returns_equal_kernel():
    f = sc.Fluid({"CO2": 0.9, "N2": 0.1})
    k1, k2 = f.model.phase_kernel(255.0), f.model.phase_kernel(255.0)
    assert k1 is k2
    fresh = CubicPhaseKernel(f.model, 255.0)
    assert np.array_equal(k1.aij, fresh.aij) and np.array_equal(k1.daij, fresh.daij)


def test_rachford_rice_root_matches_bracketing_solver():
    rng = np.random.default_rng(9)
    for _ in range(200):
        n = int(rng.integers(2, 7))
        z = rng.dirichlet(np.ones(n))
        K = np.exp(rng.normal(0.0, 2.0, n))
        K[0], K[-1] = max(K[0], 1.5), min(K[-1], 0.5)
        beta = rachford_rice(z, K)
        g = lambda b: float(np.sum(z * (K - 1.0) / (1.0 + b * (K - 1.0))))  # noqa: E731
        lo, hi = 1.0 / (1.0 - K.max()), 1.0 / (1.0 - K.min())
        ref = brentq(g, lo + 1e-14 * abs(lo), hi - 1e-14 * abs(hi), xtol=1e-15, rtol=1e-15)
        assert abs(beta - ref) <= 1e-10 * max(1.0, abs(ref))


def test_repeated_mixture_state_is_the_same_as_a_fresh_flash():
    comp = {"CO2": 0.96, "N2": 0.02, "O2": 0.01, "Ar": 0.005, "CH4": 0.005}
    f = sc.Fluid(comp)
    for T, p in ((260.0, 40e5), (320.0, 100e5), (250.0, 20e5)):
        a = f.state(T=T, p=p)
        b = f.state(T=T, p=p)  # from the per-Fluid memo
        c = sc.Fluid(comp).state(T=T, p=p)  # computed afresh
        for st in (b, c):
            assert st.phase == a.phase
            assert st.h == a.h and st.s == a.s and st.rho_molar == a.rho_molar


def test_pure_state_scalar_equals_batch_element():
    f = sc.Fluid("CO2", model="pr")
    T = np.array([250.0, 280.0, 304.0, 310.0, 400.0])
    p = np.array([5e5, 8e6, 7.3e6, 9e6, 2e7])
    batch = f.state(T=T, p=p)
    for i in range(len(T)):
        one = sc.Fluid("CO2", model="pr").state(T=float(T[i]), p=float(p[i]))
        assert one.phase == batch.phase[i]
        for k in ("rho_molar", "h", "s", "cp", "w", "mu_jt"):
            assert _close(getattr(one, k), float(getattr(batch, k)[i]), 8.3145 * T[i] if k in "hs" else 0.0), k


def test_span_wagner_scalar_properties_equal_array_path():
    f = sc.Fluid("CO2", model="span-wagner")
    rng = np.random.default_rng(13)
    n = 60
    T = rng.uniform(220.0, 800.0, n)
    rho = rng.uniform(1.0, 25000.0, n)  # [mol m-3], gas to dense liquid
    xb = np.broadcast_to(f.x, (n, 1))
    props = all_properties(f.model, f.ideal, f.M_i, T, rho, xb)
    for i in range(n):
        one = all_properties(f.model, f.ideal, f.M_i, np.float64(T[i]), np.float64(rho[i]), f.x)
        for k, v in one.items():
            assert _close(float(v), float(props[k][i]), 8.3145 * T[i] if k in "hsug" else 0.0), (k, T[i], rho[i])
