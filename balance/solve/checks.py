"""Checks every result must pass before it is shown.

A converged Newton iteration can still sit on a root with negative flows, a
crossed heat exchanger or a vapour below its dew point; and a solver's flag
can be wrong. These checks look at the numbers themselves.
"""

from __future__ import annotations

import math

import numpy as np

from balance.properties import water
from balance.properties.validity import enforce
from balance.solve.result import Balance

RESIDUAL_LIMIT = 1e-6
BALANCE_LIMIT = 1e-6
DRIVING_FORCE_FIGURES = ("driving_force", "approach", "smallest_approach")


def check_values(model, figures: dict) -> list[str]:
    """Signs, bounds, fractions and driving forces; returns problems in plant words."""
    problems = []
    ref = model.reference_flow
    for v in model.variables:
        value = figures[("var", v.path)]
        if not math.isfinite(value):
            problems.append(f"{v.path} is not a finite number")
            continue
        if v.kind == "mass_flow" and value < -1e-9 * ref:
            problems.append(f"{v.path} is negative ({value:.4g} kg/s)")
        elif v.kind == "fraction" and not -1e-9 <= value <= 1 + 1e-9:
            problems.append(f"{v.path} = {value:.4g} is outside 0..1")
        elif v.kind != "mass_flow" and (value < v.lower - 1e-9 * max(1.0, abs(v.lower))
                                       or value > v.upper + 1e-9 * max(1.0, abs(v.upper))):
            problems.append(f"{v.path} = {value:.6g} is outside its physical range [{v.lower:g}, {v.upper:g}]")
    for unit, unit_figures in model.reports.items():
        for name in unit_figures:
            if name in DRIVING_FORCE_FIGURES:
                value = figures[("unit", unit, name)]
                if not value > 0:
                    problems.append(f"{unit}: temperature {name.replace('_', ' ')} is {value:.3g} K; "
                                    f"heat cannot flow from the colder side")
    for name, state in model.states.items():
        if state.kind.name == "vapour":
            t = figures[("var", f"{name}.temperature")]
            p = figures[("var", f"{name}.pressure")]
            flow = figures[("var", f"{name}.flow")]
            if flow > 1e-9 * ref and p > 0:
                t_sat = float(water.saturation_temperature(p))
                if t < t_sat - 0.01:
                    problems.append(f"vapour stream {name} is {t_sat - t:.2f} K below its saturation "
                                    f"temperature: it would condense")
    return problems


def overall_balances(model, figures: dict) -> dict[str, Balance]:
    """Water, solids, dry air and energy over the flowsheet boundary."""
    fs = model.flowsheet
    totals = {k: [0.0, 0.0] for k in ("water", "solids", "dry air", "energy")}
    for stream in fs.streams:
        source, target = fs.unit(stream.source), fs.unit(stream.target)
        sides = [0] * (source.boundary == "source") + [1] * (target.boundary == "sink")
        for side in sides:    # a stream from a source straight to a sink counts on both sides
            totals["water"][side] += figures[("stream", stream.name, "water_flow")]
            totals["solids"][side] += figures[("stream", stream.name, "solids_flow")]
            totals["dry air"][side] += figures[("stream", stream.name, "dry_air_flow")]
            totals["energy"][side] += figures[("stream", stream.name, "enthalpy_flow")]
    external = sum(figures[("external_power", u)] for u in model.external_power)
    if external >= 0:
        totals["energy"][0] += external
    else:
        totals["energy"][1] -= external
    out = {}
    for name, (into, out_of) in totals.items():
        scale = max(abs(into), abs(out_of))
        if name == "energy":
            # enthalpy flows are relative to a datum; compare with the flows of energy that cross
            scale = max(scale, model.reference_flow * 2.0e6)
        closure = (into - out_of) / scale if scale > 0 else 0.0
        out[name] = Balance(name, into, out_of, closure)
    return out


def range_warnings(model, figures: dict, policy: str = "warn") -> list[str]:
    numbers = [figures[("range", i)] for i in range(len(model.range_checks))]
    out = enforce(model.range_checks, numbers, policy=policy, file=model.flowsheet.file)
    for name, unit in model.flowsheet.units.items():
        smallest = unit.settings_values.get("min_driving_force")
        if smallest is None or ("unit", name, "driving_force") not in figures:
            continue
        value = figures[("unit", name, "driving_force")]
        if 0 < value < smallest:
            out.append(f"{name}: driving force {value:.2f} K is below its min_driving_force of {smallest:g} K")
    return out


def worst_equations(model, figures: dict, count: int = 5) -> list[tuple[str, float]]:
    scaled = np.array([figures[("residual", i)] for i in range(model.n_equations)]) / model.residual_scale
    order = np.argsort(-np.nan_to_num(np.abs(scaled), nan=np.inf))[:count]
    return [(model.equations[i].label, float(scaled[i])) for i in order if not abs(scaled[i]) < 1e-12]


def unit_problems(model, figures: dict) -> list[str]:
    """Problems that units find in their own numbers (``solution_problems(values)``, optional).

    A unit's hook receives its quantities and reported figures by name (SI)
    and returns messages naming the file, unit and key, e.g. a dryer whose
    product moisture lies below the equilibrium moisture of its exhaust air.
    """
    out = []
    for name, unit in model.flowsheet.units.items():
        hook = getattr(unit, "solution_problems", None)
        if hook is None:
            continue
        values = {q.name: figures[("var", f"{name}.{q.name}")] for q in unit.quantities()}
        values.update({k: figures[("unit", name, k)] for k in model.reports.get(name, {})})
        out += hook(values)
    return out
