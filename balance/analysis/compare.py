"""Comparing flowsheet variants side by side, per tonne of water evaporated and per tonne of product.

A *variant* is a flowsheet with a name. Variants come from several files
(each file is one variant, named after the file), or from one base file
with a ``[variants]`` table: each entry names a variant and says how it
differs from the base::

    [variants.four_effects]
    title = "Four effects"                       # optional; default "<base title>: <name>"
    description = "..."
    remove_units = ["concentrate"]               # and every stream touching them
    remove_streams = ["V3"]
    units.E4 = { type = "effect", U = "1400 W/m2/K", pressure = "12 kPa" }   # add, or change keys
    streams.V3 = "E3.vapour_out -> E4.heating_in"                            # add or replace
    fix = { "steam.pressure" = "60 kPa" }        # fix (overrides the base's fix or free)
    free = ["E3.pressure"]                       # free (overrides the base's fix or value)
    guess = { "E4.pressure" = "15 kPa" }
    same = [["E1.area", "E2.area", "E3.area", "E4.area"]]   # replaces the base's groups
    economics = { steam_price = "45 / t" }       # merged into the base's [economics]
    flowsheet = { site_pressure = "95 kPa" }     # merged into [flowsheet]

Rules: removals come first, then units, streams and the specification. A
unit table for an existing unit changes the keys it gives (a different
``type`` replaces the unit); a new stream that starts or ends at a port an
existing stream already uses replaces that stream. Removing a unit removes
the streams and the specification entries that name it. Every change is
recorded in `Variant.changes`.

`compare` solves every variant and returns a `Comparison`: one row per
figure (`ROWS`), one column per variant, the differences to the base (the
first variant), as terminal text (`Comparison.text`), CSV (`to_csv`) and
JSON (`to_json`). A variant that fails to load stops the comparison with an
error naming the file, the variant and the key; a variant that fails to
solve is kept, marked as failed, with no figures.
"""

from __future__ import annotations

import copy
import csv
import io
import json
import math
import os
import time
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Callable

from balance.analysis.key_figures import key_figures
from balance.errors import BalanceError, InputError
from balance.flowsheet.file_format import from_dict, read_toml
from balance.quantities import convert, display_unit, format_number

LAYOUT_VERSION = "balance-comparison/1"

VARIANT_KEYS = ("title", "description", "remove_units", "remove_streams", "units", "streams", "fix", "free",
                "guess", "same", "economics", "flowsheet")


# ---------------------------------------------------------------------------
# Variants


@dataclass
class Variant:
    """A named flowsheet to compare.

    Attributes
    ----------
    name : str
        Column heading (the file's stem, or ``<stem>/<variant>``).
    flowsheet : Flowsheet
    file : str
        The file it comes from.
    changes : list of str
        How it differs from its base file (empty for a base).
    data : dict
        The file contents it was built from (after the variant's changes),
        so that it can be rebuilt (for timing from cold).
    """

    name: str
    flowsheet: Any
    file: str
    changes: list[str] = field(default_factory=list)
    data: dict = field(default_factory=dict, repr=False)

    def rebuild(self):
        """A fresh `Flowsheet` of this variant (nothing compiled or solved yet)."""
        return from_dict(copy.deepcopy(self.data), file=self.file)


def _read(path: str) -> dict:
    return read_toml(path)


def _ends(text: str) -> list[tuple[str, str]]:
    """(unit, port) of both ends of a stream text ``"a.out -> b.in"``."""
    if not isinstance(text, str) or "->" not in text:
        return []
    return [tuple(part.strip().rsplit(".", 1)) if "." in part else (part.strip(), "")
            for part in text.split("->", 1)]


def _names_unit(path: str, unit: str) -> bool:
    return path == unit or path.startswith(unit + ".")


