"""Stream kinds of the drying end: moist air, powder (wet solids) and fuel gas.

Registers three kinds with `balance.unitops.streams.register_stream_kind`:

=======  ===================================  ==========================================
kind     variables                            specific enthalpy
=======  ===================================  ==========================================
air      flow (dry air), humidity, temperature  per kg dry air: ``humid_air.enthalpy(T, W)``
powder   flow, solids, temperature            (1 - x) h_f(T) + x h_s(T), per kg powder
fuel     flow, temperature, heating_value,    LHV + enthalpy of the combustion products
         water_yield                          at 25 °C (see below), per kg fuel
=======  ===================================  ==========================================

Moist air
    ``flow`` is the **dry-air** mass flow [kg/s]; ``humidity`` the humidity
    ratio W [kg water / kg dry air]; so water = flow·W and dry air = flow.
    The enthalpy per kg dry air is `balance.properties.humid_air.enthalpy`:
    dry air from 0 °C, water on the IAPWS datum (liquid at the triple
    point), so a dryer balance mixes air, liquors and powders on one datum.
    Air streams carry no pressure: every unit that needs one (relative
    humidity, dew point, volume flow) uses its ``site_pressure`` setting,
    which the flowsheet file fills from ``[flowsheet] site_pressure`` or
    ``site_altitude``. Pressure differences of a few kPa inside a dryer
    change no balance, only volumes (the fan corrects its own).

Powder
    Wet solids: ``flow`` total [kg/s], ``solids`` mass fraction [-],
    ``temperature`` [K]. Its enthalpy is that of its water as IAPWS-IF97
    liquid plus that of its dry solids taken from the liquor it came from::

        h = (1 - x) h_f(T) + x h_s(T),   h_s(T) = h_liquor(x = 1, T)

    For every liquor whose heat capacity is linear in x (Choi & Okos, the
    Geankoplis sugar and Siebel forms, a linear polynomial) this equals the
    liquor's own enthalpy at the same x and T, so a concentrate becomes a
    powder with no jump in enthalpy, and h_s is the integral of the solids'
    heat capacity on the common datum. Water held by the powder is counted
    as liquid water: the heat of sorption of the last few per cent of
    moisture is neglected (it adds roughly 5-15 % to the latent heat of the
    last kg of water only, a fraction of a per cent of a spray dryer's heat
    use). A powder stream carries its liquor: the flowsheet propagates it
    from the feed (``Flowsheet.assign_liquors``).

Fuel gas
    Burnt in the drying air by a direct-fired heater. ``heating_value`` is
    the lower heating value at 25 °C [J/kg] and ``water_yield`` the water
    its complete combustion forms [kg/kg]; the fuel supply fixes both from
    its composition. For the overall balances a fuel stream counts as what
    it becomes in the air: water = flow·water_yield, and dry gas =
    flow·(1 - water_yield) (the oxygen burnt is replaced by carbon dioxide;
    the dry combustion gas is treated as dry air). Its enthalpy is defined
    so that burning it in air reproduces the LHV at 25 °C::

        h_fuel = LHV + y h_v,ig(298.15 K) + (1 - y) c_p,a (25 K) + c_p,fuel (T - 298.15 K)

    with y the water yield, h_v,ig the IF97 ideal-gas vapour enthalpy (on
    the IAPWS datum) and c_p,fuel = 2220 J/(kg K) (methane at 25 °C,
    common practice; the sensible term is under 0.1 % of the LHV).
"""

from __future__ import annotations

import math
from typing import Any

from balance.errors import InputError
from balance.properties import humid_air, water
from balance.properties.validity import RangeCheck, ValidRange
from balance.unitops.streams import StreamKind, StreamVariable, register_stream_kind

__all__ = [
    "AIR_FLOW", "HUMIDITY", "AIR_TEMPERATURE", "FUEL_REFERENCE_TEMPERATURE", "CP_FUEL",
    "powder_enthalpy", "solids_enthalpy", "fuel_enthalpy", "air_range_checks", "LimitCheck",
    "guess_powder_enthalpy", "air_enthalpy",
]

AIR_FLOW = StreamVariable("flow", "mass_flow", 0.0, 1e4, 10.0, "dry-air mass flow")
HUMIDITY = StreamVariable("humidity", "humidity_ratio", 0.0, 2.0, 0.02,
                          "humidity ratio (kg water / kg dry air)")
