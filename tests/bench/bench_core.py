"""Benchmark: Peng-Robinson CO2 (T, p) -> all properties, scalar and batched, against CoolProp in the same run.

Run on demand:  python tests/bench/bench_core.py   (needs the test extras: CoolProp 8.0.0)
Prints microseconds per state and the ratios (batched: best of three calls after a warm-up call;
per-call figures: the best of five windows of at least 0.2 s each, the mean within a window - the
machine may be shared, so supercrit and CoolProp alike get their least-disturbed window). Wall-clock
figures, with the process CPU time of the same best window beside them. Goals (issue 2): batched
throughput >= 3x CoolProp-PR per-call throughput; a scalar state under 40 us.
"""
from __future__ import annotations

import time

import numpy as np

import supercrit as sc


def _timeit(fn, n_min=0.2, windows=5):
    """(wall, cpu) seconds per call: the window with the lowest mean wall time per call."""
    best = (float("inf"), float("inf"))
    for _ in range(windows):
        n, t0, c0 = 0, time.perf_counter(), time.process_time()
        while True:
            fn()
            n += 1
            dt = time.perf_counter() - t0
            if dt > n_min:
                best = min(best, (dt / n, (time.process_time() - c0) / n))
                break
    return best


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

    t_scalar, c_scalar = _timeit(one)
    props(fluid.state(T=T, p=p))  # warm-up (imports, caches), then the best of three timed calls
    t_batch = c_batch = float("inf")
    for _ in range(3):
        t0, c0 = time.perf_counter(), time.process_time()
        props(fluid.state(T=T, p=p))
        t_batch, c_batch = min((t_batch, c_batch), ((time.perf_counter() - t0) / n_batch,
                                                    (time.process_time() - c0) / n_batch))

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
    print(f"supercrit PR scalar : {t_scalar * 1e6:9.2f} us/state (cpu {c_scalar * 1e6:.2f})")
    print(f"supercrit PR batched: {t_batch * 1e6:9.3f} us/state (cpu {c_batch * 1e6:.3f}; {n_batch} states in one "
          f"call)")
    print(f"CoolProp PR per call: {res['PR'][0] * 1e6:9.2f} us/state (cpu {res['PR'][1] * 1e6:.2f})")
    print(f"CoolProp HEOS/call  : {res['HEOS'][0] * 1e6:9.2f} us/state (cpu {res['HEOS'][1] * 1e6:.2f})")
    print(f"ratio batched throughput / CoolProp-PR per-call throughput: {res['PR'][0] / t_batch:7.1f}x (goal >= 3)")
    print(f"ratio scalar / CoolProp-PR per call: {t_scalar / res['PR'][0]:7.2f} (goal: scalar < 40 us)")


if __name__ == "__main__":
    main()