def apply_variant(base: dict, name: str, table: dict, file: str | None = None) -> tuple[dict, list[str]]:
    """The file contents of a variant: ``base`` changed as ``table`` says.

    Parameters
    ----------
    base : dict
        The parsed base file (left unchanged).
    name : str
        The variant's name, for messages.
    table : dict
        The ``[variants.<name>]`` table.
    file : str, optional
        For messages.

    Returns
    -------
    data : dict
        Contents to pass to `~balance.flowsheet.file_format.from_dict`.
    changes : list of str
        What was changed, in words.

    Raises
    ------
    InputError
        Naming the file and the key ``variants.<name>.<key>``.

    Examples
    --------
    >>> base = {"units": {"E1": {"type": "effect", "U": "2 kW/m2/K"}},
    ...         "streams": {}, "specification": {"free": ["E1.U"]}}
    >>> data, changes = apply_variant(base, "v", {"fix": {"E1.U": "3 kW/m2/K"}})
    >>> data["specification"]
    {'free': [], 'fix': {'E1.U': '3 kW/m2/K'}}
    >>> changes
    ['fixed E1.U = 3 kW/m2/K']
    """
    where = f"variants.{name}"
    if not isinstance(table, dict):
        raise InputError("expected a table", file=file, key=where)
    for key in table:
        if key not in VARIANT_KEYS:
            raise InputError(f"unknown key in a variant; keys: {', '.join(VARIANT_KEYS)}", file=file,
                             key=f"{where}.{key}")
    data = copy.deepcopy(base)
    data.pop("variants", None)
    units = data.setdefault("units", {})
    streams = data.setdefault("streams", {})
    spec = data.setdefault("specification", {})
    changes: list[str] = []

    def names(key: str) -> list[str]:
        value = table.get(key, [])
        if not isinstance(value, list) or not all(isinstance(v, str) for v in value):
            raise InputError("expected a list of names", file=file, key=f"{where}.{key}")
        return value

    def drop_from_spec(predicate: Callable[[str], bool]) -> None:
        for part in ("fix", "guess"):
            for path in [p for p in spec.get(part, {}) if predicate(p)]:
                del spec[part][path]
        if "free" in spec:
            spec["free"] = [p for p in spec["free"] if not predicate(p)]
        if "same" in spec:
            groups = [[p for p in g if not predicate(p)] for g in spec["same"]]
            spec["same"] = [g for g in groups if len(g) >= 2]

    for unit in names("remove_units"):
        if unit not in units:
            raise InputError(f"no unit '{unit}' to remove; units: {', '.join(units)}", file=file,
                             key=f"{where}.remove_units")
        del units[unit]
        changes.append(f"removed unit {unit}")
        for sname, text in list(streams.items()):
            if any(end[0] == unit for end in _ends(text)):
                del streams[sname]
                changes.append(f"removed stream {sname}")
        drop_from_spec(lambda path, unit=unit: _names_unit(path, unit))
    for sname in names("remove_streams"):
        if sname not in streams:
            raise InputError(f"no stream '{sname}' to remove", file=file, key=f"{where}.remove_streams")
        del streams[sname]
        changes.append(f"removed stream {sname}")
        drop_from_spec(lambda path, sname=sname: _names_unit(path, sname))

    new_units = table.get("units", {})
    if not isinstance(new_units, dict):
        raise InputError("expected a table of unit tables", file=file, key=f"{where}.units")
    for uname, utable in new_units.items():
        if not isinstance(utable, dict):
            raise InputError("expected a unit table", file=file, key=f"{where}.units.{uname}")
        old = units.get(uname)
        if old is not None and utable.get("type", old.get("type")) == old.get("type"):
            old.update(utable)
            changes.append(f"changed unit {uname}: " + ", ".join(f"{k} = {v}" for k, v in utable.items()))
        else:
            if "type" not in utable:
                raise InputError("a new unit needs a 'type'", file=file, key=f"{where}.units.{uname}")
            units[uname] = dict(utable)
            changes.append(f"{'replaced' if old is not None else 'added'} unit {uname} ({utable['type']})")

    new_streams = table.get("streams", {})
    if not isinstance(new_streams, dict):
        raise InputError("expected a table of streams", file=file, key=f"{where}.streams")
    for sname, text in new_streams.items():
        ends = _ends(text)
        if len(ends) != 2:
            raise InputError(f"expected \"unit.port -> unit.port\", got {text!r}", file=file,
                             key=f"{where}.streams.{sname}")
        for other, other_text in list(streams.items()):
            if other == sname:
                continue
            other_ends = _ends(other_text)
            if other_ends and (other_ends[0] == ends[0] or other_ends[1] == ends[1]):
                del streams[other]
                changes.append(f"removed stream {other} (its port is taken by {sname})")
        changes.append(f"{'replaced' if sname in streams else 'added'} stream {sname} = {text}")
        streams[sname] = text

    fixes = table.get("fix", {})
    if not isinstance(fixes, dict):
        raise InputError("expected a table of path = value", file=file, key=f"{where}.fix")
    for path, value in fixes.items():
        spec.setdefault("fix", {})[path] = value
        if path in spec.get("free", []):
            spec["free"] = [p for p in spec["free"] if p != path]
        changes.append(f"fixed {path} = {value}")
    for path in names("free"):
        spec.get("fix", {}).pop(path, None)
        spec.setdefault("free", [])
        if path not in spec["free"]:
            spec["free"].append(path)
        changes.append(f"freed {path}")
    guesses = table.get("guess", {})
    if not isinstance(guesses, dict):
        raise InputError("expected a table of path = value", file=file, key=f"{where}.guess")
    for path, value in guesses.items():
        spec.setdefault("guess", {})[path] = value
        changes.append(f"guess {path} = {value}")
    if "same" in table:
        spec["same"] = table["same"]
        changes.append("equal groups: " + "; ".join(" = ".join(g) for g in table["same"]
                                                    if isinstance(g, list)))
    for section in ("economics", "flowsheet"):
        if section in table:
            if not isinstance(table[section], dict):
                raise InputError("expected a table", file=file, key=f"{where}.{section}")
            data.setdefault(section, {}).update(table[section])
            changes.append(f"{section}: " + ", ".join(f"{k} = {v}" for k, v in table[section].items()))
    head = data.setdefault("flowsheet", {})
    head["title"] = table.get("title", f"{head.get('title', '')}: {name}".lstrip(": "))
    if "description" in table:
        head["description"] = table["description"]
    return data, changes


