"""Exports of a solution: the stream table, the unit table and the key figures as CSV, XLSX, JSON and pandas.

One description of the three tables (`tables`) feeds every format, so a
column means the same thing in a spreadsheet, a CSV file, the JSON export, a
pandas DataFrame, the HTML report and a notebook. Each column carries its
unit of measure, written into the header as ``flow [kg/h]``. Values are in
the display units of the terminal report (kg/h, °C, kPa, kW, %) unless
``si=True`` asks for SI (kg/s, K, Pa, W, -).

Nothing that exists is overwritten unless ``overwrite=True``: every target is
checked before the first byte is written.

XLSX needs ``openpyxl`` and DataFrames need ``pandas``; both come with the
optional ``report`` extra (``pip install 'balance[report]'``).

Examples
--------
>>> from balance.report.exports import Column
>>> Column("flow", "kg/h", "mass_flow").header
'flow [kg/h]'
>>> Column("stream", "", None).header
'stream'
"""

from __future__ import annotations

import csv
import json
import math
import os
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from balance import __version__
from balance.analysis.key_figures import key_figures
from balance.errors import InputError
from balance.flowsheet.graph import IMPLICIT_OUTLET_PREFIX
from balance.quantities import KINDS, convert, display_unit

__all__ = ["Column", "Table", "stream_table", "unit_table", "key_figure_table", "tables",
           "write_csv", "write_xlsx", "write_json", "to_json_data", "to_frame", "to_frames",
           "TABLE_FILES", "JSON_LAYOUT"]

#: The layout name written into the JSON export.
JSON_LAYOUT = "balance-tables/1"
#: File names of the CSV export, by table.
TABLE_FILES = {"streams": "streams.csv", "units": "units.csv", "key_figures": "key_figures.csv"}
#: Sheet names of the XLSX export, by table.
SHEET_NAMES = {"streams": "streams", "units": "units", "key_figures": "key figures"}

# Derived stream columns (attribute of StreamResult, quantity kind).
_STREAM_DERIVED = (("specific_enthalpy", "specific_enthalpy"), ("enthalpy_flow", "enthalpy_flow"),
                   ("water_flow", "mass_flow"), ("solids_flow", "mass_flow"))


@dataclass(frozen=True)
class Column:
    """One column of a table.

    Parameters
    ----------
    name : str
        The word used in code and files (``flow``, ``boiling_point_rise``).
    unit : str
        Unit of measure of the values, as written in headers (``kg/h``);
        empty for text and for plain numbers.
    kind : str or None
        Quantity kind (`balance.quantities.KINDS`), None for text columns.
    """

    name: str
    unit: str
    kind: str | None

    @property
    def header(self) -> str:
        """The header with its unit: ``flow [kg/h]``."""
        return f"{self.name} [{self.unit}]" if self.unit else self.name


@dataclass
class Table:
    """A table: named columns with units, rows of values in those units.

    Values are ``str`` (text columns), ``float`` or ``None`` (empty: no such
    variable, or not a finite number).
    """

    name: str
    columns: list[Column]
    rows: list[list[Any]] = field(default_factory=list)

    @property
    def headers(self) -> list[str]:
        return [c.header for c in self.columns]

    def records(self) -> list[dict[str, Any]]:
        """Rows as dicts keyed by column name."""
        return [dict(zip((c.name for c in self.columns), row)) for row in self.rows]

    def column(self, name: str) -> list[Any]:
        """The values of one column, by name."""
        index = [c.name for c in self.columns].index(name)
        return [row[index] for row in self.rows]


def _unit_label(kind: str | None, si: bool) -> str:
    if kind is None or kind not in KINDS:
        return ""
    if not si:
        return display_unit(kind)
    if kind == "humidity_ratio":
        return "kg/kg"
    text = KINDS[kind].si.replace("**", "")
    return text or "-"


def _value(value: Any, kind: str | None, si: bool) -> float | None:
    """A number in the column's unit, or None if missing or not finite."""
    if value is None:
        return None
    number = float(value)
    if not math.isfinite(number):
        return None
    if si or kind is None or kind not in KINDS or kind == "ratio":
        return number
    shown = convert(number, kind)
    return shown if math.isfinite(shown) else None


def _endpoint(name: str) -> str:
    return "(leaves)" if name.startswith(IMPLICIT_OUTLET_PREFIX) else name


