r"""Air handling around dryers: ambient air, fans, mixing and splitting, exhaust heat recovery, dust separation.

Units and their equations (G dry-air flow, W humidity ratio, h moist-air
enthalpy per kg dry air on the program's datum, p_site the site pressure)::

    ambient_air         source: T, W (or relative humidity) and usually a free flow
                        phi = p_w(W, p_site) / p_ws(T)                 ASHRAE 2017 ch. 1 Eq. 22
    air_exhaust         sink: air leaving to atmosphere
    fan                 G, W unchanged;  G (h_out - h_in) = P_shaft (+ motor loss if in the air)
                        P_shaft eta = G R_m T_in k/(k-1) [(1 + dp/p_in)^((k-1)/k) - 1]
                        P_el eta_motor = P_shaft;  V_in = G v(T_in, W_in, p_in)
    air_mixer           sum G_i = G;  sum G_i W_i = G W;  sum G_i h_i = G h
    air_splitter        every outlet at the inlet state; fraction_i of the flow
    air_heat_recovery   G, W unchanged on both sides (no condensation)
                        Q = G_h (h_hi - h_ho) = G_c (h_co - h_ci)
                        Q = eps C_min (T_hi - T_ci),  C = G (c_pa + c_pv W)
                        eps = f(NTU = UA / C_min, C_r = C_min / C_max)   counterflow or crossflow
    cyclone, bag_filter G, W, unchanged, adiabatic; powder: collected = eta_c fines_in,
                        lost = (1 - eta_c) fines_in, same moisture; one outlet temperature

R_m and k are the gas constant and heat-capacity ratio of the moist air
(ideal-gas mixture; c_p,v = 1.86 kJ/(kg K), ASHRAE 2017 ch. 1); the fan's
compression term is the isentropic one, which equals V dp to within
dp/(2 k p) (under 2 % at 5 kPa) and so includes the compressibility
correction. The heat-recovery effectiveness relations are those of
counterflow and of crossflow with both fluids unmixed (Incropera & DeWitt,
*Fundamentals of Heat and Mass Transfer*, 6th ed., Table 11.3, eqs. 11.29a
and 11.32; the crossflow one is the usual approximation), with constant
heat capacities c_pv = 1.88 kJ/(kg K) for the vapour in the capacity rates
only; the duty balances use the exact enthalpies.
"""

from __future__ import annotations

import math

import casadi as ca

from balance.errors import InfeasibleSpecificationError
from balance.properties import humid_air, water
from balance.properties.validity import RangeCheck, ValidRange, valid_for
from balance.unitops import drying_streams as ds
from balance.unitops.base import Guess, Port, QuantitySpec, Setting, UnitOperation, register

#: Heat capacity of water vapour for capacity rates and fan heat-capacity ratios, [J/(kg K)]
#: (ASHRAE Handbook—Fundamentals 2017, ch. 1, Eq. 31: 1.86 kJ/(kg K)).
CP_VAPOUR = 1860.0
#: Heat capacity of water vapour in the heat-recovery capacity rates, [J/(kg K)] (secant
#: 20-200 °C of the IF97 ideal-gas enthalpy, about 1.88 kJ/(kg K)).
CP_VAPOUR_SECANT = 1880.0
#: Specific gas constant of water vapour, [J/(kg K)] (IAPWS-IF97).
R_VAPOUR = water.R_WATER


def _site_pressure():
    return Setting("site_pressure", "pressure",
                   "barometric pressure (default: the flowsheet's site pressure)", 101325.0,
                   lower=50e3, upper=110e3)


def _demand(hints, port="out"):
    return hints.get("demand", {}).get(port, {}).get("flow")


def _located(unit, message, key, hint=None):
    return InfeasibleSpecificationError(message, file=unit.file, unit=unit.name, key=key, hint=hint)


