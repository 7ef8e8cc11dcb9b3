"""Tests of vapour recompression: the MVR compressor, the steam-jet thermocompressor, the vapour user.

Sources outside the project:

* CoolProp's IAPWS-95 backend ('Water') for entropy and enthalpy: the
  isentropic work of the compressor and the reversible (second-law) limit of
  a steam jet. IF97, which `balance` uses, differs from IAPWS-95 by design by
  a few parts in 1e4 (see tests/properties/test_water.py); the tolerances
  below are of that size.
* El-Dessouky (1997), as given in El-Dessouky & Ettouney, *Fundamentals of
  Salt Water Desalination* (2002): the entrainment correlation. Its form,
  coefficients and ranges are recalled, not read (from memory); no value
  printed in the source is recalled well enough to test against, so the
  correlation is checked against an independent transcription of the
  recalled formula, the second law (CoolProp) and the trade's magnitudes.
* Facts of the trade, marked common practice: MVR at a few kelvin of lift
  needs roughly 10-20 kWh per tonne of water; each added effect raises the
  live-steam economy by less than one; steam jets on evaporators entrain
  roughly 0.5-1.5 kg of vapour per kg of 8-10 bar motive steam at a
  compression ratio of about 2.
"""

from __future__ import annotations

import copy

import pytest
from CoolProp.CoolProp import PropsSI

try:
    import tomllib
except ModuleNotFoundError:  # Python < 3.11
    import tomli as tomllib

from balance.analysis.key_figures import key_figures
from balance.errors import InputError, OutOfRangeError
from balance.flowsheet.file_format import from_dict
from balance.properties import water
from balance.properties.validity import check_call
from balance.solve import solve
from balance.unitops.thermocompressor import ENTRAINMENT_METHODS, el_dessouky_1997
from balance.unitops.vapour_compressor import isentropic_compression

#: IF97 against IAPWS-95 in region 2: a few parts in 1e4 by design; measured 4e-5 to 8e-5 on
#: the isentropic work of the cases below.
IF97_VS_IAPWS95 = 2e-4


def coolprop_isentropic_work(T1, p1, p2, saturated=False):
    """h(p2, s1) - h1 with IAPWS-95 (CoolProp)."""
    if saturated:
        h1, s1 = PropsSI("H", "P", p1, "Q", 1, "Water"), PropsSI("S", "P", p1, "Q", 1, "Water")
    else:
        h1, s1 = PropsSI("H", "T", T1, "P", p1, "Water"), PropsSI("S", "T", T1, "P", p1, "Water")
    return PropsSI("H", "P", p2, "S", s1, "Water") - h1, h1


# ---------------------------------------------------------------------------
# Flowsheets used by the tests

# The feed arrives preheated to about its boiling point (by condensate, in a plant), so
# that the fan's work leaves a surplus of vapour to vent at every lift tested.
MVR = """
[flowsheet]
title = "single-effect MVR"

[units.feed]
type = "feed"
liquor = "skim_milk"
flow = "20 t/h"
solids = "9 %"
temperature = "65 degC"

[units.E1]
type = "effect"
U = "2000 W/m2/K"
pressure = "25 kPa"

[units.fan]
type = "vapour_compressor"
lift = "6 K"

[units.vent]
type = "splitter"
stream = "vapour"

[units.condenser]
type = "condenser"

[units.cooling]
type = "cooling_water"
temperature = "25 degC"

[units.concentrate]
type = "product"
solids = "30 %"

[streams]
feed = "feed.out -> E1.liquor_in"
V1 = "E1.vapour_out -> vent.in"
suction = "vent.out1 -> fan.suction_in"
surplus = "vent.out2 -> condenser.vapour_in"
discharge = "fan.discharge_out -> E1.heating_in"
concentrate = "E1.liquor_out -> concentrate.in"
cooling_water = "cooling.out -> condenser.cooling_in"

[specification]
fix = { "condenser.cooling_out.temperature" = "35 degC" }
"""

