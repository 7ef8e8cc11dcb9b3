"""Tests of balance.properties.humid_air (moist air, ideal-gas mixing).

Sources outside the project:

* ASHRAE Handbook—Fundamentals (2017), SI edition, ch. 1: Table 1 (standard
  atmosphere), Table 2 (moist air at saturation, 101.325 kPa), Table 3
  (saturation pressure of water), Example 1 (40 °C dry bulb, 20 °C
  thermodynamic wet bulb);
* psychrolib 2.5 (SI), an implementation of the same chapter with ASHRAE's
  own saturation-pressure formula (Eqs. 5 and 6, "within 300 ppm"), valid
  to 200 °C;
* CoolProp's HAPropsSI, a real-gas moist-air model (Herrmann, Kretzschmar &
  Gatley 2009, the basis of the 2017 ASHRAE tables), used above 200 °C;
* CoolProp's IAPWS-95 water ('Water'), for the ideal-gas vapour enthalpy;
* Murphy & Koop, Q. J. R. Meteorol. Soc. 131 (2005) 1539, eq. 10, for the
  vapour pressure of supercooled water (formula from memory; it reproduces
  611.657 Pa at the triple point to 1e-7 and ASHRAE's 3169.7 Pa at 25 °C
  to 1e-4).

Expected, explained differences: our formulas are ideal-gas (no enhancement
factor, no compressibility), our p_ws is IAPWS-IF97 (not ASHRAE's fit), our
water datum is IAPWS (not liquid at 0 °C), our c_p of dry air is constant,
and below 0 °C we saturate over supercooled water, not ice.
"""

import math

import casadi as ca
import numpy as np
import psychrolib
import pytest
from CoolProp.HumidAirProp import HAPropsSI
from CoolProp.CoolProp import PropsSI
from scipy.optimize import brentq

from balance.errors import InputError, OutOfRangeError
from balance.properties import humid_air as ha
from balance.properties import water
from balance.properties.validity import check_call

psychrolib.SetUnitSystem(psychrolib.SI)

K = 273.15            # °C -> K
P_ATM = 101325.0      # [Pa]


def celsius(t):
    return t + K


# ---------------------------------------------------------------------------
# Standard atmosphere


@pytest.mark.parametrize("z, p", [
    (0.0, 101325.0),      # ASHRAE Fundamentals 2017, ch. 1, Table 1
    (500.0, 95461.0),     # ASHRAE Fundamentals 2017, ch. 1, Table 1
    (1000.0, 89875.0),    # ASHRAE Fundamentals 2017, ch. 1, Table 1
    (-500.0, 107478.0),   # ASHRAE 2017 ch. 1 Table 1, as transcribed in psychrolib's tests
    (4000.0, 61640.0),    # ASHRAE 2017 ch. 1 Table 1, as transcribed in psychrolib's tests
])
def test_pressure_at_altitude_table1(z, p):
    # Table 1 is printed to 1 Pa from the same Eq. 3.
    assert ha.pressure_at_altitude(z) == pytest.approx(p, abs=1.0)


# ---------------------------------------------------------------------------
# Humidity ratio and vapour pressure


def test_epsilon_is_ashrae_constant():
    # ASHRAE Fundamentals 2017 ch. 1 Eq. 20 prints 0.621945 (six digits).
    assert ha.EPSILON == pytest.approx(0.621945, abs=5e-7)


@pytest.mark.parametrize("p_w", [10.0, 1000.0, 3169.7, 20e3, 47e3])
@pytest.mark.parametrize("p", [50e3, 95461.0, 110e3])
def test_humidity_ratio_from_vapour_pressure_vs_psychrolib(p_w, p):
    # psychrolib 2.5 GetHumRatioFromVapPres, ASHRAE 2017 ch. 1 Eq. 20; same
    # formula, ASHRAE rounds epsilon to 0.621945 (5e-7 relative).
    W = ha.humidity_ratio_from_vapour_pressure(p_w, p)
    assert W == pytest.approx(psychrolib.GetHumRatioFromVapPres(p_w, p), rel=1e-6)
    # and back (Eq. 20 solved for p_w)
    assert ha.vapour_pressure_from_humidity_ratio(W, p) == pytest.approx(p_w, rel=1e-12)


