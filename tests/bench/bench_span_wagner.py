"""Speed of Span-Wagner CO2 (T, p) states: supercrit scalar and batched against CoolProp HEOS per call.

Run on demand: PYTHONPATH=. python tests/bench/bench_span_wagner.py [n_batch]
Prints microseconds per state (density + h, cp, w) and the ratios. Reference library: CoolProp 8.0.0, HEOS
backend (Span & Wagner 1996 for CO2), measured in the same run on the same states.
"""
from __future__ import annotations

import sys
import time

import numpy as np

import supercrit
from supercrit.thermo import solid_co2


def _states(n, seed=11):
    """n (T, p) states over the fluid range: gas, liquid, supercritical, near critical (fixed seed)."""
    rng = np.random.default_rng(seed)
    T = rng.uniform(217.0, 1100.0, n)
    p = np.exp(rng.uniform(np.log(1e4), np.log(200e6), n))
    p = np.minimum(p, 0.98 * solid_co2.melting_pressure(np.maximum(T, 216.592)))  # stay fluid
    return T, p


def main(n_batch=100_000, n_scalar=300, n_ref=20_000):
    fluid = supercrit.Fluid({"CO2": 1.0}, model="span-wagner")
    T, p = _states(n_batch)

    t0 = time.perf_counter()
    st = fluid.state(T=T, p=p)
    _ = st.rho_mass, st.h, st.cp, st.w
    batch = (time.perf_counter() - t0) / n_batch * 1e6

    t0 = time.perf_counter()
    for Ti, pi in zip(T[:n_scalar], p[:n_scalar]):
        s = fluid.state(T=float(Ti), p=float(pi))
        _ = s.rho_mass, s.h, s.cp, s.w
    scalar = (time.perf_counter() - t0) / n_scalar * 1e6

    try:
        import CoolProp
        import CoolProp.CoolProp as CP
    except ImportError:
        print("CoolProp not installed: no reference timing")
        print(f"supercrit batched {batch:.1f} us/state, scalar {scalar:.1f} us/state")
        return
    AS = CP.AbstractState("HEOS", "CO2")
    m = min(n_ref, n_batch)
    rho_ref = np.empty(m)
    t0 = time.perf_counter()
    for k, (Ti, pi) in enumerate(zip(T[:m], p[:m])):
        AS.update(CP.PT_INPUTS, pi, Ti)
        rho_ref[k] = AS.rhomass()
        AS.hmass(), AS.cpmass(), AS.speed_sound()
    ref = (time.perf_counter() - t0) / m * 1e6
    dev = np.max(np.abs(np.asarray(st.rho_mass)[:m] / rho_ref - 1.0))
    print(f"CoolProp {CoolProp.__version__} HEOS CO2, per call (PT flash + rho, h, cp, w): {ref:8.1f} us/state "
          f"({m} states)")
    print(f"supercrit span-wagner batched over {n_batch} states:             {batch:8.1f} us/state "
          f"(ratio to CoolProp {batch / ref:.2f})")
    print(f"supercrit span-wagner scalar calls ({n_scalar} states):              {scalar:8.1f} us/state "
          f"(ratio to CoolProp {scalar / ref:.2f})")
    print(f"max |rho/rho_CoolProp - 1| over the compared states: {dev:.2e}")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 100_000)
