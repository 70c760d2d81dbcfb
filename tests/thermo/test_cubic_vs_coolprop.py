"""Same-model agreement of supercrit's cubic equations with CoolProp 8.0.0's cubic backends.

Reference: CoolProp 8.0.0, AbstractState("PR"/"SRK", fluid) (Bell et al., Ind. Eng. Chem. Res. 53
(2014) 2498, doi:10.1021/ie4033999). Alignment of inputs: Tc, pc, omega and M are read from the
CoolProp backend and pinned through ``constants=``; both use R = 8.31446261815324 (CODATA 2018)
and the same ideal-gas part (the reference-EOS Planck-Einstein terms, which CoolProp's cubic
backends borrow from their HEOS fluid, and which supercrit's components.yaml carries from the
same papers). Enthalpy and entropy are compared as differences from a reference state, since the
two libraries use different reference states.

Entropy: CoolProp 8.0.0's cubic backends return a total entropy that is not thermodynamically
consistent (at CO2, 300 K, 2 bar its numerical (ds/dT)_p is 0.2496 J/mol/K^2 against cp/T = 0.1255,
while its HEOS backend and supercrit agree with cp/T). The test therefore compares entropy as
CoolProp's residual entropy (smolar_residual, consistent) plus the ideal-gas entropy of CoolProp's
HEOS backend at the same (T, rho), rescaled from HEOS's R = 8.31451 to the cubic's CODATA R.
"""
import numpy as np
import pytest

import supercrit as sc

CP = pytest.importorskip("CoolProp.CoolProp")

FLUIDS = [("CO2", "CO2"), ("N2", "Nitrogen"), ("CH4", "Methane"), ("propane", "Propane")]


def _states(Tc, pc, A):
    """>= 50 (T, p) states across gas, liquid and supercritical, away from saturation by 1 %."""
    out = []
    for T in np.linspace(0.62 * Tc, 2.2 * Tc, 11):
        for p in np.geomspace(0.03 * pc, 6.0 * pc, 11):
            if T < Tc:
                A.update(CP.QT_INPUTS, 0.0, T)
                if abs(p / A.p() - 1.0) < 0.01:
                    continue
            out.append((T, p))
    return out


@pytest.mark.parametrize("backend, model", [("PR", "peng-robinson"), ("SRK", "soave-redlich-kwong")])
@pytest.mark.parametrize("name, cpname", FLUIDS)
def test_cubic_matches_coolprop_cubic_backend(backend, model, name, cpname):
    A = CP.AbstractState(backend, cpname)
    H = CP.AbstractState("HEOS", cpname)
    Tc, pc = A.T_critical(), A.p_critical()
    fluid = sc.Fluid({name: 1.0}, model=model, constants={name: {"Tc": Tc, "pc": pc, "omega": A.acentric_factor(),
                                                                  "M": A.molar_mass()}})
    T_lo = max(0.62 * Tc, fluid._T_limits()[0])
    states = [(T, p) for T, p in _states(Tc, pc, A) if T >= T_lo and T <= fluid._T_limits()[1]]
    assert len(states) >= 50
    T = np.array([s[0] for s in states])
    p = np.array([s[1] for s in states])
    batch = fluid.state(T=T, p=p)
    rho, cp, w, h, s = (np.empty(len(T)) for _ in range(5))
    phases = set()
    for i, (Ti, pi) in enumerate(states):
        # CoolProp's cubic PT update needs the phase imposed where the cubic has three roots; impose
        # the stable one by CoolProp's own saturation pressure (gas below psat, liquid above)
        A.unspecify_phase()
        if Ti < Tc:
            A.update(CP.QT_INPUTS, 0.0, Ti)
            A.specify_phase(CP.iphase_liquid if pi > A.p() else CP.iphase_gas)
        else:  # one physical root (v > b); CoolProp may see roots below b and ask for a phase
            A.specify_phase(CP.iphase_gas)
        A.update(CP.PT_INPUTS, pi, Ti)
        A.unspecify_phase()
        rho[i], cp[i], w[i], h[i] = A.rhomolar(), A.cpmolar(), A.speed_sound(), A.hmolar()
        H.update(CP.DmolarT_INPUTS, rho[i], Ti)
        s[i] = A.smolar_residual() + H.smolar_idealgas() * (8.31446261815324 / H.gas_constant())
        phases.add(str(batch.phase[i]))
    assert {"gas", "liquid", "supercritical"} <= phases
    np.testing.assert_allclose(batch.rho_molar, rho, rtol=1e-6)
    np.testing.assert_allclose(batch.cp, cp, rtol=1e-4)
    np.testing.assert_allclose(batch.w, w, rtol=1e-4)
    dh_sc, dh_cp = batch.h - batch.h[0], h - h[0]
    ds_sc, ds_cp = batch.s - batch.s[0], s - s[0]
    # relative to the differences themselves, floored at R T of the state to keep near-zero differences fair
    scale_h = np.maximum(np.abs(dh_cp), 8.314 * T)
    scale_s = np.maximum(np.abs(ds_cp), 8.314)
    assert np.max(np.abs(dh_sc - dh_cp) / scale_h) < 1e-5
    assert np.max(np.abs(ds_sc - ds_cp) / scale_s) < 1e-5


