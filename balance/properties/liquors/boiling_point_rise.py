r"""Boiling-point rise of aqueous liquors: one correlation per published source.

Every correlation has the same signature::

    f(x, T_water, p, **coefficients) -> BPR [K]

with ``x`` the solids mass fraction [-] (kg dissolved solids per kg liquor),
``T_water`` the boiling temperature of pure water at the prevailing pressure
[K] and ``p`` that pressure [Pa]. A liquor boils at ``T_water + BPR``.
Correlations that do not need ``T_water`` or ``p`` still accept them, so any
of them can be swapped for another. Coefficients are keyword arguments in SI
(kelvin for a boiling-point rise, kelvin for Dühring temperatures).

Each function carries its validity ranges as data (``func.validity``, from
`~balance.properties.validity.valid_for`) and a one-line citation
(``func.reference``) for reports. All arithmetic is CasADi-compatible: the
same call works on floats and on ``SX``/``MX`` symbols.

`BPR_MODELS` maps the names used in flowsheet files to the functions.
"""

from __future__ import annotations

from typing import Sequence

import casadi as ca

from balance.errors import InputError
from balance.properties.validity import valid_for
from balance.properties.water import MOLAR_MASS_WATER, latent_heat, saturation_pressure

from ._common import cite, horner, require_coefficients

__all__ = [
    "R_GAS", "MOLAR_MASS_SUCROSE", "BPR_MODELS",
    "no_rise", "polynomial", "duhring", "duhring_line_through",
    "geankoplis_sodium_hydroxide", "GEANKOPLIS_NAOH_LINES",
    "geankoplis_sucrose", "starzak_peacock_sucrose", "starzak_peacock_water_activity",
    "crapiste_lozano", "dairy_colligative",
    "STARZAK_PEACOCK_Q", "STARZAK_PEACOCK_A", "STARZAK_PEACOCK_B",
    "STARZAK_PEACOCK_NEWTON_STEPS", "SKIM_MILK_OSMOLALITY", "WHOLE_MILK_OSMOLALITY",
]

#: Molar gas constant, [J/(mol K)] (CODATA 2018, exact).
R_GAS = 8.314462618
#: Molar mass of sucrose C12H22O11, [kg/mol] (IUPAC standard atomic weights).
MOLAR_MASS_SUCROSE = 0.3422965

#: Corner half-width of the smoothed piecewise-linear interpolation in x, [-].
_CORNER = 1e-4


# ---------------------------------------------------------------------------
# Forms with user coefficients


@cite("no boiling-point rise (pure water or a liquor whose rise is negligible)")
@valid_for(x=(0.0, 1.0, "-"))
def no_rise(x, T_water, p):
    r"""No boiling-point rise: the liquor boils like pure water.

    .. math:: \Delta T_b = 0

    Parameters
    ----------
    x : float or casadi.SX or casadi.MX
        Solids mass fraction, [-].
    T_water : float or casadi.SX or casadi.MX
        Boiling temperature of pure water at ``p``, [K] (unused).
    p : float or casadi.SX or casadi.MX
        Pressure, [Pa] (unused).

    Returns
    -------
    float or casadi expression
        Boiling-point rise, [K]; ``0 * x``, so it keeps the kind of ``x``.

    Examples
    --------
    >>> no_rise(0.3, 350.0, 41_682.0)
    0.0
    """
    return 0.0 * x


@cite("polynomial in the solids mass fraction, user coefficients [K]")
@valid_for(x=(0.0, 1.0, "-"))
def polynomial(x, T_water, p, coefficients: Sequence[float]):
    r"""Boiling-point rise as a polynomial in the solids mass fraction.

    .. math:: \Delta T_b = \sum_{i=0}^{n} c_i x^i

    evaluated by Horner's rule. The rise does not depend on pressure, which
    is a fair approximation for dilute liquors over a small pressure range.

    Parameters
    ----------
    x : float or casadi.SX or casadi.MX
        Solids mass fraction, [-].
    T_water : float or casadi.SX or casadi.MX
        Boiling temperature of pure water at ``p``, [K] (unused).
    p : float or casadi.SX or casadi.MX
        Pressure, [Pa] (unused).
    coefficients : sequence of float
        ``c_0, c_1, ..., c_n``, [K]; ``c_0`` should be 0 so that water has
        no rise.

    Returns
    -------
    float or casadi expression
        Boiling-point rise, [K].

    Notes
    -----
    The declared range is the whole of 0 <= x <= 1; the range over which the
    user's coefficients were fitted is declared on the liquor
    (``solids_range``).

    Examples
    --------
    >>> round(polynomial(0.5, 373.12, 101_325.0, coefficients=[0.0, 1.78, 6.22]), 3)
    2.445
    """
    coefficients = require_coefficients(coefficients, "coefficients")
    return horner(x, coefficients)


