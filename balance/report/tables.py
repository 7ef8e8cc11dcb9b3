"""Plain-text tables of a solution for the terminal: key figures, streams, units, solve record."""

from __future__ import annotations


from balance.analysis.key_figures import key_figures
from balance.flowsheet.graph import IMPLICIT_OUTLET_PREFIX
from balance.quantities import convert, display_unit, format_number
from balance.report.cautions import cautions_for

STREAM_COLUMNS = (("flow", "mass_flow"), ("solids", "fraction"), ("temperature", "temperature"),
                  ("pressure", "pressure"), ("humidity", "humidity_ratio"))

UNIT_COLUMNS = (("duty", "power"), ("area", "area"), ("U", "heat_transfer_coefficient"),
                ("driving_force", "temperature_difference"), ("boiling_point_rise", "temperature_difference"),
                ("pressure", "pressure"), ("boiling_temperature", "temperature"),
                ("evaporation", "mass_flow"), ("lift", "temperature_difference"), ("electrical_power", "power"))


def fmt(value: float | None, kind: str | None = None) -> str:
    """Format a number for a table, converted to the kind's display unit first."""
    if value is not None and kind:
        value = convert(value, kind)
    return format_number(value)


def _table(header: list[str], rows: list[list[str]]) -> str:
    widths = [max(len(str(r[i])) for r in [header] + rows) for i in range(len(header))]
    def line(cells):
        return "  ".join(str(c).ljust(w) if i == 0 else str(c).rjust(w) for i, (c, w) in enumerate(zip(cells, widths)))
    return "\n".join([line(header), line(["-" * w for w in widths])] + [line(r) for r in rows])


def endpoint(name: str) -> str:
    return "(leaves)" if name.startswith(IMPLICIT_OUTLET_PREFIX) else name


def key_figure_table(solution) -> str:
    rows = []
    for fig in key_figures(solution).values():
        unit = display_unit(fig.kind) if fig.kind not in ("ratio",) else ""
        rows.append([fig.label, fmt(fig.value, fig.kind), unit])
    return _table(["key figure", "value", "unit"], rows)


def stream_table(solution) -> str:
    header = ["stream", "from", "to", "kind"] + [f"{n} [{display_unit(k)}]" for n, k in STREAM_COLUMNS] + \
             ["h [kJ/kg]", "H [kW]"]
    rows = []
    for s in solution.streams.values():
        row = [s.name, s.source, endpoint(s.target), s.kind]
        for name, kind in STREAM_COLUMNS:
            row.append(fmt(s.values[name], kind) if name in s.values else "")
        row += [fmt(s.specific_enthalpy / 1e3), fmt(s.enthalpy_flow / 1e3)]
        rows.append(row)
    return _table(header, rows)


def unit_table(solution) -> str:
    header = ["unit", "type"] + [f"{n.replace('_', ' ')} [{display_unit(k)}]" for n, k in UNIT_COLUMNS]
    rows = []
    for u in solution.units.values():
        if u.name.startswith(IMPLICIT_OUTLET_PREFIX) or \
                not any(name in u.quantities or name in u.figures for name, _ in UNIT_COLUMNS):
            continue
        row = [u.name, u.type_name]
        for name, kind in UNIT_COLUMNS:
            value = u.quantities.get(name, u.figures.get(name))
            mark = "*" if name in u.fixed else ""
            row.append(fmt(value, kind) + mark if value is not None else "")
        rows.append(row)
    return _table(header, rows) + "\n(* fixed by the specification)"


def solve_record(solution) -> str:
    lines = [f"solve: {solution.status} by {solution.method} in {solution.iterations} iterations, "
             f"largest scaled residual {solution.residual_norm:.1e}, {solution.seconds * 1e3:.1f} ms"]
    for b in solution.balances.values():
        if b.into or b.out_of:
            kind = "power" if b.name == "energy" else "mass_flow"
            unit = display_unit(kind)
            lines.append(f"  {b.name} balance: in {fmt(b.into, kind)} {unit}, out {fmt(b.out_of, kind)} {unit}, "
                         f"closure {b.closure:.1e}")
    for w in solution.warnings:
        lines.append(f"  note: {w}")
    for p in solution.problems:
        lines.append(f"  PROBLEM: {p}")
    if not solution.converged:
        if not solution.diagnosis:
            for label, value in solution.worst_equations:
                lines.append(f"  residual {value:+.2e}  {label}")
        for line in solution.diagnosis:
            lines.append(f"  {line}")
        for attempt in solution.attempts:
            lines.append(f"  tried {attempt}")
    return "\n".join(lines)


def text_report(solution) -> str:
    """The full terminal report."""
    fs = solution.flowsheet
    parts = [fs.title or (fs.file or "flowsheet")]
    if fs.description:
        parts.append(fs.description)
    parts += ["", key_figure_table(solution), "", "Streams", stream_table(solution), "", "Units",
              unit_table(solution), "", solve_record(solution), ""]
    parts += [f"Caution: {c}" for c in cautions_for(fs)]
    return "\n".join(parts)