def test_vapour_pressure_input_errors():
    with pytest.raises(InputError, match="key 'p_w'.*must lie in"):
        ha.humidity_ratio_from_vapour_pressure(101325.0, 101325.0)
    with pytest.raises(InputError, match="key 'W'.*negative"):
        ha.vapour_pressure_from_humidity_ratio(-0.01, 101325.0)


# ---------------------------------------------------------------------------
# Saturation


@pytest.mark.parametrize("t, p_ws", [
    (5.0, 872.6),        # ASHRAE Fundamentals 2017, ch. 1, Table 3
    (25.0, 3169.7),      # ASHRAE Fundamentals 2017, ch. 1, Table 3
    (50.0, 12351.3),     # ASHRAE Fundamentals 2017, ch. 1, Table 3
    (100.0, 101418.0),   # ASHRAE Fundamentals 2017, ch. 1, Table 3
    (150.0, 476101.4),   # ASHRAE Fundamentals 2017, ch. 1, Table 3
])
def test_saturation_pressure_ashrae_table3(t, p_ws):
    # The psychrometrics use water.saturation_pressure (IF97 eq. 30); Table 3
    # is IAPWS-95. IF97 reproduces IAPWS-95 saturation pressures to about
    # 2.5e-4 relative (IAPWS R7-97(2012)), and Table 3 is printed to 5 digits.
    assert water.saturation_pressure(celsius(t)) == pytest.approx(p_ws, rel=2.5e-4)


def test_saturation_pressure_vs_psychrolib():
    # psychrolib uses ASHRAE 2017 ch. 1 Eq. 6, which ASHRAE says is within
    # 300 ppm of the true (IAPWS-95) values; measured max 2.6e-4 vs IF97.
    t = np.linspace(0.02, 200.0, 200)
    ours = np.array([water.saturation_pressure(celsius(x)) for x in t])
    theirs = np.array([psychrolib.GetSatVapPres(x) for x in t])
    assert np.max(np.abs(ours / theirs - 1.0)) < 3e-4


@pytest.mark.parametrize("t, W_s", [
    (5.0, 0.005425),     # ASHRAE Fundamentals 2017, ch. 1, Table 2
    (25.0, 0.020173),    # ASHRAE Fundamentals 2017, ch. 1, Table 2
    (50.0, 0.086863),    # ASHRAE Fundamentals 2017, ch. 1, Table 2
    (85.0, 0.838105),    # ASHRAE Fundamentals 2017, ch. 1, Table 2
])
def test_saturation_humidity_ratio_ashrae_table2(t, W_s):
    # Table 2 is real-gas: W_s = eps f p_ws/(p - f p_ws) with an enhancement
    # factor f of about 1.004-1.006 at 1 atm (Hyland & Wexler 1983, from
    # memory). Our ideal-gas W_s (f = 1) must therefore run low, by 0.4 % at
    # 25 °C up to 1.2 % at 85 °C (the growing p/(p - p_ws) amplifies f - 1).
    # Measured: -0.41, -0.44, -0.60, -1.18 %.
    T = celsius(t)
    ours = ha.saturation_humidity_ratio(T, P_ATM)
    assert -0.013 < ours / W_s - 1.0 < -0.003
    # The table value, read back through Eq. 20 with our p_ws, implies f:
    f = W_s * P_ATM / (water.saturation_pressure(T) * (ha.EPSILON + W_s))
    assert 1.003 < f < 1.006


def test_saturation_below_freezing_is_over_supercooled_water():
    T = celsius(-20.0)
    # Murphy & Koop (2005) eq. 10 for supercooled water (from memory). IF97
    # eq. 30 extrapolated below 273.15 K agrees to 4e-4 (measured).
    ln_p = (54.842763 - 6763.22 / T - 4.210 * math.log(T) + 0.000367 * T
            + math.tanh(0.0415 * (T - 218.8))
            * (53.878 - 1331.22 / T - 9.44523 * math.log(T) + 0.014025 * T))
    assert water.saturation_pressure(T) == pytest.approx(math.exp(ln_p), rel=1e-3)
    # ASHRAE Table 2 (-20 °C: W_s 0.0006373) and Table 3 (103.24 Pa) are over
    # ice. Our W_s is over water: larger by the ratio of the two vapour
    # pressures, apart from the enhancement factor (0.4-0.6 %).
    ratio = ha.saturation_humidity_ratio(T, P_ATM) / 0.0006373   # ASHRAE 2017 ch. 1 Table 2
    assert ratio == pytest.approx(water.saturation_pressure(T) / 103.24, rel=0.006)  # Table 3


