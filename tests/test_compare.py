"""Tests of comparing variants (balance.analysis.compare), the energy and cost figures
(balance.analysis.energy_figures) and the comparison set in flowsheets/compare/.

Sources outside the project: the mass balance of the duty itself (water removed
= F (1 - x_F / x_P)); facts of the trade marked common practice (live-steam
economy rises by less than one per added effect; MVR at a few kelvin of lift
needs roughly 10-20 kWh per tonne of water; a thermocompressor on a train
saves live steam, an MVR effect more); and hand arithmetic of the economic
figures from the file's factors.
"""

from __future__ import annotations

import csv
import io
import json
import shutil
from pathlib import Path

import pytest

try:
    import tomllib
except ModuleNotFoundError:  # Python < 3.11
    import tomli as tomllib

from balance.analysis.compare import (LAYOUT_VERSION, ROWS, apply_variant, compare, load_variants,
                                      time_variants)
from balance.analysis.energy_figures import parse_economics
from balance.analysis.key_figures import key_figures
from balance.cli import main
from balance.errors import InputError
from balance.flowsheet.file_format import from_dict
from balance.solve import solve

FOLDER = Path(__file__).resolve().parent.parent / "flowsheets" / "compare"
#: The base first, then the other arrangements.
FILES = [FOLDER / "three_effect.toml"] + sorted(p for p in FOLDER.glob("*.toml") if p.name != "three_effect.toml")

#: Closure demanded of a converged demo (round-off in sums of enthalpy flows).
CLOSURE = 1e-8


@pytest.fixture(scope="module")
def comparison():
    return compare(load_variants(FILES))


def by_name(comparison):
    return {r.name: r for r in comparison.results}


# ---------------------------------------------------------------------------
# The comparison set


def test_the_set_has_the_arrangements_of_the_issue():
    names = {p.stem for p in FILES}
    assert {"three_effect", "five_effect", "five_effect_tvr", "mvr_finisher", "mvr_tvr"} <= names
    for path in FILES:   # every file states its scenario and what it demonstrates
        text = path.read_text(encoding="utf-8")
        assert text.startswith("# Scenario:") and "# Demonstrates:" in text, path.name


def test_every_variant_converges(comparison):
    for result in comparison.results:
        assert result.converged, (result.name, result.status,
                                  result.solution.problems if result.solution else None)
    assert comparison.all_converged
    assert len(comparison.results) == len(FILES) + 4   # the base file's four variants


@pytest.mark.parametrize("balance", ["water", "solids", "energy"])
def test_every_variant_closes_its_balances(comparison, balance):
    for result in comparison.results:
        closure = result.solution.balances[balance].closure
        assert abs(closure) < CLOSURE, (result.name, balance, closure)


def test_shaft_work_is_counted_in_the_energy_balance(comparison):
    # Where fans run, the boundary enthalpy flows alone miss by the shaft power: the
    # energy balance closes only because the shaft work is counted.
    for result in comparison.results:
        shaft = result.figures.get("shaft_power", 0.0)
        if shaft:
            energy = result.solution.balances["energy"]
            assert shaft / max(abs(energy.into), abs(energy.out_of)) > 1e-3, result.name
            assert abs(energy.closure) < CLOSURE


def test_every_variant_does_the_same_duty(comparison):
    # 20 t/h from 9 % to 45 %: product 20 * 9 / 45 = 4 t/h, water removed 16 t/h
    for result in comparison.results:
        assert result.figures["water_evaporated"] == pytest.approx(16000 / 3600, rel=1e-9), result.name
        assert result.figures["product_flow"] == pytest.approx(4000 / 3600, rel=1e-9), result.name


