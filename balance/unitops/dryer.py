r"""Convective dryers: the spray dryer and the fluid bed share one balance; powder junctions and the powder product.

A convective dryer takes a wet feed (a concentrate to atomise, or a moist
powder from the stage before), one to three air streams and any fines
returned from the separators, and gives a dried product, the exhaust air
and, optionally, the fines the exhaust carries to a cyclone. Stages are
separate units joined by streams: a spray chamber with an integrated fluid
bed (the bed's exhaust enters the chamber as its second air stream), an
external fluid bed with drying and cooling sections (two fluid-bed units in
series), fines from the cyclones returned to any stage.

Equations (F feed, P product, N fines out, R_j fines returned, G_i air in,
G exhaust, W humidity ratio, h specific enthalpies on the IAPWS datum with
moist air per kg dry air, Q_ind indirect heat, Q_loss heat lost)::

    F x_F + sum R_j x_Rj = P x_P + N x_N                          solids
    sum G_i = G                                                   dry air
    F (1-x_F) + sum R_j (1-x_Rj) + sum G_i W_i
        = P (1-x_P) + N (1-x_N) + G W                             water
    F h_F + sum R_j h_Rj + sum G_i h_i + Q_ind
        = P h_P + N h_N + G h(T, W) + Q_loss                      energy
    T - T_P = product_approach                                    product temperature
    product_moisture = 1 - x_P;  product_moisture_dry_basis x_P = 1 - x_P
    outlet_relative_humidity = p_w(W, p_site) / p_ws(T)           ASHRAE 2017 ch. 1 Eq. 22
    Q_loss = f (sum G_i [h_i - h(T_amb, W_i)] + Q_ind)            heat_loss_basis = fraction
    Q_loss = (UA)_loss (T - T_amb)                                heat_loss_basis = conductance
    x_N = x_P,  T_N = T,  N x_N = fines_fraction (P x_P + N x_N)   fines_outlet = true
    Q_ind = m_s (h_s - h_c),  T_c = T_sat(p_s)                    indirect_heating = steam

Assumptions: steady state; the exhaust air and the fines leave at one
temperature (a well-mixed chamber or bed); the product leaves
``product_approach`` below the exhaust (spray chamber default 15 K, fluid
bed 3 K: judgement, common practice; fix ``product_temperature`` when it
is known); water held by the powder is liquid water (no heat of sorption);
the heat loss is a fraction of the heat the air brings in above ambient
(plus the indirect heat), or a wall conductance to the ambient.

Product equilibrium: with ``isotherm`` set (a GAB parameter set of
`balance.properties.sorption`), the dryer reports the equilibrium
moisture of powder in its exhaust air, X_eq = GAB(a_w = RH_out, T_out), the
least moisture any residence time can reach (powder at the exhaust-air
temperature, the most favourable case). A product moisture target below
it is refused before the solve when the target and the exhaust state are
fixed, and makes the solution fail its checks otherwise.

Checks: exhaust not supersaturated; in a drying stage, product not wetter
than its feed; in a drying stage without indirect heat, no air inlet colder than the product
and the exhaust not hotter than the hottest air inlet; operating limits on
the outlet temperature, outlet relative humidity and inlet temperature
(warnings, from settings with defaults per dryer kind).
"""

from __future__ import annotations

import math
import warnings

import casadi as ca

from balance.errors import BalanceError, InfeasibleSpecificationError, InputError
from balance.properties import humid_air, sorption, water
from balance.properties.validity import RangeCheck
from balance.unitops import drying_streams as ds
from balance.unitops.base import Guess, Port, QuantitySpec, Setting, UnitOperation, register

AIR_INLETS = ("air_in", "air_in_2", "air_in_3")
FINES_INLETS = ("fines_in", "fines_in_2")
#: Tolerances of the feasibility checks: solids fraction [-], temperature [K].
_X_TOL = 1e-6
_T_TOL = 1e-6


def _site_pressure_setting():
    return Setting("site_pressure", "pressure",
                   "barometric pressure (default: the flowsheet's site pressure)", 101325.0,
                   lower=50e3, upper=110e3)