# ---------------------------------------------------------------------------
# Relative humidity


@pytest.mark.parametrize("p", [50e3, P_ATM, 110e3])
def test_relative_humidity_vs_psychrolib(p):
    # psychrolib GetHumRatioFromRelHum / GetRelHumFromHumRatio (ASHRAE 2017
    # ch. 1 Eqs. 20, 22) with ASHRAE's p_ws: the p_ws difference (<3e-4) is
    # amplified by p/(p - p_w) in W.
    worst = 0.0
    for t in np.linspace(1.0, 200.0, 34):
        T = celsius(t)
        p_ws = water.saturation_pressure(T)
        for rh in (0.05, 0.3, 0.7, 1.0):
            if rh * p_ws >= 0.97 * p:
                continue
            W = ha.humidity_ratio_from_relative_humidity(T, rh, p)
            W_ref = psychrolib.GetHumRatioFromRelHum(t, rh, p)
            tol = 3e-4 * p / (p - rh * p_ws)
            assert W == pytest.approx(W_ref, rel=tol), (t, rh, p)
            worst = max(worst, abs(W / W_ref - 1.0))
            assert ha.relative_humidity(T, W, p) == pytest.approx(rh, rel=1e-12)
            assert psychrolib.GetRelHumFromHumRatio(t, W, p) == pytest.approx(rh, rel=3e-4)
    assert worst > 0.0    # the comparison did run


def test_relative_humidity_input_errors():
    with pytest.raises(InputError, match="key 'rh'.*outside \\[0, 1\\]"):
        ha.humidity_ratio_from_relative_humidity(300.0, 1.2, P_ATM)


# ---------------------------------------------------------------------------
# Above the boiling point


def test_saturation_humidity_ratio_above_boiling_raises():
    # Water boils at 99.97 °C at 101.325 kPa (IAPWS-IF97 eq. 31) and at
    # 81.3 °C at 50 kPa: no saturation exists above.
    with pytest.raises(OutOfRangeError, match="key 'T'.*boiling point.*infinite"):
        ha.saturation_humidity_ratio(celsius(120.0), P_ATM)
    with pytest.raises(OutOfRangeError, match="boiling point"):
        ha.saturation_humidity_ratio(celsius(90.0), 50e3)
    # just below the boiling point it is finite and large (W_s -> inf)
    T_b = water.saturation_temperature(P_ATM)
    assert ha.saturation_humidity_ratio(T_b - 0.5, P_ATM) > 30.0


def test_saturation_humidity_ratio_above_boiling_symbolic_is_inf():
    T, p = ca.SX.sym("T"), ca.SX.sym("p")
    f = ca.Function("W_s", [T, p], [ha.saturation_humidity_ratio(T, p)])
    assert float(f(celsius(120.0), P_ATM)) == math.inf
    assert float(f(celsius(25.0), P_ATM)) == pytest.approx(
        ha.saturation_humidity_ratio(celsius(25.0), P_ATM), rel=1e-14)


def test_relative_humidity_above_boiling():
    T, p = celsius(200.0), P_ATM
    p_ws = water.saturation_pressure(T)          # 1.55 MPa
    # still defined as p_w/p_ws, and never above p/p_ws < 1
    W = 0.5
    rh = ha.relative_humidity(T, W, p)
    assert rh == pytest.approx(ha.vapour_pressure_from_humidity_ratio(W, p) / p_ws, rel=1e-14)
    assert rh < p / p_ws < 1.0
    # humidity ratio from rh: fine below p/p_ws, impossible above
    assert ha.humidity_ratio_from_relative_humidity(T, 0.05, p) == pytest.approx(
        ha.EPSILON * 0.05 * p_ws / (p - 0.05 * p_ws), rel=1e-14)
    with pytest.raises(OutOfRangeError, match="key 'rh'.*below p/p_ws"):
        ha.humidity_ratio_from_relative_humidity(T, 0.5, p)


# ---------------------------------------------------------------------------
# Enthalpy


