"""Tests of balance.properties.sorption (GAB isotherm).

Sources outside the project: the published algebraic forms of the isotherms
(BET, Brunauer, Emmett & Teller, J. Am. Chem. Soc. 60 (1938) 309, and its
linearised form; GAB, van den Berg 1984, and its polynomial regression form;
the GAB monolayer point), a bracketing root finder (scipy brentq) for the
closed-form inverse, and broad facts of the trade for milk powder.

The skim-milk-powder coefficients (Lin, Chen & Pearce, J. Food Eng. 68
(2005) 257-264) are from memory, low confidence: the tests below check them
only for plausibility, never as published values.
"""

import math

import casadi as ca
import numpy as np
import pytest
from scipy.optimize import brentq

from balance.errors import InputError, OutOfRangeError
from balance.properties import sorption
from balance.properties.sorption import (
    GAB_PARAMETERS, equilibrium_moisture_reachable, gab_constants, gab_moisture,
    gab_parameters, gab_water_activity)
from balance.properties.validity import check_call

SMP = gab_parameters("skim milk powder")

# Coefficient sets spanning the shapes of the GAB form: type II (C > 2),
# C between 1 and 2, C = 1, type III (C < 1), K < 1, K = 1 and K > 1;
# the SMP set with its temperature dependence.
SETS = {
    "typeII": dict(m0=0.05, C0=10.0, dH1=0.0, K0=0.8, dH2=0.0),
    "C1.5": dict(m0=0.08, C0=1.5, dH1=0.0, K0=0.9, dH2=0.0),
    "C1": dict(m0=0.04, C0=1.0, dH1=0.0, K0=0.95, dH2=0.0),
    "typeIII": dict(m0=0.1, C0=0.4, dH1=0.0, K0=0.85, dH2=0.0),
    "K1": dict(m0=0.06, C0=20.0, dH1=0.0, K0=1.0, dH2=0.0),
    "K1.05": dict(m0=0.06, C0=20.0, dH1=0.0, K0=1.05, dH2=0.0),
    "Tdep": dict(m0=0.07, C0=0.01, dH1=20000.0, K0=3.0, dH2=-3000.0),
    "SMP": SMP.coefficients,
}

A_W = np.linspace(0.05, 0.9, 18)
TEMPS = (283.15, 313.15, 343.15)


def _pole_free(a_w, T, coeffs):
    _, K = gab_constants(T, coeffs["C0"], coeffs["dH1"], coeffs["K0"], coeffs["dH2"])
    return K * a_w < 0.999


# ---------------------------------------------------------------------------
# Round trips and the inverse


@pytest.mark.parametrize("name", list(SETS))
def test_round_trip_a_w_X_a_w(name):
    coeffs = SETS[name]
    n = 0
    for T in TEMPS:
        for a_w in A_W:
            if not _pole_free(a_w, T, coeffs):
                continue
            X = gab_moisture(a_w, T, **coeffs)
            assert gab_water_activity(X, T, **coeffs) == pytest.approx(a_w, rel=1e-12)
            n += 1
    assert n > 30


@pytest.mark.parametrize("name", ["typeII", "typeIII", "SMP"])
def test_inverse_vs_brentq(name):
    # The closed form against a bracketing solver on the forward isotherm.
    coeffs = SETS[name]
    T = 313.15
    _, K = gab_constants(T, coeffs["C0"], coeffs["dH1"], coeffs["K0"], coeffs["dH2"])
    a_top = min(1.0, 0.999 / K)
    X_top = gab_moisture(a_top, T, **coeffs)
    n = 0
    for X in (0.005, 0.03, 0.08, 0.2, 1.0):
        if X >= X_top:
            continue
        ref = brentq(lambda a: gab_moisture(a, T, **coeffs) - X, 0.0, a_top, xtol=1e-14)
        n += 1
        assert gab_water_activity(X, T, **coeffs) == pytest.approx(ref, rel=1e-10)
    assert n >= 3


def test_inverse_at_zero_moisture():
    assert gab_water_activity(0.0, 300.0, **SETS["typeII"]) == 0.0


# ---------------------------------------------------------------------------
# Monotonicity


@pytest.mark.parametrize("name", list(SETS))
def test_moisture_increases_with_water_activity(name):
    coeffs = SETS[name]
    for T in TEMPS:
        X = [gab_moisture(a, T, **coeffs) for a in A_W if _pole_free(a, T, coeffs)]
        assert all(b > a for a, b in zip(X, X[1:])), T