def stream_table(solution, si: bool = False) -> Table:
    """Every stream with its variables, enthalpy and component flows.

    Columns: ``stream``, ``from``, ``to`` (``(leaves)`` for a stream leaving
    by an unconnected outlet), ``kind``, ``liquor``, then every variable of
    the stream kinds present (``flow``, ``solids``, ``temperature``,
    ``pressure``, ``humidity``, ...), then ``specific_enthalpy``,
    ``enthalpy_flow``, ``water_flow``, ``solids_flow`` and, where air is
    present, ``dry_air_flow``.
    """
    model = solution.model
    variables: dict[str, str] = {}
    for s in solution.streams.values():
        for var in model.states[s.name].kind.variables:
            variables.setdefault(var.name, var.kind)
    derived = list(_STREAM_DERIVED)
    if any(s.dry_air_flow for s in solution.streams.values()):
        derived.append(("dry_air_flow", "mass_flow"))
    columns = [Column(n, "", None) for n in ("stream", "from", "to", "kind", "liquor")]
    columns += [Column(n, _unit_label(k, si), k) for n, k in variables.items()]
    columns += [Column(n, _unit_label(k, si), k) for n, k in derived]
    rows = []
    for s in solution.streams.values():
        row: list[Any] = [s.name, s.source, _endpoint(s.target), s.kind, s.liquor or ""]
        row += [_value(s.values.get(n), k, si) for n, k in variables.items()]
        row += [_value(getattr(s, n), k, si) for n, k in derived]
        rows.append(row)
    return Table("streams", columns, rows)


def unit_table(solution, si: bool = False) -> Table:
    """Every unit with its quantities and reported figures.

    Columns: ``unit``, ``type``, then each quantity and figure that occurs in
    any unit (a name reused with another kind gets the kind in brackets),
    then ``fixed``: the quantities the specification fixed, separated by
    ``;``. Boundary units without quantities are left out.
    """
    names: dict[tuple[str, str], str] = {}
    for u in solution.units.values():
        for key in list(u.quantities) + list(u.figures):
            kind = u.kinds.get(key, "ratio")
            if (key, kind) not in names:
                taken = key in names.values()
                names[(key, kind)] = f"{key} ({kind})" if taken else key
    columns = [Column("unit", "", None), Column("type", "", None)]
    columns += [Column(label, _unit_label(kind, si), kind) for (key, kind), label in names.items()]
    columns.append(Column("fixed", "", None))
    rows = []
    for u in solution.units.values():
        if u.name.startswith(IMPLICIT_OUTLET_PREFIX) or not (u.quantities or u.figures):
            continue
        row: list[Any] = [u.name, u.type_name]
        for key, kind in names:
            value = u.quantities.get(key, u.figures.get(key)) if u.kinds.get(key, "ratio") == kind else None
            row.append(_value(value, kind, si))
        row.append("; ".join(sorted(u.fixed)))
        rows.append(row)
    return Table("units", columns, rows)


def key_figure_table(solution, si: bool = False) -> Table:
    """The key figures: ``name``, ``label``, ``value``, ``unit`` (one unit per row)."""
    columns = [Column("name", "", None), Column("label", "", None), Column("value", "", None),
               Column("unit", "", None)]
    rows = []
    for fig in key_figures(solution).values():
        rows.append([fig.name, fig.label, _value(fig.value, fig.kind, si), _unit_label(fig.kind, si)])
    return Table("key_figures", columns, rows)


def tables(solution, si: bool = False) -> dict[str, Table]:
    """The three tables by name: ``streams``, ``units``, ``key_figures``."""
    return {"streams": stream_table(solution, si), "units": unit_table(solution, si),
            "key_figures": key_figure_table(solution, si)}


# ---------------------------------------------------------------------------
# writing files


def _check_new(paths: list[Path], overwrite: bool, key: str) -> None:
    """Refuse, before anything is written, if a target exists and overwrite is off."""
    existing = [str(p) for p in paths if p.exists()]
    if existing and not overwrite:
        raise InputError(f"exists already: {', '.join(existing)}; choose another name or pass --overwrite",
                         key=key)


def write_csv(solution, directory: str | os.PathLike, *, si: bool = False,
              overwrite: bool = False) -> list[Path]:
    """Write ``streams.csv``, ``units.csv`` and ``key_figures.csv`` into a folder.

    The folder is created if needed. The first row holds the headers with
    units; numbers are written in full precision (``repr``), empty cells
    where a stream or unit has no such variable.

    Returns
    -------
    list of pathlib.Path
        The files written.

    Raises
    ------
    InputError
        If one of the files exists and ``overwrite`` is False (nothing is
        written then).
    """
    folder = Path(directory)
    if folder.exists() and not folder.is_dir():
        raise InputError("is a file, not a folder", file=str(folder), key="--csv")
    built = tables(solution, si)
    paths = [folder / TABLE_FILES[name] for name in built]
    _check_new(paths, overwrite, "--csv")
    folder.mkdir(parents=True, exist_ok=True)
    for path, table in zip(paths, built.values()):
        with open(path, "w", newline="", encoding="utf-8") as handle:
            writer = csv.writer(handle)
            writer.writerow(table.headers)
            for row in table.rows:
                writer.writerow(["" if v is None else (repr(v) if isinstance(v, float) else v) for v in row])
    return paths


