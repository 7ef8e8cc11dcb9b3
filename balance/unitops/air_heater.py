r"""Air heaters for dryers: steam coil, indirect and direct fuel firing, electric; and the fuel-gas supply.

Every heater passes the dry air through (G_out = G_in except with direct
firing) and writes its energy balance on the common datum (moist air per kg
dry air from `balance.properties.humid_air.enthalpy`, water and steam on
IAPWS-IF97)::

    steam_air_heater           G W unchanged;  m_c = m_s,  T_c = T_sat(p_s)
                               Q = m_s (h_s - h_c);  G (h_out - h_in) = (1 - f) Q
                               (1 - f) Q = UA LMTD(T_c - T_in, T_c - T_out)
    indirect_fired_air_heater  G W unchanged;  G (h_out - h_in) = Q
                               Q = eta P_fuel;  P_fuel = m_fuel LHV
    direct_fired_air_heater    G_out = G_in + m_f (1 - y);  G_out W_out = G_in W_in + m_f y
                               G_out h_out = G_in h_in + m_f h_fuel - f Q;  Q = m_f LHV
    electric_air_heater        G W unchanged;  G (h_out - h_in) = Q;  Q = eta P_el

with y the water formed by burning 1 kg of fuel, LHV the lower heating
value at 25 °C and h_fuel the fuel enthalpy defined in
`balance.unitops.drying_streams` (burning it in air releases the LHV).

Fuel: natural gas is methane unless a composition is given. Heating values
follow from the standard enthalpies of combustion at 25 °C (`FUEL_COMPONENTS`)
minus the latent heat of the water formed (IAPWS-IF97 at 25 °C,
2441.7 kJ/kg): methane LHV 50.03 MJ/kg, 2.246 kg water per kg. Direct
firing puts the combustion products (water vapour, carbon dioxide, a
little NOx) into the product air; the dry combustion gas is treated as dry
air (it differs from air by well under 1 % at dryer air-to-fuel ratios of
100 or more).
"""

from __future__ import annotations

import math
from collections.abc import Mapping

from balance.errors import InputError
from balance.properties import humid_air, water
from balance.unitops import drying_streams as ds
from balance.unitops.base import Guess, Port, QuantitySpec, Setting, UnitOperation, register
from balance.unitops.heat_exchange import log_mean_temperature_difference

#: Fuel-gas components: molar mass [kg/mol], standard enthalpy of combustion
#: (higher heating value) at 25 °C [J/mol], hydrogen atoms, carbon atoms.
#: Heats of combustion as tabulated in ISO 6976 (2016) and the NIST
#: Chemistry WebBook (from memory; agree to 0.1 %).
FUEL_COMPONENTS = {
    "methane": (0.016043, 890.6e3, 4, 1),
    "ethane": (0.030069, 1560.7e3, 6, 2),
    "propane": (0.044096, 2219.2e3, 8, 3),
    "butane": (0.058122, 2877.6e3, 10, 4),
    "hydrogen": (0.002016, 285.83e3, 2, 0),
    "nitrogen": (0.028014, 0.0, 0, 0),
    "carbon_dioxide": (0.044010, 0.0, 0, 1),
}
#: Stoichiometric air per kg of methane, [kg/kg] (2 mol O2 per mol CH4,
#: air 23.14 % O2 by mass): the most air any of these fuels needs per kg.
STOICHIOMETRIC_AIR_METHANE = 2 * 0.031999 / 0.016043 / 0.2314
#: Molar volume of an ideal gas at 0 °C and 101.325 kPa, [m3/mol] (normal cubic metres).
NORMAL_MOLAR_VOLUME = 0.022414


