"""Units of measure at the edges: reading "20 t/h" from a file, writing kPa.

Inside `balance` every number is SI (K, Pa, kg/s, J/kg, W, m2). This module
is the only place that knows about other units. It wraps one `pint`
registry, adds the few spellings engineers use that pint lacks (``m2``,
``m3``, gauge pressure ``barg``), and names each *kind* of quantity with its
SI unit, so that "55 degC" given where a pressure is expected is caught with
the file, unit and key in the message.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

import pint

from balance.errors import UnitOfMeasureError

def _registry() -> pint.UnitRegistry:
    # pint parses its definitions file on every start (about 0.25 s); its own
    # on-disk cache cuts that to a few milliseconds. Fall back if the cache
    # folder cannot be written.
    try:
        return pint.UnitRegistry(cache_folder=":auto:")
    except Exception:  # noqa: BLE001 - any cache problem: parse afresh
        return pint.UnitRegistry()


UREG = _registry()
UREG.define("barg = bar; offset: 1.01325")
UREG.define("kPag = kPa; offset: 101.325")
UREG.define("dry_basis = [] = db")


@dataclass(frozen=True)
class Kind:
    """A kind of quantity: its SI unit, the unit it is shown in, and whether
    a bare number (no unit) is accepted."""

    name: str
    si: str
    display: str
    bare_number_ok: bool = False
    example: str = ""


KINDS: dict[str, Kind] = {k.name: k for k in (
    Kind("mass_flow", "kg/s", "kg/h", example="20 t/h"),
    Kind("temperature", "K", "degC", example="55 degC"),
    Kind("temperature_difference", "K", "K", example="5 K"),
    Kind("pressure", "Pa", "kPa", example="25 kPa"),
    Kind("pressure_difference", "Pa", "kPa", example="3 kPa"),
    Kind("fraction", "", "%", bare_number_ok=True, example="48 %"),
    Kind("ratio", "", "", bare_number_ok=True, example="0.75"),
    Kind("area", "m**2", "m**2", example="120 m2"),
    Kind("heat_transfer_coefficient", "W/m**2/K", "W/m**2/K", example="1800 W/m2/K"),
    Kind("conductance", "W/K", "kW/K", example="50 kW/K"),
    Kind("power", "W", "kW", example="1.2 MW"),
    Kind("specific_enthalpy", "J/kg", "kJ/kg", example="2257 kJ/kg"),
    Kind("specific_heat", "J/kg/K", "kJ/kg/K", example="3.9 kJ/kg/K"),
    Kind("enthalpy_flow", "W", "kW", example="1.2 MW"),
    Kind("volume_flow", "m**3/s", "m**3/h", example="50000 m3/h"),
    Kind("length", "m", "m", example="500 m"),
    Kind("humidity_ratio", "", "g/kg", bare_number_ok=True, example="8 g/kg"),
    Kind("price_energy", "1/J", "1/MWh", example="40 / MWh"),
    Kind("specific_emission", "kg/J", "kg/MWh", example="200 kg/MWh"),
    Kind("price_mass", "1/kg", "1/t", example="30 / t"),
    Kind("time", "s", "h", example="8000 h"),
)}

UREG.define("g_per_kg = g/kg")

_POWER_SUFFIX = re.compile(r"(?<=[A-Za-z])([23])(?![0-9])")
_NUMBER_UNIT = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*$")


def _normalise_unit(text: str) -> str:
    text = text.strip().replace("°C", "degC").replace("°F", "degF").replace("²", "**2").replace("³", "**3")
    text = _POWER_SUFFIX.sub(r"**\1", text)
    return text


def parse(value, kind: str, *, file: str | None = None, unit: str | None = None,
          key: str | None = None, bare_is_si: bool = False) -> float:
    """Convert a quantity as a user writes it to a float in SI units.

    Parameters
    ----------
    value : str or float or int
        ``"20 t/h"``, ``"55 degC"``, ``"48 %"``; a bare number only where the
        kind allows it (fractions and ratios).
    kind : str
        One of `KINDS`.
    file, unit, key : str, optional
        Where the value came from, for error messages.
    bare_is_si : bool
        Accept a bare number of any kind as SI (the Python API); files
        always need a unit.

    Examples
    --------
    >>> parse("20 t/h", "mass_flow")
    5.555555555555555
    >>> parse("55 degC", "temperature")
    328.15
    >>> parse("48 %", "fraction")
    0.48
    >>> parse("0.25 barg", "pressure")
    126325.0
    >>> parse("1800 W/m2/K", "heat_transfer_coefficient")
    1800.0
    """
    spec = KINDS.get(kind)
    if spec is None:
        raise ValueError(f"unknown quantity kind {kind!r}")
    if isinstance(value, bool):
        raise UnitOfMeasureError(f"expected a {kind.replace('_', ' ')} such as '{spec.example}', got {value!r}",
                                 file=file, unit=unit, key=key)
    if isinstance(value, (int, float)):
        number = float(value)
        if not math.isfinite(number):
            raise UnitOfMeasureError(f"value {value!r} is not a finite number", file=file, unit=unit, key=key)
        if bare_is_si or spec.bare_number_ok or number == 0.0 and kind not in ("temperature", "pressure"):
            return number
        raise UnitOfMeasureError(
            f"{value!r} has no unit; write it with one, for example '{spec.example}'",
            file=file, unit=unit, key=key)
    if not isinstance(value, str):
        raise UnitOfMeasureError(f"expected a {kind.replace('_', ' ')} such as '{spec.example}', got {value!r}",
                                 file=file, unit=unit, key=key)
    match = _NUMBER_UNIT.match(value)
    if not match:
        raise UnitOfMeasureError(
            f"cannot read {value!r} as a {kind.replace('_', ' ')}; write a number and a unit, "
            f"for example '{spec.example}'", file=file, unit=unit, key=key)
    number, unit_text = float(match.group(1)), _normalise_unit(match.group(2))
    if unit_text.startswith("/"):
        unit_text = "1 " + unit_text          # "40 / MWh": a price per unit, currency left implicit
    if not unit_text:
        return parse(number, kind, file=file, unit=unit, key=key)
    if kind == "temperature_difference":
        unit_text = {"degC": "delta_degC", "degF": "delta_degF"}.get(unit_text, unit_text)
    try:
        quantity = UREG.Quantity(number, unit_text)
        si = quantity.to(spec.si or "dimensionless")
    except pint.UndefinedUnitError:
        raise UnitOfMeasureError(f"unknown unit {match.group(2)!r} in {value!r}",
                                 file=file, unit=unit, key=key) from None
    except pint.DimensionalityError:
        raise UnitOfMeasureError(
            f"{value!r} is not a {kind.replace('_', ' ')}; expected a unit like '{spec.example}'",
            file=file, unit=unit, key=key) from None
    except Exception as exc:  # pint raises a handful of parse errors
        raise UnitOfMeasureError(f"cannot read {value!r}: {exc}", file=file, unit=unit, key=key) from None
    result = float(si.magnitude)
    if not math.isfinite(result):
        raise UnitOfMeasureError(f"value {value!r} is not a finite number", file=file, unit=unit, key=key)
    return result


def convert(value_si: float, kind: str, to_unit: str | None = None) -> float:
    """Convert an SI number of the given kind to ``to_unit`` (default: the
    kind's display unit).

    >>> round(convert(328.15, "temperature"), 2)
    55.0
    >>> convert(0.48, "fraction")
    48.0
    """
    spec = KINDS[kind]
    target = _normalise_unit(to_unit or spec.display)
    if kind == "temperature_difference":
        target = {"degC": "delta_degC", "degF": "delta_degF"}.get(target, target)
        return value_si if target in ("K", "delta_degC") else float(UREG.Quantity(value_si, "K").to(target).magnitude)
    if not spec.si and target in ("", "dimensionless"):
        return value_si
    return float(UREG.Quantity(value_si, spec.si or "dimensionless").to(target).magnitude)


def format_number(value: float | None) -> str:
    """A number as tables show it: about four significant figures, thousands
    separated, no exponent for the sizes a plant has.

    >>> [format_number(v) for v in (1562303.4, 137.07, 11.764, 0.186, 0.00042, None, float("nan"))]
    ['1,562,303', '137.1', '11.76', '0.186', '0.00042', '-', 'n/a']
    """
    if value is None:
        return "-"
    if not math.isfinite(value):
        return "n/a"
    magnitude = abs(value)
    if magnitude >= 1e12:
        return f"{value:.3e}"
    if magnitude >= 1000:
        return f"{value:,.0f}"
    if magnitude >= 100:
        return f"{value:.1f}"
    if magnitude >= 10:
        return f"{value:.2f}"
    if magnitude >= 0.01 or magnitude == 0:
        return f"{value:.3f}"
    return f"{value:.3g}"


def display_unit(kind: str) -> str:
    """The unit a kind is shown in, written as people write it.

    >>> display_unit("area")
    'm2'
    """
    return KINDS[kind].display.replace("**", "").replace("degC", "°C")