@register
class AmbientAir(UnitOperation):
    """Ambient air entering the flowsheet at the site pressure.

    Keys: ``temperature``, and ``relative_humidity`` or ``humidity``
    (humidity ratio); ``flow`` (dry air) is usually solved.
    """

    type_name = "ambient_air"
    description = "ambient air at the site pressure"
    boundary = "source"

    @classmethod
    def settings(cls):
        return [_site_pressure()]

    def ports(self):
        return [Port("out", "air", "out", description="ambient air")]

    def quantities(self):
        return [QuantitySpec("relative_humidity", "fraction", "relative humidity", 0.0, 10.0, 0.6)]

    def aliases(self):
        return {n: ("out", n) for n in ("flow", "temperature", "humidity")}

    def equations(self, ctx):
        out = ctx.port("out")
        ctx.equation("relative humidity", ctx.quantity("relative_humidity") - humid_air.relative_humidity(
            out.temperature, out["humidity"], self.setting("site_pressure")), "fraction")
        for check in ds.air_range_checks(out, f"{self.name} ambient", unit=self.name):
            ctx.check_range(check)

    def reported(self, ctx):
        out = ctx.port("out")
        return {"dew_point": (humid_air.dew_point_temperature(ca.fmax(out["humidity"], 1e-6),
                                                              self.setting("site_pressure")), "temperature")}

    def _check(self, w=None, rh=None, t=None):
        p = self.setting("site_pressure")
        if w is not None and w < 0:
            raise _located(self, f"humidity ratio {w:g} kg/kg is negative", "humidity")
        if rh is not None and not 0.0 <= rh <= 1.0:
            raise _located(self, f"relative humidity {100 * rh:g} % is outside 0-100 %", "relative_humidity")
        if w is not None and t is not None:
            rh_w = float(humid_air.relative_humidity(t, w, p))
            if rh_w > 1.0 + 1e-9:
                raise _located(self, f"air at {t - 273.15:.1f} °C cannot hold {1000 * w:.2f} g/kg "
                                     f"(relative humidity {100 * rh_w:.0f} %)", "humidity")

    def solution_problems(self, values):
        rh = values["relative_humidity"]
        if rh > 1.0 + 1e-9 or rh < -1e-12:
            return [str(_located(self, f"ambient relative humidity {100 * rh:.1f} % is impossible",
                                 "relative_humidity"))]
        return []

    def guess(self, inlets, hints):
        fixed, ports = hints.get("fixed", {}), hints.get("fixed_ports", {}).get("out", {})
        t, w, rh = ports.get("temperature"), ports.get("humidity"), fixed.get("relative_humidity")
        self._check(w, rh, t)
        p = self.setting("site_pressure")
        t = t if t is not None else 293.15
        out = {"temperature": t}
        if w is None:
            rh = 0.6 if rh is None else rh
            w = float(humid_air.humidity_ratio_from_relative_humidity(t, rh, p))
            out["humidity"] = w
        quantities = {"relative_humidity": float(humid_air.relative_humidity(t, w, p))}
        if _demand(hints) is not None:
            out["flow"] = _demand(hints)
        return Guess(streams={"out": out}, quantities=quantities)


@register
class AirExhaust(UnitOperation):
    """Air leaving the flowsheet (to a stack): keys ``flow``, ``humidity``, ``temperature``."""

    type_name = "air_exhaust"
    description = "air leaving the flowsheet"
    boundary = "sink"

    def ports(self):
        return [Port("in", "air", "in")]

    def aliases(self):
        return {n: ("in", n) for n in ("flow", "temperature", "humidity")}


def moist_air_gas_constant(W):
    """Gas constant of moist air per kg dry air, [J/(kg dry air K)]: R_da + W R_w (ideal gas)."""
    return humid_air.R_DRY_AIR + W * R_VAPOUR


def moist_air_heat_capacity_ratio(W):
    """Heat-capacity ratio k of moist air (ideal gas, c_p,a 1006, c_p,v 1860 J/(kg K)), [-]."""
    cp = humid_air.CP_DRY_AIR + W * CP_VAPOUR
    return cp / (cp - moist_air_gas_constant(W))


