"""The flowsheet graph: unit operations as nodes, streams as edges, plus what the user fixed.

`Flowsheet` wraps a `networkx.MultiDiGraph`. Each node is a unit's name with
its `UnitOperation` object under the ``unit`` attribute; each edge is a
stream keyed by its name, with the ports it joins and its kind. The
flowsheet also keeps the user's specification: the variables fixed (with SI
values), the ones explicitly freed, groups of variables that must be equal,
and initial guesses.

Variables are named by paths:

* ``S3.temperature``: a variable of stream ``S3``;
* ``E2.vapour_out.pressure``: a variable of the stream at a port;
* ``E2.area``: a quantity of unit ``E2``, or a key that stands for a port
  variable (a feed's ``flow``).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import networkx as nx

from balance.errors import InputError, PortError
from balance.unitops import UnitOperation
from balance.unitops.boundaries import Outlet
from balance.unitops.streams import STREAM_KINDS

IMPLICIT_OUTLET_PREFIX = "leaves:"


@dataclass(frozen=True)
class Stream:
    """A stream: an edge from one unit's outlet port to another's inlet port."""

    name: str
    source: str
    source_port: str
    target: str
    target_port: str
    kind: str

    @property
    def leaves_flowsheet(self) -> bool:
        return self.target.startswith(IMPLICIT_OUTLET_PREFIX)


def _split_port(text: str, file: str | None, key: str) -> tuple[str, str]:
    if not isinstance(text, str) or "." not in text:
        raise PortError(f"expected 'unit.port', got {text!r}", file=file, key=key)
    unit, port = text.rsplit(".", 1)
    return unit.strip(), port.strip()


class Flowsheet:
    """A flowsheet of unit operations joined by streams.

    Parameters
    ----------
    title : str
        What the flowsheet models.
    description : str
        The scenario, in a few sentences.
    file : str, optional
        The file it was read from, for messages.

    Examples
    --------
    >>> fs = Flowsheet("single effect")
    >>> _ = fs.add("feed", "feed", liquor="water", flow="2 t/h", solids="0 %", temperature="20 degC")
    >>> sorted(fs.units)
    ['feed']
    """

    def __init__(self, title: str = "", description: str = "", file: str | None = None):
        self.title = title
        self.description = description
        self.file = file
        self.graph = nx.MultiDiGraph()   # read it freely; change it through add_unit and connect
        self._version = 0
        self.liquors: dict[str, Any] = {}
        self.fixed: dict[str, float] = {}
        self.freed: set[str] = set()
        self.same: list[list[str]] = []
        self.guesses: dict[str, float] = {}
        self.given_keys: dict[str, set[str]] = {}
        self.site: dict[str, float] = {"pressure": 101325.0}
        self.extras: dict[str, Any] = {}

    # -- building -----------------------------------------------------------

    @property
    def units(self) -> dict[str, UnitOperation]:
        return {name: data["unit"] for name, data in self.graph.nodes(data=True)}

    def unit(self, name: str) -> UnitOperation:
        try:
            return self.graph.nodes[name]["unit"]
        except KeyError:
            raise InputError(f"no unit '{name}' in the flowsheet; units: {', '.join(sorted(self.units))}",
                             file=self.file, unit=name) from None

    def add_unit(self, unit: UnitOperation) -> UnitOperation:
        """Add a unit operation object."""
        if unit.name in self.graph:
            raise InputError("a unit of this name exists already", file=self.file, unit=unit.name)
        if not unit.name or any(c in unit.name for c in " .>:"):
            raise InputError("unit names must be non-empty and contain no spaces, dots, ':' or '>'",
                             file=self.file, unit=unit.name)
        self.graph.add_node(unit.name, unit=unit)
        self._version = getattr(self, "_version", 0) + 1
        self.given_keys.setdefault(unit.name, set())
        return unit

    def add(self, type_name: str, name: str, **keys: Any) -> UnitOperation:
        """Add a unit by type name, with keys as in a flowsheet file.

        Quantities may be given as strings with units (``"20 t/h"``) or as SI
        floats; see `balance.flowsheet.file_format.apply_unit_keys`.
        """
        from balance.flowsheet.file_format import build_unit  # same layer; avoids a cycle at import
        return build_unit(self, name, dict(type=type_name, **keys), bare_is_si=True)

    def connect(self, source: str, target: str, name: str | None = None) -> str:
        """Join ``source`` ("unit.port", an outlet) to ``target`` (an inlet).

        Returns the stream's name (by default ``"<unit>.<port>"`` of the source).
        """
        key = f"stream {name}" if name else "streams"
        src_unit, src_port = _split_port(source, self.file, key)
        dst_unit, dst_port = _split_port(target, self.file, key)
        name = name or f"{src_unit}.{src_port}"
        for unit_name in (src_unit, dst_unit):
            if unit_name not in self.graph:
                raise PortError(f"stream '{name}' names unit '{unit_name}', which does not exist; "
                                f"units: {', '.join(sorted(self.units))}", file=self.file, unit=unit_name,
                                key=key)
        src = self.unit(src_unit).port_by_name(src_port)
        dst = self.unit(dst_unit).port_by_name(dst_port)
        if src.direction != "out":
            raise PortError(f"port '{src_port}' is an inlet; a stream must start at an outlet",
                            file=self.file, unit=src_unit, key=src_port)
        if dst.direction != "in":
            raise PortError(f"port '{dst_port}' is an outlet; a stream must end at an inlet",
                            file=self.file, unit=dst_unit, key=dst_port)
        if any(s.name == name for s in self.streams):
            raise PortError(f"a stream named '{name}' exists already", file=self.file, key=key)
        for stream in self.streams:
            if (stream.source, stream.source_port) == (src_unit, src_port):
                raise PortError(f"port '{src_port}' is connected twice (streams '{stream.name}' and '{name}')",
                                file=self.file, unit=src_unit, key=src_port)
            if (stream.target, stream.target_port) == (dst_unit, dst_port):
                raise PortError(f"port '{dst_port}' is connected twice (streams '{stream.name}' and '{name}')",
                                file=self.file, unit=dst_unit, key=dst_port)
        kind = src.kind if src.kind != "any" else dst.kind
        if "any" not in (src.kind, dst.kind) and src.kind != dst.kind:
            raise PortError(f"stream '{name}' joins a {src.kind} outlet ({source}) to a {dst.kind} inlet "
                            f"({target})", file=self.file, unit=dst_unit, key=dst_port)
        self._version = getattr(self, "_version", 0) + 1
        self.graph.add_edge(src_unit, dst_unit, key=name, source_port=src_port, target_port=dst_port,
                            kind=kind)
        return name

    def fix(self, path: str, value: float) -> None:
        """Fix a variable at an SI value."""
        self.fixed[path] = float(value)
        self.freed.discard(path)

    def free(self, path: str) -> None:
        """Leave a variable to be solved, overriding a value or default."""
        self.fixed.pop(path, None)
        self.freed.add(path)

    def make_equal(self, *paths: str) -> None:
        """Require the named variables to be equal (e.g. equal effect areas)."""
        if len(paths) < 2:
            raise InputError("'same' needs at least two variables", file=self.file, key="same")
        self.same.append(list(paths))

    # -- reading ------------------------------------------------------------

    @property
    def streams(self) -> list[Stream]:
        """All streams, in the order they were connected (cached until the graph changes)."""
        # changes go through add_unit, connect and complete, which bump the version
        signature = (len(self.graph), getattr(self, "_version", 0))
        if getattr(self, "_streams_cache", (None, None))[0] != signature:
            streams = [Stream(key, u, data["source_port"], v, data["target_port"], data["kind"])
                       for u, v, key, data in self.graph.edges(keys=True, data=True)]
            ports = {}
            for stream in streams:
                ports[(stream.source, stream.source_port)] = stream
                ports[(stream.target, stream.target_port)] = stream
            self._streams_cache = (signature, streams, ports)
        return self._streams_cache[1]

    def stream(self, name: str) -> Stream:
        for stream in self.streams:
            if stream.name == name:
                return stream
        raise InputError(f"no stream '{name}'", file=self.file, key=name)

    def stream_at(self, unit: str, port: str) -> Stream | None:
        """The stream attached to a unit's port, or None."""
        self.streams  # refresh the cache
        return self._streams_cache[2].get((unit, port))

    def complete(self) -> None:
        """Check every required port is connected, end unconnected optional
        outlets in implicit outlets, and resolve ports of kind ``any``.

        Called by the equation layer before it compiles; safe to call twice.
        """
        for name, unit in list(self.units.items()):
            if name.startswith(IMPLICIT_OUTLET_PREFIX):
                continue
            for port in unit.ports():
                if self.stream_at(name, port.name) is not None:
                    continue
                if port.optional and port.direction == "out":
                    sink = Outlet(f"{IMPLICIT_OUTLET_PREFIX}{name}.{port.name}", {"stream": port.kind})
                    self._version = getattr(self, "_version", 0) + 1
                    self.graph.add_node(sink.name, unit=sink)
                    self.graph.add_edge(name, sink.name, key=f"{name}.{port.name}", source_port=port.name,
                                        target_port="in", kind=port.kind)
                elif not port.optional:
                    raise PortError(f"port '{port.name}' ({port.kind} {'inlet' if port.direction == 'in' else 'outlet'})"
                                    f" is not connected", file=self.file, unit=name, key=port.name)
        for stream in self.streams:
            if stream.kind == "any":
                raise PortError(f"stream '{stream.name}' joins two ports that accept any kind; "
                                f"give the outlet a 'stream' kind", file=self.file, unit=stream.target)
            if stream.kind not in STREAM_KINDS:
                raise PortError(f"unknown stream kind {stream.kind!r}", file=self.file, unit=stream.source)

    def assign_liquors(self) -> dict[str, Any]:
        """Which liquor each liquor stream carries, following the graph from
        the feeds. Returns stream name -> Liquor."""
        carried: dict[str, Any] = {}
        for name, unit in self.units.items():
            if unit.type_name == "feed":
                liquor_name = unit.setting("liquor")
                if liquor_name not in self.liquors:
                    from balance.properties.liquors import BUILTIN_LIQUORS, builtin_liquor
                    if liquor_name in BUILTIN_LIQUORS:
                        self.liquors[liquor_name] = builtin_liquor(liquor_name)
                if liquor_name not in self.liquors:
                    raise InputError(f"unknown liquor '{liquor_name}'; defined: "
                                     f"{', '.join(sorted(self.liquors)) or 'none'}",
                                     file=self.file, unit=name, key="liquor")
                for s in self.streams:
                    if s.source == name:
                        carried[s.name] = self.liquors[liquor_name]
        changed = True
        while changed:
            changed = False
            for name, unit in self.units.items():
                incoming = {carried[s.name].name: carried[s.name] for s in self.streams
                            if s.target == name and s.name in carried}
                if len(incoming) > 1:
                    raise InputError(f"liquors {', '.join(sorted(incoming))} meet here; mixing different "
                                     f"liquors is not modelled", file=self.file, unit=name)
                if not incoming:
                    continue
                liquor = next(iter(incoming.values()))
                for s in self.streams:
                    if s.source == name and s.kind in ("liquor", "powder") and s.name not in carried:
                        carried[s.name] = liquor
                        changed = True
        for s in self.streams:
            if s.kind == "liquor" and s.name not in carried:
                raise InputError(f"liquor stream '{s.name}' cannot be traced back to a feed",
                                 file=self.file, unit=s.source, key=s.source_port)
        return carried

    def __repr__(self) -> str:
        return f"Flowsheet({self.title!r}, {len(self.units)} units, {len(self.streams)} streams)"
