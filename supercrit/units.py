"""Quantities with units, the way engineers write them: the only module that reads or writes unit text.

Inside supercrit every number is SI (K, Pa, kg/s, mol/s, W, m, kg/m3, J/kg). This module turns
``"85 bar"``, ``"1200 psig"``, ``"35 degC"``, ``"12 t/h"`` into SI floats (:func:`parse_quantity`)
and SI floats back into text for display (:func:`format_quantity`) in one of three systems:
``"engineering"`` (bar, degC, t/h, kW), ``"SI"`` (Pa, K, kg/s, W) and ``"US"`` (psia, degF, lb/h, hp).

Rules
-----
* A dimensional quantity needs a unit; a bare number is refused with the list of valid units.
* Pressure units are absolute (``bar``, ``psi`` = ``psia``, ``MPa`` ...). Gauge pressure is written
  explicitly (``barg``, ``psig``, ``kPag``, ``MPag``) and adds the standard atmosphere,
  101 325 Pa exactly. A pressure difference (``dp``) refuses gauge units.
* Temperatures: ``K``, ``degC``, ``degF``, ``degR``; ``°C`` and ``°F`` are accepted as spellings of
  ``degC`` and ``degF``. A bare ``C`` or ``F`` is refused (coulomb and farad; and it hides whether
  a temperature or a difference is meant). Temperature differences: ``K``, ``delta_degC``,
  ``delta_degF``, ``delta_degR``.
* A unit of another quantity is an error that names both quantities.

Every conversion factor below is exact by definition; the definition is cited on its line.
"""
from __future__ import annotations

import difflib
import math
import re
from dataclasses import dataclass

from .errors import InputError

# --- exact definitions ----------------------------------------------------------------------------
ATM = 101325.0  # [Pa] standard atmosphere, exact by definition (10th CGPM 1954, Resolution 4)
BAR = 1.0e5  # [Pa] bar, exact by definition (SI Brochure 9th ed. 2019, Table 8)
INCH = 0.0254  # [m] international inch, exact (international yard and pound agreement 1959)
FOOT = 0.3048  # [m] international foot, exact (international yard and pound agreement 1959)
POUND = 0.45359237  # [kg] international avoirdupois pound, exact (international yard and pound agreement 1959)
G_N = 9.80665  # [m s-2] standard acceleration of gravity, exact (3rd CGPM 1901)
POUND_FORCE = POUND * G_N  # [N] 4.4482216152605 N, from the pound and standard gravity
PSI = POUND_FORCE / INCH**2  # [Pa] 6894.757293168361 Pa, pound-force per square inch from the definitions above
HORSEPOWER = 550.0 * FOOT * POUND_FORCE  # [W] mechanical horsepower, 550 ft lbf/s = 745.6998715822702 W
BTU_PER_LB = 2326.0  # [J kg-1] 1 Btu_IT/lb = 2.326 kJ/kg exactly (5th International Conference on the
#                       Properties of Steam, London 1956: 1 cal_IT = 4.1868 J and 1 Btu_IT/lb = 1 cal_IT/g * 5/9)
BTU = BTU_PER_LB * POUND  # [J] Btu_IT = 1055.05585262 J, from the line above
RANKINE = 5.0 / 9.0  # [K] one degree Fahrenheit/Rankine is 5/9 K by definition of the Fahrenheit scale
ZERO_CELSIUS = 273.15  # [K] 0 degC = 273.15 K exactly (definition of the Celsius scale, SI Brochure 2019)
ZERO_FAHRENHEIT = 459.67 * RANKINE  # [K] 0 degF = 459.67 degR = 255.372... K (definition of the Fahrenheit scale)
HOUR = 3600.0  # [s]
DAY = 86400.0  # [s]
TONNE = 1000.0  # [kg] metric tonne


@dataclass(frozen=True)
class Unit:
    """One unit of one kind: SI value = number * scale + offset."""

    name: str
    scale: float
    offset: float = 0.0
    gauge: bool = False


def _u(name, scale, offset=0.0, gauge=False, aliases=()):
    return (Unit(name, scale, offset, gauge), aliases)


