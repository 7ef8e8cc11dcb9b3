"""Moist air (psychrometrics): dry air and water vapour as an ideal-gas mixture.

The relations are those of ASHRAE Handbook—Fundamentals (2017), SI edition,
chapter 1 "Psychrometrics", section "Perfect gas relationships for dry and
moist air": Dalton's law, mole-fraction humidity ratio, ideal-gas specific
volume. They hold at any barometric pressure, so a site at altitude or a dryer
run under slight vacuum or overpressure needs no other formula.

Water comes from one model only, `balance.properties.water` (IAPWS-IF97):

* the saturation pressure of water is IF97 eq. 30 (``water.saturation_pressure``);
* the enthalpy of water vapour in the mixture is the zero-pressure (ideal-gas)
  limit of IF97 region 2, ``water.vapour_enthalpy(T, 0.0)``, on the IAPWS
  datum (internal energy and entropy of liquid water at the triple point
  273.16 K are zero);
* liquid water at the wet-bulb surface is ``water.liquid_enthalpy``.

Enthalpy datum
    The whole program uses one datum for water: IAPWS, liquid water at the
    triple point. Moist-air enthalpy per kilogram of dry air is therefore
    ``h = c_p,a (T - 273.15 K) + W h_v,ig(T)`` (`enthalpy`). Dry air keeps the
    ASHRAE datum (zero at 0 °C): dry air enters and leaves a dryer unchanged
    in amount, so its datum cancels from every energy balance. ASHRAE's own
    formula (datum: dry air and liquid water at 0 °C) is kept as
    `enthalpy_ashrae` for checks against the Handbook; the two water data
    differ by 0.01 K of liquid water, about 0.04 kJ/kg.

Below 0 °C
    Saturation is taken over (supercooled) liquid water throughout, by the
    IF97 eq. 30 extrapolated below 273.15 K, which agrees with the
    supercooled-water fit of Murphy & Koop, Q. J. R. Meteorol. Soc. 131
    (2005) 1539, eq. 10, to 0.04 % at -20 °C and 0.3 % at -40 °C. This is the
    WMO convention for relative humidity. ASHRAE's tables and psychrolib take
    saturation over ice below 0.01 °C (p_ws 103.24 Pa instead of 125.46 Pa at
    -20 °C), so saturation quantities and dew points below 0 °C differ from
    theirs by design; a dew point below 0 °C here is a dew point over
    supercooled water, not a frost point.

Above the boiling point
    Where p_ws(T) >= p (T above the boiling point of water at the barometric
    pressure), moist air cannot be saturated: the saturation humidity ratio
    is infinite (the mixture would be pure steam). `relative_humidity` stays
    defined there as p_w / p_ws(T) and is always below p / p_ws(T) < 1.
    `saturation_humidity_ratio` raises `~balance.errors.OutOfRangeError` for
    numbers and returns +inf for symbols.

Every function accepts scalar Python floats and CasADi ``SX``/``MX`` symbols
and returns the same kind (the functions with numeric guards do not take
NumPy arrays: loop over them). The implicit ones (`dew_point_temperature`,
`adiabatic_saturation_temperature`) are written as a fixed number of unrolled
(safeguarded) Newton steps, so they are explicit, differentiable expressions
too; for
numbers their residual is checked and a non-converged result raises
`~balance.errors.SolveError`.

Validity ranges (declared with `~balance.properties.validity.valid_for`,
enforced by callers): T 233.15-573.15 K (-40 to 300 °C), W 0-0.5 kg/kg,
p 50-110 kPa.
"""

from __future__ import annotations

import functools
import math

import casadi as ca

from balance.errors import InputError, OutOfRangeError, SolveError
from balance.properties import water
from balance.properties.validity import valid_for

__all__ = [
    "MOLAR_MASS_DRY_AIR", "EPSILON", "R_DRY_AIR", "CP_DRY_AIR", "T_ZERO_CELSIUS",
    "pressure_at_altitude",
    "humidity_ratio_from_vapour_pressure", "vapour_pressure_from_humidity_ratio",
    "saturation_humidity_ratio",
    "humidity_ratio_from_relative_humidity", "relative_humidity",
    "vapour_enthalpy_ideal_gas", "enthalpy", "enthalpy_ashrae",
    "specific_volume", "density",
    "dew_point_temperature", "adiabatic_saturation_temperature",
    "humidity_ratio_from_adiabatic_saturation_temperature",
]