@register
class ConvectiveDryer(UnitOperation):
    """A convective dryer of any build (rotary, belt, tray, flash): the balance spray dryers and fluid beds share.

    No defaults for the product temperature: give ``product_temperature`` or
    ``product_approach`` (a counter-current dryer's product leaves hotter
    than its exhaust: a negative approach). Heat loss 5 % by default;
    outlet-air limits 20-150 °C and 80 % relative humidity, inlet air at
    most 400 °C (wide: set your own).
    """

    type_name = "convective_dryer"
    description = "convective dryer (rotary, belt, tray, flash): wet solids dried by hot air"
    dries = True
    outside_cascade = True      # steam to heating surfaces is not part of an evaporator's cascade
    #: class defaults, overridden by each kind of dryer
    default_feed = "liquor"
    default_heat_loss_fraction = 0.05
    default_product_approach = None
    default_limits = {"min_outlet_temperature": 293.15, "max_outlet_temperature": 423.15,
                      "max_outlet_relative_humidity": 0.8, "max_inlet_temperature": 673.15}
    sections = ("drying", "cooling")

    @classmethod
    def settings(cls):
        lim = cls.default_limits
        return [
            Setting("feed", "text", "kind of the wet feed: liquor (a concentrate to atomise) or powder",
                    cls.default_feed, choices=("liquor", "powder")),
            Setting("section", "text", "what the stage does: drying, or cooling (no heat-flow checks)",
                    cls.sections[0], choices=cls.sections),
            Setting("fines_outlet", "flag",
                    "the exhaust carries fines to a separator (port fines_out, quantity fines_fraction)", False),
            Setting("indirect_heating", "text",
                    "heat through surfaces in the dryer: none, given (quantity indirect_heat), "
                    "or steam (ports heating_in and condensate_out)", "none",
                    choices=("none", "given", "steam")),
            Setting("heat_loss_basis", "text",
                    "heat loss as a fraction of the heat brought in above ambient, or a wall "
                    "conductance to the ambient (quantity loss_conductance)", "fraction",
                    choices=("fraction", "conductance")),
            Setting("ambient_temperature", "temperature",
                    "temperature of the surroundings (heat loss, heat input above ambient)", 293.15,
                    lower=223.15, upper=333.15),
            _site_pressure_setting(),
            Setting("isotherm", "text",
                    "GAB sorption parameter set of the product for the equilibrium check "
                    f"({', '.join(repr(k) for k in sorption.GAB_PARAMETERS)}), or 'none'", "none"),
            Setting("min_outlet_temperature", "temperature", "lowest acceptable outlet-air temperature",
                    lim["min_outlet_temperature"]),
            Setting("max_outlet_temperature", "temperature", "highest acceptable outlet-air temperature",
                    lim["max_outlet_temperature"]),
            Setting("max_outlet_relative_humidity", "fraction",
                    "highest acceptable outlet-air relative humidity (stickiness, condensation)",
                    lim["max_outlet_relative_humidity"], lower=0.0, upper=1.0),
            Setting("max_inlet_temperature", "temperature",
                    "highest acceptable inlet-air temperature (product quality, fire risk)",
                    lim["max_inlet_temperature"]),
        ]

    def __init__(self, name, settings=None, file=None):
        super().__init__(name, settings, file=file)
        iso = self.setting("isotherm")
        if not isinstance(iso, str):
            raise InputError("expected the name of a sorption parameter set, or 'none'",
                             file=file, unit=name, key="isotherm")
        self.isotherm = None
        if iso.strip().lower() != "none":
            try:
                self.isotherm = sorption.gab_parameters(iso)
            except BalanceError as exc:
                raise exc.located(file=file, unit=name) from None
        if self.setting("min_outlet_temperature") >= self.setting("max_outlet_temperature"):
            raise InputError("min_outlet_temperature must be below max_outlet_temperature",
                             file=file, unit=name, key="min_outlet_temperature")
        self._liquor = None

    # -- declarations -------------------------------------------------------

    def ports(self):
        ports = [
            Port("feed_in", self.setting("feed"), "in", description="wet feed"),
            Port("product_out", "powder", "out", description="dried product"),
            Port("air_in", "air", "in", description="main drying air"),
            Port("air_in_2", "air", "in", optional=True,
                 description="further air: an integrated fluid bed's exhaust, secondary or cooling air"),
            Port("air_in_3", "air", "in", optional=True, description="further air"),
            Port("air_out", "air", "out", description="exhaust air"),
            Port("fines_in", "powder", "in", optional=True, description="fines returned from a separator"),
            Port("fines_in_2", "powder", "in", optional=True, description="more returned fines"),
        ]
        if self.setting("fines_outlet"):
            ports.append(Port("fines_out", "powder", "out", description="fines carried by the exhaust"))
        if self.setting("indirect_heating") == "steam":
            ports += [Port("heating_in", "vapour", "in", description="steam to the heating surfaces"),
                      Port("condensate_out", "water", "out", optional=True, description="condensate")]
        return ports

    def quantities(self):
        q = [
            QuantitySpec("heat_loss", "power", "heat lost to the surroundings", -1e10, 1e10, 1e5),
            QuantitySpec("product_moisture", "fraction", "product moisture, wet basis", 0.0, 1.0, 0.04),
            QuantitySpec("product_moisture_dry_basis", "ratio",
                         "product moisture, dry basis (kg water / kg dry solids)", 0.0, 1e3, 0.04),
            QuantitySpec("outlet_relative_humidity", "fraction", "relative humidity of the exhaust air",
                         0.0, 10.0, 0.1),
            QuantitySpec("product_approach", "temperature_difference",
                         "exhaust-air temperature minus product temperature", -300.0, 300.0, 10.0,
                         default=self.default_product_approach, unless=("product_temperature",)),
        ]
        if self.setting("heat_loss_basis") == "fraction":
            q.append(QuantitySpec("heat_loss_fraction", "fraction",
                                  "heat loss as a share of the heat brought in above ambient", 0.0, 0.9, 0.03,
                                  default=0.0 if self.setting("section") == "cooling"
                                  else self.default_heat_loss_fraction, unless=("heat_loss",)))
        else:
            q.append(QuantitySpec("loss_conductance", "conductance",
                                  "U·A of the dryer walls to the surroundings", 0.0, 1e9, 1e3))
        if self.setting("fines_outlet"):
            q.append(QuantitySpec("fines_fraction", "fraction",
                                  "share of the dried solids carried to the separator by the exhaust",
                                  0.0, 1.0, 0.2))
        if self.setting("indirect_heating") != "none":
            q.append(QuantitySpec("indirect_heat", "power", "heat through the heating surfaces",
                                  0.0, 1e10, 1e5))
        return q

    def aliases(self):
        return {"product_temperature": ("product_out", "temperature"),
                "product_solids": ("product_out", "solids"),
                "outlet_temperature": ("air_out", "temperature"),
                "outlet_humidity": ("air_out", "humidity"),
                "feed_solids": ("feed_in", "solids"),
                "feed_temperature": ("feed_in", "temperature")}

    # -- equations ----------------------------------------------------------

    def _ports(self, ctx):
        airs = [s for s in (ctx.port(p) for p in AIR_INLETS) if s is not None]
        fines_in = [s for s in (ctx.port(p) for p in FINES_INLETS) if s is not None]
        fines_out = ctx.port("fines_out") if self.setting("fines_outlet") else None
        return ctx.port("feed_in"), ctx.port("product_out"), ctx.port("air_out"), airs, fines_in, fines_out

    def _indirect(self, ctx):
        return ctx.quantity("indirect_heat") if self.setting("indirect_heating") != "none" else 0.0

    def _heat_input(self, ctx, airs):
        t_amb = self.setting("ambient_temperature")
        return (sum(a.flow * (a.specific_enthalpy - humid_air.enthalpy(t_amb, a["humidity"])) for a in airs)
                + self._indirect(ctx))

    def equations(self, ctx):
        feed, prod, out, airs, fines_in, fines_out = self._ports(ctx)
        self._liquor = prod.liquor
        solids_out = prod.solids_flow + (fines_out.solids_flow if fines_out is not None else 0.0)
        water_out = prod.water_flow + (fines_out.water_flow if fines_out is not None else 0.0)
        enthalpy_out = prod.enthalpy_flow + (fines_out.enthalpy_flow if fines_out is not None else 0.0)
        q_ind = self._indirect(ctx)
        loss = ctx.quantity("heat_loss")

        ctx.equation("solids balance", feed.solids_flow + sum(f.solids_flow for f in fines_in) - solids_out,
                     "mass")
        ctx.equation("dry-air balance", sum(a.flow for a in airs) - out.flow, "mass")
        ctx.equation("water balance", feed.water_flow + sum(f.water_flow for f in fines_in)
                     + sum(a.water_flow for a in airs) - water_out - out.water_flow, "mass")
        ctx.equation("energy balance", feed.enthalpy_flow + sum(f.enthalpy_flow for f in fines_in)
                     + sum(a.enthalpy_flow for a in airs) + q_ind - enthalpy_out - out.enthalpy_flow - loss,
                     "energy")
        ctx.equation("product temperature", out.temperature - prod.temperature - ctx.quantity("product_approach"),
                     "temperature")
        ctx.equation("product moisture, wet basis", ctx.quantity("product_moisture") - (1 - prod.solids),
                     "fraction")
        ctx.equation("product moisture, dry basis",
                     ctx.quantity("product_moisture_dry_basis") * prod.solids - (1 - prod.solids), "fraction")
        p = self.setting("site_pressure")
        ctx.equation("outlet relative humidity", ctx.quantity("outlet_relative_humidity")
                     - humid_air.relative_humidity(out.temperature, out["humidity"], p), "fraction")
        if self.setting("heat_loss_basis") == "fraction":
            ctx.equation("heat loss", loss - ctx.quantity("heat_loss_fraction") * self._heat_input(ctx, airs),
                         "energy")
        else:
            ctx.equation("heat loss", loss - ctx.quantity("loss_conductance")
                         * (out.temperature - self.setting("ambient_temperature")), "energy")
        if fines_out is not None:
            ctx.equation("fines moisture", fines_out.solids - prod.solids, "fraction")
            ctx.equation("fines temperature", fines_out.temperature - out.temperature, "temperature")
            ctx.equation("fines carried over", fines_out.solids_flow - ctx.quantity("fines_fraction") * solids_out,
                         "mass")
        if self.setting("indirect_heating") == "steam":
            heat, cond = ctx.port("heating_in"), ctx.port("condensate_out")
            ctx.equation("condensate flow", cond.flow - heat.flow, "mass")
            ctx.equation("condensate saturated",
                         cond.temperature - water.saturation_temperature(heat.pressure), "temperature")
            ctx.equation("indirect heat", q_ind - heat.flow * (heat.specific_enthalpy - cond.specific_enthalpy),
                         "energy")

        for state, label in [(out, f"{self.name} exhaust")] + [(a, f"{self.name} {a.name}") for a in airs]:
            for check in ds.air_range_checks(state, label, unit=self.name):
                ctx.check_range(check)
        if prod.liquor is not None:
            for valid in getattr(prod.liquor.cp_model, "validity", ()):
                if valid.name == "T":
                    ctx.check_range(RangeCheck(f"{self.name} product solids heat capacity", prod.temperature,
                                               valid, source=prod.liquor.cp_model.__name__, unit=self.name))
        t_in_max = self._hottest(airs)
        rh = ctx.quantity("outlet_relative_humidity")
        for check in ds.limit_checks(self.name, [
                ("outlet air temperature", out.temperature, self.setting("min_outlet_temperature"),
                 self.setting("max_outlet_temperature"), "min/max_outlet_temperature", "degC"),
                ("outlet air relative humidity", rh, None, self.setting("max_outlet_relative_humidity"),
                 "max_outlet_relative_humidity", "percent"),
                ("inlet air temperature", t_in_max, None, self.setting("max_inlet_temperature"),
                 "max_inlet_temperature", "degC")]):
            ctx.check_range(check)
        if self.isotherm is not None:
            t_range, a_range = self.isotherm.validity
            source = f"GAB isotherm of {self.isotherm.name}"
            ctx.check_range(RangeCheck(f"{self.name} equilibrium check, exhaust temperature",
                                       out.temperature, t_range, source=source, unit=self.name))
            ctx.check_range(RangeCheck(f"{self.name} equilibrium check, exhaust relative humidity",
                                       rh, a_range, source=source, unit=self.name))

    @staticmethod
    def _hottest(airs):
        t = airs[0].temperature
        for a in airs[1:]:
            t = ca.fmax(t, a.temperature)
        return t

    def reported(self, ctx):
        feed, prod, out, airs, fines_in, fines_out = self._ports(ctx)
        p = self.setting("site_pressure")
        evaporation = out.water_flow - sum(a.water_flow for a in airs)
        figures = {
            "evaporation": (evaporation, "mass_flow"),
            "feed_solids": (feed.solids, "fraction"),
            "inlet_dry_air": (sum(a.flow for a in airs), "mass_flow"),
            "inlet_temperature": (self._hottest(airs), "temperature"),
            "outlet_temperature": (out.temperature, "temperature"),
            "outlet_humidity": (out["humidity"], "humidity_ratio"),
            "outlet_dew_point": (humid_air.dew_point_temperature(ca.fmax(out["humidity"], 1e-6), p), "temperature"),
            "product_temperature": (prod.temperature, "temperature"),
            "heat_input": (self._heat_input(ctx, airs), "power"),
            "dried_solids": (prod.solids_flow + (fines_out.solids_flow if fines_out is not None else 0.0),
                             "mass_flow"),
        }
        if self.isotherm is not None:
            x_eq = self.isotherm.moisture(ctx.quantity("outlet_relative_humidity"), out.temperature)
            figures["equilibrium_moisture_dry_basis"] = (x_eq, "ratio")
        if self.setting("indirect_heating") == "steam":
            heat = ctx.port("heating_in")
            figures["driving_force"] = (water.saturation_temperature(heat.pressure) - prod.temperature,
                                        "temperature_difference")
        return figures

    def external_power(self, ctx):
        given = ctx.quantity("indirect_heat") if self.setting("indirect_heating") == "given" else 0.0
        return given - ctx.quantity("heat_loss")

    # -- feasibility --------------------------------------------------------

    def _error(self, message, key, hint=None):
        return InfeasibleSpecificationError(message, file=self.file, unit=self.name, key=key, hint=hint)

    def _adiabatic_drying(self) -> bool:
        return self.setting("section") == "drying" and self.setting("indirect_heating") == "none"

    def feasibility_problems(self, *, x_feed=None, x_prod=None, t_prod=None, t_out=None, w_out=None,
                             rh_out=None, t_air_in=None, key_prod="product_moisture"):
        """Physical impossibilities among the given numbers (None: not known).

        Returns a list of `InfeasibleSpecificationError` (not raised), each
        naming the file, this unit and the key at fault.
        """
        out = []
        p = self.setting("site_pressure")
        drying = self.setting("section") == "drying"      # a cooling section may take up moisture
        if drying and x_feed is not None and x_prod is not None and x_prod < x_feed - _X_TOL:
            out.append(self._error(
                f"the product ({100 * (1 - x_prod):.2f} % moisture) is wetter than its feed "
                f"({100 * (1 - x_feed):.2f} % moisture): a dryer cannot add water", key_prod))
        if rh_out is None and t_out is not None and w_out is not None:
            rh_out = float(humid_air.relative_humidity(t_out, w_out, p))
        if rh_out is not None and rh_out > 1.0 + 1e-9:
            out.append(self._error(
                f"the exhaust air would be supersaturated (relative humidity {100 * rh_out:.1f} %): "
                "it cannot carry that much water", "outlet_relative_humidity" if w_out is None else "outlet_humidity",
                hint="more or hotter air, or a higher outlet temperature"))
        if self._adiabatic_drying() and t_air_in is not None:
            if t_prod is not None and t_prod > t_air_in + _T_TOL:
                out.append(self._error(
                    f"the product ({t_prod - 273.15:.1f} °C) would leave hotter than the hottest drying air "
                    f"({t_air_in - 273.15:.1f} °C): air colder than the product cannot dry it",
                    "product_temperature"))
            if t_out is not None and t_out > t_air_in + _T_TOL:
                out.append(self._error(
                    f"the exhaust ({t_out - 273.15:.1f} °C) would be hotter than the hottest air inlet "
                    f"({t_air_in - 273.15:.1f} °C) in a dryer without indirect heat", "outlet_temperature"))
        if (self.isotherm is not None and x_prod is not None and t_out is not None and rh_out is not None
                and 0.0 <= rh_out <= 1.0):
            X_target = (1 - x_prod) / max(x_prod, 1e-12)
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                try:
                    ok, X_eq = sorption.equilibrium_moisture_reachable(X_target, t_out, rh_out, self.isotherm,
                                                                       policy="warn")
                except BalanceError:          # beyond the isotherm's pole: no finite equilibrium
                    ok, X_eq = False, math.inf
            if not ok:
                holds = (f"holds at least {100 * X_eq:.2f} %" if math.isfinite(X_eq)
                         else "lies beyond the pole of the isotherm (no finite equilibrium moisture)")
                out.append(self._error(
                    f"product moisture {100 * X_target:.2f} % (dry basis) is physically unreachable: "
                    f"powder in the exhaust air ({t_out - 273.15:.1f} °C, {100 * rh_out:.1f} % relative humidity) "
                    f"{holds} by the GAB isotherm of {self.isotherm.name}",
                    key_prod, hint="raise the moisture target, or lower the exhaust humidity (more or hotter "
                                   "air, a higher outlet temperature, or a further drying stage)"))
        return out

    def solution_problems(self, values):
        """Feasibility problems at a solution (``values``: quantities and figures by name)."""
        x_prod = 1.0 - values["product_moisture"]
        found = self.feasibility_problems(
            x_feed=values["feed_solids"], x_prod=x_prod, t_prod=values["product_temperature"],
            t_out=values["outlet_temperature"], rh_out=values["outlet_relative_humidity"],
            t_air_in=values["inlet_temperature"])
        return [str(err) for err in found]

    # -- initial guess ------------------------------------------------------

    def _fixed_product_solids(self, fixed, fixed_ports):
        if "product_moisture" in fixed:
            return 1.0 - fixed["product_moisture"]
        if "product_moisture_dry_basis" in fixed:
            return 1.0 / (1.0 + fixed["product_moisture_dry_basis"])
        return fixed_ports.get("product_out", {}).get("solids")

    def _presolve(self, inlets, fixed, fixed_ports):
        """Raise the first impossibility among the fixed values (before any solve)."""
        x_prod = self._fixed_product_solids(fixed, fixed_ports)
        exhaust = fixed_ports.get("air_out", {})
        t_out = exhaust.get("temperature")
        t_prod = fixed_ports.get("product_out", {}).get("temperature")
        if t_prod is None and t_out is not None and "product_approach" in fixed:
            t_prod = t_out - fixed["product_approach"]
        air_temps = [fixed_ports[p]["temperature"] for p in AIR_INLETS
                     if p in inlets and "temperature" in fixed_ports.get(p, {})]
        all_air_known = len(air_temps) == len([p for p in AIR_INLETS if p in inlets])
        key = "product_moisture"
        if not ({"product_moisture", "product_moisture_dry_basis"} & set(fixed)):
            key = "product_solids"
        problems = self.feasibility_problems(
            x_feed=fixed_ports.get("feed_in", {}).get("solids"), x_prod=x_prod, t_prod=t_prod, t_out=t_out,
            w_out=exhaust.get("humidity"), rh_out=fixed.get("outlet_relative_humidity"),
            t_air_in=max(air_temps) if air_temps and all_air_known else None, key_prod=key)
        if problems:
            raise problems[0]

    def guess(self, inlets, hints):
        fixed = hints.get("fixed", {})
        fixed_ports = hints.get("fixed_ports", {})
        self._presolve(inlets, fixed, fixed_ports)
        p = self.setting("site_pressure")
        t_amb = self.setting("ambient_temperature")
        liquor = self._liquor
        feed = inlets["feed_in"]
        airs = {n: inlets[n] for n in AIR_INLETS if n in inlets}
        fines = [inlets[n] for n in FINES_INLETS if n in inlets]
        f_flow, x_f, t_f = feed["flow"], feed["solids"], feed["temperature"]
        solids_in = f_flow * x_f + sum(r["flow"] * r["solids"] for r in fines)
        water_in = f_flow * (1 - x_f) + sum(r["flow"] * (1 - r["solids"]) for r in fines)
        h_in_solids = (f_flow * ds.guess_powder_enthalpy(x_f, t_f, liquor)
                       + sum(r["flow"] * ds.guess_powder_enthalpy(r["solids"], r["temperature"], liquor)
                             for r in fines))
        x_wet = water_in / max(solids_in + water_in, 1e-12)
        approach = fixed.get("product_approach", self.default_product_approach or 0.0)
        t_prod_fixed = fixed_ports.get("product_out", {}).get("temperature")
        fines_fraction = fixed.get("fines_fraction", 0.2) if self.setting("fines_outlet") else 0.0
        q_ind = fixed.get("indirect_heat", 0.0)
        loss_fraction = fixed.get("heat_loss_fraction", 0.0 if self.setting("section") == "cooling"
                                  else self.default_heat_loss_fraction) \
            if self.setting("heat_loss_basis") == "fraction" else 0.0
        ua = fixed.get("loss_conductance", 0.0) if self.setting("heat_loss_basis") == "conductance" else 0.0
        main = airs.get("air_in", {})
        others = [a for n, a in airs.items() if n != "air_in"]

        def h_air(a):
            return ds.air_enthalpy(a["temperature"], a["humidity"])

        def state(g_main, t_out, x_p):
            """Outlets and the energy residual for a main air flow, exhaust temperature and product solids."""
            solids_frac = 1.0 - x_wet
            x_p = min(max(x_p, solids_frac + 1e-9), 0.99999)
            total = solids_in / x_p
            evap = water_in - total * (1 - x_p)
            g_tot = g_main + sum(a["flow"] for a in others)
            w_out = (g_main * main["humidity"] + sum(a["flow"] * a["humidity"] for a in others) + evap) / g_tot
            t_p = t_prod_fixed if t_prod_fixed is not None else t_out - approach
            h_in = (g_main * h_air(main) + sum(a["flow"] * h_air(a) for a in others))
            heat_input = (g_main * (h_air(main) - ds.air_enthalpy(t_amb, main["humidity"]))
                          + sum(a["flow"] * (h_air(a) - ds.air_enthalpy(t_amb, a["humidity"])) for a in others)
                          + q_ind)
            loss = loss_fraction * heat_input + ua * (t_out - t_amb)
            h_out = (g_tot * ds.air_enthalpy(t_out, max(w_out, 0.0))
                     + total * ds.guess_powder_enthalpy(x_p, t_p, liquor))
            residual = h_in + h_in_solids + q_ind - h_out - loss
            return residual, dict(total=total, evap=evap, g_tot=g_tot, w_out=w_out, t_p=t_p, loss=loss,
                                  x_p=x_p, g_main=g_main, t_out=t_out, heat_input=heat_input)

        def bisect(func, lo, hi, n=60):
            f_lo = func(lo)
            for _ in range(n):
                mid = 0.5 * (lo + hi)
                f_mid = func(mid)
                if (f_mid > 0) == (f_lo > 0):
                    lo, f_lo = mid, f_mid
                else:
                    hi = mid
            return 0.5 * (lo + hi)

        def g_for(t_out, x_p):
            """Main air flow closing the energy balance (the residual is linear in it)."""
            r0, _ = state(1.0, t_out, x_p)
            r1, _ = state(2.0, t_out, x_p)
            slope = r1 - r0
            if slope <= 0:
                return None
            return max(1.0 - r0 / slope, 1e-6)

        x_p = self._fixed_product_solids(fixed, fixed_ports)
        t_out = fixed_ports.get("air_out", {}).get("temperature")
        rh_target = fixed.get("outlet_relative_humidity")
        t_hot = max(a["temperature"] for a in airs.values())
        g_current = main.get("flow", 1.0)
        demand = None
        if x_p is None:
            x_p = min(max(1.0 - x_wet + 0.02, 0.96), 0.995) if self.setting("section") == "drying" \
                else 1.0 - x_wet
        if t_out is not None:
            g = g_for(t_out, x_p)
            if g is not None:
                demand = g
        elif rh_target is not None:
            def rh_gap(t):
                g = g_for(t, x_p)
                if g is None:
                    return -1.0
                _, st = state(g, t, x_p)
                return float(humid_air.relative_humidity(t, max(st["w_out"], 1e-9), p)) - rh_target
            lo, hi = t_amb, max(t_hot - 1.0, t_amb + 1.0)
            t_out = bisect(rh_gap, lo, hi)
            demand = g_for(t_out, x_p)
        else:
            t_out = bisect(lambda t: state(g_current, t, x_p)[0], 250.0, max(t_hot, 260.0))
        g_main = demand if demand is not None else g_current
        _, st = state(g_main, t_out, x_p)
        w_out = max(st["w_out"], 1e-6)
        rh = float(humid_air.relative_humidity(t_out, w_out, p))
        total = st["total"]
        t_p = st["t_p"]
        streams = {"product_out": {"flow": total * (1 - fines_fraction), "solids": st["x_p"], "temperature": t_p},
                   "air_out": {"flow": st["g_tot"], "humidity": w_out, "temperature": t_out}}
        if self.setting("fines_outlet"):
            streams["fines_out"] = {"flow": total * fines_fraction, "solids": st["x_p"], "temperature": t_out}
        quantities = {"heat_loss": st["loss"], "product_moisture": 1 - st["x_p"],
                      "product_moisture_dry_basis": (1 - st["x_p"]) / st["x_p"],
                      "outlet_relative_humidity": rh, "product_approach": t_out - t_p}
        if self.setting("heat_loss_basis") == "fraction":
            quantities["heat_loss_fraction"] = st["loss"] / st["heat_input"] if st["heat_input"] > 0 else 0.0
        if self.setting("fines_outlet"):
            quantities["fines_fraction"] = fines_fraction
        inlets_needed = {}
        if demand is not None:
            inlets_needed["air_in"] = {"flow": demand}
        if self.setting("indirect_heating") != "none":
            quantities["indirect_heat"] = q_ind
        if self.setting("indirect_heating") == "steam" and "heating_in" in inlets:
            heat = inlets["heating_in"]
            t_c = float(water.saturation_temperature(heat["pressure"]))
            t_s = max(heat["temperature"], t_c)
            h_s = float(water.vapour_enthalpy(t_s, heat["pressure"]))
            steam = q_ind / (h_s - float(water.liquid_enthalpy(t_c))) if q_ind > 0 else heat.get("flow", 0.0)
            streams["condensate_out"] = {"flow": steam, "temperature": t_c}
            inlets_needed["heating_in"] = {"flow": steam, "temperature": t_s}
        return Guess(streams=streams, quantities=quantities, inlets=inlets_needed)


