"""What every unit operation declares: ports, quantities, settings, equations.

A unit operation is a node of the flowsheet graph. It declares

* **ports**: where streams attach, each with a stream kind and a direction;
* **quantities**: its own variables (area, duty, pressure, ...), each of which
  the user may fix or leave to be solved;
* **aliases**: user keys that fix a variable of a port's stream (a feed's
  ``flow`` is the flow of the stream leaving its ``out`` port);
* **settings**: constants that are never solved for (a heat-loss fraction,
  the liquor of a feed);

and writes its equations through a `UnitContext`, which the equation layer
provides. Unit operations never import the flowsheet or equation layers.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, ClassVar, Protocol

from balance.errors import InputError


@dataclass(frozen=True)
class Port:
    """A place where a stream attaches to a unit operation.

    Parameters
    ----------
    name : str
    kind : str
        Stream kind (``liquor``, ``vapour``, ``water``, ...).
    direction : {'in', 'out'}
    optional : bool
        An optional inlet may stay unconnected (no flow); an unconnected
        optional outlet leaves the flowsheet as a boundary stream.
    """

    name: str
    kind: str
    direction: str
    optional: bool = False
    description: str = ""


@dataclass(frozen=True)
class QuantitySpec:
    """A variable that belongs to a unit operation.

    Parameters
    ----------
    name : str
        Key used in files and reports (``area``).
    kind : str
        Quantity kind (`balance.quantities.KINDS`).
    description : str
    lower, upper : float
        Physical bounds (SI).
    nominal : float
        Typical magnitude, for scaling.
    default : float, optional
        If given, the quantity is fixed at this value unless the user frees it
        or gives one of the keys in ``unless``.
    unless : tuple of str
        Keys whose presence leaves the quantity free despite its default.
    """

    name: str
    kind: str
    description: str
    lower: float = -1e30
    upper: float = 1e30
    nominal: float = 1.0
    default: float | None = None
    unless: tuple = ()


@dataclass(frozen=True)
class Setting:
    """A constant of a unit operation (never solved for).

    Parameters
    ----------
    name : str
    kind : str
        A quantity kind, or ``'text'``, ``'integer'``, ``'table'``, ``'flag'``.
    description : str
    default : Any
        Used when the user gives none; ``REQUIRED`` if the user must.
    choices : tuple, optional
        Allowed values for text settings.
    lower, upper : float, optional
        Allowed range for numeric settings.
    """

    name: str
    kind: str
    description: str
    default: Any = None
    choices: tuple = ()
    lower: float | None = None
    upper: float | None = None


REQUIRED = object()


class UnitContext(Protocol):
    """What a unit operation sees while it writes its equations."""

    def port(self, name: str) -> Any:
        """The `StreamState` at a port, or None for an unconnected optional inlet."""

    def quantity(self, name: str) -> Any:
        """The symbol of one of the unit's quantities."""

    def equation(self, purpose: str, residual: Any, scale: str = "other") -> None:
        """Add ``residual == 0``; ``scale`` is one of ``mass``, ``energy``,
        ``temperature``, ``pressure``, ``fraction``, ``power``, ``other``."""

    def check_range(self, check: Any) -> None:
        """Register a `~balance.properties.validity.RangeCheck` to run on the numbers."""


@dataclass
class Guess:
    """Initial values for a unit's quantities and outlet streams.

    ``streams`` maps an outlet port name -> {variable: value};
    ``quantities`` maps quantity name -> value; ``inlets`` maps an inlet port
    name -> {variable: value} the unit would need (used to size a supply,
    such as the live steam an effect asks for). Only what the unit can
    estimate is filled.
    """

    streams: dict[str, dict[str, float]] = field(default_factory=dict)
    quantities: dict[str, float] = field(default_factory=dict)
    inlets: dict[str, dict[str, float]] = field(default_factory=dict)


