"""Liquor properties: boiling-point rise, heat capacity, enthalpy, user tables.

Expected values come from outside the project; the source is named beside
each assertion with its tag: [read] read in a copy of the source, [memory]
recalled, [computed] recomputed with a general-purpose reference library,
[common practice] a fact of the trade with no single source.
"""

import math
import warnings

import casadi as ca
import CoolProp.CoolProp as CP
import pytest
from scipy.integrate import quad
from scipy.optimize import brentq

from balance.errors import InputError, OutOfRangeError
from balance.properties.liquors import (BUILTIN_LIQUORS, SKIM_MILK_SOLIDS, Liquor,
                                        LiquorWarning, builtin_liquor, liquor_from_table)
from balance.properties.liquors import boiling_point_rise as bpr
from balance.properties.liquors import heat_capacity as cp
from balance.properties.validity import enforce
from balance.properties.water import (liquid_enthalpy, liquid_heat_capacity,
                                      saturation_pressure, saturation_temperature)

ATM = 101_325.0
T_ATM = saturation_temperature(ATM)


def f_to_k(t_f):
    return (t_f - 32.0) / 1.8 + 273.15


def c_to_k(t_c):
    return t_c + 273.15


def p_sat_coolprop(T):
    """IAPWS-IF97 saturation pressure from CoolProp's IF97 backend, [Pa]."""
    return CP.PropsSI("P", "T", T, "Q", 0, "IF97::Water")


def evaluate(expr, symbols, values):
    """Evaluate a CasADi expression at numbers."""
    return float(ca.Function("f", symbols, [expr])(*values))


# ---------------------------------------------------------------------------
# Boiling-point rise: sucrose


def test_starzak_peacock_matches_sugar_tables_at_one_atmosphere():
    # Starzak & Peacock, Zuckerindustrie 122 (1997) 380-387, water activity,
    # boiling where a_w p_s(T) = p: about 1.8 K at 50 % and 5 K at 70 %
    # sucrose at 1 atm [computed, iapws], in line with classical sugar tables
    # [memory]. The table values are quoted to 0.1 K; the tolerance covers
    # that rounding and the spread between tables.
    assert bpr.starzak_peacock_sucrose(0.50, T_ATM, ATM) == pytest.approx(1.8, abs=0.15)
    assert bpr.starzak_peacock_sucrose(0.70, T_ATM, ATM) == pytest.approx(5.0, abs=0.3)


def test_starzak_peacock_water_activity_of_saturated_sucrose():
    # Saturated sucrose (about 67.4 % at 25 °C) has a water activity of about
    # 0.85, a fixed point of water-activity practice [memory, common
    # practice]; +-0.01 is the spread of the quoted values.
    assert bpr.starzak_peacock_water_activity(0.674, 298.15) == pytest.approx(0.85, abs=0.01)


@pytest.mark.parametrize("p", [3_000.0, 20_000.0, ATM, 200_000.0])
@pytest.mark.parametrize("x", [0.0, 0.05, 0.3, 0.6, 0.75, 0.85])
def test_starzak_peacock_unrolled_newton_matches_brentq(x, p):
    # The explicit expression (three Newton steps in 1/T) against a
    # bracketing root finder on the implicit equation gamma_w x_w p_s(T) = p,
    # with p_s from CoolProp's IAPWS-IF97 backend, independent of ours.
    # Tolerance: 1e-8 K, far below any use; the residual of the unrolled
    # steps is about 1e-12 K.
    T_water = saturation_temperature(p)

    def residual(T):
        return bpr.starzak_peacock_water_activity(x, T) * p_sat_coolprop(T) - p

    T_boil = brentq(residual, T_water - 1e-6, T_water + 40.0, xtol=1e-12, rtol=1e-15)
    assert T_water + bpr.starzak_peacock_sucrose(x, T_water, p) == pytest.approx(
        T_boil, abs=1e-8)