def _independent_psat(T, Tc, pc, omega, family):
    """Saturation of a pure cubic by the textbook Z-form, written here independently of supercrit.

    ln phi = Z - 1 - ln(Z - B) - A/(B (d1 - d2)) ln((Z + d1 B)/(Z + d2 B)); m(omega) of Soave (1972) for
    SRK and of Peng & Robinson (1976) for PR; Omega_a, Omega_b as printed in those papers' exact forms.
    Solved by Brent on ln(phi_L/phi_V) over the pressure range where the cubic has three roots.
    """
    from scipy.optimize import brentq

    R = 8.31446261815324
    if family == "PR":
        d1, d2, Oa, Ob = 1 + 2**0.5, 1 - 2**0.5, 0.45723552892138218938, 0.077796073903888455972
        m = 0.37464 + 1.54226 * omega - 0.26992 * omega**2
    else:
        d1, d2, Oa, Ob = 1.0, 0.0, 1 / (9 * (2 ** (1 / 3) - 1)), (2 ** (1 / 3) - 1) / 3
        m = 0.480 + 1.574 * omega - 0.176 * omega**2
    a = Oa * (R * Tc) ** 2 / pc * (1 + m * (1 - (T / Tc) ** 0.5)) ** 2
    b = Ob * R * Tc / pc

    def roots(p):
        A, B = a * p / (R * T) ** 2, b * p / (R * T)
        c = [1.0, (d1 + d2 - 1) * B - 1, A + d1 * d2 * B**2 - (d1 + d2) * B * (B + 1), -(A * B + d1 * d2 * B**2 * (B + 1))]
        z = np.roots(c)
        z = np.sort(z[np.abs(z.imag) < 1e-9].real)
        z = z[z > B]
        return A, B, z

    def lnphi(Z, A, B):
        return Z - 1 - np.log(Z - B) - A / (B * (d1 - d2)) * np.log((Z + d1 * B) / (Z + d2 * B))

    def g(lnp):
        A, B, z = roots(np.exp(lnp))
        return lnphi(z[0], A, B) - lnphi(z[-1], A, B)

    grid = np.linspace(np.log(1e3), np.log(pc), 600)
    three = [lp for lp in grid if len(roots(np.exp(lp))[2]) == 3]
    lp = brentq(g, three[0], three[-1], xtol=1e-15, rtol=1e-15)
    A, B, z = roots(np.exp(lp))
    p = np.exp(lp)
    return p, p / (z[0] * R * T), p / (z[-1] * R * T)


@pytest.mark.parametrize("backend, model", [("PR", "peng-robinson"), ("SRK", "soave-redlich-kwong")])
def test_co2_saturation_converges_to_tc_and_matches_independent_solution(backend, model):
    """CO2 psat from 217 K to Tc - 0.001 K (0.5 K steps, then 0.1, 0.01, 0.001 K): every point converges.

    Coexisting densities to 1e-6 relative against the independent textbook solution above (up to
    Tc - 1 K, where its Brent bracket is well conditioned). CoolProp 8.0.0's cubic saturation is
    compared at 1e-4 only: its equal-fugacity residual is 1e-5 to 1e-7 at these states (measured),
    so it is not precise enough to test 1e-6.
    """
    A = CP.AbstractState(backend, "CO2")
    Tc, pc, w = A.T_critical(), A.p_critical(), A.acentric_factor()
    fluid = sc.Fluid({"CO2": 1.0}, model=model, constants={"CO2": {"Tc": Tc, "pc": pc, "omega": w}})
    T = np.concatenate([np.arange(217.0, Tc - 1.0, 0.5), Tc - np.arange(1.0, 0.1, -0.1),
                        Tc - np.arange(0.1, 0.01, -0.01), Tc - np.arange(0.01, 0.0009, -0.001)])
    sat = fluid.saturation(T=T)
    assert np.all(np.isfinite(sat.p)) and np.all(sat.liquid.rho_molar > sat.vapor.rho_molar)
    assert np.all(np.diff(sat.p) > 0)
    for i in range(0, len(T), 7):
        if Tc - T[i] < 1.0:
            continue
        p, rl, rv = _independent_psat(T[i], Tc, pc, w, backend)
        assert sat.p[i] == pytest.approx(p, rel=1e-6)
        assert sat.liquid.rho_molar[i] == pytest.approx(rl, rel=1e-6)
        assert sat.vapor.rho_molar[i] == pytest.approx(rv, rel=1e-6)
    compared = 0
    for i, Ti in enumerate(T):
        if Tc - Ti < 3.0:  # CoolProp's cubic saturation drifts (2.5e-4 at Tc - 1 K) closer to Tc
            continue
        try:
            A.update(CP.QT_INPUTS, 0.0, Ti)
        except ValueError:  # CoolProp 8.0.0 SRK saturation fails at some temperatures ("p is not a valid number")
            continue
        compared += 1
        assert sat.liquid.rho_molar[i] == pytest.approx(A.saturated_liquid_keyed_output(CP.iDmolar), rel=1e-4)
        assert sat.vapor.rho_molar[i] == pytest.approx(A.saturated_vapor_keyed_output(CP.iDmolar), rel=1e-4)
    assert compared > 120