@pytest.mark.parametrize("t", [-30.0, 0.0, 25.0, 100.0, 200.0])
@pytest.mark.parametrize("W", [0.0, 0.01, 0.3])
def test_enthalpy_ashrae_vs_psychrolib(t, W):
    # psychrolib GetMoistAirEnthalpy is ASHRAE 2017 ch. 1 Eq. 30; it floors W
    # at 1e-7 (0.25 J/kg).
    assert ha.enthalpy_ashrae(celsius(t), W) == pytest.approx(
        psychrolib.GetMoistAirEnthalpy(t, W), rel=1e-12, abs=0.5)


def test_vapour_enthalpy_ideal_gas_vs_iapws95():
    # CoolProp 'Water' is IAPWS-95 with the same datum (u = s = 0 for the
    # liquid at the triple point); at 1 Pa the vapour is ideal to ~1 J/kg.
    # IF97 reproduces IAPWS-95 to about 1e-5 here (measured 0.1-0.9e-5).
    for T in (274.0, 300.0, 350.0, 400.0, 473.15, 573.15):
        assert ha.vapour_enthalpy_ideal_gas(T) == pytest.approx(
            PropsSI("H", "T", T, "P", 1.0, "Water"), rel=2e-5)


def test_vapour_enthalpy_linear_cp_alternative():
    # The simpler formulation h_v = h_v(T_t) + c_pv (T - T_t) with ASHRAE's
    # c_pv = 1.86 kJ/(kg K) (Eq. 32) misses the rise of the ideal-gas c_p of
    # steam (1.86 -> about 2.0 kJ/(kg K) by 300 °C, IAPWS): within 0.25 % up
    # to 200 °C, 0.6 % at 300 °C (measured 0.23 % and 0.57 %). Our choice is
    # the IF97 ideal-gas part; this bounds what the choice changes.
    h_t = ha.vapour_enthalpy_ideal_gas(water.T_TRIPLE)
    for t, bound in ((0.0, 1e-4), (100.0, 1e-3), (200.0, 2.5e-3), (300.0, 6e-3)):
        T = celsius(t)
        linear = h_t + 1860.0 * (T - water.T_TRIPLE)
        assert abs(linear / ha.vapour_enthalpy_ideal_gas(T) - 1.0) < bound, t


def test_enthalpy_vs_ashrae_formula():
    # Ours vs ASHRAE 2017 ch. 1 Eq. 30: the data differ by liquid water at
    # 0.01 °C vs 0 °C (0.04 kJ/kg per kg water, negligible); the vapour term
    # differs by constant vs IF97 c_p (test above). Over 0-300 °C and
    # W 0-0.5 the moist-air enthalpies agree within 0.5 % (measured 0.49 % at
    # 300 °C, W = 0.5), within 0.25 % up to 200 °C (psychrolib's range).
    worst_200, worst_300 = 0.0, 0.0
    for t in np.linspace(0.0, 300.0, 31):
        for W in (0.0, 0.005, 0.05, 0.2, 0.5):
            T = celsius(t)
            a, b = ha.enthalpy(T, W), ha.enthalpy_ashrae(T, W)
            d = abs(a - b) / max(abs(b), 1e3)
            worst_300 = max(worst_300, d)
            if t <= 200.0:
                worst_200 = max(worst_200, d)
    assert worst_200 < 2.5e-3
    assert worst_300 < 5e-3


def test_enthalpy_vs_psychrolib_values():
    # psychrolib GetMoistAirEnthalpy at 30 °C, W = 0.02: 81 316 J/kg (its
    # test suite); ours, IF97 vapour on the IAPWS datum, is within 0.03 %.
    assert ha.enthalpy(celsius(30.0), 0.02) == pytest.approx(
        psychrolib.GetMoistAirEnthalpy(30.0, 0.02), rel=3e-4)