def test_geankoplis_simple_sucrose_form():
    # Geankoplis, Transport Processes and Separation Process Principles,
    # 4th ed., ch. 8: BPR = 1.78 x + 6.22 x^2 [memory].
    assert bpr.geankoplis_sucrose(0.5, T_ATM, ATM) == pytest.approx(0.89 + 1.555, abs=1e-12)
    assert bpr.geankoplis_sucrose(0.0, T_ATM, ATM) == 0.0


def test_simple_sucrose_form_over_predicts_between_30_and_60_percent():
    # REFERENCES: the simple Geankoplis form over-predicts at 30-60 % [memory].
    # It is a pressure-independent quadratic; the water-activity model rises
    # more steeply at high concentration (x_s^2 term in ln gamma_w), so the
    # simple form is high at 30-60 % (by about 0.6 K at 50 %, 1 atm) and low
    # above about 65 %.
    for x in (0.3, 0.4, 0.5, 0.6):
        simple = bpr.geankoplis_sucrose(x, T_ATM, ATM)
        water_activity = bpr.starzak_peacock_sucrose(x, T_ATM, ATM)
        assert simple > water_activity + 0.3
    assert bpr.geankoplis_sucrose(0.5, T_ATM, ATM) - bpr.starzak_peacock_sucrose(
        0.5, T_ATM, ATM) == pytest.approx(0.6, abs=0.1)
    assert bpr.geankoplis_sucrose(0.7, T_ATM, ATM) < bpr.starzak_peacock_sucrose(
        0.7, T_ATM, ATM)


def test_starzak_peacock_rise_grows_with_pressure():
    # Clausius-Clapeyron: at fixed water activity the rise scales about as
    # T^2 / latent heat, so it grows with the boiling temperature
    # [common practice: BPR of sugar liquors is lower under vacuum].
    rises = [bpr.starzak_peacock_sucrose(0.6, saturation_temperature(p), p)
             for p in (10_000.0, 30_000.0, ATM)]
    assert rises[0] < rises[1] < rises[2]


# ---------------------------------------------------------------------------
# Boiling-point rise: sodium hydroxide, Dühring lines


def test_naoh_duhring_point_read_off_geankoplis():
    # Geankoplis, 4th ed., Fig. 8.4-2: 30 % NaOH boils at 79.5 °C where water
    # boils at 65.6 °C [read]. Tolerance 0.5 K: chart reading (about 1 °F).
    T_water = c_to_k(65.6)
    T_boil = T_water + bpr.geankoplis_sodium_hydroxide(0.30, T_water, saturation_pressure(
        T_water))
    assert T_boil == pytest.approx(c_to_k(79.5), abs=0.5)


def test_naoh_duhring_50_percent_points():
    # Geankoplis, 4th ed., Fig. 8.4-2: 50 % NaOH at 89.5 °C where water boils
    # at 48.9 °C [memory]; McCabe, Smith & Harriott, Unit Operations of
    # Chemical Engineering (5th ed. and later), ch. 16, Dühring chart for NaOH
    # and the worked single-effect example: 50 % NaOH boils at 197 °F where
    # water boils at 124 °F (100 mm Hg) [memory]. Tolerance 1 K: recalled
    # chart readings. (The built-in 50 % line was drawn through the first
    # point, so the second is the independent one.)
    for t_water, t_boil in ((c_to_k(48.9), c_to_k(89.5)), (f_to_k(124.0), f_to_k(197.0))):
        rise = bpr.geankoplis_sodium_hydroxide(0.50, t_water, saturation_pressure(t_water))
        assert t_water + rise == pytest.approx(t_boil, abs=1.0)


def test_naoh_duhring_family_is_ordered():
    # Dühring charts for NaOH (Geankoplis Fig. 8.4-2; McCabe, Smith &
    # Harriott, Fig. 16.3) [memory]: the rise grows with concentration at
    # every water temperature, and each solution line is steeper than
    # water's (the rise grows with temperature).
    for t_c in (0.0, 30.0, 60.0, 100.0, 120.0):
        T = c_to_k(t_c)
        rises = [bpr.geankoplis_sodium_hydroxide(x / 100, T, 0.0) for x in range(0, 51, 2)]
        assert rises[0] == 0.0
        assert all(b > a for a, b in zip(rises, rises[1:]))
    for x in (0.1, 0.25, 0.3, 0.5):
        assert (bpr.geankoplis_sodium_hydroxide(x, c_to_k(100.0), 0.0)
                > bpr.geankoplis_sodium_hydroxide(x, c_to_k(20.0), 0.0))