AIR_TEMPERATURE = StreamVariable("temperature", "temperature", 220.0, 900.0, 350.0, "dry-bulb temperature")
POWDER_FLOW = StreamVariable("flow", "mass_flow", 0.0, 1e4, 1.0, "mass flow of wet solids")
POWDER_SOLIDS = StreamVariable("solids", "fraction", 0.0, 1.0, 0.95, "dry-solids mass fraction")
POWDER_TEMPERATURE = StreamVariable("temperature", "temperature", 250.0, 600.0, 330.0, "temperature")
FUEL_FLOW = StreamVariable("flow", "mass_flow", 0.0, 1e3, 0.05, "fuel mass flow")
FUEL_TEMPERATURE = StreamVariable("temperature", "temperature", 220.0, 600.0, 290.0, "fuel temperature")
HEATING_VALUE = StreamVariable("heating_value", "specific_enthalpy", 1e6, 2e8, 5e7,
                               "lower heating value at 25 °C")
WATER_YIELD = StreamVariable("water_yield", "ratio", 0.0, 10.0, 2.0,
                             "water formed by complete combustion (kg / kg fuel)")

#: Reference temperature of heating values, [K] (25 °C, ISO 6976 and common practice).
FUEL_REFERENCE_TEMPERATURE = 298.15
#: Heat capacity of the fuel gas, [J/(kg K)]: methane at 25 °C, about 2.22 kJ/(kg K)
#: (common practice).
CP_FUEL = 2220.0


def solids_enthalpy(liquor, T):
    """Specific enthalpy of the dry solids of a liquor, [J/kg], on the IAPWS datum.

    ``h_s(T) = h_liquor(x = 1, T)``: liquid-water enthalpy plus the integral
    of the solids' heat capacity in excess of water's (see `Liquor.enthalpy`).

    Parameters
    ----------
    liquor : Liquor
        The liquor the solids came from.
    T : float or casadi expression
        Temperature, [K].
    """
    return liquor.enthalpy(1.0, T)


def powder_enthalpy(liquor, x, T):
    """Specific enthalpy of a wet powder, [J/kg], on the IAPWS datum.

    ``h = (1 - x) h_f(T) + x h_s(T)``, h_f the IAPWS-IF97 liquid enthalpy and
    h_s from `solids_enthalpy`.

    Parameters
    ----------
    liquor : Liquor
        The liquor the solids came from.
    x : float or casadi expression
        Dry-solids mass fraction, [-].
    T : float or casadi expression
        Temperature, [K].

    Examples
    --------
    >>> from balance.properties.liquors import builtin_liquor
    >>> milk = builtin_liquor("skim_milk")
    >>> h = powder_enthalpy(milk, 0.5, 353.15)
    >>> round(float(h - milk.enthalpy(0.5, 353.15)), 6)   # equal for a c_p linear in x
    0.0
    """
    return (1.0 - x) * water.liquid_enthalpy(T) + x * solids_enthalpy(liquor, T)


def fuel_enthalpy(heating_value, water_yield, T):
    """Specific enthalpy of a fuel gas stream, [J/kg], on the program's data.

    ``h = LHV + y h_v,ig(298.15 K) + (1 - y) c_p,a (298.15 K - 273.15 K) + c_p,fuel (T - 298.15 K)``
    (module docstring). Burning 1 kg of fuel in air at 25 °C with the
    products left at 25 °C then releases exactly the LHV.

    Parameters
    ----------
    heating_value : float or casadi expression
        Lower heating value at 25 °C, [J/kg].
    water_yield : float or casadi expression
        Water formed by complete combustion, [kg/kg fuel].
    T : float or casadi expression
        Fuel temperature, [K].
    """
    t_ref = FUEL_REFERENCE_TEMPERATURE
    return (heating_value + water_yield * humid_air.vapour_enthalpy_ideal_gas(t_ref)
            + (1.0 - water_yield) * humid_air.CP_DRY_AIR * (t_ref - humid_air.T_ZERO_CELSIUS)
            + CP_FUEL * (T - t_ref))


def _once(state, compute):
    """The specific enthalpy of a stream state, built once per state object.

    Units ask a stream for its enthalpy several times while they write
    their equations; the expression of a powder (a quadrature of the
    liquor's heat capacity) is costly to build, so it is kept on the state.
    """
    cached = getattr(state, "_drying_enthalpy", None)
    if cached is None or cached[0] is not state.values:
        cached = (state.values, compute(state))
        state._drying_enthalpy = cached
    return cached[1]


def _powder_state_enthalpy(state):
    if state.liquor is None:
        raise InputError(f"powder stream '{state.name}' cannot be traced back to a feed liquor "
                         "(its solids need the liquor's heat capacity)", key=state.name)
    return powder_enthalpy(state.liquor, state["solids"], state["temperature"])


