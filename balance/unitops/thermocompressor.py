r"""Steam-jet thermocompressor (thermal vapour recompression, TVR).

High-pressure motive steam expands through a nozzle, entrains low-pressure
suction vapour (drawn from an effect or a separator), and the mixture is
recompressed in the diffuser to the discharge pressure, which heats an
effect. The unit writes the mass and energy balance of the mixing and the
entrainment ratio from a method chosen by name::

    m_d = m_m + m_s                                   mass balance
    m_m h_m + m_s h_s = m_d h(T_d, p_d)               energy balance (adiabatic)
    m_s = w m_m                                       entrainment ratio w
    p_d = discharge_pressure,  p_d = CR p_s           compression ratio CR
    discharge_superheat = T_d - T_sat(p_d)
    method equation for w (below)

The discharge is superheated (the motive steam brings more enthalpy per kg
than saturated vapour at the discharge pressure holds); that superheat goes
with the vapour into the effect it heats, whose duty counts it.

Methods (setting ``method``), from the registry `ENTRAINMENT_METHODS`:

``el_dessouky_1997``
    w = 1 / R_a with R_a from `el_dessouky_1997`; its validity ranges
    (motive pressure, compression ratio, suction temperature, R_a) are
    checked on the solution.
``performance_point``
    w = ``rated_entrainment_ratio``, a point from the maker's performance
    curve. If ``rated_motive_pressure``, ``rated_suction_pressure`` or
    ``rated_discharge_pressure`` are given, the operating pressures are
    checked to lie within ``rated_tolerance`` of them: away from its design
    point a jet's entrainment changes and a single point no longer holds.
``specified``
    no equation: fix ``entrainment_ratio`` (or the motive steam flow) in the
    specification, or let the rest of the flowsheet set it.

Checks on every method: the discharge pressure must exceed the suction
pressure and stay below the motive pressure, and the mixing must produce
entropy (second law: S_gen = m_d s_d - m_m s_m - m_s s_s >= 0); a
performance point that breaks the second law promises an impossible jet.

Assumptions: adiabatic, steady, one-dimensional; the entrained vapour and
the motive steam are dry; the correlation gives the entrainment of a jet
designed for the operating point (critical, "on-design" operation).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable

from balance.errors import InputError
from balance.properties import water
from balance.properties.validity import RangeCheck, ValidRange, valid_for
from balance.unitops.base import Guess, Port, QuantitySpec, Setting, UnitOperation, register


# ---------------------------------------------------------------------------
# The correlation

@valid_for(p_motive=(100e3, 3500e3, "Pa"), compression_ratio=(1.81, 6.0, "-"),
           T_suction=(283.15, 773.15, "K"), motive_ratio=(0.0, 4.0, "-"))
def el_dessouky_1997(p_motive, p_suction, p_discharge, T_suction):
    r"""Motive steam per kg of entrained vapour of a steam-jet ejector, El-Dessouky (1997).

    .. math::
        R_a = 0.296\,\frac{P_s^{1.19}}{P_{ev}^{1.04}}
              \left(\frac{P_m}{P_{ev}}\right)^{0.015}
              \frac{\mathrm{PCF}}{\mathrm{TCF}}

    .. math::
        \mathrm{PCF} = 3\times10^{-7} P_m^2 - 0.0009\,P_m + 1.6101,\qquad
        \mathrm{TCF} = 2\times10^{-8} T_{ev}^2 - 0.0006\,T_{ev} + 1.0047

    with the pressures P_m (motive), P_ev (entrained, suction) and P_s
    (compressed, discharge) in kPa and the entrained-vapour temperature
    T_ev in °C, as the source writes them; this function takes and converts
    SI values. R_a is the mass of motive steam per mass of entrained vapour;
    the entrainment ratio is w = 1 / R_a.

    Parameters
    ----------
    p_motive : float or casadi expression
        Motive steam pressure, [Pa].
    p_suction : float or casadi expression
        Pressure of the entrained (suction) vapour, [Pa].
    p_discharge : float or casadi expression
        Pressure of the compressed (discharge) vapour, [Pa].
    T_suction : float or casadi expression
        Temperature of the entrained vapour, [K].

    Returns
    -------
    float or casadi expression
        R_a, motive steam over entrained vapour, [kg/kg].

    Notes
    -----
    Validity as stated by the source (from memory): 100 <= P_m <= 3500 kPa,
    1.81 <= P_s / P_ev <= 6, 10 <= T_ev <= 500 °C, R_a <= 4. Declared here
    as ``p_motive``, ``compression_ratio`` (P_s / P_ev), ``T_suction`` and
    ``motive_ratio`` (R_a). The fit was made to ejector design data for
    fixed-geometry jets sized for each point; it does not describe a given
    jet away from its design point. Evaporator thermocompressors often work
    at compression ratios of 1.5-1.8 (common practice), below this range:
    use a maker's performance point there.

    The form and coefficients were recalled, not read (REFERENCES.md marks
    them [memory, verify]); tests check the implementation against an
    independent transcription of the same formula, against the reversible
    (second-law) limit computed with CoolProp and against the trade's
    common magnitudes, not against values printed in the source.

    References
    ----------
    H. T. El-Dessouky, "Modelling and simulation of thermal vapour
    compression desalination plant", Symposium on Desalination of Seawater
    with Nuclear Energy, Taejon, Korea, 1997; as given in H. T. El-Dessouky
    and H. M. Ettouney, *Fundamentals of Salt Water Desalination*, Elsevier,
    2002, chapter on thermal vapour compression (from memory).

    Examples
    --------
    Motive steam at 10 bar, vapour entrained at 20 kPa (60.1 °C), discharged
    at 40 kPa:

    >>> print(f"{el_dessouky_1997(1000e3, 20e3, 40e3, 333.21):.3f}")
    1.170
    """
    pm, ps, pd = p_motive / 1e3, p_suction / 1e3, p_discharge / 1e3
    t_ev = T_suction - 273.15
    pcf = 3e-7 * pm * pm - 0.0009 * pm + 1.6101
    tcf = 2e-8 * t_ev * t_ev - 0.0006 * t_ev + 1.0047
    return 0.296 * pd ** 1.19 / ps ** 1.04 * (pm / ps) ** 0.015 * pcf / tcf


# ---------------------------------------------------------------------------
# Entrainment methods


@dataclass(frozen=True)
class EntrainmentMethod:
    """A way to set a thermocompressor's entrainment ratio.

    Attributes
    ----------
    name : str
        The word used in flowsheet files (``method = "..."``).
    description : str
    equations : callable
        ``f(unit, ctx, motive, suction, discharge, w) -> None``: writes the
        method's equation(s) and checks through ``ctx``.
    ratio : callable
        ``f(unit, p_motive, p_suction, p_discharge, T_suction) -> float``:
        the entrainment ratio in plain floats, for the initial guess.
    """

    name: str
    description: str
    equations: Callable
    ratio: Callable


ENTRAINMENT_METHODS: dict[str, EntrainmentMethod] = {}


def entrainment_method(name: str, description: str, ratio: Callable):
    """Register a function writing a method's equations under ``name``."""
    def decorate(func):
        ENTRAINMENT_METHODS[name] = EntrainmentMethod(name, description, func, ratio)
        return func
    return decorate