def write_xlsx(solution, path: str | os.PathLike, *, si: bool = False, overwrite: bool = False) -> Path:
    """Write one workbook: a sheet per table (``streams``, ``units``, ``key figures``) and ``about``.

    Headers carry the units; the ``about`` sheet names the flowsheet, the
    solve status and the program version, so a spreadsheet of a failed
    solve is never taken for an answer.

    Raises
    ------
    InputError
        If the file exists and ``overwrite`` is False, or openpyxl is missing.
    """
    target = Path(path)
    _check_new([target], overwrite, "--xlsx")
    try:
        from openpyxl import Workbook
        from openpyxl.styles import Font
    except ImportError:
        raise InputError("writing XLSX needs openpyxl", key="--xlsx",
                         hint="pip install 'balance[report]'") from None
    built = tables(solution, si)
    book = Workbook()
    about = book.active
    about.title = "about"
    fs = solution.flowsheet
    for row in (("flowsheet", fs.title or ""), ("description", fs.description or ""),
                ("file", fs.file or ""), ("status", solution.status),
                ("converged", "yes" if solution.converged else "NO: these numbers are not a solution"),
                ("units", "SI" if si else "display units, given in each header"),
                ("written by", f"balance {__version__}")):
        about.append(list(row))
    about.column_dimensions["A"].width = 14
    about.column_dimensions["B"].width = 70
    bold = Font(bold=True)
    for name, table in built.items():
        sheet = book.create_sheet(SHEET_NAMES[name])
        sheet.append(table.headers)
        for cell in sheet[1]:
            cell.font = bold
        for row in table.rows:
            sheet.append(row)
        sheet.freeze_panes = "B2"
        for index, column in enumerate(table.columns, start=1):
            width = max([len(column.header)] + [len(str(r[index - 1])) for r in table.rows
                                                if isinstance(r[index - 1], str)])
            sheet.column_dimensions[sheet.cell(1, index).column_letter].width = min(max(width + 2, 10), 60)
    target.parent.mkdir(parents=True, exist_ok=True)
    book.save(target)
    return target


def to_json_data(solution, si: bool = False) -> dict:
    """The three tables as plain data (the layout of `write_json`)::

        {"layout": "balance-tables/1", "flowsheet": {...}, "converged": bool, "status": str,
         "units_of_measure": "display" | "SI",
         "tables": {"streams": {"columns": [{"name", "unit", "header"}], "rows": [{name: value}]},
                    "units": ..., "key_figures": ...}}

    Numbers are floats in the column's unit; a missing or non-finite value is null.
    """
    fs = solution.flowsheet
    return {
        "layout": JSON_LAYOUT,
        "flowsheet": {"title": fs.title, "description": fs.description, "file": fs.file},
        "converged": bool(solution.converged),
        "status": solution.status,
        "units_of_measure": "SI" if si else "display",
        "tables": {name: {"columns": [{"name": c.name, "unit": c.unit, "header": c.header}
                                      for c in table.columns],
                          "rows": table.records()}
                   for name, table in tables(solution, si).items()},
    }


def write_json(solution, path: str | os.PathLike, *, si: bool = False, overwrite: bool = False) -> Path:
    """Write the three tables as JSON (`to_json_data`); refuses to overwrite unless asked."""
    target = Path(path)
    _check_new([target], overwrite, "--json")
    text = json.dumps(to_json_data(solution, si), indent=2, ensure_ascii=False, allow_nan=False)
    target.parent.mkdir(parents=True, exist_ok=True)
    target.write_text(text + "\n", encoding="utf-8")
    return target


# ---------------------------------------------------------------------------
# pandas


def to_frame(table: Table):
    """A `Table` as a pandas DataFrame: headers with units as column labels,
    the first column as the index; ``frame.attrs["units"]`` maps each header
    to its unit."""
    try:
        import pandas as pd
    except ImportError:
        raise InputError("DataFrames need pandas", hint="pip install 'balance[report]'") from None
    headers = table.headers
    frame = pd.DataFrame(table.rows, columns=headers)
    frame = frame.set_index(headers[0])
    frame.attrs["units"] = {c.header: c.unit for c in table.columns}
    frame.attrs["table"] = table.name
    return frame


def to_frames(solution, si: bool = False) -> dict:
    """The stream table, unit table and key figures as pandas DataFrames.

    Returns
    -------
    dict
        ``{"streams": DataFrame, "units": DataFrame, "key_figures": DataFrame}``,
        indexed by stream, unit and key-figure name.
    """
    return {name: to_frame(table) for name, table in tables(solution, si).items()}
