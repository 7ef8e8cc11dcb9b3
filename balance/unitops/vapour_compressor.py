r"""Mechanical vapour recompression (MVR): a fan or compressor raising vapour to a higher pressure.

The compressor takes vapour at the suction (state 1: T_1, p_1), compresses
it to the discharge pressure p_2 with an isentropic efficiency, and may
spray liquid water into the discharge to take off part of the superheat
(desuperheating). Its drive (motor, gearbox, frequency converter) turns
electrical power into shaft power with a drive efficiency. Equations
(s: IAPWS-IF97 region 2 entropy, h: region 2 enthalpy, h_w: liquid water)::

    s(T_2s, p_2) = s(T_1, p_1)                         isentropic end state
    eta_s (h(T_2, p_2) - h_1) = h(T_2s, p_2) - h_1      isentropic efficiency
    P_shaft = m_1 (h(T_2, p_2) - h_1)                   shaft power
    P_shaft = eta_drive P_el                            electrical power
    m_d = m_1 + m_w                                     mass balance
    m_1 h(T_2, p_2) + m_w h_w = m_d h(T_d, p_2)          injection (adiabatic)
    p_d = p_2 = discharge_pressure
    lift = T_sat(p_2) - T_sat(p_1)                      saturation-temperature lift
    pressure_ratio = p_2 / p_1
    discharge_superheat = T_d - T_sat(p_2)

``compressed_temperature`` is T_2, the fan's own outlet temperature before
any injection; ``isentropic_temperature`` is T_2s. Give one of
``discharge_pressure``, ``lift`` or ``pressure_ratio`` (or let the area of
the effect it heats set it). With the optional ``water_in`` port connected,
give ``discharge_superheat`` (the injection water flow is then solved) or the
water flow.

Assumptions: steady adiabatic compression (the heat of the drive losses
leaves to the surroundings, not into the vapour); injected water evaporates
completely in the discharge (the result checks reject a discharge below its
saturation temperature); pressure losses in ducts and separators are
neglected. Several fans in series are modelled by connecting one's
``discharge_out`` to the next one's ``suction_in``.

The shaft power enters the flowsheet here, so `external_power` returns it
and the overall energy balance closes with it. The electrical power is the
figure for energy costs.

Checks on the numbers (recorded warnings, or errors under the ``refuse``
range policy):

* ``pressure_ratio`` at least 1: a discharge pressure below the suction is no
  compression;
* ``pressure_ratio`` at most ``max_pressure_ratio`` (default 2.0, a single
  fan stage, common practice);
* ``usable_lift`` at least ``min_driving_force``: the condensing temperature
  of the discharge, T_sat(p_2), minus the temperature of the liquor that made
  the vapour. Vapour drawn straight from a boiling effect leaves at the
  liquor's boiling temperature (superheated by its boiling-point rise), so
  this is the lift minus the boiling-point rise: what is left to drive heat
  into the liquor. In a series of fans the liquor temperature is carried
  from the first fan's suction to the last one's check (the earlier fans'
  checks are then skipped); between fans the only connection followed is a
  direct discharge -> suction stream.

References
----------
IAPWS R7-97(2012), region 2 (eqs. 15-17) for h and s of the vapour.
Isentropic efficiency as in any thermodynamics text, e.g. Çengel & Boles,
*Thermodynamics: An Engineering Approach*, 8th ed., eq. 7-60 (common
practice).
"""

from __future__ import annotations

from balance.errors import InputError
from balance.properties import water
from balance.properties.validity import RangeCheck, ValidRange
from balance.unitops.base import Guess, Port, QuantitySpec, Setting, UnitOperation, register

#: Rough heat capacity of low-pressure steam [J/(kg K)], used only to scale
#: residuals into kelvin (never in a balance).
_CP_SCALE = 2000.0
#: Attributes set on the `StreamState` objects at a compressor's ports, so
#: that fans in series can find one another when their lift is checked.
_PRODUCER = "_made_by_vapour_compressor"
_FEEDS_A_FAN = "_feeds_a_vapour_compressor"


def _where(unit) -> str:
    """How check labels name the unit (the solver adds the file to errors)."""
    return unit.name


def _solve_temperature(func, target, T0, p):
    """Float Newton solve of func(T, p) = target for T, with dfunc/dT by a central difference."""
    T = float(T0)
    for _ in range(50):
        f = float(func(T, p)) - target
        dT = 1e-3
        d = (float(func(T + dT, p)) - float(func(T - dT, p))) / (2 * dT)
        step = f / d
        T -= max(min(step, 50.0), -50.0)
        if abs(step) < 1e-9:
            break
    return T