def test_duhring_interpolation_is_linear_between_lines_and_smooth():
    # Construction check of the interpolation (no published value): at a
    # tabulated line it reproduces the line within the corner rounding
    # (below 0.01 K), halfway it is the mean of the neighbours, and the
    # derivative in x is continuous across a line.
    lines = [(0.0, 0.0, 1.0), (0.2, 2.0, 1.01), (0.4, 3.0, 1.05)]
    T = 350.0
    at_line = bpr.duhring(0.2, T, 0.0, lines=lines)
    assert at_line == pytest.approx(2.0 + 0.01 * T, abs=0.01)
    halfway = bpr.duhring(0.3, T, 0.0, lines=lines)
    assert halfway == pytest.approx(0.5 * (2.0 + 0.01 * T + 3.0 + 0.05 * T), abs=1e-6)
    x = ca.SX.sym("x")
    slope = ca.Function("s", [x], [ca.jacobian(bpr.duhring(x, T, 0.0, lines=lines), x)])
    left, right = float(slope(0.2 - 0.02)), float(slope(0.2 + 0.02))
    assert left == pytest.approx((2.0 + 0.01 * T) / 0.2, rel=1e-4)
    assert right == pytest.approx((1.0 + 0.04 * T) / 0.2, rel=1e-4)
    assert float(slope(0.2)) == pytest.approx(0.5 * (left + right), rel=1e-6)


def test_duhring_line_through_two_points_in_celsius_and_kelvin():
    # The chart line of 30 % NaOH in °C (Geankoplis Fig. 8.4-2 [read] point)
    # converts to kelvin with a = a_C + (1 - b) 273.15.
    a, b = bpr.duhring_line_through((c_to_k(65.6), c_to_k(79.5)), (c_to_k(100.0), c_to_k(117.0)))
    b_c = (117.0 - 79.5) / (100.0 - 65.6)
    a_c = 79.5 - b_c * 65.6
    assert b == pytest.approx(b_c, rel=1e-12)
    assert a == pytest.approx(a_c + (1.0 - b_c) * 273.15, rel=1e-9)


def test_duhring_rejects_unsorted_lines():
    with pytest.raises(InputError, match=r"key 'lines'.*strictly increasing x"):
        bpr.duhring(0.1, 350.0, 0.0, lines=[(0.0, 0.0, 1.0), (0.0, 1.0, 1.0)])
    with pytest.raises(InputError, match=r"three numbers \[x, a, b\]"):
        bpr.duhring(0.1, 350.0, 0.0, lines=[(0.0, 0.0)])


# ---------------------------------------------------------------------------
# Boiling-point rise: other forms


def test_crapiste_lozano_pressure_unit_and_percent_conversions():
    # Crapiste & Lozano, J. Food Sci. 53 (1988): dT = alpha w^beta exp(gamma w)
    # P^delta [form, memory]. The docstring's conversions must leave the rise
    # unchanged: P in kPa (p_unit=1000) against P in Pa with
    # alpha_Pa = alpha_kPa 1000^-delta; w in percent against a fraction.
    alpha, beta, gamma, delta = 0.2, 1.1, 2.5, 0.15
    x, p = 0.45, 25_000.0
    kpa = bpr.crapiste_lozano(x, 0.0, p, alpha, beta, gamma, delta, p_unit=1000.0)
    pa = bpr.crapiste_lozano(x, 0.0, p, alpha * 1000.0 ** -delta, beta, gamma, delta)
    assert pa == pytest.approx(kpa, rel=1e-12)
    alpha_pct, gamma_pct = alpha / 100.0 ** beta, gamma / 100.0
    by_percent = alpha_pct * (100 * x) ** beta * math.exp(gamma_pct * 100 * x) * (p / 1e3) ** delta
    assert kpa == pytest.approx(by_percent, rel=1e-12)


