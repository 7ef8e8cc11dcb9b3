"""Specifications and diagnostics: plant-word messages, the advice they give, per-unit degrees of
freedom, numerical dependencies, failed-solve explanations, and continuation.

The Dulmage-Mendelsohn decomposition itself is tested against scipy in
tests/test_structure.py. Here the analysis runs on small hand-built
flowsheets whose answer is known by construction, and every piece of
advice is *followed*: each value the message says to free (or to fix) is
freed (or fixed) and the specification must then be square and sound,
while a value it does not name must not repair it. A message that names
the wrong values fails these tests.

Continuation is tested on a case where our damped Newton honestly fails:
50 % caustic soda in a three-effect backward-feed train with little
temperature span left. The automatic initial guess places the effects as if
the liquor boiled like water, but the boiling-point rise of 50 % NaOH is
about 40 K (Geankoplis, 4th ed., Fig. 8.4-2 Dühring lines [read for 30 %,
from memory for 50 %]), so Newton starts far away and stalls.
"""

from __future__ import annotations

import re
import warnings

import numpy as np
import pytest

from balance.equations.diagnostics import check_report, describe_failure, unit_degrees_of_freedom
from balance.equations.model import compile_flowsheet
from balance.equations.structure import analyse, describe_imbalance, numerical_dependencies
from balance.flowsheet.file_format import from_dict, load
from balance.properties import water
from balance.properties.liquors import LiquorWarning
from balance.solve import Solver, solve
from balance.solve.continuation import STRATEGIES, bpr_homotopy_model, continuation_solve
from balance.solve.newton import CompiledSystem, bounded_feasibility, newton

DEMO = "flowsheets/skim_milk_3_effect_forward.toml"


def _single_effect(**changes):
    """One effect on steam, surface condenser, product solids fixed (invented data)."""
    data = {
        "flowsheet": {"title": "single effect (test)"},
        "units": {
            "feed": {"type": "feed", "liquor": "sucrose_simple", "flow": "10 t/h", "solids": "10 %",
                     "temperature": "60 degC"},
            "steam": {"type": "steam_supply", "pressure": "2 bar"},
            "E1": {"type": "effect", "U": "2000 W/m2/K", "pressure": "30 kPa"},
            "condenser": {"type": "condenser"},
            "cooling": {"type": "cooling_water", "temperature": "25 degC"},
            "product": {"type": "product", "solids": "40 %"},
        },
        "streams": {"feed": "feed.out -> E1.liquor_in", "steam": "steam.out -> E1.heating_in",
                    "concentrate": "E1.liquor_out -> product.in", "vapour": "E1.vapour_out -> condenser.vapour_in",
                    "cooling_water": "cooling.out -> condenser.cooling_in"},
        "specification": {"fix": {"condenser.cooling_out.temperature": "35 degC"}},
    }
    for unit, keys in changes.items():
        data["units"][unit].update(keys)
    return from_dict(data, file="single_effect.toml")


def _sound(fs) -> bool:
    model = compile_flowsheet(fs, require_square=False)
    report = analyse(model)
    return model.n_unknowns == model.n_equations and report.structurally_sound


# ---------------------------------------------------------------------------
# The specification as given is sound


def test_the_base_single_effect_is_square_and_sound():
    fs = _single_effect()
    assert _sound(fs)
    text, ready = check_report(fs)
    assert ready and "ready to solve" in text


def test_unit_degrees_of_freedom_add_up_and_count_the_effect_equations():
    fs = _single_effect()
    model = compile_flowsheet(fs)
    table = unit_degrees_of_freedom(model)
    # The balance column sums to the overall degrees of freedom (zero when square).
    assert sum(n_x - n_g for n_x, n_g in table.values()) == model.n_unknowns - model.n_equations == 0
    # An effect writes the ten equations listed in balance/unitops/effect.py's docstring.
    assert table["E1"][1] == 10
    # The check report shows what is fixed at each unit.
    text, _ = check_report(fs)
    assert re.search(r"^E1\s+\d+\s+10\s+[+-]\d+\s+product.solids, U, pressure$", text, re.M), text
    assert re.search(r"^feed\s+0\s+0\s+\+0\s+flow, solids, temperature$", text, re.M), text


# ---------------------------------------------------------------------------
# Over- and under-specified, square but singular: the advice is followed