@pytest.mark.parametrize("t, W_s, h_s", [
    (5.0, 0.005425, 18.639),      # ASHRAE Fundamentals 2017, ch. 1, Table 2
    (25.0, 0.020173, 76.504),     # ASHRAE Fundamentals 2017, ch. 1, Table 2
    (50.0, 0.086863, 275.353),    # ASHRAE Fundamentals 2017, ch. 1, Table 2
    (85.0, 0.838105, 2307.539),   # ASHRAE Fundamentals 2017, ch. 1, Table 2
])
def test_enthalpy_at_saturation_ashrae_table2(t, W_s, h_s):
    # Table 2 has the same data as ours (dry air 0 at 0 °C, water 0 as
    # liquid at the triple point). At the table's W_s our ideal-gas h runs
    # high by the real-gas residual of the vapour at p_ws (0.06 % at 25 °C,
    # 0.33 % at 85 °C, where p_ws = 58 kPa; measured).
    T = celsius(t)
    assert ha.enthalpy(T, W_s) / 1e3 == pytest.approx(h_s, rel=4e-3)
    assert ha.enthalpy(T, W_s) / 1e3 > h_s
    # That residual is the whole story: with IF97 region 2 at the partial
    # pressure instead of the ideal-gas vapour, the table is reproduced to
    # 0.02 kJ/kg or 0.02 %, the size of the air-water interaction terms and
    # real-gas dry air the table also carries (measured 0.008, 0.017, 0.034,
    # 0.020 kJ/kg at 5, 25, 50, 85 °C).
    p_w = ha.vapour_pressure_from_humidity_ratio(W_s, P_ATM)
    real = ha.CP_DRY_AIR * (T - K) + W_s * water.vapour_enthalpy(T, p_w)
    assert real / 1e3 == pytest.approx(h_s, rel=2e-4, abs=0.02)


def test_dry_air_ashrae_table2():
    T = celsius(25.0)
    # ASHRAE 2017 ch. 1 Table 2, dry air at 25 °C: h = 25.148 kJ/kg (real-gas
    # c_p 1.0059); ours 1.006 * 25.
    assert ha.enthalpy(T, 0.0) / 1e3 == pytest.approx(25.148, rel=3e-4)
    # v = 0.8443 m3/kg; ours ideal-gas 0.8446 (air compressibility Z = 0.9996)
    assert ha.specific_volume(T, 0.0, P_ATM) == pytest.approx(0.8443, rel=5e-4)


# ---------------------------------------------------------------------------
# Volume and density


@pytest.mark.parametrize("t, W, p", [
    (30.0, 0.02, 95461.0), (-30.0, 0.0002, P_ATM), (150.0, 0.3, 50e3), (200.0, 0.5, 110e3),
])
def test_volume_density_vs_psychrolib(t, W, p):
    # psychrolib GetMoistAirVolume (ASHRAE 2017 ch. 1 Eq. 26, 1.607858) and
    # GetMoistAirDensity (Eq. 11); same formula, constants rounded to 6-7 digits.
    assert ha.specific_volume(celsius(t), W, p) == pytest.approx(
        psychrolib.GetMoistAirVolume(t, W, p), rel=1e-6)
    assert ha.density(celsius(t), W, p) == pytest.approx(
        psychrolib.GetMoistAirDensity(t, W, p), rel=1e-6)


# ---------------------------------------------------------------------------
# Dew point


DEW_CASES = [(W, p) for W in np.geomspace(1e-4, 1.0, 25) for p in (50e3, 80e3, P_ATM, 110e3)]


def _dew_point_brentq(W, p):
    p_w = p * W / (ha.EPSILON + W)
    return brentq(lambda T: water.saturation_pressure(T) - p_w, 150.0, 450.0, xtol=1e-12)


def test_dew_point_vs_brentq(monkeypatch):
    # The unrolled Newton in 1/T converges in at most 4 steps over
    # W 1e-4 ... 1 kg/kg, p 50 ... 110 kPa; the function takes 6.
    monkeypatch.setattr(ha, "_DEW_POINT_STEPS", 4)
    for W, p in DEW_CASES:
        assert ha.dew_point_temperature(W, p) == pytest.approx(_dew_point_brentq(W, p), abs=1e-6)


def test_dew_point_round_trip():
    for t_d in (-35.0, -10.0, 0.5, 20.0, 60.0, 95.0):
        T_d = celsius(t_d)
        for p in (50e3, P_ATM):
            p_w = water.saturation_pressure(T_d)
            if p_w >= p:
                continue
            W = ha.humidity_ratio_from_vapour_pressure(p_w, p)
            assert ha.dew_point_temperature(W, p) == pytest.approx(T_d, abs=1e-7)