def test_dairy_rise_from_milk_freezing_point():
    # Milk freezes at about -0.525 °C [common practice]; the ideal
    # ebullioscopic/cryoscopic ratio K_b/K_f = 0.512/1.86 for water
    # (physical-chemistry texts, e.g. Atkins, Physical Chemistry [memory])
    # puts the rise of skim milk (9 % solids) at 1 atm near 0.145 K.
    # Tolerance 2 %: rounding of the constants.
    assert bpr.dairy_colligative(0.09, c_to_k(100.0), ATM) == pytest.approx(
        0.525 * 0.512 / 1.86, rel=0.02)


def test_dairy_rise_at_concentrate_solids_is_small():
    # Dairy concentrates: BPR under about 1-2 K up to about 50 % solids
    # [memory, low confidence]; check 45-50 % solids where water boils at
    # 45-70 °C, the range of milk evaporators [common practice].
    for x in (0.45, 0.50):
        for t_c in (45.0, 70.0):
            rise = bpr.dairy_colligative(x, c_to_k(t_c), 0.0)
            assert 0.5 < rise < 2.0
    whole = bpr.dairy_colligative(0.5, c_to_k(60.0), 0.0, osmolality=bpr.WHOLE_MILK_OSMOLALITY)
    assert whole < bpr.dairy_colligative(0.5, c_to_k(60.0), 0.0)   # fat is not a solute


def test_polynomial_bpr_reproduces_its_coefficients():
    # The user polynomial with the Geankoplis sucrose coefficients [memory]
    # is the Geankoplis form.
    for x in (0.0, 0.2, 0.65):
        assert bpr.polynomial(x, T_ATM, ATM, coefficients=[0.0, 1.78, 6.22]) == pytest.approx(
            bpr.geankoplis_sucrose(x, T_ATM, ATM), rel=1e-14, abs=1e-15)
    with pytest.raises(InputError, match="at least one coefficient"):
        bpr.polynomial(0.2, T_ATM, ATM, coefficients=[])


# ---------------------------------------------------------------------------
# Heat capacity


def test_geankoplis_sugar_heat_capacity():
    # Geankoplis, 4th ed., ch. 8: c_p = 4.19 - 2.35 x kJ/(kg K) [read].
    assert cp.geankoplis_sugar(0.0, 300.0) == pytest.approx(4190.0, abs=1e-9)
    assert cp.geankoplis_sugar(0.6, 300.0) == pytest.approx(1000.0 * (4.19 - 2.35 * 0.6),
                                                            abs=1e-9)


def test_geankoplis_sugar_at_zero_solids_is_near_water():
    # At x = 0 the sugar form should give water: within 1 % of the water c_p
    # of CoolProp (IAPWS-95) from 5 to 100 °C [computed].
    for t_c in (5.0, 25.0, 60.0, 100.0):
        water = CP.PropsSI("C", "T", c_to_k(t_c), "Q", 0, "Water")
        assert cp.geankoplis_sugar(0.0, c_to_k(t_c)) == pytest.approx(water, rel=0.01)


def test_choi_okos_skim_milk_against_measured():
    # Geankoplis, 4th ed., App. A.4: skim milk (about 91 % water) measured
    # c_p 3.98-4.02 kJ/(kg K) [read]. Choi-Okos gives about 3.95-3.98
    # [computed]: the additive model ignores water-solids interaction and
    # runs about 1 % low. Tolerance 2 %.
    value = cp.choi_okos(0.09, c_to_k(20.0), composition=dict(SKIM_MILK_SOLIDS))
    assert value == pytest.approx(4000.0, rel=0.02)
    assert 3940.0 < value < 3990.0


