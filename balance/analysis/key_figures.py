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

import threading
from dataclasses import dataclass

import casadi as ca
import numpy as np

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

    ``solution`` is a `balance.solve.Solution` or any object with its
    ``flowsheet``, ``streams`` and ``units`` (all the providers read), such
    as the light per-case view a sweep builds.
    """
    _load_providers()
    out: dict[str, KeyFigure] = {}
    # while the providers run, the solution does not change: what they share is worked out once
    memo = _MEMO.__dict__
    memo.update(solution=solution, evaporation=None, wiring=None)
    try:
        for provider in PROVIDERS:
            for figure in provider(solution):
                out[figure.name] = figure
    finally:
        memo.update(solution=None, evaporation=None, wiring=None)
    return out


#: While `key_figures` runs on a solution (per thread): the solution, its evaporation figures and its
#: wiring (see `structure_cache`), once worked out.
_MEMO = threading.local()

# -- what the providers read from the flowsheet's structure, once per structure ------------------

_STRUCTURES: dict = {}


def structure_cache(solution, name: str, build):
    """``build(flowsheet, solution)`` computed once per flowsheet structure and kept.

    A provider's reading of the topology (which streams are feeds, steam,
    condensate, ...) depends only on the flowsheet's units and streams, not
    on the numbers; a sweep asks for it thousands of times. It is kept for
    the flowsheet object with the names of the solution's streams and units;
    a hit is used only when every stream's (kind, source, target) and every
    unit's type are still those it was built for, so a flowsheet changed in
    place is read again.
    """
    fs = solution.flowsheet
    streams, units = solution.streams, solution.units
    key = (name, id(fs), tuple(streams), tuple(units))
    hit = _STRUCTURES.get(key)
    if hit is not None and hit[0] is fs and _wiring(solution) == hit[1]:
        return hit[2]
    if len(_STRUCTURES) > 64:
        _STRUCTURES.clear()
    value = build(fs, solution)
    _STRUCTURES[key] = (fs, _wiring(solution), value)
    return value


def _wiring(solution) -> tuple:
    """Every stream's (kind, source, target) and every unit's type: once per `key_figures` call."""
    memo = _MEMO.__dict__
    current = memo.get("solution") is solution
    if current and memo.get("wiring") is not None:
        return memo["wiring"]
    wiring = (tuple([(s.kind, s.source, s.target) for s in solution.streams.values()]),
              tuple([u.type_name for u in solution.units.values()]))
    if current:
        memo["wiring"] = wiring
    return wiring


class ScalarFunction:
    """A CasADi function of scalar inputs and one scalar output, called with Python floats.

    Evaluates through the function's buffer (`casadi.Function.buffer`, CasADi
    3.6 and later): about 5 µs a call instead of about 17 µs through the
    ordinary call, which converts every argument to a matrix. A lock keeps
    calls from threads apart; without a buffer it falls back to the
    ordinary call.
    """

    def __init__(self, function: "ca.Function"):
        self.function = function
        self._lock = threading.Lock()
        self._inputs = [np.zeros(1) for _ in range(function.n_in())]
        self._output = np.zeros(1)
        try:
            self._buffer, self._trigger = function.buffer()
        except AttributeError:      # CasADi before 3.6
            self._buffer = None
            return
        for i, a in enumerate(self._inputs):
            self._buffer.set_arg(i, memoryview(a))
        self._buffer.set_res(0, memoryview(self._output))

    def __call__(self, *args: float) -> float:
        if self._buffer is None:
            return float(self.function(*args))
        with self._lock:
            for a, v in zip(self._inputs, args):
                a[0] = v
            self._trigger()
            return float(self._output[0])


_CONDENSING = []


def condensing_enthalpy(pressure: float) -> float:
    """Enthalpy of saturated liquid water at ``pressure`` [J/kg]: h'(T_sat(p)) of IAPWS-IF97.

    The same `balance.properties.water.saturation_temperature` and
    `~balance.properties.water.liquid_enthalpy` expressions, compiled once
    into a CasADi function (about twice as fast as the Python-float call,
    identical to round-off).

    Parameters
    ----------
    pressure : float
        Pressure [Pa], within the validity of IF97 region 1 saturation (611.2 Pa to 16.5 MPa).

    Examples
    --------
    >>> round(condensing_enthalpy(101325.0) / 1000.0, 2)   # IAPWS-IF97 (CoolProp): 418.99 kJ/kg at 99.974 °C
    418.99
    """
    if not _CONDENSING:
        p = ca.SX.sym("p")
        _CONDENSING.append(ScalarFunction(ca.Function(
            "condensing_enthalpy", [p], [water.liquid_enthalpy(water.saturation_temperature(p))], {"cse": True})))
    return _CONDENSING[0](pressure)


def _evaporation_structure(fs, solution):
    """Per stream: (name, is feed, is product, steam sign or None, is cooling water)."""
    out = []
    for s in solution.streams.values():
        source, target = fs.unit(s.source), fs.unit(s.target)
        feed = s.kind in PRODUCT_KINDS and source.boundary == "source"
        product = s.kind in PRODUCT_KINDS and target.boundary == "sink"
        sign = None
        if source.type_name == "steam_supply" or (s.kind == "vapour" and getattr(target, "outside_cascade", False)):
            # live steam in, less the steam that air heaters and dryers take (counted by the drying figures)
            sign = 1.0 if source.type_name == "steam_supply" else -1.0
            if source.type_name == "steam_supply" and getattr(target, "outside_cascade", False):
                sign = 0.0
        out.append((s.name, feed, product, sign, source.type_name == "cooling_water"))
    dryers = [n for n, u in fs.units.items() if getattr(u, "dries", False)]
    return out, dryers


@provides_figures
def evaporation_figures(solution) -> list[KeyFigure]:
    """Water removed, live steam, economy, areas and cooling water."""
    memo = _MEMO.__dict__
    current = memo.get("solution") is solution
    if current and memo.get("evaporation") is not None:
        return list(memo["evaporation"])
    streams = solution.streams
    units = solution.units
    feeds_water = feeds_solids = feed_flow = 0.0
    product_water = product_flow = product_solids = 0.0
    steam = steam_heat = cooling = 0.0
    classified, dryers = structure_cache(solution, "evaporation", _evaporation_structure)
    for name, feed, product, sign, cooling_water in classified:
        s = streams[name]
        if feed:
            feeds_water += s.water_flow
            feeds_solids += s.solids_flow
            feed_flow += s.values["flow"]
        if product:
            product_water += s.water_flow
            product_flow += s.values["flow"]
            product_solids += s.solids_flow
        if sign is not None:
            flow = s.values["flow"]
            steam += sign * flow
            steam_heat += sign * flow * (s.specific_enthalpy - condensing_enthalpy(s.values["pressure"]))
        if cooling_water:
            cooling += s.values["flow"]
    evaporated = feeds_water - product_water
    # in a line with dryers, economy and heat per kg water belong to the evaporators alone
    dryer_water = sum(units[n].figures.get("evaporation", 0.0) for n in dryers if n in units)
    by_steam = evaporated - dryer_water
    prefix = "evaporators: " if dryer_water else ""
    figures = [
        KeyFigure("feed_flow", "feed", feed_flow, "mass_flow"),
        KeyFigure("feed_solids", "feed solids", feeds_solids / feed_flow if feed_flow else 0.0, "fraction"),
        KeyFigure("product_flow", "product", product_flow, "mass_flow"),
        KeyFigure("product_solids", "product solids",
                  product_solids / product_flow if product_flow else 0.0, "fraction"),
        KeyFigure("water_evaporated", "water evaporated", evaporated, "mass_flow"),
    ]
    types = {u.type_name for u in units.values()}
    has_effects = bool(types & {"effect", "flash_tank"})
    if not (has_effects or steam):
        # a line without evaporators or live steam to them: no economy to speak of
        figures += _equipment_figures(units, types, cooling, evaporated)
        if current:
            memo["evaporation"] = tuple(figures)
        return figures
    figures += [
        KeyFigure("live_steam", prefix + "live steam", steam, "mass_flow"),
        KeyFigure("steam_economy", prefix + "steam economy (kg water / kg live steam)",
                  by_steam / steam if steam > 0 else float("nan"), "ratio"),
        KeyFigure("specific_steam", prefix + "live steam per tonne of water (kg/t)",
                  1000.0 * steam / by_steam if by_steam > 0 else float("nan"), "ratio"),
        KeyFigure("live_steam_heat", prefix + "live-steam heat", steam_heat, "power"),
        KeyFigure("heat_per_water", prefix + "live-steam heat per kg water",
                  steam_heat / by_steam if by_steam > 0 else float("nan"), "specific_enthalpy"),
    ]
    figures += _equipment_figures(units, types, cooling, evaporated)
    if current:
        memo["evaporation"] = tuple(figures)
    return figures


def _equipment_figures(units, types, cooling, evaporated) -> list[KeyFigure]:
    """Areas, condenser duty and cooling water, for the equipment the flowsheet has."""
    area = {"effect": 0.0, "preheater": 0.0, "condenser": 0.0}
    condenser_duty = 0.0
    for u in units.values():
        if u.type_name in area and "area" in u.quantities:
            area[u.type_name] += u.quantities["area"]
        if u.type_name in ("condenser", "direct_contact_condenser"):
            condenser_duty += u.quantities.get("duty", 0.0)
    figures = []
    if "effect" in types:
        figures.append(KeyFigure("heating_area", "heating area of the effects", area["effect"], "area"))
    if "preheater" in types:
        figures.append(KeyFigure("preheater_area", "preheater area", area["preheater"], "area"))
    if "condenser" in types:
        figures.append(KeyFigure("condenser_area", "condenser area", area["condenser"], "area"))
    if types & {"condenser", "direct_contact_condenser"} or cooling:
        figures += [
            KeyFigure("condenser_duty", "condenser duty", condenser_duty, "power"),
            KeyFigure("cooling_water", "cooling water", cooling, "mass_flow"),
            KeyFigure("cooling_water_per_water", "cooling water per kg water evaporated",
                      cooling / evaporated if evaporated > 0 else float("nan"), "ratio"),
        ]
    return figures