def _ramp(z, width):
    """Smooth max(z, 0): (z + sqrt(z^2 + w^2)) / 2, within w/2 of it everywhere."""
    return 0.5 * (z + ca.sqrt(z * z + width * width))


def _interpolate(x, knots: Sequence[float], values: Sequence[float], width: float = _CORNER):
    """Piecewise-linear interpolation through (knots, values), corners rounded.

    Written as a sum of ramps so that it is one smooth CasADi expression:
    f(x) = v_0 + s_0 (x - x_0) + sum_i (s_i - s_{i-1}) [r(x - x_i) - r(x_0 - x_i)]
    with r the smoothed ramp. Exact at x_0; within (slope change) * width / 2
    of the straight lines elsewhere; extrapolates linearly beyond both ends.
    """
    if len(knots) == 1:
        return values[0] + 0.0 * x
    slopes = [(values[i + 1] - values[i]) / (knots[i + 1] - knots[i])
              for i in range(len(knots) - 1)]
    out = values[0] + slopes[0] * (x - knots[0])
    for i in range(1, len(knots) - 1):
        change = slopes[i] - slopes[i - 1]
        out = out + change * (_ramp(x - knots[i], width) - _ramp(knots[0] - knots[i], width))
    return out


def _checked_lines(lines) -> tuple:
    """Validate Dühring lines: rows (x, a, b), x strictly increasing."""
    try:
        rows = [tuple(float(v) for v in row) for row in lines]
    except (TypeError, ValueError):
        raise InputError("each Dühring line must be three numbers [x, a, b]",
                         key="lines") from None
    if not rows:
        raise InputError("needs at least one Dühring line [x, a, b]", key="lines")
    for row in rows:
        if len(row) != 3:
            raise InputError(f"each Dühring line must be three numbers [x, a, b], got {list(row)}",
                             key="lines")
    xs = [r[0] for r in rows]
    if any(x2 <= x1 for x1, x2 in zip(xs, xs[1:])):
        raise InputError(f"Dühring lines must be listed by strictly increasing x, got x = {xs}",
                         key="lines")
    return tuple(rows)


@cite("Dühring rule, user lines T_boil = a + b T_water (K), interpolated linearly in x")
@valid_for(x=(0.0, 1.0, "-"))
def duhring(x, T_water, p, lines: Sequence[Sequence[float]]):
    r"""Boiling-point rise from Dühring lines interpolated in concentration.

    Dühring's rule: at fixed concentration the boiling temperature of a
    solution is (nearly) a straight line in the boiling temperature of
    water at the same pressure,

    .. math:: T_b = a(x) + b(x)\, T_w, \qquad \Delta T_b = a(x) + [b(x) - 1]\, T_w

    The user gives lines at tabulated concentrations ``(x_i, a_i, b_i)``;
    ``a`` and ``b`` are interpolated linearly in ``x`` between them (so at a
    fixed water temperature the rise is linear in ``x`` between two lines),
    with the corners rounded over +-1e-4 in ``x`` so that the expression is
    smooth for Newton's method (error at a tabulated line below 0.01 K for
    the built-in lines). Beyond the first and last lines the interpolation
    extrapolates linearly; the range checks catch that.

    Parameters
    ----------
    x : float or casadi.SX or casadi.MX
        Solids mass fraction, [-].
    T_water : float or casadi.SX or casadi.MX
        Boiling temperature of pure water at ``p``, [K].
    p : float or casadi.SX or casadi.MX
        Pressure, [Pa] (unused; it enters through ``T_water``).
    lines : sequence of (x_i, a_i, b_i)
        Dühring lines by increasing ``x_i`` [-]; intercept ``a_i`` [K] and
        slope ``b_i`` [-] with both temperatures in kelvin. A line read off
        a chart in degrees Celsius, ``t_b = a_C + b t_w``, has
        ``a = a_C + (1 - b) 273.15 K``; `duhring_line_through` does this
        from two points. Include the water line ``(0, 0, 1)``.

    Returns
    -------
    float or casadi expression
        Boiling-point rise, [K].

    References
    ----------
    Dühring, U. (1878), Neue Grundgesetze zur rationellen Physik und Chemie
    [memory];
    the rule as used for evaporators: Geankoplis, C. J., Transport Processes
    and Separation Process Principles, 4th ed., Prentice Hall (2003),
    section 8.4.

    Examples
    --------
    A liquor whose 20 % line is 5 K above water at every temperature:

    >>> lines = [(0.0, 0.0, 1.0), (0.2, 5.0, 1.0)]
    >>> round(duhring(0.1, 330.0, 17_000.0, lines=lines), 6)
    2.5
    """
    rows = _checked_lines(lines)
    knots = [r[0] for r in rows]
    a = _interpolate(x, knots, [r[1] for r in rows])
    b = _interpolate(x, knots, [r[2] for r in rows])
    return a + (b - 1.0) * T_water