# kind -> (noun used in messages, example, units with their alternative spellings)
_KINDS: dict[str, tuple[str, str, list]] = {
    "pressure": ("pressure", "85 bar", [
        _u("Pa", 1.0), _u("kPa", 1e3), _u("bar", BAR), _u("MPa", 1e6), _u("atm", ATM),
        _u("psi", PSI), _u("psia", PSI),
        _u("barg", BAR, ATM, True), _u("kPag", 1e3, ATM, True), _u("MPag", 1e6, ATM, True),
        _u("psig", PSI, ATM, True)]),
    "pressure_difference": ("pressure difference", "2 bar", [
        _u("Pa", 1.0), _u("kPa", 1e3), _u("bar", BAR), _u("MPa", 1e6), _u("psi", PSI)]),
    "temperature": ("temperature", "45 degC", [
        _u("K", 1.0), _u("degC", 1.0, ZERO_CELSIUS, aliases=("°C",)),
        _u("degF", RANKINE, ZERO_FAHRENHEIT, aliases=("°F",)), _u("degR", RANKINE)]),
    "temperature_difference": ("temperature difference", "5 K", [
        _u("K", 1.0), _u("delta_degC", 1.0), _u("delta_degF", RANKINE), _u("delta_degR", RANKINE)]),
    "mass_flow": ("mass flow", "12 t/h", [
        _u("kg/s", 1.0), _u("kg/h", 1.0 / HOUR), _u("kg/d", 1.0 / DAY), _u("g/s", 1e-3),
        _u("t/h", TONNE / HOUR), _u("t/d", TONNE / DAY), _u("lb/h", POUND / HOUR), _u("lb/s", POUND)]),
    "molar_flow": ("molar flow", "100 kmol/h", [
        _u("mol/s", 1.0), _u("mol/h", 1.0 / HOUR), _u("kmol/s", 1e3), _u("kmol/h", 1e3 / HOUR),
        _u("lbmol/h", 1e3 * POUND / HOUR)]),
    "power": ("power", "250 kW", [
        _u("W", 1.0), _u("kW", 1e3), _u("MW", 1e6), _u("hp", HORSEPOWER)]),
    "length": ("length", "12 km", [
        _u("m", 1.0), _u("km", 1e3), _u("cm", 1e-2), _u("mm", 1e-3), _u("um", 1e-6, aliases=("µm", "μm")),
        _u("in", INCH), _u("ft", FOOT), _u("mi", 5280.0 * FOOT)]),
    "density": ("density", "600 kg/m3", [
        _u("kg/m3", 1.0, aliases=("kg/m^3", "kg/m³")), _u("g/L", 1.0, aliases=("g/l",)),
        _u("g/cm3", 1e3, aliases=("g/cm^3", "g/cm³", "g/ml", "g/mL")),
        _u("lb/ft3", POUND / FOOT**3, aliases=("lb/ft^3", "lb/ft³"))]),
    "molar_density": ("molar density", "15000 mol/m3", [
        _u("mol/m3", 1.0, aliases=("mol/m^3", "mol/m³")), _u("kmol/m3", 1e3, aliases=("kmol/m^3", "kmol/m³")),
        _u("mol/L", 1e3, aliases=("mol/l", "mol/dm3"))]),
    "specific_energy": ("specific energy", "250 kJ/kg", [
        _u("J/kg", 1.0), _u("kJ/kg", 1e3), _u("MJ/kg", 1e6), _u("Btu/lb", BTU_PER_LB)]),
    "specific_heat": ("specific heat or entropy", "2.1 kJ/kg/K", [
        _u("J/kg/K", 1.0, aliases=("J/(kg K)", "J/kgK", "J/(kg.K)")),
        _u("kJ/kg/K", 1e3, aliases=("kJ/(kg K)", "kJ/kgK", "kJ/(kg.K)")),
        _u("Btu/lb/degF", BTU_PER_LB / RANKINE, aliases=("Btu/(lb degF)",))]),
    "heat_transfer_coefficient": ("heat-transfer coefficient", "5 W/m2/K", [
        _u("W/m2/K", 1.0, aliases=("W/(m2 K)", "W/m2K", "W/(m2.K)", "W/m^2/K", "W/(m^2 K)", "W/m²/K", "W/(m² K)")),
        _u("kW/m2/K", 1e3, aliases=("kW/(m2 K)", "kW/m2K", "kW/m^2/K")),
        _u("Btu/h/ft2/degF", BTU / HOUR / FOOT**2 / RANKINE, aliases=("Btu/(h ft2 degF)",))]),
}
#: kinds that are plain numbers (no unit): fraction (0..1 or "30 %"), ratio (> 0), dimensionless
PLAIN_KINDS = ("fraction", "ratio", "dimensionless")
KINDS = tuple(_KINDS) + PLAIN_KINDS

_TABLE: dict[str, dict[str, Unit]] = {}
for _kind, (_noun, _ex, _units) in _KINDS.items():
    _TABLE[_kind] = {}
    for _unit, _aliases in _units:
        for _spelling in (_unit.name, *_aliases):
            _TABLE[_kind][_spelling] = _unit