def test_choi_okos_water_fit_against_iapws():
    # The Choi-Okos water fit against CoolProp's water (IAPWS-95) [computed]:
    # within 0.5 % from 10 to 150 °C and within 1 % near 0 °C, where water's
    # c_p rises steeply and the quadratic fit cannot follow. That water
    # mismatch does not reach the liquor enthalpy (see Liquor).
    for t_c, tol in ((0.5, 0.01), (10.0, 0.005), (35.0, 0.005), (80.0, 0.005),
                     (100.0, 0.005), (150.0, 0.005)):
        water = CP.PropsSI("C", "T", c_to_k(t_c), "Q", 0, "Water")
        assert cp.choi_okos(0.0, c_to_k(t_c), composition={"protein": 1.0}) == pytest.approx(
            water, rel=tol)


def test_siebel_runs_low_for_milk():
    # Siebel (1892), c_p = 0.837 + 3.349 x_w kJ/(kg K) [memory]: water limit
    # 4.186 kJ/(kg K), the c_p of water near 4.19 [common practice]; for
    # skim milk it is about 3 % below the measured 3.98-4.02 kJ/(kg K)
    # (Geankoplis App. A.4 [read]) because it gives all solids 0.837.
    assert cp.siebel(0.0, 300.0) == pytest.approx(4190.0, rel=0.002)
    assert cp.siebel(0.09, 300.0) == pytest.approx(4000.0, rel=0.04)
    assert cp.siebel(0.09, 300.0) < 3980.0


def test_choi_okos_composition_errors():
    with pytest.raises(InputError, match=r"key 'composition'.*unknown solids component 'sugar'"):
        cp.choi_okos(0.1, 300.0, composition={"sugar": 1.0})
    with pytest.raises(InputError, match=r"must sum to 1, got 0\.9"):
        cp.choi_okos(0.1, 300.0, composition={"carbohydrate": 0.5, "protein": 0.4})


# ---------------------------------------------------------------------------
# Liquor: enthalpy datum and consistency

TEMPERATURES = [273.16, 300.0, 330.0, 373.15, 390.0]


@pytest.mark.parametrize("name", sorted(BUILTIN_LIQUORS))
def test_zero_solids_reproduces_if97_water_enthalpy(name):
    # x = 0 gives IAPWS-IF97 liquid water exactly (same floating-point
    # result), and that agrees with CoolProp's IF97 backend (IAPWS R7-97) to
    # 1e-9 relative [computed].
    liquor = BUILTIN_LIQUORS[name]
    for T in TEMPERATURES:
        assert liquor.enthalpy(0.0, T) == liquid_enthalpy(T)
        assert liquor.enthalpy(0.0, T) == pytest.approx(
            CP.PropsSI("H", "T", T, "Q", 0, "IF97::Water"), rel=1e-9, abs=1e-6)


@pytest.mark.parametrize("name", sorted(BUILTIN_LIQUORS))
def test_enthalpy_slope_is_heat_capacity(name):
    # dh/dT (CasADi derivative) = dh_f/dT + c_p(x, T) - c_p(0, T) to
    # rounding; this is the model's c_p(x, T) up to its water mismatch
    # (c_p(0, T) against IF97, under 1 %, plus the saturation-line term of
    # dh_f/dT, under 0.1 %; see balance.properties.water.liquid_heat_capacity).
    liquor = BUILTIN_LIQUORS[name]
    x, T = ca.SX.sym("x"), ca.SX.sym("T")
    slope = ca.Function("s", [x, T], [ca.jacobian(liquor.enthalpy(x, T), T)])
    water_slope = ca.Function("w", [T], [ca.jacobian(liquid_enthalpy(T), T)])
    x_high = 0.0 if name == "water" else 0.4
    for xv in (0.0, 0.5 * x_high, x_high):
        for Tv in (280.0, 330.0, 370.0):
            expected = (float(water_slope(Tv)) + liquor.heat_capacity(xv, Tv)
                        - liquor.heat_capacity(0.0, Tv))
            assert float(slope(xv, Tv)) == pytest.approx(expected, rel=1e-9)
            assert float(slope(xv, Tv)) == pytest.approx(liquor.heat_capacity(xv, Tv), rel=0.01)