def _build(data: dict, file: str, variant: str | None) -> Any:
    try:
        return from_dict(copy.deepcopy(data), file=file)
    except BalanceError as exc:
        if variant is None:
            raise
        raise type(exc)(f"in variant '{variant}': {exc.message}", file=exc.file or file, unit=exc.unit,
                        key=exc.key, hint=exc.hint) from None


def load_variants(paths: list[str | os.PathLike]) -> list[Variant]:
    """Variants from files: each file is one, and its ``[variants]`` table adds more.

    With one file its variants are named by their keys; with several, every
    name is prefixed by the file's stem (``five_effect/cheap_power``). The
    first file's base is the base of the comparison.
    """
    paths = [str(p) for p in paths]
    if not paths:
        raise InputError("no flowsheet files to compare")
    out: list[Variant] = []
    taken: set[str] = set()

    def unique(name: str) -> str:
        candidate, i = name, 2
        while candidate in taken:
            candidate, i = f"{name}_{i}", i + 1
        taken.add(candidate)
        return candidate

    for path in paths:
        raw = _read(path)
        stem = Path(path).stem
        base_data = {k: v for k, v in raw.items() if k != "variants"}
        out.append(Variant(unique(stem), _build(base_data, path, None), path, [], base_data))
        table = raw.get("variants", {})
        if not isinstance(table, dict):
            raise InputError("expected [variants.<name>] tables", file=path, key="variants")
        for vname, vtable in table.items():
            data, changes = apply_variant(raw, vname, vtable, file=path)
            label = vname if len(paths) == 1 else f"{stem}/{vname}"
            out.append(Variant(unique(label), _build(data, path, vname), path, changes, data))
    return out


# ---------------------------------------------------------------------------
# Rows of the comparison


@dataclass(frozen=True)
class Row:
    """One line of the comparison.

    Attributes
    ----------
    name : str
        Key in CSV and JSON.
    label : str
    unit : str
        Display unit.
    value : callable
        ``f(figures: dict name -> SI value) -> float | None`` in display units.
    relative : bool
        Whether a relative difference means something (not for temperatures).
    """

    name: str
    label: str
    unit: str
    value: Callable[[dict], float | None]
    relative: bool = True


def _fig(name: str, kind: str | None = None) -> Callable[[dict], float | None]:
    def get(figs: dict) -> float | None:
        value = figs.get(name)
        if value is None:
            return None
        return convert(value, kind) if kind else value
    return get


def _ratio(num: str, den: str, scale: float = 1.0) -> Callable[[dict], float | None]:
    def get(figs: dict) -> float | None:
        a, b = figs.get(num), figs.get(den)
        if a is None or b is None or not b:
            return None
        return scale * a / b
    return get


def _electricity_per_product(figs: dict) -> float | None:
    per_water, water, product = (figs.get(k) for k in ("electricity_per_water", "water_evaporated", "product_flow"))
    if per_water is None or water is None or not product:
        return None
    return per_water * water / product