@register
class SprayDryer(ConvectiveDryer):
    """Spray dryer (chamber): a concentrate atomised into hot air.

    Defaults: feed of kind liquor, 3 % heat loss, product 15 K below the
    exhaust, outlet-air limits 60-110 °C and 25 % relative humidity, inlet
    air at most 250 °C (judgement, common practice for food powders; set your
    own).
    """

    type_name = "spray_dryer"
    description = "spray dryer chamber: concentrate atomised into hot air"
    default_heat_loss_fraction = 0.03
    default_product_approach = 15.0
    default_limits = {"min_outlet_temperature": 333.15, "max_outlet_temperature": 383.15,
                      "max_outlet_relative_humidity": 0.25, "max_inlet_temperature": 523.15}
    sections = ("drying",)


@register
class FluidBed(ConvectiveDryer):
    """Fluid-bed dryer or cooler section: a moist powder fluidised by air.

    Defaults: feed of kind powder, 5 % heat loss, product 3 K below the
    exhaust (well-mixed bed), outlet-air limits 15-110 °C and 60 %
    relative humidity, inlet air at most 200 °C (judgement, common
    practice; set your own). ``section = "cooling"`` drops the checks that
    the air be hotter than the product.
    """

    type_name = "fluid_bed"
    description = "fluid bed: drying or cooling section"
    default_feed = "powder"
    default_heat_loss_fraction = 0.05
    default_product_approach = 3.0
    default_limits = {"min_outlet_temperature": 288.15, "max_outlet_temperature": 383.15,
                      "max_outlet_relative_humidity": 0.6, "max_inlet_temperature": 473.15}
    sections = ("drying", "cooling")