# Display units of each system; fraction shown as %, ratio/dimensionless as plain numbers.
SYSTEMS: dict[str, dict[str, str]] = {
    "engineering": {"pressure": "bar", "pressure_difference": "bar", "temperature": "degC",
                    "temperature_difference": "K", "mass_flow": "t/h", "molar_flow": "kmol/h", "power": "kW",
                    "length": "m", "density": "kg/m3", "molar_density": "mol/m3", "specific_energy": "kJ/kg",
                    "specific_heat": "kJ/kg/K", "heat_transfer_coefficient": "W/m2/K"},
    "SI": {"pressure": "Pa", "pressure_difference": "Pa", "temperature": "K", "temperature_difference": "K",
           "mass_flow": "kg/s", "molar_flow": "mol/s", "power": "W", "length": "m", "density": "kg/m3",
           "molar_density": "mol/m3", "specific_energy": "J/kg", "specific_heat": "J/kg/K",
           "heat_transfer_coefficient": "W/m2/K"},
    "US": {"pressure": "psia", "pressure_difference": "psi", "temperature": "degF",
           "temperature_difference": "delta_degF", "mass_flow": "lb/h", "molar_flow": "lbmol/h", "power": "hp",
           "length": "ft", "density": "lb/ft3", "molar_density": "mol/m3", "specific_energy": "Btu/lb",
           "specific_heat": "Btu/lb/degF", "heat_transfer_coefficient": "Btu/h/ft2/degF"},
}

_NUMBER = re.compile(r"^\s*([+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)\s*(.*?)\s*$")
_BARE_TEMPERATURE = {"C": "degC", "F": "degF", "R": "degR", "deg C": "degC", "deg F": "degF",
                     "Celsius": "degC", "celsius": "degC", "Fahrenheit": "degF", "fahrenheit": "degF",
                     "centigrade": "degC", "ºC": "degC", "ºF": "degF", "oC": "degC", "oF": "degF",
                     "deg": "degC", "degK": "K", "°K": "K", "kelvin": "K", "Kelvin": "K"}


def units_of(kind: str) -> list[str]:
    """The canonical unit names valid for ``kind`` (aliases not listed)."""
    _check_kind(kind)
    if kind in PLAIN_KINDS:
        return ["%"] if kind == "fraction" else []
    return [u.name for u, _ in _KINDS[kind][2]]


def noun(kind: str) -> str:
    """The word used for ``kind`` in messages, e.g. ``"pressure difference"``."""
    _check_kind(kind)
    return _KINDS[kind][0] if kind in _KINDS else kind


def _check_kind(kind: str) -> None:
    if kind not in KINDS:
        raise ValueError(f"unknown quantity kind {kind!r}; valid: {', '.join(KINDS)}")  # programming error


def _kinds_of_unit(unit: str) -> list[str]:
    return [k for k, table in _TABLE.items() if unit in table]


def _fmt_num(v: float, digits: int = 6) -> str:
    if v == 0 or not math.isfinite(v):
        return "0" if v == 0 else str(v)
    mag = math.floor(math.log10(abs(v)))
    if mag >= 9 or mag < -4:
        return f"{v:.{digits}g}"
    text = f"{v:.{max(0, digits - 1 - mag)}f}"
    return text.rstrip("0").rstrip(".") if "." in text else text


def _example(kind: str, number: str | None = None) -> str:
    ex = _KINDS[kind][1]
    if number is None:
        return f'"{ex}"'
    return f'"{number} {ex.split(" ", 1)[1]}"'


def _valid_list(kind: str) -> str:
    return ", ".join(units_of(kind))


def _in_text(text) -> str:
    return f'"{text}"' if isinstance(text, str) else str(text).lower() if isinstance(text, bool) else repr(text)


def parse_quantity(text, kind: str, where: str | None = None) -> float:
    """Read a quantity written with its unit and return its SI value.

    Parameters
    ----------
    text : str or int or float
        E.g. ``"85 bar"``, ``"1200 psig"``, ``"35 degC"``, ``"12 t/h"``; plain numbers only for
        the plain kinds ``fraction`` (0..1, or ``"30 %"``), ``ratio`` (> 0) and ``dimensionless``.
    kind : str
        One of :data:`KINDS`.
    where : str, optional
        Name of the input (e.g. ``"T_out"``), used in messages and as their prefix.

    Returns
    -------
    float
        The value in SI: Pa (absolute), K, kg/s, mol/s, W, m, kg/m3, mol/m3, J/kg, J/kg/K,
        W/m2/K; fractions as 0..1.

    Raises
    ------
    InputError
        A missing, unknown or unfitting unit, a number that is not finite, an absolute pressure
        or temperature at or below zero, a fraction outside 0..1, a ratio not above zero.
    """
    value, _ = parse_quantity_of(text, (kind,), where)
    return value