def test_sanity_of_the_arrangements(comparison):
    r = by_name(comparison)
    economy = {name: r[name].figures["steam_economy"] for name in r}
    # common practice: each added effect raises the live-steam economy by less than one
    assert 0.5 < economy["three_effect/four_effects"] - economy["three_effect"] < 1.0
    assert 0.5 < economy["five_effect"] - economy["three_effect/four_effects"] < 1.0
    # a thermocompressor saves live steam on the same train; MVR saves most
    assert economy["five_effect_tvr"] > economy["five_effect"]
    assert economy["mvr_finisher"] > economy["mvr_tvr"] > economy["five_effect_tvr"]
    # common practice: MVR at a few kelvin of lift, roughly 10-20 kWh per tonne of water
    # (mvr_tvr: only 11 of its 16 t/h go through the fan)
    assert 10.0 <= r["mvr_finisher"].figures["electricity_per_water"] <= 20.0
    fan_water = r["mvr_tvr"].solution.streams["V0"].values["flow"]
    per_fan_water = r["mvr_tvr"].figures["electrical_power"] / fan_water / 3600.0   # J/kg -> kWh/t
    assert 10.0 <= per_fan_water <= 20.0
    # condensate recovery saves a little steam, a vapour bleed costs steam
    assert economy["three_effect/condensate_recovery"] > economy["three_effect"]
    assert economy["three_effect/vapour_bleed"] < economy["three_effect"]


def test_thermocompressor_demo_is_inside_its_correlation(comparison):
    tvr = by_name(comparison)["five_effect_tvr"].solution
    assert not any("outside the validity range" in w for w in tvr.warnings), tvr.warnings
    assert 1.81 <= tvr.units["TVR"].quantities["compression_ratio"] <= 6.0


# ---------------------------------------------------------------------------
# The table and its exports


def test_differences_to_the_base(comparison):
    base = comparison.base
    assert base.name == "three_effect"
    for result in comparison.results[1:]:
        for row in comparison.rows:
            diff, rel = comparison.difference(result, row)
            value, ref = result.values.get(row.name), base.values.get(row.name)
            if value is None or ref is None:
                assert diff is None
                continue
            assert diff == pytest.approx(value - ref, abs=1e-12)
            if row.relative and ref:
                assert rel == pytest.approx((value - ref) / abs(ref))
    # per tonne: the live steam per tonne of water is live steam / water evaporated
    r = by_name(comparison)["five_effect"]
    assert r.values["steam_per_water"] == pytest.approx(
        1000 * r.figures["live_steam"] / r.figures["water_evaporated"])
    assert r.values["steam_per_product"] == pytest.approx(
        1000 * r.figures["live_steam"] / r.figures["product_flow"])


def test_text_table(comparison):
    text = comparison.text()
    for result in comparison.results:
        assert result.name in text
    assert "live steam per tonne of water" in text and "EUR/t" in text
    assert "change: added unit E4 (effect)" in text


def test_text_table_in_blocks(comparison):
    text = comparison.text(width=120)
    blocks = text.split("\n\n")
    tables = [b for b in blocks if b.startswith("figure")]
    assert len(tables) > 1
    for table in tables:
        header = table.splitlines()[0]
        assert header.split()[2] == "three_effect"        # the base repeats in every block
        assert max(len(line) for line in table.splitlines()) <= 120 or len(header.split()) == 4
    shown = [name for t in tables for name in t.splitlines()[0].split()[3:]]
    assert shown == [r.name for r in comparison.results[1:]]


def test_csv_export(comparison):
    rows = list(csv.reader(io.StringIO(comparison.to_csv())))
    header = rows[0]
    names = [r.name for r in comparison.results]
    assert header[:3 + len(names)] == ["figure", "label", "unit"] + names
    assert header[3 + len(names)] == "three_effect/four_effects - three_effect"
    table = {row[0]: row for row in rows[1:]}
    steam = table["steam_per_water"]
    for i, result in enumerate(comparison.results):
        assert float(steam[3 + i]) == pytest.approx(result.values["steam_per_water"], rel=1e-12)
    assert table["converged"][3:3 + len(names)] == ["true"] * len(names)


def test_json_export(comparison):
    data = json.loads(comparison.to_json())
    assert data["layout"] == LAYOUT_VERSION and data["base"] == "three_effect" and data["currency"] == "EUR"
    entry = {v["name"]: v for v in data["variants"]}["five_effect"]
    assert entry["converged"] is True
    fig = entry["figures"]["steam_per_water"]
    base = by_name(comparison)["three_effect"].values["steam_per_water"]
    assert fig["value"] == pytest.approx(by_name(comparison)["five_effect"].values["steam_per_water"])
    assert fig["relative_difference"] == pytest.approx((fig["value"] - base) / base)
    assert fig["unit"] == "kg/t"


