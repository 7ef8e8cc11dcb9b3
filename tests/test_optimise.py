"""Optimisation over the flowsheet's own equations: checked against brute force and finite differences.

* An interior optimum (the last-effect pressure that balances effect area
  against condenser area and steam) against a brute-force search of the
  same small problem: square solves on a grid, then Brent's method
  (scipy.optimize.minimize_scalar) on the square-solve cost.
* A constrained optimum (most feed an existing evaporator can take within
  its limits, the cooling-water flow also free) against brute force: for
  each cooling-water flow on a grid, bisection on the feed rate with square
  solves until the first limit binds.
* Every multiplier turned into "what relaxing the limit is worth" against
  central finite differences of the re-optimised objective.
* The plant words of a binding live-steam limit against the engineer's
  estimate: feed per kg of steam = steam economy / (1 - x_feed / x_product)
  [common practice: a triple effect has an economy of about 2.5-2.7].

Tolerances: the IPOPT optimum and the brute force agree as closely as the
brute force is converged (bisection to 1e-7 relative, Brent to 1e-4 kPa),
and finite differences of an optimum agree with its multipliers to the
truncation error of the step (1e-3 relative).
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.optimize import minimize_scalar

from balance.analysis.optimise import (Optimiser, annuity_factor, compile_expression, read_limits)
from balance.equations.model import compile_flowsheet
from balance.errors import InputError, SpecificationError
from balance.flowsheet.file_format import load
from balance.solve import Solver

DESIGN = "flowsheets/skim_milk_3_effect_forward.toml"
EXISTING = "flowsheets/debottleneck_evaporator.toml"
LINE = "flowsheets/debottleneck_evaporator_and_dryer.toml"

ECONOMICS = {"steam_price": "35 / t", "cooling_water_price": "0.05 / t", "operating_hours": "8000 h"}
CAPITAL = {"units": ["E1", "E2", "E3", "condenser"], "per_area": 20000, "exponent": 1.0,
           "interest": "8 %", "life": 15}
AREAS = ("E1", "E2", "E3", "condenser")


# ---------------------------------------------------------------------------
# An interior optimum against brute force


def _annual_cost(solution):
    """The same cost as the "least annual cost" objective, computed from a square solve by hand."""
    energy = 8000 * 3600 * (35e-3 * solution.value("steam.flow") + 0.05e-3 * solution.value("cooling.flow"))
    return energy + annuity_factor(0.08, 15) * sum(20000 * solution.value(f"{u}.area") for u in AREAS)


@pytest.fixture(scope="module")
def last_effect_pressure():
    fs = load(DESIGN)
    fs.extras["economics"] = dict(ECONOMICS)
    optimiser = Optimiser(fs, objective="least annual cost", vary={"E3.pressure": (6.5e3, 30e3)}, limits={},
                          table={"capital": CAPITAL})
    return fs, optimiser, optimiser.solve()


def test_interior_optimum_matches_brute_force(last_effect_pressure):
    fs, _, result = last_effect_pressure
    assert result.converged, result.status
    assert not result.active           # an interior optimum: no bound, no limit
    solver = Solver(fs)
    warm = {}

    def cost(p):
        solver.set("E3.pressure", p)
        solution = solver.solve(warm=warm.get("x"))
        assert solution.converged, solution.problems
        warm["x"] = solution
        return _annual_cost(solution)

    grid = np.linspace(6.5e3, 30e3, 48)
    costs = [cost(p) for p in grid]
    k = int(np.argmin(costs))
    assert 0 < k < len(grid) - 1          # the brute force sees the same interior minimum
    brent = minimize_scalar(cost, bracket=(grid[k - 1], grid[k], grid[k + 1]), tol=1e-9,
                            options={"xtol": 1e-9})
    p_star = result.decisions["E3.pressure"]
    assert p_star == pytest.approx(brent.x, abs=0.2)            # Pa: the cost is flat at the optimum
    assert result.value == pytest.approx(brent.fun, rel=1e-9)
    assert result.value <= min(costs) * (1 + 1e-12)
    # The checked square solve at the optimum is the plant the optimiser found.
    assert result.solution.converged
    assert _annual_cost(result.solution) == pytest.approx(result.value, rel=1e-9)


def test_a_bound_moved_inside_the_interior_optimum_becomes_active_and_is_worth_its_slope(last_effect_pressure):
    fs, optimiser, free = last_effect_pressure
    p_star = free.decisions["E3.pressure"]
    low = p_star + 2000.0
    result = optimiser.solve(decision_bounds={"E3.pressure": (low, 30e3)})
    assert result.converged
    (state,) = result.active
    assert state.name == "E3.pressure (lower bound)" and state.value == pytest.approx(low, rel=1e-9)
    step = 1.0
    up = optimiser.solve(decision_bounds={"E3.pressure": (low + step, 30e3)}).value
    down = optimiser.solve(decision_bounds={"E3.pressure": (low - step, 30e3)}).value
    assert state.sensitivity == pytest.approx((up - down) / (2 * step), rel=1e-3)
    assert state.sensitivity > 0          # pushing the bound up costs money
    assert "one less kPa of E3 pressure would lower the total annualised cost by" in state.words


# ---------------------------------------------------------------------------
# A constrained optimum against brute force


@pytest.fixture(scope="module")
def most_feed():
    fs = load(EXISTING)
    optimiser = Optimiser(fs)          # [optimise]: most feed, feed and cooling-water flow free
    return fs, optimiser, optimiser.solve()


def _largest_feed(fs, cooling_flow, limits):
    """Brute force: bisection on the feed rate with square solves until the first limit binds."""
    solver = Solver(fs)
    solver.set("cooling.flow", cooling_flow)
    model = solver.model
    limits = read_limits(model, limits)
    import casadi as ca
    values = ca.Function("limits", [model.x, model.p], [ca.vertcat(*[l.expression.expr for l in limits])])

    def holds(feed, _warm):
        solver.set("feed.flow", feed)
        solution = solver.solve()       # from the automatic guess: a few Newton steps
        assert solution.converged, solution.problems
        v = np.asarray(values(solution.x, solver.p), dtype=float).ravel()
        return all(l.margin(x) >= 0 for l, x in zip(limits, v)), solution

    low, high = 20000 / 3600, 30000 / 3600
    ok, warm = holds(low, None)
    assert ok
    while high - low > 1e-7 * low:
        mid = 0.5 * (low + high)
        ok, solution = holds(mid, warm)
        if ok:
            low, warm = mid, solution
        else:
            high = mid
    return low


def test_constrained_optimum_matches_brute_force(most_feed):
    fs, optimiser, result = most_feed
    assert result.converged, result.status
    best = max(_largest_feed(fs, cw, fs.extras["limits"]) for cw in np.linspace(250e3, 400e3, 3) / 3600)
    assert result.decisions["feed.flow"] == pytest.approx(best, rel=1e-6)
    assert result.decisions["cooling.flow"] == pytest.approx(400e3 / 3600, rel=1e-9)
    active = {s.name for s in result.active}
    assert active == {"concentrate temperature", "cooling.flow (upper bound)"}
    assert result.solution.converged
    assert result.solution.value("concentrate.temperature") == pytest.approx(62.0 + 273.15, abs=1e-6)


def test_multipliers_match_finite_differences_of_the_optimum(most_feed):
    _, optimiser, result = most_feed
    for state in result.active:
        if state.name.endswith("(upper bound)"):
            step = 10.0 / 3600                       # 10 kg/h of cooling water
            path = state.name.split(" ")[0]
            low, high = result.decision_bounds[path]
            up = optimiser.solve(decision_bounds={path: (low, high + step)}, polish=False).value
            down = optimiser.solve(decision_bounds={path: (low, high - step)}, polish=False).value
        else:
            step = 0.002                             # K; the next limit is 0.05 K away
            up = optimiser.solve(bounds={state.name: state.bound + step}, polish=False).value
            down = optimiser.solve(bounds={state.name: state.bound - step}, polish=False).value
        assert state.sensitivity == pytest.approx((up - down) / (2 * step), rel=1e-3), state.name


def test_a_binding_live_steam_limit_in_plant_words():
    fs = load(EXISTING)
    optimiser = Optimiser(fs, objective="most feed", vary={"feed.flow": (10e3 / 3600, 40e3 / 3600)},
                          limits={"boiler": "live_steam <= 7 t/h"})
    result = optimiser.solve()
    assert result.converged
    (state,) = result.active
    assert state.name == "boiler"
    # The engineer's average: feed per kg steam = economy / (1 - x_F / x_P), about 3.1 for a triple
    # effect [common practice: economy about 2.5-2.7]. In a plant whose areas are fixed the last
    # kg/h of steam buys less than the average: to push more heat through the same areas the steam
    # (and every effect) must run hotter, so part of it goes into sensible heat and a warmer
    # condenser. The marginal value must lie below the average, and not far below.
    solution = result.solution
    economy = (solution.value("feed.flow") - solution.value("concentrate.flow")) / solution.value("steam.flow")
    average = economy / (1 - 0.09 / 0.45)
    assert 2.4 < economy < 2.8
    assert 0.5 * average < state.sensitivity < average
    step = 1.0 / 3600
    up = optimiser.solve(bounds={"boiler": state.bound + step}, polish=False).value
    down = optimiser.solve(bounds={"boiler": state.bound - step}, polish=False).value
    assert state.sensitivity == pytest.approx((up - down) / (2 * step), rel=1e-4)
    expected = f"one more kg/h of live steam would allow {state.sensitivity:.3f} kg/h more feed"
    assert state.words == expected
    assert expected in result.text


def test_energy_cost_of_the_powder_line_and_what_a_stronger_concentrate_is_worth():
    fs = load(LINE)
    optimiser = Optimiser(fs)
    result = optimiser.solve()
    assert result.converged, result.status
    assert result.value < result.base_value
    # Water is cheaper to remove in three effects (about 0.4 kg steam per kg) than in the dryer
    # (about 2 kg steam per kg) [common practice], so the concentrate goes to its upper bound.
    assert result.decisions["dryer.feed_solids"] == pytest.approx(0.50, abs=1e-9)
    state = next(s for s in result.active if s.name == "dryer.feed_solids (upper bound)")
    assert state.sensitivity < 0                    # raising the bound lowers the cost
    step = 1e-4
    low, high = result.decision_bounds["dryer.feed_solids"]
    up = optimiser.solve(decision_bounds={"dryer.feed_solids": (low, high + step)}, polish=False).value
    down = optimiser.solve(decision_bounds={"dryer.feed_solids": (low, high - step)}, polish=False).value
    assert state.sensitivity == pytest.approx((up - down) / (2 * step), rel=1e-3)
    assert state.words.startswith("one more % of dryer feed solids would lower the energy cost by EUR ")
    assert state.words.endswith(" per year")


# ---------------------------------------------------------------------------
# Expressions, limits and the file format


@pytest.fixture(scope="module")
def model():
    return compile_flowsheet(load(EXISTING))


@pytest.mark.parametrize("text, kind", [
    ("E1.area", "area"),
    ("feed.flow", "mass_flow"),
    ("live_steam", "mass_flow"),
    ("E1.driving_force", "temperature_difference"),
    ("E2.vapour_out.pressure", "pressure"),
    ("E1.boiling_temperature - concentrate.temperature", "temperature_difference"),
    ("min(E1.driving_force, E2.driving_force, E3.driving_force)", "temperature_difference"),
    ("E1.duty + E2.duty", "power"),
    ("2 * E1.area", "area"),
    ("E1.duty / E1.area", None),
])
def test_expression_kinds(model, text, kind):
    assert compile_expression(model, text).kind == kind


def test_expression_values_against_a_solve(model):
    solution = Solver(load(EXISTING)).solve()
    import casadi as ca
    e = compile_expression(model, "min(E1.driving_force, E2.driving_force) + abs(-1) + live_steam / 2")
    value = float(ca.Function("e", [model.x, model.p], [e.expr])(solution.x, model.parameter_values()))
    expected = min(solution.units["E1"].figures["driving_force"], solution.units["E2"].figures["driving_force"]) \
        + 1.0 + solution.value("steam.flow") / 2
    assert value == pytest.approx(expected, rel=1e-12)


def test_limits_in_both_forms(model):
    limits = read_limits(model, {
        "a": "E1.driving_force >= 5 K",
        "b": "concentrate.temperature <= 62 degC",
        "c": {"expression": "live_steam", "max": "7 t/h", "min": "1 t/h"},
    })
    assert [(l.name, l.sense) for l in limits] == [("a", "min"), ("b", "max"), ("c (max)", "max"),
                                                  ("c (min)", "min")]
    assert limits[0].bound == 5.0 and limits[1].bound == pytest.approx(335.15)
    assert limits[2].bound == pytest.approx(7000 / 3600) and limits[3].bound == pytest.approx(1000 / 3600)
    assert limits[1].margin(330.0) == pytest.approx(5.15)


@pytest.mark.parametrize("table, pattern", [
    ({"x": "E9.area <= 5 m2"}, r"'E9\.area' names no variable or reported figure"),
    ({"x": "E1.areas <= 5 m2"}, r"E1 reports: .*driving_force"),
    ({"x": "E1.area = 5 m2"}, r"expected \"EXPRESSION <= VALUE\""),
    ({"x": "E1.area <= 5 kg"}, r"not a area|is not a"),
    ({"x": "import os <= 5"}, r"cannot read the expression|uses something other"),
    ({"x": {"expression": "E1.area"}}, r"takes 'expression' and 'max' and/or 'min'"),
])
def test_bad_limits_name_the_key(model, table, pattern):
    with pytest.raises(InputError, match=pattern) as info:
        read_limits(model, table, file="line.toml")
    assert info.value.key == "limits.x" and info.value.file == "line.toml"


def test_unknown_objective_lists_the_valid_ones():
    with pytest.raises(InputError, match="unknown objective 'cheapest'; objectives: least live steam, "
                                         "least energy cost, least annual cost, most feed"):
        Optimiser(load(EXISTING), objective="cheapest")


def test_cost_objective_without_prices_says_where_to_give_them():
    with pytest.raises(InputError, match=r"give steam_price, electricity_price and/or cooling_water_price in "
                                         r"\[economics\]"):
        Optimiser(load(EXISTING), objective="least energy cost")


def test_decision_bounds_in_the_wrong_order_are_refused():
    fs = load(EXISTING)
    with pytest.raises(InputError, match="the lower bound must be below the upper bound"):
        Optimiser(fs, vary={"feed.flow": ("30 t/h", "10 t/h")})


def test_a_decision_that_adds_no_freedom_is_refused():
    # E1.duty is solved already: freeing it leaves no extra degree of freedom to optimise, but
    # freeing feed.flow alongside keeps the count right; fixing E1.duty instead over-specifies.
    fs = load(EXISTING)
    fs.fix("E1.duty", 3.8e6)
    with pytest.raises(SpecificationError):
        Optimiser(fs, vary={"feed.flow": (1.0, 10.0)})


def test_annuity_factor_against_interest_tables():
    # Capital recovery factor (A/P, i, n) from standard compound-interest tables [from memory]:
    # (A/P, 8 %, 10) = 0.14903, (A/P, 10 %, 20) = 0.11746, (A/P, 5 %, 15) = 0.09634.
    assert annuity_factor(0.08, 10) == pytest.approx(0.14903, abs=5e-6)
    assert annuity_factor(0.10, 20) == pytest.approx(0.11746, abs=5e-6)
    assert annuity_factor(0.05, 15) == pytest.approx(0.09634, abs=5e-6)