@valid_for(W=(0.0, 0.5, "kg/kg"), T_in=(233.15, 573.15, "K"), dp=(0.0, 50e3, "Pa"))
def fan_gas_power(G, W, T_in, p_in, dp):
    """Isentropic compression power of moist air, [W].

    ``P = G R_m T_in k/(k-1) [(1 + dp/p_in)^((k-1)/k) - 1]``, R_m = R_da + W R_w.
    Tends to ``V_in dp`` for small dp/p_in (the incompressible fan-air power).

    Parameters
    ----------
    G : float or casadi expression
        Dry-air flow, [kg/s].
    W : float or casadi expression
        Humidity ratio, [kg/kg].
    T_in : float or casadi expression
        Inlet temperature, [K].
    p_in : float
        Inlet absolute pressure, [Pa].
    dp : float or casadi expression
        Pressure rise, [Pa].

    Examples
    --------
    >>> v = float(humid_air.specific_volume(293.15, 0.0, 101325.0))
    >>> round(fan_gas_power(1.0, 0.0, 293.15, 101325.0, 1000.0) / (v * 1000.0), 4)   # vs V dp
    0.9965
    """
    k = moist_air_heat_capacity_ratio(W)
    e = (k - 1) / k
    return G * moist_air_gas_constant(W) * T_in / e * ((1 + dp / p_in) ** e - 1)


@register
class Fan(UnitOperation):
    """Fan: raises the air pressure; its shaft power ends up as heat in the air."""

    type_name = "fan"
    description = "fan: pressure rise, power and temperature rise"

    @classmethod
    def settings(cls):
        return [_site_pressure(),
                Setting("inlet_gauge_pressure", "pressure_difference",
                        "fan inlet pressure relative to the site (negative for an exhaust fan)", 0.0,
                        lower=-50e3, upper=50e3),
                Setting("motor_in_airstream", "flag", "the motor is cooled by the air it moves", False)]

    def ports(self):
        return [Port("air_in", "air", "in"), Port("air_out", "air", "out")]

    def quantities(self):
        return [QuantitySpec("pressure_rise", "pressure_difference", "total pressure rise", 0.0, 1e5, 3e3),
                QuantitySpec("efficiency", "fraction", "fan efficiency (air power / shaft power)",
                             0.05, 1.0, 0.7, default=0.70),
                QuantitySpec("motor_efficiency", "fraction", "motor and drive efficiency", 0.05, 1.0, 0.95,
                             default=0.95),
                QuantitySpec("shaft_power", "power", "shaft power", 0.0, 1e9, 1e5),
                QuantitySpec("electrical_power", "power", "electric power drawn", 0.0, 1e9, 1e5)]

    def aliases(self):
        return {"outlet_temperature": ("air_out", "temperature")}

    def _p_in(self):
        return self.setting("site_pressure") + self.setting("inlet_gauge_pressure")

    def equations(self, ctx):
        a, b = ctx.port("air_in"), ctx.port("air_out")
        shaft, elec = ctx.quantity("shaft_power"), ctx.quantity("electrical_power")
        ctx.equation("dry-air flow", b.flow - a.flow, "mass")
        ctx.equation("humidity", b["humidity"] - a["humidity"], "fraction")
        ctx.equation("shaft power", ctx.quantity("efficiency") * shaft - fan_gas_power(
            a.flow, a["humidity"], a.temperature, self._p_in(), ctx.quantity("pressure_rise")), "power")
        ctx.equation("electric power", ctx.quantity("motor_efficiency") * elec - shaft, "power")
        heat = elec if self.setting("motor_in_airstream") else shaft
        ctx.equation("energy balance", a.enthalpy_flow + heat - b.enthalpy_flow, "energy")

    def reported(self, ctx):
        a, b = ctx.port("air_in"), ctx.port("air_out")
        return {"volume_flow": (a.flow * humid_air.specific_volume(a.temperature, a["humidity"], self._p_in()),
                                "volume_flow"),
                "temperature_rise": (b.temperature - a.temperature, "temperature_difference"),
                "inlet_temperature": (a.temperature, "temperature"),
                "dry_air_flow": (a.flow, "mass_flow")}

    def external_power(self, ctx):
        return ctx.quantity("electrical_power" if self.setting("motor_in_airstream") else "shaft_power")

    def guess(self, inlets, hints):
        a = dict(inlets["air_in"])
        if _demand(hints, "air_out") is not None:
            a["flow"] = _demand(hints, "air_out")
        fixed = hints.get("fixed", {})
        dp = fixed.get("pressure_rise", 3e3)
        eta, eta_m = fixed.get("efficiency", 0.7), fixed.get("motor_efficiency", 0.95)
        shaft = float(fan_gas_power(a["flow"], a["humidity"], a["temperature"], self._p_in(), dp)) / eta
        elec = shaft / eta_m
        heat = elec if self.setting("motor_in_airstream") else shaft
        cp = humid_air.CP_DRY_AIR + CP_VAPOUR * a["humidity"]
        t_out = a["temperature"] + heat / max(a["flow"] * cp, 1e-9)
        return Guess(streams={"air_out": {"flow": a["flow"], "humidity": a["humidity"], "temperature": t_out}},
                     quantities={"pressure_rise": dp, "shaft_power": shaft, "electrical_power": elec,
                                 "efficiency": eta, "motor_efficiency": eta_m},
                     inlets={"air_in": {"flow": a["flow"]}} if _demand(hints, "air_out") is not None else {})