def fuel_properties(composition: Mapping[str, float] | None = None, *, file=None, unit=None):
    """Lower heating value, water yield and molar mass of a fuel gas.

    .. math:: \\mathrm{LHV} = \\frac{\\sum_i y_i [\\Delta_c H_i - (n_{H,i}/2) M_w \\Delta h_{vap}(25\\,°C)]}
                                      {\\sum_i y_i M_i},\\qquad
              y_w = \\frac{\\sum_i y_i (n_{H,i}/2) M_w}{\\sum_i y_i M_i}

    Parameters
    ----------
    composition : mapping, optional
        Mole fractions by component name (`FUEL_COMPONENTS`), adding up to 1
        within 1e-3. Default: pure methane.

    Returns
    -------
    (float, float, float)
        LHV at 25 °C [J/kg], water formed [kg/kg fuel], molar mass [kg/mol].

    Examples
    --------
    >>> lhv, y, M = fuel_properties()
    >>> round(lhv / 1e6, 2), round(y, 4)   # MJ/kg, kg/kg: methane
    (50.03, 2.2458)
    """
    if composition is not None and not isinstance(composition, Mapping):
        raise InputError(f"expected a table of mole fractions such as {{ methane = 0.9, ethane = 0.1 }}, "
                         f"got {composition!r}", file=file, unit=unit, key="composition")
    composition = {"methane": 1.0} if composition is None else dict(composition)
    if not composition:
        raise InputError("the fuel composition is empty", file=file, unit=unit, key="composition")
    for name, fraction in composition.items():
        if name not in FUEL_COMPONENTS:
            raise InputError(f"unknown fuel component {name!r}; valid: {', '.join(FUEL_COMPONENTS)}",
                             file=file, unit=unit, key="composition")
        if not isinstance(fraction, (int, float)) or isinstance(fraction, bool) or not 0 <= fraction <= 1:
            raise InputError(f"mole fraction of {name} must be a number in [0, 1], got {fraction!r}",
                             file=file, unit=unit, key="composition")
    total = sum(composition.values())
    if abs(total - 1.0) > 1e-3:
        raise InputError(f"mole fractions add up to {total:g}, not 1", file=file, unit=unit, key="composition")
    m_w = water.MOLAR_MASS_WATER
    latent = float(water.latent_heat(ds.FUEL_REFERENCE_TEMPERATURE))
    mass = sum(y * FUEL_COMPONENTS[n][0] for n, y in composition.items()) / total
    heat = sum(y * (FUEL_COMPONENTS[n][1] - FUEL_COMPONENTS[n][2] / 2 * m_w * latent)
               for n, y in composition.items()) / total
    water_mol = sum(y * FUEL_COMPONENTS[n][2] / 2 for n, y in composition.items()) / total
    if heat <= 0:
        raise InputError("the fuel has no heating value", file=file, unit=unit, key="composition")
    return heat / mass, water_mol * m_w / mass, mass


def _air_passes(ctx, a, b):
    ctx.equation("dry-air flow", b.flow - a.flow, "mass")
    ctx.equation("humidity", b["humidity"] - a["humidity"], "fraction")


def _pass_demand(hints, streams_out="air_out", port_in="air_in", change=0.0):
    demand = hints.get("demand", {}).get(streams_out, {})
    if "flow" in demand:
        return {port_in: {"flow": max(demand["flow"] - change, 1e-9)}}
    return {}


class _AirHeater(UnitOperation):
    """Air in, hotter air out; the outlet temperature is the usual specification."""

    def aliases(self):
        return {"outlet_temperature": ("air_out", "temperature"), "inlet_temperature": ("air_in", "temperature")}

    def _outlet_guess(self, a, hints, default_rise=120.0):
        fixed_t = hints.get("fixed_ports", {}).get("air_out", {}).get("temperature")
        if fixed_t is not None:
            return fixed_t
        duty = hints.get("fixed", {}).get("duty")
        if duty is not None:
            cp = humid_air.CP_DRY_AIR + 1880.0 * a["humidity"]
            return a["temperature"] + duty / max(a["flow"] * cp, 1e-9)
        return a["temperature"] + default_rise

    def _duty(self, a, t_out):
        return a["flow"] * (ds.air_enthalpy(t_out, a["humidity"]) - ds.air_enthalpy(a["temperature"], a["humidity"]))

    def _heated_air_guess(self, inlets, hints, default_efficiency):
        """Air out, duty, efficiency and the upstream air demand of a heater whose air passes unchanged."""
        a = dict(inlets["air_in"])
        demand = _pass_demand(hints)
        a["flow"] = demand.get("air_in", {}).get("flow", a["flow"])
        t_out = self._outlet_guess(a, hints)
        duty = self._duty(a, t_out)
        eta = hints.get("fixed", {}).get("efficiency", default_efficiency)
        air_out = {"flow": a["flow"], "humidity": a["humidity"], "temperature": t_out}
        return air_out, duty, eta, demand


