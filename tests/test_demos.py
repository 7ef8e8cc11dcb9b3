"""The demo collection: every flowsheets/*.toml is checked, solved and its balances closed.

The parametrisation globs the folder, so a flowsheet added later (an
evaporator variant, a dryer) is picked up without touching this file. Every
file must be square, converge and close its overall water, solids, dry-air
and energy balances; flows and temperature driving forces must be positive.

Plain steam-heated evaporator trains (only the unit types in
`PLAIN_EVAPORATOR_TYPES`: no vapour recompression, no dryer) also get the
trade's sanity checks [common practice; see the rules of thumb in the
project's reference notes]:

* steam economy per effect between about 0.6 and 1 (a live-steam economy
  rises by less than one per added effect; a single effect is slightly below
  one; cold feeds and parallel feed pull it down);
* every effect's driving force a few kelvin (typical 4-15 K; tested in a
  band widened to 3-20 K so that a deliberate design near the edge passes);
* for food liquors the coldest effect boils between 45 and 65 °C.
"""

from __future__ import annotations

import warnings
from pathlib import Path

import pytest

from balance.analysis.key_figures import key_figures
from balance.equations.diagnostics import check_report
from balance.flowsheet.file_format import load
from balance.properties.liquors import LiquorWarning
from balance.solve import solve

FLOWSHEETS = sorted((Path(__file__).resolve().parent.parent / "flowsheets").glob("*.toml"))

#: Closure demanded of a converged demo: far tighter than any measurement, loose
#: enough for round-off in sums of enthalpy flows (1e-8 relative).
CLOSURE = 1e-8

#: Unit types of a plain steam-heated evaporator train.
PLAIN_EVAPORATOR_TYPES = {"feed", "product", "steam_supply", "effect", "condenser",
                          "direct_contact_condenser", "cooling_water", "water_supply", "outlet",
                          "mixer", "splitter", "preheater", "flash_tank"}

#: Built-in liquors that are foods: their last effect should boil at 45-65 °C.
FOOD_LIQUORS = {"sucrose", "sucrose_simple", "skim_milk", "whole_milk"}

DRIVING_FORCE_FIGURES = ("driving_force", "approach", "smallest_approach")


def test_the_collection_is_not_empty():
    # One demo per feed arrangement and mode at least (backward, mixed, parallel,
    # forward with preheater and flash tanks, rating, feed rate) plus the first demo.
    assert len(FLOWSHEETS) >= 7, [f.name for f in FLOWSHEETS]


@pytest.fixture(scope="module", params=FLOWSHEETS, ids=lambda path: path.stem)
def solved(request):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", LiquorWarning)   # NaOH: heat of dilution not modelled
        flowsheet = load(request.param)
        text, ready = check_report(flowsheet)
        solution = solve(flowsheet)
    return request.param, text, ready, solution


def test_demo_is_square(solved):
    path, text, ready, _ = solved
    assert ready, f"{path.name}:\n{text}"


def test_demo_converges(solved):
    path, _, _, solution = solved
    assert solution.converged, f"{path.name}: {solution.problems} {solution.attempts}"
    assert solution.residual_norm < 1e-8


@pytest.mark.parametrize("name", ["water", "solids", "dry air", "energy"])
def test_demo_overall_balance_closes(solved, name):
    path, _, _, solution = solved
    balance = solution.balances[name]
    assert abs(balance.closure) < CLOSURE, f"{path.name}: {name} {balance}"


def test_demo_flows_are_positive(solved):
    path, _, _, solution = solved
    negative = {s.name: s.values["flow"] for s in solution.streams.values() if not s.values["flow"] > 0.0}
    assert not negative, f"{path.name}: streams without a positive flow: {negative}"


def test_demo_driving_forces_are_positive(solved):
    path, _, _, solution = solved
    for unit in solution.units.values():
        for figure in DRIVING_FORCE_FIGURES:
            value = unit.figures.get(figure)
            if value is not None:
                assert value > 0.0, f"{path.name}: {unit.name} {figure} = {value:.3g} K"


def _plain_train(solution) -> bool:
    types = {u.type_name for u in solution.units.values()}
    return "effect" in types and "steam_supply" in types and types <= PLAIN_EVAPORATOR_TYPES


def _effects(solution):
    return [u for u in solution.units.values() if u.type_name == "effect"]


def test_steam_economy_per_effect_is_plausible(solved):
    path, _, _, solution = solved
    if not _plain_train(solution):
        pytest.skip("not a plain steam-heated evaporator train")
    economy = key_figures(solution)["steam_economy"].value
    per_effect = economy / len(_effects(solution))
    # Common practice: below 1 per effect, above about 0.6 per effect.
    assert 0.6 < per_effect < 1.0, f"{path.name}: economy {economy:.3f}, {per_effect:.3f} per effect"


def test_effect_driving_forces_are_a_few_kelvin(solved):
    path, _, _, solution = solved
    if not _plain_train(solution):
        pytest.skip("not a plain steam-heated evaporator train")
    for effect in _effects(solution):
        # Common practice: typical 4-15 K per effect; widened to 3-20 K.
        assert 3.0 <= effect.figures["driving_force"] <= 20.0, \
            f"{path.name}: {effect.name} driving force {effect.figures['driving_force']:.2f} K"


def test_food_liquor_last_effect_boils_at_45_to_65_degC(solved):
    path, _, _, solution = solved
    liquors = {s.liquor for s in solution.streams.values() if s.liquor}
    if not _plain_train(solution) or not liquors & FOOD_LIQUORS:
        pytest.skip("not a food liquor in a plain evaporator train")
    coldest = min(e.figures["boiling_temperature"] for e in _effects(solution)) - 273.15
    # Common practice: the last effect of a food evaporator boils at about 45-65 °C.
    assert 45.0 <= coldest <= 65.0, f"{path.name}: last effect boils at {coldest:.1f} °C"