def test_water_liquor_slope_is_if97_heat_capacity():
    # For water, dh_f/dT along saturation and the isobaric c_p (IAPWS-IF97)
    # differ by v (1 - alpha T) dp_s/dT, under 0.1 % below 150 °C
    # (IAPWS R7-97 region 1 [computed]).
    water = builtin_liquor("water")
    T = ca.SX.sym("T")
    slope = ca.Function("s", [T], [ca.jacobian(water.enthalpy(0.0, T), T)])
    for Tv in (280.0, 330.0, 370.0):
        assert float(slope(Tv)) == pytest.approx(liquid_heat_capacity(Tv), rel=1e-3)


def test_gauss_legendre_enthalpy_matches_adaptive_quadrature():
    # The three-point rule is exact for c_p quadratic in T (Choi-Okos); check
    # against scipy's adaptive quadrature of the same integrand [computed].
    milk = builtin_liquor("skim_milk")
    x, T = 0.45, 345.0
    excess, _ = quad(lambda t: milk.heat_capacity(x, t) - milk.heat_capacity(0.0, t),
                     273.16, T, epsabs=1e-10, epsrel=1e-13)
    assert milk.enthalpy(x, T) - liquid_enthalpy(T) == pytest.approx(excess, rel=1e-10)


def test_sucrose_enthalpy_against_textbook_sensible_heat():
    # Geankoplis c_p (4.19 - 2.35 x kJ/(kg K) [read]) is constant, so heating
    # 50 % syrup from 20 to 80 °C takes c_p 60 K = 180.9 kJ/kg, up to the
    # IF97 water's departure from 4.19 (about 0.3 %, [computed]).
    syrup = builtin_liquor("sucrose")
    dh = syrup.enthalpy(0.5, c_to_k(80.0)) - syrup.enthalpy(0.5, c_to_k(20.0))
    assert dh == pytest.approx(3015.0 * 60.0, rel=0.004)


def test_boiling_temperature_is_saturation_plus_rise():
    # IAPWS-IF97 T_s(1 atm) = 373.124 K (IAPWS R7-97 eq. 31 [computed]) plus
    # the rise.
    syrup = builtin_liquor("sucrose_simple")
    assert syrup.boiling_temperature(0.5, ATM) == pytest.approx(373.1243 + 2.445, abs=1e-4)


# ---------------------------------------------------------------------------
# Liquor: symbolic use


@pytest.mark.parametrize("name", sorted(BUILTIN_LIQUORS))
@pytest.mark.parametrize("kind", [ca.SX, ca.MX])
def test_symbolic_and_numeric_evaluation_agree(name, kind):
    # One definition serves the symbolic equations and plain numbers: the
    # compiled CasADi function equals the float evaluation to rounding.
    liquor = BUILTIN_LIQUORS[name]
    x, T, p = kind.sym("x"), kind.sym("T"), kind.sym("p")
    outputs = [liquor.boiling_temperature(x, p), liquor.heat_capacity(x, T),
               liquor.enthalpy(x, T)]
    f = ca.Function("f", [x, T, p], outputs)
    xv = 0.0 if name == "water" else 0.35
    for Tv, pv in ((330.0, 20_000.0), (365.0, ATM)):
        numeric = [liquor.boiling_temperature(xv, pv), liquor.heat_capacity(xv, Tv),
                   liquor.enthalpy(xv, Tv)]
        symbolic = [float(v) for v in f(xv, Tv, pv)]
        assert symbolic == pytest.approx(numeric, rel=1e-12)
    jac = ca.Function("j", [x, T, p], [ca.jacobian(ca.vertcat(*outputs), ca.vertcat(x, T, p))])
    assert all(math.isfinite(v) for v in ca.DM(jac(xv, 340.0, 30_000.0)).full().ravel())


# ---------------------------------------------------------------------------
# Liquor: validity, sources, cautions


