"""Degrees of freedom per unit and overall, the structural verdict for ``balance check``,
and the explanation of a failed solve in plant words.

`check_report` is what ``balance check`` prints: the count of unknowns and
equations per unit with what is fixed there, the overall degrees of
freedom, and the verdict of `balance.equations.structure.analyse` (which
values to free or fix, and where). `describe_failure` looks at the point
where a solve stopped: the largest residuals by unit and equation, the
unknowns pressed against their bounds, and a likely cause.
"""

from __future__ import annotations

from collections import Counter, defaultdict
from dataclasses import dataclass, field

import casadi as ca
import numpy as np

from balance.equations.model import Model, compile_flowsheet
from balance.equations.structure import (analyse, describe_imbalance, display_path, numerical_dependencies,
                                         plant_words)
from balance.errors import SpecificationError
from balance.flowsheet.graph import IMPLICIT_OUTLET_PREFIX


def _unit_of_variable(model: Model, variable) -> str:
    """The unit a variable is counted under: its own unit for a quantity,
    the unit a stream leaves for a stream variable."""
    if variable.is_stream:
        return model.flowsheet.stream(variable.owner).source
    return variable.owner


def unit_degrees_of_freedom(model: Model) -> dict[str, tuple[int, int]]:
    """For each unit: (unknowns it owns, equations it writes).

    A unit owns its own quantities and the variables of the streams leaving
    it; the specification's ``same`` equations are counted under
    ``specification``.
    """
    fs = model.flowsheet
    owned = Counter(_unit_of_variable(model, v) for v in model.unknowns)
    equations = Counter(e.unit for e in model.equations)
    names = list(fs.units) + (["specification"] if equations.get("specification") else [])
    return {n: (owned.get(n, 0), equations.get(n, 0)) for n in names}


def unit_fixed_values(model: Model) -> dict[str, list[str]]:
    """For each unit: the fixed values counted under it, as the user writes them
    (``E1.U``, ``feed.flow``, ``condenser.cooling_out.temperature``)."""
    out: dict[str, list[str]] = defaultdict(list)
    for v in model.parameters:
        out[_unit_of_variable(model, v)].append(display_path(model, v))
    return out


def check_report(fs) -> tuple[str, bool]:
    """Text for ``balance check`` and whether the flowsheet is ready to solve.

    Parameters
    ----------
    fs : balance.flowsheet.graph.Flowsheet

    Returns
    -------
    text : str
    ready : bool
        True when the specification is square, structurally sound and not
        numerically singular.
    """
    model = compile_flowsheet(fs, require_square=False)
    lines = [f"{fs.file or fs.title}: {len([u for u in fs.units if not u.startswith(IMPLICIT_OUTLET_PREFIX)])}"
             f" units, {len(fs.streams)} streams, {len(model.variables)} variables "
             f"({len(model.parameters)} fixed), {model.n_equations} equations"]
    lines.append("")
    lines.append(f"{'unit':<28}{'unknowns':>10}{'equations':>11}{'balance':>9}  fixed here")
    fixed = unit_fixed_values(model)
    for name, (n_x, n_g) in unit_degrees_of_freedom(model).items():
        if name.startswith(IMPLICIT_OUTLET_PREFIX) and n_x == n_g == 0:
            continue
        here = ", ".join(p.split(".", 1)[1] if p.startswith(name + ".") else p for p in fixed.get(name, []))
        lines.append(f"{name:<28}{n_x:>10}{n_g:>11}{n_x - n_g:>+9}  {here}".rstrip())
    lines.append("(a unit owns its quantities and the variables of the streams it sends out; the balance "
                 "column sums to the overall degrees of freedom, and a unit's own balance need not be zero)")
    report = analyse(model, numerical=True)
    square = model.n_unknowns == model.n_equations
    ok = square and report.structurally_sound and not report.numerically_singular
    lines.append("")
    lines.append(f"degrees of freedom: {model.n_unknowns - model.n_equations:+d} "
                 f"({model.n_unknowns} unknowns, {model.n_equations} equations)")
    if ok and not report.dependencies:
        lines.append("ready to solve: the specification is square and structurally sound")
    else:
        lines.append(describe_imbalance(model, report))
        if ok:
            lines.append("ready to solve, with the warning above")
    return "\n".join(lines), ok