@register
class AirMixer(UnitOperation):
    """Adiabatic mixing of air streams (fresh and recirculated air)."""

    type_name = "air_mixer"
    description = "adiabatic mixing of air streams"

    @classmethod
    def settings(cls):
        return [Setting("inlets", "integer", "number of inlets", 2, lower=2, upper=10), _site_pressure()]

    def ports(self):
        n = int(self.setting("inlets"))
        return [Port(f"in{i}", "air", "in", optional=i > 1) for i in range(1, n + 1)] + [Port("out", "air", "out")]

    def _ins(self, ctx):
        return [s for s in (ctx.port(f"in{i}") for i in range(1, int(self.setting("inlets")) + 1)) if s is not None]

    def equations(self, ctx):
        ins, out = self._ins(ctx), ctx.port("out")
        ctx.equation("dry-air balance", sum(s.flow for s in ins) - out.flow, "mass")
        ctx.equation("water balance", sum(s.water_flow for s in ins) - out.water_flow, "mass")
        ctx.equation("energy balance", sum(s.enthalpy_flow for s in ins) - out.enthalpy_flow, "energy")

    def reported(self, ctx):
        out = ctx.port("out")
        return {"outlet_relative_humidity": (humid_air.relative_humidity(
            out.temperature, out["humidity"], self.setting("site_pressure")), "fraction")}

    def solution_problems(self, values):
        rh = values["outlet_relative_humidity"]
        if rh > 1.0 + 1e-6:
            return [str(_located(self, f"the mixed air would be supersaturated (relative humidity "
                                       f"{100 * rh:.1f} %): fog forms, which this balance does not model", "out"))]
        return []

    def guess(self, inlets, hints):
        ins = {k: v for k, v in inlets.items()}
        g = sum(s["flow"] for s in ins.values())
        demand = _demand(hints)
        needed = {}
        if demand is not None and "in1" in ins:
            others = sum(s["flow"] for k, s in ins.items() if k != "in1")
            fresh = max(demand - others, 0.05 * demand)
            needed = {"in1": {"flow": fresh}}
            ins["in1"] = dict(ins["in1"], flow=fresh)
            g = sum(s["flow"] for s in ins.values())
        w = sum(s["flow"] * s["humidity"] for s in ins.values()) / max(g, 1e-12)
        h = sum(s["flow"] * ds.air_enthalpy(s["temperature"], s["humidity"]) for s in ins.values()) / max(g, 1e-12)
        t = 273.15 + (h - w * 2.501e6) / (humid_air.CP_DRY_AIR + CP_VAPOUR * w)
        return Guess(streams={"out": {"flow": g, "humidity": w, "temperature": t}}, inlets=needed)


