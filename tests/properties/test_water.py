"""Tests of balance.properties.water (IAPWS-IF97 regions 1, 2 and 4).

Sources outside the project:

* IAPWS R7-97(2012), the verification tables of the release itself;
* IAPWS R6-95 saturation test values (IAPWS-95, the scientific formulation);
* CoolProp: its IAPWS-95 backend ('Water') and its own IF97 backend
  ('IF97::Water');
* saturated steam tables (1-decimal values of the latent heat);
* thermodynamic identities (c_p = (dh/dT)_p, Clausius-Clapeyron).

IF97 is a fit to IAPWS-95, not IAPWS-95 itself: the two differ by design by a
few parts in 1e4. Checks against IAPWS-95 therefore use tolerances of that
size, and checks against IF97 values use 1e-8.
"""

import casadi as ca
import numpy as np
import pytest
from CoolProp.CoolProp import PropsSI

from balance.properties import water
from balance.properties.water import (
    P_TRIPLE, T_TRIPLE, latent_heat, liquid_enthalpy, liquid_entropy,
    liquid_heat_capacity, region1_enthalpy, region1_entropy,
    region1_heat_capacity, region1_specific_volume, region2_enthalpy,
    region2_entropy, region2_heat_capacity, region2_specific_volume,
    saturated_vapour_enthalpy, saturation_pressure, saturation_temperature,
    vapour_enthalpy, vapour_entropy)

IF97_REL = 1e-8   # IAPWS R7-97(2012), section 13: reproduce the tables to 8 digits


# ---------------------------------------------------------------------------
# IAPWS-IF97 verification tables

# IAPWS R7-97(2012), Table 35: p_s(T) from eq. 30; values in MPa.
@pytest.mark.parametrize("T, p_MPa", [
    (300.0, 0.353658941e-2),   # IAPWS R7-97(2012), Table 35
    (500.0, 0.263889776e1),    # IAPWS R7-97(2012), Table 35
    (600.0, 0.123443146e2),    # IAPWS R7-97(2012), Table 35
])
def test_saturation_pressure_table35(T, p_MPa):
    assert saturation_pressure(T) == pytest.approx(p_MPa * 1e6, rel=IF97_REL)


# IAPWS R7-97(2012), Table 36: T_s(p) from eq. 31; values in K.
@pytest.mark.parametrize("p_MPa, T", [
    (0.1, 0.372755919e3),   # IAPWS R7-97(2012), Table 36
    (1.0, 0.453035632e3),   # IAPWS R7-97(2012), Table 36
    (10.0, 0.584149488e3),  # IAPWS R7-97(2012), Table 36
])
def test_saturation_temperature_table36(p_MPa, T):
    assert saturation_temperature(p_MPa * 1e6) == pytest.approx(T, rel=IF97_REL)


# IAPWS R7-97(2012), Table 5: region 1. h, s, cp in kJ/kg and kJ/(kg K),
# v in m3/kg. h, s and the first cp were read in the release; the other cp
# and the v values are from memory (also confirmed by CoolProp's IF97
# backend in test_against_coolprop_if97_backend).
@pytest.mark.parametrize("T, p_MPa, h, s, cp, v", [
    # IAPWS R7-97(2012), Table 5, column 1
    (300.0, 3.0, 0.115331273e3, 0.392294792, 0.417301218e1, 0.100215168e-2),
    # IAPWS R7-97(2012), Table 5, column 2
    (300.0, 80.0, 0.184142828e3, 0.368563852, 0.401008987e1, 0.971180894e-3),
    # IAPWS R7-97(2012), Table 5, column 3
    (500.0, 3.0, 0.975542239e3, 0.258041912e1, 0.465580682e1, 0.120241800e-2),
])
def test_region1_table5(T, p_MPa, h, s, cp, v):
    p = p_MPa * 1e6
    assert region1_enthalpy(T, p) == pytest.approx(h * 1e3, rel=IF97_REL)
    assert region1_entropy(T, p) == pytest.approx(s * 1e3, rel=IF97_REL)
    assert region1_heat_capacity(T, p) == pytest.approx(cp * 1e3, rel=IF97_REL)
    assert region1_specific_volume(T, p) == pytest.approx(v, rel=IF97_REL)