ROWS: tuple[Row, ...] = (
    Row("water_evaporated", "water evaporated", display_unit("mass_flow"), _fig("water_evaporated", "mass_flow")),
    Row("product_flow", "product", display_unit("mass_flow"), _fig("product_flow", "mass_flow")),
    Row("product_solids", "product solids", display_unit("fraction"), _fig("product_solids", "fraction")),
    Row("live_steam", "live steam (motive steam included)", display_unit("mass_flow"),
        _fig("live_steam", "mass_flow")),
    Row("motive_steam", "of which motive steam of thermocompressors", display_unit("mass_flow"),
        _fig("motive_steam", "mass_flow")),
    Row("steam_economy", "steam economy", "kg/kg", _fig("steam_economy")),
    Row("steam_per_water", "live steam per tonne of water", "kg/t", _fig("specific_steam")),
    Row("steam_per_product", "live steam per tonne of product", "kg/t", _ratio("live_steam", "product_flow", 1000.0)),
    Row("steam_heat_per_water", "live-steam heat per tonne of water", "kWh/t",
        _ratio("live_steam_heat", "water_evaporated", 1000.0 / 3.6e6)),
    Row("electricity_per_water", "electricity per tonne of water", "kWh/t", _fig("electricity_per_water")),
    Row("electricity_per_product", "electricity per tonne of product", "kWh/t", _electricity_per_product),
    Row("primary_energy_per_water", "primary energy per tonne of water", "kWh/t", _fig("primary_energy_per_water")),
    Row("primary_energy_per_product", "primary energy per tonne of product", "kWh/t",
        _fig("primary_energy_per_product")),
    Row("operating_cost_per_water", "operating cost per tonne of water", "money/t", _fig("operating_cost_per_water")),
    Row("operating_cost_per_product", "operating cost per tonne of product", "money/t",
        _fig("operating_cost_per_product")),
    Row("co2_per_water", "CO2 per tonne of water", "kg/t", _fig("co2_per_water")),
    Row("co2_per_product", "CO2 per tonne of product", "kg/t", _fig("co2_per_product")),
    Row("cooling_water_per_water", "cooling water per tonne of water", "t/t", _fig("cooling_water_per_water")),
    Row("condenser_heat_per_water", "condenser heat per tonne of water", "kWh/t",
        _ratio("condenser_duty", "water_evaporated", 1000.0 / 3.6e6)),
    Row("heating_area", "heating area of the effects", display_unit("area"), _fig("heating_area", "area")),
    Row("area_per_water", "heating area per t/h of water", "m2 h/t",
        _ratio("heating_area", "water_evaporated", 1000.0 / 3600.0)),
    Row("steam_condensate_temperature", "live-steam condensate return", display_unit("temperature"),
        _fig("steam_condensate_temperature", "temperature"), relative=False),
    Row("operating_cost_per_year", "operating cost per year", "money", _fig("operating_cost_per_year")),
    Row("co2_per_year", "CO2 per year", "t", _fig("co2_per_year")),
)


# ---------------------------------------------------------------------------
# Results


@dataclass
class VariantResult:
    """One solved (or failed) variant.

    Attributes
    ----------
    variant : Variant
    solution : Solution or None
        None when the solve raised.
    converged : bool
    status : str
        The solution's status, or the error text.
    figures : dict
        Key figure name -> SI value (empty unless converged).
    values : dict
        Row name -> display value or None (None unless converged).
    seconds : float
        Compile and solve time [s].
    currency : str
    """

    variant: Variant
    solution: Any
    converged: bool
    status: str
    figures: dict
    values: dict
    seconds: float
    currency: str = "money"

    @property
    def name(self) -> str:
        return self.variant.name


def _currency(fs) -> str:
    econ = fs.extras.get("economics") or {}
    return str(econ.get("currency", "money")) if isinstance(econ, dict) else "money"