def test_rows_have_unique_names():
    names = [row.name for row in ROWS]
    assert len(names) == len(set(names))


# ---------------------------------------------------------------------------
# Variants: how a [variants] entry changes the base

BASE = tomllib.loads((FOLDER / "three_effect.toml").read_text(encoding="utf-8"))


def test_variant_adds_and_swaps_units_and_streams():
    data, changes = apply_variant(BASE, "four_effects", BASE["variants"]["four_effects"], file="x.toml")
    assert "E4" in data["units"] and data["units"]["E3"]["U"] == "1800 W/m2/K"
    assert data["units"]["E3"]["pressure"] == "12 kPa"          # kept in the table ...
    assert "E3.pressure" in data["specification"]["free"]       # ... but freed
    assert data["streams"]["concentrate"] == "E4.liquor_out -> concentrate.in"
    assert data["streams"]["V3"] == "E3.vapour_out -> E4.heating_in"
    assert "removed stream concentrate (its port is taken by L3)" in changes
    assert "variants" not in data and "variants" in BASE           # the base is untouched
    assert BASE["streams"]["V3"] == "E3.vapour_out -> condenser.vapour_in"


def test_variant_removes_units_with_their_streams_and_specification():
    table = {"remove_units": ["E3"], "streams": {"concentrate": "E2.liquor_out -> concentrate.in",
                                                 "V2": "E2.vapour_out -> condenser.vapour_in"},
             "fix": {"E2.pressure": "12 kPa"}}     # E3 set the last pressure; E2 must now
    data, changes = apply_variant(BASE, "two", table)
    assert "E3" not in data["units"]
    assert not any("E3." in text for text in data["streams"].values())
    assert data["specification"]["same"] == [["E1.area", "E2.area"]]
    assert "removed unit E3" in changes and "removed stream L2" in changes
    solution = solve(from_dict(data, file="two.toml"))
    assert solution.converged, solution.problems
    assert key_figures(solution)["steam_economy"].value < 2.0   # two effects


def test_variant_fix_and_free_override_the_base():
    base = {"units": {"E1": {"type": "effect", "area": "100 m2"}}, "specification": {"free": ["E1.U"]}}
    data, _ = apply_variant(base, "v", {"fix": {"E1.U": "2 kW/m2/K"}, "free": ["E1.area"]})
    assert data["specification"] == {"free": ["E1.area"], "fix": {"E1.U": "2 kW/m2/K"}}
    data, _ = apply_variant(base, "v", {"economics": {"steam_price": "40 / t"}, "title": "T"})
    assert data["economics"] == {"steam_price": "40 / t"} and data["flowsheet"]["title"] == "T"


@pytest.mark.parametrize("table, key", [
    ({"colour": "red"}, "variants.bad.colour"),
    ({"remove_units": ["E9"]}, "variants.bad.remove_units"),
    ({"remove_streams": ["S9"]}, "variants.bad.remove_streams"),
    ({"streams": {"S": "E1.vapour_out"}}, "variants.bad.streams.S"),
    ({"units": {"X": {"U": "1 kW/m2/K"}}}, "variants.bad.units.X"),
    ({"free": "E1.area"}, "variants.bad.free"),
])
def test_bad_variant_names_file_and_key(table, key):
    with pytest.raises(InputError, match=rf"base\.toml: key '{key}'"):
        apply_variant(BASE, "bad", table, file="base.toml")


def test_variant_that_breaks_the_flowsheet_names_the_variant(tmp_path):
    text = (FOLDER / "five_effect.toml").read_text(encoding="utf-8")
    path = tmp_path / "base.toml"
    path.write_text(text + '\n[variants.broken.units.E2]\nU = "fast"\n', encoding="utf-8")
    with pytest.raises(InputError, match=r"base\.toml: unit 'E2': key 'E2.U': in variant 'broken'"):
        load_variants([path])


def test_a_variant_that_does_not_solve_is_kept_and_marked(tmp_path):
    text = (FOLDER / "five_effect.toml").read_text(encoding="utf-8")
    path = tmp_path / "base.toml"
    # a product weaker than its feed cannot be made by evaporation
    path.write_text(text + '\n[variants.impossible]\nfix = { "concentrate.solids" = "5 %" }\n', encoding="utf-8")
    result = compare(load_variants([path]), method="newton")
    assert [r.name for r in result.results] == ["base", "impossible"]
    bad = result.results[1]
    assert not bad.converged and bad.values == {} and not result.all_converged
    assert "impossible" in result.text()


