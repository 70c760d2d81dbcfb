"""Speed of mixture PT flashes and envelopes (run on demand: python tests/bench/bench_mixtures.py).

Five-component CO2 stream (CO2 0.96, N2 0.02, O2 0.01, Ar 0.005, CH4 0.005), Peng-Robinson, measured
beside thermo 0.6.1 (FlashVL, PRMIX), thermopack 2.2.3 and CoolProp 8.0.0 (PR backend) in the same run.
Reference libraries are oracles for speed only here; their constants differ slightly. Each number is
the best of three mean times (every library alike).
"""
import time

import numpy as np

from supercrit import Fluid
from supercrit.thermo.solvers.flash import flash_Tp

COMP = {"CO2": 0.96, "N2": 0.02, "O2": 0.01, "Ar": 0.005, "CH4": 0.005}
TWO = (260.0, 40e5)  # two-phase
ONE = (320.0, 100e5)  # single phase (supercritical)


def per_call(fn, n=None, budget=1.0, repeats=3):
    """Seconds per call: the best of ``repeats`` mean times over n calls (the same rule for every library,
    so that a busy machine disturbs the comparison less)."""
    fn()
    if n is None:
        t = time.perf_counter(); fn(); dt = time.perf_counter() - t
        n = max(3, int(budget / repeats / max(dt, 1e-7)))
    best = float("inf")
    for _ in range(repeats):
        t = time.perf_counter()
        for _ in range(n):
            fn()
        best = min(best, (time.perf_counter() - t) / n)
    return best


def _fresh_envelope():
    """A full trace: the per-process envelope cache (supercrit.thermo.mixture._ENVELOPES) is emptied first,
    otherwise every call after the first would time a dictionary look-up."""
    from supercrit.thermo import mixture

    mixture._ENVELOPES.clear()
    return Fluid(COMP).envelope()


def main():
    rows = {}
    f = Fluid(COMP)
    Tc = np.array([c.Tc for c in f._comps]); pc = np.array([c.pc for c in f._comps])
    w = np.array([c.omega for c in f._comps])
    r2 = flash_Tp(f.model, *TWO, f.x, Tc, pc, w)
    assert r2.two_phase
    rows["supercrit"] = (
        per_call(lambda: flash_Tp(f.model, *TWO, f.x, Tc, pc, w)),
        per_call(lambda: flash_Tp(f.model, *TWO, f.x, Tc, pc, w, K0=r2.K)),
        per_call(lambda: flash_Tp(f.model, *ONE, f.x, Tc, pc, w)),
        per_call(_fresh_envelope, n=5),
        len(Fluid(COMP).envelope().T))
    try:
        from thermopack.cubic import cubic
        names = "CO2,N2,O2,AR,C1"
        tp = cubic(names, "PR")
        for i in range(5):
            for j in range(i + 1, 5):
                tp.set_kij(i + 1, j + 1, float(f.kij[i, j]))
        env = tp.get_envelope_twophase(5e5, f.x, maximum_pressure=1.5e7, minimum_temperature=216.592)
        rows["thermopack 2.2.3"] = (
            per_call(lambda: tp.two_phase_tpflash(*TWO, f.x)), float("nan"),
            per_call(lambda: tp.two_phase_tpflash(*ONE, f.x)),
            per_call(lambda: tp.get_envelope_twophase(5e5, f.x, maximum_pressure=1.5e7, minimum_temperature=216.592),
                     n=5), len(env[0]))
    except ImportError:
        pass
    try:
        from thermo import ChemicalConstantsPackage, CEOSGas, CEOSLiquid, PRMIX, FlashVL
        from thermo.interaction_parameters import IPDB  # noqa: F401
        consts, props = ChemicalConstantsPackage.from_IDs(["carbon dioxide", "nitrogen", "oxygen", "argon", "methane"])
        kw = dict(Tcs=consts.Tcs, Pcs=consts.Pcs, omegas=consts.omegas, kijs=f.kij.tolist())
        gas = CEOSGas(PRMIX, kw, HeatCapacityGases=props.HeatCapacityGases)
        liq = CEOSLiquid(PRMIX, kw, HeatCapacityGases=props.HeatCapacityGases)
        fl = FlashVL(consts, props, liquid=liq, gas=gas)
        z = f.x.tolist()
        rows["thermo 0.6.1"] = (per_call(lambda: fl.flash(T=TWO[0], P=TWO[1], zs=z)), float("nan"),
                                per_call(lambda: fl.flash(T=ONE[0], P=ONE[1], zs=z)), float("nan"), 0)
    except Exception as e:  # noqa: BLE001
        print("thermo skipped:", e)
    try:
        import CoolProp.CoolProp as CP
        st = CP.AbstractState("PR", "CO2&Nitrogen&Oxygen&Argon&Methane")
        st.set_mole_fractions(f.x.tolist())

        def cp_flash(T, p):
            st.update(CP.PT_INPUTS, p, T)

        rows["CoolProp 8.0.0 PR"] = (per_call(lambda: cp_flash(TWO[0], TWO[1])), float("nan"),
                                     per_call(lambda: cp_flash(ONE[0], ONE[1])), float("nan"), 0)
    except Exception as e:  # noqa: BLE001
        print("CoolProp skipped:", e)
    base = rows["supercrit"]
    print(f"{'library':22s} {'2-phase PT us':>14s} {'warm us':>9s} {'1-phase PT us':>14s} {'envelope ms':>12s} {'points':>7s}"
          f"   ratio to supercrit (2ph / 1ph / env)")
    for k, (a, b, c, d, n) in rows.items():
        print(f"{k:22s} {a * 1e6:14.1f} {b * 1e6:9.1f} {c * 1e6:14.1f} {d * 1e3:12.2f} {n:7d}"
              f"   {a / base[0]:.2f} / {c / base[2]:.2f} / {d / base[3]:.2f}")


if __name__ == "__main__":
    main()
