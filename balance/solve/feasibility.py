"""Pre-solve feasibility: specifications no plant can meet, found from the fixed values alone.

A square specification can still ask for the impossible. Newton then fails
far from any answer and the user reads a residual instead of the reason.
These checks look only at fixed values (no unknown is needed) and name the
unit and key at fault:

* **Concentration.** A liquor stream leaving a boiling unit (effect, flash
  tank) with its solids fixed at or below the lowest fixed solids of the
  feeds upstream of it: evaporation only concentrates, and mixing and
  splitting never bring the solids below the weakest feed.
* **Temperature cascade.** Along a chain of effects heated in turn (live
  steam -> E1 -> E2 -> ...; through vapour splitters and through the first
  inlet of vapour headers), every heating temperature that is fixed (the live
  steam's condensing temperature, the saturation temperature of a fixed
  effect pressure) must exceed the next fixed one by at least the
  boiling-point rises of the effects in between plus their smallest driving
  force (the effect setting ``min_driving_force``). For one effect and no
  driving force this is "the steam must be hotter than the liquor it
  boils". A condenser at the end of the chain adds its cooling water: the
  last effect's vapour must condense above the cooling water (plus the
  approach of a direct-contact condenser).

The boiling-point rise of an effect is bounded from below with the solids
the specification guarantees (its outlet solids if fixed, otherwise the
weakest feed upstream), evaluated at both ends of the temperature span
considered and the smaller value taken, so that a check never rejects a
specification some plant could meet. Pressure drops, hydrostatic head and
vapour superheat are neglected as in the effect's equations.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from balance.errors import InfeasibleSpecificationError
from balance.properties import water

EFFECT = "effect"
CONDENSERS = ("condenser", "direct_contact_condenser")


@dataclass(frozen=True)
class Problem:
    """One infeasible specification: where it is and what is wrong."""

    unit: str
    key: str
    message: str

    def __str__(self) -> str:
        return f"unit '{self.unit}': key '{self.key}': {self.message}"


def _celsius(t: float) -> str:
    return f"{t - 273.15:.1f} °C"


def _kpa(p: float) -> str:
    return f"{p / 1e3:.3g} kPa"


def _percent(x: float) -> str:
    return f"{100 * x:.3g} %"


class _Fixed:
    """The fixed values of a model by canonical path, and graph helpers."""

    def __init__(self, model, p):
        self.model = model
        self.fs = model.flowsheet
        self.values = {v.path: float(value) for v, value in zip(model.parameters, p)}
        self.streams = self.fs.streams

    def get(self, path: str) -> float | None:
        value = self.values.get(path)
        return value if value is not None and math.isfinite(value) else None

    def stream_at(self, unit: str, port: str):
        return self.fs.stream_at(unit, port)

    def incoming(self, unit: str, kind: str):
        return [s for s in self.streams if s.target == unit and s.kind == kind]

    def outgoing(self, unit: str, kind: str):
        return [s for s in self.streams if s.source == unit and s.kind == kind]

    def upstream_feed_solids(self, stream) -> tuple[list[tuple[str, float]], bool]:
        """Fixed solids of the feeds upstream of a liquor stream, and whether a
        boiling unit lies between them and the stream."""
        feeds, boils, seen = [], False, set()
        frontier = [stream]
        while frontier:
            s = frontier.pop()
            if s.name in seen:
                continue
            seen.add(s.name)
            unit = self.fs.unit(s.source)
            if unit.boundary == "source":
                x = self.get(f"{s.name}.solids")
                if x is not None:
                    feeds.append((s.source, x))
                continue
            boils = boils or getattr(unit, "boils", False)
            frontier.extend(self.incoming(s.source, "liquor"))
        return feeds, boils


def _concentration_problems(fx: _Fixed) -> list[Problem]:
    out = []
    for s in fx.streams:
        if s.kind != "liquor" or fx.fs.unit(s.source).boundary == "source":
            continue
        x = fx.get(f"{s.name}.solids")
        if x is None:
            continue
        feeds, boils = fx.upstream_feed_solids(s)
        if not feeds or not boils:
            continue
        feed, x_feed = min(feeds, key=lambda item: item[1])
        if x <= x_feed:
            target = fx.fs.unit(s.target)
            unit, key = (s.target, "solids") if target.boundary == "sink" else (s.source, f"{s.source_port}.solids")
            out.append(Problem(unit, key,
                               f"solids fixed at {_percent(x)}, not above the {_percent(x_feed)} of the feed "
                               f"'{feed}': evaporation can only concentrate a liquor"))
    return out


@dataclass
class _Anchor:
    """A known heating temperature along a chain: position k heats effect k+1."""

    position: int
    temperature: float
    label: str
    unit: str
    key: str


def _heating_chains(fx: _Fixed, stream, chain: list[str], visited: frozenset):
    """Follow vapour from ``stream`` through effects; yield (effects, terminal unit or None)."""
    unit = fx.fs.unit(stream.target)
    name = stream.target
    if name in visited:
        yield chain, None
        return
    if unit.type_name == EFFECT and stream.target_port == "heating_in":
        vapour = fx.stream_at(name, "vapour_out")
        if vapour is None:
            yield chain + [name], None
        else:
            yield from _heating_chains(fx, vapour, chain + [name], visited | {name})
    elif unit.type_name == "splitter" and unit.setting("stream") == "vapour":
        for out in fx.outgoing(name, "vapour"):
            yield from _heating_chains(fx, out, chain, visited | {name})
    elif unit.type_name == "mixer" and unit.setting("stream") == "vapour" and stream.target_port == "in1":
        out = fx.stream_at(name, "out")
        yield from (_heating_chains(fx, out, chain, visited | {name}) if out is not None else [(chain, None)])
    elif unit.type_name in CONDENSERS:
        yield chain, name
    else:
        yield chain, None


def _steam_condensing_temperature(fx: _Fixed, supply: str, stream) -> float | None:
    p = fx.get(f"{stream.name}.pressure")
    if p is not None:
        return float(water.saturation_temperature(p))
    t, superheat = fx.get(f"{stream.name}.temperature"), fx.get(f"{supply}.superheat")
    if t is not None and superheat is not None:
        return t - superheat
    return None


def _lowest_solids(fx: _Fixed, effect: str) -> float:
    """The least solids the effect can boil at: its fixed outlet solids, and no less than the
    weakest feed upstream."""
    out = fx.stream_at(effect, "liquor_out")
    fixed = fx.get(f"{out.name}.solids") if out is not None else None
    feed_in = fx.stream_at(effect, "liquor_in")
    feeds, _ = fx.upstream_feed_solids(feed_in) if feed_in is not None else ([], False)
    weakest = min((x for _, x in feeds), default=0.0)
    return weakest if fixed is None else max(fixed, weakest)


def _rise_lower_bound(fx: _Fixed, effect: str, temperatures: tuple[float, ...]) -> float:
    """Smallest boiling-point rise the effect can have within the temperature span."""
    out = fx.stream_at(effect, "liquor_out")
    liquor = fx.model.states[out.name].liquor if out is not None else None
    if liquor is None:
        return 0.0
    x = _lowest_solids(fx, effect)
    rises = []
    for t in temperatures:
        try:
            p = float(water.saturation_pressure(t))
            rise = float(liquor.boiling_point_rise(x, t, p))
        except (ArithmeticError, ValueError, TypeError):
            continue
        if math.isfinite(rise):
            rises.append(rise)
    return max(min(rises), 0.0) if rises else 0.0


def _terminal_anchor(fx: _Fixed, condenser: str, position: int) -> _Anchor | None:
    unit = fx.fs.unit(condenser)
    cooling = fx.stream_at(condenser, "cooling_in")
    t_in = fx.get(f"{cooling.name}.temperature") if cooling is not None else None
    if t_in is None:
        return None
    if unit.type_name == "direct_contact_condenser":
        approach = fx.get(f"{condenser}.approach") or 0.0
        return _Anchor(position, t_in + approach, f"the cooling water of '{condenser}' ({_celsius(t_in)}"
                       f" plus its {approach:.3g} K approach)", condenser, "cooling_in.temperature")
    cooling_out = fx.stream_at(condenser, "cooling_out")
    t_out = fx.get(f"{cooling_out.name}.temperature") if cooling_out is not None else None
    t = max(t_in, t_out) if t_out is not None else t_in
    return _Anchor(position, t, f"the cooling water of '{condenser}' ({_celsius(t)})", condenser,
                   "cooling_out.temperature" if t_out is not None and t_out >= t_in else "cooling_in.temperature")


def _cascade_problems(fx: _Fixed) -> list[Problem]:
    out, reported = [], set()
    for supply, unit in fx.fs.units.items():
        if unit.type_name != "steam_supply":
            continue
        steam = fx.stream_at(supply, "out")
        if steam is None:
            continue
        t_steam = _steam_condensing_temperature(fx, supply, steam)
        if t_steam is None:
            continue
        for chain, terminal in _heating_chains(fx, steam, [], frozenset()):
            if not chain:
                continue
            anchors = [_Anchor(0, t_steam, f"the live steam from '{supply}' ({_celsius(t_steam)})", supply,
                               "pressure")]
            for k, effect in enumerate(chain, start=1):
                p = fx.get(f"{effect}.pressure")
                if p is not None:
                    t = float(water.saturation_temperature(p))
                    anchors.append(_Anchor(k, t, f"the pressure of {effect} ({_kpa(p)}, water boils at "
                                                 f"{_celsius(t)})", effect, "pressure"))
            if terminal is not None and anchors[-1].position == len(chain):
                # the last effect's pressure is fixed: the condenser must work below it
                terminal_anchor = _terminal_anchor(fx, terminal, len(chain) + 1)
                if terminal_anchor is not None and terminal_anchor.temperature >= anchors[-1].temperature:
                    key = (terminal, terminal_anchor.key)
                    if key not in reported:
                        reported.add(key)
                        out.append(Problem(terminal, terminal_anchor.key,
                                           f"the vapour from {chain[-1]} condenses at "
                                           f"{_celsius(anchors[-1].temperature)}, not above "
                                           f"{terminal_anchor.label}: heat cannot flow to the cooling water"))
            elif terminal is not None:
                terminal_anchor = _terminal_anchor(fx, terminal, len(chain))
                if terminal_anchor is not None:
                    anchors.append(terminal_anchor)
            for upper, lower in zip(anchors, anchors[1:]):
                problem = _segment_problem(fx, chain, upper, lower)
                if problem is not None and (problem.unit, problem.key) not in reported:
                    reported.add((problem.unit, problem.key))
                    out.append(problem)
    return out


def _segment_problem(fx: _Fixed, chain: list[str], upper: _Anchor, lower: _Anchor) -> Problem | None:
    effects = chain[upper.position:lower.position]
    if not effects:
        return None
    available = upper.temperature - lower.temperature
    span = (lower.temperature, upper.temperature) if available > 0 else (lower.temperature,)
    rises = [_rise_lower_bound(fx, e, span) for e in effects]
    smallest = [float(fx.fs.unit(e).setting("min_driving_force")) for e in effects]
    needed = sum(rises) + sum(smallest)
    if available > sum(rises) and available >= needed:
        return None
    names = effects[0] if len(effects) == 1 else f"{effects[0]}..{effects[-1]}"
    if len(effects) == 1 and available <= rises[0]:
        message = (f"{upper.label} is not above the boiling point of the liquor in {effects[0]} "
                   f"(at least {_celsius(lower.temperature + rises[0])}, with a boiling-point rise of at least "
                   f"{rises[0]:.3g} K at {_percent(_lowest_solids(fx, effects[0]))} solids): "
                   f"heat cannot flow from the colder side")
    elif available <= sum(rises):
        message = (f"{upper.label} is not above {lower.label} plus the boiling-point rises of {names} "
                   f"(at least {sum(rises):.3g} K at the fixed solids): heat cannot flow down the train")
    else:
        message = (f"the {available:.3g} K between {upper.label} and {lower.label} do not cover "
                   f"the boiling-point rises of {names} (at least {sum(rises):.3g} K at the fixed solids) "
                   f"plus the smallest driving force of each effect ({sum(smallest):.3g} K): "
                   f"{needed:.3g} K are needed")
    return Problem(lower.unit, lower.key, message)


def infeasibilities(model, parameter_values) -> list[Problem]:
    """Every infeasible specification found, as structured `Problem` records.

    Parameters
    ----------
    model : balance.equations.model.Model
        A compiled flowsheet.
    parameter_values : array_like
        Values of ``model.parameters`` (SI), e.g. ``model.parameter_values()``.
    """
    fx = _Fixed(model, parameter_values)
    return _concentration_problems(fx) + _cascade_problems(fx)


def precheck(model, parameter_values) -> list[str]:
    """Problems with a specification that no plant can meet, in plant words.

    Parameters
    ----------
    model : balance.equations.model.Model
        A compiled flowsheet.
    parameter_values : array_like
        Values of ``model.parameters`` (SI).

    Returns
    -------
    list of str
        ``"unit '<unit>': key '<key>': <what is wrong>"``; empty when nothing
        was found (which does not prove the specification feasible).

    Examples
    --------
    A single effect asked for a product weaker than its feed, with steam
    colder than the water boiling in it:

    >>> from balance.flowsheet import Flowsheet
    >>> from balance.equations.model import compile_flowsheet
    >>> from balance.properties.liquors import builtin_liquor
    >>> fs = Flowsheet("impossible")
    >>> fs.liquors["sucrose_simple"] = builtin_liquor("sucrose_simple")
    >>> _ = fs.add("feed", "feed", liquor="sucrose_simple", flow="10 t/h", solids="20 %",
    ...            temperature="60 degC")
    >>> _ = fs.add("steam_supply", "steam", pressure="25 kPa")
    >>> _ = fs.add("effect", "E1", U="2000 W/m2/K", pressure="30 kPa")
    >>> _ = fs.add("product", "product", solids="15 %")
    >>> _ = fs.add("outlet", "vapour", stream="vapour")
    >>> for source, target in (("feed.out", "E1.liquor_in"), ("steam.out", "E1.heating_in"),
    ...                        ("E1.liquor_out", "product.in"), ("E1.vapour_out", "vapour.in")):
    ...     _ = fs.connect(source, target)
    >>> model = compile_flowsheet(fs)
    >>> for problem in precheck(model, model.parameter_values()):
    ...     print(problem)
    unit 'product': key 'solids': solids fixed at 15 %, not above the 20 % of the feed 'feed': evaporation can only concentrate a liquor
    unit 'E1': key 'pressure': the live steam from 'steam' (65.0 °C) is not above the boiling point of the liquor in E1 (at least 69.7 °C, with a boiling-point rise of at least 0.605 K at 20 % solids): heat cannot flow from the colder side
    """
    return [str(problem) for problem in infeasibilities(model, parameter_values)]


def raise_if_infeasible(model, parameter_values) -> None:
    """Raise `InfeasibleSpecificationError` naming the first problem's unit and key
    (and listing the others) when `precheck` finds any."""
    problems = infeasibilities(model, parameter_values)
    if not problems:
        return
    first, rest = problems[0], problems[1:]
    message = first.message + "".join(f"; also {problem}" for problem in rest)
    raise InfeasibleSpecificationError(message, file=model.flowsheet.file, unit=first.unit, key=first.key)