def duhring_line_through(point_1: Sequence[float], point_2: Sequence[float]) -> tuple:
    r"""Intercept and slope of the Dühring line through two points, in kelvin.

    Parameters
    ----------
    point_1, point_2 : (T_water, T_boil)
        Two points of one line: boiling temperature of water and of the
        solution at the same pressure, [K].

    Returns
    -------
    (a, b) : tuple of float
        ``T_boil = a + b T_water`` with ``a`` in [K] and ``b`` in [-].

    Examples
    --------
    >>> a, b = duhring_line_through((338.75, 352.65), (373.15, 390.15))
    >>> round(b, 4), round(a + b * 338.75, 2)
    (1.0901, 352.65)
    """
    (t1, s1), (t2, s2) = point_1, point_2
    if t1 == t2:
        raise InputError("a Dühring line needs two different water temperatures", key="lines")
    b = (s2 - s1) / (t2 - t1)
    return s1 - b * t1, b


# ---------------------------------------------------------------------------
# Sodium hydroxide: Dühring lines after Geankoplis, Fig. 8.4-2

_C = 273.15  # K per degree Celsius offset, for the table below only

# Each line through two points (water, solution), degrees Celsius. Origin of
# every number is marked: [read] read in a copy of the source; [memory]
# recalled; [estimate] filled in by us to keep the family of lines smooth.
_GEANKOPLIS_NAOH_POINTS = (
    # x     first point          second point
    (0.0, (0.0, 0.0), (100.0, 100.0)),     # pure water, exact
    (0.1, (0.0, 1.0), (100.0, 103.0)),     # [estimate], [memory] ~103 °C at 1 atm
    (0.2, (0.0, 3.5), (100.0, 108.5)),     # [estimate], [memory] ~108-109 °C at 1 atm
    (0.3, (65.6, 79.5), (100.0, 117.0)),   # [read] Fig. 8.4-2, [memory] ~117 °C at 1 atm
    (0.4, (0.0, 20.0), (100.0, 129.0)),    # [estimate], [memory] ~128-130 °C at 1 atm
    (0.5, (48.9, 89.5), (100.0, 145.0)),   # [memory] Fig. 8.4-2, [memory] 142-145 °C at 1 atm
)

#: Built-in NaOH Dühring lines ``(x, a [K], b [-])``, see `geankoplis_sodium_hydroxide`.
GEANKOPLIS_NAOH_LINES = tuple(
    (x,) + duhring_line_through((t1 + _C, s1 + _C), (t2 + _C, s2 + _C))
    for x, (t1, s1), (t2, s2) in _GEANKOPLIS_NAOH_POINTS
)


@cite("Dühring lines for NaOH after Geankoplis, Transport Processes and Separation "
       "Process Principles, 4th ed. (2003), Fig. 8.4-2 (one point read, others from "
       "memory; about +-2 K)")