TVR = """
[flowsheet]
title = "two effects with a thermocompressor"

[units.feed]
type = "feed"
liquor = "skim_milk"
flow = "10 t/h"
solids = "9 %"
temperature = "65 degC"

[units.steam]
type = "steam_supply"
pressure = "10 bar"

[units.TVR]
type = "thermocompressor"
discharge_pressure = "50 kPa"

[units.S2]
type = "splitter"
stream = "vapour"

[units.E1]
type = "effect"
U = "2200 W/m2/K"

[units.E2]
type = "effect"
U = "1800 W/m2/K"
pressure = "20 kPa"

[units.condenser]
type = "condenser"

[units.cooling]
type = "cooling_water"
temperature = "25 degC"

[units.concentrate]
type = "product"
solids = "30 %"

[streams]
feed = "feed.out -> E1.liquor_in"
motive = "steam.out -> TVR.motive_in"
discharge = "TVR.discharge_out -> E1.heating_in"
L1 = "E1.liquor_out -> E2.liquor_in"
V1 = "E1.vapour_out -> E2.heating_in"
concentrate = "E2.liquor_out -> concentrate.in"
V2 = "E2.vapour_out -> S2.in"
to_condenser = "S2.out1 -> condenser.vapour_in"
suction = "S2.out2 -> TVR.suction_in"
cooling_water = "cooling.out -> condenser.cooling_in"

[specification]
same = [["E1.area", "E2.area"]]
fix = { "condenser.cooling_out.temperature" = "35 degC" }
"""


def flowsheet(text: str, file: str = "test.toml", **changes):
    """A flowsheet from TOML text; ``changes`` are 'UNIT__KEY' = value (None removes the key)."""
    data = tomllib.loads(text)
    for name, value in changes.items():
        unit, key = name.split("__")
        if value is None:
            data["units"][unit].pop(key, None)
        else:
            data["units"][unit][key] = value
    return from_dict(copy.deepcopy(data), file=file)


@pytest.fixture(scope="module")
def mvr():
    solution = solve(flowsheet(MVR))
    assert solution.converged, (solution.problems, solution.attempts)
    return solution


@pytest.fixture(scope="module")
def tvr():
    solution = solve(flowsheet(TVR))
    assert solution.converged, (solution.problems, solution.attempts)
    return solution


# ---------------------------------------------------------------------------
# The compressor's isentropic work against CoolProp


@pytest.mark.parametrize("T1, lift, superheat", [
    (333.15, 5.0, 0.0),    # saturated vapour at 60 °C lifted 5 K
    (343.15, 8.0, 0.0),    # 70 °C lifted 8 K
    (338.15, 6.0, 0.7),    # vapour of a liquor with 0.7 K BPR, lifted 6 K
    (318.15, 4.0, 0.3),    # 45 °C, a cold MVR effect
    (373.15, 10.0, 0.0),   # 100 °C, a large lift
])
def test_isentropic_work_against_coolprop(T1, lift, superheat):
    p1 = float(water.saturation_pressure(T1 - superheat))
    p2 = float(water.saturation_pressure(T1 - superheat + lift))
    ours = isentropic_compression(T1, p1, p2, 0.75)
    # CoolProp, IAPWS-95: h(p2, s1) - h1
    work, h1 = coolprop_isentropic_work(T1, p1, p2, saturated=superheat == 0.0)
    assert ours["isentropic_work"] == pytest.approx(work, rel=IF97_VS_IAPWS95)
    # the actual end state: h2 = h1 + w_s / eta, its temperature from CoolProp; IF97 and
    # IAPWS-95 agree on T(p, h) in region 2 to about 0.02 K here (measured 0.013-0.020 K)
    t2 = PropsSI("T", "P", p2, "H", h1 + work / 0.75, "Water")
    assert ours["T_discharge"] == pytest.approx(t2, abs=0.05)