def test_smp_desorption_moisture_falls_with_temperature_at_low_activity():
    # Sorption is exothermic, so at low water activity equilibrium moisture
    # falls as temperature rises (common practice). With K rising with T
    # (dH2 < 0) the curves of the recalled SMP set cross near a_w 0.3-0.4,
    # as isotherms of sugar-rich powders do at high a_w; only the low-a_w
    # side is asserted.
    for a_w in (0.05, 0.1, 0.2):
        X = [SMP.moisture(a_w, T) for T in (298.15, 313.15, 328.15, 343.15)]
        assert all(b < a for a, b in zip(X, X[1:])), a_w


# ---------------------------------------------------------------------------
# Published-form identities


@pytest.mark.parametrize("C", [0.5, 1.0, 3.0, 25.0])
def test_bet_limit_k_equals_one(C):
    # With K = 1 the GAB isotherm is the BET isotherm for infinitely many
    # layers (Brunauer, Emmett & Teller 1938), in its linearised form
    # a/((1 - a) X) = 1/(m0 C) + (C - 1) a/(m0 C).
    m0 = 0.055
    for a in A_W:
        X = gab_moisture(a, 300.0, m0, C, 0.0, 1.0, 0.0)
        assert a / ((1.0 - a) * X) == pytest.approx(1.0 / (m0 * C) + (C - 1.0) * a / (m0 * C),
                                                    rel=1e-12)


@pytest.mark.parametrize("name", list(SETS))
def test_polynomial_regression_form(name):
    # The GAB isotherm is fitted in the form a/X = alpha a^2 + beta a + gamma
    # with alpha = (K/m0)(1/C - 1), beta = (1/m0)(1 - 2/C), gamma = 1/(m0 C K)
    # (van den Berg 1984; the usual regression form, from memory).
    coeffs = SETS[name]
    m0 = coeffs["m0"]
    for T in TEMPS:
        C, K = gab_constants(T, coeffs["C0"], coeffs["dH1"], coeffs["K0"], coeffs["dH2"])
        alpha, beta, gamma = K / m0 * (1.0 / C - 1.0), (1.0 - 2.0 / C) / m0, 1.0 / (m0 * C * K)
        for a in A_W:
            if _pole_free(a, T, coeffs):
                X = gab_moisture(a, T, **coeffs)
                assert a / X == pytest.approx(alpha * a * a + beta * a + gamma, rel=1e-12)


@pytest.mark.parametrize("name", ["typeII", "C1.5", "K1", "SMP"])
def test_monolayer_point(name):
    # X = m0 where K a_w = 1/(1 + sqrt(C)) (the GAB monolayer point; BET's
    # a = 1/(1 + sqrt(C)) when K = 1).
    coeffs = SETS[name]
    T = 313.15
    C, K = gab_constants(T, coeffs["C0"], coeffs["dH1"], coeffs["K0"], coeffs["dH2"])
    a_m = 1.0 / ((1.0 + math.sqrt(C)) * K)
    assert gab_moisture(a_m, T, **coeffs) == pytest.approx(coeffs["m0"], rel=1e-12)


def test_henry_slope_and_arrhenius_constants():
    # dX/da_w at a_w = 0 is m0 C K (Henry's law limit of the GAB form), and
    # C, K follow C0 exp(dH1/RT), K0 exp(dH2/RT).
    a, T = ca.SX.sym("a"), ca.SX.sym("T")
    c = SETS["Tdep"]
    slope = ca.Function("s", [a, T], [ca.jacobian(gab_moisture(a, T, **c), a)])
    T0 = 320.0
    C = c["C0"] * math.exp(c["dH1"] / (8.314462618 * T0))
    K = c["K0"] * math.exp(c["dH2"] / (8.314462618 * T0))
    assert float(slope(0.0, T0)) == pytest.approx(c["m0"] * C * K, rel=1e-12)
    assert gab_constants(T0, c["C0"], c["dH1"], c["K0"], c["dH2"]) == pytest.approx((C, K), rel=1e-14)


# ---------------------------------------------------------------------------
# Symbolic use


@pytest.mark.parametrize("sym", [ca.SX.sym, ca.MX.sym])
def test_symbolic_and_derivatives(sym):
    a, X, T = sym("a"), sym("X"), sym("T")
    c = SMP.coefficients
    f = ca.Function("f", [a, X, T], [gab_moisture(a, T, **c), gab_water_activity(X, T, **c)])
    J = ca.Function("J", [a, X, T], [ca.jacobian(gab_moisture(a, T, **c), ca.vertcat(a, T)),
                                     ca.jacobian(gab_water_activity(X, T, **c), ca.vertcat(X, T))])
    a0, X0, T0 = 0.25, 0.06, 330.0
    Xs, aws = f(a0, X0, T0)
    assert float(Xs) == pytest.approx(gab_moisture(a0, T0, **c), rel=1e-13)
    assert float(aws) == pytest.approx(gab_water_activity(X0, T0, **c), rel=1e-13)
    Jm, Ja = (np.array(M).ravel() for M in J(a0, X0, T0))
    fd = lambda g, x, h: (g(x + h) - g(x - h)) / (2 * h)  # noqa: E731
    assert Jm == pytest.approx([fd(lambda v: gab_moisture(v, T0, **c), a0, 1e-6),
                                fd(lambda v: gab_moisture(a0, v, **c), T0, 1e-3)], rel=1e-6)
    assert Ja == pytest.approx([fd(lambda v: gab_water_activity(v, T0, **c), X0, 1e-7),
                                fd(lambda v: gab_water_activity(X0, v, **c), T0, 1e-3)], rel=1e-6)


