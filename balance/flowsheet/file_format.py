"""The flowsheet file: a TOML file read into a `Flowsheet`, with every error located.

Layout (see docs/file-format.md for the full description)::

    [flowsheet]
    title = "..."
    description = "..."
    site_pressure = "101.325 kPa"      # or site_altitude = "350 m"

    [liquors.concentrate]              # optional: user liquors
    base = "skim_milk"

    [units.E1]
    type = "effect"
    U = "2200 W/m2/K"                  # a quantity: fixed
    area = "solve"                     # explicitly solved
    pressure = { guess = "40 kPa" }    # solved, starting from a guess

    [streams]
    S1 = "feed.out -> E1.liquor_in"

    [specification]
    fix = { "E3.pressure" = "15 kPa" }
    free = ["feed.flow"]
    same = [["E1.area", "E2.area", "E3.area"]]

A value is *fixed* when given as a quantity, *solved* when given as
``"solve"``, and solved from a starting value when given as
``{ guess = ... }``.
"""

from __future__ import annotations

import os
from typing import Any

try:
    import tomllib
except ModuleNotFoundError:  # Python < 3.11
    import tomli as tomllib

from balance import quantities
from balance.errors import BalanceError, InputError
from balance.flowsheet.graph import Flowsheet
from balance.properties.liquors import builtin_liquor, liquor_from_table
from balance.unitops import unit_type
from balance.unitops.streams import STREAM_KINDS

SOLVE_WORDS = ("solve", "free")
TOP_LEVEL = ("flowsheet", "liquors", "units", "streams", "specification", "economics", "limits",
             "variants", "optimise", "capacity", "sweep")


def load(path: str | os.PathLike) -> Flowsheet:
    """Read a flowsheet file.

    Raises
    ------
    InputError
        With the file, unit and key, for anything malformed.
    """
    file = str(path)
    return from_dict(read_toml(file), file=file)


def read_toml(path: str | os.PathLike) -> dict:
    """Parse a TOML file; every failure is an `InputError` naming the file."""
    file = str(path)
    try:
        with open(file, "rb") as handle:
            return tomllib.load(handle)
    except FileNotFoundError:
        raise InputError("file not found", file=file) from None
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"not valid TOML: {exc}", file=file) from None
    except OSError as exc:
        raise InputError(f"cannot read the file: {exc.strerror}", file=file) from None


def from_dict(data: dict, file: str | None = None) -> Flowsheet:
    """Build a flowsheet from the parsed contents of a file."""
    for key in data:
        if key not in TOP_LEVEL:
            raise InputError(f"unknown section [{key}]; sections: {', '.join(TOP_LEVEL)}", file=file, key=key)
    head = _table(data.get("flowsheet", {}), file, "flowsheet")
    for key in head:
        if key not in ("title", "description", "site_pressure", "site_altitude"):
            raise InputError("unknown key in [flowsheet]; keys: title, description, site_pressure, "
                             "site_altitude", file=file, key=key)
    fs = Flowsheet(str(head.get("title", "")), str(head.get("description", "")), file=file)
    if "site_pressure" in head:
        fs.site["pressure"] = quantities.parse(head["site_pressure"], "pressure", file=file, key="site_pressure")
    elif "site_altitude" in head:
        from balance.properties import humid_air
        altitude = quantities.parse(head["site_altitude"], "length", file=file, key="site_altitude")
        fs.site["pressure"] = float(humid_air.pressure_at_altitude(altitude))
    for key in ("economics", "limits", "variants", "optimise", "capacity", "sweep"):
        if key in data:
            fs.extras[key] = data[key]

    for name, table in _table(data.get("liquors", {}), file, "liquors").items():
        fs.liquors[name] = liquor_from_table(name, _table(table, file, f"liquors.{name}"), file=file)

    units = _table(data.get("units", {}), file, "units")
    if not units:
        raise InputError("no [units.*] tables: a flowsheet needs at least one unit", file=file, key="units")
    for name, table in units.items():
        build_unit(fs, name, _table(table, file, f"units.{name}"))

    for name, text in _table(data.get("streams", {}), file, "streams").items():
        if not isinstance(text, str) or "->" not in text:
            raise InputError(f"expected \"unit.port -> unit.port\", got {text!r}", file=file, key=f"streams.{name}")
        source, target = (part.strip() for part in text.split("->", 1))
        fs.connect(source, target, name=name)

    spec = _table(data.get("specification", {}), file, "specification")
    for key in spec:
        if key not in ("fix", "free", "same", "guess"):
            raise InputError("unknown key in [specification]; keys: fix, free, same, guess", file=file, key=key)
    for path, value in _table(spec.get("fix", {}), file, "specification.fix").items():
        fs.fix(path, parse_path_value(fs, path, value))
    for path, value in _table(spec.get("guess", {}), file, "specification.guess").items():
        fs.guesses[path] = parse_path_value(fs, path, value)
    free = spec.get("free", [])
    if not isinstance(free, list) or not all(isinstance(p, str) for p in free):
        raise InputError("expected a list of variable names", file=file, key="specification.free")
    for path in free:
        fs.free(path)
    same = spec.get("same", [])
    if not isinstance(same, list) or not all(isinstance(g, list) for g in same):
        raise InputError("expected a list of lists of variable names, e.g. [[\"E1.area\", \"E2.area\"]]",
                         file=file, key="specification.same")
    for group in same:
        fs.make_equal(*group)

    _resolve_liquors(fs)
    return fs