@valid_for(x=(0.0, 0.5, "-"), T_water=(273.15, 393.15, "K"))
def geankoplis_sodium_hydroxide(x, T_water, p):
    r"""Boiling-point rise of aqueous sodium hydroxide from Dühring lines.

    `duhring` with the built-in `GEANKOPLIS_NAOH_LINES`: straight lines
    ``T_b = a + b T_w`` at 0, 10, 20, 30, 40 and 50 % NaOH, interpolated
    linearly in ``x``. Each line passes through two points (°C):

    ====  ==================  ==================  =============================
    x     point 1 (t_w, t_b)  point 2 (t_w, t_b)  origin
    ====  ==================  ==================  =============================
    0.0   (0, 0)              (100, 100)          pure water
    0.1   (0, 1.0)            (100, 103.0)        estimate; memory
    0.2   (0, 3.5)            (100, 108.5)        estimate; memory
    0.3   (65.6, 79.5)        (100, 117.0)        **read** (Fig. 8.4-2); memory
    0.4   (0, 20.0)           (100, 129.0)        estimate; memory
    0.5   (48.9, 89.5)        (100, 145.0)        memory (Fig. 8.4-2); memory
    ====  ==================  ==================  =============================

    "memory" at 100 °C: the normal boiling points of caustic-soda solutions
    as quoted in handbooks and supplier data (recalled, not read). "estimate":
    the low-temperature end of a line chosen by us so that the family of
    lines stays smooth between the read and recalled ones. Only the 30 %
    point at 65.6 °C was read off the chart.

    Parameters
    ----------
    x : float or casadi.SX or casadi.MX
        NaOH mass fraction, [-].
    T_water : float or casadi.SX or casadi.MX
        Boiling temperature of pure water at ``p``, [K].
    p : float or casadi.SX or casadi.MX
        Pressure, [Pa] (unused; it enters through ``T_water``).

    Returns
    -------
    float or casadi expression
        Boiling-point rise, [K].

    Notes
    -----
    Range: 0 <= x <= 0.5 and water boiling temperatures 0-120 °C (the
    chart's water axis as recalled, about 32-250 °F). Expected accuracy
    about +-1 K near the read and recalled points and +-2 K elsewhere; use
    a user Dühring table (`duhring`) for design work on caustic soda.

    The heat of dilution of NaOH is large; a liquor using these lines needs
    an enthalpy-concentration chart for an accurate energy balance (see
    `balance.properties.liquors.liquor`).

    References
    ----------
    Geankoplis, C. J., Transport Processes and Separation Process
    Principles, 4th ed., Prentice Hall (2003), section 8.4, Fig. 8.4-2
    (Dühring lines for aqueous solutions of sodium hydroxide).

    Examples
    --------
    30 % NaOH where water boils at 65.6 °C (the point read off Fig. 8.4-2):

    >>> round(geankoplis_sodium_hydroxide(0.30, 65.6 + 273.15, 25_720.0), 1)
    13.9
    """
    return duhring(x, T_water, p, lines=GEANKOPLIS_NAOH_LINES)


# ---------------------------------------------------------------------------
# Sucrose


@cite("sucrose, BPR = 1.78 x + 6.22 x^2 K, Geankoplis, Transport Processes and "
       "Separation Process Principles, 4th ed. (2003), ch. 8 (recalled)")
@valid_for(x=(0.0, 0.7, "-"))
def geankoplis_sucrose(x, T_water, p):
    r"""Boiling-point rise of sucrose solutions, simple quadratic form.

    .. math:: \Delta T_b = 1.78\,x + 6.22\,x^2 \quad [\mathrm{K}]

    Parameters
    ----------
    x : float or casadi.SX or casadi.MX
        Sucrose mass fraction, [-].
    T_water : float or casadi.SX or casadi.MX
        Boiling temperature of pure water at ``p``, [K] (unused).
    p : float or casadi.SX or casadi.MX
        Pressure, [Pa] (unused).

    Returns
    -------
    float or casadi expression
        Boiling-point rise, [K].

    Notes
    -----
    Independent of pressure. Compared with the water-activity model of
    `starzak_peacock_sucrose` it over-predicts between about 30 and 60 %
    sucrose (by about 0.6 K at 50 %) and under-predicts above about 65 %.
    Declared range 0-70 %, the solubility of sucrose near room temperature;
    the source's own range is not recalled. The formula is recalled, not
    read: verify before relying on it.

    References
    ----------
    Geankoplis, C. J., Transport Processes and Separation Process
    Principles, 4th ed., Prentice Hall (2003), ch. 8 (evaporation),
    boiling-point rise of sugar solutions [from memory].

    Examples
    --------
    >>> round(geankoplis_sucrose(0.5, 373.12, 101_325.0), 3)
    2.445
    """
    return x * (1.78 + 6.22 * x)


