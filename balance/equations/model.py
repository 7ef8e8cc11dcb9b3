"""Compile a flowsheet into one system of named equations g(x, p) = 0 in CasADi.

Every stream variable and unit quantity becomes a `Variable` with a CasADi
SX symbol. The ones the user fixed are parameters ``p`` (so a sweep changes
them without recompiling); the rest are unknowns ``x``. Every unit writes its
equations through a `_UnitWriter`, which names each one "<unit>: <purpose>"
so a residual can be traced back to the plant.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import casadi as ca
import numpy as np

from balance.errors import InputError, SpecificationError
from balance.flowsheet.graph import Flowsheet
from balance.unitops.streams import STREAM_KINDS, StreamState

#: Residual scale per equation kind, as multiples of the reference flow
#: (mass, energy) or absolute (temperature K, pressure Pa, fraction -).
LATENT_SCALE = 2.0e6


@dataclass
class Variable:
    """One unknown or fixed quantity of the flowsheet.

    Attributes
    ----------
    path : str
        ``"S1.flow"``, ``"E1.area"``.
    owner : str
        The stream or unit it belongs to.
    name : str
        Its name within the owner.
    kind : str
        Quantity kind (`balance.quantities.KINDS`).
    lower, upper, nominal : float
        Bounds and typical magnitude in SI.
    symbol : casadi.SX
    fixed : float or None
        The value, if fixed.
    guess : float or None
        A starting value, if known.
    is_stream : bool
    """

    path: str
    owner: str
    name: str
    kind: str
    lower: float
    upper: float
    nominal: float
    symbol: Any
    fixed: float | None = None
    guess: float | None = None
    is_stream: bool = False


@dataclass
class Equation:
    """One residual: ``residual == 0``."""

    unit: str
    purpose: str
    residual: Any
    scale_kind: str

    @property
    def label(self) -> str:
        return f"{self.unit}: {self.purpose}"


@dataclass
class Model:
    """A compiled flowsheet: variables, equations and CasADi functions."""

    flowsheet: Flowsheet
    variables: list[Variable]
    equations: list[Equation]
    states: dict[str, StreamState]
    range_checks: list[Any]
    reports: dict[str, dict[str, tuple[Any, str]]]
    external_power: dict[str, Any]
    reference_flow: float = 1.0
    by_path: dict[str, Variable] = field(default_factory=dict)

    def __post_init__(self):
        self.by_path = {v.path: v for v in self.variables}
        self.unknowns = [v for v in self.variables if v.fixed is None]
        self.parameters = [v for v in self.variables if v.fixed is not None]
        self.x = ca.vertcat(*[v.symbol for v in self.unknowns]) if self.unknowns else ca.SX(0, 1)
        self.p = ca.vertcat(*[v.symbol for v in self.parameters]) if self.parameters else ca.SX(0, 1)
        self.g = ca.vertcat(*[e.residual for e in self.equations]) if self.equations else ca.SX(0, 1)
        self.residual_scale = np.array([self._scale(e.scale_kind) for e in self.equations])

    # -- sizes --------------------------------------------------------------

    @property
    def n_unknowns(self) -> int:
        return len(self.unknowns)

    @property
    def n_equations(self) -> int:
        return len(self.equations)

    def _scale(self, kind: str) -> float:
        m = self.reference_flow
        return {"mass": m, "energy": m * LATENT_SCALE, "power": m * LATENT_SCALE, "temperature": 1.0,
                "pressure": 1e3, "fraction": 1e-2, "other": 1.0}.get(kind, 1.0)

    def parameter_values(self) -> np.ndarray:
        return np.array([v.fixed for v in self.parameters], dtype=float)

    def variable(self, path: str) -> Variable:
        try:
            return self.by_path[resolve_path(self.flowsheet, path)]
        except KeyError:
            raise InputError(f"no variable '{path}'", file=self.flowsheet.file, key=path) from None


def resolve_path(fs: Flowsheet, path: str) -> str:
    """Turn a user path (``E2.vapour_out.pressure``, ``feed.flow``) into a
    canonical variable path (``<stream>.pressure`` or ``<unit>.<quantity>``)."""
    owner, _, var = path.rpartition(".")
    if owner in fs.graph:
        unit = fs.unit(owner)
        aliases = unit.aliases()
        if var in aliases and var not in {q.name for q in unit.quantities()}:
            port, stream_var = aliases[var]
            stream = fs.stream_at(owner, port)
            if stream is None:
                raise InputError(f"port '{port}' is not connected", file=fs.file, unit=owner, key=var)
            return f"{stream.name}.{stream_var}"
        return path
    unit_name, _, port = owner.rpartition(".")
    if unit_name in fs.graph and port in {p.name for p in fs.unit(unit_name).ports()}:
        stream = fs.stream_at(unit_name, port)
        if stream is None:
            raise InputError(f"port '{port}' is not connected", file=fs.file, unit=unit_name, key=path)
        return f"{stream.name}.{var}"
    return path


class _UnitWriter:
    """The `UnitContext` handed to a unit while it writes its equations."""

    def __init__(self, unit, states_by_port, quantity_symbols, model_equations, checks):
        self.unit = unit
        self._ports = states_by_port
        self._quantities = quantity_symbols
        self._equations = model_equations
        self._checks = checks

    def port(self, name):
        if name not in self._ports:
            self.unit.port_by_name(name)  # raises a located error for a wrong name
            return None
        return self._ports[name]

    def quantity(self, name):
        return self._quantities[name]

    def equation(self, purpose, residual, scale="other"):
        self._equations.append(Equation(self.unit.name, purpose, residual, scale))

    def check_range(self, check):
        if check.unit is None:
            check.unit = self.unit.name
        self._checks.append(check)


def compile_flowsheet(fs: Flowsheet, require_square: bool = True) -> Model:
    """Build the `Model` of a flowsheet: variables, equations, degrees of freedom.

    With ``require_square=False`` a model with more unknowns than equations
    is returned as it is (for optimisation, or to describe the imbalance).

    Raises
    ------
    SpecificationError
        When the number of unknowns differs from the number of equations, or
        a fixed or freed path names nothing.
    """
    fs.complete()
    liquors = fs.assign_liquors()
    variables: list[Variable] = []
    states: dict[str, StreamState] = {}
    for stream in fs.streams:
        kind = STREAM_KINDS[stream.kind]
        values = {}
        for sv in kind.variables:
            path = f"{stream.name}.{sv.name}"
            sym = ca.SX.sym(path)
            variables.append(Variable(path, stream.name, sv.name, sv.kind, sv.lower, sv.upper, sv.nominal, sym,
                                      is_stream=True))
            values[sv.name] = sym
        states[stream.name] = StreamState(kind, values, name=stream.name, liquor=liquors.get(stream.name))

    quantity_symbols: dict[str, dict[str, Any]] = {}
    defaults: dict[str, float] = {}
    for name, unit in fs.units.items():
        quantity_symbols[name] = {}
        for q in unit.quantities():
            path = f"{name}.{q.name}"
            sym = ca.SX.sym(path)
            variables.append(Variable(path, name, q.name, q.kind, q.lower, q.upper, q.nominal, sym))
            quantity_symbols[name][q.name] = sym
            given = fs.given_keys.get(name, set())
            if q.default is not None and not (given & set(q.unless)):
                defaults[path] = q.default

    by_path = {v.path: v for v in variables}
    # defaults first, then the user's fixes, then the user's frees
    for path, value in defaults.items():
        by_path[path].fixed = value
    for path, value in fs.fixed.items():
        canonical = resolve_path(fs, path)
        if canonical not in by_path:
            raise SpecificationError(f"'{path}' names no variable of this flowsheet", file=fs.file, key=path)
        by_path[canonical].fixed = value
    for path in fs.freed:
        canonical = resolve_path(fs, path)
        if canonical not in by_path:
            raise SpecificationError(f"'{path}' names no variable of this flowsheet", file=fs.file, key=path)
        if path not in fs.fixed:
            by_path[canonical].fixed = None
    for path, value in fs.guesses.items():
        canonical = resolve_path(fs, path)
        if canonical in by_path:
            by_path[canonical].guess = value

    equations: list[Equation] = []
    checks: list[Any] = []
    reports: dict[str, dict[str, tuple[Any, str]]] = {}
    external: dict[str, Any] = {}
    ports_of: dict[str, dict[str, StreamState]] = {name: {} for name in fs.units}
    for stream in fs.streams:
        ports_of[stream.source][stream.source_port] = states[stream.name]
        ports_of[stream.target][stream.target_port] = states[stream.name]
    for name, unit in fs.units.items():
        ports = ports_of[name]
        writer = _UnitWriter(unit, ports, quantity_symbols[name], equations, checks)
        unit.equations(writer)
        reports[name] = {k: v for k, v in unit.reported(writer).items() if v[0] is not None}
        external[name] = unit.external_power(writer)

    for group in fs.same:
        first = by_path.get(resolve_path(fs, group[0]))
        if first is None:
            raise SpecificationError(f"'{group[0]}' names no variable", file=fs.file, key="same")
        for path in group[1:]:
            other = by_path.get(resolve_path(fs, path))
            if other is None:
                raise SpecificationError(f"'{path}' names no variable", file=fs.file, key="same")
            equations.append(Equation("specification", f"{path} equals {group[0]}",
                                      other.symbol - first.symbol, _scale_kind_of(first.kind)))

    reference = _reference_flow(fs, by_path)
    model = Model(fs, variables, equations, states, checks, reports, external, reference_flow=reference)
    if require_square:
        check_square(model)
    return model


def _scale_kind_of(kind: str) -> str:
    return {"mass_flow": "mass", "power": "energy", "temperature": "temperature",
            "temperature_difference": "temperature", "pressure": "pressure", "fraction": "fraction",
            "area": "other"}.get(kind, "other")


def _reference_flow(fs: Flowsheet, by_path: dict[str, Variable]) -> float:
    flows = [v.fixed for v in by_path.values() if v.kind == "mass_flow" and v.fixed]
    return max(flows) if flows else 1.0


def check_square(model: Model) -> None:
    """Raise a `SpecificationError` naming what is over- or under-specified
    when unknowns and equations differ in number."""
    n_x, n_g = model.n_unknowns, model.n_equations
    if n_x == n_g:
        return
    from balance.equations.structure import describe_imbalance
    raise SpecificationError(describe_imbalance(model), file=model.flowsheet.file)