@register
class PowderMixer(UnitOperation):
    """Adiabatic junction of powder streams (fines joining a product, two products)::

        sum m_i = m,  sum m_i x_i = m x,  sum m_i h_i = m h
    """

    type_name = "powder_mixer"
    description = "adiabatic junction of powder streams"

    @classmethod
    def settings(cls):
        return [Setting("inlets", "integer", "number of inlets", 2, lower=2, upper=20)]

    def ports(self):
        n = int(self.setting("inlets"))
        return [Port(f"in{i}", "powder", "in", optional=i > 1) for i in range(1, n + 1)] + \
               [Port("out", "powder", "out")]

    def equations(self, ctx):
        ins = [s for s in (ctx.port(f"in{i}") for i in range(1, int(self.setting("inlets")) + 1)) if s is not None]
        out = ctx.port("out")
        ctx.equation("mass balance", sum(s.flow for s in ins) - out.flow, "mass")
        ctx.equation("solids balance", sum(s.solids_flow for s in ins) - out.solids_flow, "mass")
        ctx.equation("energy balance", sum(s.enthalpy_flow for s in ins) - out.enthalpy_flow, "energy")

    def guess(self, inlets, hints):
        ins = [v for _, v in sorted(inlets.items())]
        flow = sum(s["flow"] for s in ins)
        w = max(flow, 1e-12)
        return Guess(streams={"out": {"flow": flow, "solids": sum(s["flow"] * s["solids"] for s in ins) / w,
                                      "temperature": sum(s["flow"] * s["temperature"] for s in ins) / w}})


@register
class PowderProduct(UnitOperation):
    """A powder leaving the flowsheet: keys ``flow``, ``solids``, ``temperature``."""

    type_name = "powder_product"
    description = "dried product leaving the flowsheet"
    boundary = "sink"

    def ports(self):
        return [Port("in", "powder", "in", description="the product powder")]

    def aliases(self):
        return {name: ("in", name) for name in ("flow", "solids", "temperature")}