def _ed_ratio(unit, pm, ps, pd, ts):
    return 1.0 / float(el_dessouky_1997(pm, ps, pd, ts))


@entrainment_method("el_dessouky_1997", "El-Dessouky (1997) correlation for R_a = motive / entrained",
                    _ed_ratio)
def _el_dessouky_equations(unit, ctx, motive, suction, discharge, w):
    r_a = el_dessouky_1997(motive.pressure, suction.pressure, discharge.pressure, suction.temperature)
    ctx.equation("entrainment, El-Dessouky (1997)", w * r_a - 1.0, "other")
    values = {"p_motive": motive.pressure, "compression_ratio": discharge.pressure / suction.pressure,
              "T_suction": suction.temperature, "motive_ratio": r_a}
    where = _where(unit)
    for valid in el_dessouky_1997.validity:
        ctx.check_range(RangeCheck(f"{where} entrainment", values[valid.name], valid,
                                   source="el_dessouky_1997"))


def _rated_ratio(unit, pm, ps, pd, ts):
    return unit.setting("rated_entrainment_ratio")


@entrainment_method("performance_point", "the maker's entrainment ratio at a rated point", _rated_ratio)
def _performance_point_equations(unit, ctx, motive, suction, discharge, w):
    ctx.equation("entrainment, performance point", w - unit.setting("rated_entrainment_ratio"), "other")
    tol = unit.setting("rated_tolerance")
    where = _where(unit)
    for key, state in (("rated_motive_pressure", motive), ("rated_suction_pressure", suction),
                       ("rated_discharge_pressure", discharge)):
        rated = unit.setting(key)
        if rated is not None:
            name = key.replace("rated_", "")
            ctx.check_range(RangeCheck(f"{where} off its performance point", state.pressure,
                                       ValidRange(name, rated * (1 - tol), rated * (1 + tol), "Pa"),
                                       source=f"the performance point ({key} = {rated:g} Pa "
                                              f"+- {100 * tol:g} %)"))