# ---------------------------------------------------------------------------
# Range enforcement and errors


def test_declared_ranges():
    assert check_call(gab_moisture, a_w=0.95, T=300.0) == [
        "gab_moisture: a_w = 0.95 outside a_w in [0.05, 0.9] -"]
    assert check_call(gab_moisture, a_w=0.5, T=400.0) == [
        "gab_moisture: T = 400 outside T in [273.15, 373.15] K"]
    T_range, a_w_range = SMP.validity
    assert (T_range.name, T_range.unit) == ("T", "K")
    assert a_w_range.contains(0.5) and not a_w_range.contains(0.95)


def test_numeric_guards():
    c = SETS["typeII"]
    with pytest.raises(InputError, match="key 'a_w'.*outside \\[0, 1\\]"):
        gab_moisture(1.2, 300.0, **c)
    with pytest.raises(OutOfRangeError, match="key 'a_w'.*pole of the GAB isotherm"):
        gab_moisture(0.97, 300.0, **SETS["K1.05"])     # 1/K = 0.952
    with pytest.raises(InputError, match="key 'X'.*negative"):
        gab_water_activity(-0.01, 300.0, **c)


def test_registry():
    assert gab_parameters(" Skim Milk Powder ") is GAB_PARAMETERS["skim milk powder"]
    with pytest.raises(InputError, match="key 'isotherm'.*unknown.*valid: 'skim milk powder'"):
        gab_parameters("cocoa")
    for params in GAB_PARAMETERS.values():
        assert params.source and params.confidence
        # every set must be pole-free over its own declared ranges
        for T in np.linspace(*params.T_range, 5):
            _, K = gab_constants(T, params.C0, params.dH1, params.K0, params.dH2)
            assert K * params.a_w_range[1] < 1.0


def test_smp_plausibility():
    # Broad facts of the trade (common practice), not published values:
    # skim milk powder holds roughly 4-8 % water (dry basis) at a_w 0.2-0.3
    # and room temperature, and leaves a spray dryer at 3.5-4 % (wet basis)
    # with outlet air at about 70-90 °C and 5-15 % relative humidity.
    assert 0.04 < SMP.moisture(0.3, 298.15) < 0.09
    assert 0.025 < SMP.moisture(0.10, 343.15) < 0.05


def test_equilibrium_moisture_reachable():
    # Outlet air of 70 °C at 10 % rh: equilibrium about 3.5 % d.b. with the
    # recalled SMP set; 4 % is reachable, 3 % is not.
    ok, X_eq = equilibrium_moisture_reachable(0.04, 343.15, 0.10, "skim milk powder")
    assert ok and X_eq == pytest.approx(SMP.moisture(0.10, 343.15), rel=1e-14)
    ok, X_eq2 = equilibrium_moisture_reachable(0.03, 343.15, 0.10, SMP)
    assert not ok and X_eq2 == X_eq
    # drier air reaches further
    assert equilibrium_moisture_reachable(0.03, 343.15, 0.05, SMP)[0]


def test_equilibrium_moisture_reachable_range_policy():
    # 90 °C is outside the recalled fit range (25-70 °C): refused by default,
    # a warning under policy "warn".
    with pytest.raises(OutOfRangeError, match="key 'T'.*powder temperature.*skim milk powder"):
        equilibrium_moisture_reachable(0.04, 363.15, 0.10, SMP)
    with pytest.warns(UserWarning, match="equilibrium water activity: a_w = 0.95"):
        equilibrium_moisture_reachable(0.5, 313.15, 0.95, SMP, policy="warn")
    with pytest.raises(InputError, match="key 'rh'"):
        equilibrium_moisture_reachable(0.04, 313.15, 1.5, SMP)
    with pytest.raises(InputError, match="key 'X_target'"):
        equilibrium_moisture_reachable(float("nan"), 313.15, 0.3, SMP)
    assert sorption.R_GAS == pytest.approx(8.314462618, rel=0)