def _sucrose_mole_fraction(x):
    """Mole fraction of sucrose in a sucrose-water mixture of mass fraction x."""
    n_s = x / MOLAR_MASS_SUCROSE
    n_w = (1.0 - x) / MOLAR_MASS_WATER
    return n_s / (n_s + n_w)


#: Starzak & Peacock (1997) water-activity parameters: Q [J/mol], a [-], b [-].
STARZAK_PEACOCK_Q = -17638.0
STARZAK_PEACOCK_A = -1.0038
STARZAK_PEACOCK_B = -0.24653


def starzak_peacock_water_activity(x, T):
    r"""Water activity of sucrose solutions, Starzak & Peacock (1997).

    .. math::
        a_w = \gamma_w x_w,\qquad
        \ln\gamma_w = \frac{Q}{R T}\, x_s^2\,(1 + a\,x_s + b\,x_s^2)

    with ``x_s`` the sucrose mole fraction, ``x_w = 1 - x_s``,
    Q = -17 638 J/mol, a = -1.0038, b = -0.24653.

    Parameters
    ----------
    x : float or casadi.SX or casadi.MX
        Sucrose mass fraction, [-].
    T : float or casadi.SX or casadi.MX
        Temperature, [K].

    Returns
    -------
    float or casadi expression
        Water activity, [-].

    References
    ----------
    Starzak, M., Peacock, S. D., Water activity coefficient in aqueous
    solutions of sucrose - a comprehensive data analysis, Zuckerindustrie
    122 (1997) 380-387 (parameters read; the form and the title as
    recalled).

    Examples
    --------
    >>> round(starzak_peacock_water_activity(0.5, 298.15), 4)
    0.9341
    """
    x_s = _sucrose_mole_fraction(x)
    ln_gamma = STARZAK_PEACOCK_Q / (R_GAS * T) * x_s * x_s * (
        1.0 + STARZAK_PEACOCK_A * x_s + STARZAK_PEACOCK_B * x_s * x_s)
    return (1.0 - x_s) * ca.exp(ln_gamma)


#: Newton steps in 1/T of `starzak_peacock_sucrose` (the first from T_water).
STARZAK_PEACOCK_NEWTON_STEPS = 3
_DT_DIFF = 0.01  # K, central-difference step for d ln p_s / dT


@cite("sucrose, water activity of Starzak & Peacock, Zuckerindustrie 122 (1997) "
       "380-387, boiling where a_w p_s(T) = p (IAPWS-IF97)")