def solve_variant(variant: Variant, method: str = "auto", range_policy: str = "warn") -> VariantResult:
    """Compile and solve one variant; a failure is recorded, never raised (input errors apart)."""
    from balance.solve.solver import Solver
    started = time.perf_counter()
    fs = variant.flowsheet
    try:
        solution = Solver(fs).solve(method=method, range_policy=range_policy)
    except BalanceError as exc:
        return VariantResult(variant, None, False, f"failed: {exc}", {}, {}, time.perf_counter() - started,
                             _currency(fs))
    except RuntimeError as exc:   # a numerical failure inside CasADi
        return VariantResult(variant, None, False, f"failed in the numerics: {str(exc).splitlines()[0]}", {}, {},
                             time.perf_counter() - started, _currency(fs))
    seconds = time.perf_counter() - started
    figures, values = {}, {}
    if solution.converged:
        figures = {f.name: f.value for f in key_figures(solution).values()}
        for row in ROWS:
            value = row.value(figures)
            values[row.name] = value if value is not None and math.isfinite(value) else None
    return VariantResult(variant, solution, solution.converged, solution.status, figures, values, seconds,
                         _currency(fs))


@dataclass
class Comparison:
    """Variants solved side by side; the first is the base.

    Attributes
    ----------
    results : list of VariantResult
    rows : tuple of Row
        Only rows with a value in at least one variant.
    """

    results: list[VariantResult]
    rows: tuple[Row, ...]

    @property
    def base(self) -> VariantResult:
        return self.results[0]

    @property
    def all_converged(self) -> bool:
        return all(r.converged for r in self.results)

    def difference(self, result: VariantResult, row: Row) -> tuple[float | None, float | None]:
        """(value - base value, relative difference) in display units; None where undefined."""
        value, ref = result.values.get(row.name), self.base.values.get(row.name)
        if value is None or ref is None:
            return None, None
        diff = value - ref
        rel = diff / abs(ref) if row.relative and ref else None
        return diff, rel

    def _unit(self, row: Row) -> str:
        return row.unit.replace("money", self.base.currency)

    # -- text ---------------------------------------------------------------

    def text(self, width: int | None = None) -> str:
        """The side-by-side table for the terminal, with differences to the base.

        With ``width`` (characters), the variants are split into blocks that
        fit, each block repeating the figure, unit and base columns.
        """
        cells = {}   # (row name, variant index) -> text
        for row in self.rows:
            for i, res in enumerate(self.results):
                value = res.values.get(row.name)
                cell = _number(value)
                if i and value is not None:
                    diff, rel = self.difference(res, row)
                    if rel is not None:
                        cell += f" ({100 * rel:+.1f} %)"
                    elif diff is not None:
                        cell += f" ({diff:+.3g})"
                cells[row.name, i] = cell
        lead = [max([len("figure")] + [len(r.label) for r in self.rows]),
                max([len("unit")] + [len(self._unit(r)) for r in self.rows])]
        col = [max([len(res.name)] + [len(cells[r.name, i]) for r in self.rows])
               for i, res in enumerate(self.results)]
        blocks, current = [], []
        used = sum(lead) + 2 + col[0] + 2
        for i in range(1, len(self.results)):
            if current and width and used + col[i] + 2 > width:
                blocks.append(current)
                current, used = [], sum(lead) + 2 + col[0] + 2
            current.append(i)
            used += col[i] + 2
        blocks.append(current)

        out = [f"Comparison of {len(self.results)} variants, per tonne of water evaporated and per tonne "
               f"of product; differences to the base '{self.base.name}' in brackets"]
        for block in blocks:
            index = [0] + block
            widths = lead + [col[i] for i in index]

            def line(texts):
                return "  ".join(str(c).ljust(w) if k < 2 else str(c).rjust(w)
                                 for k, (c, w) in enumerate(zip(texts, widths))).rstrip()

            out += ["", line(["figure", "unit"] + [self.results[i].name for i in index]),
                    line(["-" * w for w in widths])]
            out += [line([row.label, self._unit(row)] + [cells[row.name, i] for i in index]) for row in self.rows]
        out.append("")
        for res in self.results:
            title = res.variant.flowsheet.title
            sol = res.solution
            how = (f"{res.status} by {sol.method} in {sol.iterations} iterations" if sol is not None
                   else res.status)
            out.append(f"{res.name}: {title} ({res.variant.file}); {how}, {res.seconds * 1e3:.0f} ms")
            for change in res.variant.changes:
                out.append(f"    change: {change}")
            if sol is not None:
                for w in sol.warnings:
                    out.append(f"    note: {w}")
                for p in sol.problems:
                    out.append(f"    PROBLEM: {p}")
        return "\n".join(out)

    # -- exports ------------------------------------------------------------

    def to_csv(self) -> str:
        """The table as CSV: figure, label, unit, one column per variant, then differences to the base."""
        buffer = io.StringIO()
        writer = csv.writer(buffer, lineterminator="\n")
        others = self.results[1:]
        writer.writerow(["figure", "label", "unit"] + [r.name for r in self.results]
                        + [f"{r.name} - {self.base.name}" for r in others]
                        + [f"{r.name} vs {self.base.name} [%]" for r in others])
        for row in self.rows:
            diffs = [self.difference(r, row) for r in others]
            writer.writerow([row.name, row.label, self._unit(row)]
                            + [_csv(r.values.get(row.name)) for r in self.results]
                            + [_csv(d) for d, _ in diffs]
                            + [_csv(100 * rel if rel is not None else None) for _, rel in diffs])
        writer.writerow(["converged", "solved and checked", ""] + [str(r.converged).lower() for r in self.results]
                        + [""] * (2 * len(others)))
        return buffer.getvalue()

    def to_dict(self) -> dict:
        """Plain data for JSON (layout ``balance-comparison/1``)."""
        variants = []
        for res in self.results:
            sol = res.solution
            figures = {}
            for row in self.rows:
                diff, rel = self.difference(res, row)
                figures[row.name] = {"label": row.label, "unit": self._unit(row),
                                     "value": res.values.get(row.name),
                                     "difference": diff if res is not self.base else None,
                                     "relative_difference": rel if res is not self.base else None}
            variants.append({
                "name": res.name, "file": res.variant.file, "title": res.variant.flowsheet.title,
                "description": res.variant.flowsheet.description, "changes": list(res.variant.changes),
                "converged": res.converged, "status": res.status,
                "method": sol.method if sol is not None else None,
                "iterations": sol.iterations if sol is not None else None,
                "seconds": res.seconds,
                "warnings": list(sol.warnings) if sol is not None else [],
                "problems": list(sol.problems) if sol is not None else [],
                "figures": figures,
            })
        return {"layout": LAYOUT_VERSION, "base": self.base.name, "currency": self.base.currency,
                "variants": variants}

    def to_json(self, indent: int = 2) -> str:
        return json.dumps(self.to_dict(), indent=indent, ensure_ascii=False, allow_nan=False)