@register
class SteamAirHeater(_AirHeater):
    """Finned steam coil: steam condenses at its saturation temperature and heats the air."""

    type_name = "steam_air_heater"
    description = "air heater: steam coil"
    outside_cascade = True      # its steam is not part of an evaporator's temperature cascade

    def ports(self):
        return [Port("air_in", "air", "in"), Port("air_out", "air", "out"),
                Port("heating_in", "vapour", "in", description="heating steam"),
                Port("condensate_out", "water", "out", optional=True, description="condensate")]

    def quantities(self):
        return [QuantitySpec("duty", "power", "heat given up by the steam", 0.0, 1e10, 1e6),
                QuantitySpec("UA", "conductance", "overall conductance of the coil (U times area)",
                             0.0, 1e9, 5e4)]

    @classmethod
    def settings(cls):
        return [Setting("heat_loss_fraction", "fraction", "share of the duty lost from the casing",
                        0.0, lower=0.0, upper=0.5)]

    def equations(self, ctx):
        a, b = ctx.port("air_in"), ctx.port("air_out")
        heat, cond = ctx.port("heating_in"), ctx.port("condensate_out")
        duty, ua = ctx.quantity("duty"), ctx.quantity("UA")
        f = self.setting("heat_loss_fraction")
        t_c = water.saturation_temperature(heat.pressure)
        _air_passes(ctx, a, b)
        ctx.equation("condensate flow", cond.flow - heat.flow, "mass")
        ctx.equation("condensate saturated", cond.temperature - t_c, "temperature")
        ctx.equation("duty", duty - heat.flow * (heat.specific_enthalpy - cond.specific_enthalpy), "energy")
        ctx.equation("energy balance", a.enthalpy_flow + (1 - f) * duty - b.enthalpy_flow, "energy")
        ctx.equation("heat transfer", (1 - f) * duty - ua * log_mean_temperature_difference(
            t_c - a.temperature, t_c - b.temperature), "energy")
        for check in ds.air_range_checks(b, f"{self.name} outlet", unit=self.name):
            ctx.check_range(check)

    def reported(self, ctx):
        heat = ctx.port("heating_in")
        t_c = water.saturation_temperature(heat.pressure)
        return {"steam": (heat.flow, "mass_flow"), "condensing_temperature": (t_c, "temperature"),
                "approach": (t_c - ctx.port("air_out").temperature, "temperature_difference"),
                "heat_loss": (self.setting("heat_loss_fraction") * ctx.quantity("duty"), "power")}

    def external_power(self, ctx):
        return -self.setting("heat_loss_fraction") * ctx.quantity("duty")

    def guess(self, inlets, hints):
        a, heat = inlets["air_in"], inlets["heating_in"]
        t_c = float(water.saturation_temperature(heat["pressure"]))
        fixed = hints.get("fixed", {})
        t_out = hints.get("fixed_ports", {}).get("air_out", {}).get("temperature")
        g = _pass_demand(hints).get("air_in", {}).get("flow", a["flow"])
        a = dict(a, flow=g)
        cp = humid_air.CP_DRY_AIR + 1880.0 * a["humidity"]
        if t_out is None and "UA" in fixed:
            t_out = t_c - (t_c - a["temperature"]) * math.exp(-fixed["UA"] / max(g * cp, 1e-9))
        if t_out is None:
            t_out = self._outlet_guess(a, hints, default_rise=min(120.0, t_c - a["temperature"] - 10.0))
        t_out = min(t_out, t_c - 0.5)
        f = self.setting("heat_loss_fraction")
        duty = self._duty(a, t_out) / (1 - f)
        lmtd = float(log_mean_temperature_difference(t_c - a["temperature"], t_c - t_out))
        t_s = max(heat["temperature"], t_c)
        h_s = float(water.vapour_enthalpy(t_s, heat["pressure"]))
        steam = duty / (h_s - float(water.liquid_enthalpy(t_c)))
        return Guess(streams={"air_out": {"flow": g, "humidity": a["humidity"], "temperature": t_out},
                              "condensate_out": {"flow": steam, "temperature": t_c}},
                     quantities={"duty": duty, "UA": (1 - f) * duty / max(lmtd, 1e-3)},
                     inlets={"heating_in": {"flow": steam, "temperature": t_s}, **_pass_demand(hints)})


class _FuelSetting:
    @staticmethod
    def composition_setting():
        return Setting("composition", "table",
                       "fuel-gas mole fractions by component (methane, ethane, propane, butane, hydrogen, "
                       "nitrogen, carbon_dioxide); default natural gas as pure methane", None)


