"""Units of measure at the edges: parsing what engineers write, refusing what they should not.

Conversion factors: NIST Special Publication 811 (2008 ed.), Guide for the
Use of the International System of Units, Appendix B.8/B.9 [from memory]:
1 atm = 101 325 Pa and 1 bar = 1e5 Pa (exact), 1 psi = 6894.757 Pa,
1 mmHg (conventional) = 133.3224 Pa, 1 Btu_IT/(h ft2 °F) = 5.678 263 W/(m2 K),
T/K = (t/°F + 459.67)/1.8 (exact). Tolerances are the digits quoted.
"""

from __future__ import annotations

import math

import pytest

from balance.errors import InputError, UnitOfMeasureError
from balance.flowsheet import Flowsheet
from balance.quantities import KINDS, convert, display_unit, parse


@pytest.mark.parametrize("text, kind, expected, rel", [
    ("20 t/h", "mass_flow", 20000.0 / 3600.0, 1e-12),
    ("3600 kg/h", "mass_flow", 1.0, 1e-12),
    ("55 degC", "temperature", 328.15, 1e-12),
    ("55 °C", "temperature", 328.15, 1e-12),
    ("131 degF", "temperature", 328.15, 1e-12),          # NIST SP 811: (131 + 459.67)/1.8, exact
    ("300 K", "temperature", 300.0, 1e-12),
    ("5 K", "temperature_difference", 5.0, 1e-12),
    ("5 degC", "temperature_difference", 5.0, 1e-12),    # a difference, not 278.15 K
    ("9 degF", "temperature_difference", 5.0, 1e-12),
    ("25 kPa", "pressure", 25000.0, 1e-12),
    ("1 bar", "pressure", 1e5, 1e-12),                    # NIST SP 811: exact
    ("1 atm", "pressure", 101325.0, 1e-12),               # NIST SP 811: exact
    ("14.696 psi", "pressure", 14.696 * 6894.757, 1e-6),  # NIST SP 811: 6.894 757 E+03 Pa
    ("760 mmHg", "pressure", 760 * 133.3224, 1e-6),       # NIST SP 811: 1.333 224 E+02 Pa
    ("48 %", "fraction", 0.48, 1e-12),
    ("0.48", "fraction", 0.48, 1e-12),
    ("120 m2", "area", 120.0, 1e-12),
    ("120 m²", "area", 120.0, 1e-12),
    ("1800 W/m2/K", "heat_transfer_coefficient", 1800.0, 1e-12),
    ("1.8 kW/m2/K", "heat_transfer_coefficient", 1800.0, 1e-12),
    ("1800 W/(m2 K)", "heat_transfer_coefficient", 1800.0, 1e-12),
    # Geankoplis 4th ed. Example 8.4-1 gives U = 1704 W/m2/K for 300 Btu/h/ft2/°F [from memory];
    # NIST SP 811: 1 Btu_IT/(h ft2 °F) = 5.678 263 W/(m2 K).
    ("300 Btu/h/ft2/degF", "heat_transfer_coefficient", 300 * 5.678263, 1e-6),
    ("1.2 MW", "power", 1.2e6, 1e-12),
    ("2257 kJ/kg", "specific_enthalpy", 2.257e6, 1e-12),
    ("3.9 kJ/kg/K", "specific_heat", 3900.0, 1e-12),
    ("8 g/kg", "humidity_ratio", 0.008, 1e-12),
    ("8000 h", "time", 8000 * 3600.0, 1e-12),
])
def test_parse_to_si(text, kind, expected, rel):
    assert parse(text, kind) == pytest.approx(expected, rel=rel)


@pytest.mark.parametrize("text, expected", [
    # Gauge pressures are taken relative to the standard atmosphere, 101.325 kPa.
    ("0 barg", 101325.0),
    ("0.25 barg", 126325.0),
    ("-0.5 barg", 51325.0),       # a vacuum read on a gauge
    ("10 kPag", 111325.0),
])
def test_gauge_pressure(text, expected):
    assert parse(text, "pressure") == pytest.approx(expected, rel=1e-12)


