"""Flash tanks: a liquor or condensate let down to a lower pressure boils part of itself off.

Adiabatic and well mixed; the liquid leaves at its boiling temperature at
the tank pressure, the vapour at the same temperature::

    m_in = m_liq + m_v,  m_in x_in = m_liq x_liq
    T_liq = T_sat(p) + BPR(x_liq),  T_v = T_liq,  p_v = p
    m_in h_in = m_liq h_liq + m_v h_v

A feed that arrives below its boiling point at the tank pressure would need
a negative vapour flow: the result checks reject that (flows must be
positive), so use a flash tank only where the stream does flash.
"""

from __future__ import annotations

from balance.properties import water
from balance.unitops.base import Guess, Port, QuantitySpec, Setting, UnitOperation, register


@register
class FlashTank(UnitOperation):
    """Adiabatic flash of a liquor or of condensate to a lower pressure."""

    type_name = "flash_tank"
    description = "adiabatic flash to a lower pressure"
    boils = True

    @classmethod
    def settings(cls):
        return [Setting("stream", "text", "what flashes", "liquor", choices=("liquor", "water"))]

    def ports(self):
        kind = self.setting("stream")
        return [
            Port("in", kind, "in"),
            Port("liquid_out", kind, "out"),
            Port("vapour_out", "vapour", "out", optional=True),
        ]

    def quantities(self):
        return [QuantitySpec("pressure", "pressure", "flash pressure", 611.0, 2e7, 3e4)]

    def equations(self, ctx):
        feed, liquid, vap = ctx.port("in"), ctx.port("liquid_out"), ctx.port("vapour_out")
        p = ctx.quantity("pressure")
        t_water = water.saturation_temperature(p)
        ctx.equation("mass balance", feed.flow - liquid.flow - vap.flow, "mass")
        if self.setting("stream") == "liquor":
            ctx.equation("solids balance", feed.solids_flow - liquid.solids_flow, "mass")
            bpr = liquid.liquor.boiling_point_rise(liquid.solids, t_water, p)
            for check in liquid.liquor.range_checks(liquid.solids, liquid.temperature, p,
                                                    label=self.name, unit=self.name):
                ctx.check_range(check)
        else:
            bpr = 0.0
        ctx.equation("boiling temperature", liquid.temperature - t_water - bpr, "temperature")
        ctx.equation("vapour temperature", vap.temperature - liquid.temperature, "temperature")
        ctx.equation("vapour pressure", vap.pressure - p, "pressure")
        ctx.equation("energy balance", feed.enthalpy_flow - liquid.enthalpy_flow - vap.enthalpy_flow, "energy")

    def reported(self, ctx):
        return {"evaporation": (ctx.port("vapour_out").flow, "mass_flow"),
                "temperature_drop": (ctx.port("in").temperature - ctx.port("liquid_out").temperature,
                                     "temperature_difference")}

    def guess(self, inlets, hints):
        feed = inlets["in"]
        p = hints.get("fixed", {}).get("pressure")
        if p is None:
            t_boil = hints.get("boiling_temperature", feed["temperature"] - 5.0)
            p = float(water.saturation_pressure(t_boil))
        t_boil = float(water.saturation_temperature(p))
        flashed = max(feed["flow"] * 4000.0 * (feed["temperature"] - t_boil) / float(water.latent_heat(t_boil)),
                      1e-3 * feed["flow"])
        liquid = {"flow": feed["flow"] - flashed, "temperature": t_boil}
        if "solids" in feed:
            liquid["solids"] = feed["flow"] * feed["solids"] / liquid["flow"]
        return Guess(streams={"liquid_out": liquid,
                              "vapour_out": {"flow": flashed, "temperature": t_boil, "pressure": p}},
                     quantities={"pressure": p})