#: Molar mass of dry air, [kg/mol] (ASHRAE Handbook—Fundamentals 2017, ch. 1,
#: "Composition of dry and moist air": 28.966 g/mol).
MOLAR_MASS_DRY_AIR = 0.028966
#: Ratio of the molar masses of water and dry air, [-]: 0.621945, the
#: constant of ASHRAE 2017 ch. 1 Eq. 20.
EPSILON = water.MOLAR_MASS_WATER / MOLAR_MASS_DRY_AIR
#: Specific gas constant of dry air, [J/(kg K)] (ASHRAE 2017 ch. 1, Eq. 26
#: and the gas-constant values of the same section).
R_DRY_AIR = 287.042
#: Isobaric specific heat capacity of dry air, [J/(kg K)]: the 1.006 kJ/(kg K)
#: of ASHRAE 2017 ch. 1 Eqs. 28 and 30.
CP_DRY_AIR = 1006.0
#: 0 °C in kelvin, [K]: the datum of dry-air enthalpy.
T_ZERO_CELSIUS = 273.15

# Ranges shared by the declarations below, [K], [kg/kg], [Pa].
_T_RANGE = (233.15, 573.15, "K")
_W_RANGE = (0.0, 0.5, "kg/kg")
_P_RANGE = (50e3, 110e3, "Pa")

# Fixed iteration counts of the unrolled solvers (see the functions).
_DEW_POINT_STEPS = 6
_WET_BULB_STEPS = 16
# Lowest wet-bulb temperature searched, [K]; IF97 eq. 30 stays smooth there.
_WET_BULB_T_LOW = 190.0
# Residual tolerance for numbers, on ln(p): 1e-9 is about 2e-8 K.
_LN_P_TOL = 1e-9


# ---------------------------------------------------------------------------
# helpers


def _is_symbolic(*values) -> bool:
    """True if any value is a CasADi symbol (the numeric checks then step aside)."""
    return any(isinstance(v, (ca.SX, ca.MX)) for v in values)


def _as_float(value) -> float:
    """A scalar CasADi DM or number as a Python float."""
    return float(value)


def _check_finite(value, name: str, key: str):
    """Raise if a numeric result is NaN or infinite; return it as a float."""
    v = _as_float(value)
    if not math.isfinite(v):
        raise SolveError(f"{name} gave a non-finite result ({v})", key=key)
    return v


# ---------------------------------------------------------------------------
# Standard atmosphere


@valid_for(z=(-500.0, 11000.0, "m"))
def pressure_at_altitude(z):
    r"""Barometric pressure of the standard atmosphere at an altitude, ASHRAE 2017 ch. 1 Eq. 3.

    .. math:: p = 101\,325\ \mathrm{Pa}\,(1 - 2.25577\times10^{-5}\,z)^{5.2559}

    Parameters
    ----------
    z : float or casadi.SX or casadi.MX
        Altitude above sea level, [m].

    Returns
    -------
    float or casadi expression
        Barometric pressure, [Pa].

    Notes
    -----
    The U.S. Standard Atmosphere (1976) troposphere, valid from -500 m to
    11 000 m. It gives a typical, not the actual, barometric pressure of a
    site: weather moves it by a few percent.

    References
    ----------
    ASHRAE Handbook—Fundamentals (2017), SI edition, ch. 1, Eq. 3; values in
    Table 1.

    Examples
    --------
    >>> round(pressure_at_altitude(1000.0))   # Pa
    89875
    """
    return 101325.0 * (1.0 - 2.25577e-5 * z) ** 5.2559


# ---------------------------------------------------------------------------
# Humidity ratio and vapour pressure


@valid_for(p_w=(0.0, 110e3, "Pa"), p=_P_RANGE)
def humidity_ratio_from_vapour_pressure(p_w, p):
    r"""Humidity ratio from the partial pressure of water vapour, ASHRAE 2017 ch. 1 Eq. 20.

    .. math:: W = \varepsilon \frac{p_w}{p - p_w},\quad
        \varepsilon = M_w / M_{da} = 0.621945

    Parameters
    ----------
    p_w : float or casadi.SX or casadi.MX
        Partial pressure of water vapour, [Pa].
    p : float or casadi.SX or casadi.MX
        Barometric (total) pressure, [Pa].

    Returns
    -------
    float or casadi expression
        Humidity ratio, [kg water / kg dry air].

    Raises
    ------
    InputError
        For numbers, if p_w < 0 or p_w >= p (no dry air left).

    Notes
    -----
    Ideal-gas mixing (Dalton's law): the real-gas enhancement factor
    (1.004 at 25 °C, 1 atm) is neglected, see `saturation_humidity_ratio`.

    References
    ----------
    ASHRAE Handbook—Fundamentals (2017), SI edition, ch. 1, Eq. 20.

    Examples
    --------
    >>> round(humidity_ratio_from_vapour_pressure(3169.7, 95461.0), 7)   # kg/kg
    0.0213604
    """
    if not _is_symbolic(p_w, p):
        if p_w < 0.0 or p_w >= p:
            raise InputError(f"vapour pressure {float(p_w):g} Pa must lie in [0, p = {float(p):g} Pa)",
                             key="p_w")
    return EPSILON * p_w / (p - p_w)