def test_structurally_singular_single_effect_names_both_ends_in_plant_words():
    # E1's area fixed as well as its pressure, U, steam and product solids: its temperature
    # difference is fixed twice over; the condenser's cooling-water outlet freed: nothing sizes it.
    fs = _single_effect(E1={"area": "50 m2"})
    fs.free("condenser.cooling_out.temperature")
    model = compile_flowsheet(fs, require_square=False)
    assert model.n_unknowns == model.n_equations
    report = analyse(model)
    text = describe_imbalance(model, report)
    assert "structurally singular" in text
    assert "E1: area, U and pressure are all fixed, so its temperature difference is over-specified" in text
    assert re.search(r"nothing fixes the area of condenser", text), text
    (over,), (under,) = report.over_blocks, report.under_blocks
    assert over.count == 1 and under.count == 1
    assert {"E1.area", "E1.U", "E1.pressure", "steam.pressure"} <= set(over.candidates)
    assert {"condenser.area", "cooling.flow", "condenser.cooling_out.temperature"} <= set(under.candidates)


@pytest.mark.parametrize("to_free", ["E1.area", "E1.U", "E1.pressure", "steam.pressure", "product.solids"])
@pytest.mark.parametrize("to_fix", [("cooling.flow", 30.0), ("condenser.area", 40.0)])
def test_following_the_advice_repairs_the_specification(to_free, to_fix):
    fs = _single_effect(E1={"area": "50 m2"})
    fs.free("condenser.cooling_out.temperature")
    model = compile_flowsheet(fs, require_square=False)
    report = analyse(model)
    assert to_free in report.over_blocks[0].candidates
    assert to_fix[0] in report.under_blocks[0].candidates
    fs.free(to_free)
    fs.fix(*to_fix)
    assert _sound(fs)


@pytest.mark.parametrize("not_advised", ["cooling.temperature", "condenser.U"])
def test_freeing_a_value_not_named_does_not_repair_it(not_advised):
    fs = _single_effect(E1={"area": "50 m2"})
    fs.free("condenser.cooling_out.temperature")
    model = compile_flowsheet(fs, require_square=False)
    assert not_advised not in analyse(model).over_blocks[0].candidates
    fs.free(not_advised)
    fs.fix("cooling.flow", 30.0)
    assert not _sound(fs)


def test_two_mistakes_in_two_corners_are_reported_apart():
    # Over-specified in the effect, under-specified at the condenser: two blocks, not one.
    fs = _single_effect(E1={"area": "50 m2"})
    fs.free("condenser.cooling_out.temperature")
    report = analyse(compile_flowsheet(fs, require_square=False))
    assert len(report.over_blocks) == 1 and len(report.under_blocks) == 1
    over_units = {p.split(".")[0] for p in report.over_blocks[0].candidates}
    under_units = {p.split(".")[0] for p in report.under_blocks[0].candidates}
    assert "condenser" not in over_units and "E1" not in under_units


def test_a_same_group_over_fixed_names_the_requirement():
    fs = load(DEMO)
    fs.fix("E1.area", 137.0)
    fs.fix("E2.area", 137.0)
    fs.free("E3.pressure")
    text = describe_imbalance(compile_flowsheet(fs, require_square=False))
    assert "E1.area and E2.area are fixed and also required by 'E2.area equals E1.area'" in text


def test_an_extra_duty_names_the_effect_and_its_temperature_difference():
    fs = load(DEMO)
    fs.fix("E2.duty", 3.0e6)
    text = describe_imbalance(compile_flowsheet(fs, require_square=False))
    assert text.startswith("too many specifications: 39 equations but 38 unknowns; free 1 value")
    assert "E2: duty and U are both fixed, so its temperature difference is over-specified" in text
    assert re.search(r"free one of: E2\.U, E2\.duty, ", text), text


# ---------------------------------------------------------------------------
# A relation among fixed values only: the solids balance from feed to product


def test_feed_and_product_rates_and_solids_all_fixed_is_found_numerically():
    # F x_F = P x_P: the solids balances of the three effects add up to a relation among four
    # fixed values. Freeing E1.U makes the count square and the structure sound, so only the
    # numbers can tell (known by construction).
    fs = load(DEMO)
    fs.fix("concentrate.flow", 4000.0 / 3600.0)
    fs.free("E1.U")
    model = compile_flowsheet(fs, require_square=False)
    assert not analyse(model).dependencies          # the structure alone cannot see it
    report = analyse(model, numerical=True)
    assert model.n_unknowns == model.n_equations and report.structurally_sound
    assert report.numerically_singular
    (dep,) = [d for d in report.dependencies if d.kind == "equations"]
    assert sorted(model.equations[i].label for i in dep.equations) == \
        ["E1: solids balance", "E2: solids balance", "E3: solids balance"]
    assert set(dep.fixed) == {"feed.flow", "feed.solids", "concentrate.flow", "concentrate.solids"}
    text, ready = check_report(fs)
    assert not ready
    assert "the solids balance of E1, E2 and E3 together leave a relation among fixed values only" in text


