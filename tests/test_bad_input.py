"""Bad input is refused with a message that says where (file, unit, key) and what.

Each file in tests/bad_inputs/ departs from good_single_effect.toml in one
place (its header comment says which). The Python API must raise the right
class of `balance.errors` with the right message; the command line must print
``error: <file>: ...`` to stderr, return 2 and show no traceback.

Physically impossible specifications (a product weaker than its feed, steam
colder than the liquor it must boil, too little temperature difference for
the boiling-point rises) are refused before the solve by
`balance.solve.feasibility`, naming the unit and key.
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from balance.cli import main
from balance.equations.model import compile_flowsheet
from balance.errors import (InfeasibleSpecificationError, InputError, PortError, SpecificationError,
                            UnitOfMeasureError)
from balance.flowsheet import Flowsheet
from balance.flowsheet.file_format import load
from balance.solve import solve
from balance.solve.feasibility import infeasibilities, precheck, raise_if_infeasible

BAD = Path(__file__).resolve().parent / "bad_inputs"


def bad(name: str) -> str:
    return str(BAD / f"{name}.toml")


def load_and_solve(path: str):
    return solve(load(path))


# (file, error class, message pattern, location the CLI must print after "error: <file>: ")
CASES = [
    ("unknown_key", InputError,
     r"unit 'E1': key 'surface': unknown key for a.* 'effect'; valid keys: U, area, duty", "unit 'E1'"),
    ("wrong_unit", UnitOfMeasureError,
     r"unit 'feed': key 'feed.temperature': '55 kg' is not a temperature; expected a unit like '55 degC'",
     "unit 'feed'"),
    ("bare_pressure", UnitOfMeasureError,
     r"unit 'E1': key 'E1.pressure': 30 has no unit; write it with one, for example '25 kPa'", "unit 'E1'"),
    ("solids_above_one", InputError,
     r"unit 'product': key 'product.solids': '120 %' is outside the physical range of this variable, "
     r"0 to 100 %", "unit 'product'"),
    ("port_connected_twice", PortError,
     r"unit 'E1': key 'vapour_out': port 'vapour_out' is connected twice \(streams 'vapour' and 'vent'\)",
     "unit 'E1'"),
    ("missing_connection", PortError,
     r"unit 'E1': key 'vapour_out': port 'vapour_out' \(vapour outlet\) is not connected", "unit 'E1'"),
    ("product_weaker_than_feed", InfeasibleSpecificationError,
     r"unit 'product': key 'solids': solids fixed at 5 %, not above the 10 % of the feed 'feed': "
     r"evaporation can only concentrate", "unit 'product'"),
    ("steam_colder_than_liquor", InfeasibleSpecificationError,
     r"unit 'E1': key 'pressure': the live steam from 'steam' \(69\.1 °C\) is not above the boiling point "
     r"of the liquor in E1 \(at least 77\.\d °C", "unit 'E1'"),
    ("no_room_for_the_rises", InfeasibleSpecificationError,
     r"unit 'E3': key 'pressure': the 9\.\d+ K between the live steam from 'steam' \(99\.6 °C\) and the "
     r"pressure of E3 .* do not cover the boiling-point rises of E1\.\.E3", "unit 'E3'"),
    ("missing_type", InputError, r"unit 'E1': key 'type': missing key 'type'", "unit 'E1'"),
    ("unknown_type", InputError,
     r"unit 'E1': key 'type': unknown unit type 'evaporator'; valid types: .*\beffect\b", "unit 'E1'"),
    ("malformed_stream", InputError,
     r"key 'streams.feed': expected \"unit.port -> unit.port\", got 'feed.out => E1.liquor_in'",
     "key 'streams.feed'"),
    ("stream_without_port", PortError, r"key 'stream feed': expected 'unit.port', got 'feed'",
     "key 'stream feed'"),
    ("invalid_toml", InputError, r"not valid TOML: .*line 10", "not valid TOML"),
    ("too_many_specifications", SpecificationError,
     r"too many specifications: 17 equations but 16 unknowns; free 1 value(.|\n)*E1(.|\n)*E1\.area",
     "too many specifications"),
    ("too_few_specifications", SpecificationError,
     r"too few specifications: 18 unknowns but 17 equations; fix 1 more value(.|\n)*E1\.area",
     "too few specifications"),
]


def test_the_base_file_is_good():
    solution = load_and_solve(bad("good_single_effect"))
    assert solution.converged, solution.problems


@pytest.mark.parametrize("name, error, pattern, where", CASES, ids=[c[0] for c in CASES])
def test_python_api_refuses_bad_input(name, error, pattern, where):
    with pytest.raises(error, match=pattern) as info:
        load_and_solve(bad(name))
    assert info.value.file == bad(name)
    assert str(info.value).startswith(bad(name) + ": ")


@pytest.mark.parametrize("name, error, pattern, where", CASES, ids=[c[0] for c in CASES])
def test_command_line_prints_a_located_error(name, error, pattern, where, capsys):
    code = main(["solve", bad(name)])
    captured = capsys.readouterr()
    assert code == 2
    assert captured.err.startswith(f"error: {bad(name)}: {where}"), captured.err
    assert re.search(pattern, captured.err)
    assert "Traceback" not in captured.err
    assert captured.out == ""


@pytest.mark.parametrize("name, words", [("too_many_specifications", "too many specifications"),
                                         ("too_few_specifications", "too few specifications"),
                                         ("structurally_singular", "structurally singular")])
def test_check_reports_the_imbalance_without_error(name, words, capsys):
    # `balance check` is the place to study an imbalance: it reports and returns 1, no error.
    code = main(["check", bad(name)])
    captured = capsys.readouterr()
    assert code == 1
    assert words in captured.out
    assert "E1" in captured.out and captured.err == ""


def test_structurally_singular_specification_is_refused_before_the_solve():
    with pytest.raises(SpecificationError, match="structurally singular"):
        load_and_solve(bad("structurally_singular"))


def test_structurally_singular_specification_on_the_command_line(capsys):
    assert main(["solve", bad("structurally_singular")]) == 2
    assert "structurally singular" in capsys.readouterr().err


# ---------------------------------------------------------------------------
# Bounds of fixed values in the Python API and on the command line


def test_python_api_refuses_solids_above_one():
    fs = Flowsheet("bounds")
    with pytest.raises(InputError, match=r"unit 'p': key 'p.solids': '120 %' is outside the physical range"):
        fs.add("product", "p", solids="120 %")


def test_python_api_refuses_a_negative_area():
    fs = Flowsheet("bounds")
    with pytest.raises(InputError, match=r"key 'E1.area': '-5 m2' is outside the physical range of this "
                                         r"variable, 0 to 1e\+06 m2"):
        fs.add("effect", "E1", area="-5 m2")


def test_command_line_fix_is_bound_checked(capsys):
    code = main(["solve", bad("good_single_effect"), "--fix", "E1.pressure=0.2 kPa"])
    err = capsys.readouterr().err
    assert code == 2
    assert "unit 'E1': key 'E1.pressure': '0.2 kPa' is outside the physical range of this variable, " \
           "0.611 to 20000 kPa" in err


def test_values_at_the_bounds_are_accepted():
    fs = Flowsheet("bounds")
    fs.add("product", "p", solids="100 %")
    fs.add("product", "q", solids="0 %")
    assert fs.fixed["p.solids"] == 1.0 and fs.fixed["q.solids"] == 0.0


# ---------------------------------------------------------------------------
# The feasibility pre-check itself


def _model(name, **fixes):
    fs = load(bad(name))
    for path, value in fixes.items():
        fs.fix(path.replace("__", "."), value)
    return compile_flowsheet(fs)


def test_precheck_finds_nothing_in_a_feasible_specification():
    model = _model("good_single_effect")
    assert precheck(model, model.parameter_values()) == []
    raise_if_infeasible(model, model.parameter_values())


def test_precheck_lists_every_problem_with_unit_and_key():
    # Product weaker than the feed and steam colder than the liquor at once.
    model = _model("good_single_effect", product__solids=0.05, steam__pressure=3.0e4, E1__pressure=4.0e4)
    problems = infeasibilities(model, model.parameter_values())
    assert {(p.unit, p.key) for p in problems} == {("product", "solids"), ("E1", "pressure")}
    texts = precheck(model, model.parameter_values())
    assert any(t.startswith("unit 'product': key 'solids': ") for t in texts)
    with pytest.raises(InfeasibleSpecificationError, match=r"; also unit '\w+': key '\w+'") as info:
        raise_if_infeasible(model, model.parameter_values())
    assert (info.value.unit, info.value.key) == (problems[0].unit, problems[0].key)


def test_precheck_uses_the_parameter_values_it_is_given():
    # The same model with other values: a sweep can check each point without recompiling.
    model = _model("good_single_effect")
    p = model.parameter_values().copy()
    index = [v.path for v in model.parameters].index("steam.pressure")
    p[index] = 3.0e4                      # 69.1 °C steam for a liquor boiling near 70 °C
    assert precheck(model, p)
    assert precheck(model, model.parameter_values()) == []


def test_precheck_driving_force_margin_follows_the_effect_setting(tmp_path):
    # Steam 3 K above the boiling point: accepted with the default smallest driving force
    # of 2 K, refused when the effect asks for 5 K.
    from balance.properties import water
    t_boil = float(water.saturation_temperature(3.0e4)) + 0.24     # BPR at 10 %: about 0.24 K
    steam = float(water.saturation_pressure(t_boil + 3.0))
    text = Path(bad("good_single_effect")).read_text(encoding="utf-8")
    for margin, refused in ((None, False), ("5 K", True)):
        variant = text if margin is None else text.replace(
            'pressure = "30 kPa"', f'pressure = "30 kPa"\nmin_driving_force = "{margin}"')
        path = tmp_path / f"margin_{margin}.toml"
        path.write_text(variant, encoding="utf-8")
        fs = load(path)
        fs.fix("product.solids", 0.10 + 1e-6)
        fs.fix("steam.pressure", steam)
        model = compile_flowsheet(fs)
        found = precheck(model, model.parameter_values())
        assert bool(found) == refused, found
        if refused:
            assert "smallest driving force of each effect (5 K)" in found[0]


def test_precheck_checks_the_condenser_below_a_fixed_last_pressure():
    # Cooling water at 70 °C cannot condense vapour at 30 kPa (69.1 °C).
    model = _model("good_single_effect", cooling__temperature=343.15,
                   condenser__cooling_out__temperature=348.15)
    texts = precheck(model, model.parameter_values())
    assert any(t.startswith("unit 'condenser': key 'cooling_out.temperature': the vapour from E1 "
                            "condenses at 69.1 °C") for t in texts), texts