def _table(value: Any, file: str | None, key: str) -> dict:
    if not isinstance(value, dict):
        raise InputError(f"expected a table, got {type(value).__name__}", file=file, key=key)
    return value


def _resolve_liquors(fs: Flowsheet) -> None:
    for name, unit in fs.units.items():
        if unit.type_name == "feed":
            liquor = unit.setting("liquor")
            if liquor not in fs.liquors:
                try:
                    fs.liquors[liquor] = builtin_liquor(liquor)
                except BalanceError as exc:
                    raise InputError(f"unknown liquor {liquor!r}: not in [liquors] and not built in ({exc.message})",
                                     file=fs.file, unit=name, key="liquor") from None


def kind_of_path(fs: Flowsheet, path: str) -> str:
    """The quantity kind of a variable path (for parsing its value)."""
    owner, _, var = path.rpartition(".")
    if owner in fs.graph:
        unit = fs.unit(owner)
        for q in unit.quantities():
            if q.name == var:
                return q.kind
        aliases = unit.aliases()
        if var in aliases:
            port_name, stream_var = aliases[var]
            return _stream_variable_kind(fs, unit, port_name, stream_var, path)
        raise InputError(f"unit '{owner}' has no quantity '{var}'; quantities: "
                         f"{', '.join([q.name for q in unit.quantities()] + list(aliases)) or 'none'}",
                         file=fs.file, unit=owner, key=var)
    unit_name, _, port_name = owner.rpartition(".")
    if unit_name in fs.graph:
        unit = fs.unit(unit_name)
        return _stream_variable_kind(fs, unit, port_name, var, path)
    for stream in fs.streams:
        if stream.name == owner:
            return _kind_variable(stream.kind, var, fs, path)
    raise InputError(f"'{path}' names no unit, port or stream of this flowsheet", file=fs.file, key=path)


def _stream_variable_kind(fs, unit, port_name, var, path):
    port = unit.port_by_name(port_name)
    return _kind_variable(port.kind, var, fs, path)


def _kind_variable(kind_name, var, fs, path):
    if kind_name == "any":
        return {"flow": "mass_flow", "temperature": "temperature", "pressure": "pressure",
                "solids": "fraction"}.get(var, "ratio")
    kind = STREAM_KINDS[kind_name]
    try:
        return kind.variable(var).kind
    except KeyError:
        raise InputError(f"a {kind_name} stream has no '{var}'; it has {', '.join(kind.variable_names)}",
                         file=fs.file, key=path) from None


def parse_path_value(fs: Flowsheet, path: str, value: Any, bare_is_si: bool = False) -> float:
    """Parse a value given for a variable path into SI.

    A value outside the variable's physical bounds (`QuantitySpec` or stream
    variable ``lower``/``upper``, such as solids above 100 %) is refused with
    an `InputError` naming the file, unit and key.
    """
    unit = path.split(".", 1)[0] if path.split(".", 1)[0] in fs.graph else None
    kind = kind_of_path(fs, path)
    number = quantities.parse(value, kind, file=fs.file, unit=unit, key=path, bare_is_si=bare_is_si)
    bounds = _physical_bounds(fs, path)
    if bounds is not None and not bounds[0] <= number <= bounds[1]:
        shown = [f"{quantities.convert(b, kind):.6g}" for b in bounds]
        limits = (f"{shown[0]} to {shown[1]}" if abs(bounds[1]) < 1e29 else f"at least {shown[0]}")
        raise InputError(f"{value!r} is outside the physical range of this variable, {limits} "
                         f"{quantities.display_unit(kind)}", file=fs.file, unit=unit, key=path)
    return number


