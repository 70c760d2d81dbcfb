"""Benchmark: Peng-Robinson CO2 (T, p) -> all properties, scalar and batched, against CoolProp in the same run.

Run on demand:  python tests/bench/bench_core.py   (needs the test extras: CoolProp 8.0.0)
Prints microseconds per state and the ratios (batched: best of three calls after a warm-up call;
per-call figures: mean over at least 0.5 s). Goals (issue 2): batched throughput >= 3x CoolProp-PR
per-call throughput; a scalar state under 40 us.
"""
from __future__ import annotations

import time

import numpy as np

import supercrit as sc


def _timeit(fn, n_min=0.5):
    n, t0 = 0, time.perf_counter()
    while True:
        fn()
        n += 1
        dt = time.perf_counter() - t0
        if dt > n_min:
            return dt / n


def main(n_batch=100_000):
    import CoolProp
    import CoolProp.CoolProp as CP

    rng = np.random.default_rng(1)
    T = rng.uniform(230.0, 600.0, n_batch)
    p = np.exp(rng.uniform(np.log(1e5), np.log(3e7), n_batch))
    fluid = sc.Fluid({"CO2": 1.0}, model="peng-robinson")

    def props(st):
        return st.rho_mass, st.h_mass, st.s_mass, st.cp_mass, st.cv_mass, st.w, st.mu_jt, st.Z

    k = iter(range(10**9))

    def one():
        i = next(k) % n_batch
        props(fluid.state(T=float(T[i]), p=float(p[i])))

    t_scalar = _timeit(one)
    props(fluid.state(T=T, p=p))  # warm-up (imports, caches), then the best of three timed calls
    t_batch = float("inf")
    for _ in range(3):
        t0 = time.perf_counter()
        props(fluid.state(T=T, p=p))
        t_batch = min(t_batch, (time.perf_counter() - t0) / n_batch)

    res = {}
    for backend in ("PR", "HEOS"):
        A = CP.AbstractState(backend, "CO2")
        j = iter(range(10**9))

        def cp_one():
            i = next(j) % 2000
            try:
                A.update(CP.PT_INPUTS, float(p[i]), float(T[i]))
                A.rhomass(), A.hmass(), A.smass(), A.cpmass(), A.cvmass(), A.speed_sound(), A.first_partial_deriv(
                    CP.iT, CP.iP, CP.iHmass), A.compressibility_factor()
            except ValueError:
                pass

        res[backend] = _timeit(cp_one)
    print(f"CoolProp {CoolProp.__version__}; supercrit {sc.__version__}; {n_batch} random states 230-600 K, 1-300 bar")
    print(f"supercrit PR scalar : {t_scalar * 1e6:9.2f} us/state")
    print(f"supercrit PR batched: {t_batch * 1e6:9.3f} us/state ({n_batch} states in one call)")
    print(f"CoolProp PR per call: {res['PR'] * 1e6:9.2f} us/state")
    print(f"CoolProp HEOS/call  : {res['HEOS'] * 1e6:9.2f} us/state")
    print(f"ratio batched throughput / CoolProp-PR per-call throughput: {res['PR'] / t_batch:7.1f}x (goal >= 3)")
    print(f"ratio scalar / CoolProp-PR per call: {t_scalar / res['PR']:7.2f} (goal: scalar < 40 us)")


if __name__ == "__main__":
    main()