def test_compressor_in_a_flowsheet_against_coolprop(mvr):
    fan = mvr.units["fan"]
    suction = mvr.streams["suction"].values
    discharge = mvr.streams["discharge"].values
    # CoolProp, IAPWS-95: the isentropic work from the solved suction state to the discharge pressure
    work, _ = coolprop_isentropic_work(suction["temperature"], suction["pressure"], discharge["pressure"])
    assert fan.figures["isentropic_work"] == pytest.approx(work, rel=IF97_VS_IAPWS95)
    eta = fan.quantities["isentropic_efficiency"]
    flow = suction["flow"]
    assert fan.quantities["shaft_power"] == pytest.approx(flow * work / eta, rel=IF97_VS_IAPWS95)
    assert fan.quantities["electrical_power"] == pytest.approx(
        fan.quantities["shaft_power"] / fan.quantities["drive_efficiency"], rel=1e-10)
    # lift as defined: saturation temperatures (IF97 region 4 against IAPWS-95: < 0.01 K)
    t_sat = [PropsSI("T", "P", p, "Q", 1, "Water") for p in (suction["pressure"], discharge["pressure"])]
    assert fan.quantities["lift"] == pytest.approx(t_sat[1] - t_sat[0], abs=0.01)
    # the discharge is superheated by the compression (60 °C + 5 K at eta 0.75 gives about
    # 85 °C; here 65 °C + 6 K)
    assert fan.quantities["discharge_superheat"] > 15.0


# ---------------------------------------------------------------------------
# Facts of the trade


def test_mvr_electricity_per_tonne_is_common_practice():
    # Common practice: MVR at a few kelvin of lift needs roughly 10-20 kWh of electricity
    # per tonne of water evaporated (default efficiencies 0.75 isentropic, 0.9 drive).
    from balance.solve.solver import Solver
    solver = Solver(flowsheet(MVR))
    for lift in (4.0, 5.0, 6.0, 7.0):
        solver.set("fan.lift", lift)
        solution = solver.solve()
        assert solution.converged, (lift, solution.problems)
        figures = key_figures(solution)
        assert 10.0 <= figures["electricity_per_water"].value <= 20.0, lift
        # the MVR effect needs no live steam at all
        assert figures["live_steam"].value == 0.0


def test_mvr_energy_balance_closes_only_with_the_shaft_work(mvr):
    energy = mvr.balances["energy"]
    assert energy.closes
    shaft = mvr.units["fan"].quantities["shaft_power"]
    # without the shaft work the boundary enthalpy flows would miss by the shaft power
    scale = max(abs(energy.into), abs(energy.out_of))
    assert shaft / scale > 1e-3


def test_each_added_effect_raises_the_economy_by_less_than_one():
    # Common practice: live-steam economy rises by less than one per added effect (about
    # 0.7-0.9). The comparison set's three-, four- and five-effect trains, same duty.
    from balance.analysis.compare import load_variants, solve_variant
    from pathlib import Path
    folder = Path(__file__).resolve().parent.parent / "flowsheets" / "compare"
    variants = load_variants([folder / "three_effect.toml", folder / "five_effect.toml"])
    by_name = {v.name: v for v in variants}
    economy = {}
    for name in ("three_effect", "three_effect/four_effects", "five_effect"):
        result = solve_variant(by_name[name])
        assert result.converged, result.status
        economy[name] = result.figures["steam_economy"]
    steps = [economy["three_effect/four_effects"] - economy["three_effect"],
             economy["five_effect"] - economy["three_effect/four_effects"]]
    for step in steps:
        assert 0.5 < step < 1.0


# ---------------------------------------------------------------------------
# Desuperheating and fans in series


def _series(lift_each: float, superheat: str | None = "2 K"):
    """Two fans in series; with ``superheat``, part of E1's condensate is sprayed after fan2."""
    fans = f'''[units.fan]
type = "vapour_compressor"
lift = "{lift_each} K"

[units.fan2]
type = "vapour_compressor"
lift = "{lift_each} K"
'''
    streams = '''between = "fan.discharge_out -> fan2.suction_in"
discharge = "fan2.discharge_out -> E1.heating_in"'''
    if superheat:
        fans += f'''discharge_superheat = "{superheat}"

[units.spray]
type = "splitter"
stream = "water"

[units.returned]
type = "outlet"
stream = "water"'''
        streams += '''
C1 = "E1.condensate_out -> spray.in"
spray_water = "spray.out2 -> fan2.water_in"
returned = "spray.out1 -> returned.in"'''
    text = MVR.replace('[units.fan]\ntype = "vapour_compressor"\nlift = "6 K"', fans)
    text = text.replace('discharge = "fan.discharge_out -> E1.heating_in"', streams)
    return flowsheet(text)