register_stream_kind(StreamKind(
    "air", (AIR_FLOW, HUMIDITY, AIR_TEMPERATURE),
    "moist air: dry-air flow, humidity ratio, dry-bulb temperature",
    specific_enthalpy=lambda s: _once(s, lambda t: humid_air.enthalpy(t["temperature"], t["humidity"])),
    water=lambda s: s["flow"] * s["humidity"],
    dry_air=lambda s: s["flow"]))

register_stream_kind(StreamKind(
    "powder", (POWDER_FLOW, POWDER_SOLIDS, POWDER_TEMPERATURE),
    "wet solids (powder, granules) with the solids model of their liquor",
    specific_enthalpy=lambda s: _once(s, _powder_state_enthalpy),
    water=lambda s: s["flow"] * (1 - s["solids"]),
    solids=lambda s: s["flow"] * s["solids"]))

register_stream_kind(StreamKind(
    "fuel", (FUEL_FLOW, FUEL_TEMPERATURE, HEATING_VALUE, WATER_YIELD),
    "fuel gas for direct firing, counted as the water and dry gas it burns to",
    specific_enthalpy=lambda s: fuel_enthalpy(s["heating_value"], s["water_yield"], s["temperature"]),
    water=lambda s: s["flow"] * s["water_yield"],
    dry_air=lambda s: s["flow"] * (1 - s["water_yield"])))


# ---------------------------------------------------------------------------
# Checks shared by the drying units


def air_range_checks(state, label: str, unit: str | None = None) -> list[RangeCheck]:
    """Validity checks of the moist-air model for one air stream (T and W)."""
    values = {"T": state["temperature"], "W": state["humidity"]}
    return [RangeCheck(f"{label} moist air", values[r.name], r, source="humid_air.enthalpy", unit=unit)
            for r in humid_air.enthalpy.validity if r.name in values]


class LimitCheck(RangeCheck):
    """An operating limit (not a correlation's validity range), with its own message.

    Evaluated and reported like a `RangeCheck`: a recorded warning, or an
    `~balance.errors.OutOfRangeError` under the strict range policy.

    Parameters
    ----------
    setting : str
        The setting that holds the violated limit, named in the message.
    shown : str
        How to show the number: ``"degC"`` or ``"percent"``.
    """

    def __init__(self, label, value, valid, setting: str, shown: str = "degC", unit=None):
        super().__init__(label, value, valid, source=f"setting {setting}", unit=unit)
        self.setting = setting
        self.shown = shown

    def _show(self, number: float) -> str:
        if not math.isfinite(number):
            return "unbounded"
        if self.shown == "degC":
            return f"{number - 273.15:.1f} °C"
        if self.shown == "percent":
            return f"{100 * number:.1f} %"
        return f"{number:g}"

    def message(self, number: float) -> str:
        low, high = self.valid.low, self.valid.high
        side = f"above the limit {self._show(high)}" if number > high else f"below the limit {self._show(low)}"
        return f"{self.label} {self._show(number)} is {side} (setting {self.setting})"


def limit_checks(unit: str, items) -> list[LimitCheck]:
    """LimitChecks from ``(label, value, low, high, setting, shown)`` tuples (None: no limit).

    Each label is prefixed with the unit's name.
    """
    out = []
    for label, value, low, high, setting, shown in items:
        if low is None and high is None:
            continue
        # finite bounds: `ValidRange.contains` scales its tolerance with the span
        valid = ValidRange(setting, 0.0 if low is None else low, 1e6 if high is None else high)
        out.append(LimitCheck(f"{unit} {label}", value, valid, setting, shown, unit=unit))
    return out


# ---------------------------------------------------------------------------
# Plain-float helpers for the initial guesses

#: Heat capacity of dry food solids used only by the initial guesses, [J/(kg K)].
GUESS_CP_SOLIDS = 1600.0


def air_enthalpy(T: float, W: float) -> float:
    """Moist-air enthalpy per kg dry air for floats, [J/kg]."""
    return float(humid_air.enthalpy(T, W))


def guess_powder_enthalpy(x: float, T: float, liquor: Any = None) -> float:
    """Powder or liquor enthalpy for an initial guess, [J/kg].

    With the liquor known, `powder_enthalpy`; without, solids at
    `GUESS_CP_SOLIDS` from the triple point.
    """
    if liquor is not None:
        try:
            return float(powder_enthalpy(liquor, x, T))
        except Exception:  # noqa: BLE001 - a guess falls back to the simple form
            pass
    return (1 - x) * float(water.liquid_enthalpy(T)) + x * GUESS_CP_SOLIDS * (T - water.T_TRIPLE)
