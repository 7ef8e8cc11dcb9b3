"""Where material and energy cross the flowsheet's boundary: feeds, supplies, products, outlets.

These units carry no equations of their own (apart from the saturation of a
steam supply): their keys fix variables of the stream they start or end.
"""

from __future__ import annotations

from balance.properties import water
from balance.unitops.base import Guess, Port, QuantitySpec, REQUIRED, Setting, UnitOperation, register


def _stream_aliases(port: str, names: tuple[str, ...]) -> dict[str, tuple[str, str]]:
    return {name: (port, name) for name in names}


@register
class Feed(UnitOperation):
    """A liquor entering the flowsheet: keys ``flow``, ``solids``, ``temperature``."""

    type_name = "feed"
    description = "liquor entering the flowsheet"
    boundary = "source"

    def ports(self):
        return [Port("out", "liquor", "out", description="the feed liquor")]

    @classmethod
    def settings(cls):
        return [Setting("liquor", "text", "name of the liquor (built-in or from the [liquors] table)", REQUIRED)]

    def aliases(self):
        return _stream_aliases("out", ("flow", "solids", "temperature"))


@register
class Product(UnitOperation):
    """A liquor leaving the flowsheet: keys ``flow``, ``solids``, ``temperature``."""

    type_name = "product"
    description = "liquor leaving the flowsheet (concentrate, product)"
    boundary = "sink"

    def ports(self):
        return [Port("in", "liquor", "in", description="the product liquor")]

    def aliases(self):
        return _stream_aliases("in", ("flow", "solids", "temperature"))


@register
class SteamSupply(UnitOperation):
    """Live steam from the boiler house.

    Saturated at the given ``pressure`` (or ``temperature``), or superheated
    when both are given (then ``superheat`` is solved). The steam ``flow`` is
    normally solved: it is the live-steam consumption.

    Equation: T = T_sat(p) + superheat.
    """

    type_name = "steam_supply"
    description = "live steam, saturated or superheated"
    boundary = "source"

    def ports(self):
        return [Port("out", "vapour", "out", description="live steam")]

    def quantities(self):
        return [QuantitySpec("superheat", "temperature_difference", "steam temperature above saturation",
                             lower=0.0, upper=400.0, nominal=10.0, default=0.0, unless=("temperature",))]

    def aliases(self):
        return _stream_aliases("out", ("flow", "temperature", "pressure"))

    def equations(self, ctx):
        out = ctx.port("out")
        ctx.equation("saturation", out.temperature - water.saturation_temperature(out.pressure)
                     - ctx.quantity("superheat"), "temperature")

    def guess(self, inlets, hints):
        streams = {"out": {}}
        if "steam_flow" in hints:
            streams["out"]["flow"] = hints["steam_flow"]
        fixed = hints.get("fixed_ports", {}).get("out", {})
        superheat = hints.get("fixed", {}).get("superheat", 0.0)
        if "pressure" in fixed and "temperature" not in fixed:
            streams["out"]["temperature"] = float(water.saturation_temperature(fixed["pressure"])) + superheat
        elif "temperature" in fixed and "pressure" not in fixed:
            streams["out"]["pressure"] = float(water.saturation_pressure(fixed["temperature"] - superheat))
        return Guess(streams=streams)


@register
class CoolingWaterSupply(UnitOperation):
    """Cooling water entering the flowsheet: keys ``flow``, ``temperature``."""

    type_name = "cooling_water"
    description = "cooling water supply"
    boundary = "source"

    def ports(self):
        return [Port("out", "water", "out", description="cooling water")]

    def aliases(self):
        return _stream_aliases("out", ("flow", "temperature"))


@register
class WaterSupply(UnitOperation):
    """Liquid water entering the flowsheet (make-up, dilution or spray water)."""

    type_name = "water_supply"
    description = "liquid water entering the flowsheet"
    boundary = "source"

    def ports(self):
        return [Port("out", "water", "out")]

    def aliases(self):
        return _stream_aliases("out", ("flow", "temperature"))


@register
class Outlet(UnitOperation):
    """Any stream leaving the flowsheet: condensate return, drains, vapour to other users.

    Its port takes the kind of the stream connected to it. Unconnected
    optional outlets of other units end in an implicit outlet.
    """

    type_name = "outlet"
    description = "a stream leaving the flowsheet"
    boundary = "sink"

    @classmethod
    def settings(cls):
        return [Setting("stream", "text", "kind of stream leaving", "any")]

    def ports(self):
        return [Port("in", self.setting("stream"), "in")]

    def aliases(self):
        return _stream_aliases("in", ("flow", "temperature", "pressure", "solids"))