@entrainment_method("specified", "no equation: the specification fixes the entrainment ratio",
                    lambda unit, pm, ps, pd, ts: 1.0)
def _specified_equations(unit, ctx, motive, suction, discharge, w):
    return None


def _where(unit) -> str:
    """How check labels name the unit (the solver adds the file to errors)."""
    return unit.name


# ---------------------------------------------------------------------------
# The unit


@register
class Thermocompressor(UnitOperation):
    """A steam-jet thermocompressor: motive steam recompresses part of an effect's vapour."""

    type_name = "thermocompressor"
    description = "steam-jet thermocompressor (thermal vapour recompression)"
    #: The initial guess does not follow vapour through a thermocompressor: it
    #: sends vapour back up to a hotter effect, so it is no step of the cascade.
    passes_vapour = False

    def __init__(self, name, settings=None, file=None):
        super().__init__(name, settings, file)
        if self.setting("method") == "performance_point" and self.setting("rated_entrainment_ratio") is None:
            raise InputError("method 'performance_point' needs the maker's entrainment ratio "
                             "(kg suction vapour per kg motive steam)", file=file, unit=name,
                             key="rated_entrainment_ratio")

    def ports(self):
        return [
            Port("motive_in", "vapour", "in", description="motive steam"),
            Port("suction_in", "vapour", "in", description="vapour entrained from an effect or separator"),
            Port("discharge_out", "vapour", "out", description="mixed, recompressed vapour"),
        ]

    def quantities(self):
        return [
            QuantitySpec("discharge_pressure", "pressure", "pressure at the discharge", 611.0, 2e7, 3e4),
            QuantitySpec("entrainment_ratio", "ratio", "suction vapour entrained per kg of motive steam",
                         0.0, 50.0, 1.0),
            QuantitySpec("compression_ratio", "ratio", "discharge over suction pressure", 1e-3, 100.0, 2.0),
            QuantitySpec("discharge_superheat", "temperature_difference",
                         "discharge temperature above its saturation temperature", -100.0, 800.0, 10.0),
        ]

    @classmethod
    def settings(cls):
        return [
            Setting("method", "text", "how the entrainment ratio is found: a correlation, a maker's "
                    "performance point, or the specification", "el_dessouky_1997",
                    choices=tuple(ENTRAINMENT_METHODS)),
            Setting("rated_entrainment_ratio", "ratio",
                    "performance point: kg suction vapour per kg motive steam", None, lower=0.0,
                    upper=50.0),
            Setting("rated_motive_pressure", "pressure", "performance point: motive steam pressure", None),
            Setting("rated_suction_pressure", "pressure", "performance point: suction pressure", None),
            Setting("rated_discharge_pressure", "pressure", "performance point: discharge pressure", None),
            Setting("rated_tolerance", "fraction",
                    "performance point: how far (relative) the pressures may stray from it", 0.05,
                    lower=0.0, upper=1.0),
        ]

    def equations(self, ctx):
        mot, suc, dis = ctx.port("motive_in"), ctx.port("suction_in"), ctx.port("discharge_out")
        p_d, w, cr, sh = (ctx.quantity(k) for k in ("discharge_pressure", "entrainment_ratio",
                                                    "compression_ratio", "discharge_superheat"))
        ctx.equation("mass balance", dis.flow - mot.flow - suc.flow, "mass")
        ctx.equation("energy balance", mot.enthalpy_flow + suc.enthalpy_flow - dis.enthalpy_flow, "energy")
        ctx.equation("entrainment ratio", suc.flow - w * mot.flow, "mass")
        ctx.equation("discharge pressure", dis.pressure - p_d, "pressure")
        ctx.equation("compression ratio", cr * suc.pressure - p_d, "pressure")
        ctx.equation("discharge superheat", sh - (dis.temperature - water.saturation_temperature(p_d)),
                     "temperature")
        ENTRAINMENT_METHODS[self.setting("method")].equations(self, ctx, mot, suc, dis, w)

        where = _where(self)
        ctx.check_range(RangeCheck(f"{where} compression", cr, ValidRange("compression_ratio", 1.0, 1e3, "-"),
                                   source="a thermocompressor (discharge pressure above the suction pressure)"))
        ctx.check_range(RangeCheck(f"{where} expansion", mot.pressure / p_d,
                                   ValidRange("motive_over_discharge", 1.0, 1e4, "-"),
                                   source="a thermocompressor (motive pressure above the discharge pressure)"))
        ctx.check_range(RangeCheck(f"{where} second law", self._entropy_generation(mot, suc, dis) / dis.flow,
                                   ValidRange("entropy_generation", 0.0, 1e4, "J/(kg K)"),
                                   source="the second law (adiabatic mixing must produce entropy)"))

    @staticmethod
    def _entropy_generation(mot, suc, dis):
        return (dis.flow * water.vapour_entropy(dis.temperature, dis.pressure)
                - mot.flow * water.vapour_entropy(mot.temperature, mot.pressure)
                - suc.flow * water.vapour_entropy(suc.temperature, suc.pressure))

    def reported(self, ctx):
        mot, suc, dis = ctx.port("motive_in"), ctx.port("suction_in"), ctx.port("discharge_out")
        t_sat_d = water.saturation_temperature(dis.pressure)
        return {
            "motive_ratio": (mot.flow / suc.flow, "ratio"),
            "lift": (t_sat_d - water.saturation_temperature(suc.pressure), "temperature_difference"),
            "condensing_temperature": (t_sat_d, "temperature"),
            "expansion_ratio": (mot.pressure / suc.pressure, "ratio"),
            "entropy_generation": (self._entropy_generation(mot, suc, dis), "conductance"),
        }

    def cascade_top_temperature(self, fixed):
        """For the initial guess: the hottest condensing temperature of the train this unit heats [K].

        The motive steam does not condense in an effect; the discharge does,
        at T_sat(discharge_pressure). None when the discharge pressure is
        not fixed (the guess then uses its default).
        """
        if "discharge_pressure" in fixed:
            return float(water.saturation_temperature(fixed["discharge_pressure"]))
        return None

    def guess(self, inlets, hints):
        mot, suc = inlets["motive_in"], inlets["suction_in"]
        fixed = hints.get("fixed", {})
        t_sat_s = float(water.saturation_temperature(suc["pressure"]))
        if "discharge_pressure" in fixed:
            p_d = fixed["discharge_pressure"]
        elif "compression_ratio" in fixed:
            p_d = suc["pressure"] * fixed["compression_ratio"]
        else:
            p_d = float(water.saturation_pressure(t_sat_s + 15.0))
        p_d = min(p_d, 0.5 * mot["pressure"])
        w = fixed.get("entrainment_ratio")
        if w is None:
            method = ENTRAINMENT_METHODS[self.setting("method")]
            try:
                w = method.ratio(self, mot["pressure"], suc["pressure"], p_d, suc["temperature"])
            except (ZeroDivisionError, ValueError, TypeError):
                w = 1.0
            if not (w and math.isfinite(w) and w > 0):
                w = 1.0
        m_s = suc["flow"]
        m_m = m_s / w
        # a supply's temperature is not guessed by the supply itself: at least saturated
        t_m = max(mot["temperature"], float(water.saturation_temperature(mot["pressure"])))
        h_m = float(water.vapour_enthalpy(t_m, mot["pressure"]))
        h_s = float(water.vapour_enthalpy(suc["temperature"], suc["pressure"]))
        h_d = (m_m * h_m + m_s * h_s) / (m_m + m_s)
        t_sat_d = float(water.saturation_temperature(p_d))
        t_d = t_sat_d + max(h_d - float(water.vapour_enthalpy(t_sat_d, p_d)), 0.0) / 2000.0
        return Guess(
            streams={"discharge_out": {"flow": m_m + m_s, "temperature": t_d, "pressure": p_d}},
            quantities={"discharge_pressure": p_d, "entrainment_ratio": w,
                        "compression_ratio": p_d / suc["pressure"], "discharge_superheat": t_d - t_sat_d},
            inlets={"motive_in": {"flow": m_m, "temperature": t_m}},
        )
