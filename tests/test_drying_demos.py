"""The drying demos: closure of every balance computed here from the streams, float re-evaluation, design and rating.

Every flowsheet in flowsheets/ with a dryer is solved; its dry-air, water,
solids and energy balances over the flowsheet boundary are summed here from
the stream results and from each unit's power crossing the boundary
(written out per unit type below, independently of the solver's own
check). The dryers' energy balances are re-evaluated with the plain-float
property functions (STYLE point 5: compiled equations against a float
evaluation). The evaporator-to-powder line must split its water removal
between the effects' vapour and the dryers' exhaust.
"""

from __future__ import annotations

import warnings
from pathlib import Path

import pytest

from balance.analysis.key_figures import key_figures
from balance.flowsheet.file_format import load
from balance.properties import humid_air
from balance.properties.liquors import LiquorWarning
from balance.solve import solve
from balance.unitops.drying_streams import powder_enthalpy

FLOWSHEETS = Path(__file__).resolve().parent.parent / "flowsheets"


def _has_dryer(path) -> bool:
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", LiquorWarning)     # NaOH demos: heat of dilution not modelled
        return any(getattr(u, "dries", False) for u in load(path).units.values())


DRYING_DEMOS = sorted(p for p in FLOWSHEETS.glob("*.toml") if _has_dryer(p))


def test_there_are_drying_demos():
    names = {p.stem for p in DRYING_DEMOS}
    assert {"skim_milk_powder_three_stage_dryer", "skim_milk_powder_line",
            "whole_milk_powder_heat_recovery", "sugar_fluid_bed_recirculation"} <= names


@pytest.fixture(scope="module", params=DRYING_DEMOS, ids=lambda p: p.stem)
def solved(request):
    solution = solve(load(request.param))
    assert solution.converged, (request.param.name, solution.problems, solution.attempts)
    return solution


def _boundary_power(solution) -> float:
    """Power entering across the boundary at units, [W], by unit type (not the solver's sum)."""
    total = 0.0
    for u in solution.units.values():
        unit = solution.flowsheet.unit(u.name)
        if u.type_name == "fan":
            total += u.quantities["electrical_power" if unit.setting("motor_in_airstream") else "shaft_power"]
        elif u.type_name in ("electric_air_heater", "indirect_fired_air_heater"):
            total += u.quantities["duty"]
        elif u.type_name in ("steam_air_heater", "direct_fired_air_heater"):
            total -= unit.setting("heat_loss_fraction") * u.quantities["duty"]
        elif getattr(unit, "dries", False):
            total -= u.quantities["heat_loss"]
            if unit.setting("indirect_heating") == "given":
                total += u.quantities["indirect_heat"]
        elif u.type_name == "effect":
            total -= unit.setting("heat_loss_fraction") * u.quantities["duty"]
    return total


@pytest.mark.parametrize("what", ["water", "solids", "dry air", "energy"])
def test_boundary_balance_closes(solved, what):
    fs = solved.flowsheet
    into = out = 0.0
    for s in solved.streams.values():
        value = {"water": s.water_flow, "solids": s.solids_flow, "dry air": s.dry_air_flow,
                 "energy": s.enthalpy_flow}[what]
        if fs.unit(s.source).boundary == "source":
            into += value
        if fs.unit(s.target).boundary == "sink":
            out += value
    if what == "energy":
        into += _boundary_power(solved)
        scale = max(abs(into), abs(out), 1e6)
    else:
        scale = max(abs(into), abs(out))
    assert scale > 0
    assert abs(into - out) / scale < 1e-9, (what, into, out)


def test_dryer_energy_balances_with_float_properties(solved):
    fs = solved.flowsheet
    for name, unit in fs.units.items():
        if not getattr(unit, "dries", False):
            continue
        h_in = h_out = 0.0
        for s in solved.streams.values():
            v = s.values
            if s.kind == "air":
                h = v["flow"] * float(humid_air.enthalpy(v["temperature"], v["humidity"]))
            elif s.kind in ("powder", "liquor"):
                liquor = solved.model.states[s.name].liquor
                h = v["flow"] * (float(powder_enthalpy(liquor, v["solids"], v["temperature"])) if s.kind == "powder"
                                 else float(liquor.enthalpy(v["solids"], v["temperature"])))
            else:
                h = s.enthalpy_flow
            if s.target == name:
                h_in += h
            if s.source == name:
                h_out += h
        u = solved.units[name]
        h_in += u.quantities.get("indirect_heat", 0.0) if unit.setting("indirect_heating") == "given" else 0.0
        residual = h_in - h_out - u.quantities["heat_loss"]
        assert abs(residual) < 1e-9 * max(h_in, 1e6), (name, residual)


def test_line_splits_water_between_evaporator_and_dryer():
    solution = solve(load(FLOWSHEETS / "skim_milk_powder_line.toml"))
    figures = key_figures(solution)
    vapour = sum(u.figures["evaporation"] for u in solution.units.values() if u.type_name == "effect")
    exhaust = sum(u.figures["evaporation"] for u in solution.units.values()
                  if getattr(solution.flowsheet.unit(u.name), "dries", False))
    total = figures["water_evaporated"].value
    # 20 t/h at 9 % solids to powder at 3.5 % moisture: 20000 (1 - 0.09/0.965) kg/h removed (exact)
    assert total * 3600 == pytest.approx(20000 * (1 - 0.09 / 0.965), rel=1e-9)
    assert figures["evaporator_water_removed"].value == pytest.approx(vapour, rel=1e-9)
    assert figures["dryer_water_removed"].value == pytest.approx(exhaust, rel=1e-9)
    assert vapour + exhaust == pytest.approx(total, rel=1e-9)
    assert figures["evaporator_share"].value + figures["dryer_share"].value == pytest.approx(1.0, rel=1e-12)
    # 9 % -> 48 % in the evaporator: 20000 (1 - 0.09/0.48) kg/h (exact)
    assert vapour * 3600 == pytest.approx(20000 * (1 - 0.09 / 0.48), rel=1e-9)
    # the evaporator removes water for far less heat than the dryer (common practice: a
    # three-effect train near 800-900 kJ/kg, a spray dryer 3500-5500 kJ/kg)
    assert figures["heat_per_water"].value < 0.3 * figures["dryer_specific_heat"].value


def test_dryer_design_and_rating_agree():
    path = FLOWSHEETS / "skim_milk_powder_line.toml"
    design = solve(load(path))
    fs = load(path)
    fs.fix("ambient.flow", design.value("ambient.flow"))
    fs.free("chamber.outlet_temperature")
    rating = solve(fs)
    assert rating.converged
    assert rating.value("chamber.outlet_temperature") == pytest.approx(design.value("chamber.outlet_temperature"),
                                                                      abs=1e-6)
    assert rating.value("chamber.air_out.humidity") == pytest.approx(design.value("chamber.air_out.humidity"),
                                                                     rel=1e-8)


def test_drying_caution_and_key_figures_present(solved):
    from balance.report.cautions import DRYING, cautions_for
    assert DRYING in cautions_for(solved.flowsheet)
    figures = key_figures(solved)
    for name in ("dryer_water_removed", "dryer_heat_consumption", "dryer_specific_heat", "dryer_thermal_efficiency"):
        assert name in figures
    assert 0.3 < figures["dryer_thermal_efficiency"].value < 1.0
    for u in solved.units.values():
        if u.type_name == "fan":
            assert figures[f"{u.name}.volume_flow"].value > 0
