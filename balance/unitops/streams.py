"""Stream kinds: which variables a stream carries and how its enthalpy follows.

A stream is an edge of the flowsheet graph. Its kind fixes its variables:

========  ======================================  ==============================
kind      variables                               specific enthalpy
========  ======================================  ==============================
liquor    flow, solids, temperature               the liquor's model h(x, T)
vapour    flow, temperature, pressure             IAPWS-IF97 region 2 h(T, p)
water     flow, temperature                       IAPWS-IF97 liquid h(T)
========  ======================================  ==============================

``flow`` is the total mass flow [kg/s]; ``solids`` the dissolved or
suspended solids mass fraction [-]. Liquid water (condensate, cooling water)
is taken at saturation pressure for its enthalpy (the pressure effect,
about 0.1 kJ/kg per bar, is neglected). All enthalpies share one datum:
liquid water at the triple point (IAPWS).
"""

from __future__ import annotations

import functools
from dataclasses import dataclass
from typing import Any, Callable

from balance.properties import water


@dataclass(frozen=True)
class StreamVariable:
    """One variable of a stream kind.

    Parameters
    ----------
    name : str
        The word used in files, reports and code (``flow``).
    kind : str
        Quantity kind (see `balance.quantities.KINDS`).
    lower, upper : float
        Physical bounds in SI (used by the bounded solver and result checks).
    nominal : float
        Typical magnitude, for scaling.
    """

    name: str
    kind: str
    lower: float
    upper: float
    nominal: float
    description: str = ""


FLOW = StreamVariable("flow", "mass_flow", 0.0, 1e4, 1.0, "mass flow")
SOLIDS = StreamVariable("solids", "fraction", 0.0, 1.0, 0.3, "solids mass fraction")
TEMPERATURE = StreamVariable("temperature", "temperature", 250.0, 900.0, 350.0, "temperature")
PRESSURE = StreamVariable("pressure", "pressure", 600.0, 2.2e7, 5e4, "pressure")


def _zero(state):
    return 0.0


@dataclass(frozen=True)
class StreamKind:
    """A kind of stream: the variables it carries and its component flows.

    Parameters
    ----------
    name : str
        ``liquor``, ``vapour``, ``water``, ...
    variables : tuple of StreamVariable
    description : str
    specific_enthalpy : callable
        ``f(state) -> J/kg``, per kg of the stream's ``flow`` variable (for
        moist air, whose ``flow`` is the dry-air flow, per kg dry air).
    water, solids, dry_air : callable
        ``f(state) -> kg/s`` of water (liquid or vapour), solids and dry air.
    """

    name: str
    variables: tuple[StreamVariable, ...]
    description: str
    specific_enthalpy: Callable[["StreamState"], Any]
    water: Callable[["StreamState"], Any]
    solids: Callable[["StreamState"], Any] = _zero
    dry_air: Callable[["StreamState"], Any] = _zero

    def variable(self, name: str) -> StreamVariable:
        for var in self.variables:
            if var.name == name:
                return var
        raise KeyError(name)

    @property
    def variable_names(self) -> tuple[str, ...]:
        return tuple(v.name for v in self.variables)


STREAM_KINDS: dict[str, StreamKind] = {k.name: k for k in (
    StreamKind("liquor", (FLOW, SOLIDS, TEMPERATURE), "water with dissolved solids (feed, concentrate)",
               specific_enthalpy=lambda s: s.liquor.enthalpy(s["solids"], s["temperature"]),
               water=lambda s: s["flow"] * (1 - s["solids"]),
               solids=lambda s: s["flow"] * s["solids"]),
    StreamKind("vapour", (FLOW, TEMPERATURE, PRESSURE), "water vapour or steam, saturated or superheated",
               specific_enthalpy=lambda s: water.vapour_enthalpy(s["temperature"], s["pressure"]),
               water=lambda s: s["flow"]),
    StreamKind("water", (FLOW, TEMPERATURE), "liquid water: condensate, cooling water",
               specific_enthalpy=lambda s: water.liquid_enthalpy(s["temperature"]),
               water=lambda s: s["flow"]),
)}


def register_stream_kind(kind: StreamKind) -> None:
    """Add a stream kind (the drying modules add moist air and powder)."""
    STREAM_KINDS[kind.name] = kind


class StreamState:
    """The values (symbols or numbers) of one stream, with its enthalpy.

    Parameters
    ----------
    kind : StreamKind
        What the stream carries.
    values : dict
        Variable name -> CasADi symbol or float.
    name : str
        The stream's name, for messages.
    liquor : Liquor, optional
        The liquor model, for liquor streams.
    """

    def __init__(self, kind: StreamKind, values: dict[str, Any], name: str = "", liquor: Any = None):
        self.kind = kind
        self.values = values
        self.name = name
        self.liquor = liquor

    def __getitem__(self, key: str) -> Any:
        return self.values[key]

    def get(self, key: str, default: Any = None) -> Any:
        return self.values.get(key, default)

    @property
    def flow(self):
        return self.values["flow"]

    @property
    def temperature(self):
        return self.values["temperature"]

    @property
    def solids(self):
        return self.values.get("solids", 0.0)

    @property
    def pressure(self):
        return self.values["pressure"]

    @functools.cached_property
    def specific_enthalpy(self):
        """Specific enthalpy [J/kg] on the IAPWS datum (built once per state)."""
        return self.kind.specific_enthalpy(self)

    @functools.cached_property
    def enthalpy_flow(self):
        """Enthalpy flow [W] on the IAPWS datum."""
        return self.flow * self.specific_enthalpy

    @property
    def water_flow(self):
        """Mass flow of water, liquid or vapour [kg/s]."""
        return self.kind.water(self)

    @property
    def solids_flow(self):
        """Mass flow of solids [kg/s]."""
        return self.kind.solids(self)

    @property
    def dry_air_flow(self):
        """Mass flow of dry air [kg/s]."""
        return self.kind.dry_air(self)