def test_fans_in_series_with_desuperheating():
    solution = solve(_series(3.0))
    assert solution.converged, (solution.problems, solution.attempts)
    fan2 = solution.units["fan2"]
    spray = solution.streams["spray_water"].values
    between = solution.streams["between"]
    out = solution.streams["discharge"]
    # mass and energy of the injection, from the stream results
    assert out.values["flow"] == pytest.approx(between.values["flow"] + spray["flow"], rel=1e-10)
    h2 = float(water.vapour_enthalpy(fan2.quantities["compressed_temperature"], out.values["pressure"]))
    assert out.enthalpy_flow == pytest.approx(between.values["flow"] * h2
                                              + solution.streams["spray_water"].enthalpy_flow, rel=1e-9)
    # the superheat asked for, and the impeller outlet hotter than the discharge
    t_sat = PropsSI("T", "P", out.values["pressure"], "Q", 1, "Water")   # IAPWS-95, < 0.01 K from IF97
    assert out.values["temperature"] - t_sat == pytest.approx(2.0, abs=0.01)
    assert fan2.quantities["compressed_temperature"] > out.values["temperature"] + 5.0
    # the two lifts add up
    t_sat1 = PropsSI("T", "P", solution.streams["suction"].values["pressure"], "Q", 1, "Water")
    assert t_sat - t_sat1 == pytest.approx(6.0, abs=0.01)
    assert solution.balances["energy"].closes and solution.balances["water"].closes
    # no usable-lift warning: the series lifts 6 K in all, the liquor's BPR is under 1 K
    assert not any("usable lift" in w for w in solution.warnings)


def test_usable_lift_is_checked_over_the_whole_series():
    # 2 x 1.4 K: each fan alone would fail a 2 K budget after the BPR; together they pass
    solution = solve(_series(1.4, superheat=None))
    assert not any("usable lift" in w for w in solution.warnings), solution.warnings
    # 2 x 1.0 K = 2 K of lift minus about 0.5 K of BPR: less than 2 K left to drive heat
    solution = solve(_series(1.0, superheat=None))
    lifts = [w for w in solution.warnings if "usable lift" in w]
    assert len(lifts) == 1 and lifts[0].startswith("fan2 usable lift")


# ---------------------------------------------------------------------------
# Bad input: clear errors and recorded warnings (Newton only: the fallbacks cannot rescue an
# impossible specification, and the checks run on whatever point is returned)


def test_discharge_below_suction_is_flagged():
    fs = flowsheet(MVR, file="low_discharge.toml", fan__lift=None, fan__discharge_pressure="20 kPa")
    solution = solve(fs, method="newton")
    assert not solution.converged
    assert any(w.startswith("fan pressure ratio: pressure_ratio = 0.8") for w in solution.warnings), \
        solution.warnings
    with pytest.raises(OutOfRangeError, match=r"low_discharge\.toml: unit 'fan': key 'pressure_ratio'"):
        solve(flowsheet(MVR, file="low_discharge.toml", fan__lift=None, fan__discharge_pressure="20 kPa"),
              method="newton", range_policy="refuse")


def test_lift_that_no_driving_force_can_use_is_flagged():
    # 1.5 K of lift, about 0.5 K of it eaten by the boiling-point rise: 1 K left, under the
    # 2 K smallest driving force
    solution = solve(flowsheet(MVR, file="small_lift.toml", fan__lift="1.5 K"), method="newton")
    assert any(w.startswith("fan usable lift: usable_lift = 1.0") for w in solution.warnings), solution.warnings
    with pytest.raises(OutOfRangeError, match=r"small_lift\.toml: unit 'fan': key 'usable_lift'"):
        solve(flowsheet(MVR, file="small_lift.toml", fan__lift="1.5 K"), method="newton", range_policy="refuse")


def test_a_lift_below_the_boiling_point_rise_fails_the_checks():
    solution = solve(flowsheet(MVR, fan__lift="0.3 K"), method="newton")
    assert not solution.converged
    # 0.3 K of lift against about 0.5 K of boiling-point rise: no solution, and the warning
    # says why (its number is taken at the point where the solve stopped)
    assert any(w.startswith("fan usable lift: usable_lift = ") for w in solution.warnings), solution.warnings


def test_isentropic_efficiency_outside_0_1_is_refused():
    with pytest.raises(InputError, match="isentropic_efficiency"):
        isentropic_compression(333.15, 2e4, 3e4, 1.2)