def parse_quantity_of(text, kinds, where: str | None = None) -> tuple[float, str]:
    """Like :func:`parse_quantity`, with a choice of kinds decided by the unit written.

    E.g. ``parse_quantity_of("12 t/h", ("mass_flow", "molar_flow"))`` -> ``(3.333..., "mass_flow")``.

    Returns
    -------
    (float, str)
        SI value and the kind the unit belongs to.
    """
    kinds = tuple(kinds)
    for k in kinds:
        _check_kind(k)
    name = where or "this value"
    wanted = " or ".join(noun(k) for k in kinds)
    if isinstance(text, bool) or text is None or not isinstance(text, (str, int, float)):
        shown = _in_text(text) if text is not None else "nothing"
        hint = _example(kinds[0]) if kinds[0] in _KINDS else "a number"
        raise InputError(f"{name} needs a {wanted} such as {hint}; got {shown}", where)
    if isinstance(text, (int, float)):
        number, unit = float(text), ""
    else:
        m = _NUMBER.match(text)
        if not m or re.match(r"^[,.]\d", m.group(2)):
            hint = ""
            if re.match(r"^\s*[+-]?\d{1,3}(,\d{3})+", text):
                hint = " Write numbers without thousands separators, with '.' as decimal point (e.g. 1200)."
            elif re.match(r"^\s*[+-]?\d+,\d+", text):
                hint = " Use '.' as the decimal point (e.g. 8.5)."
            elif re.match(r"^\s*[+-]?(\.?inf|\.?nan)", text, re.I):
                hint = " Values must be finite numbers."
            ex = _example(kinds[0]) if kinds[0] in _KINDS else "0.75"
            raise InputError(f"{_in_text(text)} is not a number followed by a unit; {name} needs a {wanted}, "
                             f"e.g. {ex}.{hint}", where)
        number, unit = float(m.group(1)), m.group(2)
    if not math.isfinite(number):
        raise InputError(f"{_in_text(text)} is not a finite number", where)

    plain = [k for k in kinds if k in PLAIN_KINDS]
    if unit in ("", "%") and plain:
        kind = plain[0]
        if unit == "%":
            if kind != "fraction":
                raise InputError(f"{_in_text(text)}: a {kind} is a plain number, not a percentage", where)
            number /= 100.0
        if kind == "fraction" and not 0.0 <= number <= 1.0:
            raise InputError(f"{_in_text(text)} is outside 0..1; {name} is a fraction (write 0.3 or \"30 %\")",
                             where)
        if kind == "ratio" and not number > 0.0:
            raise InputError(f"{_in_text(text)}: {name} is a ratio and must be above zero", where)
        return number, kind
    if plain and not [k for k in kinds if k in _KINDS]:
        raise InputError(f"{_in_text(text)}: {name} is a plain number ({plain[0]}), written without a unit", where)

    dim = [k for k in kinds if k in _KINDS]
    if unit == "":
        examples = " or ".join(_example(k, _fmt_num(number)) for k in dim)
        valid = "; ".join(f"{noun(k)}: {_valid_list(k)}" for k in dim) if len(dim) > 1 else _valid_list(dim[0])
        raise InputError(f"{_in_text(text)} has no unit; {name} is a {wanted}: write e.g. {examples} "
                         f"(valid units: {valid})", where)
    for kind in dim:
        u = _TABLE[kind].get(unit)
        if u is not None:
            return _to_si(number, u, kind, text, name, where), kind
    raise _unit_error(text, number, unit, dim, name, where)


def _to_si(number: float, u: Unit, kind: str, text, name: str, where) -> float:
    value = number * u.scale + u.offset
    if kind == "pressure" and not value > 0.0:
        extra = " (a gauge value below -1 atm is below vacuum)" if u.gauge else ""
        raise InputError(f"{_in_text(text)} is not a positive absolute pressure{extra}; {name} is an absolute "
                         f"pressure", where)
    if kind == "temperature" and not value > 0.0:
        raise InputError(f"{_in_text(text)} is at or below absolute zero (0 K = -273.15 degC)", where)
    return value