@valid_for(x=(0.0, 0.85, "-"), T_water=(273.15, 393.15, "K"))
def starzak_peacock_sucrose(x, T_water, p):
    r"""Boiling-point rise of sucrose solutions from the Starzak-Peacock water activity.

    The solution boils at the temperature T where the water vapour
    pressure over it equals the prevailing pressure (sucrose is
    non-volatile, the vapour is pure water, ideal vapour):

    .. math::
        \gamma_w(x, T)\, x_w\, p_s(T) = p,\qquad
        \ln\gamma_w = \frac{Q}{R T}\, x_s^2\,(1 + a\,x_s + b\,x_s^2)

    with `starzak_peacock_water_activity` and ``p_s`` from IAPWS-IF97.
    The implicit equation is solved by a fixed number of Newton steps on
    ``r(u) = ln a_w + ln p_s(1/u) - ln p`` in ``u = 1/T`` (in which both
    terms are nearly linear), starting from ``T_water``; the first step is
    the integrated Clausius-Clapeyron estimate. ``d ln p_s / dT`` is taken
    by a central difference of 0.01 K. The result is one explicit CasADi
    expression; three steps converge to about 1e-12 K up to 85 % sucrose (checked against
    a bracketing root finder in the tests).

    Parameters
    ----------
    x : float or casadi.SX or casadi.MX
        Sucrose mass fraction, [-].
    T_water : float or casadi.SX or casadi.MX
        Boiling temperature of pure water at ``p``, [K]; the starting point
        and the reference of the returned rise.
    p : float or casadi.SX or casadi.MX
        Pressure, [Pa].

    Returns
    -------
    float or casadi expression
        Boiling-point rise ``T_b(x, p) - T_water``, [K].

    Notes
    -----
    At 1 atm: about 1.8 K at 50 % and 5 K at 70 % sucrose, in line with
    classical sugar tables. Declared range 0-85 % sucrose and water boiling
    temperatures 0-120 °C [memory: the data analysed in the paper span
    undersaturated and supersaturated solutions; verify the paper's stated
    range before going beyond it].

    References
    ----------
    Starzak, M., Peacock, S. D., Water activity coefficient in aqueous
    solutions of sucrose - a comprehensive data analysis, Zuckerindustrie
    122 (1997) 380-387. IAPWS R7-97(2012), eq. 30 for p_s.

    Examples
    --------
    >>> round(starzak_peacock_sucrose(0.5, 373.124, 101_325.0), 2)
    1.82
    """
    x_s = _sucrose_mole_fraction(x)
    ln_x_w = ca.log(1.0 - x_s)
    # ln gamma_w = c_gamma * u, u = 1/T
    c_gamma = STARZAK_PEACOCK_Q / R_GAS * x_s * x_s * (
        1.0 + STARZAK_PEACOCK_A * x_s + STARZAK_PEACOCK_B * x_s * x_s)
    ln_p = ca.log(p)
    T = T_water
    for _ in range(STARZAK_PEACOCK_NEWTON_STEPS):
        u = 1.0 / T
        ln_ps = ca.log(saturation_pressure(T))
        dln_ps_dT = (ca.log(saturation_pressure(T + _DT_DIFF))
                     - ca.log(saturation_pressure(T - _DT_DIFF))) / (2.0 * _DT_DIFF)
        residual = ln_x_w + c_gamma * u + ln_ps - ln_p
        slope = c_gamma - T * T * dln_ps_dT          # dr/du, since dT/du = -T^2
        T = 1.0 / (u - residual / slope)
    return T - T_water


# ---------------------------------------------------------------------------
# Fruit juices and similar: Crapiste & Lozano form


@cite("Crapiste & Lozano form dT = alpha w^beta exp(gamma w) (p/p_unit)^delta, "
       "J. Food Sci. 53 (1988), user coefficients")
@valid_for(x=(0.0, 1.0, "-"))
def crapiste_lozano(x, T_water, p, alpha, beta, gamma, delta, p_unit=1.0):
    r"""Boiling-point rise in the form of Crapiste & Lozano (1988).

    .. math::
        \Delta T_b = \alpha\, w^{\beta}\, \exp(\gamma w)\,
        \left(\frac{p}{p_\mathrm{unit}}\right)^{\delta}

    Parameters
    ----------
    x : float or casadi.SX or casadi.MX
        Solids mass fraction ``w``, [-] (a fraction, not a percentage).
    T_water : float or casadi.SX or casadi.MX
        Boiling temperature of pure water at ``p``, [K] (unused).
    p : float or casadi.SX or casadi.MX
        Pressure, [Pa].
    alpha : float
        Scale, [K].
    beta, gamma, delta : float
        Exponents, [-].
    p_unit : float, optional
        The pressure unit of the fitted coefficients, [Pa]: 1.0 if ``P`` was
        in Pa (default), 1000.0 for kPa, 1e5 for bar, 133.322 for mmHg.

    Returns
    -------
    float or casadi expression
        Boiling-point rise, [K].

    Notes
    -----
    No coefficient set is built in: take alpha, beta, gamma, delta from the
    original paper (fruit juices) or from later fits of the same form (e.g.
    coffee extract, Telis-Romero et al., Braz. J. Chem. Eng. 19 (2002)),
    together with the pressure unit and the concentration basis they used.
    Coefficients fitted with ``w`` in percent convert to mass fractions as
    ``alpha_frac = alpha_pct 100^beta``, ``gamma_frac = 100 gamma_pct``.
    The range is the fitted one; declare it on the liquor
    (``solids_range``).

    References
    ----------
    Crapiste, G. H., Lozano, J. E., Effect of concentration and pressure on
    the boiling point rise of apple juice and related sugar solutions,
    Journal of Food Science 53 (1988) 865-868 [citation and form from
    memory].

    Examples
    --------
    Illustrative coefficients only (not a published set):

    >>> round(crapiste_lozano(0.5, 333.2, 20_000.0, alpha=0.1, beta=1.0,
    ...                       gamma=3.0, delta=0.2, p_unit=1000.0), 3)
    0.408
    """
    return alpha * x ** beta * ca.exp(gamma * x) * (p / p_unit) ** delta