@register
class AirSplitter(UnitOperation):
    """Division of an air stream (exhaust to recirculation and stack) at one state."""

    type_name = "air_splitter"
    description = "division of an air stream"

    @classmethod
    def settings(cls):
        return [Setting("outlets", "integer", "number of outlets", 2, lower=2, upper=10)]

    def ports(self):
        n = int(self.setting("outlets"))
        return [Port("in", "air", "in")] + [Port(f"out{i}", "air", "out") for i in range(1, n + 1)]

    def quantities(self):
        n = int(self.setting("outlets"))
        return [QuantitySpec(f"fraction_{i}", "fraction", f"share of the dry-air flow sent to out{i}",
                             0.0, 1.0, 0.5) for i in range(1, n)]

    def equations(self, ctx):
        n = int(self.setting("outlets"))
        a = ctx.port("in")
        outs = [ctx.port(f"out{i}") for i in range(1, n + 1)]
        for i, out in enumerate(outs[:-1], start=1):
            ctx.equation(f"flow to out{i}", out.flow - ctx.quantity(f"fraction_{i}") * a.flow, "mass")
        ctx.equation("dry-air balance", a.flow - sum(o.flow for o in outs), "mass")
        for i, out in enumerate(outs, start=1):
            ctx.equation(f"humidity of out{i}", out["humidity"] - a["humidity"], "fraction")
            ctx.equation(f"temperature of out{i}", out.temperature - a.temperature, "temperature")

    def guess(self, inlets, hints):
        a = inlets["in"]
        n = int(self.setting("outlets"))
        fixed = hints.get("fixed", {})
        fractions = [fixed.get(f"fraction_{i}", 1.0 / n) for i in range(1, n)]
        fractions.append(max(1.0 - sum(fractions), 0.0))
        return Guess(streams={f"out{i}": dict(a, flow=a["flow"] * f) for i, f in enumerate(fractions, start=1)},
                     quantities={f"fraction_{i}": f for i, f in enumerate(fractions[:-1], start=1)})


class _DewPointCheck(RangeCheck):
    """Warns when a heat-exchanger wall would run below the exhaust's dew point."""

    def message(self, number: float) -> str:
        return (f"{self.label}: the cold-end wall would be {-number:.1f} K below the exhaust dew point; "
                "condensate would wet the surface and fines would cake on it (fouling, corrosion)")


@valid_for(ntu=(0.0, 100.0, "-"), cr=(0.0, 1.0, "-"))
def effectiveness_counterflow(ntu, cr):
    """Effectiveness of a counterflow exchanger, [-] (Incropera & DeWitt 6th ed., eq. 11.29a).

    ``eps = (1 - exp(-NTU (1 - Cr))) / (1 - Cr exp(-NTU (1 - Cr)))``, and
    ``NTU / (1 + NTU)`` at Cr = 1 (eq. 11.29b).

    Examples
    --------
    >>> round(float(effectiveness_counterflow(2.0, 1.0)), 4)
    0.6667
    >>> round(float(effectiveness_counterflow(2.0, 0.5)), 4)
    0.7746
    """
    near = ca.fabs(1 - cr) < 1e-6
    cr_safe = ca.if_else(near, 0.5, cr)
    e = ca.exp(-ntu * (1 - cr_safe))
    return ca.if_else(near, ntu / (1 + ntu), (1 - e) / (1 - cr_safe * e))


@valid_for(ntu=(0.0, 100.0, "-"), cr=(1e-9, 1.0, "-"))
def effectiveness_crossflow_unmixed(ntu, cr):
    """Effectiveness of a crossflow exchanger, both fluids unmixed, [-] (Incropera & DeWitt 6th ed., eq. 11.32).

    ``eps = 1 - exp[(1/Cr) NTU^0.22 (exp(-Cr NTU^0.78) - 1)]`` (an approximation to the exact series).

    Examples
    --------
    >>> round(float(effectiveness_crossflow_unmixed(2.0, 1.0)), 3)
    0.615
    """
    ntu = ca.fmax(ntu, 1e-12)
    return 1 - ca.exp((1 / cr) * ntu ** 0.22 * (ca.exp(-cr * ntu ** 0.78) - 1))