@register
class IndirectFiredAirHeater(_AirHeater, _FuelSetting):
    """Fuel fired in a furnace; the air is heated across a wall; flue gas leaves by its own stack."""

    type_name = "indirect_fired_air_heater"
    description = "air heater: indirect fuel firing"

    @classmethod
    def settings(cls):
        return [cls.composition_setting()]

    def __init__(self, name, settings=None, file=None):
        super().__init__(name, settings, file=file)
        self.heating_value, self.water_yield, self.molar_mass = fuel_properties(
            self.setting("composition"), file=file, unit=name)

    def ports(self):
        return [Port("air_in", "air", "in"), Port("air_out", "air", "out")]

    def quantities(self):
        return [QuantitySpec("duty", "power", "heat given to the air", 0.0, 1e10, 1e6),
                QuantitySpec("efficiency", "fraction", "share of the fuel's LHV given to the air",
                             0.05, 1.0, 0.85, default=0.85),
                QuantitySpec("fuel_power", "power", "fuel burnt, LHV basis", 0.0, 1e10, 1e6),
                QuantitySpec("fuel_flow", "mass_flow", "fuel burnt", 0.0, 1e3, 0.05)]

    def equations(self, ctx):
        a, b = ctx.port("air_in"), ctx.port("air_out")
        duty = ctx.quantity("duty")
        _air_passes(ctx, a, b)
        ctx.equation("energy balance", a.enthalpy_flow + duty - b.enthalpy_flow, "energy")
        ctx.equation("efficiency", ctx.quantity("efficiency") * ctx.quantity("fuel_power") - duty, "energy")
        ctx.equation("fuel flow", ctx.quantity("fuel_flow") * self.heating_value - ctx.quantity("fuel_power"),
                     "energy")
        for check in ds.air_range_checks(b, f"{self.name} outlet", unit=self.name):
            ctx.check_range(check)

    def reported(self, ctx):
        fuel = ctx.quantity("fuel_flow")
        return {"heating_value": (self.heating_value, "specific_enthalpy"),
                "fuel_normal_volume_flow": (fuel / self.molar_mass * NORMAL_MOLAR_VOLUME, "volume_flow"),
                "flue_gas_loss": (ctx.quantity("fuel_power") - ctx.quantity("duty"), "power")}

    def external_power(self, ctx):
        # the furnace and its flue gas lie outside the flowsheet: only the duty crosses
        return ctx.quantity("duty")

    def guess(self, inlets, hints):
        air_out, duty, eta, demand = self._heated_air_guess(inlets, hints, default_efficiency=0.85)
        return Guess(streams={"air_out": air_out},
                     quantities={"duty": duty, "fuel_power": duty / eta, "efficiency": eta,
                                 "fuel_flow": duty / eta / self.heating_value},
                     inlets=demand)


@register
class DirectFiredAirHeater(_AirHeater):
    """Fuel gas burnt in the drying air: its heat and combustion water go into the air."""

    type_name = "direct_fired_air_heater"
    description = "air heater: direct fuel-gas firing"

    def ports(self):
        return [Port("air_in", "air", "in"), Port("fuel_in", "fuel", "in", description="fuel gas"),
                Port("air_out", "air", "out")]

    def quantities(self):
        return [QuantitySpec("duty", "power", "heat released, LHV basis", 0.0, 1e10, 1e6)]

    @classmethod
    def settings(cls):
        return [Setting("heat_loss_fraction", "fraction", "share of the heat released lost from the casing",
                        0.0, lower=0.0, upper=0.5)]

    def equations(self, ctx):
        a, fuel, b = ctx.port("air_in"), ctx.port("fuel_in"), ctx.port("air_out")
        duty = ctx.quantity("duty")
        y = fuel["water_yield"]
        f = self.setting("heat_loss_fraction")
        ctx.equation("dry-gas balance", b.flow - a.flow - fuel.flow * (1 - y), "mass")
        ctx.equation("water balance", b.water_flow - a.water_flow - fuel.flow * y, "mass")
        ctx.equation("heat released", duty - fuel.flow * fuel["heating_value"], "energy")
        ctx.equation("energy balance", a.enthalpy_flow + fuel.enthalpy_flow - f * duty - b.enthalpy_flow, "energy")
        for check in ds.air_range_checks(b, f"{self.name} outlet", unit=self.name):
            ctx.check_range(check)

    def reported(self, ctx):
        a, fuel = ctx.port("air_in"), ctx.port("fuel_in")
        return {"fuel_flow": (fuel.flow, "mass_flow"),
                "heating_value": (fuel["heating_value"], "specific_enthalpy"),
                "combustion_water": (fuel.flow * fuel["water_yield"], "mass_flow"),
                "air_fuel_ratio": (a.flow / fuel.flow, "ratio"),
                "heat_loss": (self.setting("heat_loss_fraction") * ctx.quantity("duty"), "power")}

    def external_power(self, ctx):
        return -self.setting("heat_loss_fraction") * ctx.quantity("duty")

    def solution_problems(self, values):
        ratio = values["air_fuel_ratio"]
        if math.isfinite(ratio) and ratio < STOICHIOMETRIC_AIR_METHANE:
            return [str(InputError(f"air-to-fuel ratio {ratio:.1f} kg/kg is below the stoichiometric "
                                   f"{STOICHIOMETRIC_AIR_METHANE:.1f}: not enough oxygen to burn the fuel",
                                   file=self.file, unit=self.name, key="fuel_in"))]
        return []

    def guess(self, inlets, hints):
        a, fuel = dict(inlets["air_in"]), inlets["fuel_in"]
        lhv = fuel.get("heating_value", 50.03e6)
        y = fuel.get("water_yield", 2.2458)
        demand = _pass_demand(hints)
        a["flow"] = demand.get("air_in", {}).get("flow", a["flow"])
        t_out = self._outlet_guess(a, hints)
        f = self.setting("heat_loss_fraction")
        duty = self._duty(a, t_out) / (1 - f) * 1.01
        m_f = duty / lhv
        g_out = a["flow"] + m_f * (1 - y)
        w_out = (a["flow"] * a["humidity"] + m_f * y) / g_out
        return Guess(streams={"air_out": {"flow": g_out, "humidity": w_out, "temperature": t_out}},
                     quantities={"duty": duty}, inlets={"fuel_in": {"flow": m_f}, **demand})