def test_dew_point_vs_psychrolib():
    n = 0
    # psychrolib GetTDewPointFromHumRatio inverts ASHRAE's p_ws, which
    # differs from IF97 by < 3e-4: that is < 0.01 K of dew point (d ln p/dT
    # >= 0.03 /K here). Only above 0.01 °C: below, psychrolib uses ice.
    for W in np.geomspace(0.004, 1.0, 15):
        for p in (50e3, P_ATM, 110e3):
            T_d = ha.dew_point_temperature(W, p)
            if T_d < celsius(0.01):
                continue
            t_ref = psychrolib.GetTDewPointFromHumRatio(150.0, W, p)
            assert T_d - K == pytest.approx(t_ref, abs=0.01), (W, p)
            n += 1
    assert n > 30


def test_dew_point_of_dry_air_raises():
    with pytest.raises(InputError, match="key 'W'.*no dew point"):
        ha.dew_point_temperature(0.0, P_ATM)


# ---------------------------------------------------------------------------
# Adiabatic saturation (thermodynamic wet bulb)


def _wet_bulb_brentq(T, W, p):
    g = lambda Ts: float(ha._adiabatic_saturation_residual(Ts, T, W, p))  # noqa: E731
    top = T if W > 0 else T - 1e-9
    return brentq(g, 190.0, top, xtol=1e-12)


WET_CASES = [(celsius(t), W, p)
             for t in (-40.0, -10.0, 10.0, 30.0, 60.0, 90.0, 130.0, 200.0, 250.0, 300.0)
             for W in (0.0, 1e-6, 0.002, 0.02, 0.1, 0.3, 0.5)
             for p in (50e3, P_ATM, 110e3)]


def test_adiabatic_saturation_vs_brentq():
    n = 0
    for T, W, p in WET_CASES:
        if water.saturation_pressure(T) < p and W >= ha.saturation_humidity_ratio(T, p):
            continue
        assert ha.adiabatic_saturation_temperature(T, W, p) == pytest.approx(
            _wet_bulb_brentq(T, W, p), abs=1e-6), (T, W, p)
        n += 1
    assert n > 100


def test_adiabatic_saturation_round_trip():
    for T, W, p in WET_CASES[::3]:
        if water.saturation_pressure(T) < p and W >= ha.saturation_humidity_ratio(T, p):
            continue
        T_star = ha.adiabatic_saturation_temperature(T, W, p)
        if T_star < 273.15:
            continue
        assert ha.humidity_ratio_from_adiabatic_saturation_temperature(T, T_star, p) == \
            pytest.approx(W, abs=1e-10)


def test_adiabatic_saturation_of_saturated_air_is_dry_bulb():
    for t in (5.0, 40.0, 80.0):
        T = celsius(t)
        W_s = ha.saturation_humidity_ratio(T, P_ATM)
        assert ha.adiabatic_saturation_temperature(T, W_s, P_ATM) == pytest.approx(T, abs=1e-6)
    with pytest.raises(InputError, match="key 'W'.*supersaturated"):
        ha.adiabatic_saturation_temperature(celsius(40.0), 0.1, P_ATM)


def test_adiabatic_saturation_above_boiling():
    # A dryer inlet: 200 °C, W = 0.1 at 101.325 kPa: above the boiling point,
    # the wet bulb still exists and lies below it (CoolProp HAPropsSI 'Twb'
    # agrees to 0.04 K, measured).
    T, W = celsius(200.0), 0.1
    T_star = ha.adiabatic_saturation_temperature(T, W, P_ATM)
    assert T_star < water.saturation_temperature(P_ATM)
    assert T_star == pytest.approx(HAPropsSI("Twb", "T", T, "P", P_ATM, "W", W), abs=0.25)


def test_adiabatic_saturation_vs_psychrolib():
    # psychrolib GetTWetBulbFromHumRatio solves ASHRAE 2017 ch. 1 Eq. 35 (the
    # same balance with constant heat capacities and its own p_ws).
    # Measured agreement: 0.005 K. Kept to wet bulbs above 0 °C (psychrolib
    # uses ice below) and dry bulbs below the boiling point at p (psychrolib's
    # bisection is not built for above it).
    n = 0
    for t in (5.0, 20.0, 40.0, 60.0, 80.0, 100.0, 120.0, 150.0, 200.0):
        for W in (0.001, 0.01, 0.05, 0.2, 0.5):
            for p in (50e3, P_ATM, 110e3):
                T = celsius(t)
                if water.saturation_pressure(T) >= p or W >= ha.saturation_humidity_ratio(T, p):
                    continue
                T_star = ha.adiabatic_saturation_temperature(T, W, p)
                if T_star < celsius(0.5):
                    continue
                ref = psychrolib.GetTWetBulbFromHumRatio(t, W, p)
                assert T_star - K == pytest.approx(ref, abs=0.01), (t, W, p)
                n += 1
    assert n > 30


