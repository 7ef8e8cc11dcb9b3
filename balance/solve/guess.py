"""The automatic initial guess: an estimate of every unknown from plant reasoning.

1. The total evaporation follows from the feed and the target solids
   (E = F (1 - x_F / x_P)), and is split evenly between the effects; in a
   parallel-fed cascade it falls from effect to effect as each share of the
   feed first takes its sensible heat, and the temperature span is then
   shared in proportion to duty / U (equal areas).
2. The temperature span between the live steam and the coldest effect (set
   by its fixed pressure, or the cooling water plus 15 K, or 50 °C) is split
   evenly by the effects' position in the vapour cascade: an effect whose
   vapour heats k further effects boils k steps above the coldest one.
3. Each unit then estimates its outlets from its inlets (its ``guess``
   method), in flow order from the sources, in three passes so that recycles
   settle. Between passes, what a unit asks of an inlet (an effect's heating
   steam, the liquor that concentrates to its known solids) goes upstream; a
   splitter sets its fractions in proportion to its outlets' demands.
   Fixed values and the user's guesses are never overwritten.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from balance.errors import SpecificationError
from balance.flowsheet.graph import Flowsheet
from balance.properties import water
from balance.unitops.streams import STREAM_KINDS

DEFAULT_STEAM_TEMPERATURE = 393.15
DEFAULT_COLD_TEMPERATURE = 323.15
PASSES = 3


def _unit_order(fs: Flowsheet) -> list[str]:
    sources = [n for n, u in fs.units.items() if u.boundary == "source"]
    order, seen = [], set()
    frontier = list(sources)
    while frontier:
        nxt = []
        for name in frontier:
            if name in seen:
                continue
            seen.add(name)
            order.append(name)
            nxt.extend(v for _, v in fs.graph.out_edges(name))
        frontier = nxt
    order.extend(n for n in fs.units if n not in seen)
    return order


def cascade_levels(fs: Flowsheet) -> dict[str, int]:
    """For each boiling unit, 1 + the number of boiling units its vapour heats in turn."""
    memo: dict[str, int] = {}

    def downstream(unit_name: str, visiting: frozenset) -> int:
        best = 0
        for _, target, data in fs.graph.out_edges(unit_name, data=True):
            if data["kind"] != "vapour":
                continue
            best = max(best, through(target, data["target_port"], visiting))
        return best

    def through(name: str, port: str, visiting: frozenset) -> int:
        unit = fs.unit(name)
        if name in visiting:
            return 0
        if getattr(unit, "boils", False) and port == "heating_in":
            return level(name, visiting)
        if getattr(unit, "passes_vapour", False) or unit.type_name in ("mixer", "splitter"):
            return downstream(name, visiting | {name})
        return 0

    def level(name: str, visiting: frozenset = frozenset()) -> int:
        if name not in memo:
            memo[name] = 1 + downstream(name, visiting | {name})
        return memo[name]

    return {n: level(n) for n, u in fs.units.items() if getattr(u, "boils", False)}


def initial_guess(model) -> dict[str, float]:
    """Estimate every variable of a compiled model; returns path -> value."""
    fs = model.flowsheet
    values: dict[str, float] = {}
    locked: set[str] = set()
    for v in model.variables:
        if v.fixed is not None:
            values[v.path] = v.fixed
            locked.add(v.path)
        elif v.guess is not None:
            values[v.path] = v.guess
            locked.add(v.path)

    streams = fs.streams
    port_stream = {(s.target, s.target_port): s for s in streams}   # a port's stream, looked up in O(1)
    port_stream.update({(s.source, s.source_port): s for s in streams})
    feeds = [s for s in streams if fs.unit(s.source).type_name == "feed"]
    x_feed = np.mean([values.get(f"{s.name}.solids", 0.1) for s in feeds]) if feeds else 0.1
    products = [s for s in streams if s.kind == "liquor" and (
        fs.unit(s.target).boundary == "sink"     # or a concentrate fed to a dryer from an evaporator
        or getattr(fs.unit(s.target), "dries", False) and fs.unit(s.source).boundary != "source")]
    fixed_solids = [values[f"{s.name}.solids"] for s in products if f"{s.name}.solids" in locked]
    x_product = max(fixed_solids) if fixed_solids else min(max(3 * x_feed, x_feed + 0.05), 0.6)
    x_product = max(x_product, x_feed + 1e-3)
    effects = [n for n, u in fs.units.items() if getattr(u, "boils", False) and
               any(p.name == "heating_in" for p in u.ports())]
    n_effects = max(len(effects), 1)

    feed_flow = sum(values.get(f"{s.name}.flow", np.nan) for s in feeds) if feeds else np.nan
    if not np.isfinite(feed_flow):
        product_flows = [values[f"{s.name}.flow"] for s in products if f"{s.name}.flow" in locked]
        steam = [values[f"{s.name}.flow"] for s in streams
                 if fs.unit(s.source).type_name == "steam_supply" and f"{s.name}.flow" in locked]
        if product_flows:
            feed_flow = sum(product_flows) * x_product / max(x_feed, 1e-6)
        elif steam:
            feed_flow = sum(steam) * 0.85 * n_effects / max(1 - x_feed / x_product, 1e-3)
        else:
            feed_flow = model.reference_flow
        for s in feeds:
            if f"{s.name}.flow" not in locked:
                values[f"{s.name}.flow"] = feed_flow / len(feeds)
    evaporation = feed_flow * (1 - x_feed / x_product)

    # temperatures along the cascade
    t_top = None
    for s in streams:
        if fs.unit(s.source).type_name == "steam_supply":
            if getattr(fs.unit(s.target), "outside_cascade", False):
                continue   # steam for an air heater or a dryer's heating surfaces
            top_of = getattr(fs.unit(s.target), "cascade_top_temperature", None)
            if top_of is not None:  # live steam that heats nothing directly (a thermocompressor's motive)
                own = {q.name: values[f"{s.target}.{q.name}"] for q in fs.unit(s.target).quantities()
                       if f"{s.target}.{q.name}" in locked}
                t = top_of(own)
                if t is not None:
                    t_top = max(t_top or 0.0, t)
                continue
            if f"{s.name}.temperature" in locked:
                t = values[f"{s.name}.temperature"]
            elif f"{s.name}.pressure" in locked:
                t = float(water.saturation_temperature(values[f"{s.name}.pressure"]))
            else:
                continue
            t_top = max(t_top or 0.0, t)
    levels = cascade_levels(fs)
    n_levels = max(levels.values(), default=1)
    t_cold = None
    for name, lvl in levels.items():
        path = f"{name}.pressure"
        if lvl == 1 and path in locked:
            t_cold = float(water.saturation_temperature(values[path]))
    if t_cold is None:
        cw = [values[f"{s.name}.temperature"] for s in streams
              if fs.unit(s.source).type_name == "cooling_water" and f"{s.name}.temperature" in locked]
        t_cold = (max(cw) + 15.0) if cw else DEFAULT_COLD_TEMPERATURE
    if t_top is None:
        t_top = max(DEFAULT_STEAM_TEMPERATURE, t_cold + 10.0 * n_levels)
    # the span is shared between the levels in proportion to 1/U, as equal duties would share it
    resistance = {}
    for name, lvl in levels.items():
        u_fixed = values.get(f"{name}.U") if f"{name}.U" in locked else None
        resistance.setdefault(lvl, []).append(1.0 / u_fixed if u_fixed else 1.0 / 1500.0)
    weights = [np.mean(resistance.get(lvl, [1.0 / 1500.0])) for lvl in range(1, n_levels + 1)]
    shares = np.array(weights) / max(sum(weights), 1e-30) * (t_top - t_cold)
    level_temperature = {lvl: t_cold + float(np.sum(shares[:lvl - 1])) for lvl in range(1, n_levels + 1)}
    # parallel feed: an effect fed from a feed through splitters only, whose concentrate reaches the
    # product through mixers only, concentrates its share to the product's solids
    def _through(name: str, port: str, upstream: bool):
        s = port_stream.get((name, port))
        while s is not None:
            other = fs.unit(s.source if upstream else s.target)
            junction = "splitter" if upstream else "mixer"
            if other.type_name != junction or other.setting("stream") != "liquor":
                return s
            s = port_stream.get((other.name, "in" if upstream else "out"))
        return None

    parallel: dict[str, float] = {}   # effect -> temperature of the liquor it receives
    for name in effects:
        s_in, s_out = _through(name, "liquor_in", True), _through(name, "liquor_out", False)
        if (s_in is None or s_out is None or fs.unit(s_in.source).type_name != "feed"
                or s_in.target == name or s_out.source == name or s_out not in products):
            continue
        parallel[name] = values.get(f"{s_in.name}.temperature", 0.5 * (t_top + t_cold))
    # evaporation shaped along a simple parallel-fed cascade: each effect's heat is the vapour of
    # the effect above (or the live steam); its own share of the feed takes first its sensible heat,
    # E_i = H_i / (latent_i + r c_p (T_i - T_feed)), r = x_P / (x_P - x_F), then H_next = E_i latent_i
    evaporation_of = {name: evaporation / n_effects for name in effects}
    heated_by: dict[str, str | None] = {}
    for name in effects:
        s = port_stream.get((name, "heating_in"))
        src = fs.unit(s.source) if s is not None else None
        if src is not None and src.type_name == "steam_supply":
            heated_by[name] = None
        elif src is not None and src.name in effects and s.source_port == "vapour_out":
            heated_by[name] = src.name
    if len(effects) > 1 and set(parallel) == set(effects) == set(heated_by) \
            and len(set(heated_by.values())) == len(effects):
        ratio = x_product / (x_product - x_feed)
        cp_rough = 4186.0 * (1.0 - 0.6 * x_feed)   # rough liquor heat capacity [J/(kg K)], for the guess only
        below = {v: k for k, v in heated_by.items()}
        u_of = {k: values[f"{k}.U"] if f"{k}.U" in locked else 1500.0 for k in effects}
        for _ in range(30):   # the temperatures and the duties settle together
            heat, raw = 1.0e6, {}
            name = below.get(None)
            while name is not None and name not in raw:
                t_b = level_temperature[levels[name]]
                latent = float(water.latent_heat(t_b))
                raw[name] = heat / max(latent + ratio * cp_rough * (t_b - parallel[name]), 0.2 * latent)
                heat = raw[name] * latent
                name = below.get(name)
            if len(raw) != len(effects) or len(set(levels[k] for k in raw)) != len(raw):
                break
            total = sum(raw.values())
            evaporation_of = {k: evaporation * v / total for k, v in raw.items()}
            # the span shared in proportion to Q/U, as equal areas would share it
            weights = [0.0] * n_levels
            for k in raw:
                weights[levels[k] - 1] = raw[k] / u_of[k]
            shares = np.array(weights) / max(sum(weights), 1e-30) * (t_top - t_cold)
            settled = {lvl: 0.5 * level_temperature[lvl] + 0.5 * (t_cold + float(np.sum(shares[:lvl - 1])))
                       for lvl in range(1, n_levels + 1)}   # half steps: full ones oscillate on long trains
            moved = max(abs(settled[lvl] - level_temperature[lvl]) for lvl in settled)
            level_temperature = settled
            if moved < 0.01:
                break
    hints_by_unit: dict[str, dict[str, Any]] = {}
    for name, unit in fs.units.items():
        hints: dict[str, Any] = {"fixed": {}, "steam_flow": evaporation / n_effects / 0.95,
                                 "site_pressure": fs.site["pressure"]}
        for q in unit.quantities():
            path = f"{name}.{q.name}"
            if path in locked:
                hints["fixed"][q.name] = values[path]
        if name in levels:
            t_b = level_temperature[levels[name]]
            if "pressure" in hints["fixed"]:
                t_b = float(water.saturation_temperature(hints["fixed"]["pressure"]))
            hints["boiling_temperature"] = t_b
        if name in effects:
            hints["evaporation"] = evaporation_of[name]
        if name in parallel:
            hints["product_solids"] = x_product
        # fixed stream values at the unit's own ports: port -> {variable: value}
        hints["fixed_ports"] = {}
        for s in streams:
            for unit_name, port in ((s.source, s.source_port), (s.target, s.target_port)):
                if unit_name == name:
                    for var in STREAM_KINDS[s.kind].variable_names:
                        if f"{s.name}.{var}" in locked:
                            hints["fixed_ports"].setdefault(port, {})[var] = values[f"{s.name}.{var}"]
        hints_by_unit[name] = hints

    def stream_defaults(kind_name: str) -> dict[str, float]:
        out = {}
        for sv in STREAM_KINDS[kind_name].variables:
            out[sv.name] = {"flow": feed_flow, "solids": x_feed, "temperature": 0.5 * (t_top + t_cold),
                            "pressure": float(water.saturation_pressure(0.5 * (t_top + t_cold))),
                            }.get(sv.name, sv.nominal)
        return out

    current: dict[str, dict[str, float]] = {}
    for s in streams:
        state = stream_defaults(s.kind)
        for var in state:
            path = f"{s.name}.{var}"
            if path in values:
                state[var] = values[path]
        current[s.name] = state

    def put(path: str, value: float) -> None:
        if path not in locked and value is not None and np.isfinite(value):
            values[path] = float(value)

    def record_demands(name: str, guess) -> None:
        for port, var_values in guess.inlets.items():
            stream = port_stream.get((name, port))
            if stream is not None and fs.unit(stream.source).boundary != "source":
                hints_by_unit[stream.source].setdefault("demand", {})[stream.source_port] = dict(var_values)

    order = _unit_order(fs)
    for _ in range(PASSES):
        for name in order:
            unit = fs.unit(name)
            inlets = {s.target_port: current[s.name] for s in streams if s.target == name}
            try:
                guess = unit.guess(inlets, hints_by_unit[name])
            except SpecificationError:
                raise   # a unit found its fixed values impossible: say so before any solve
            except (KeyError, ZeroDivisionError, ValueError, TypeError):
                continue
            for port, var_values in guess.streams.items():
                stream = port_stream.get((name, port))
                if stream is None:
                    continue
                for var, val in var_values.items():
                    path = f"{stream.name}.{var}"
                    put(path, val)
                    if var in current[stream.name]:
                        current[stream.name][var] = values.get(path, val)
            for q, val in guess.quantities.items():
                put(f"{name}.{q}", val)
            for port, var_values in guess.inlets.items():
                stream = port_stream.get((name, port))
                if stream is None or fs.unit(stream.source).boundary != "source":
                    continue
                for var, val in var_values.items():
                    path = f"{stream.name}.{var}"
                    put(path, val)
                    current[stream.name][var] = values.get(path, val)
            record_demands(name, guess)
        # backward sweep: what a unit needs at an inlet fed by another unit (a dryer's air flow) is
        # passed upstream, unit by unit, to the source that supplies it
        for name in reversed(order):
            if not hints_by_unit[name].get("demand"):
                continue
            inlets = {s.target_port: current[s.name] for s in streams if s.target == name}
            try:
                guess = fs.unit(name).guess(inlets, hints_by_unit[name])
            except (KeyError, ZeroDivisionError, ValueError, TypeError):
                continue
            if not guess.inlets:   # a unit without its own rule (a steam header): pass the sum of the flows
                ports = fs.unit(name).ports()
                for kind in {p.kind for p in ports if p.direction == "in"}:
                    ins = [p.name for p in ports if p.direction == "in" and p.kind == kind]
                    asked = [hints_by_unit[name]["demand"][p.name].get("flow") for p in ports
                             if p.direction == "out" and p.kind == kind and p.name in hints_by_unit[name]["demand"]]
                    if len(ins) == 1 and asked and None not in asked:
                        guess.inlets[ins[0]] = {"flow": sum(asked)}
            for port, var_values in guess.inlets.items():
                stream = port_stream.get((name, port))
                if stream is not None and fs.unit(stream.source).boundary == "source":
                    for var, val in var_values.items():
                        put(f"{stream.name}.{var}", val)
                        current[stream.name][var] = values.get(f"{stream.name}.{var}", val)
            record_demands(name, guess)
    for s in streams:
        for var, val in current[s.name].items():
            values.setdefault(f"{s.name}.{var}", val)
    for v in model.variables:
        if v.path not in values:
            values[v.path] = v.nominal
    return values
