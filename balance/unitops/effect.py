"""The evaporator effect: liquor boils on one side of a calandria, vapour condenses on the other.

Heating side: vapour or steam (possibly superheated) condenses at the
saturation temperature of its pressure; condensate leaves saturated.
Boiling side: the liquor leaves at the boiling temperature of the
concentrate at the effect's pressure, T = T_sat(p) + BPR(x_out); the vapour
leaves at the liquor temperature (superheated by the boiling-point rise)
and at the effect's pressure. The liquor is well mixed (the outlet
concentration sets the boiling point), which is the usual, slightly
conservative assumption for forced-circulation and falling-film effects.
The hydrostatic head and vapour-line pressure drops are neglected.

Equations (subscripts: in/out liquor, h heating vapour, c condensate, v vapour)::

    m_in x_in = m_out x_out                              solids balance
    m_in = m_out + m_v                                   mass balance
    m_c = m_h,  T_c = T_sat(p_h)                          condensate
    Q = m_h (h_h - h_c)                                  duty
    T_out = T_sat(p) + BPR(x_out, T_sat(p), p)           boiling temperature
    T_v = T_out,  p_v = p                                vapour state
    m_in h_in + (1 - f_loss) Q = m_out h_out + m_v h_v    energy balance
    Q = U A (T_c - T_out)                                heat transfer
"""

from __future__ import annotations

from balance.properties import water
from balance.unitops.base import Guess, Port, QuantitySpec, Setting, UnitOperation, register