def test_range_checks_flag_values_outside_declared_ranges():
    syrup = builtin_liquor("sucrose")
    x, T, p = ca.SX.sym("x"), ca.SX.sym("T"), ca.SX.sym("p")
    checks = syrup.range_checks(x, T, p, label="E2 liquor", unit="E2")
    names = {(c.source, c.valid.name) for c in checks}
    assert ("starzak_peacock_sucrose", "x") in names
    assert ("starzak_peacock_sucrose", "T_water") in names
    assert ("geankoplis_sugar", "T") in names
    f = ca.Function("f", [x, T, p], [c.value for c in checks])
    inside = [float(v) for v in f(0.6, 350.0, 40_000.0)]
    assert enforce(checks, inside) == []
    outside = [float(v) for v in f(0.9, 350.0, 40_000.0)]
    messages = enforce(checks, outside)
    assert any("E2 liquor boiling-point rise: x = 0.9" in m and "starzak_peacock_sucrose" in m
               for m in messages)
    with pytest.raises(OutOfRangeError, match=r"unit 'E2'.*x = 0.9 - is outside"):
        enforce(checks, outside, policy="refuse")


def test_range_checks_without_pressure_skip_boiling_point_rise():
    checks = builtin_liquor("skim_milk").range_checks(0.3, 330.0, label="preheater")
    assert checks and all(c.source == "choi_okos" for c in checks)


def test_solids_range_of_a_user_liquor_is_checked():
    liquor = liquor_from_table("syrup", {"base": "sucrose_simple", "solids_range": [0.1, 0.6]})
    checks = liquor.range_checks(0.65, 330.0, ATM, label="E1 liquor")
    messages = enforce(checks, [float(c.value) for c in checks])
    assert any("E1 liquor solids" in m and "liquor 'syrup'" in m for m in messages)


def test_sources_and_heat_of_dilution_flag():
    syrup = builtin_liquor("sucrose")
    assert any("Starzak" in s for s in syrup.sources)
    assert any("Geankoplis" in s for s in syrup.sources)
    assert "heat of dilution neglected" in syrup.sources
    assert Liquor.heat_of_dilution_included is False
    milk = builtin_liquor("skim_milk")
    assert any("from memory" in s for s in milk.sources)


def test_sodium_hydroxide_warns_that_heat_of_dilution_is_missing():
    # Geankoplis, 4th ed., section 8.4: the heat of solution of NaOH is large
    # and its evaporators are balanced with an enthalpy-concentration chart
    # [memory; common practice].
    with pytest.warns(LiquorWarning, match="heat of dilution is large and is NOT modelled"):
        caustic = builtin_liquor("sodium_hydroxide")
    assert caustic.cautions
    assert caustic.heat_of_dilution_included is False


def test_unknown_builtin_liquor_lists_valid_names():
    with pytest.raises(InputError, match=r"unknown liquor 'molasses'; valid: water, sucrose, "):
        builtin_liquor("molasses")


# ---------------------------------------------------------------------------
# User liquors from flowsheet tables


def test_liquor_from_table_with_base_and_with_models():
    based = liquor_from_table("syrup", {"base": "sucrose"})
    assert based.name == "syrup" and based.bpr_model is bpr.starzak_peacock_sucrose
    user = liquor_from_table("syrup", {
        "boiling_point_rise": {"model": "polynomial", "coefficients": [0, 1.78, 6.22]},
        "heat_capacity": {"model": "polynomial", "coefficients": [4190, -2350]},
        "solids_range": [0, 0.7]})
    simple = builtin_liquor("sucrose_simple")
    for x in (0.1, 0.5):
        assert user.boiling_temperature(x, ATM) == pytest.approx(
            simple.boiling_temperature(x, ATM), rel=1e-14)
        assert user.enthalpy(x, 350.0) == pytest.approx(simple.enthalpy(x, 350.0), rel=1e-14)
    assert user.solids_range == (0.0, 0.7)