def _unit_error(text, number: float, unit: str, kinds: list[str], name: str, where) -> InputError:
    wanted = " or ".join(noun(k) for k in kinds)
    num = _fmt_num(number)
    if "temperature" in kinds and unit in _BARE_TEMPERATURE:
        good = _BARE_TEMPERATURE[unit]
        kelvin = _fmt_num(number * _TABLE["temperature"][good].scale + _TABLE["temperature"][good].offset)
        alt = f' or "{kelvin} K"' if good != "K" else ""
        return InputError(f'{_in_text(text)} has no unit supercrit knows. Write "{num} {good}"{alt}.', where)
    if "temperature_difference" in kinds and unit in ("degC", "degF", "degR", "°C", "°F", "C", "F"):
        d = {"degC": "delta_degC", "°C": "delta_degC", "C": "delta_degC"}.get(unit, "delta_degF")
        return InputError(f'{_in_text(text)} is a temperature on a scale; {name} needs a temperature difference: '
                          f'write "{num} K" or "{num} {d}"', where)
    if "pressure_difference" in kinds and _TABLE["pressure"].get(unit, Unit("", 1)).gauge:
        return InputError(f'{_in_text(text)} is a gauge pressure; {name} is a pressure difference, which has no '
                          f'gauge: write "{num} {unit[:-1]}"', where)
    others = [k for k in _kinds_of_unit(unit) if k not in kinds]
    if others:
        return InputError(f"{_in_text(text)} is a {noun(others[0])}; {name} needs a {wanted}: "
                          f"write e.g. {_example(kinds[0], num)}", where)
    spellings = [s for k in kinds for s in _TABLE[k]]
    lower = {s.lower(): s for s in spellings}
    close = [lower[unit.lower()]] if unit.lower() in lower else difflib.get_close_matches(unit, spellings, 2, 0.6)
    hint = f" Did you mean {' or '.join(repr(c) for c in close)}?" if close else ""
    valid = "; ".join(f"{noun(k)}: {_valid_list(k)}" for k in kinds)
    return InputError(f"{_in_text(text)}: unit {unit!r} is not one supercrit knows for a {wanted}.{hint} "
                      f"Valid units: {valid}.", where)


def from_si(value: float, kind: str, unit: str) -> float:
    """Convert an SI value of ``kind`` to ``unit`` (e.g. ``from_si(8.5e6, "pressure", "bar")`` -> 85.0).

    Raises
    ------
    InputError
        If ``unit`` is not a unit of ``kind``.
    """
    _check_kind(kind)
    if kind in PLAIN_KINDS:
        if unit == "%" and kind == "fraction":
            return value * 100.0
        if unit in ("", "-"):
            return value
        raise InputError(f"a {kind} has no unit {unit!r}")
    u = _TABLE[kind].get(unit)
    if u is None:
        raise _unit_error(f"1 {unit}", 1.0, unit, [kind], "the value", None)
    return (value - u.offset) / u.scale


def display_unit(kind: str, system: str = "engineering") -> str:
    """The unit ``kind`` is shown in by ``system`` (``"engineering"``, ``"SI"`` or ``"US"``)."""
    _check_kind(kind)
    if system not in SYSTEMS:
        raise InputError(f"unknown unit system {system!r}; valid: {', '.join(SYSTEMS)}", "display_units")
    if kind in PLAIN_KINDS:
        return "%" if kind == "fraction" and system == "engineering" else ""
    return SYSTEMS[system][kind]


def format_quantity(value_SI: float, kind: str, system: str = "engineering", digits: int = 5) -> str:
    """Text of an SI value in the display unit of ``system``, e.g. ``format_quantity(8.5e6, "pressure")`` -> ``"85 bar"``.

    Parameters
    ----------
    value_SI : float
        Value in SI (see :func:`parse_quantity`).
    kind : str
        One of :data:`KINDS`.
    system : str
        ``"engineering"`` (bar, degC, t/h, kW), ``"SI"`` (Pa, K, kg/s, W) or ``"US"`` (psia, degF, lb/h, hp).
    digits : int
        Significant digits shown (temperatures on the Celsius/Fahrenheit scales keep at least two
        decimals' worth of resolution relative to the kelvin value).

    Returns
    -------
    str
        ``"<number> <unit>"``; plain kinds without a unit (fractions as ``"30 %"`` in engineering).
        The text parses back with :func:`parse_quantity` to the value within the shown digits.
    """
    unit = display_unit(kind, system)
    v = from_si(float(value_SI), kind, unit or "-")
    if kind == "temperature" and unit in ("degC", "degF"):
        # keep the resolution of the kelvin value: 0.01 K is not lost near 0 degC
        decimals = max(0, digits - 1 - int(math.floor(math.log10(max(abs(value_SI), 1e-300)))))
        text = f"{v:.{decimals}f}"
        if "." in text:
            text = text.rstrip("0").rstrip(".")
        if text in ("-0", ""):
            text = "0"
    else:
        text = _fmt_num(v, digits)
    return f"{text} {unit}" if unit else text