def isentropic_compression(T_suction: float, p_suction: float, p_discharge: float,
                           efficiency: float = 1.0) -> dict:
    r"""End states of the adiabatic compression of steam, in plain floats.

    .. math::
        s_2(T_{2s}, p_2) = s_2(T_1, p_1),\qquad
        h_2 = h_1 + \frac{h_2(T_{2s}, p_2) - h_1}{\eta_s}

    with IAPWS-IF97 region 2 entropy and enthalpy.

    Parameters
    ----------
    T_suction : float
        Suction temperature, [K] (at or above T_sat(p_suction)).
    p_suction : float
        Suction pressure, [Pa].
    p_discharge : float
        Discharge pressure, [Pa].
    efficiency : float
        Isentropic efficiency, [-], 0 < eta <= 1.

    Returns
    -------
    dict
        ``T_isentropic`` [K], ``h_suction``, ``h_isentropic``, ``h_discharge``
        [J/kg], ``T_discharge`` [K], ``isentropic_work`` and ``work`` [J/kg].

    Notes
    -----
    Region 2 of IF97 is valid for the superheated and saturated vapour,
    273.15-1073.15 K; the suction must not be wet.

    References
    ----------
    IAPWS R7-97(2012), section 6.1, eqs. 15-17. Isentropic efficiency:
    Çengel & Boles, *Thermodynamics*, 8th ed., eq. 7-60.

    Examples
    --------
    Saturated vapour at 60 °C lifted to the saturation pressure of 65 °C:

    >>> p1, p2 = water.saturation_pressure(333.15), water.saturation_pressure(338.15)
    >>> out = isentropic_compression(333.15, p1, p2, 0.75)
    >>> round(out["isentropic_work"] / 1e3, 1)     # kJ/kg
    35.8
    >>> round(out["T_discharge"] - 273.15, 0)       # °C
    85.0
    """
    if not 0.0 < efficiency <= 1.0:
        raise InputError(f"isentropic efficiency {efficiency:g} is outside (0, 1]", key="isentropic_efficiency")
    s1 = float(water.vapour_entropy(T_suction, p_suction))
    h1 = float(water.vapour_enthalpy(T_suction, p_suction))
    T_guess = T_suction * (p_discharge / p_suction) ** (0.25)
    T2s = _solve_temperature(water.vapour_entropy, s1, T_guess, p_discharge)
    h2s = float(water.vapour_enthalpy(T2s, p_discharge))
    h2 = h1 + (h2s - h1) / efficiency
    T2 = _solve_temperature(water.vapour_enthalpy, h2, T2s, p_discharge)
    return {"T_isentropic": T2s, "h_suction": h1, "h_isentropic": h2s, "h_discharge": h2,
            "T_discharge": T2, "isentropic_work": h2s - h1, "work": h2 - h1}


