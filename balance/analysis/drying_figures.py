"""Key figures of the drying end and of a whole evaporator-to-powder line.

Registered with `balance.analysis.key_figures.provides_figures`; returns
nothing for a flowsheet without dryers. Definitions (per unit time, SI
inside, shown in the report's units):

* **water removed by a dryer stage**: water leaving with its exhaust minus
  water entering with its air (``evaporation``);
* **evaporator water removed**: the line's water removed (liquor and powder
  feeds minus products, `evaporation_figures`) minus the dryers' share;
  **share** of each: its part of the line's water removed;
* **dryer heat consumption**: what the drying end takes from its energy
  sources: steam-coil duties, fuel burnt (LHV) in indirect and direct
  heaters, electric heater power, and the dryers' indirect heat; **specific
  heat consumption** per kg of water the dryers remove [kJ/kg];
* **thermal efficiency of the drying end**: E λ(T_as) / dryer heat
  consumption, E the water the dryers remove and λ the latent heat of water
  at the adiabatic-saturation temperature of each dryer's hottest inlet air
  (the temperature a drying surface takes in the constant-rate period);
* **temperature efficiency of a stage**: (T_in - T_out) / (T_in - T_ambient),
  the usual spray-dryer figure, with T_in the hottest inlet air;
* **stage heat per kg water**: the heat the stage's air brings in above
  ambient, plus its indirect heat, per kg of water it removes;
* **evaporator live-steam heat per kg water**: live steam not sent to air
  heaters or dryers (condensing to saturated liquid) per kg of water the
  evaporators remove;
* **line energy per kg water**: evaporator live-steam heat, dryer heat
  consumption and electrical power of the line, per kg of water removed;
* **air**: dry-air flow and actual volume flow at each fan's inlet; each
  dryer's exhaust humidity ratio, relative humidity and dew point;
* **lost product**: powder leaving with the cleaned air of cyclones and
  bag filters.
"""

from __future__ import annotations

import math

from balance.analysis.key_figures import KeyFigure, evaporation_figures, provides_figures
from balance.properties import humid_air, water

HEATER_TYPES = ("steam_air_heater", "indirect_fired_air_heater", "direct_fired_air_heater", "electric_air_heater")
SEPARATOR_TYPES = ("cyclone", "bag_filter")


def _ratio(a: float, b: float) -> float:
    return a / b if b and math.isfinite(b) and b > 0 else float("nan")


def _heat_consumed(unit) -> float:
    """Heat a heater takes from its energy source, [W] (fuel on LHV)."""
    if unit.type_name == "indirect_fired_air_heater":
        return unit.quantities["fuel_power"]
    if unit.type_name == "electric_air_heater":
        return unit.quantities["electrical_power"]
    return unit.quantities["duty"]


def _hottest_air_inlet(solution, name):
    streams = [s for s in solution.streams.values() if s.target == name and s.kind == "air"]
    return max(streams, key=lambda s: s.values["temperature"]) if streams else None