# IAPWS R7-97(2012), Table 15: region 2 (general equation). Units and
# provenance as for Table 5 (cp of columns 2-3 and v from memory).
@pytest.mark.parametrize("T, p_MPa, h, s, cp, v", [
    # IAPWS R7-97(2012), Table 15, column 1
    (300.0, 0.0035, 0.254991145e4, 0.852238967e1, 0.191300162e1, 0.394913866e2),
    # IAPWS R7-97(2012), Table 15, column 2
    (700.0, 0.0035, 0.333568375e4, 0.101749996e2, 0.208141274e1, 0.923015898e2),
    # IAPWS R7-97(2012), Table 15, column 3
    (700.0, 30.0, 0.263149474e4, 0.517540298e1, 0.103505092e2, 0.542946619e-2),
])
def test_region2_table15(T, p_MPa, h, s, cp, v):
    p = p_MPa * 1e6
    assert region2_enthalpy(T, p) == pytest.approx(h * 1e3, rel=IF97_REL)
    assert region2_entropy(T, p) == pytest.approx(s * 1e3, rel=IF97_REL)
    assert region2_heat_capacity(T, p) == pytest.approx(cp * 1e3, rel=IF97_REL)
    assert region2_specific_volume(T, p) == pytest.approx(v, rel=IF97_REL)


def test_backward_equation_inverts_saturation_pressure():
    # IAPWS R7-97(2012), section 8.2: eq. 31 solves the same quadratic as
    # eq. 30 for T, so the round trip is exact up to rounding (measured
    # 2e-14 relative).
    for T in np.linspace(273.15, 647.0, 40):
        assert saturation_temperature(saturation_pressure(T)) == pytest.approx(T, rel=1e-12)


# ---------------------------------------------------------------------------
# Against CoolProp's own IF97 implementation, over the whole of regions 1, 2, 4

def test_against_coolprop_if97_backend():
    # CoolProp 'IF97::Water' is an independent implementation of the same
    # release: agreement is to rounding (measured below 2e-13 relative).
    # This covers every coefficient at many points, not only the three of
    # each verification table.
    for T in np.linspace(275.0, 620.0, 12):
        for p in np.geomspace(saturation_pressure(T) * 1.01, 100e6, 5):   # region 1
            assert region1_enthalpy(T, p) == pytest.approx(PropsSI("H", "T", T, "P", p, "IF97::Water"), rel=1e-10)
            assert region1_entropy(T, p) == pytest.approx(PropsSI("S", "T", T, "P", p, "IF97::Water"), rel=1e-10)
            assert region1_heat_capacity(T, p) == pytest.approx(PropsSI("C", "T", T, "P", p, "IF97::Water"), rel=1e-10)
            assert 1.0 / region1_specific_volume(T, p) == pytest.approx(PropsSI("D", "T", T, "P", p, "IF97::Water"), rel=1e-10)
    # CoolProp's IF97 backend refuses pressures below the triple point, so
    # region 2 starts at 612 Pa here.
    for T in np.linspace(280.0, 1070.0, 12):
        if T < 623.15:
            p_top = saturation_pressure(T) * 0.99
        elif T < 863.15:
            p_top = 15e6     # below the B23 line (16.5 MPa at 623.15 K)
        else:
            p_top = 100e6
        for p in np.geomspace(612.0, p_top, 5):
            assert region2_enthalpy(T, p) == pytest.approx(PropsSI("H", "T", T, "P", p, "IF97::Water"), rel=1e-10)
            assert region2_entropy(T, p) == pytest.approx(PropsSI("S", "T", T, "P", p, "IF97::Water"), rel=1e-10)
            assert region2_heat_capacity(T, p) == pytest.approx(PropsSI("C", "T", T, "P", p, "IF97::Water"), rel=1e-10)
            assert 1.0 / region2_specific_volume(T, p) == pytest.approx(PropsSI("D", "T", T, "P", p, "IF97::Water"), rel=1e-10)


# ---------------------------------------------------------------------------
# Against IAPWS-95 (the scientific formulation IF97 approximates)

@pytest.mark.parametrize("T, p_MPa, h_f, h_g", [
    (450.0, 0.932203564, 749.161585, 2774.41078),       # IAPWS R6-95, saturation test values
    (275.0, 0.698451167e-3, 7.75972202, 2504.28995),    # IAPWS R6-95, saturation test values
])
def test_iapws95_saturation_points(T, p_MPa, h_f, h_g):
    # IF97 differs from IAPWS-95 by design; its p_s deviates by up to 1.8e-4
    # from 273 K to 647 K (measured against CoolProp 'Water'). Measured here: p_s -1.7e-4 (450 K), h_f +1.8e-4 (450 K),
    # h_g below 1e-6, latent heat -6.5e-5. 4e-4 bounds all of them.
    # At 275 K h_f is small (7.76 kJ/kg), so it is checked absolutely:
    # 300 J/kg, the IF97/IAPWS-95 enthalpy bound used below (measured 0.16 J/kg).
    assert saturation_pressure(T) == pytest.approx(p_MPa * 1e6, rel=4e-4)
    assert liquid_enthalpy(T) == pytest.approx(h_f * 1e3, rel=4e-4, abs=300.0)
    assert saturated_vapour_enthalpy(T) == pytest.approx(h_g * 1e3, rel=4e-4)
    assert latent_heat(T) == pytest.approx((h_g - h_f) * 1e3, rel=4e-4)