@valid_for(W=_W_RANGE, p=_P_RANGE)
def vapour_pressure_from_humidity_ratio(W, p):
    r"""Partial pressure of water vapour from the humidity ratio, ASHRAE 2017 ch. 1 Eq. 20 inverted.

    .. math:: p_w = \frac{p\,W}{\varepsilon + W}

    Parameters
    ----------
    W : float or casadi.SX or casadi.MX
        Humidity ratio, [kg water / kg dry air].
    p : float or casadi.SX or casadi.MX
        Barometric pressure, [Pa].

    Returns
    -------
    float or casadi expression
        Partial pressure of water vapour, [Pa].

    Raises
    ------
    InputError
        For numbers, if W < 0.

    References
    ----------
    ASHRAE Handbook—Fundamentals (2017), SI edition, ch. 1, Eq. 20 solved
    for p_w.

    Examples
    --------
    >>> round(vapour_pressure_from_humidity_ratio(0.0213604, 95461.0), 1)   # Pa
    3169.7
    """
    if not _is_symbolic(W, p) and W < 0.0:
        raise InputError(f"humidity ratio {float(W):g} kg/kg is negative", key="W")
    return p * W / (EPSILON + W)


@valid_for(T=_T_RANGE, p=_P_RANGE)
def saturation_humidity_ratio(T, p):
    r"""Humidity ratio of saturated moist air, ASHRAE 2017 ch. 1 Eq. 20 at p_w = p_ws(T).

    .. math:: W_s = \varepsilon \frac{p_{ws}(T)}{p - p_{ws}(T)}

    with p_ws from IAPWS-IF97 eq. 30 (`balance.properties.water`).

    Parameters
    ----------
    T : float or casadi.SX or casadi.MX
        Dry-bulb temperature, [K].
    p : float or casadi.SX or casadi.MX
        Barometric pressure, [Pa].

    Returns
    -------
    float or casadi expression
        Saturation humidity ratio, [kg water / kg dry air]. For symbols, the
        expression is ``if_else(p_ws < p, W_s, +inf)``.

    Raises
    ------
    OutOfRangeError
        For numbers, if T is at or above the boiling point of water at p
        (p_ws(T) >= p): moist air cannot saturate there, W_s is infinite.

    Notes
    -----
    Ideal-gas mixing: without the enhancement factor f_s of the real-gas
    formulation, W_s runs 0.4 % (25 °C) to 1.2 % (85 °C) below ASHRAE
    Table 2 at 101.325 kPa. Below 0 °C saturation is over supercooled liquid
    water (module docstring). Above the boiling point a symbolic caller gets
    +inf, which makes a Newton solve fail loudly instead of converging on a
    meaningless negative number; keep T below
    ``water.saturation_temperature(p)`` with a range check.

    References
    ----------
    ASHRAE Handbook—Fundamentals (2017), SI edition, ch. 1, Eq. 20 with the
    saturation pressure of IAPWS R7-97(2012) eq. 30.

    Examples
    --------
    >>> round(saturation_humidity_ratio(298.15, 101325.0), 5)   # kg/kg
    0.02009
    """
    p_ws = water.saturation_pressure(T)
    if _is_symbolic(T, p):
        return ca.if_else(p_ws < p, EPSILON * p_ws / (p - p_ws), ca.inf)
    if p_ws >= p:
        raise OutOfRangeError(
            f"T = {float(T):g} K is at or above the boiling point of water at p = {float(p):g} Pa "
            f"({float(water.saturation_temperature(p)):.2f} K): moist air cannot saturate there, "
            "the saturation humidity ratio is infinite", key="T")
    return EPSILON * p_ws / (p - p_ws)


@valid_for(T=_T_RANGE, rh=(0.0, 1.0, "-"), p=_P_RANGE)
def humidity_ratio_from_relative_humidity(T, rh, p):
    r"""Humidity ratio from relative humidity, ASHRAE 2017 ch. 1 Eqs. 20 and 22.

    .. math:: p_w = \varphi\,p_{ws}(T),\qquad W = \varepsilon \frac{p_w}{p - p_w}

    Parameters
    ----------
    T : float or casadi.SX or casadi.MX
        Dry-bulb temperature, [K].
    rh : float or casadi.SX or casadi.MX
        Relative humidity (fraction, not percent), [-].
    p : float or casadi.SX or casadi.MX
        Barometric pressure, [Pa].

    Returns
    -------
    float or casadi expression
        Humidity ratio, [kg water / kg dry air].

    Raises
    ------
    InputError
        For numbers, if rh is outside [0, 1].
    OutOfRangeError
        For numbers, if rh p_ws(T) >= p: above the boiling point at p only
        rh < p / p_ws(T) exists.

    Notes
    -----
    Relative humidity is taken over liquid water at all temperatures (WMO
    convention); see the module docstring for temperatures below 0 °C and
    above the boiling point. For symbols the plain formula is returned; it
    turns negative where rh p_ws >= p.

    References
    ----------
    ASHRAE Handbook—Fundamentals (2017), SI edition, ch. 1, Eqs. 20 and 22;
    p_ws from IAPWS R7-97(2012) eq. 30.

    Examples
    --------
    >>> round(humidity_ratio_from_relative_humidity(303.15, 0.5, 101325.0), 5)   # kg/kg
    0.01331
    """
    p_w = rh * water.saturation_pressure(T)
    if not _is_symbolic(T, rh, p):
        if rh < 0.0 or rh > 1.0:
            raise InputError(f"relative humidity {float(rh):g} is outside [0, 1]", key="rh")
        if p_w >= p:
            raise OutOfRangeError(
                f"at T = {float(T):g} K, above the boiling point at p = {float(p):g} Pa, "
                f"relative humidity must be below p/p_ws = {float(p / (p_w / rh)):.4f}; "
                f"got {float(rh):g}", key="rh")
    return EPSILON * p_w / (p - p_w)