class UnitOperation:
    """Base class of all unit operations.

    Subclasses set `type_name`, `description` and override `ports`,
    `quantities`, `settings`, `aliases`, `equations` and `guess`.

    Parameters
    ----------
    name : str
        The unit's tag in the flowsheet (``E1``).
    settings : dict
        Values of the unit's settings, already in SI.
    """

    type_name: ClassVar[str] = ""
    description: ClassVar[str] = ""
    #: "source" for units that bring material in, "sink" for units it leaves by
    boundary: ClassVar[str | None] = None

    def __init__(self, name: str, settings: dict[str, Any] | None = None, file: str | None = None):
        self.name = name
        self.file = file
        given = dict(settings or {})
        self.settings_values: dict[str, Any] = {}
        known = {s.name: s for s in self.settings()}
        for key in given:
            if key not in known:
                raise InputError(f"unknown setting; valid settings: {', '.join(sorted(known)) or 'none'}",
                                 file=file, unit=name, key=key)
        for spec in known.values():
            if spec.name in given:
                value = given[spec.name]
                if spec.choices and value not in spec.choices:
                    raise InputError(f"{value!r} is not one of {', '.join(map(str, spec.choices))}",
                                     file=file, unit=name, key=spec.name)
                if isinstance(value, (int, float)) and not isinstance(value, bool):
                    if spec.lower is not None and value < spec.lower or spec.upper is not None and value > spec.upper:
                        raise InputError(f"{value:g} is outside [{spec.lower:g}, {spec.upper:g}]",
                                         file=file, unit=name, key=spec.name)
                self.settings_values[spec.name] = value
            elif spec.default is REQUIRED:
                raise InputError(f"missing required setting ({spec.description})",
                                 file=file, unit=name, key=spec.name)
            else:
                self.settings_values[spec.name] = spec.default

    # -- declarations -------------------------------------------------------

    def ports(self) -> list[Port]:
        return []

    def quantities(self) -> list[QuantitySpec]:
        return []

    @classmethod
    def settings(cls) -> list[Setting]:
        return []

    def aliases(self) -> dict[str, tuple[str, str]]:
        """User keys that name a port variable: key -> (port, variable)."""
        return {}

    # -- behaviour ----------------------------------------------------------

    def setting(self, name: str) -> Any:
        return self.settings_values[name]

    def equations(self, ctx: UnitContext) -> None:
        """Write the unit's equations through ``ctx``."""

    def guess(self, inlets: dict[str, dict[str, float]], hints: dict[str, Any]) -> Guess:
        """Estimate outlet streams and quantities from inlet estimates.

        ``hints`` carries flowsheet-wide estimates: ``boiling_temperature``
        (K) for this unit if it boils, ``evaporation`` (kg/s) for this unit's
        share, ``pressure`` (Pa).
        """
        return Guess()

    def reported(self, ctx: UnitContext) -> dict[str, tuple[Any, str]]:
        """Derived figures for the unit table: name -> (expression, kind)."""
        return {}

    def external_power(self, ctx: UnitContext) -> Any:
        """Net power entering the flowsheet at this unit from outside [W]:
        shaft or electrical power in, minus heat lost to the surroundings."""
        return 0.0

    def port_by_name(self, name: str) -> Port:
        for port in self.ports():
            if port.name == name:
                return port
        raise InputError(f"no port '{name}'; ports: {', '.join(p.name for p in self.ports())}",
                         file=self.file, unit=self.name, key=name)

    def __repr__(self) -> str:
        return f"{type(self).__name__}({self.name!r})"


UNIT_TYPES: dict[str, type[UnitOperation]] = {}


def register(cls: type[UnitOperation]) -> type[UnitOperation]:
    """Class decorator: make a unit operation available by its `type_name`."""
    UNIT_TYPES[cls.type_name] = cls
    return cls


def unit_type(name: str, *, file: str | None = None, unit: str | None = None) -> type[UnitOperation]:
    """Look up a unit operation type by name; an unknown name lists the valid ones."""
    try:
        return UNIT_TYPES[name]
    except KeyError:
        raise InputError(f"unknown unit type {name!r}; valid types: {', '.join(sorted(UNIT_TYPES))}",
                         file=file, unit=unit, key="type") from None