@provides_figures
def drying_figures(solution) -> list[KeyFigure]:
    """Water removed per stage and line, heat use, efficiencies, air flows and exhaust states."""
    fs = solution.flowsheet
    dryers = [n for n, u in fs.units.items() if getattr(u, "dries", False)]
    if not dryers:
        return []
    units = solution.units
    figures: list[KeyFigure] = []
    base = {f.name: f.value for f in evaporation_figures(solution)}
    total = base["water_evaporated"]

    dryer_water = sum(units[n].figures["evaporation"] for n in dryers)
    evaporator_water = total - dryer_water
    if abs(evaporator_water) < 1e-9 * max(abs(total), 1e-12):
        evaporator_water = 0.0      # round-off of a line without evaporators
    has_evaporators = any(getattr(u, "boils", False) for u in fs.units.values())
    heaters = [u for u in units.values() if u.type_name in HEATER_TYPES]
    indirect = sum(units[n].quantities.get("indirect_heat", 0.0) for n in dryers)
    heat_consumption = sum(_heat_consumed(u) for u in heaters) + indirect
    ideal = 0.0
    for n in dryers:
        inlet = _hottest_air_inlet(solution, n)
        if inlet is None:
            continue
        p = fs.unit(n).setting("site_pressure")
        t_as = float(humid_air.adiabatic_saturation_temperature(inlet.values["temperature"],
                                                                inlet.values["humidity"], p))
        ideal += units[n].figures["evaporation"] * float(water.latent_heat(max(t_as, 273.16)))

    # the evaporation figures already leave out the steam that air heaters and dryers take
    steam_heat_evaporator = base.get("live_steam_heat", 0.0)
    electrical = sum(u.quantities.get("electrical_power", 0.0) for u in units.values())

    if has_evaporators:
        figures += [
            KeyFigure("line_water_removed", "line: water removed", total, "mass_flow"),
            KeyFigure("evaporator_water_removed", "evaporators: water removed", evaporator_water, "mass_flow"),
            KeyFigure("evaporator_share", "evaporators: share of the water removed",
                      _ratio(evaporator_water, total), "fraction"),
            KeyFigure("dryer_share", "dryers: share of the water removed", _ratio(dryer_water, total), "fraction"),
        ]
    figures += [
        KeyFigure("dryer_water_removed", "dryers: water removed", dryer_water, "mass_flow"),
        KeyFigure("dryer_heat_consumption", "dryers: heat consumption (steam, fuel LHV, electric)",
                  heat_consumption, "power"),
        KeyFigure("dryer_specific_heat", "dryers: specific heat consumption per kg water",
                  _ratio(heat_consumption, dryer_water), "specific_enthalpy"),
        KeyFigure("dryer_thermal_efficiency", "dryers: thermal efficiency (evaporation heat / heat consumed)",
                  _ratio(ideal, heat_consumption), "fraction"),
        KeyFigure("line_energy_per_water", "line: steam, dryer heat and electricity per kg water",
                  _ratio(steam_heat_evaporator + heat_consumption + electrical, total), "specific_enthalpy"),
    ]

    for n in dryers:
        u, unit = units[n], fs.unit(n)
        e = u.figures["evaporation"]
        t_in, t_out = u.figures["inlet_temperature"], u.figures["outlet_temperature"]
        t_amb = unit.setting("ambient_temperature")
        figures += [
            KeyFigure(f"{n}.water_removed", f"{n}: water removed", e, "mass_flow"),
            KeyFigure(f"{n}.share", f"{n}: share of the water removed", _ratio(e, total), "fraction"),
        ]
        if unit.setting("section") == "drying":
            figures += [
                KeyFigure(f"{n}.heat_per_water", f"{n}: heat brought in above ambient per kg water",
                          _ratio(u.figures["heat_input"], e), "specific_enthalpy"),
                KeyFigure(f"{n}.temperature_efficiency",
                          f"{n}: temperature efficiency (T_in - T_out)/(T_in - T_amb)",
                          _ratio(t_in - t_out, t_in - t_amb), "fraction"),
            ]
        figures += [
            KeyFigure(f"{n}.inlet_dry_air", f"{n}: dry air in", u.figures["inlet_dry_air"], "mass_flow"),
            KeyFigure(f"{n}.inlet_temperature", f"{n}: hottest inlet air", t_in, "temperature"),
            KeyFigure(f"{n}.outlet_temperature", f"{n}: exhaust temperature", t_out, "temperature"),
            KeyFigure(f"{n}.outlet_humidity", f"{n}: exhaust humidity ratio", u.figures["outlet_humidity"],
                      "humidity_ratio"),
            KeyFigure(f"{n}.outlet_relative_humidity", f"{n}: exhaust relative humidity",
                      u.quantities["outlet_relative_humidity"], "fraction"),
            KeyFigure(f"{n}.outlet_dew_point", f"{n}: exhaust dew point", u.figures["outlet_dew_point"],
                      "temperature"),
            KeyFigure(f"{n}.product_moisture", f"{n}: product moisture (wet basis)",
                      u.quantities["product_moisture"], "fraction"),
        ]
        if "equilibrium_moisture_dry_basis" in u.figures:
            x_eq = u.figures["equilibrium_moisture_dry_basis"]
            figures += [
                KeyFigure(f"{n}.equilibrium_moisture", f"{n}: equilibrium moisture in the exhaust (wet basis)",
                          x_eq / (1 + x_eq) if math.isfinite(x_eq) and x_eq > -1 else float("nan"), "fraction"),
                KeyFigure(f"{n}.moisture_margin", f"{n}: product moisture above equilibrium (dry basis, kg/kg)",
                          u.quantities["product_moisture_dry_basis"] - x_eq, "ratio"),
            ]

    for u in heaters:
        figures.append(KeyFigure(f"{u.name}.duty", f"{u.name}: heater duty", u.quantities["duty"], "power"))
        if u.type_name == "steam_air_heater":
            figures.append(KeyFigure(f"{u.name}.steam", f"{u.name}: steam", u.figures["steam"], "mass_flow"))
        elif u.type_name == "indirect_fired_air_heater":
            figures += [KeyFigure(f"{u.name}.fuel", f"{u.name}: fuel", u.quantities["fuel_flow"], "mass_flow"),
                        KeyFigure(f"{u.name}.fuel_volume", f"{u.name}: fuel, normal volume (0 °C, 101.325 kPa)",
                                  u.figures["fuel_normal_volume_flow"], "volume_flow"),
                        KeyFigure(f"{u.name}.heating_value", f"{u.name}: fuel lower heating value",
                                  u.figures["heating_value"], "specific_enthalpy")]
        elif u.type_name == "direct_fired_air_heater":
            figures += [KeyFigure(f"{u.name}.fuel", f"{u.name}: fuel", u.figures["fuel_flow"], "mass_flow"),
                        KeyFigure(f"{u.name}.heating_value", f"{u.name}: fuel lower heating value",
                                  u.figures["heating_value"], "specific_enthalpy"),
                        KeyFigure(f"{u.name}.combustion_water", f"{u.name}: combustion water",
                                  u.figures["combustion_water"], "mass_flow")]
        else:
            figures.append(KeyFigure(f"{u.name}.electrical_power", f"{u.name}: electrical power",
                                     u.quantities["electrical_power"], "power"))

    for u in units.values():
        if u.type_name == "fan":
            figures += [KeyFigure(f"{u.name}.dry_air", f"{u.name}: dry air", u.figures["dry_air_flow"], "mass_flow"),
                        KeyFigure(f"{u.name}.volume_flow", f"{u.name}: actual volume flow at the inlet",
                                  u.figures["volume_flow"], "volume_flow"),
                        KeyFigure(f"{u.name}.electrical_power", f"{u.name}: electrical power",
                                  u.quantities["electrical_power"], "power")]
        elif u.type_name == "air_heat_recovery":
            figures += [KeyFigure(f"{u.name}.duty", f"{u.name}: heat recovered", u.quantities["duty"], "power"),
                        KeyFigure(f"{u.name}.effectiveness", f"{u.name}: effectiveness",
                                  u.quantities["effectiveness"], "fraction"),
                        KeyFigure(f"{u.name}.exhaust_dew_point", f"{u.name}: exhaust dew point",
                                  u.figures["exhaust_dew_point"], "temperature"),
                        KeyFigure(f"{u.name}.cold_end_wall", f"{u.name}: cold-end wall temperature (estimate)",
                                  u.figures["cold_end_wall_temperature"], "temperature")]
        elif u.type_name in SEPARATOR_TYPES:
            figures += [KeyFigure(f"{u.name}.lost_product", f"{u.name}: lost product (fines not collected)",
                                  u.figures["lost_product"], "mass_flow"),
                        KeyFigure(f"{u.name}.dust", f"{u.name}: dust in the cleaned air (mg/m3)",
                                  u.figures["dust_in_cleaned_air"], "ratio")]
    return figures