# ---------------------------------------------------------------------------
# The thermocompressor correlation


def el_dessouky_plain(pm_kpa, pev_kpa, ps_kpa, tev_c):
    """The recalled formula transcribed independently, in the source's units (kPa, °C)."""
    pcf = 3e-7 * pm_kpa ** 2 - 0.0009 * pm_kpa + 1.6101
    tcf = 2e-8 * tev_c ** 2 - 0.0006 * tev_c + 1.0047
    return 0.296 * ps_kpa ** 1.19 / pev_kpa ** 1.04 * (pm_kpa / pev_kpa) ** 0.015 * pcf / tcf


@pytest.mark.parametrize("pm, pev, ps, tev", [
    (1000.0, 20.0, 40.0, 60.06), (800.0, 31.2, 60.0, 70.0), (2500.0, 10.0, 45.0, 45.8),
    (150.0, 12.0, 25.0, 49.4), (3500.0, 5.0, 29.0, 32.9),
])
def test_el_dessouky_reproduces_the_recalled_formula(pm, pev, ps, tev):
    # El-Dessouky (1997) in El-Dessouky & Ettouney (2002), from memory: an independent
    # transcription in kPa and °C; checks our SI conversion and arithmetic, not the source.
    ours = el_dessouky_1997(pm * 1e3, pev * 1e3, ps * 1e3, tev + 273.15)
    assert ours == pytest.approx(el_dessouky_plain(pm, pev, ps, tev), rel=1e-12)


def reversible_entrainment(pm, ps, pd):
    """Largest entrainment ratio the second law allows (zero entropy production), IAPWS-95."""
    from scipy.optimize import brentq
    hm, sm = PropsSI("H", "P", pm, "Q", 1, "Water"), PropsSI("S", "P", pm, "Q", 1, "Water")
    hs, ss = PropsSI("H", "P", ps, "Q", 1, "Water"), PropsSI("S", "P", ps, "Q", 1, "Water")

    def generation(w):
        hd = (hm + w * hs) / (1 + w)
        return (1 + w) * PropsSI("S", "P", pd, "H", hd, "Water") - sm - w * ss

    return brentq(generation, 1e-3, 100.0)


@pytest.mark.parametrize("pm, ps, cr", [
    (1000e3, 20e3, 2.0), (800e3, 31.2e3, 1.9), (2500e3, 10e3, 4.5), (200e3, 20e3, 2.0), (3500e3, 5e3, 5.8),
])
def test_el_dessouky_respects_the_second_law(pm, ps, cr):
    # The reversible limit from IAPWS-95 entropies (CoolProp): a real jet entrains less.
    w = 1.0 / el_dessouky_1997(pm, ps, cr * ps, float(water.saturation_temperature(ps)))
    limit = reversible_entrainment(pm, ps, cr * ps)
    assert 0.05 * limit < w < limit


def test_el_dessouky_trends():
    t = 333.2
    # more compression costs more motive steam
    ratios = [el_dessouky_1997(1000e3, 20e3, cr * 20e3, t) for cr in (1.9, 2.5, 3.5, 5.0)]
    assert ratios == sorted(ratios)
    # higher motive pressure needs less motive steam (100-1000 kPa)
    ratios = [el_dessouky_1997(pm, 20e3, 40e3, t) for pm in (150e3, 300e3, 600e3, 1000e3)]
    assert ratios == sorted(ratios, reverse=True)


def test_el_dessouky_magnitude_is_common_practice():
    # Common practice (from memory): with 8-10 bar motive steam and a compression ratio of
    # about 2, a thermocompressor entrains roughly 0.5-1.5 kg of vapour per kg of steam.
    for pm in (800e3, 1000e3):
        w = 1.0 / el_dessouky_1997(pm, 20e3, 40e3, 333.2)
        assert 0.5 < w < 1.5


def test_el_dessouky_validity_is_declared():
    assert check_call(el_dessouky_1997, compression_ratio=1.5) == [
        "el_dessouky_1997: compression_ratio = 1.5 outside compression_ratio in [1.81, 6] -"]
    assert check_call(el_dessouky_1997, p_motive=50e3)
    assert not check_call(el_dessouky_1997, p_motive=1e6, compression_ratio=2.0, motive_ratio=1.2)