@dataclass
class FailureReport:
    """What `describe_failure` found at the point where a solve stopped.

    Attributes
    ----------
    worst : list of (str, float)
        Largest scaled residuals, "<unit>: <equation>" and value.
    by_unit : dict
        Unit -> sum of the absolute scaled residuals of its equations.
    at_bounds : list of str
        Unknowns pressed against a bound, in words.
    causes : list of str
        Likely causes, most likely first.
    """

    worst: list[tuple[str, float]] = field(default_factory=list)
    by_unit: dict[str, float] = field(default_factory=dict)
    at_bounds: list[str] = field(default_factory=list)
    causes: list[str] = field(default_factory=list)

    @property
    def text(self) -> str:
        lines = []
        if self.worst:
            lines.append("largest residuals: " + "; ".join(f"{label} ({value:.2g})" for label, value in self.worst))
        if self.by_unit:
            ranked = sorted(self.by_unit.items(), key=lambda kv: -kv[1])[:4]
            lines.append("by unit: " + ", ".join(f"{unit} {value:.2g}" for unit, value in ranked))
        if self.at_bounds:
            lines.append("at a bound: " + "; ".join(self.at_bounds[:8]))
        for cause in self.causes:
            lines.append("likely cause: " + cause)
        return "\n".join(lines)


def describe_failure(model: Model, x, p=None, count: int = 5) -> FailureReport:
    """Explain, in plant words, why the equations are not satisfied at ``x``.

    Parameters
    ----------
    model : Model
    x : array_like
        Unknowns where the solve stopped (SI).
    p : array_like, optional
        Fixed values; the model's own by default.
    count : int
        How many residuals to list.

    Returns
    -------
    FailureReport
    """
    x = np.asarray(x, dtype=float).ravel()
    p = model.parameter_values() if p is None else np.asarray(p, dtype=float).ravel()
    out = FailureReport()
    if not model.n_equations:
        return out
    g = np.asarray(ca.Function("g", [model.x, model.p], [model.g])(x, p), dtype=float).ravel()
    scaled = g / np.asarray(model.residual_scale, dtype=float)
    magnitude = np.nan_to_num(np.abs(scaled), nan=np.inf)
    for i in np.argsort(-magnitude)[:count]:
        if magnitude[i] > 1e-9:
            out.worst.append((model.equations[i].label, float(scaled[i])))
    by_unit: dict[str, float] = defaultdict(float)
    for i, eq in enumerate(model.equations):
        by_unit[eq.unit] += float(magnitude[i])
    out.by_unit = {k: v for k, v in by_unit.items() if v > 1e-9}

    for j, v in enumerate(model.unknowns):
        width = max(abs(v.nominal), 1e-6)
        if x[j] <= v.lower + 1e-7 * width and v.lower > -1e29:
            out.at_bounds.append(f"{display_path(model, v)} at its lower bound {v.lower:g}")
        elif x[j] >= v.upper - 1e-7 * width and v.upper < 1e29:
            out.at_bounds.append(f"{display_path(model, v)} at its upper bound {v.upper:g}")

    if not np.all(np.isfinite(g)):
        bad = sorted({model.equations[i].unit for i in np.flatnonzero(~np.isfinite(g))})
        out.causes.append("a property was evaluated outside its domain in " + ", ".join(bad)
                          + " (a pressure or temperature far from the plant's range)")
    for v, value in zip(model.unknowns, x):
        if v.is_stream and v.name == "flow" and value <= v.lower + 1e-9:
            stream = model.flowsheet.stream(v.owner)
            if getattr(model.flowsheet.unit(stream.source), "boils", False):
                if stream.source_port == "vapour_out":
                    out.causes.append(f"{stream.source} boils nothing off: its driving force is gone; the "
                                      f"temperature span may not cover the boiling-point rises and the minimum "
                                      f"temperature difference of each effect")
    driving = _negative_driving_forces(model, x, p)
    out.causes += driving
    try:
        deps = numerical_dependencies(model, points=1)
    except Exception:  # noqa: BLE001 - a diagnosis must never raise
        deps = []
    for dep in deps:
        if dep.kind == "equations" and dep.fixed:
            out.causes.append("some equations combine into a relation among fixed values only: "
                              + ", ".join(dep.fixed) + " cannot all be fixed")
    if not out.causes and out.worst:
        unit = max(out.by_unit, key=out.by_unit.get) if out.by_unit else out.worst[0][0].split(":")[0]
        out.causes.append(f"the equations of {unit} could not be met from the starting point; give a guess "
                          f"for its pressure or temperature, or solve an easier case first and step towards "
                          f"this one")
    return out


def _negative_driving_forces(model: Model, x, p) -> list[str]:
    names = [(unit, figure) for unit, figures in model.reports.items() for figure in figures
             if figure in ("driving_force", "approach", "smallest_approach")]
    if not names:
        return []
    expr = ca.vertcat(*[model.reports[unit][figure][0] for unit, figure in names])
    try:
        values = np.asarray(ca.Function("df", [model.x, model.p], [expr])(x, p), dtype=float).ravel()
    except RuntimeError:
        return []
    return [f"{unit}: the {figure.replace('_', ' ')} is {value:.3g} K, so heat would have to flow from the "
            f"colder side" for (unit, figure), value in zip(names, values) if np.isfinite(value) and value <= 0]


__all__ = ["FailureReport", "check_report", "describe_failure", "unit_degrees_of_freedom", "unit_fixed_values",
           "plant_words", "SpecificationError"]
