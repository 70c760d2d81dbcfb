"""Viscosity correlations and the friction factor."""
import math

import pytest

from supercrit.steps.pipe import friction_factor
from supercrit.thermo.components import get_component
from supercrit.thermo.transport import _polar, viscosity_chung, viscosity_co2


@pytest.mark.parametrize("T, p", [(300.0, 1e5), (310.0, 10e6), (250.0, 5e6), (500.0, 30e6), (320.0, 100e6),
                                  (220.0, 1e6)])
def test_co2_viscosity_matches_coolprop_laesecke_muzny(T, p):
    CP = pytest.importorskip("CoolProp.CoolProp")
    # CoolProp 8.0.0 implements Laesecke & Muzny, J. Phys. Chem. Ref. Data 46 (2017) 013107 for CO2;
    # same density in, so the correlation is compared alone. rel 1e-5: CoolProp scales eta_tL with
    # its EOS gas constant and molar mass (we use CODATA 2018 R), a 3e-6 difference.
    rho = CP.PropsSI("D", "T", T, "P", p, "CO2")
    assert viscosity_co2(T, rho) == pytest.approx(CP.PropsSI("V", "T", T, "P", p, "CO2"), rel=1e-5)


def test_co2_dilute_viscosity_closed_form():
    # Laesecke & Muzny 2017 Eq. 4 at rho -> 0 equals eta_0(T) alone; at 300 K about 15.0 uPa s
    # (CoolProp 8.0.0 gives 15.02 uPa s at 300 K, 1 bar; from memory, checked in the test above)
    assert viscosity_co2(300.0, 1e-9) == pytest.approx(1.5e-5, rel=0.01)


def _chung(name, T, rho_molar):
    c = get_component(name)
    d, k = _polar([name])
    return viscosity_chung(T, rho_molar, [1.0], [c.Tc], [c.Vc], [c.omega], [c.M], d, k)


@pytest.mark.parametrize("name, T, p", [("N2", 300.0, 1e5), ("N2", 300.0, 20e6), ("CO2", 310.0, 10e6),
                                        ("CH4", 250.0, 10e6), ("CO2", 250.0, 5e6)])
def test_chung_within_its_stated_accuracy_of_reference_correlations(name, T, p):
    CP = pytest.importorskip("CoolProp.CoolProp")
    # Oracle: CoolProp 8.0.0 reference viscosity correlations at the same molar density; Chung et al.
    # (1988) state average deviations of a few % for nonpolar dense fluids: we allow 8 %.
    cp_name = {"N2": "Nitrogen", "CO2": "CO2", "CH4": "Methane"}[name]
    rho = CP.PropsSI("Dmolar", "T", T, "P", p, cp_name)
    assert _chung(name, T, rho) == pytest.approx(CP.PropsSI("V", "T", T, "P", p, cp_name), rel=0.08)


def test_chung_mixture_of_one_component_and_of_identical_halves_equals_pure():
    c = get_component("N2")
    pure = _chung("N2", 300.0, 5000.0)
    two = viscosity_chung(300.0, 5000.0, [0.5, 0.5], [c.Tc] * 2, [c.Vc] * 2, [c.omega] * 2, [c.M] * 2,
                          [0.0, 0.0], [0.0, 0.0])
    assert two == pytest.approx(pure, rel=1e-13)


@pytest.mark.parametrize("Re, eD", [(1e4, 0.0), (1e5, 1e-4), (1e6, 1e-3), (5e7, 5e-5), (4000.0, 0.01)])
def test_friction_factor_is_colebrook_as_in_fluids(Re, eD):
    fluids = pytest.importorskip("fluids.friction")
    # Oracle: fluids 1.3.1, fluids.friction.Colebrook (exact Lambert-W solution of Colebrook 1939)
    assert friction_factor(Re, eD) == pytest.approx(fluids.Colebrook(Re, eD), rel=1e-10)


def test_friction_factor_limits():
    # laminar: Hagen-Poiseuille f = 64/Re
    assert friction_factor(1000.0, 1e-3) == pytest.approx(0.064, rel=1e-15)
    # fully rough limit of Colebrook (von Karman): 1/sqrt(f) = -2 log10(eps/(3.7 D))
    eD = 0.01
    assert friction_factor(1e12, eD) == pytest.approx(1.0 / (2 * math.log10(3.7 / eD)) ** 2, rel=1e-6)
    # Moody chart reading, smooth pipe at Re = 1e5: f = 0.018 (Moody, Trans. ASME 66 (1944) 671, Fig. 1;
    # read to two digits)
    assert friction_factor(1e5, 0.0) == pytest.approx(0.018, abs=0.0005)