@register
class ElectricAirHeater(_AirHeater):
    """Electric resistance heater in the air duct."""

    type_name = "electric_air_heater"
    description = "air heater: electric"

    def ports(self):
        return [Port("air_in", "air", "in"), Port("air_out", "air", "out")]

    def quantities(self):
        return [QuantitySpec("duty", "power", "heat given to the air", 0.0, 1e10, 1e5),
                QuantitySpec("electrical_power", "power", "electric power drawn", 0.0, 1e10, 1e5),
                QuantitySpec("efficiency", "fraction", "share of the electric power given to the air",
                             0.05, 1.0, 0.98, default=0.98)]

    def equations(self, ctx):
        a, b = ctx.port("air_in"), ctx.port("air_out")
        _air_passes(ctx, a, b)
        ctx.equation("energy balance", a.enthalpy_flow + ctx.quantity("duty") - b.enthalpy_flow, "energy")
        ctx.equation("efficiency", ctx.quantity("efficiency") * ctx.quantity("electrical_power")
                     - ctx.quantity("duty"), "energy")
        for check in ds.air_range_checks(b, f"{self.name} outlet", unit=self.name):
            ctx.check_range(check)

    def external_power(self, ctx):
        # the electric power enters; the part not given to the air is lost to the surroundings
        return ctx.quantity("duty")

    def guess(self, inlets, hints):
        air_out, duty, eta, demand = self._heated_air_guess(inlets, hints, default_efficiency=0.98)
        return Guess(streams={"air_out": air_out},
                     quantities={"duty": duty, "electrical_power": duty / eta, "efficiency": eta}, inlets=demand)


@register
class FuelSupply(UnitOperation):
    """Fuel gas entering the flowsheet (for a direct-fired heater).

    Its composition (mole fractions; default natural gas as pure methane)
    fixes the stream's ``heating_value`` (LHV at 25 °C) and ``water_yield``
    (`fuel_properties`); ``flow`` is normally solved (the fuel use).
    """

    type_name = "fuel_supply"
    description = "fuel gas supply (natural gas as methane unless a composition is given)"
    boundary = "source"

    @classmethod
    def settings(cls):
        return [_FuelSetting.composition_setting(),
                Setting("temperature", "temperature", "fuel-gas temperature", 288.15, lower=220.0, upper=500.0)]

    def __init__(self, name, settings=None, file=None):
        super().__init__(name, settings, file=file)
        self.heating_value, self.water_yield, self.molar_mass = fuel_properties(
            self.setting("composition"), file=file, unit=name)

    def ports(self):
        return [Port("out", "fuel", "out", description="fuel gas")]

    def aliases(self):
        return {"flow": ("out", "flow")}

    def equations(self, ctx):
        out = ctx.port("out")
        ctx.equation("heating value", (out["heating_value"] - self.heating_value) / 1e6, "other")
        ctx.equation("water yield", out["water_yield"] - self.water_yield, "fraction")
        ctx.equation("temperature", out.temperature - self.setting("temperature"), "temperature")

    def reported(self, ctx):
        return {"normal_volume_flow": (ctx.port("out").flow / self.molar_mass * NORMAL_MOLAR_VOLUME,
                                       "volume_flow")}

    def guess(self, inlets, hints):
        return Guess(streams={"out": {"heating_value": self.heating_value, "water_yield": self.water_yield,
                                      "temperature": self.setting("temperature")}})