def _number(value: float | None) -> str:
    return format_number(value)


def _csv(value: float | None) -> str:
    return "" if value is None else repr(float(value))


def compare(variants: list[Variant], method: str = "auto", range_policy: str = "warn") -> Comparison:
    """Solve every variant and put them side by side (the first is the base).

    Examples
    --------
    >>> comparison = compare(load_variants(["flowsheets/compare/three_effect.toml"]))  # doctest: +SKIP
    >>> print(comparison.text())                                                      # doctest: +SKIP
    """
    results = [solve_variant(v, method=method, range_policy=range_policy) for v in variants]
    rows = tuple(row for row in ROWS if any(r.values.get(row.name) is not None for r in results))
    return Comparison(results, rows)


def compare_files(paths: list[str | os.PathLike], method: str = "auto", range_policy: str = "warn") -> Comparison:
    """`load_variants` then `compare`."""
    return compare(load_variants(paths), method=method, range_policy=range_policy)


# ---------------------------------------------------------------------------
# Timing (for a benchmark)


@dataclass
class Timing:
    """Seconds to solve one variant from cold (compile, guess, solve) and warm (re-solve from its solution)."""

    name: str
    cold: float
    warm: float
    converged: bool
    warm_iterations: int


def time_variants(variants: list[Variant], repeats: int = 3) -> list[Timing]:
    """Time every variant from cold and warm; the best of ``repeats`` runs of each.

    Cold: build the flowsheet from its file contents, compile, guess and
    solve. Warm: solve the same compiled model again from its own solution,
    as a sweep or optimiser would.
    """
    from balance.solve.solver import Solver
    out = []
    for variant in variants:
        cold, warm = math.inf, math.inf
        converged, warm_iterations = True, 0
        for _ in range(max(repeats, 1)):
            started = time.perf_counter()
            solver = Solver(variant.rebuild())
            solution = solver.solve()
            cold = min(cold, time.perf_counter() - started)
            started = time.perf_counter()
            again = solver.solve(warm=solution)
            warm = min(warm, time.perf_counter() - started)
            converged = converged and solution.converged and again.converged
            warm_iterations = again.iterations
        out.append(Timing(variant.name, cold, warm, converged, warm_iterations))
    return out