@valid_for(T=_T_RANGE, W=_W_RANGE, p=_P_RANGE)
def relative_humidity(T, W, p):
    r"""Relative humidity of moist air, ASHRAE 2017 ch. 1 Eq. 22.

    .. math:: \varphi = \frac{p_w}{p_{ws}(T)},\qquad p_w = \frac{p\,W}{\varepsilon + W}

    Parameters
    ----------
    T : float or casadi.SX or casadi.MX
        Dry-bulb temperature, [K].
    W : float or casadi.SX or casadi.MX
        Humidity ratio, [kg water / kg dry air].
    p : float or casadi.SX or casadi.MX
        Barometric pressure, [Pa].

    Returns
    -------
    float or casadi expression
        Relative humidity (fraction), [-]. Above 1 means supersaturated
        (fog), which these ideal-gas relations do not describe.

    Notes
    -----
    Defined at every temperature. Above the boiling point at p it is still
    p_w / p_ws(T), and it can never reach 1 there: p_w < p < p_ws(T).

    References
    ----------
    ASHRAE Handbook—Fundamentals (2017), SI edition, ch. 1, Eq. 22 (with
    Eq. 20 for p_w); p_ws from IAPWS R7-97(2012) eq. 30.

    Examples
    --------
    >>> round(relative_humidity(303.15, 0.01331, 101325.0), 3)
    0.5
    """
    return vapour_pressure_from_humidity_ratio(W, p) / water.saturation_pressure(T)


# ---------------------------------------------------------------------------
# Enthalpy


@valid_for(T=_T_RANGE)
def vapour_enthalpy_ideal_gas(T):
    r"""Specific enthalpy of water vapour as an ideal gas, IAPWS-IF97 region 2 at p -> 0.

    .. math:: h_{v,ig}(T) = R\,T\,\tau\,\gamma^o_\tau(\tau),\qquad \tau = 540\ \mathrm{K}/T

    the ideal-gas part of the IF97 region-2 Gibbs function (eq. 16,
    Table 10); the residual part vanishes at zero pressure. Evaluated as
    ``water.vapour_enthalpy(T, 0.0)``, so it is the program's one water model.

    Parameters
    ----------
    T : float or casadi.SX or casadi.MX
        Temperature, [K].

    Returns
    -------
    float or casadi expression
        Specific enthalpy, [J/kg], IAPWS datum (u = s = 0 for liquid water at
        the triple point).

    Notes
    -----
    Why this and not ``h_g(T_t) + c_p,v (T - T_t)``: the ideal-gas heat
    capacity of water vapour rises from 1.86 to about 2.0 kJ/(kg K) between
    0 and 300 °C, which a constant c_p,v misses by up to 0.6 % of h_v at
    300 °C (tested). In moist air the vapour is at its partial pressure; the
    real-gas residual there (IF97 region 2 at p_w) lowers h_v by 0.1-0.2 %
    at dryer-exhaust partial pressures (20-30 kPa, 80-90 °C) and by 0.5 % at
    101 kPa and 100 °C; ASHRAE's tables include it, ideal mixing does not.
    Region 2 is declared from 273.15 K;
    the ideal-gas part is smooth and is used down to 233.15 K.

    References
    ----------
    IAPWS R7-97(2012), section 6.1, eqs. 15-16, Table 10.

    Examples
    --------
    >>> round(vapour_enthalpy_ideal_gas(273.16) / 1e3, 2)   # kJ/kg
    2501.44
    """
    return water.vapour_enthalpy(T, 0.0)


