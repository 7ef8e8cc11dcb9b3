"""Key figures of a solved line: water removed, live steam, steam economy, areas, cooling water.

Definitions (all per unit time at steady state):

* **water evaporated**: water entering with liquor feeds minus water leaving
  with liquor (and powder) products, i.e. what the line removed;
* **live steam**: the sum of all steam supplies (motive steam included)
  that serve the evaporators (steam to air heaters and dryers is counted by
  the drying figures);
* **steam economy**: water evaporated per kg of live steam [kg/kg]; in a
  line with dryers, the evaporators' share of the water per kg of their
  live steam;
* **specific steam consumption**: live steam per tonne of water evaporated;
* **live-steam heat**: what the live steam gives up condensing to saturated
  liquid at its own pressure [W];
* **heating area**: the effects' area; preheater and condenser areas apart.
"""

from __future__ import annotations

from dataclasses import dataclass

from balance.properties import water

PRODUCT_KINDS = ("liquor", "powder")


@dataclass(frozen=True)
class KeyFigure:
    """One key figure (SI value) with its label and quantity kind."""

    name: str
    label: str
    value: float
    kind: str


PROVIDERS: list = []


def provides_figures(func):
    """Register a function ``f(solution) -> list[KeyFigure]``; figures appear in registration order."""
    PROVIDERS.append(func)
    return func


_LOADED = []


def _load_providers() -> None:
    """Import every ``*_figures`` module of this package, which registers its providers (once)."""
    if _LOADED:
        return
    _LOADED.append(True)
    import importlib
    import pkgutil

    import balance.analysis as package
    for module in pkgutil.iter_modules(package.__path__):
        if module.name.endswith("_figures"):
            importlib.import_module(f"balance.analysis.{module.name}")


def key_figures(solution) -> dict[str, KeyFigure]:
    """The key figures of a solution, by name, in a stable order.

    Figures come from providers registered with `provides_figures`: this
    module's evaporation figures first, then those of every
    ``balance/analysis/*_figures.py`` module (drying, energy and cost, ...).
    """
    _load_providers()
    out: dict[str, KeyFigure] = {}
    for provider in PROVIDERS:
        for figure in provider(solution):
            out[figure.name] = figure
    return out


@provides_figures
def evaporation_figures(solution) -> list[KeyFigure]:
    """Water removed, live steam, economy, areas and cooling water."""
    fs = solution.flowsheet
    streams = solution.streams
    units = solution.units
    feeds_water = feeds_solids = feed_flow = 0.0
    product_water = product_flow = product_solids = 0.0
    steam = steam_heat = cooling = 0.0
    for s in streams.values():
        source, target = fs.unit(s.source), fs.unit(s.target)
        if s.kind in PRODUCT_KINDS and source.boundary == "source":
            feeds_water += s.water_flow
            feeds_solids += s.solids_flow
            feed_flow += s.values["flow"]
        if s.kind in PRODUCT_KINDS and target.boundary == "sink":
            product_water += s.water_flow
            product_flow += s.values["flow"]
            product_solids += s.solids_flow
        if source.type_name == "steam_supply" or (s.kind == "vapour" and getattr(target, "outside_cascade", False)):
            # live steam in, less the steam that air heaters and dryers take (counted by the drying figures)
            sign = 1.0 if source.type_name == "steam_supply" else -1.0
            if source.type_name == "steam_supply" and getattr(target, "outside_cascade", False):
                sign = 0.0
            flow = s.values["flow"]
            steam += sign * flow
            t_sat = float(water.saturation_temperature(s.values["pressure"]))
            steam_heat += sign * flow * (s.specific_enthalpy - float(water.liquid_enthalpy(t_sat)))
        if source.type_name == "cooling_water":
            cooling += s.values["flow"]
    evaporated = feeds_water - product_water
    # in a line with dryers, economy and heat per kg water belong to the evaporators alone
    dryer_water = sum(units[n].figures.get("evaporation", 0.0) for n, u in fs.units.items()
                      if getattr(u, "dries", False) and n in units)
    by_steam = evaporated - dryer_water
    prefix = "evaporators: " if dryer_water else ""
    figures = [
        KeyFigure("feed_flow", "feed", feed_flow, "mass_flow"),
        KeyFigure("feed_solids", "feed solids", feeds_solids / feed_flow if feed_flow else 0.0, "fraction"),
        KeyFigure("product_flow", "product", product_flow, "mass_flow"),
        KeyFigure("product_solids", "product solids",
                  product_solids / product_flow if product_flow else 0.0, "fraction"),
        KeyFigure("water_evaporated", "water evaporated", evaporated, "mass_flow"),
        KeyFigure("live_steam", prefix + "live steam", steam, "mass_flow"),
        KeyFigure("steam_economy", prefix + "steam economy (kg water / kg live steam)",
                  by_steam / steam if steam > 0 else float("nan"), "ratio"),
        KeyFigure("specific_steam", prefix + "live steam per tonne of water (kg/t)",
                  1000.0 * steam / by_steam if by_steam > 0 else float("nan"), "ratio"),
        KeyFigure("live_steam_heat", prefix + "live-steam heat", steam_heat, "power"),
        KeyFigure("heat_per_water", prefix + "live-steam heat per kg water",
                  steam_heat / by_steam if by_steam > 0 else float("nan"), "specific_enthalpy"),
    ]
    area = {"effect": 0.0, "preheater": 0.0, "condenser": 0.0}
    condenser_duty = 0.0
    for u in units.values():
        if u.type_name in area and "area" in u.quantities:
            area[u.type_name] += u.quantities["area"]
        if u.type_name in ("condenser", "direct_contact_condenser"):
            condenser_duty += u.quantities.get("duty", 0.0)
    figures += [
        KeyFigure("heating_area", "heating area of the effects", area["effect"], "area"),
        KeyFigure("preheater_area", "preheater area", area["preheater"], "area"),
        KeyFigure("condenser_area", "condenser area", area["condenser"], "area"),
        KeyFigure("condenser_duty", "condenser duty", condenser_duty, "power"),
        KeyFigure("cooling_water", "cooling water", cooling, "mass_flow"),
        KeyFigure("cooling_water_per_water", "cooling water per kg water evaporated",
                  cooling / evaporated if evaporated > 0 else float("nan"), "ratio"),
    ]
    return figures