@register
class AirHeatRecovery(UnitOperation):
    """Air-to-air heat exchanger: exhaust air (hot side) preheats fresh air (cold side), without condensation."""

    type_name = "air_heat_recovery"
    description = "air-to-air exhaust heat recovery"

    @classmethod
    def settings(cls):
        return [Setting("arrangement", "text", "flow arrangement", "counterflow",
                        choices=("counterflow", "crossflow")),
                _site_pressure()]

    def ports(self):
        return [Port("hot_in", "air", "in", description="exhaust air"), Port("hot_out", "air", "out"),
                Port("cold_in", "air", "in", description="fresh air"), Port("cold_out", "air", "out")]

    def quantities(self):
        return [QuantitySpec("duty", "power", "heat recovered", 0.0, 1e10, 1e6),
                QuantitySpec("effectiveness", "fraction", "Q / (C_min (T_hot,in - T_cold,in))", 0.0, 1.0, 0.5),
                QuantitySpec("UA", "conductance", "overall conductance (U times area)", 0.0, 1e9, 5e4)]

    @staticmethod
    def _capacity(s):
        return s.flow * (humid_air.CP_DRY_AIR + CP_VAPOUR_SECANT * s["humidity"])

    def equations(self, ctx):
        hi, ho, ci, co = (ctx.port(p) for p in ("hot_in", "hot_out", "cold_in", "cold_out"))
        duty, eps, ua = ctx.quantity("duty"), ctx.quantity("effectiveness"), ctx.quantity("UA")
        for side, (a, b) in (("hot", (hi, ho)), ("cold", (ci, co))):
            ctx.equation(f"{side} dry-air flow", b.flow - a.flow, "mass")
            ctx.equation(f"{side} humidity", b["humidity"] - a["humidity"], "fraction")
        ctx.equation("hot side", hi.enthalpy_flow - ho.enthalpy_flow - duty, "energy")
        ctx.equation("cold side", co.enthalpy_flow - ci.enthalpy_flow - duty, "energy")
        c_h, c_c = self._capacity(hi), self._capacity(ci)
        c_min, c_max = ca.fmin(c_h, c_c), ca.fmax(c_h, c_c)
        ctx.equation("effectiveness", duty - eps * c_min * (hi.temperature - ci.temperature), "energy")
        relation = effectiveness_counterflow if self.setting("arrangement") == "counterflow" \
            else effectiveness_crossflow_unmixed
        ctx.equation("effectiveness and UA", eps - relation(ua / c_min, c_min / c_max), "fraction")
        p = self.setting("site_pressure")
        t_dew = humid_air.dew_point_temperature(ca.fmax(hi["humidity"], 1e-6), p)
        ctx.check_range(_DewPointCheck(f"{self.name} exhaust side", 0.5 * (ho.temperature + ci.temperature) - t_dew,
                                       ValidRange("dew_point_margin", 0.0, 1e4, "K"),
                                       source="no condensation", unit=self.name))

    def reported(self, ctx):
        hi, ho, ci, co = (ctx.port(p) for p in ("hot_in", "hot_out", "cold_in", "cold_out"))
        t_dew = humid_air.dew_point_temperature(ca.fmax(hi["humidity"], 1e-6), self.setting("site_pressure"))
        return {"exhaust_dew_point": (t_dew, "temperature"),
                "exhaust_outlet_temperature": (ho.temperature, "temperature"),
                "cold_end_wall_temperature": (0.5 * (ho.temperature + ci.temperature), "temperature"),
                "smallest_approach": (ca.fmin(hi.temperature - co.temperature, ho.temperature - ci.temperature),
                                      "temperature_difference")}

    def solution_problems(self, values):
        t_out, t_dew = values["exhaust_outlet_temperature"], values["exhaust_dew_point"]
        if t_out < t_dew:
            return [str(_located(self, f"the exhaust would leave at {t_out - 273.15:.1f} °C, below its dew point "
                                       f"{t_dew - 273.15:.1f} °C: condensation is not modelled", "effectiveness",
                                 hint="lower the effectiveness or UA"))]
        return []

    def guess(self, inlets, hints):
        hi, ci = dict(inlets["hot_in"]), dict(inlets["cold_in"])
        demand = _demand(hints, "cold_out")
        if demand is not None:
            ci["flow"] = demand
        fixed = hints.get("fixed", {})
        cap = lambda s: s["flow"] * (humid_air.CP_DRY_AIR + CP_VAPOUR_SECANT * s["humidity"])  # noqa: E731
        c_h, c_c = cap(hi), cap(ci)
        c_min, c_max = min(c_h, c_c), max(c_h, c_c)
        cr = c_min / max(c_max, 1e-12)
        if "effectiveness" in fixed:
            eps = fixed["effectiveness"]
        elif "UA" in fixed:
            func = effectiveness_counterflow if self.setting("arrangement") == "counterflow" \
                else effectiveness_crossflow_unmixed
            eps = float(func(fixed["UA"] / max(c_min, 1e-12), cr))
        else:
            eps = 0.5
        dt = hi["temperature"] - ci["temperature"]
        q = eps * c_min * dt
        t_ho = hi["temperature"] - q / max(c_h, 1e-12)
        t_co = ci["temperature"] + q / max(c_c, 1e-12)
        # UA from the counterflow relation (a fair start for crossflow too)
        eps_c = min(max(eps, 1e-6), 0.999 * (1.0 if cr > 0.999 else 1.0))
        if abs(1 - cr) < 1e-6:
            ntu = eps_c / (1 - eps_c)
        else:
            ntu = math.log((1 - cr * eps_c) / max(1 - eps_c, 1e-12)) / (1 - cr)
        return Guess(streams={"hot_out": dict(hi, temperature=t_ho), "cold_out": dict(ci, temperature=t_co)},
                     quantities={"duty": q, "effectiveness": eps, "UA": ntu * c_min},
                     inlets={"cold_in": {"flow": ci["flow"]}} if demand is not None else {})


