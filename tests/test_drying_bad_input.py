"""Bad drying input: each gives a clear error (or failed checks) naming the file, the unit and the key.

Cases: a negative humidity, ambient air holding more water than it can, a
product wetter than its feed, air colder than the product, an impossible
moisture target (before the solve when the exhaust is fixed, after it
otherwise), an unknown sorption isotherm, and the command line's exit code.
The equilibrium moisture behind the impossible target comes from the GAB
isotherm of skim milk powder (Lin, Chen & Pearce, J. Food Eng. 68 (2005)
257-264; parameters from memory, low confidence: the cases are chosen far
from the boundary, about 5 % d.b. equilibrium against a 2 % target).
"""

from __future__ import annotations

import pytest

from balance.cli import main
from balance.errors import InfeasibleSpecificationError, InputError
from balance.flowsheet.file_format import load
from balance.properties import humid_air
from balance.properties.sorption import gab_parameters
from balance.solve import solve

BASE = """
[flowsheet]
title = "bad drying input"

[units.feed]
type = "feed"
liquor = "skim_milk"
flow = "2000 kg/h"
solids = "48 %"
temperature = "60 degC"

[units.ambient]
type = "ambient_air"
temperature = "20 degC"
{ambient}

[units.heater]
type = "electric_air_heater"
outlet_temperature = "{inlet}"

[units.chamber]
type = "spray_dryer"
isotherm = "{isotherm}"
{chamber}

[units.stack]
type = "air_exhaust"

[units.powder]
type = "powder_product"

[streams]
feed = "feed.out -> chamber.feed_in"
air = "ambient.out -> heater.air_in"
hot = "heater.air_out -> chamber.air_in"
exhaust = "chamber.air_out -> stack.in"
product = "chamber.product_out -> powder.in"
"""

GOOD_CHAMBER = 'outlet_temperature = "85 degC"\nproduct_moisture = "4 %"'


def _file(tmp_path, ambient='relative_humidity = "60 %"', chamber=GOOD_CHAMBER, inlet="190 degC",
          isotherm="skim milk powder"):
    path = tmp_path / "dryer.toml"
    path.write_text(BASE.format(ambient=ambient, chamber=chamber, inlet=inlet, isotherm=isotherm))
    return str(path)


def test_the_base_file_solves(tmp_path):
    solution = solve(load(_file(tmp_path)))
    assert solution.converged, solution.problems


def test_negative_humidity(tmp_path):
    with pytest.raises(InputError, match=r"dryer\.toml: unit 'ambient': key 'ambient\.humidity'.*outside"):
        load(_file(tmp_path, ambient='humidity = "-5 g/kg"'))


def test_ambient_air_holding_more_water_than_it_can(tmp_path):
    # at 20 °C saturated air holds 14.7 g/kg (psychrolib; ASHRAE 2017 ch. 1 Table 2 lists
    # 14.75 g/kg at 20 °C): 30 g/kg is impossible
    fs = load(_file(tmp_path, ambient='humidity = "30 g/kg"'))
    with pytest.raises(InfeasibleSpecificationError,
                       match=r"dryer\.toml: unit 'ambient': key 'humidity': air at 20\.0 °C cannot hold 30\.00 g/kg"):
        solve(fs)


def test_relative_humidity_above_100_percent(tmp_path):
    fs = load(_file(tmp_path, ambient='relative_humidity = "120 %"'))
    with pytest.raises(InfeasibleSpecificationError,
                       match=r"unit 'ambient': key 'relative_humidity': relative humidity 120 % is outside"):
        solve(fs)


def test_product_wetter_than_its_feed(tmp_path):
    fs = load(_file(tmp_path, chamber='outlet_temperature = "85 degC"\nproduct_moisture = "60 %"'))
    with pytest.raises(InfeasibleSpecificationError,
                       match=r"dryer\.toml: unit 'chamber': key 'product_moisture': the product \(60\.00 % "
                             r"moisture\) is wetter than its feed \(52\.00 % moisture\)"):
        solve(fs)


def test_air_colder_than_the_product(tmp_path):
    chamber = 'outlet_temperature = "85 degC"\nproduct_moisture = "4 %"\nproduct_temperature = "120 degC"'
    fs = load(_file(tmp_path, chamber=chamber, inlet="110 degC"))
    with pytest.raises(InfeasibleSpecificationError,
                       match=r"dryer\.toml: unit 'chamber': key 'product_temperature': the product \(120\.0 °C\) "
                             r"would leave hotter than the hottest drying air \(110\.0 °C\)"):
        solve(fs)


def test_exhaust_hotter_than_the_inlet_air(tmp_path):
    fs = load(_file(tmp_path, chamber='outlet_temperature = "150 degC"\nproduct_moisture = "4 %"',
                    inlet="140 degC"))
    with pytest.raises(InfeasibleSpecificationError, match=r"unit 'chamber': key 'outlet_temperature'"):
        solve(fs)


def test_impossible_moisture_target_refused_before_the_solve(tmp_path):
    # exhaust fixed at 70 °C and 30 % relative humidity: skim milk powder holds about 5.5 % d.b.
    # there (GAB, Lin et al. 2005, from memory), so 2 % cannot be reached
    smp = gab_parameters("skim milk powder")
    assert smp.moisture(0.30, 343.15) > 0.04
    chamber = 'outlet_temperature = "70 degC"\noutlet_relative_humidity = "30 %"\nproduct_moisture = "2 %"'
    fs = load(_file(tmp_path, chamber=chamber, inlet="solve"))    # the inlet temperature is solved
    with pytest.raises(InfeasibleSpecificationError,
                       match=r"dryer\.toml: unit 'chamber': key 'product_moisture': product moisture 2\.04 % "
                             r"\(dry basis\) is physically unreachable"):
        solve(fs)


def test_impossible_moisture_target_fails_the_solution(tmp_path):
    # the exhaust humidity is a result here, so the check runs on the solution
    fs = load(_file(tmp_path, chamber='outlet_temperature = "75 degC"\nproduct_moisture = "1 %"'))
    solution = solve(fs)
    assert not solution.converged
    unreachable = [p for p in solution.problems if "physically unreachable" in p]
    assert unreachable and "dryer.toml: unit 'chamber': key 'product_moisture'" in unreachable[0]
    # the numbers are still there for diagnosis, and the exhaust really is that humid
    rh = solution.units["chamber"].quantities["outlet_relative_humidity"]
    t = solution.value("chamber.outlet_temperature")
    assert rh == pytest.approx(float(humid_air.relative_humidity(t, solution.value("chamber.outlet_humidity"),
                                                                 101325.0)), rel=1e-9)
    with pytest.raises(Exception, match="physically unreachable"):
        solution.raise_if_failed()


def test_unknown_isotherm(tmp_path):
    with pytest.raises(InputError, match=r"dryer\.toml: unit 'chamber': key 'isotherm': unknown sorption "
                                         r"parameter set 'cocoa'; valid: 'skim milk powder'"):
        load(_file(tmp_path, isotherm="cocoa"))


def test_command_line_reports_the_error(tmp_path, capsys):
    path = _file(tmp_path, chamber='outlet_temperature = "85 degC"\nproduct_moisture = "60 %"')
    assert main(["solve", path]) == 2
    err = capsys.readouterr().err
    assert "unit 'chamber': key 'product_moisture'" in err and "wetter than its feed" in err
