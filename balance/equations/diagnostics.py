"""Degrees of freedom per unit and overall, and the structural verdict, for ``balance check``."""

from __future__ import annotations

from collections import Counter

from balance.equations.model import Model, compile_flowsheet
from balance.equations.structure import analyse, describe_imbalance
from balance.errors import SpecificationError
from balance.flowsheet.graph import IMPLICIT_OUTLET_PREFIX


def unit_degrees_of_freedom(model: Model) -> dict[str, tuple[int, int]]:
    """For each unit: (unknowns it owns, equations it writes).

    A unit owns its own quantities and the variables of the streams leaving
    it; the specification's ``same`` equations are counted under
    ``specification``.
    """
    fs = model.flowsheet
    owned = Counter()
    for v in model.unknowns:
        if v.is_stream:
            owned[fs.stream(v.owner).source] += 1
        else:
            owned[v.owner] += 1
    equations = Counter(e.unit for e in model.equations)
    names = list(fs.units) + (["specification"] if equations.get("specification") else [])
    return {n: (owned.get(n, 0), equations.get(n, 0)) for n in names}


def check_report(fs) -> tuple[str, bool]:
    """Text for ``balance check`` and whether the flowsheet is ready to solve."""
    model = compile_flowsheet(fs, require_square=False)
    lines = [f"{fs.file or fs.title}: {len([u for u in fs.units if not u.startswith(IMPLICIT_OUTLET_PREFIX)])}"
             f" units, {len(fs.streams)} streams, {len(model.variables)} variables "
             f"({len(model.parameters)} fixed), {model.n_equations} equations"]
    lines.append("")
    lines.append(f"{'unit':<28}{'unknowns':>10}{'equations':>11}{'balance':>9}")
    for name, (n_x, n_g) in unit_degrees_of_freedom(model).items():
        if name.startswith(IMPLICIT_OUTLET_PREFIX) and n_x == n_g == 0:
            continue
        lines.append(f"{name:<28}{n_x:>10}{n_g:>11}{n_x - n_g:>+9}")
    lines.append("(a source's unknowns are the free variables of the streams it starts; the balance "
                 "column sums to the overall degrees of freedom)")
    report = analyse(model)
    ok = model.n_unknowns == model.n_equations and report.structurally_sound
    lines.append("")
    lines.append(f"degrees of freedom: {model.n_unknowns - model.n_equations:+d} "
                 f"({model.n_unknowns} unknowns, {model.n_equations} equations)")
    if ok:
        lines.append("ready to solve: the specification is square and structurally sound")
    else:
        lines.append(describe_imbalance(model, report))
    return "\n".join(lines), ok


__all__ = ["check_report", "unit_degrees_of_freedom", "SpecificationError"]
