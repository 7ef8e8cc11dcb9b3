"""Energy, cost and CO2 figures of a solved line: electricity, primary energy, operating cost, emissions.

Registered with `balance.analysis.key_figures.provides_figures`, so every
report carries them after the evaporation figures.

Always (when they apply):

* **electrical power** and **shaft power** of all units with an
  ``electrical_power`` / ``shaft_power`` quantity (vapour compressors,
  dryer fans, electric air heaters), and the **electricity per tonne of
  water** evaporated [kWh/t];
* **fuel burnt** (LHV) in fired air heaters (`fuel_power`);
* **motive steam**: live steam drawn by thermocompressors (it is part of the
  live steam);
* **heat to vapour users**: the duty of ``vapour_user`` units;
* **condensate leaving** the flowsheet and its mixed temperature, and the
  **live-steam condensate return**: the condensate formed from live steam
  (in the unit the steam, or a thermocompressor's discharge, heats),
  followed through flash tanks, coolers and mixers to where it leaves,
  with its flow and mixed temperature.

With factors from the file's ``[economics]`` table (see `Economics`),
primary energy, operating cost and CO2, per hour, per tonne of water
evaporated and per tonne of product (and per year with
``operating_hours``). A figure is computed only when every factor it needs
is given: with electricity drawn and no electricity price there is no
operating cost. Nothing is assumed; factors are never defaulted.

Definitions: *live-steam heat* is what the live steam gives up condensing
to saturated liquid at its own pressure (as in
`~balance.analysis.key_figures`); steam factors (price per MWh, primary
energy, emissions per MWh) apply to that heat, or per tonne of steam where
the factor is given per mass. Electricity factors apply to the electrical
power drawn. Fuel factors apply to the fuel burnt, LHV basis.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

import casadi as ca

from balance import quantities
from balance.analysis.key_figures import (KeyFigure, ScalarFunction, condensing_enthalpy, evaporation_figures,
                                         provides_figures, structure_cache)
from balance.errors import InputError, UnitOfMeasureError
from balance.properties import water

KWH = 3.6e6   # J per kWh
SECONDS_PER_HOUR = 3600.0

#: Keys of the ``[economics]`` table: key -> (accepted quantity kinds, description).
ECONOMICS_KEYS = {
    "currency": ((), "label of the money unit, e.g. \"EUR\" (text; only shown)"),
    "steam_price": (("price_mass", "price_energy"), "live steam, per tonne (\"35 / t\") or per MWh of "
                                                    "live-steam heat (\"30 / MWh\")"),
    "electricity_price": (("price_energy",), "electricity, per MWh (\"120 / MWh\")"),
    "cooling_water_price": (("price_mass",), "cooling water, per tonne (\"0.08 / t\")"),
    "steam_primary_energy_factor": (("ratio",), "primary energy per unit of live-steam heat [-]"),
    "electricity_primary_energy_factor": (("ratio",), "primary energy per unit of electricity [-]"),
    "steam_emission_factor": (("specific_emission", "ratio"),
                              "CO2 per MWh of live-steam heat (\"230 kg/MWh\") or per tonne of steam "
                              "(\"160 kg/t\")"),
    "electricity_emission_factor": (("specific_emission",), "CO2 per MWh of electricity (\"350 kg/MWh\")"),
    "fuel_price": (("price_energy",), "fuel burnt in air heaters, per MWh LHV (\"45 / MWh\")"),
    "fuel_primary_energy_factor": (("ratio",), "primary energy per unit of fuel (LHV) [-]"),
    "fuel_emission_factor": (("specific_emission",), "CO2 per MWh of fuel, LHV (\"202 kg/MWh\" for natural gas)"),
    "operating_hours": (("time",), "hours of operation per year (\"7000 h\"), for annual figures"),
}

_CURRENCY_SIGNS = ("€", "$", "£")


@dataclass(frozen=True)
class Factor:
    """One economic factor in SI with the kind it was given as."""

    value: float
    kind: str


@dataclass
class Economics:
    """The factors of a file's ``[economics]`` table, parsed to SI.

    Attributes
    ----------
    currency : str
        A label for money (``EUR``); "money" when not given.
    factors : dict of str -> Factor
        Only the keys the file gives. Prices are per J (``price_energy``)
        or per kg (``price_mass``); emission factors kg per J
        (``specific_emission``) or kg per kg (``ratio``); hours in s.

    Examples
    --------
    >>> econ = parse_economics({"steam_price": "35 EUR/t", "currency": "EUR"})
    >>> round(econ.factors["steam_price"].value * 1000, 6)   # per kg -> per t
    35.0
    >>> econ.factors["steam_price"].kind
    'price_mass'
    """

    currency: str = "money"
    factors: dict = field(default_factory=dict)

    def get(self, key: str) -> Factor | None:
        return self.factors.get(key)


def _price_text(text: str, currency: str) -> str:
    """'35 EUR/t' or '35 €/t' or '35 / t' -> '35 1/t' (pint knows no money)."""
    for sign in (currency, *_CURRENCY_SIGNS):
        if sign:
            text = text.replace(sign, "")
    text = re.sub(r"^(\s*[-+]?[\d.eE+-]+)\s*/", r"\1 1/", text)
    return text


def parse_economics(table: dict | None, file: str | None = None) -> Economics:
    """Read an ``[economics]`` table; unknown keys and unreadable values name file and key.

    Raises
    ------
    InputError
        For an unknown key, a value of the wrong kind, or a negative factor.
    """
    table = table or {}
    if not isinstance(table, dict):
        raise InputError("expected a table", file=file, key="economics")
    currency = str(table.get("currency", "money"))
    factors = {}
    for key, value in table.items():
        if key not in ECONOMICS_KEYS:
            raise InputError(f"unknown key; valid keys: {', '.join(ECONOMICS_KEYS)}",
                             file=file, key=f"economics.{key}")
        kinds, description = ECONOMICS_KEYS[key]
        if not kinds:
            continue
        if isinstance(value, str) and kinds[0].startswith("price"):
            value = _price_text(value, currency)
        if "ratio" in kinds and len(kinds) > 1 and not isinstance(value, str):
            raise InputError(f"write {value!r} with a unit: {description}", file=file, key=f"economics.{key}")
        parsed = None
        for kind in kinds:
            try:
                parsed = Factor(quantities.parse(value, kind, file=file, key=f"economics.{key}"), kind)
                break
            except UnitOfMeasureError:
                continue
        if parsed is None:
            raise InputError(f"cannot read {value!r}; expected {description}", file=file, key=f"economics.{key}")
        if parsed.value < 0:
            raise InputError(f"{value!r} is negative", file=file, key=f"economics.{key}")
        factors[key] = parsed
    return Economics(currency, factors)


def economics_of(flowsheet) -> Economics:
    """The parsed ``[economics]`` table of a flowsheet (empty when it has none)."""
    return parse_economics(flowsheet.extras.get("economics"), file=flowsheet.file)


# ---------------------------------------------------------------------------
# Condensate


#: Newton steps of `liquid_temperature`. The error e of a step shrinks to about c_p'/(2 c_p) e^2
#: = 1.2e-4 e^2 per K (c_p' of liquid water about 1 J/(kg K^2) near 100 °C): from 10 K off it is
#: 1e-2, 2e-8, 5e-20 K after 1, 2, 3 steps; the flow-weighted mean temperature a mix starts from is
#: within about 1 K. 4 steps leave a margin.
LIQUID_TEMPERATURE_STEPS = 4
_LIQUID_TEMPERATURE = []


def liquid_temperature(h: float, t_start: float) -> float:
    """Temperature of liquid water of specific enthalpy ``h`` [K]: h'(T) = h solved by Newton's method.

    h'(T) and c_p(T) are `balance.properties.water.liquid_enthalpy` and
    `~balance.properties.water.liquid_heat_capacity` (IAPWS-IF97 region 1
    near saturation); the `LIQUID_TEMPERATURE_STEPS` Newton steps from
    ``t_start`` are compiled once into a CasADi function, which a sweep
    calls for every case.

    Parameters
    ----------
    h : float
        Specific enthalpy [J/kg].
    t_start : float
        Starting temperature [K], within about 10 K of the answer.

    Examples
    --------
    >>> round(liquid_temperature(419.10e3, 370.0) - 273.15, 2)   # IAPWS-IF97: h' = 419.1 kJ/kg at 100 °C
    100.0
    """
    if not _LIQUID_TEMPERATURE:
        hs, ts = ca.SX.sym("h"), ca.SX.sym("t")
        t = ts
        for _ in range(LIQUID_TEMPERATURE_STEPS):
            t = t - (water.liquid_enthalpy(t) - hs) / water.liquid_heat_capacity(t)
        _LIQUID_TEMPERATURE.append(ScalarFunction(ca.Function("liquid_temperature", [hs, ts], [t], {"cse": True})))
    return _LIQUID_TEMPERATURE[0](h, t_start)


def _mixed_temperature(streams) -> float:
    """Temperature of liquid water streams mixed adiabatically [K]."""
    flow = sum(s.values["flow"] for s in streams)
    if flow <= 0:
        return float("nan")
    h = sum(s.enthalpy_flow for s in streams) / flow
    t = sum(s.values["flow"] * s.values["temperature"] for s in streams) / flow
    return liquid_temperature(h, t)


def _is_cooling_water(fs, stream) -> bool:
    source = fs.unit(stream.source)
    return (source.type_name in ("cooling_water", "water_supply") or stream.source_port == "cooling_out"
            or source.type_name == "direct_contact_condenser")


def _leaving_water(fs, solution):
    return [solution.streams[name] for name in structure_cache(solution, "leaving water", _leaving_water_names)]


def _leaving_water_names(fs, solution):
    return [s.name for s in fs.streams
            if s.kind == "water" and fs.unit(s.target).boundary == "sink" and not _is_cooling_water(fs, s)]


def _steam_condensate(fs, solution):
    """Streams by which condensate of live steam leaves the flowsheet."""
    return [solution.streams[name] for name in structure_cache(solution, "steam condensate", _steam_condensate_names)]


def _steam_condensate_names(fs, solution):
    heated, passed = set(), set()
    for s in fs.streams:
        if fs.unit(s.source).type_name != "steam_supply":
            continue
        frontier = [s]
        while frontier:
            st = frontier.pop()
            if st.name in passed:
                continue
            passed.add(st.name)
            target = fs.unit(st.target)
            if target.type_name in ("thermocompressor", "mixer", "splitter", "vapour_compressor"):
                frontier += [o for o in fs.streams if o.source == st.target and o.kind == "vapour"]
            else:
                heated.add(st.target)
    out, seen = [], set()
    frontier = [o for o in fs.streams if o.source in heated and o.kind == "water"]
    while frontier:
        st = frontier.pop()
        if st.name in seen:
            continue
        seen.add(st.name)
        if fs.unit(st.target).boundary == "sink":
            out.append(st.name)
        else:
            frontier += [o for o in fs.streams if o.source == st.target and o.kind == "water"]
    return out


# ---------------------------------------------------------------------------
# The figures


def _per_tonne(value_per_second: float, tonnes_per_second: float) -> float:
    return value_per_second / tonnes_per_second if tonnes_per_second > 0 else float("nan")


@provides_figures
def energy_figures(solution) -> list[KeyFigure]:
    """Electricity, motive steam, vapour users, condensate; primary energy, cost and CO2 with factors."""
    fs = solution.flowsheet
    base = {f.name: f.value for f in evaporation_figures(solution)}
    water_t = base["water_evaporated"] / 1000.0    # t/s
    product_t = base["product_flow"] / 1000.0
    electrical = sum(u.quantities.get("electrical_power", 0.0) for u in solution.units.values())
    fuel = fuel_power(solution)
    shaft = sum(u.quantities.get("shaft_power", 0.0) for u in solution.units.values())
    motive = sum(solution.streams[name].values["flow"]
                 for name in structure_cache(solution, "motive steam", _motive_steam_names))
    users = [u for u in solution.units.values() if u.type_name == "vapour_user"]

    driven = [u for u in solution.units.values() if "electrical_power" in u.quantities]
    figures = []
    if driven:
        figures += [KeyFigure("electrical_power", "electrical power (compressors, fans, electric heaters)",
                              electrical, "power"),
                    KeyFigure("shaft_power", "shaft power of compressors and fans", shaft, "power")]
    # always given, zero without drives, so that variants compare on one line
    figures.append(KeyFigure("electricity_per_water", "electricity per tonne of water (kWh/t)",
                             _per_tonne(electrical / KWH, water_t), "ratio"))
    if motive > 0:
        figures.append(KeyFigure("motive_steam", "motive steam of thermocompressors", motive, "mass_flow"))
    if users:
        figures.append(KeyFigure("vapour_user_heat", "heat given to vapour users",
                                 sum(u.quantities["duty"] for u in users), "power"))
    leaving = _leaving_water(fs, solution)
    if leaving and sum(s.values["flow"] for s in leaving) > 0:
        figures += [
            KeyFigure("condensate_leaving", "condensate leaving", sum(s.values["flow"] for s in leaving),
                      "mass_flow"),
            KeyFigure("condensate_temperature", "condensate leaving, mixed temperature",
                      _mixed_temperature(leaving), "temperature"),
        ]
    returned = _steam_condensate(fs, solution)
    if returned and sum(s.values["flow"] for s in returned) > 0:
        figures += [
            KeyFigure("steam_condensate_return", "live-steam condensate return",
                      sum(s.values["flow"] for s in returned), "mass_flow"),
            KeyFigure("steam_condensate_temperature", "live-steam condensate return temperature",
                      _mixed_temperature(returned), "temperature"),
        ]
    if fuel > 0:
        figures.append(KeyFigure("fuel_power", "fuel burnt (LHV)", fuel, "power"))
    # the cost of steam covers every steam supply: the evaporators' and the air heaters' and dryers'
    steam_total = steam_heat_total = 0.0
    for stream in solution.streams.values():
        if fs.unit(stream.source).type_name == "steam_supply":
            steam_total += stream.values["flow"]
            steam_heat_total += stream.values["flow"] * (stream.specific_enthalpy
                                                         - condensing_enthalpy(stream.values["pressure"]))
    all_steam = dict(base, live_steam=steam_total, live_steam_heat=steam_heat_total)
    figures += _economic_figures(solution, economics_of(fs), all_steam, electrical, fuel, water_t, product_t)
    return figures


def _motive_steam_names(fs, solution):
    return [s.name for s in fs.streams if fs.unit(s.source).type_name == "steam_supply"
            and fs.unit(s.target).type_name == "thermocompressor"]


def fuel_power(solution) -> float:
    """Fuel burnt in the flowsheet, LHV basis [W]: units' ``fuel_power``, and the heat
    released by direct-fired air heaters (their ``duty``, which is on the LHV basis)."""
    total = 0.0
    for u in solution.units.values():
        if "fuel_power" in u.quantities:
            total += u.quantities["fuel_power"]
        elif u.type_name == "direct_fired_air_heater":
            total += u.quantities.get("duty", 0.0)
    return total


def _economic_figures(solution, econ: Economics, base: dict, electrical: float, fuel: float, water_t: float,
                      product_t: float) -> list[KeyFigure]:
    """Primary energy, operating cost and CO2: each group only when its factors are all given."""
    uses = {"steam_heat": base.get("live_steam_heat", 0.0), "steam": base.get("live_steam", 0.0),
            "electricity": electrical, "cooling_water": base.get("cooling_water", 0.0), "fuel": fuel}
    # key -> (use when the factor is per energy, use when per mass)
    applies = {
        "steam_primary_energy_factor": ("steam_heat", "steam_heat"),
        "electricity_primary_energy_factor": ("electricity", "electricity"),
        "steam_price": ("steam_heat", "steam"),
        "electricity_price": ("electricity", "electricity"),
        "cooling_water_price": ("cooling_water", "cooling_water"),
        "steam_emission_factor": ("steam_heat", "steam"),
        "electricity_emission_factor": ("electricity", "electricity"),
        "fuel_price": ("fuel", "fuel"),
        "fuel_primary_energy_factor": ("fuel", "fuel"),
        "fuel_emission_factor": ("fuel", "fuel"),
    }
    per_energy = ("price_energy", "specific_emission")
    money = econ.currency
    hours = econ.get("operating_hours")
    groups = (
        # name, label, factor keys, unit per tonne, display scale, unit per year, year scale,
        # (name, label, kind, scale) of the rate figure
        ("primary_energy", "primary energy", ("steam_primary_energy_factor", "electricity_primary_energy_factor",
                                              "fuel_primary_energy_factor"),
         "kWh", 1.0 / KWH, "MWh", 1.0 / KWH / 1000.0, ("primary_energy", "primary energy", "power", 1.0)),
        ("operating_cost", "operating cost", ("steam_price", "electricity_price", "cooling_water_price",
                                              "fuel_price"),
         money, 1.0, money, 1.0,
         ("operating_cost_per_hour", f"operating cost per hour ({money}/h)", "ratio", SECONDS_PER_HOUR)),
        ("co2", "CO2", ("steam_emission_factor", "electricity_emission_factor", "fuel_emission_factor"),
         "kg", 1.0, "t", 1.0 / 1000.0, ("co2_emitted", "CO2 emitted", "mass_flow", 1.0)),
    )
    out = []
    for name, label, keys, unit_t, scale, unit_year, year_scale, rate in groups:
        if not any(econ.get(k) for k in keys):
            continue
        total = 0.0
        for key in keys:
            by_energy, by_mass = applies[key]
            factor = econ.get(key)
            use_energy, use_mass = uses[by_energy], uses[by_mass]
            if use_energy <= 0 and use_mass <= 0:
                continue
            if factor is None:      # needed but not given: no figure, never a hidden zero
                total = None
                break
            per_unit_energy = factor.kind in per_energy or key.endswith("primary_energy_factor")
            total += factor.value * (use_energy if per_unit_energy else use_mass)
        if total is None:
            continue
        rate_name, rate_label, rate_kind, rate_scale = rate
        out += [
            KeyFigure(rate_name, rate_label, total * rate_scale, rate_kind),
            KeyFigure(f"{name}_per_water", f"{label} per tonne of water ({unit_t}/t)",
                      _per_tonne(total * scale, water_t), "ratio"),
            KeyFigure(f"{name}_per_product", f"{label} per tonne of product ({unit_t}/t)",
                      _per_tonne(total * scale, product_t), "ratio"),
        ]
        if hours is not None:
            out.append(KeyFigure(f"{name}_per_year", f"{label} per year ({unit_year})",
                                 total * year_scale * hours.value, "ratio"))
    return out