def _physical_bounds(fs: Flowsheet, path: str) -> tuple[float, float] | None:
    """(lower, upper) in SI of the variable a path names, or None where unknown."""
    owner, _, var = path.rpartition(".")
    if owner in fs.graph:
        unit = fs.unit(owner)
        for q in unit.quantities():
            if q.name == var:
                return q.lower, q.upper
        if var not in unit.aliases():
            return None
        port_name, var = unit.aliases()[var]
        kind = unit.port_by_name(port_name).kind
    else:
        unit_name, _, port_name = owner.rpartition(".")
        if unit_name in fs.graph:
            kind = fs.unit(unit_name).port_by_name(port_name).kind
        else:
            kind = next((s.kind for s in fs.streams if s.name == owner), None)
    stream_kind = STREAM_KINDS.get(kind)
    if stream_kind is None or var not in stream_kind.variable_names:
        return None
    variable = stream_kind.variable(var)
    return variable.lower, variable.upper


def build_unit(fs: Flowsheet, name: str, table: dict, bare_is_si: bool = False) -> Any:
    """Create one unit from its table and record what it fixes.

    ``bare_is_si`` accepts bare numbers as SI values (the Python API); a
    file's values always carry units.
    """
    file = fs.file
    if "type" not in table:
        raise InputError("missing key 'type' (what the unit is)", file=file, unit=name, key="type")
    cls = unit_type(table["type"], file=file, unit=name)
    settings_spec = {s.name: s for s in cls.settings()}
    settings: dict[str, Any] = {}
    rest: dict[str, Any] = {}
    for key, value in table.items():
        if key in ("type", "label", "description"):
            continue
        if key in settings_spec:
            settings[key] = _parse_setting(settings_spec[key], value, file, name, bare_is_si)
        else:
            rest[key] = value
    if "site_pressure" in settings_spec and "site_pressure" not in settings:
        settings["site_pressure"] = fs.site["pressure"]   # air units: the flowsheet's barometric pressure
    unit = cls(name, settings, file=file)
    fs.add_unit(unit)
    valid = [q.name for q in unit.quantities()] + list(unit.aliases())
    for key, value in rest.items():
        if key not in valid:
            raise InputError(f"unknown key for a unit of type {cls.type_name!r}; valid keys: "
                             f"{', '.join(sorted(set(valid) | set(settings_spec)))}",
                             file=file, unit=name, key=key)
        path = f"{name}.{key}"
        fs.given_keys[name].add(key)
        if isinstance(value, str) and value.strip().lower() in SOLVE_WORDS:
            fs.free(path)
        elif isinstance(value, dict):
            if set(value) != {"guess"}:
                raise InputError("a table value takes only 'guess', e.g. { guess = \"40 kPa\" }",
                                 file=file, unit=name, key=key)
            fs.free(path)
            fs.guesses[path] = parse_path_value(fs, path, value["guess"], bare_is_si)
        else:
            fs.fix(path, parse_path_value(fs, path, value, bare_is_si))
    return unit


def _parse_setting(spec, value, file, unit_name, bare_is_si=False):
    if spec.kind in quantities.KINDS:
        return quantities.parse(value, spec.kind, file=file, unit=unit_name, key=spec.name, bare_is_si=bare_is_si)
    if spec.kind == "integer":
        if not isinstance(value, int) or isinstance(value, bool):
            raise InputError(f"expected a whole number, got {value!r}", file=file, unit=unit_name, key=spec.name)
        return value
    if spec.kind == "text":
        if not isinstance(value, str):
            raise InputError(f"expected text, got {value!r}", file=file, unit=unit_name, key=spec.name)
        return value
    if spec.kind == "flag":
        if not isinstance(value, bool):
            raise InputError(f"expected true or false, got {value!r}", file=file, unit=unit_name, key=spec.name)
        return value
    return value
