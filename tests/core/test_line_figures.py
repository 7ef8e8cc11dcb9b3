"""Key figures of a whole line: what belongs to the evaporators, what to the dryer, what the bill covers."""

import tomllib

import pytest

from balance.analysis.key_figures import key_figures
from balance.flowsheet.file_format import from_dict, load
from balance.solve import solve

LINE = "flowsheets/skim_milk_powder_line.toml"


@pytest.fixture(scope="module")
def line():
    with open(LINE, "rb") as handle:
        data = tomllib.load(handle)
    data["economics"] = {"steam_price": "35 / t", "electricity_price": "120 / MWh",
                         "cooling_water_price": "0.08 / t"}
    solution = solve(from_dict(data, file=LINE))
    assert solution.converged
    return solution, key_figures(solution)


def test_steam_economy_belongs_to_the_evaporators(line):
    solution, figures = line
    # water boiled off in the effects, against the live steam that reaches them (not the air heater's)
    boiled = sum(u.figures["evaporation"] for u in solution.units.values() if u.type_name == "effect")
    steam_to_effects = solution.streams["steam"].values["flow"]
    assert figures["live_steam"].value == pytest.approx(steam_to_effects, rel=1e-12)
    assert figures["steam_economy"].value == pytest.approx(boiled / steam_to_effects, rel=1e-9)


def test_the_bill_covers_every_steam_supply(line):
    solution, figures = line
    all_steam = sum(s.values["flow"] for s in solution.streams.values()
                    if solution.flowsheet.unit(s.source).type_name == "steam_supply")
    assert all_steam > figures["live_steam"].value          # the air heater takes steam too
    hourly = (all_steam * 3.6 * 35.0 + figures["electrical_power"].value / 1e3 * 0.120
              + figures["cooling_water"].value * 3.6 * 0.08)
    assert figures["operating_cost_per_hour"].value == pytest.approx(hourly, rel=1e-12)


def test_a_dryer_only_line_shows_no_evaporator_figures():
    solution = solve(load("flowsheets/sugar_fluid_bed_recirculation.toml"))
    figures = key_figures(solution)
    assert "steam_economy" not in figures and "heating_area" not in figures
    assert figures["water_evaporated"].value == pytest.approx(figures["dryer_water_removed"].value, rel=1e-9)
