"""Units: every unit of every kind, gauge vs absolute, refusals, display systems."""
import math

import pytest

from supercrit.errors import InputError
from supercrit.units import (KINDS, PLAIN_KINDS, PSI, SYSTEMS, display_unit, format_quantity, from_si,
                             parse_quantity, parse_quantity_of, units_of)

LBF = 0.45359237 * 9.80665  # [N] international pound x standard gravity (exact definitions)

# Expected SI values from the definitions: bar = 1e5 Pa and atm = 101325 Pa (SI Brochure 2019 / 10th CGPM 1954);
# inch 0.0254 m, foot 0.3048 m, pound 0.45359237 kg (international yard and pound agreement 1959);
# hp = 550 ft lbf/s; Btu_IT/lb = 2326 J/kg (1956 International Steam Table conference).
CASES = [
    ("1 Pa", "pressure", 1.0), ("1 kPa", "pressure", 1e3), ("85 bar", "pressure", 85e5), ("8.5 MPa", "pressure", 8.5e6),
    ("1 atm", "pressure", 101325.0), ("1 psi", "pressure", LBF / 0.0254**2), ("1 psia", "pressure", LBF / 0.0254**2),
    ("85 barg", "pressure", 85e5 + 101325.0), ("0 kPag", "pressure", 101325.0), ("1 MPag", "pressure", 1.101325e6),
    ("1200 psig", "pressure", 1200 * LBF / 0.0254**2 + 101325.0),
    ("2 Pa", "pressure_difference", 2.0), ("2 kPa", "pressure_difference", 2e3), ("2 bar", "pressure_difference", 2e5),
    ("2 MPa", "pressure_difference", 2e6), ("2 psi", "pressure_difference", 2 * PSI),
    ("308.15 K", "temperature", 308.15), ("35 degC", "temperature", 308.15), ("95 degF", "temperature", 308.15),
    ("554.67 degR", "temperature", 308.15), ("35 °C", "temperature", 308.15), ("95 °F", "temperature", 308.15),
    ("-40 degF", "temperature", 233.15), ("32 degF", "temperature", 273.15),
    ("5 K", "temperature_difference", 5.0), ("5 delta_degC", "temperature_difference", 5.0),
    ("9 delta_degF", "temperature_difference", 5.0), ("9 delta_degR", "temperature_difference", 5.0),
    ("3.3 kg/s", "mass_flow", 3.3), ("3600 kg/h", "mass_flow", 1.0), ("86400 kg/d", "mass_flow", 1.0),
    ("1000 g/s", "mass_flow", 1.0), ("12 t/h", "mass_flow", 12000 / 3600), ("86.4 t/d", "mass_flow", 1.0),
    ("3600 lb/h", "mass_flow", 0.45359237), ("1 lb/s", "mass_flow", 0.45359237),
    ("2 mol/s", "molar_flow", 2.0), ("3600 mol/h", "molar_flow", 1.0), ("2 kmol/s", "molar_flow", 2000.0),
    ("3.6 kmol/h", "molar_flow", 1.0), ("3600 lbmol/h", "molar_flow", 453.59237),
    ("250 W", "power", 250.0), ("250 kW", "power", 250e3), ("2 MW", "power", 2e6),
    ("1 hp", "power", 550 * 0.3048 * LBF),
    ("3 m", "length", 3.0), ("3 km", "length", 3e3), ("3 cm", "length", 0.03), ("3 mm", "length", 3e-3),
    ("45 um", "length", 45e-6), ("45 µm", "length", 45e-6), ("16 in", "length", 0.4064), ("10 ft", "length", 3.048),
    ("1 mi", "length", 1609.344),
    ("600 kg/m3", "density", 600.0), ("600 kg/m^3", "density", 600.0), ("600 g/L", "density", 600.0),
    ("0.6 g/cm3", "density", 600.0), ("1 lb/ft3", "density", 0.45359237 / 0.3048**3),
    ("15000 mol/m3", "molar_density", 15000.0), ("15 kmol/m3", "molar_density", 15000.0),
    ("15 mol/L", "molar_density", 15000.0),
    ("250 J/kg", "specific_energy", 250.0), ("250 kJ/kg", "specific_energy", 250e3), ("2 MJ/kg", "specific_energy", 2e6),
    ("1 Btu/lb", "specific_energy", 2326.0),
    ("2 J/kg/K", "specific_heat", 2.0), ("2.1 kJ/kg/K", "specific_heat", 2100.0),
    ("1 Btu/lb/degF", "specific_heat", 4186.8),  # 1 Btu_IT/(lb degF) = 4.1868 kJ/(kg K) = 1 cal_IT/(g K), exact
    ("5 W/m2/K", "heat_transfer_coefficient", 5.0), ("5 W/(m2 K)", "heat_transfer_coefficient", 5.0),
    ("0.5 kW/m2/K", "heat_transfer_coefficient", 500.0),
    ("1 Btu/h/ft2/degF", "heat_transfer_coefficient", 2326.0 * 0.45359237 / 3600 / 0.3048**2 / (5 / 9)),
    (0.3, "fraction", 0.3), ("30 %", "fraction", 0.3), ("30%", "fraction", 0.3), (1, "fraction", 1.0),
    (3.5, "ratio", 3.5), ("3.5", "ratio", 3.5), (-0.036, "dimensionless", -0.036), ("1e-3", "dimensionless", 1e-3),
]


@pytest.mark.parametrize("text, kind, si", CASES)
def test_parse_every_unit(text, kind, si):
    assert parse_quantity(text, kind) == pytest.approx(si, rel=1e-14, abs=1e-300)