class _Separator(UnitOperation):
    """Cyclone or bag filter: separates the fines the exhaust air carries."""

    default_efficiency = 0.99

    @classmethod
    def settings(cls):
        return [_site_pressure()]

    def ports(self):
        return [Port("air_in", "air", "in", description="exhaust air"),
                Port("fines_in", "powder", "in", description="fines carried by the exhaust"),
                Port("air_out", "air", "out", description="cleaned air"),
                Port("fines_out", "powder", "out", description="collected fines"),
                Port("emission_out", "powder", "out", optional=True,
                     description="fines not collected: lost product, emitted with the air")]

    def quantities(self):
        return [QuantitySpec("collection_efficiency", "fraction", "share of the fines collected",
                             0.0, 1.0, self.default_efficiency, default=self.default_efficiency)]

    def equations(self, ctx):
        a, f = ctx.port("air_in"), ctx.port("fines_in")
        b, c, e = ctx.port("air_out"), ctx.port("fines_out"), ctx.port("emission_out")
        eta = ctx.quantity("collection_efficiency")
        ctx.equation("dry-air flow", b.flow - a.flow, "mass")
        ctx.equation("humidity", b["humidity"] - a["humidity"], "fraction")
        ctx.equation("collected solids", c.solids_flow - eta * f.solids_flow, "mass")
        ctx.equation("lost solids", e.solids_flow - (1 - eta) * f.solids_flow, "mass")
        ctx.equation("collected moisture", c.solids - f.solids, "fraction")
        ctx.equation("lost moisture", e.solids - f.solids, "fraction")
        ctx.equation("collected temperature", c.temperature - b.temperature, "temperature")
        ctx.equation("lost temperature", e.temperature - b.temperature, "temperature")
        ctx.equation("energy balance", a.enthalpy_flow + f.enthalpy_flow - b.enthalpy_flow - c.enthalpy_flow
                     - e.enthalpy_flow, "energy")

    def reported(self, ctx):
        b, e = ctx.port("air_out"), ctx.port("emission_out")
        volume = b.flow * humid_air.specific_volume(b.temperature, b["humidity"], self.setting("site_pressure"))
        return {"lost_product": (e.flow, "mass_flow"),
                "dust_in_cleaned_air": (e.flow / volume * 1e6, "ratio")}   # mg/m3 at outlet conditions

    def guess(self, inlets, hints):
        a, f = inlets["air_in"], inlets["fines_in"]
        eta = hints.get("fixed", {}).get("collection_efficiency", self.default_efficiency)
        demand = _demand(hints, "air_out")
        streams = {"air_out": dict(a) if demand is None else dict(a, flow=demand),
                   "fines_out": dict(f, flow=eta * f["flow"], temperature=a["temperature"]),
                   "emission_out": dict(f, flow=(1 - eta) * f["flow"], temperature=a["temperature"])}
        return Guess(streams=streams, quantities={"collection_efficiency": eta},
                     inlets={"air_in": {"flow": demand}} if demand is not None else {})


@register
class Cyclone(_Separator):
    """Cyclone: collection efficiency by mass, default 99.5 % (high-efficiency cyclones on
    food powders, about 99-99.8 %: common practice, from memory; use the supplier's figure)."""

    type_name = "cyclone"
    description = "cyclone: separates fines from the exhaust air"
    default_efficiency = 0.995


@register
class BagFilter(_Separator):
    """Bag filter: collection efficiency by mass, default 99.99 % (common practice, from memory)."""

    type_name = "bag_filter"
    description = "bag filter: separates fines from the exhaust air"
    default_efficiency = 0.9999
