"""The solve layer: methods agree, warm starts, re-checks, the result object, the JSON layout."""

import json

import pytest

from balance.errors import InputError, SolveError
from balance.flowsheet.file_format import load
from balance.report.json_layout import to_json
from balance.solve import Solver

DEMO = "flowsheets/skim_milk_3_effect_forward.toml"


@pytest.fixture(scope="module")
def solver():
    return Solver(load(DEMO))


@pytest.fixture(scope="module")
def base(solver):
    return solver.solve()


def test_newton_converges_from_the_automatic_guess(base):
    assert base.converged, base.problems
    assert base.method == "newton"
    assert base.iterations <= 10
    assert base.residual_norm < 1e-9


def test_ipopt_within_bounds_finds_the_same_plant(solver, base):
    # Two methods, one case: the bounded feasibility solve must land on the Newton root.
    other = solver.solve(method="ipopt")
    assert other.converged, other.problems
    for path in ("steam.flow", "E1.area", "E2.pressure", "concentrate.flow"):
        assert other.value(path) == pytest.approx(base.value(path), rel=1e-7)


def test_warm_start_from_the_solution_needs_no_iteration(solver, base):
    again = solver.solve(warm=base)
    assert again.converged and again.iterations == 0


def test_changing_a_fixed_value_without_recompiling(solver, base):
    solver.set("feed.flow", base.value("feed.flow") * 1.1)
    try:
        more = solver.solve(warm=base)
        assert more.converged
        # Same solids ratio, same fractions: evaporation and steam scale with the feed.
        assert more.value("steam.flow") == pytest.approx(1.1 * base.value("steam.flow"), rel=0.02)
    finally:
        solver.set("feed.flow", base.value("feed.flow"))


def test_unknown_method_lists_the_valid_ones(solver):
    with pytest.raises(InputError, match="unknown method 'bisect'; valid: auto, newton, ipopt"):
        solver.solve(method="bisect")


def test_set_refuses_a_variable_that_is_not_fixed(solver):
    with pytest.raises(InputError, match="'E1.area' is not a fixed variable"):
        solver.set("E1.area", 100.0)


def test_a_failed_solve_is_never_mistaken_for_an_answer(solver, base):
    # Asking for more water than the feed holds cannot converge to a physical plant.
    solver.set("concentrate.solids", 0.999)
    try:
        failed = solver.solve(method="newton")
    finally:
        solver.set("concentrate.solids", 0.45)
    assert not failed.converged
    assert failed.problems
    with pytest.raises(SolveError):
        failed.raise_if_failed()
    # the failure is explained in plant words: residuals by unit and a likely cause
    assert any(line.startswith("largest residuals: ") for line in failed.diagnosis)
    assert any(line.startswith("likely cause: ") for line in failed.diagnosis)
    assert "likely cause: " in to_json(failed)


def test_overall_balances_close(base):
    for name in ("water", "solids", "energy"):
        assert abs(base.balances[name].closure) < 1e-9, name


def test_json_layout_is_valid_json_with_units(base):
    data = json.loads(to_json(base))
    assert data["layout"] == "balance-result/1"
    assert data["solve"]["converged"] is True
    water = base.value("feed.flow") - base.value("concentrate.flow")
    assert data["key_figures"]["steam_economy"]["value"] == pytest.approx(water / base.value("steam.flow"))
    assert data["streams"]["V1"]["pressure"]["unit"] == "kPa"
    assert data["units"]["E3"]["quantities"]["pressure"] == {"value": pytest.approx(18.0), "unit": "kPa",
                                                              "fixed": True}
    # the water evaporated equals feed minus product, in kg/h
    feed = data["streams"]["feed"]["flow"]["value"]
    product = data["streams"]["concentrate"]["flow"]["value"]
    assert data["key_figures"]["water_evaporated"]["value"] == pytest.approx(feed - product, rel=1e-9)


def test_steam_economy_of_three_effects_is_plausible(base):
    # Common practice: live-steam economy rises by about 0.7-0.9 per effect; with a cold feed
    # (60 °C against 88 °C in the first effect) three effects give about 2.3-2.8.
    water = base.value("feed.flow") - base.value("concentrate.flow")
    economy = water / base.value("steam.flow")
    assert 2.2 < economy < 2.9


def test_a_warm_start_from_a_neighbour_takes_few_iterations():
    # A rating-mode train: steam pressure moves about 10 % when the feed rises 4 %, which made a
    # monotone line search crawl (54 iterations); the watchdog step keeps Newton's quadratic pace.
    rating = Solver(load("flowsheets/debottleneck_evaporator.toml"))
    first = rating.solve()
    assert first.converged
    rating.set("feed.flow", first.value("feed.flow") * 1.04)
    neighbour = rating.solve(warm=first)
    assert neighbour.converged and neighbour.method == "newton"
    assert neighbour.iterations <= 6
    cold = rating.solve()
    assert neighbour.value("steam.flow") == pytest.approx(cold.value("steam.flow"), rel=1e-9)


def test_a_64_effect_parallel_feed_train_converges_from_the_automatic_guess():
    # The guess shapes evaporation down a parallel-feed chain and asks splitters for the flows the
    # effects need; before that, 64 effects left Newton stranded and only IPOPT (3 s) found the root.
    from balance.analysis.benchmark import train_flowsheet
    solution = Solver(train_flowsheet(64)).solve()
    assert solution.converged and solution.method == "newton"
    assert solution.iterations <= 8
    # every effect shares the same concentrate solids and the same area (the specification)
    areas = [solution.value(f"E{i}.area") for i in range(1, 65)]
    assert max(areas) == pytest.approx(min(areas), rel=1e-9)