def test_liquor_from_table_duhring_and_composition():
    caustic_lines = [list(line) for line in bpr.GEANKOPLIS_NAOH_LINES]
    with warnings.catch_warnings():
        warnings.simplefilter("error")   # a user Dühring table carries no caution
        liquor = liquor_from_table("lye", {
            "boiling_point_rise": {"model": "duhring", "lines": caustic_lines},
            "heat_capacity": {"model": "choi_okos",
                              "composition": {"carbohydrate": 0.7, "protein": 0.3}}})
    T_water = c_to_k(65.6)
    # Geankoplis Fig. 8.4-2, 30 % NaOH at 79.5 °C [read], as in the built-in.
    assert T_water + liquor.boiling_point_rise(0.3, T_water, 0.0) == pytest.approx(
        c_to_k(79.5), abs=0.5)


ERROR_CASES = [
    ({"base": "sucrose", "colour": "amber"}, "colour",
     r"unknown key 'colour'; valid: base, description, boiling_point_rise"),
    ({"heat_capacity": "siebel"}, "boiling_point_rise",
     r"missing key 'boiling_point_rise' \(or give 'base'"),
    ({"base": "syrup"}, "base", r"unknown base liquor 'syrup'; valid: water, sucrose"),
    ({"base": "water", "boiling_point_rise": {"model": "raoult"}}, "boiling_point_rise.model",
     r"unknown model 'raoult'; valid: none, polynomial, duhring"),
    ({"base": "water", "heat_capacity": {"coefficients": [4190]}}, "heat_capacity.model",
     r"missing key 'model'"),
    ({"base": "water", "heat_capacity": {"model": "polynomial"}},
     "heat_capacity.coefficients", r"missing key 'coefficients'"),
    ({"base": "water", "heat_capacity": {"model": "polynomial", "coefficients": "4190"}},
     "heat_capacity.coefficients", r"must be a list of numbers, got '4190'"),
    ({"base": "water", "heat_capacity": {"model": "siebel", "coefficients": [1.0]}},
     "heat_capacity.coefficients", r"unknown key 'coefficients' for model 'siebel'; valid: none"),
    ({"base": "water", "boiling_point_rise": {"model": "crapiste_lozano", "alpha": 1.0,
                                              "beta": 1.0, "gamma": 0.0, "delta": True}},
     "boiling_point_rise.delta", r"must be a number, got True"),
    ({"base": "water", "heat_capacity": {"model": "choi_okos",
                                         "composition": {"lactose": 1.0}}},
     "heat_capacity.composition", r"unknown solids component 'lactose'"),
    ({"base": "water", "boiling_point_rise": {"model": "duhring",
                                              "lines": [[0.2, 0, 1], [0.1, 0, 1]]}},
     "boiling_point_rise.lines", r"strictly increasing x"),
    ({"base": "water", "boiling_point_rise": {
        "model": "crapiste_lozano", "alpha": 1.0, "beta": 1.0, "gamma": 0.0, "delta": 0.5,
        "p_unit": -1000.0}},
     "boiling_point_rise", r"cannot be evaluated|non-finite"),
    ({"base": "sucrose", "solids_range": [0.7, 0.2]}, "solids_range",
     r"must be \[low, high\] with 0 <= low <= high <= 1"),
    ({"base": "sucrose", "description": 3}, "description", r"must be a string"),
]


@pytest.mark.parametrize("table, key, message", ERROR_CASES)
def test_liquor_from_table_errors_name_file_unit_and_key(table, key, message):
    with pytest.raises(InputError) as info:
        liquor_from_table("syrup", table, file="plant.toml")
    err = info.value
    assert (err.file, err.unit, err.key) == ("plant.toml", "liquors.syrup", key)
    assert str(err).startswith(f"plant.toml: unit 'liquors.syrup': key '{key}': ")
    with pytest.raises(InputError, match=message):
        liquor_from_table("syrup", table, file="plant.toml")


def test_liquor_from_table_rejects_a_non_table():
    with pytest.raises(InputError, match=r"unit 'liquors.syrup': a liquor must be a table"):
        liquor_from_table("syrup", ["sucrose"])