def test_enthalpy_datum_is_iapws_and_shared_with_coolprop():
    # IAPWS R7-97(2012) (as IAPWS-95): u = 0 and s = 0 for saturated liquid at
    # the triple point. IF97's region 1 meets this to the rounding of its
    # fitted coefficients (measured u = -1e-7 J/kg, s = -6e-5 J/(kg K)).
    u_if97 = (region1_enthalpy(T_TRIPLE, P_TRIPLE)
              - P_TRIPLE * region1_specific_volume(T_TRIPLE, P_TRIPLE))
    assert abs(u_if97) < 1e-3
    assert abs(region1_entropy(T_TRIPLE, P_TRIPLE)) < 1e-3
    # CoolProp's default reference state for water is the IAPWS-95 one
    # (measured u = -7e-8 J/kg, s = -2e-10 J/(kg K)), so our enthalpies and
    # CoolProp's 'Water' enthalpies can be compared without an offset.
    assert abs(PropsSI("U", "T", T_TRIPLE, "Q", 0, "Water")) < 1e-3
    assert abs(PropsSI("S", "T", T_TRIPLE, "Q", 0, "Water")) < 1e-3


# Working range of an evaporator line: saturation from 5 kPa to 1 MPa.
WORKING_PRESSURES = np.geomspace(5e3, 1e6, 12)
# IF97 vs IAPWS-95 enthalpy differences reach 134 J/kg (liquid at 1 MPa) and
# saturation temperatures 8 mK (at 1 MPa) in this range; the bounds leave a
# margin of about two.
H_TOL = 300.0    # J/kg
T_TOL = 0.02     # K


@pytest.mark.parametrize("p", WORKING_PRESSURES)
def test_saturation_against_coolprop_iapws95(p):
    # CoolProp 'Water' is IAPWS-95; IF97 differs from it by design.
    T_sat = PropsSI("T", "P", p, "Q", 0, "Water")
    assert saturation_temperature(p) == pytest.approx(T_sat, abs=T_TOL)
    assert liquid_enthalpy(T_sat) == pytest.approx(PropsSI("H", "T", T_sat, "Q", 0, "Water"), abs=H_TOL)
    assert saturated_vapour_enthalpy(T_sat) == pytest.approx(PropsSI("H", "T", T_sat, "Q", 1, "Water"), abs=H_TOL)
    # Entropy bound follows from the enthalpy bound: T ds ~ dh (measured
    # T |ds| <= 133 J/kg).
    assert liquid_entropy(T_sat) == pytest.approx(PropsSI("S", "T", T_sat, "Q", 0, "Water"), abs=H_TOL / T_sat)
    assert vapour_entropy(T_sat, saturation_pressure(T_sat)) == pytest.approx(
        PropsSI("S", "T", T_sat, "Q", 1, "Water"), abs=H_TOL / T_sat)
    # Isobaric heat capacity of the liquid: IF97 vs IAPWS-95 measured below
    # 0.1 %; bound 0.2 %.
    assert liquid_heat_capacity(T_sat) == pytest.approx(PropsSI("C", "T", T_sat, "Q", 0, "Water"), rel=2e-3)


@pytest.mark.parametrize("p", WORKING_PRESSURES)
def test_superheated_vapour_against_coolprop_iapws95(p):
    # CoolProp 'Water' is IAPWS-95. Measured: |dh| <= 107 J/kg, T |ds| within
    # the same, c_p within 0.15 %.
    for T in np.linspace(saturation_temperature(p) + 1.0, 600.0, 6):
        assert vapour_enthalpy(T, p) == pytest.approx(PropsSI("H", "T", T, "P", p, "Water"), abs=H_TOL)
        assert vapour_entropy(T, p) == pytest.approx(PropsSI("S", "T", T, "P", p, "Water"), abs=H_TOL / T)
        assert region2_heat_capacity(T, p) == pytest.approx(PropsSI("C", "T", T, "P", p, "Water"), rel=3e-3)


# ---------------------------------------------------------------------------
# Steam tables and common practice

@pytest.mark.parametrize("t_C, L_kJ", [
    (50.0, 2382.0),   # saturated steam table (1-decimal values, kJ/kg)
    (60.0, 2357.6),   # saturated steam table
    (80.0, 2308.0),   # saturated steam table
    (90.0, 2282.5),   # saturated steam table
    (100.0, 2256.4),  # saturated steam table (from memory)
])
def test_latent_heat_steam_tables(t_C, L_kJ):
    # 1-decimal steam tables agree with IF97 within 0.2 kJ/kg, plus 0.05 for
    # the rounding of the printed value. Measured: within 0.09 kJ/kg.
    assert latent_heat(t_C + 273.15) / 1e3 == pytest.approx(L_kJ, abs=0.25)