@register
class Effect(UnitOperation):
    """An evaporator effect (calandria and separator)."""

    type_name = "effect"
    description = "evaporator effect: calandria and vapour separator"
    boils = True

    def ports(self):
        return [
            Port("liquor_in", "liquor", "in", description="liquor to be concentrated"),
            Port("liquor_out", "liquor", "out", description="concentrate"),
            Port("heating_in", "vapour", "in", description="heating steam or vapour"),
            Port("condensate_out", "water", "out", optional=True, description="heating-side condensate"),
            Port("vapour_out", "vapour", "out", description="vapour boiled off"),
        ]

    def quantities(self):
        return [
            QuantitySpec("duty", "power", "heat transferred from the heating side", 0.0, 1e10, 1e6),
            QuantitySpec("area", "area", "heat-transfer area", 0.0, 1e6, 100.0),
            QuantitySpec("U", "heat_transfer_coefficient", "overall heat-transfer coefficient",
                         1.0, 2e4, 1500.0),
            QuantitySpec("pressure", "pressure", "pressure on the boiling side", 611.0, 2e7, 3e4),
        ]

    @classmethod
    def settings(cls):
        return [
            Setting("heat_loss_fraction", "fraction", "share of the duty lost to the surroundings",
                    0.0, lower=0.0, upper=0.5),
            Setting("min_driving_force", "temperature_difference",
                    "smallest acceptable temperature difference, for the checks", 2.0, lower=0.0),
        ]

    def equations(self, ctx):
        liq_in, liq_out = ctx.port("liquor_in"), ctx.port("liquor_out")
        heat, cond, vap = ctx.port("heating_in"), ctx.port("condensate_out"), ctx.port("vapour_out")
        duty, area, u, p = (ctx.quantity(k) for k in ("duty", "area", "U", "pressure"))
        liquor = liq_out.liquor

        ctx.equation("solids balance", liq_in.solids_flow - liq_out.solids_flow, "mass")
        ctx.equation("mass balance", liq_in.flow - liq_out.flow - vap.flow, "mass")
        ctx.equation("condensate flow", cond.flow - heat.flow, "mass")
        t_condensing = water.saturation_temperature(heat.pressure)
        ctx.equation("condensate saturated", cond.temperature - t_condensing, "temperature")
        ctx.equation("duty", duty - heat.flow * (heat.specific_enthalpy - cond.specific_enthalpy), "energy")
        t_water = water.saturation_temperature(p)
        bpr = liquor.boiling_point_rise(liq_out.solids, t_water, p)
        ctx.equation("boiling temperature", liq_out.temperature - t_water - bpr, "temperature")
        ctx.equation("vapour temperature", vap.temperature - liq_out.temperature, "temperature")
        ctx.equation("vapour pressure", vap.pressure - p, "pressure")
        loss = self.setting("heat_loss_fraction")
        ctx.equation("energy balance", liq_in.enthalpy_flow + (1 - loss) * duty
                     - liq_out.enthalpy_flow - vap.enthalpy_flow, "energy")
        ctx.equation("heat transfer", duty - u * area * (t_condensing - liq_out.temperature), "energy")
        for check in liquor.range_checks(liq_out.solids, liq_out.temperature, p, label=self.name, unit=self.name):
            ctx.check_range(check)

    def reported(self, ctx):
        liq_out, heat = ctx.port("liquor_out"), ctx.port("heating_in")
        p = ctx.quantity("pressure")
        t_water = water.saturation_temperature(p)
        t_condensing = water.saturation_temperature(heat.pressure)
        return {
            "evaporation": (ctx.port("vapour_out").flow, "mass_flow"),
            "boiling_temperature": (liq_out.temperature, "temperature"),
            "boiling_point_rise": (liq_out.temperature - t_water, "temperature_difference"),
            "condensing_temperature": (t_condensing, "temperature"),
            "driving_force": (t_condensing - liq_out.temperature, "temperature_difference"),
            "heating_pressure": (heat.pressure, "pressure"),
            "heat_loss": (self.setting("heat_loss_fraction") * ctx.quantity("duty"), "power"),
        }

    def external_power(self, ctx):
        return -self.setting("heat_loss_fraction") * ctx.quantity("duty")

    def guess(self, inlets, hints):
        liq, heat = inlets["liquor_in"], inlets["heating_in"]
        t_boil = hints.get("boiling_temperature", liq.get("temperature", 330.0))
        evaporation = min(hints.get("evaporation", 0.2 * liq["flow"]), 0.9 * liq["flow"])
        out_flow = liq["flow"] - evaporation
        solids = liq["flow"] * liq["solids"] / out_flow
        p = float(water.saturation_pressure(t_boil))
        t_cond = float(water.saturation_temperature(heat["pressure"]))
        latent = float(water.latent_heat(t_boil))
        duty = evaporation * latent
        fixed = hints.get("fixed", {})
        u = fixed.get("U", 1500.0)
        area = fixed.get("area", duty / (u * max(t_cond - t_boil, 2.0)))
        if "area" in fixed and "U" not in fixed:
            u = duty / (area * max(t_cond - t_boil, 2.0))
        h_heat = float(water.vapour_enthalpy(heat["temperature"], heat["pressure"]))
        heating_flow = duty / (h_heat - float(water.liquid_enthalpy(t_cond)))
        wanted = {"heating_in": {"flow": heating_flow}}
        # an effect whose concentrate solids are known (fixed, or the product's in parallel feed)
        # asks for the liquor that its evaporation concentrates to them: F = E x_out / (x_out - x_in)
        x_target = hints.get("fixed_ports", {}).get("liquor_out", {}).get("solids", hints.get("product_solids"))
        if x_target is not None and x_target > liq["solids"] + 1e-6 and "evaporation" in hints:
            wanted["liquor_in"] = {"flow": hints["evaporation"] * x_target / (x_target - liq["solids"])}
        return Guess(
            streams={
                "liquor_out": {"flow": out_flow, "solids": solids, "temperature": t_boil},
                "vapour_out": {"flow": evaporation, "temperature": t_boil, "pressure": p},
                "condensate_out": {"flow": heat.get("flow", heating_flow), "temperature": t_cond},
            },
            quantities={"duty": duty, "area": area, "U": u, "pressure": p},
            inlets=wanted,
        )