# ---------------------------------------------------------------------------
# The thermocompressor in a flowsheet


def test_thermocompressor_mass_and_energy(tvr):
    motive, suction, discharge = (tvr.streams[n] for n in ("motive", "suction", "discharge"))
    unit = tvr.units["TVR"]
    m_m, m_s, m_d = (s.values["flow"] for s in (motive, suction, discharge))
    assert m_d == pytest.approx(m_m + m_s, rel=1e-12)
    assert discharge.enthalpy_flow == pytest.approx(motive.enthalpy_flow + suction.enthalpy_flow, rel=1e-10)
    assert unit.quantities["entrainment_ratio"] == pytest.approx(m_s / m_m, rel=1e-10)
    # the correlation's value at the solved pressures, recomputed from the plain formula
    pm, ps, pd = (s.values["pressure"] / 1e3 for s in (motive, suction, discharge))
    ra = el_dessouky_plain(pm, ps, pd, suction.values["temperature"] - 273.15)
    assert m_m / m_s == pytest.approx(ra, rel=1e-9)
    # the discharge is superheated: IAPWS-95 (CoolProp) temperature of the mixed enthalpy
    h_d = discharge.enthalpy_flow / m_d
    t_d = PropsSI("T", "P", discharge.values["pressure"], "H", h_d, "Water")
    assert discharge.values["temperature"] == pytest.approx(t_d, abs=0.05)
    t_sat = PropsSI("T", "P", discharge.values["pressure"], "Q", 1, "Water")
    assert unit.quantities["discharge_superheat"] == pytest.approx(t_d - t_sat, abs=0.05)
    assert unit.quantities["discharge_superheat"] > 10.0
    # the adiabatic mixing produces entropy
    assert unit.figures["entropy_generation"] > 0


def test_discharge_superheat_is_carried_into_the_effect(tvr):
    discharge = tvr.streams["discharge"]
    condensate = tvr.streams["E1.condensate_out"]
    # E1's duty is the discharge's enthalpy down to saturated condensate, superheat included
    duty = discharge.values["flow"] * (discharge.specific_enthalpy - condensate.specific_enthalpy)
    assert tvr.units["E1"].quantities["duty"] == pytest.approx(duty, rel=1e-10)
    latent_only = discharge.values["flow"] * float(water.latent_heat(condensate.values["temperature"]))
    assert duty > latent_only * 1.01


def test_thermocompressor_balances_close(tvr):
    for name in ("water", "solids", "energy"):
        assert tvr.balances[name].closes, name
    figures = key_figures(tvr)
    assert figures["motive_steam"].value == pytest.approx(tvr.streams["motive"].values["flow"])


def test_entrainment_outside_the_correlation_range_is_flagged():
    # E2 at 35 kPa against a 50 kPa discharge: compression ratio 1.43, below 1.81
    fs = flowsheet(TVR, file="tvr_low_ratio.toml", E2__pressure="35 kPa")
    solution = solve(fs)
    assert any(w.startswith("TVR entrainment: compression_ratio = 1.4") for w in solution.warnings), \
        solution.warnings
    with pytest.raises(OutOfRangeError, match=r"tvr_low_ratio\.toml: unit 'TVR': key 'compression_ratio'"):
        solve(flowsheet(TVR, file="tvr_low_ratio.toml", E2__pressure="35 kPa"), range_policy="refuse")


def test_performance_point_method():
    fs = flowsheet(TVR, TVR__method="performance_point", TVR__rated_entrainment_ratio=0.8,
                   TVR__rated_suction_pressure="20 kPa")
    solution = solve(fs)
    assert solution.converged, solution.problems
    assert solution.units["TVR"].quantities["entrainment_ratio"] == pytest.approx(0.8)
    assert not any("TVR" in w for w in solution.warnings), solution.warnings
    # away from the rated suction pressure, the operating point is flagged
    fs = flowsheet(TVR, TVR__method="performance_point", TVR__rated_entrainment_ratio=0.8,
                   TVR__rated_suction_pressure="30 kPa")
    solution = solve(fs)
    assert any(w.startswith("TVR off its performance point: suction_pressure") for w in solution.warnings)