def test_no_numerical_dependency_in_a_good_specification():
    for path in (DEMO, "flowsheets/debottleneck_evaporator.toml"):
        model = compile_flowsheet(load(path))
        assert not [d for d in numerical_dependencies(model) if d.kind == "equations"], path


# ---------------------------------------------------------------------------
# A failed solve explained


def test_describe_failure_names_a_crossed_driving_force_and_the_worst_equations():
    fs = load(DEMO)
    solver = Solver(fs)
    solution = solver.solve()
    x = np.array(solution.x, dtype=float)
    index = [v.path for v in solver.model.unknowns].index("L2.temperature")
    x[index] = 400.0      # E2's liquor far hotter than the vapour that heats it (87 °C)
    report = describe_failure(solver.model, x)
    assert any(cause.startswith("E2: the driving force is") and "colder side" in cause for cause in report.causes)
    assert report.worst and all(label.split(":")[0] in solver.model.flowsheet.units for label, _ in report.worst)
    assert max(report.by_unit, key=report.by_unit.get) in ("E2", "E3")
    assert "likely cause" in report.text


# ---------------------------------------------------------------------------
# Continuation rescues a case where Newton fails


def _caustic(steam_pressure):
    """Three effects, backward feed, 10 % -> 50 % NaOH, last effect at 12 kPa (invented data)."""
    data = {
        "flowsheet": {"title": "caustic soda, backward feed (test)"},
        "units": {
            "feed": {"type": "feed", "liquor": "sodium_hydroxide", "flow": "10 t/h", "solids": "10 %",
                     "temperature": "40 degC"},
            "steam": {"type": "steam_supply", "pressure": steam_pressure},
            "E1": {"type": "effect", "U": "2000 W/m2/K"},
            "E2": {"type": "effect", "U": "1500 W/m2/K"},
            "E3": {"type": "effect", "U": "1000 W/m2/K", "pressure": "12 kPa"},
            "condenser": {"type": "condenser"},
            "cooling": {"type": "cooling_water", "temperature": "25 degC"},
            "concentrate": {"type": "product", "solids": "50 %"},
        },
        "streams": {"feed": "feed.out -> E3.liquor_in", "steam": "steam.out -> E1.heating_in",
                    "L3": "E3.liquor_out -> E2.liquor_in", "V1": "E1.vapour_out -> E2.heating_in",
                    "L2": "E2.liquor_out -> E1.liquor_in", "V2": "E2.vapour_out -> E3.heating_in",
                    "concentrate": "E1.liquor_out -> concentrate.in", "V3": "E3.vapour_out -> condenser.vapour_in",
                    "cooling_water": "cooling.out -> condenser.cooling_in"},
        "specification": {"same": [["E1.area", "E2.area", "E3.area"]],
                          "fix": {"condenser.cooling_out.temperature": "35 degC"}},
    }
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", LiquorWarning)
        return from_dict(data, file="caustic.toml")


@pytest.fixture(scope="module")
def caustic_12():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", LiquorWarning)
        return Solver(_caustic("1.2 bar"))


def _assert_a_physical_caustic_plant(solution):
    assert solution.converged, solution.problems
    # Mass balance: water removed = F (1 - x_F / x_P) = 10 t/h (1 - 0.1 / 0.5) = 8 t/h exactly.
    evaporated = sum(solution.value(f"{e}.vapour_out.flow") for e in ("E1", "E2", "E3"))
    assert evaporated * 3.6 == pytest.approx(8.0, rel=1e-9)
    # The temperature span between live steam and the last effect's saturation temperature
    # is shared by the driving forces and the boiling-point rises (the vapour leaves each
    # effect superheated by its rise and condenses at saturation in the next) [common practice].
    span = float(water.saturation_temperature(solution.value("steam.pressure"))) - \
        float(water.saturation_temperature(solution.value("E3.pressure")))
    shared = sum(solution.units[e].figures["driving_force"] + solution.units[e].figures["boiling_point_rise"]
                 for e in ("E1", "E2", "E3"))
    assert shared == pytest.approx(span, abs=1e-6)
    # 50 % NaOH boils about 40 K above water at these pressures (Geankoplis Fig. 8.4-2, from memory).
    assert 35.0 < solution.units["E1"].figures["boiling_point_rise"] < 48.0