@valid_for(T=_T_RANGE, W=_W_RANGE)
def enthalpy(T, W):
    r"""Specific enthalpy of moist air per kg of dry air, on the program's datum.

    .. math:: h = c_{p,a}\,(T - 273.15\ \mathrm{K}) + W\,h_{v,ig}(T)

    with c_p,a = 1006 J/(kg K) (ASHRAE 2017 ch. 1 Eq. 28) and h_v,ig the
    IF97 ideal-gas vapour enthalpy (`vapour_enthalpy_ideal_gas`).

    Parameters
    ----------
    T : float or casadi.SX or casadi.MX
        Dry-bulb temperature, [K].
    W : float or casadi.SX or casadi.MX
        Humidity ratio, [kg water / kg dry air].

    Returns
    -------
    float or casadi expression
        Enthalpy, [J/kg dry air]. Data: dry air zero at 0 °C; water zero as
        liquid at the triple point (IAPWS), the same datum as
        ``water.liquid_enthalpy``, so a dryer balance can mix the two.

    Notes
    -----
    Ideal-gas mixing as in ASHRAE 2017 ch. 1 Eq. 30 (the ASHRAE form is
    `enthalpy_ashrae`). The dry-air datum cancels in any balance in which the
    dry air passes through. A constant c_p,a understates the enthalpy of dry
    air against CoolProp's real-gas air by 0.65 % at 200 °C, 1.0 % at 250 °C
    and 1.4 % at 300 °C (c_p,a rises to about 1.045 kJ/(kg K) at 300 °C);
    heater duties for hot drying air inherit that bias.

    References
    ----------
    ASHRAE Handbook—Fundamentals (2017), SI edition, ch. 1, Eqs. 28-30
    (ideal-gas mixing); IAPWS R7-97(2012) region 2, eq. 16, for the vapour.

    Examples
    --------
    >>> round(enthalpy(303.15, 0.02) / 1e3, 2)   # kJ/kg dry air
    81.33
    """
    return CP_DRY_AIR * (T - T_ZERO_CELSIUS) + W * vapour_enthalpy_ideal_gas(T)


@valid_for(T=(173.15, 473.15, "K"), W=_W_RANGE)
def enthalpy_ashrae(T, W):
    r"""Specific enthalpy of moist air, ASHRAE Handbook—Fundamentals 2017 ch. 1 Eq. 30.

    .. math:: h = 1.006\,t + W\,(2501 + 1.86\,t)\quad [\mathrm{kJ/kg\ dry\ air}],
        \qquad t = T - 273.15\ \mathrm{K}\ \ [°C]

    Parameters
    ----------
    T : float or casadi.SX or casadi.MX
        Dry-bulb temperature, [K].
    W : float or casadi.SX or casadi.MX
        Humidity ratio, [kg water / kg dry air].

    Returns
    -------
    float or casadi expression
        Enthalpy, [J/kg dry air], ASHRAE datum: dry air and liquid water at
        0 °C. Not the program's datum: use `enthalpy` in balances.

    Notes
    -----
    For checks against the Handbook and psychrolib. Constant heat capacities
    (1.006 and 1.86 kJ/(kg K)); the vapour term runs 0.24 % below IF97 at
    200 °C and 0.6 % at 300 °C. The declared range follows psychrolib's
    (-100 to 200 °C).

    References
    ----------
    ASHRAE Handbook—Fundamentals (2017), SI edition, ch. 1, Eq. 30 (with
    Eqs. 28 and 32).

    Examples
    --------
    >>> round(enthalpy_ashrae(303.15, 0.02) / 1e3, 3)   # kJ/kg dry air
    81.316
    """
    t = T - T_ZERO_CELSIUS
    return 1e3 * (1.006 * t + W * (2501.0 + 1.86 * t))


# ---------------------------------------------------------------------------
# Volume and density


@valid_for(T=_T_RANGE, W=_W_RANGE, p=_P_RANGE)
def specific_volume(T, W, p):
    r"""Specific volume of moist air per kg of dry air, ASHRAE 2017 ch. 1 Eq. 26.

    .. math:: v = \frac{R_{da}\,T\,(1 + W/\varepsilon)}{p},\qquad
        1/\varepsilon = 1.607858,\ R_{da} = 287.042\ \mathrm{J/(kg\,K)}

    Parameters
    ----------
    T : float or casadi.SX or casadi.MX
        Dry-bulb temperature, [K].
    W : float or casadi.SX or casadi.MX
        Humidity ratio, [kg water / kg dry air].
    p : float or casadi.SX or casadi.MX
        Barometric pressure, [Pa].

    Returns
    -------
    float or casadi expression
        Specific volume, [m3 / kg dry air].

    Notes
    -----
    Ideal gas; the compressibility of air (Z = 0.9996 at 25 °C, 1 atm)
    is neglected, 0.04 % against ASHRAE Table 2.

    References
    ----------
    ASHRAE Handbook—Fundamentals (2017), SI edition, ch. 1, Eq. 26.

    Examples
    --------
    >>> round(specific_volume(298.15, 0.0, 101325.0), 4)   # m3/kg dry air
    0.8446
    """
    return R_DRY_AIR * T * (1.0 + W / EPSILON) / p