def test_a_performance_point_beyond_the_second_law_is_flagged():
    # 5 kg entrained per kg of 10 bar steam at a compression ratio of 2.5: above the
    # reversible limit (about 3.5, CoolProp), so the mixing would destroy entropy
    assert reversible_entrainment(1000e3, 20e3, 50e3) < 5.0
    fs = flowsheet(TVR, TVR__method="performance_point", TVR__rated_entrainment_ratio=5.0)
    solution = solve(fs)
    assert any(w.startswith("TVR second law: entropy_generation = -") for w in solution.warnings), \
        solution.warnings


def test_specified_method_leaves_the_ratio_to_the_specification():
    fs = flowsheet(TVR, TVR__method="specified", TVR__entrainment_ratio=0.9)
    solution = solve(fs)
    assert solution.converged, solution.problems
    assert solution.units["TVR"].quantities["entrainment_ratio"] == pytest.approx(0.9)


def test_thermocompressor_setting_errors():
    with pytest.raises(InputError, match=r"unit 'TVR': key 'rated_entrainment_ratio'"):
        flowsheet(TVR, TVR__method="performance_point")
    with pytest.raises(InputError, match=r"unit 'TVR': key 'method'.*el_dessouky_1997, performance_point, "
                                         r"specified"):
        flowsheet(TVR, TVR__method="power_1994")
    assert set(ENTRAINMENT_METHODS) == {"el_dessouky_1997", "performance_point", "specified"}


def test_thermocompressor_discharge_below_suction_is_flagged():
    # discharge at 15 kPa, suction from E2 at 20 kPa
    fs = flowsheet(TVR, TVR__method="specified", TVR__entrainment_ratio=0.9, TVR__discharge_pressure="15 kPa")
    solution = solve(fs, method="newton")
    assert not solution.converged
    assert any(w.startswith("TVR compression: compression_ratio = 0.75") for w in solution.warnings)


# ---------------------------------------------------------------------------
# The vapour user


def test_vapour_user_duty_and_balance():
    text = TVR.replace('[units.condenser]', '''[units.bleed]
type = "splitter"
stream = "vapour"

[units.user]
type = "vapour_user"
duty = "150 kW"

[units.condenser]''').replace('V1 = "E1.vapour_out -> E2.heating_in"', '''V1 = "E1.vapour_out -> bleed.in"
V1E = "bleed.out1 -> E2.heating_in"
V1U = "bleed.out2 -> user.vapour_in"''')
    solution = solve(flowsheet(text))
    assert solution.converged, solution.problems
    vap, cond = solution.streams["V1U"], solution.streams["user.condensate_out"]
    assert solution.units["user"].quantities["duty"] == pytest.approx(150e3, rel=1e-9)
    assert vap.values["flow"] * (vap.specific_enthalpy - cond.specific_enthalpy) == pytest.approx(150e3, rel=1e-9)
    # condensate saturated at the vapour's pressure: IAPWS-95 (CoolProp), < 0.01 K from IF97
    assert cond.values["temperature"] == pytest.approx(PropsSI("T", "P", vap.values["pressure"], "Q", 0, "Water"),
                                                       abs=0.01)
    assert solution.balances["energy"].closes
    assert key_figures(solution)["vapour_user_heat"].value == pytest.approx(150e3)
    # the bleed costs live steam: more than without it
    assert solution.streams["motive"].values["flow"] > solve(flowsheet(TVR)).streams["motive"].values["flow"]


def test_superheated_motive_steam_is_carried_through(tvr):
    # 10 bar steam at 220 °C (40 K superheat) instead of saturated: the jet's energy balance
    # carries the extra enthalpy into the discharge and into E1
    solution = solve(flowsheet(TVR, steam__temperature="220 degC"))
    assert solution.converged, solution.problems
    motive = solution.streams["motive"]
    # IAPWS-95 (CoolProp) enthalpy of the motive steam; IF97 region 2 agrees to about 1e-4
    assert motive.specific_enthalpy == pytest.approx(
        PropsSI("H", "T", 493.15, "P", 1e6, "Water"), rel=IF97_VS_IAPWS95)
    assert solution.units["TVR"].quantities["discharge_superheat"] > \
        tvr.units["TVR"].quantities["discharge_superheat"] + 5.0
    assert solution.balances["energy"].closes