def test_latent_heat_near_boiling_common_practice():
    # Common practice: latent heat of vaporisation near 100 °C is about
    # 2.26 MJ/kg.
    assert latent_heat(373.15) == pytest.approx(2.26e6, abs=0.01e6)


# ---------------------------------------------------------------------------
# Symbolic use

def test_symbolic_evaluation_equals_float():
    T = ca.SX.sym("T")
    p = ca.SX.sym("p")
    funcs = [region1_enthalpy, region1_entropy, region1_heat_capacity, region1_specific_volume,
             region2_enthalpy, region2_entropy, region2_heat_capacity, region2_specific_volume,
             vapour_enthalpy, vapour_entropy]
    sat_funcs = [saturation_pressure, liquid_enthalpy, liquid_entropy, liquid_heat_capacity,
                 saturated_vapour_enthalpy, latent_heat]
    both = ca.Function("both", [T, p], [f(T, p) for f in funcs])
    one = ca.Function("one", [T], [f(T) for f in sat_funcs])
    liquid = both(350.0, 1e6)       # a compressed-liquid state
    vapour = both(450.0, 1e5)       # a superheated-vapour state
    for k, f in enumerate(funcs):
        T_k, p_k, values = (350.0, 1e6, liquid) if k < 4 else (450.0, 1e5, vapour)
        assert float(values[k]) == pytest.approx(f(T_k, p_k), rel=1e-12)
    for f, value in zip(sat_funcs, one(330.0)):
        assert float(value) == pytest.approx(f(330.0), rel=1e-12)
    # MX graphs work too.
    p_mx = ca.MX.sym("p")
    tsat = ca.Function("tsat", [p_mx], [saturation_temperature(p_mx)])
    assert float(tsat(2e4)) == pytest.approx(saturation_temperature(2e4), rel=1e-12)


@pytest.mark.parametrize("T, p", [(320.0, 5e3), (400.0, 1e5), (550.0, 1e6), (900.0, 30e6)])
def test_heat_capacity_is_derivative_of_enthalpy(T, p):
    # Identity c_p = (dh/dT)_p; both sides come from the same Gibbs function,
    # so they agree to rounding (region 2; region 1 below).
    Ts, ps = ca.SX.sym("T"), ca.SX.sym("p")
    dh2 = ca.Function("dh2", [Ts, ps], [ca.jacobian(region2_enthalpy(Ts, ps), Ts)])
    assert float(dh2(T, p)) == pytest.approx(region2_heat_capacity(T, p), rel=1e-10)
    if T < 600.0:
        p1 = saturation_pressure(T) + 5e6    # a compressed-liquid state
        dh1 = ca.Function("dh1", [Ts, ps], [ca.jacobian(region1_enthalpy(Ts, ps), Ts)])
        assert float(dh1(T, p1)) == pytest.approx(region1_heat_capacity(T, p1), rel=1e-10)


@pytest.mark.parametrize("T", [275.0, 300.0, 330.0, 373.15, 420.0, 500.0, 600.0])
def test_clausius_clapeyron(T):
    # dp_s/dT = L / (T (v_g - v_f)) holds exactly for a real fluid; in IF97
    # p_s (region 4), h and v (regions 1, 2) are separate fits, not derived
    # from one Gibbs function, so they satisfy it only approximately
    # (measured below 1.6e-4 from 273 K to 623 K). Bound 1e-3.
    Ts = ca.SX.sym("T")
    dps_dT = ca.Function("dps", [Ts], [ca.jacobian(saturation_pressure(Ts), Ts)])
    p_s = saturation_pressure(T)
    v_g = region2_specific_volume(T, p_s)
    v_f = region1_specific_volume(T, p_s)
    assert float(dps_dT(T)) == pytest.approx(latent_heat(T) / (T * (v_g - v_f)), rel=1e-3)


# ---------------------------------------------------------------------------
# Declared validity

def test_validity_ranges_are_declared():
    # IAPWS R7-97(2012), Fig. 1: region limits.
    def box(func):
        return {r.name: (r.low, r.high) for r in func.validity}
    assert box(region1_enthalpy) == {"T": (273.15, 623.15), "p": (611.213, 100e6)}
    assert box(region2_enthalpy) == {"T": (273.15, 1073.15), "p": (0.0, 100e6)}
    assert box(saturation_pressure) == {"T": (273.15, 647.096)}
    assert box(saturation_temperature) == {"p": (611.213, 22.064e6)}
    assert box(latent_heat) == {"T": (273.15, 623.15)}
    for name in water.__all__:
        obj = getattr(water, name)
        if callable(obj):
            assert obj.validity, name
