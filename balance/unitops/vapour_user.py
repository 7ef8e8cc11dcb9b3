r"""A vapour bleed to a user outside the flowsheet: vapour condenses against an external duty.

Part of an effect's vapour is often sent to a heater elsewhere in the plant
(a pasteuriser, a CIP or hot-water heater, a preheater of another line).
The user condenses it and gives the heat away; the condensate comes back
(connect ``condensate_out``) or is lost (leave it unconnected: it leaves
the flowsheet)::

    m_c = m_v                                   mass balance
    T_c = T_sat(p_v) - subcooling               condensate temperature
    Q = m_v (h_v - h_c)                         duty given to the user

The duty Q leaves the flowsheet, so `external_power` returns -Q and the
overall energy balance closes with it. Fix ``duty`` (the user's need; the
vapour flow is then solved, usually through a splitter's fraction) or the
vapour flow (the duty is then solved).

Assumptions: the user takes all the vapour's heat down to the condensate
temperature; the vapour's superheat is given up too; pressure losses are
neglected. The condensing temperature is reported, so that the user's own
heat exchanger can be checked against it.
"""

from __future__ import annotations

from balance.properties import water
from balance.unitops.base import Guess, Port, QuantitySpec, UnitOperation, register


@register
class VapourUser(UnitOperation):
    """A heat user outside the flowsheet served with vapour (a bleed)."""

    type_name = "vapour_user"
    description = "vapour bleed to a heat user outside the flowsheet"

    def ports(self):
        return [
            Port("vapour_in", "vapour", "in", description="vapour bled to the user"),
            Port("condensate_out", "water", "out", optional=True,
                 description="condensate returned (unconnected: it leaves the flowsheet)"),
        ]

    def quantities(self):
        return [
            QuantitySpec("duty", "power", "heat given to the user", 0.0, 1e10, 1e6),
            QuantitySpec("subcooling", "temperature_difference",
                         "condensate below the condensing temperature", 0.0, 200.0, 1.0, default=0.0),
        ]

    def equations(self, ctx):
        vap, cond = ctx.port("vapour_in"), ctx.port("condensate_out")
        t_sat = water.saturation_temperature(vap.pressure)
        ctx.equation("mass balance", cond.flow - vap.flow, "mass")
        ctx.equation("condensate temperature", cond.temperature - t_sat + ctx.quantity("subcooling"),
                     "temperature")
        ctx.equation("duty", ctx.quantity("duty") - vap.flow * (vap.specific_enthalpy - cond.specific_enthalpy),
                     "energy")

    def reported(self, ctx):
        return {"condensing_temperature": (water.saturation_temperature(ctx.port("vapour_in").pressure),
                                           "temperature")}

    def external_power(self, ctx):
        """The user's duty leaves the flowsheet."""
        return -ctx.quantity("duty")

    def guess(self, inlets, hints):
        vap = inlets["vapour_in"]
        fixed = hints.get("fixed", {})
        t_sat = float(water.saturation_temperature(vap["pressure"]))
        t_c = t_sat - fixed.get("subcooling", 0.0)
        dh = float(water.vapour_enthalpy(max(vap["temperature"], t_sat), vap["pressure"])) \
            - float(water.liquid_enthalpy(t_c))
        flow = fixed["duty"] / dh if "duty" in fixed else vap["flow"]
        return Guess(streams={"condensate_out": {"flow": flow, "temperature": t_c}},
                     quantities={"duty": flow * dh, "subcooling": t_sat - t_c})