@valid_for(T=_T_RANGE, W=_W_RANGE, p=_P_RANGE)
def density(T, W, p):
    r"""Density of moist air, ASHRAE 2017 ch. 1 Eq. 11 with Eq. 26.

    .. math:: \rho = \frac{1 + W}{v}

    Parameters
    ----------
    T : float or casadi.SX or casadi.MX
        Dry-bulb temperature, [K].
    W : float or casadi.SX or casadi.MX
        Humidity ratio, [kg water / kg dry air].
    p : float or casadi.SX or casadi.MX
        Barometric pressure, [Pa].

    Returns
    -------
    float or casadi expression
        Density, [kg moist air / m3].

    References
    ----------
    ASHRAE Handbook—Fundamentals (2017), SI edition, ch. 1, Eq. 11 and
    Eq. 26 (`specific_volume`).

    Examples
    --------
    >>> round(density(303.15, 0.02, 95461.0), 4)   # kg/m3
    1.0841
    """
    return (1.0 + W) / specific_volume(T, W, p)


# ---------------------------------------------------------------------------
# Dew point


@functools.lru_cache(maxsize=None)
def _ln_saturation_pressure():
    """CasADi Function T -> (ln p_ws(T), d ln p_ws / dT), built once."""
    T = ca.SX.sym("T")
    ln_p = ca.log(water.saturation_pressure(T))
    return ca.Function("ln_p_ws", [T], [ln_p, ca.jacobian(ln_p, T)])


@functools.lru_cache(maxsize=None)
def _clausius_clapeyron_slope() -> float:
    """B in ln p_ws = A - B/T through the triple point and 373.15 K, [K]."""
    T1, T2 = water.T_TRIPLE, 373.15
    p1, p2 = water.saturation_pressure(T1), water.saturation_pressure(T2)
    return math.log(p2 / p1) / (1.0 / T1 - 1.0 / T2)


def _dew_point_from_ln_pw(ln_pw):
    """Unrolled Newton steps on ln p_ws(1/u) = ln p_w in u = 1/T (floats or symbols)."""
    B = _clausius_clapeyron_slope()
    f_and_slope = _ln_saturation_pressure()
    u = 1.0 / water.T_TRIPLE - (ln_pw - math.log(water.P_TRIPLE)) / B
    for _ in range(_DEW_POINT_STEPS):
        T = 1.0 / u
        ln_p, dln_p_dT = f_and_slope(T)
        # d ln p / du = d ln p / dT * dT/du = -T^2 d ln p / dT
        u = u + (ln_p - ln_pw) / (T * T * dln_p_dT)
    return 1.0 / u


@valid_for(W=(1e-4, 1.0, "kg/kg"), p=_P_RANGE)
def dew_point_temperature(W, p):
    r"""Dew-point temperature of moist air: the T_d with p_ws(T_d) = p_w (ASHRAE 2017 ch. 1).

    Solves

    .. math:: \ln p_{ws}(T_d) = \ln p_w,\qquad p_w = \frac{p\,W}{\varepsilon + W}

    by Newton's method in u = 1/T_d (in which ln p_ws is nearly straight,
    the Clausius–Clapeyron form), started from the straight line through
    the triple point and 373.15 K, with a fixed number (6) of unrolled steps.
    A Newton iteration on T itself can wander to absurd temperatures; in
    1/T the function is smooth, concave and monotone and the iteration
    converges in at most 4 steps over W = 1e-4 ... 1 kg/kg,
    p = 50 ... 110 kPa (tested against a bracketing solver).

    Parameters
    ----------
    W : float or casadi.SX or casadi.MX
        Humidity ratio, [kg water / kg dry air].
    p : float or casadi.SX or casadi.MX
        Barometric pressure, [Pa].

    Returns
    -------
    float or casadi expression
        Dew-point temperature, [K].

    Raises
    ------
    InputError
        For numbers, if W <= 0 (dry air has no dew point).
    SolveError
        For numbers, if the residual after the fixed steps exceeds 1e-9 in
        ln p (never observed in the declared range).

    Notes
    -----
    Below 0 °C the result is the dew point over supercooled water, not the
    frost point (module docstring). For symbols the returned expression is
    the sixth Newton iterate; its derivative is that of the exact root to
    within the (quadratically small) residual.

    References
    ----------
    ASHRAE Handbook—Fundamentals (2017), SI edition, ch. 1, definition of
    the dew-point temperature (p_w = p_ws(t_d)); p_ws from IAPWS R7-97(2012)
    eq. 30.

    Examples
    --------
    >>> round(dew_point_temperature(0.01, 101325.0) - 273.15, 2)   # °C
    14.03
    """
    symbolic = _is_symbolic(W, p)
    if not symbolic and W <= 0.0:
        raise InputError(f"humidity ratio {float(W):g} kg/kg: dry air has no dew point", key="W")
    ln_pw = ca.log(vapour_pressure_from_humidity_ratio(W, p))
    T_d = _dew_point_from_ln_pw(ln_pw)
    if symbolic:
        return T_d
    T_d = _check_finite(T_d, "dew_point_temperature", "W")
    residual = abs(_as_float(_ln_saturation_pressure()(T_d)[0]) - float(ln_pw))
    if residual > _LN_P_TOL:
        raise SolveError(f"dew point did not converge (residual {residual:.2e} in ln p) "
                         f"for W = {float(W):g} kg/kg, p = {float(p):g} Pa", key="W")
    return T_d