def test_ashrae_example_1():
    # ASHRAE Fundamentals 2017 ch. 1, Example 1: 40 °C dry bulb, 20 °C
    # thermodynamic wet bulb, 101.325 kPa. Handbook results as quoted in
    # psychrolib's test suite (from memory for the handbook's text):
    # W = 0.0065, h = 56.7 kJ/kg, v = 0.896 m3/kg, phi = 14 %, t_d ≈ 7 °C.
    # The handbook uses Table 2's W_s* (real gas, 0.4 % higher than ours);
    # Eq. 35 subtracts two terms of similar size, which amplifies that to a
    # 0.9 % lower W here (0.00640 vs 0.00646).
    T, T_star = celsius(40.0), celsius(20.0)
    W = ha.humidity_ratio_from_adiabatic_saturation_temperature(T, T_star, P_ATM)
    assert W == pytest.approx(0.0065, abs=1e-4)
    assert ha.adiabatic_saturation_temperature(T, W, P_ATM) == pytest.approx(T_star, abs=1e-7)
    assert ha.enthalpy(T, W) == pytest.approx(56.7e3, abs=100.0)
    assert ha.specific_volume(T, W, P_ATM) == pytest.approx(0.896, rel=0.01)
    assert ha.relative_humidity(T, W, P_ATM) == pytest.approx(0.14, abs=0.01)
    # psychrolib's own test allows 0.5 K here ("not great agreement")
    assert ha.dew_point_temperature(W, P_ATM) - K == pytest.approx(7.0, abs=0.5)


def test_wet_bulb_input_errors():
    with pytest.raises(InputError, match="key 'T_star'.*above the dry-bulb"):
        ha.humidity_ratio_from_adiabatic_saturation_temperature(300.0, 310.0, P_ATM)
    with pytest.raises(InputError, match="key 'T_star'.*too low"):
        ha.humidity_ratio_from_adiabatic_saturation_temperature(celsius(60.0), celsius(5.0), P_ATM)


# ---------------------------------------------------------------------------
# Real-gas moist air (CoolProp HAPropsSI) above psychrolib's 200 °C


@pytest.mark.parametrize("t", [200.0, 250.0, 300.0])
@pytest.mark.parametrize("W", [0.0, 0.05, 0.3, 0.5])
def test_vs_coolprop_hot(t, W):
    T, p = celsius(t), P_ATM
    # Enthalpy (same data in CoolProp: dry air 0 at 0 °C, IAPWS water).
    # Ours is low mainly through the constant c_p,a = 1.006 kJ/(kg K): the
    # mean c_p of air over 0-300 °C is about 1.019 kJ/(kg K) (ideal-gas air
    # tables, from memory), so dry air is low by 0.65 % at 200 °C, 1.0 % at
    # 250 °C, 1.4 % at 300 °C (measured); moist air less, since the vapour
    # term (IF97) is accurate: W = 0.05 -0.37, -0.61, -0.91 %; W = 0.5
    # -0.01, -0.10, -0.19 % at 200, 250, 300 °C (measured). So the largest
    # differences are for nearly dry air, not for humid air.
    H = HAPropsSI("H", "T", T, "P", p, "W", W)
    h = ha.enthalpy(T, W)
    assert h == pytest.approx(H, rel=0.015)
    if W == 0.0:
        assert -0.015 < h / H - 1.0 < -0.005
    # Specific volume per kg dry air: compressibility, measured <= 0.10 %.
    assert ha.specific_volume(T, W, p) == pytest.approx(
        HAPropsSI("Vda", "T", T, "P", p, "W", W), rel=2e-3)
    # Wet bulb: enhancement factor and c_p,a, measured up to 0.20 K (300 °C, dry).
    assert ha.adiabatic_saturation_temperature(T, W, p) == pytest.approx(
        HAPropsSI("Twb", "T", T, "P", p, "W", W), abs=0.25)
    if W > 0.0:
        # Dew point: the enhancement factor (~1.005) shifts it by ~0.06-0.14 K.
        assert ha.dew_point_temperature(W, p) == pytest.approx(
            HAPropsSI("Tdp", "T", T, "P", p, "W", W), abs=0.2)


