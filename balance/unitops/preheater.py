"""Liquor preheaters: raising the feed towards its boiling point with vapour or hot water.

With ``heating = "vapour"`` the hot side condenses (isothermal at T_sat(p));
with ``heating = "water"`` (hot condensate, hot water) the two liquids run
counter-currently. Either way::

    m_cold,out = m_cold,in,  x_cold,out = x_cold,in
    Q = m_cold (h_cold,out - h_cold,in)                     cold side
    Q = m_hot (h_hot,in - h_hot,out)                        hot side
    Q = U A LMTD                                            heat transfer

Condensing vapour: m_hot,out = m_hot,in, T_hot,out = T_sat(p_hot,in);
the LMTD's terminal differences are T_sat - T_cold,in and T_sat - T_cold,out.
Hot water: m_hot,out = m_hot,in; counter-current terminal differences
T_hot,in - T_cold,out and T_hot,out - T_cold,in. Heat losses are neglected.
"""

from __future__ import annotations

from balance.properties import water
from balance.unitops.base import Guess, Port, QuantitySpec, Setting, UnitOperation, register
from balance.unitops.heat_exchange import log_mean_temperature_difference


@register
class Preheater(UnitOperation):
    """Liquor preheater heated by condensing vapour or by hot water."""

    type_name = "preheater"
    description = "liquor preheater heated by vapour or hot water"

    @classmethod
    def settings(cls):
        return [Setting("heating", "text", "what heats the liquor", "vapour", choices=("vapour", "water"))]

    def ports(self):
        return [
            Port("liquor_in", "liquor", "in"),
            Port("liquor_out", "liquor", "out"),
            Port("heating_in", self.setting("heating"), "in"),
            Port("heating_out", "water", "out", optional=True),
        ]

    def quantities(self):
        return [
            QuantitySpec("duty", "power", "heat transferred", 0.0, 1e10, 1e6),
            QuantitySpec("area", "area", "heat-transfer area", 0.0, 1e6, 50.0),
            QuantitySpec("U", "heat_transfer_coefficient", "overall heat-transfer coefficient",
                         1.0, 2e4, 1500.0),
        ]

    def _terminal_differences(self, ctx):
        cold_in, cold_out = ctx.port("liquor_in"), ctx.port("liquor_out")
        hot_in, hot_out = ctx.port("heating_in"), ctx.port("heating_out")
        if self.setting("heating") == "vapour":
            t_sat = water.saturation_temperature(hot_in.pressure)
            return t_sat - cold_in.temperature, t_sat - cold_out.temperature
        return hot_in.temperature - cold_out.temperature, hot_out.temperature - cold_in.temperature

    def equations(self, ctx):
        cold_in, cold_out = ctx.port("liquor_in"), ctx.port("liquor_out")
        hot_in, hot_out = ctx.port("heating_in"), ctx.port("heating_out")
        duty, area, u = ctx.quantity("duty"), ctx.quantity("area"), ctx.quantity("U")
        ctx.equation("liquor flow", cold_out.flow - cold_in.flow, "mass")
        ctx.equation("liquor solids", cold_out.solids - cold_in.solids, "fraction")
        ctx.equation("duty, liquor side", duty - (cold_out.enthalpy_flow - cold_in.enthalpy_flow), "energy")
        ctx.equation("heating flow", hot_out.flow - hot_in.flow, "mass")
        if self.setting("heating") == "vapour":
            ctx.equation("condensate saturated",
                         hot_out.temperature - water.saturation_temperature(hot_in.pressure), "temperature")
        ctx.equation("duty, heating side", duty - (hot_in.enthalpy_flow - hot_out.enthalpy_flow), "energy")
        ctx.equation("heat transfer", duty - u * area * log_mean_temperature_difference(
            *self._terminal_differences(ctx)), "energy")

    def reported(self, ctx):
        dt_a, dt_b = self._terminal_differences(ctx)
        return {
            "temperature_rise": (ctx.port("liquor_out").temperature - ctx.port("liquor_in").temperature,
                                 "temperature_difference"),
            "driving_force": (log_mean_temperature_difference(dt_a, dt_b), "temperature_difference"),
            "smallest_approach": (dt_b if self.setting("heating") == "vapour" else None,
                                  "temperature_difference"),
        }

    def guess(self, inlets, hints):
        liq, hot = inlets["liquor_in"], inlets["heating_in"]
        if self.setting("heating") == "vapour":
            t_hot = float(water.saturation_temperature(hot["pressure"]))
            t_out = max(liq["temperature"], t_hot - 5.0)
            t_hot_out = t_hot
        else:
            t_hot = hot["temperature"]
            t_out = max(liq["temperature"], t_hot - 5.0)
            t_hot_out = liq["temperature"] + 5.0
        cp = 3900.0
        duty = max(liq["flow"] * cp * (t_out - liq["temperature"]), 1.0)
        if self.setting("heating") == "vapour":
            hot_flow = duty / float(water.latent_heat(t_hot))
        else:
            hot_flow = duty / (4186.0 * max(t_hot - t_hot_out, 1.0))
        u = hints.get("fixed", {}).get("U", 1500.0)
        return Guess(
            streams={"liquor_out": {"flow": liq["flow"], "solids": liq["solids"], "temperature": t_out},
                     "heating_out": {"flow": hot.get("flow", hot_flow), "temperature": t_hot_out}},
            quantities={"duty": duty, "U": u, "area": duty / (u * 5.0)},
            inlets={"heating_in": {"flow": hot_flow}},
        )