def test_every_listed_unit_is_tested():
    tested = {(k, str(t).split(" ", 1)[1]) for t, k, _ in CASES if isinstance(t, str) and " " in t}
    for kind in KINDS:
        for unit in units_of(kind):
            if unit != "%":
                assert (kind, unit) in tested, f"{kind}: {unit} has no conversion test"


def test_published_exact_factors():
    # psi = lbf/in2 from the 1959 pound and inch and standard gravity: 6894.757293168361 Pa (NIST SP 811, B.8,
    # prints 6.894 757 E+03, from memory); hp = 745.69987158227022 W (NIST SP 811, B.8, 7.456 999 E+02, from memory).
    assert PSI == pytest.approx(6894.757293168361, rel=1e-15)
    assert parse_quantity("1 hp", "power") == pytest.approx(745.69987158227022, rel=1e-15)


def test_gauge_adds_exactly_one_standard_atmosphere():
    for g, a in (("barg", "bar"), ("psig", "psia"), ("kPag", "kPa"), ("MPag", "MPa")):
        assert parse_quantity(f"12.5 {g}", "pressure") - parse_quantity(f"12.5 {a}", "pressure") == pytest.approx(
            101325.0, abs=1e-6)


def test_choice_of_kinds_by_unit():
    assert parse_quantity_of("12 t/h", ("mass_flow", "molar_flow")) == (pytest.approx(12000 / 3600), "mass_flow")
    assert parse_quantity_of("36 kmol/h", ("mass_flow", "molar_flow")) == (pytest.approx(10.0), "molar_flow")


@pytest.mark.parametrize("text, kind, fragment", [
    (45, "temperature", "has no unit"),
    ("45", "temperature", "valid units: K, degC, degF, degR"),
    ("45 C", "temperature", 'Write "45 degC" or "318.15 K"'),
    ("45 F", "temperature", 'Write "45 degF"'),
    ("45 bar", "temperature", "is a pressure; T_out needs a temperature"),
    ("2 barg", "pressure_difference", "is a gauge pressure"),
    ("2 psig", "pressure_difference", 'write "2 psi"'),
    ("5 degC", "temperature_difference", "needs a temperature difference"),
    ("3 mpa", "pressure", "Did you mean 'MPa'"),
    ("3 bars", "pressure", "Did you mean 'bar'"),
    ("12 t/h", "power", "is a mass flow"),
    ("1,200 psig", "pressure", "thousands separators"),
    ("8,5 MPa", "pressure", "'.' as the decimal point"),
    ("nan bar", "pressure", "finite"),
    (float("inf"), "ratio", "not a finite number"),
    ("-2 barg", "pressure", "not a positive absolute pressure"),
    ("-300 degC", "temperature", "absolute zero"),
    ("0 K", "temperature", "absolute zero"),
    (1.2, "fraction", "outside 0..1"),
    ("130 %", "fraction", "outside 0..1"),
    (0, "ratio", "above zero"),
    ("3 %", "ratio", "plain number"),
    ("3 bar", "ratio", "plain number"),
    (True, "pressure", "got true"),
    (None, "pressure", "got nothing"),
    ([1, 2], "length", "got [1, 2]"),
    ("bar", "pressure", "not a number followed by a unit"),
])
def test_refusals(text, kind, fragment):
    with pytest.raises(InputError) as info:
        parse_quantity(text, kind, "T_out")
    assert fragment in str(info.value)
    assert str(info.value).startswith("T_out: ")


@pytest.mark.parametrize("system", list(SYSTEMS))
@pytest.mark.parametrize("kind, si", [("pressure", 8.5e6), ("pressure_difference", 2.5e5), ("temperature", 308.15),
                                      ("temperature", 273.16), ("temperature_difference", 5.0),
                                      ("mass_flow", 3.3), ("molar_flow", 12.0), ("power", 2.5e5), ("length", 0.4064),
                                      ("density", 628.6), ("molar_density", 14283.0), ("specific_energy", 2.5e5),
                                      ("specific_heat", 2100.0), ("heat_transfer_coefficient", 5.0),
                                      ("fraction", 0.3), ("ratio", 3.2), ("dimensionless", -0.036)])
def test_format_parses_back(system, kind, si):
    text = format_quantity(si, kind, system)
    assert parse_quantity(text, kind) == pytest.approx(si, rel=1e-4)


def test_display_systems():
    assert format_quantity(8.5e6, "pressure") == "85 bar"
    assert format_quantity(8.5e6, "pressure", "SI") == "8500000 Pa"
    assert format_quantity(308.15, "temperature") == "35 degC"
    assert format_quantity(308.15, "temperature", "US") == "95 degF"
    assert format_quantity(12000 / 3600, "mass_flow") == "12 t/h"
    assert format_quantity(250e3, "power") == "250 kW"
    assert format_quantity(745.6998715822702, "power", "US") == "1 hp"
    assert format_quantity(0.3, "fraction") == "30 %"
    assert display_unit("pressure", "US") == "psia"
    assert from_si(101325.0, "pressure", "barg") == pytest.approx(0.0, abs=1e-12)
    with pytest.raises(InputError, match="unknown unit system"):
        display_unit("pressure", "imperial")
    with pytest.raises(InputError, match="Did you mean 'bar'"):
        from_si(1e5, "pressure", "Bar")


def test_plain_kinds_and_unit_lists():
    assert set(PLAIN_KINDS) <= set(KINDS)
    assert units_of("fraction") == ["%"]
    assert "psig" in units_of("pressure") and "psig" not in units_of("pressure_difference")
    assert math.isclose(parse_quantity("0.0 %", "fraction"), 0.0)