def test_plain_newton_fails_on_the_strong_caustic_case(caustic_12):
    raw = newton(caustic_12.system, caustic_12.guess(), caustic_12.p)
    assert not raw.converged


@pytest.mark.parametrize("strategy", list(STRATEGIES))
def test_each_continuation_rescues_it_and_agrees_with_the_bounded_solve(caustic_12, strategy):
    x0 = caustic_12.guess()
    result = continuation_solve(caustic_12.system, x0, caustic_12.p, strategies=(strategy,),
                                guess=lambda _p: caustic_12.guess())
    assert result.converged, result.attempts
    assert result.raw.method == f"continuation ({strategy})"
    solution = caustic_12._result(result.raw, result.attempts, "warn")
    _assert_a_physical_caustic_plant(solution)
    # A second method on the same equations: IPOPT within bounds, polished by Newton.
    bounded = bounded_feasibility(caustic_12.system, x0, caustic_12.p)
    polished = newton(caustic_12.system, bounded.x, caustic_12.p)
    assert polished.converged
    np.testing.assert_allclose(result.raw.x, polished.x, rtol=1e-7, atol=1e-9)


def test_the_solver_falls_back_to_continuation_when_newton_and_ipopt_both_fail():
    # With steam at 1.1 bar only about 1 K of driving force is left per effect: Newton stalls
    # and IPOPT declares the problem infeasible from the guess, yet a plant exists.
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", LiquorWarning)
        fs = _caustic("1.1 bar")
        solver = Solver(fs)
        x0 = solver.guess()
        assert not newton(solver.system, x0, solver.p).converged
        assert not bounded_feasibility(solver.system, x0, solver.p).converged
        solution = solver.solve()
    assert solution.method.startswith("continuation"), solution.attempts
    assert any(a.startswith("continuation on the") and a.endswith(")") for a in solution.attempts)
    _assert_a_physical_caustic_plant(solution)
    assert all(0.0 < solution.units[e].figures["driving_force"] < 1.0 for e in ("E1", "E2", "E3"))


def test_the_homotopy_model_is_the_real_model_at_one_and_boils_like_water_at_zero(caustic_12):
    model = caustic_12.model
    h_model = bpr_homotopy_model(model)
    assert [v.path for v in h_model.unknowns] == [v.path for v in model.unknowns]
    assert h_model.parameters[-1].path == "homotopy.bpr_scale"
    x = caustic_12.guess()
    g_real = np.asarray(CompiledSystem(model).g_function(x, caustic_12.p), dtype=float).ravel()
    h_system = CompiledSystem(h_model)
    g_one = np.asarray(h_system.g_function(x, np.append(caustic_12.p, 1.0)), dtype=float).ravel()
    np.testing.assert_allclose(g_one, g_real, rtol=1e-12, atol=1e-12)
    # At zero the boiling temperature equation is T = T_sat(p): no rise.
    import casadi as ca
    labels = [e.label for e in h_model.equations]
    i = labels.index("E1: boiling temperature")
    g_zero = np.asarray(h_system.g_function(x, np.append(caustic_12.p, 0.0)), dtype=float).ravel()
    t_liquor = x[[v.path for v in model.unknowns].index("concentrate.temperature")]
    p_e1 = x[[v.path for v in model.unknowns].index("E1.pressure")]
    assert g_zero[i] == pytest.approx(t_liquor - float(water.saturation_temperature(p_e1)), abs=1e-9)
    assert isinstance(h_model.p, ca.SX)


def test_an_unknown_strategy_lists_the_valid_ones(caustic_12):
    from balance.errors import InputError
    with pytest.raises(InputError, match="unknown continuation 'magic'; valid: boiling-point rise"):
        continuation_solve(caustic_12.system, caustic_12.guess(), caustic_12.p, strategies=("magic",))


def test_a_good_case_never_needs_continuation():
    solution = solve(load(DEMO))
    assert solution.converged and solution.method == "newton"
    assert not any("continuation" in a for a in solution.attempts)