@register
class VapourCompressor(UnitOperation):
    """A mechanical vapour-recompression fan or compressor with its drive."""

    type_name = "vapour_compressor"
    description = "mechanical vapour recompression: fan or compressor with its drive"
    #: The initial guess does not follow vapour through a compressor: it lifts
    #: the vapour's temperature, so the effect it heats is no colder step of
    #: the cascade (and often is the effect that made the vapour).
    passes_vapour = False

    def ports(self):
        return [
            Port("suction_in", "vapour", "in", description="vapour drawn in"),
            Port("discharge_out", "vapour", "out", description="compressed vapour"),
            Port("water_in", "water", "in", optional=True,
                 description="desuperheating water sprayed into the discharge"),
        ]

    def quantities(self):
        return [
            QuantitySpec("discharge_pressure", "pressure", "pressure at the discharge", 611.0, 2e7, 3e4),
            QuantitySpec("lift", "temperature_difference",
                         "saturation temperature at the discharge minus that at the suction",
                         -100.0, 300.0, 5.0),
            QuantitySpec("pressure_ratio", "ratio", "discharge over suction pressure", 1e-3, 100.0, 1.3),
            # Common practice: centrifugal MVR fans reach about 0.75-0.85 isentropic efficiency.
            QuantitySpec("isentropic_efficiency", "fraction", "isentropic over actual enthalpy rise",
                         0.05, 1.0, 0.75, default=0.75),
            # Common practice: motor about 0.95-0.97, gearbox and frequency converter about 0.97 each.
            QuantitySpec("drive_efficiency", "fraction",
                         "shaft power over electrical power (motor, gearbox, frequency converter)",
                         0.05, 1.0, 0.9, default=0.9),
            QuantitySpec("shaft_power", "power", "power given to the vapour by the impeller",
                         0.0, 1e10, 1e5),
            QuantitySpec("electrical_power", "power", "electrical power drawn by the drive", 0.0, 1e10, 1e5),
            QuantitySpec("isentropic_temperature", "temperature",
                         "temperature after isentropic compression to the discharge pressure",
                         250.0, 1200.0, 360.0),
            QuantitySpec("compressed_temperature", "temperature",
                         "temperature leaving the impeller, before any desuperheating water",
                         250.0, 1200.0, 360.0),
            QuantitySpec("discharge_superheat", "temperature_difference",
                         "discharge temperature above its saturation temperature", -100.0, 800.0, 10.0),
        ]

    @classmethod
    def settings(cls):
        return [
            Setting("min_driving_force", "temperature_difference",
                    "smallest useful difference between the discharge's condensing temperature and the "
                    "liquor that made the vapour, for the checks", 2.0, lower=0.0),
            Setting("max_pressure_ratio", "ratio",
                    "largest pressure ratio of one machine before a warning (common practice: about 2 "
                    "for a single fan stage)", 2.0, lower=1.0),
        ]

    def equations(self, ctx):
        suc, dis, inj = ctx.port("suction_in"), ctx.port("discharge_out"), ctx.port("water_in")
        q = {k: ctx.quantity(k) for k in ("discharge_pressure", "lift", "pressure_ratio",
                                           "isentropic_efficiency", "drive_efficiency", "shaft_power",
                                           "electrical_power", "isentropic_temperature",
                                           "compressed_temperature", "discharge_superheat")}
        p1, p2 = suc.pressure, q["discharge_pressure"]
        h1 = suc.specific_enthalpy
        s1 = water.vapour_entropy(suc.temperature, p1)
        h2s = water.vapour_enthalpy(q["isentropic_temperature"], p2)
        h2 = water.vapour_enthalpy(q["compressed_temperature"], p2)
        t_sat2 = water.saturation_temperature(p2)
        m_w = inj.flow if inj is not None else 0.0
        H_w = inj.enthalpy_flow if inj is not None else 0.0

        ctx.equation("discharge pressure", dis.pressure - p2, "pressure")
        ctx.equation("lift", q["lift"] - (t_sat2 - water.saturation_temperature(p1)), "temperature")
        ctx.equation("pressure ratio", q["pressure_ratio"] * p1 - p2, "pressure")
        # entropy difference times T/c_p: a residual in kelvin
        ctx.equation("isentropic end state",
                     (water.vapour_entropy(q["isentropic_temperature"], p2) - s1) * 350.0 / _CP_SCALE,
                     "temperature")
        ctx.equation("isentropic efficiency",
                     (q["isentropic_efficiency"] * (h2 - h1) - (h2s - h1)) / _CP_SCALE, "temperature")
        ctx.equation("shaft power", q["shaft_power"] - suc.flow * (h2 - h1), "energy")
        ctx.equation("electrical power", q["shaft_power"] - q["drive_efficiency"] * q["electrical_power"],
                     "energy")
        ctx.equation("mass balance", dis.flow - suc.flow - m_w, "mass")
        ctx.equation("energy balance", suc.flow * h2 + H_w - dis.enthalpy_flow, "energy")
        ctx.equation("discharge superheat", q["discharge_superheat"] - (dis.temperature - t_sat2), "temperature")

        where = _where(self)
        ctx.check_range(RangeCheck(f"{where} pressure ratio", q["pressure_ratio"],
                                   ValidRange("pressure_ratio", 1.0, 1e3, "-"),
                                   source="a compressor (discharge pressure above the suction pressure)"))
        limit = float(self.setting("max_pressure_ratio"))
        ctx.check_range(RangeCheck(f"{where} pressure ratio", q["pressure_ratio"],
                                   ValidRange("pressure_ratio", 0.0, limit, "-"),
                                   source=f"one machine (setting max_pressure_ratio = {limit:g})"))
        ctx.check_range(_UsableLiftCheck(self, suc, dis, t_sat2, where))

    def reported(self, ctx):
        suc = ctx.port("suction_in")
        p2 = ctx.quantity("discharge_pressure")
        h1 = suc.specific_enthalpy
        h2s = water.vapour_enthalpy(ctx.quantity("isentropic_temperature"), p2)
        return {
            "isentropic_work": (h2s - h1, "specific_enthalpy"),
            "specific_work": (ctx.quantity("shaft_power") / suc.flow, "specific_enthalpy"),
            "suction_superheat": (suc.temperature - water.saturation_temperature(suc.pressure),
                                  "temperature_difference"),
            "condensing_temperature": (water.saturation_temperature(p2), "temperature"),
            "suction_volume_flow": (suc.flow * water.region2_specific_volume(suc.temperature, suc.pressure),
                                    "volume_flow"),
            "drive_losses": (ctx.quantity("electrical_power") - ctx.quantity("shaft_power"), "power"),
        }

    def external_power(self, ctx):
        """The shaft power enters the vapour; the drive losses leave as heat elsewhere."""
        return ctx.quantity("shaft_power")

    def guess(self, inlets, hints):
        suc = inlets["suction_in"]
        fixed = hints.get("fixed", {})
        t1, p1, m1 = suc["temperature"], suc["pressure"], suc["flow"]
        t_sat1 = float(water.saturation_temperature(p1))
        t1 = max(t1, t_sat1)
        if "discharge_pressure" in fixed:
            p2 = fixed["discharge_pressure"]
        elif "lift" in fixed:
            p2 = float(water.saturation_pressure(t_sat1 + fixed["lift"]))
        elif "pressure_ratio" in fixed:
            p2 = p1 * fixed["pressure_ratio"]
        else:
            # enough lift for the boiling-point rise behind the suction and a few kelvin to drive heat
            p2 = float(water.saturation_pressure(t_sat1 + max(6.0, (t1 - t_sat1) + 5.0)))
        eta = fixed.get("isentropic_efficiency", 0.75)
        eta_d = fixed.get("drive_efficiency", 0.9)
        comp = isentropic_compression(t1, p1, p2, eta)
        t_sat2 = float(water.saturation_temperature(p2))
        shaft = m1 * comp["work"]
        streams = {"discharge_out": {"flow": m1, "temperature": comp["T_discharge"], "pressure": p2}}
        quantities = {"discharge_pressure": p2, "lift": t_sat2 - t_sat1, "pressure_ratio": p2 / p1,
                      "isentropic_efficiency": eta, "drive_efficiency": eta_d, "shaft_power": shaft,
                      "electrical_power": shaft / eta_d, "isentropic_temperature": comp["T_isentropic"],
                      "compressed_temperature": comp["T_discharge"],
                      "discharge_superheat": comp["T_discharge"] - t_sat2}
        need = {}
        inj = inlets.get("water_in")
        if inj is not None:
            t_d = t_sat2 + fixed.get("discharge_superheat", min(5.0, comp["T_discharge"] - t_sat2))
            h_d = float(water.vapour_enthalpy(t_d, p2))
            h_w = float(water.liquid_enthalpy(inj.get("temperature", 330.0)))
            m_w = max(m1 * (comp["h_discharge"] - h_d) / (h_d - h_w), 0.0)
            need = {"water_in": {"flow": m_w}}
            streams["discharge_out"].update(flow=m1 + m_w, temperature=t_d)
            quantities["discharge_superheat"] = t_d - t_sat2
        return Guess(streams=streams, quantities=quantities, inlets=need)