def test_bare_numbers_only_where_the_kind_allows():
    assert parse(0.48, "fraction") == 0.48
    assert parse(0.75, "ratio") == 0.75
    assert parse(0, "mass_flow") == 0.0                     # a zero needs no unit...
    with pytest.raises(UnitOfMeasureError, match="has no unit"):
        parse(0, "temperature")                             # ...except where zero is ambiguous
    with pytest.raises(UnitOfMeasureError, match="has no unit"):
        parse(0, "pressure")
    with pytest.raises(UnitOfMeasureError, match=r"30 has no unit; write it with one, for example '25 kPa'"):
        parse(30, "pressure")
    with pytest.raises(UnitOfMeasureError, match="has no unit"):
        parse("30", "pressure")                             # a number in a string is still bare


@pytest.mark.parametrize("value, kind, pattern", [
    ("55 kg", "temperature", r"'55 kg' is not a temperature; expected a unit like '55 degC'"),
    ("20 kPa", "mass_flow", r"is not a mass flow"),
    ("48 % solids", "fraction", r"unknown unit|cannot read"),
    ("5 blorts", "area", r"unknown unit 'blorts' in '5 blorts'"),
    ("fast", "mass_flow", r"cannot read 'fast' as a mass flow; write a number and a unit, for example '20 t/h'"),
    ("", "pressure", r"cannot read"),
    (True, "fraction", r"expected a fraction such as '48 %', got True"),
    ([1, 2], "area", r"expected a area such as '120 m2'"),
    (float("nan"), "fraction", r"is not a finite number"),
    (float("inf"), "ratio", r"is not a finite number"),
    ("1e400 kPa", "pressure", r"not a finite number"),
])
def test_parse_errors(value, kind, pattern):
    with pytest.raises(UnitOfMeasureError, match=pattern):
        parse(value, kind)


def test_errors_say_where():
    with pytest.raises(UnitOfMeasureError) as info:
        parse("55 kg", "temperature", file="plant.toml", unit="feed", key="temperature")
    assert str(info.value).startswith("plant.toml: unit 'feed': key 'temperature': '55 kg' is not a temperature")
    assert isinstance(info.value, InputError) and isinstance(info.value, ValueError)


def test_unknown_kind_is_a_programming_error():
    with pytest.raises(ValueError, match="unknown quantity kind 'speed'"):
        parse("3 m/s", "speed")


@pytest.mark.parametrize("value_si, kind, unit, expected", [
    (328.15, "temperature", None, 55.0),
    (0.48, "fraction", None, 48.0),
    (20000.0 / 3600.0, "mass_flow", None, 20000.0),
    (25000.0, "pressure", None, 25.0),
    (101325.0, "pressure", "atm", 1.0),
    (5.0, "temperature_difference", "delta_degF", 9.0),   # NIST SP 811: 1 K = 1.8 °F as a difference
    (1800.0, "heat_transfer_coefficient", "kW/m2/K", 1.8),
])
def test_convert_from_si(value_si, kind, unit, expected):
    assert convert(value_si, kind, unit) == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize("unit, expected", [("degF", 9.0), ("degC", 5.0)])
def test_convert_a_temperature_difference(unit, expected):
    # NIST SP 811: a difference of 1 K is a difference of 1 °C and of 1.8 °F (exact).
    assert convert(5.0, "temperature_difference", unit) == pytest.approx(expected, rel=1e-12)


def test_display_units_are_written_as_people_write_them():
    assert display_unit("area") == "m2"
    assert display_unit("temperature") == "°C"
    assert display_unit("mass_flow") == "kg/h"
    assert display_unit("fraction") == "%"


EXAMPLE_KINDS = sorted(KINDS)


@pytest.mark.parametrize("kind", EXAMPLE_KINDS)
def test_every_kind_example_parses_and_round_trips(kind):
    # The example a message suggests must itself be accepted.
    spec = KINDS[kind]
    value = parse(spec.example, kind)
    assert math.isfinite(value)
    shown = convert(value, kind)
    assert parse(f"{shown!r} {spec.display}" if spec.display else shown, kind) == pytest.approx(value, rel=1e-12)


def test_prices_per_unit_parse():
    assert parse("40 / MWh", "price_energy") == pytest.approx(40.0 / 3.6e9, rel=1e-12)
    assert parse("30 / t", "price_mass") == pytest.approx(0.03, rel=1e-12)


def test_flowsheet_add_accepts_si_floats_as_documented():
    fs = Flowsheet("si floats")
    fs.add("feed", "feed", liquor="water", flow=2.0, solids=0.0, temperature=330.0)
    assert fs.fixed["feed.flow"] == 2.0 and fs.fixed["feed.temperature"] == 330.0