# ---------------------------------------------------------------------------
# Adiabatic saturation (thermodynamic wet-bulb) temperature


def _adiabatic_saturation_residual(T_star, T, W, p):
    r"""g(T*) = ln p_ws(T*) - ln(p y*), increasing in T*.

    y* = R / (eps + R) is the vapour mole fraction the energy balance asks
    for at the saturated outlet, R = W_s* from Eq. 33 solved for it:
    R = [c_pa (T - T*) + W (h_v(T) - h_f(T*))] / (h_v(T*) - h_f(T*)).
    """
    h_f = water.liquid_enthalpy(T_star)
    h_v_star = vapour_enthalpy_ideal_gas(T_star)
    R = (CP_DRY_AIR * (T - T_star) + W * (vapour_enthalpy_ideal_gas(T) - h_f)) / (h_v_star - h_f)
    return ca.log(water.saturation_pressure(T_star)) - ca.log(p) - ca.log(R) + ca.log(EPSILON + R)


@functools.lru_cache(maxsize=None)
def _adiabatic_saturation_function():
    """CasADi Function (T, W, p) -> (T*, residual), a safeguarded Newton solve, built once.

    Safeguarded Newton ("rtsafe") in u = 1/T*: a bracket [1/T, 1/190 K]
    that holds the root (g > 0 at T* = T for unsaturated air, g < 0 at
    190 K) is narrowed with the sign of g at every iterate; a Newton step
    that would leave the (closed) bracket is replaced by bisection. The number of
    steps is fixed, so the result is an explicit expression.
    """
    T, W, p = ca.SX.sym("T"), ca.SX.sym("W"), ca.SX.sym("p")
    x = ca.SX.sym("x")                      # x = 1/T*
    g = _adiabatic_saturation_residual(1.0 / x, T, W, p)
    g_and_slope = ca.Function("g", [x, T, W, p], [g, ca.jacobian(g, x)])
    lo, hi = 1.0 / T, 1.0 / _WET_BULB_T_LOW    # g(lo) >= 0, g(hi) < 0; g decreasing in x
    x_k = 0.5 * (lo + hi)
    for _ in range(_WET_BULB_STEPS):
        g_k, dg_k = g_and_slope(x_k, T, W, p)
        lo = ca.if_else(g_k > 0, x_k, lo)
        hi = ca.if_else(g_k > 0, hi, x_k)
        newton = x_k - g_k / dg_k
        # The lower end gets a relative slack of 1e-7 (3e-5 K at 300 K): the
        # root of saturated air lies exactly on it, and Newton's final step
        # may overshoot by a rounding error. Beyond the slack (T* > T) g is
        # not defined for dry air.
        inside = ca.logic_and(newton >= lo * (1.0 - 1e-7), newton <= hi)
        x_k = ca.if_else(inside, newton, 0.5 * (lo + hi))
    residual = g_and_slope(x_k, T, W, p)[0]
    return ca.Function("adiabatic_saturation_temperature", [T, W, p], [1.0 / x_k, residual])