class _UsableLiftCheck(RangeCheck):
    """Condensing temperature of the discharge minus the liquor temperature behind the suction.

    Its value is built when it is first read, after every unit has written
    its equations, so that the connections between fans are known: a fan
    whose suction is another fan's discharge takes over the liquor
    temperature behind that fan's suction, and a fan whose discharge feeds
    another fan stands down (its value is then a constant that passes), so
    the whole lift of a series is checked once, at its last fan.
    """

    def __init__(self, unit, suction, discharge, t_condensing, where):
        limit = float(unit.setting("min_driving_force"))
        self._suction = suction
        self._discharge = discharge
        self._t_condensing = t_condensing
        self._value = None
        self.label = f"{where} usable lift"
        self.valid = ValidRange("usable_lift", limit, 1e3, "K")
        self.source = (f"the lift needed to cover the boiling-point rise and the smallest driving force "
                       f"(setting min_driving_force = {limit:g} K)")
        self.unit = unit.name
        setattr(discharge, _PRODUCER, self)
        setattr(suction, _FEEDS_A_FAN, True)

    def liquor_temperature(self):
        """The temperature of the liquor whose vapour reaches this fan's suction [K]."""
        upstream = getattr(self._suction, _PRODUCER, None)
        if upstream is not None and upstream is not self:
            return upstream.liquor_temperature()
        return self._suction.temperature

    @property
    def value(self):
        if self._value is None:
            if getattr(self._discharge, _FEEDS_A_FAN, False):
                self._value = self.valid.low + 1.0
            else:
                self._value = self._t_condensing - self.liquor_temperature()
        return self._value

    @value.setter
    def value(self, new):
        self._value = new
