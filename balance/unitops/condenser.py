"""Condensers: where the last vapour of a train is turned back into water.

Surface condenser: vapour condenses at T_sat(p) on tubes cooled by water;
condensate leaves saturated; cooling water is heated counter-currently::

    m_c = m_v,  T_c = T_sat(p_v),  m_cw,out = m_cw,in
    Q = m_v (h_v - h_c) = m_cw (h_cw,out - h_cw,in)
    Q = U A LMTD(T_c - T_cw,in, T_c - T_cw,out)

Direct-contact condenser: cooling water sprays into the vapour; one water
stream leaves, ``approach`` kelvin below the saturation temperature::

    m_out = m_v + m_cw
    m_v h_v + m_cw h_cw = m_out h_out
    T_out = T_sat(p_v) - approach

Either one fixes the pressure of the effect it serves when its cooling
water is given, or is sized by it when that pressure is given. Non-condensable
gases and their venting are not modelled.
"""

from __future__ import annotations

from balance.properties import water
from balance.unitops.base import Guess, Port, QuantitySpec, UnitOperation, register
from balance.unitops.heat_exchange import log_mean_temperature_difference


@register
class SurfaceCondenser(UnitOperation):
    """Shell-and-tube or plate condenser cooled by water."""

    type_name = "condenser"
    description = "surface condenser cooled by water"

    def ports(self):
        return [
            Port("vapour_in", "vapour", "in"),
            Port("condensate_out", "water", "out", optional=True),
            Port("cooling_in", "water", "in"),
            Port("cooling_out", "water", "out", optional=True),
        ]

    def quantities(self):
        return [
            QuantitySpec("duty", "power", "heat removed", 0.0, 1e10, 1e6),
            QuantitySpec("area", "area", "heat-transfer area", 0.0, 1e6, 100.0),
            # Common practice: clean surface condensers for water vapour under vacuum
            # work at about 2-4 kW/m2/K; a default keeps the area an output.
            QuantitySpec("U", "heat_transfer_coefficient", "overall heat-transfer coefficient",
                         1.0, 2e4, 3000.0, default=3000.0),
        ]

    def equations(self, ctx):
        vap, cond = ctx.port("vapour_in"), ctx.port("condensate_out")
        cw_in, cw_out = ctx.port("cooling_in"), ctx.port("cooling_out")
        duty, area, u = ctx.quantity("duty"), ctx.quantity("area"), ctx.quantity("U")
        t_sat = water.saturation_temperature(vap.pressure)
        ctx.equation("condensate flow", cond.flow - vap.flow, "mass")
        ctx.equation("condensate saturated", cond.temperature - t_sat, "temperature")
        ctx.equation("cooling water flow", cw_out.flow - cw_in.flow, "mass")
        ctx.equation("duty, vapour side", duty - vap.flow * (vap.specific_enthalpy - cond.specific_enthalpy),
                     "energy")
        ctx.equation("duty, water side", duty - cw_in.flow * (cw_out.specific_enthalpy
                                                              - cw_in.specific_enthalpy), "energy")
        lmtd = log_mean_temperature_difference(t_sat - cw_in.temperature, t_sat - cw_out.temperature)
        ctx.equation("heat transfer", duty - u * area * lmtd, "energy")

    def reported(self, ctx):
        vap, cw_in, cw_out = ctx.port("vapour_in"), ctx.port("cooling_in"), ctx.port("cooling_out")
        t_sat = water.saturation_temperature(vap.pressure)
        return {
            "condensing_temperature": (t_sat, "temperature"),
            "cooling_water_rise": (cw_out.temperature - cw_in.temperature, "temperature_difference"),
            "approach": (t_sat - cw_out.temperature, "temperature_difference"),
            "driving_force": (log_mean_temperature_difference(t_sat - cw_in.temperature,
                                                              t_sat - cw_out.temperature),
                              "temperature_difference"),
        }

    def guess(self, inlets, hints):
        vap, cw = inlets["vapour_in"], inlets["cooling_in"]
        t_sat = float(water.saturation_temperature(vap["pressure"]))
        duty = vap["flow"] * float(water.latent_heat(t_sat))
        t_cw_in = cw.get("temperature", t_sat - 15.0)
        t_cw_out = min(t_cw_in + 10.0, t_sat - 3.0)
        cw_flow = duty / (4186.0 * max(t_cw_out - t_cw_in, 1.0))
        lmtd = float(log_mean_temperature_difference(t_sat - t_cw_in, t_sat - t_cw_out))
        u = hints.get("fixed", {}).get("U", 3000.0)
        return Guess(
            streams={"condensate_out": {"flow": vap["flow"], "temperature": t_sat},
                     "cooling_out": {"flow": cw.get("flow", cw_flow), "temperature": t_cw_out}},
            quantities={"duty": duty, "area": duty / (u * max(lmtd, 1.0)), "U": u},
            inlets={"cooling_in": {"flow": cw_flow}},
        )


@register
class DirectContactCondenser(UnitOperation):
    """Condenser in which cooling water and condensate mix (spray or jet type)."""

    type_name = "direct_contact_condenser"
    description = "direct-contact condenser: cooling water sprayed into the vapour"

    def ports(self):
        return [
            Port("vapour_in", "vapour", "in"),
            Port("cooling_in", "water", "in"),
            Port("water_out", "water", "out", optional=True),
        ]

    def quantities(self):
        return [
            QuantitySpec("duty", "power", "heat removed", 0.0, 1e10, 1e6),
            # Common practice: a few kelvin between the water leaving and the saturation temperature.
            QuantitySpec("approach", "temperature_difference",
                         "saturation temperature minus water outlet temperature", 0.0, 100.0, 3.0,
                         default=3.0),
        ]

    def equations(self, ctx):
        vap, cw, out = ctx.port("vapour_in"), ctx.port("cooling_in"), ctx.port("water_out")
        duty = ctx.quantity("duty")
        t_sat = water.saturation_temperature(vap.pressure)
        ctx.equation("mass balance", out.flow - vap.flow - cw.flow, "mass")
        ctx.equation("energy balance", vap.enthalpy_flow + cw.enthalpy_flow - out.enthalpy_flow, "energy")
        ctx.equation("outlet temperature", out.temperature - t_sat + ctx.quantity("approach"), "temperature")
        ctx.equation("duty", duty - cw.flow * (out.specific_enthalpy - cw.specific_enthalpy), "energy")

    def guess(self, inlets, hints):
        vap, cw = inlets["vapour_in"], inlets["cooling_in"]
        t_sat = float(water.saturation_temperature(vap["pressure"]))
        duty = vap["flow"] * float(water.latent_heat(t_sat))
        t_cw_in = cw.get("temperature", t_sat - 15.0)
        cw_flow = duty / (4186.0 * max(t_sat - 3.0 - t_cw_in, 1.0))
        return Guess(streams={"water_out": {"flow": vap["flow"] + cw.get("flow", cw_flow),
                                            "temperature": t_sat - 3.0}},
                     quantities={"duty": duty, "approach": 3.0},
                     inlets={"cooling_in": {"flow": cw_flow}})