@valid_for(T=_T_RANGE, W=_W_RANGE, p=_P_RANGE)
def adiabatic_saturation_temperature(T, W, p):
    r"""Adiabatic-saturation (thermodynamic wet-bulb) temperature, ASHRAE 2017 ch. 1 Eqs. 33 and 35.

    The T* at which adding liquid water at T* saturates the air at T*
    adiabatically (Eq. 33, on the program's enthalpy datum):

    .. math:: h(T, W) + [W_s(T^*) - W]\,h_f(T^*) = h(T^*, W_s(T^*))

    i.e. with the vapour mole fraction y* = W_s*/(ε + W_s*):

    .. math:: \ln p_{ws}(T^*) = \ln(p\,y^*),\quad
        y^* = \frac{R}{\varepsilon + R},\quad
        R = \frac{c_{p,a}(T - T^*) + W\,[h_v(T) - h_f(T^*)]}{h_v(T^*) - h_f(T^*)}

    h_v is `vapour_enthalpy_ideal_gas`, h_f ``water.liquid_enthalpy``. The
    residual is monotone in T*; it is solved in u = 1/T* by a safeguarded
    Newton method (Newton steps kept inside a bracket that each step
    narrows, bisection otherwise) with a fixed number of unrolled steps
    (16; the bracket [190 K, T] always holds the root for unsaturated air).

    Parameters
    ----------
    T : float or casadi.SX or casadi.MX
        Dry-bulb temperature, [K].
    W : float or casadi.SX or casadi.MX
        Humidity ratio, [kg water / kg dry air].
    p : float or casadi.SX or casadi.MX
        Barometric pressure, [Pa].

    Returns
    -------
    float or casadi expression
        Adiabatic-saturation temperature, [K].

    Raises
    ------
    InputError
        For numbers, if W < 0 or the air is supersaturated (W > W_s(T)).
    SolveError
        For numbers, if the residual after the fixed steps exceeds 1e-9 in
        ln p.

    Notes
    -----
    Below 0 °C the water at the surface is taken as supercooled liquid, not
    ice (psychrolib and ASHRAE Eq. 35 use ice there). Above the boiling
    point at p the result is still defined (and below the boiling point).
    For symbols the returned expression is the last iterate; keep W below
    W_s(T) with a range check.

    References
    ----------
    ASHRAE Handbook—Fundamentals (2017), SI edition, ch. 1, Eqs. 33 and 35
    (thermodynamic wet-bulb temperature); enthalpies of water from IAPWS
    R7-97(2012).

    Examples
    --------
    >>> round(adiabatic_saturation_temperature(313.15, 0.0065, 101325.0) - 273.15, 1)   # °C
    20.1
    """
    symbolic = _is_symbolic(T, W, p)
    if not symbolic:
        if W < 0.0:
            raise InputError(f"humidity ratio {float(W):g} kg/kg is negative", key="W")
        p_ws = water.saturation_pressure(T)
        if p_ws < p and W > saturation_humidity_ratio(T, p) * (1.0 + 1e-9):
            raise InputError(
                f"W = {float(W):g} kg/kg exceeds the saturation humidity ratio "
                f"{float(saturation_humidity_ratio(T, p)):g} kg/kg at T = {float(T):g} K, "
                f"p = {float(p):g} Pa (supersaturated air)", key="W")
    T_star, residual = _adiabatic_saturation_function()(T, W, p)
    if symbolic:
        return T_star
    T_star = _check_finite(T_star, "adiabatic_saturation_temperature", "W")
    if abs(float(residual)) > _LN_P_TOL:
        raise SolveError(f"adiabatic saturation temperature did not converge (residual "
                         f"{float(residual):.2e} in ln p) for T = {float(T):g} K, "
                         f"W = {float(W):g} kg/kg, p = {float(p):g} Pa", key="W")
    return T_star


@valid_for(T=_T_RANGE, T_star=(273.15, 373.15, "K"), p=_P_RANGE)
def humidity_ratio_from_adiabatic_saturation_temperature(T, T_star, p):
    r"""Humidity ratio from dry-bulb and adiabatic-saturation temperatures, ASHRAE 2017 ch. 1 Eq. 33.

    Eq. 33 solved for W, on the program's enthalpy datum (the SI form of
    Eq. 35 with enthalpies from IAPWS-IF97 instead of constant heat
    capacities):

    .. math:: W = \frac{W_s(T^*)\,[h_v(T^*) - h_f(T^*)] - c_{p,a}(T - T^*)}
                        {h_v(T) - h_f(T^*)}

    Parameters
    ----------
    T : float or casadi.SX or casadi.MX
        Dry-bulb temperature, [K].
    T_star : float or casadi.SX or casadi.MX
        Adiabatic-saturation (thermodynamic wet-bulb) temperature, [K].
    p : float or casadi.SX or casadi.MX
        Barometric pressure, [Pa].

    Returns
    -------
    float or casadi expression
        Humidity ratio, [kg water / kg dry air].

    Raises
    ------
    InputError
        For numbers, if T_star > T or the result is below -1e-9 kg/kg
        (T_star too low for T: no such air exists; smaller negative values
        are rounding of the difference of two terms and are returned).
    OutOfRangeError
        For numbers, if T_star is at or above the boiling point at p (from
        `saturation_humidity_ratio`).

    Notes
    -----
    The explicit inverse of `adiabatic_saturation_temperature`. Water at the
    surface is liquid (supercooled below 0 °C).

    References
    ----------
    ASHRAE Handbook—Fundamentals (2017), SI edition, ch. 1, Eqs. 33 and 35;
    water enthalpies from IAPWS R7-97(2012).

    Examples
    --------
    >>> round(humidity_ratio_from_adiabatic_saturation_temperature(313.15, 293.15, 101325.0), 5)
    0.0064
    """
    symbolic = _is_symbolic(T, T_star, p)
    if not symbolic and T_star > T:
        raise InputError(f"adiabatic saturation temperature {float(T_star):g} K is above the "
                         f"dry-bulb temperature {float(T):g} K", key="T_star")
    h_f = water.liquid_enthalpy(T_star)
    W_s = saturation_humidity_ratio(T_star, p)
    W = ((W_s * (vapour_enthalpy_ideal_gas(T_star) - h_f) - CP_DRY_AIR * (T - T_star))
         / (vapour_enthalpy_ideal_gas(T) - h_f))
    if not symbolic and W < -1e-9:      # below rounding of the difference
        raise InputError(f"adiabatic saturation temperature {float(T_star):g} K is too low for "
                         f"dry-bulb {float(T):g} K at p = {float(p):g} Pa: even dry air "
                         "saturates at a higher one", key="T_star")
    return W