# ---------------------------------------------------------------------------
# Dairy concentrates

#: Effective osmoles per kg of dry solids, [mol/kg], calibrated on the freezing
#: point of milk (see `dairy_colligative`). Skim milk and whole milk.
SKIM_MILK_OSMOLALITY = 2.85
WHOLE_MILK_OSMOLALITY = 1.98
_K_FREEZING_WATER = 1.86  # K kg/mol, cryoscopic constant of water (common practice)


@cite("dairy concentrates, ideal colligative estimate calibrated on the freezing "
       "point of milk (common practice / from memory; low confidence)")
@valid_for(x=(0.0, 0.55, "-"), T_water=(273.15, 373.15, "K"))
def dairy_colligative(x, T_water, p, osmolality=SKIM_MILK_OSMOLALITY):
    r"""Boiling-point rise of milk concentrates, ideal colligative estimate.

    LOW CONFIDENCE: common practice and recalled facts, not a fitted
    published correlation. The dissolved lactose and milk salts act as an
    ideal solute whose amount per kg of dry solids (``osmolality``) is fixed
    by the freezing point of milk; the rise then follows the ideal
    ebullioscopic law at the boiling temperature:

    .. math::
        \Delta T_b = K_b(T_w)\; \nu\; \frac{x}{1 - x},\qquad
        K_b(T_w) = \frac{R\, T_w^2}{\Delta h_v(T_w)}

    with ``Delta h_v`` the latent heat of water [J/kg] (IAPWS-IF97) and
    ``nu`` [mol/kg dry solids]. Milk freezes at about -0.52 to -0.54 °C
    [common practice]; with the cryoscopic constant 1.86 K kg/mol that is
    0.282 mol of solute per kg of water, so
    ``nu = 0.282 / (x/(1-x))``: 2.85 mol/kg for skim milk at 9.0 % solids,
    1.98 mol/kg for whole milk at 12.5 % solids (fat does not count)
    [common practice, from memory].

    Parameters
    ----------
    x : float or casadi.SX or casadi.MX
        Total solids mass fraction, [-].
    T_water : float or casadi.SX or casadi.MX
        Boiling temperature of pure water at ``p``, [K].
    p : float or casadi.SX or casadi.MX
        Pressure, [Pa] (unused; it enters through ``T_water``).
    osmolality : float, optional
        Effective osmoles per kg of dry solids, [mol/kg]; default skim milk.

    Returns
    -------
    float or casadi expression
        Boiling-point rise, [K].

    Notes
    -----
    About 0.9 K at 45 % and 1.1 K at 50 % skim-milk solids where water boils
    at 60 °C, consistent with the rise being "under about 1-2 K up to about
    50 % solids" [memory, low confidence]. Real concentrates depart from the
    ideal law both ways (protein-bound water raises the rise; lactose
    crystallisation and calcium-phosphate precipitation lower it); treat the
    result as +-50 %. Declared range 0-55 % solids, water boiling at
    0-100 °C.

    References
    ----------
    Common practice / from memory: freezing point of milk; ideal
    colligative (ebullioscopic and cryoscopic) laws, e.g. Atkins, Physical
    Chemistry, section on colligative properties.

    Examples
    --------
    >>> round(dairy_colligative(0.50, 333.15, 19_946.0), 2)
    1.12
    """
    K_b = R_GAS * T_water * T_water / latent_heat(T_water)
    return K_b * osmolality * x / (1.0 - x)


#: Boiling-point rise correlations by the name used in flowsheet files.
BPR_MODELS = {
    "none": no_rise,
    "polynomial": polynomial,
    "duhring": duhring,
    "geankoplis_sodium_hydroxide": geankoplis_sodium_hydroxide,
    "geankoplis_sucrose": geankoplis_sucrose,
    "starzak_peacock_sucrose": starzak_peacock_sucrose,
    "crapiste_lozano": crapiste_lozano,
    "dairy_colligative": dairy_colligative,
}