# ---------------------------------------------------------------------------
# Symbolic use


def _fd(fun, x, h):
    return (fun(x + h) - fun(x - h)) / (2.0 * h)


@pytest.mark.parametrize("sym", [ca.SX.sym, ca.MX.sym])
def test_symbolic_values_and_derivatives(sym):
    T, W, p = sym("T"), sym("W"), sym("p")
    outs = {
        "W_rh": ha.humidity_ratio_from_relative_humidity(T, 0.4, p),
        "rh": ha.relative_humidity(T, W, p),
        "h": ha.enthalpy(T, W),
        "v": ha.specific_volume(T, W, p),
        "rho": ha.density(T, W, p),
        "T_d": ha.dew_point_temperature(W, p),
        "T_wb": ha.adiabatic_saturation_temperature(T, W, p),
    }
    names = list(outs)
    f = ca.Function("f", [T, W, p], [outs[k] for k in names])
    x = ca.vertcat(T, W, p)
    J = ca.Function("J", [T, W, p], [ca.jacobian(ca.vertcat(*outs.values()), x)])
    T0, W0, p0 = celsius(70.0), 0.08, 95e3
    num = {
        "W_rh": lambda T, W, p: ha.humidity_ratio_from_relative_humidity(T, 0.4, p),
        "rh": ha.relative_humidity,
        "h": lambda T, W, p: ha.enthalpy(T, W),
        "v": ha.specific_volume,
        "rho": ha.density,
        "T_d": lambda T, W, p: ha.dew_point_temperature(W, p),
        "T_wb": ha.adiabatic_saturation_temperature,
    }
    values = f(T0, W0, p0)
    jac = np.array(J(T0, W0, p0))
    for i, k in enumerate(names):
        assert float(values[i]) == pytest.approx(num[k](T0, W0, p0), rel=1e-12), k
        d = [_fd(lambda a: num[k](a, W0, p0), T0, 1e-3),
             _fd(lambda a: num[k](T0, a, p0), W0, 1e-6),
             _fd(lambda a: num[k](T0, W0, a), p0, 1.0)]
        assert jac[i] == pytest.approx(np.array(d), rel=1e-5, abs=1e-12), k


def test_symbolic_altitude_and_wet_bulb_inverse():
    z, T, Ts = ca.SX.sym("z"), ca.SX.sym("T"), ca.SX.sym("Ts")
    f = ca.Function("f", [z, T, Ts], [ha.pressure_at_altitude(z),
                    ha.humidity_ratio_from_adiabatic_saturation_temperature(T, Ts, 90e3)])
    p, W = f(500.0, 320.0, 300.0)
    assert float(p) == pytest.approx(ha.pressure_at_altitude(500.0), rel=1e-14)
    assert float(W) == pytest.approx(
        ha.humidity_ratio_from_adiabatic_saturation_temperature(320.0, 300.0, 90e3), rel=1e-13)


# ---------------------------------------------------------------------------
# Validity declarations


def test_declared_ranges():
    # The declared ranges of the brief: T -40...300 °C, W 0...0.5, p 50...110 kPa.
    ranges = {r.name: (r.low, r.high) for r in ha.adiabatic_saturation_temperature.validity}
    assert ranges == {"T": (233.15, 573.15), "W": (0.0, 0.5), "p": (50e3, 110e3)}
    assert check_call(ha.enthalpy, T=600.0, W=0.1) == [
        "enthalpy: T = 600 outside T in [233.15, 573.15] K"]
    assert check_call(ha.specific_volume, T=300.0, W=0.6, p=40e3) == [
        "specific_volume: W = 0.6 outside W in [0, 0.5] kg/kg",
        "specific_volume: p = 40000 outside p in [50000, 110000] Pa"]
    for fun in (ha.humidity_ratio_from_relative_humidity, ha.relative_humidity,
                ha.saturation_humidity_ratio, ha.dew_point_temperature, ha.density,
                ha.pressure_at_altitude, ha.humidity_ratio_from_vapour_pressure):
        assert fun.validity, fun.__name__