def test_timing_runs_cold_and_warm():
    variants = load_variants([FOLDER / "five_effect.toml"])
    timing = time_variants(variants, repeats=1)
    assert [t.name for t in timing] == ["five_effect"]
    assert timing[0].converged
    # warm: Newton starts on the solution and stops at once
    assert timing[0].warm_iterations == 0
    assert timing[0].cold > 0 and timing[0].warm > 0


# ---------------------------------------------------------------------------
# Energy, cost and CO2 figures


def test_economic_figures_by_hand(comparison):
    # three_effect: steam 35 /t, cooling water 0.08 /t, no electricity; primary 1.25 and
    # 230 kg/MWh on the live-steam heat; 7000 h a year
    r = by_name(comparison)["three_effect"].figures
    water_t_h = r["water_evaporated"] * 3.6          # t/h
    product_t_h = r["product_flow"] * 3.6
    cost_h = r["live_steam"] * 3.6 * 35.0 + r["cooling_water"] * 3.6 * 0.08
    assert r["operating_cost_per_hour"] == pytest.approx(cost_h, rel=1e-12)
    assert r["operating_cost_per_water"] == pytest.approx(cost_h / water_t_h, rel=1e-12)
    assert r["operating_cost_per_product"] == pytest.approx(cost_h / product_t_h, rel=1e-12)
    assert r["operating_cost_per_year"] == pytest.approx(cost_h * 7000, rel=1e-12)
    heat_kw = r["live_steam_heat"] / 1e3
    assert r["primary_energy_per_water"] == pytest.approx(1.25 * heat_kw / water_t_h, rel=1e-12)
    assert r["co2_per_water"] == pytest.approx(0.230 * heat_kw / water_t_h, rel=1e-12)
    assert r["co2_per_year"] == pytest.approx(0.230 * heat_kw * 7000 / 1000, rel=1e-12)   # t
    # MVR: the electricity counts at 120 /MWh, 1.8 primary, 350 kg/MWh
    m = by_name(comparison)["mvr_finisher"].figures
    el_kw = m["electrical_power"] / 1e3
    water_t_h = m["water_evaporated"] * 3.6
    assert m["electricity_per_water"] == pytest.approx(el_kw / water_t_h, rel=1e-12)
    cost_h = m["live_steam"] * 3.6 * 35.0 + m["cooling_water"] * 3.6 * 0.08 + el_kw * 0.120
    assert m["operating_cost_per_water"] == pytest.approx(cost_h / water_t_h, rel=1e-12)
    pe = 1.25 * m["live_steam_heat"] / 1e3 + 1.8 * el_kw
    assert m["primary_energy_per_water"] == pytest.approx(pe / water_t_h, rel=1e-12)


def test_dear_steam_changes_only_the_cost(comparison):
    r = by_name(comparison)
    base, dear = r["three_effect"], r["three_effect/dear_steam"]
    assert dear.values["steam_per_water"] == pytest.approx(base.values["steam_per_water"], rel=1e-9)
    steam_t = base.figures["live_steam"] * 3.6 / (base.figures["water_evaporated"] * 3.6)
    assert dear.values["operating_cost_per_water"] - base.values["operating_cost_per_water"] == \
        pytest.approx(15.0 * steam_t, rel=1e-9)


def _five_effect(economics: dict | None):
    data = tomllib.loads((FOLDER / "five_effect.toml").read_text(encoding="utf-8"))
    data.pop("economics", None)
    if economics is not None:
        data["economics"] = economics
    return solve(from_dict(data, file="five.toml"))


def test_no_factors_no_figures():
    figures = key_figures(_five_effect(None))
    assert "electricity_per_water" in figures and figures["electricity_per_water"].value == 0.0
    for name in ("primary_energy", "operating_cost_per_water", "co2_per_water", "operating_cost_per_year"):
        assert name not in figures
    # a cooling-water price missing while cooling water is used: no operating cost at all
    figures = key_figures(_five_effect({"steam_price": "35 / t"}))
    assert "operating_cost_per_water" not in figures
    figures = key_figures(_five_effect({"steam_price": "35 / t", "cooling_water_price": "0 / t"}))
    assert "operating_cost_per_water" in figures and "operating_cost_per_year" not in figures


def test_steam_priced_per_mwh_of_heat():
    solution = _five_effect({"steam_price": "30 / MWh", "cooling_water_price": "0 / t"})
    figures = key_figures(solution)
    heat_mw = figures["live_steam_heat"].value / 1e6
    assert figures["operating_cost_per_hour"].value == pytest.approx(30.0 * heat_mw, rel=1e-12)


@pytest.mark.parametrize("table, key, message", [
    ({"steam_cost": "35 / t"}, "economics.steam_cost", "unknown key"),
    ({"electricity_price": "35 / t"}, "economics.electricity_price", "cannot read"),
    ({"steam_emission_factor": 0.2}, "economics.steam_emission_factor", "with a unit"),
    ({"steam_price": "-3 / t"}, "economics.steam_price", "negative"),
])
def test_bad_economics_name_file_and_key(table, key, message):
    with pytest.raises(InputError, match=rf"plant\.toml: key '{key}': .*{message}"):
        parse_economics(table, file="plant.toml")


def test_currency_in_prices():
    econ = parse_economics({"currency": "EUR", "steam_price": "35 EUR/t", "electricity_price": "0.12 €/kWh"})
    assert econ.factors["steam_price"].value == pytest.approx(0.035)          # per kg
    assert econ.factors["electricity_price"].value == pytest.approx(0.12 / 3.6e6)   # per J


# ---------------------------------------------------------------------------
# The command line


def test_cli_compare_writes_csv_and_json_and_never_overwrites(tmp_path, capsys):
    source = tmp_path / "five.toml"
    shutil.copy(FOLDER / "five_effect.toml", source)
    out_csv, out_json = tmp_path / "c.csv", tmp_path / "c.json"
    assert main(["compare", str(source), "--csv", str(out_csv), "--json", str(out_json)]) == 0
    assert out_csv.read_text(encoding="utf-8").startswith("figure,label,unit,five")
    assert json.loads(out_json.read_text(encoding="utf-8"))["base"] == "five"
    capsys.readouterr()
    before = out_csv.read_text(encoding="utf-8")
    assert main(["compare", str(source), "--csv", str(out_csv)]) == 2
    assert "exists already" in capsys.readouterr().err
    assert out_csv.read_text(encoding="utf-8") == before
    assert main(["compare", str(source), "--csv", str(out_csv), "--overwrite"]) == 0


def test_cli_compare_reports_a_missing_file(capsys):
    assert main(["compare", "no/such/file.toml"]) == 2
    assert "no/such/file.toml: file not found" in capsys.readouterr().err


def test_fuel_of_fired_air_heaters_is_never_left_out():
    # A dryer line burning gas (another part of the project's demo collection): without a fuel
    # price the operating cost is absent, not computed as if the fuel were free.
    path = FOLDER.parent / "whole_milk_powder_heat_recovery.toml"
    if not path.exists():
        pytest.skip("the fired-dryer demo is not in this tree")
    data = tomllib.loads(path.read_text(encoding="utf-8"))
    prices = {"steam_price": "35 / t", "electricity_price": "120 / MWh", "cooling_water_price": "0.08 / t"}
    data["economics"] = dict(prices)
    figures = key_figures(solve(from_dict(data, file=str(path))))
    assert figures["fuel_power"].value > 0
    assert "operating_cost_per_water" not in figures
    data["economics"] = dict(prices, fuel_price="45 / MWh")
    figures = key_figures(solve(from_dict(data, file=str(path))))
    # a dryer-only line has no live steam to evaporators nor cooling water: those figures are absent
    steam = figures["live_steam"].value if "live_steam" in figures else 0.0
    cooling = figures["cooling_water"].value if "cooling_water" in figures else 0.0
    hourly = (steam * 3.6 * 35.0 + figures["electrical_power"].value / 1e3 * 0.120
              + cooling * 3.6 * 0.08 + figures["fuel_power"].value / 1e3 * 0.045)
    assert figures["operating_cost_per_hour"].value == pytest.approx(hourly, rel=1e-12)
