"""Sweeps (balance.analysis.sweep) and the benchmark's hand-written baseline (balance.analysis.benchmark).

Correctness only; speed is measured by `balance benchmark`, never here.
The main checks compare two computations (STYLE 5): every sweep row against
a direct, cold solve of the same case by `Solver`; the local executors and
a Dask cluster against each other; and the baseline (scipy fsolve with
CoolProp's IAPWS-95) against our model (IF97) on the demo plant.
"""

from __future__ import annotations

import csv
import math
import os

import numpy as np
import pytest

from balance.analysis import sweep
from balance.analysis.key_figures import key_figures
from balance.errors import InfeasibleSpecificationError, InputError
from balance.flowsheet.file_format import load
from balance.solve.solver import Solver

HERE = os.path.dirname(os.path.abspath(__file__))
DEMO = os.path.join(HERE, "..", "flowsheets", "skim_milk_3_effect_forward.toml")


@pytest.fixture(autouse=True)
def _private_cache(tmp_path, monkeypatch):
    """Compiled batch functions go to a folder of the test's own."""
    monkeypatch.setenv("BALANCE_CACHE_DIR", str(tmp_path / "cache"))


@pytest.fixture(scope="module")
def demo():
    return load(DEMO)


def _direct(path_values: dict[str, float]):
    """A cold solve of one case, the way a user would do it by hand."""
    fs = load(DEMO)
    for path, value in path_values.items():
        fs.fix(path, value)
    return Solver(fs).solve()


def _plain(rows):
    """Rows with NaN written as None, so that equal rows compare equal."""
    return [[None if isinstance(v, float) and math.isnan(v) else v for v in row] for row in rows]


def _rel(a: float, b: float) -> float:
    return abs(a - b) / max(abs(b), 1e-12)


# -- what varies ---------------------------------------------------------------------------------

def test_parse_vary_range_converts_units_and_includes_both_ends(demo):
    p = sweep.parse_vary(demo, "feed.flow=18 t/h:22 t/h:5")
    # 1 t/h = 1000 kg / 3600 s (definition)
    assert p.values[0] == pytest.approx(18 / 3.6, rel=1e-12)
    assert p.values[-1] == pytest.approx(22 / 3.6, rel=1e-12)
    assert len(p.values) == 5 and p.kind == "mass_flow"
    assert (p.low, p.high) == pytest.approx((18 / 3.6, 22 / 3.6))


def test_parse_vary_list_and_pressure_units(demo):
    p = sweep.parse_vary(demo, "steam.pressure=0.9 bar, 1 bar,120 kPa")
    assert p.values == pytest.approx((0.9e5, 1.0e5, 1.2e5))   # 1 bar = 1e5 Pa (definition)
    assert p.low is None


@pytest.mark.parametrize("text, match", [
    ("feed.flow", "PATH=LOW:HIGH:STEPS"),
    ("feed.flow=15 t/h:25 t/h:many", "whole number"),
    ("feed.flow=15 t/h:25 t/h", "LOW:HIGH:STEPS"),
    ("feed.flow=15 degC:25 degC:3", "feed.flow"),
    ("E9.area=1 m2,2 m2", "E9"),
])
def test_parse_vary_errors_name_the_key(demo, text, match):
    with pytest.raises(InputError, match=match):
        sweep.parse_vary(demo, text)


def test_a_solved_variable_cannot_be_varied(demo):
    parameter = sweep.list_parameter(demo, "E1.area", ["100 m2", "120 m2"])
    with pytest.raises(InputError, match="'E1.area' is not a fixed value"):
        sweep.run_sweep(DEMO, [parameter], executor="serial", compile="never")


def test_snake_order_visits_every_grid_point_once_stepping_to_a_neighbour():
    order = sweep.snake_order([3, 4, 2])
    assert len(order) == len(set(order)) == 24
    for a, b in zip(order, order[1:]):
        assert sum(abs(i - j) for i, j in zip(a, b)) == 1


def test_random_cases_stay_in_their_ranges_and_repeat_with_the_seed(demo):
    params = [sweep.parse_vary(demo, "feed.flow=15 t/h:25 t/h:2"),
              sweep.parse_vary(demo, "steam.pressure=0.9 bar,1.1 bar")]
    a = sweep.make_cases(params, "random", 200, seed=3)
    b = sweep.make_cases(params, "random", 200, seed=3)
    assert np.array_equal(a, b)
    assert a.shape == (200, 2)
    assert np.all((a[:, 0] >= 15 / 3.6) & (a[:, 0] <= 25 / 3.6))
    assert np.unique(a[:, 1]) == pytest.approx([0.9e5, 1.1e5], rel=1e-12)
    with pytest.raises(InputError, match="samples"):
        sweep.make_cases(params, "random", 0)


# -- rows against direct solves ------------------------------------------------------------------

def test_every_row_equals_a_direct_solve(demo):
    params = [sweep.parse_vary(demo, "feed.flow=15 t/h:25 t/h:3"),
              sweep.parse_vary(demo, "steam.pressure=0.7 bar:1.5 bar:3")]
    result = sweep.run_sweep(DEMO, params, executor="serial", compile="never", chunk_size=4,
                             outputs=["E1.area", "V2.pressure", "E2.driving_force"])
    assert len(result) == 9 and result.n_converged == 9
    worst = 0.0
    for i, outcome in enumerate(result.outcomes):
        case = dict(zip([p.path for p in params], result.inputs[i]))
        direct = _direct(case)
        assert direct.converged
        figures = key_figures(direct)
        assert outcome.converged and outcome.reason == ""
        for name, value in zip(result.figure_names, outcome.figures):
            reference = figures[name].value
            if math.isnan(reference):
                assert math.isnan(value)
                continue
            if reference == 0.0:
                assert abs(value) < 1e-9
                continue
            worst = max(worst, _rel(value, reference))
        assert outcome.outputs[0] == pytest.approx(direct.value("E1.area"), rel=1e-8)
        assert outcome.outputs[1] == pytest.approx(direct.value("V2.pressure"), rel=1e-8)
        assert outcome.outputs[2] == pytest.approx(direct.units["E2"].figures["driving_force"], rel=1e-8)
    # both are Newton roots to 1e-9 scaled residual; the key figures agree to far better than 1e-8
    assert worst < 1e-8


def test_a_failed_case_is_kept_explained_and_agrees_with_a_direct_solve(demo):
    # 0.15 bar steam condenses at about 54 °C, below the last effect's 58 °C: no plant can do this
    # (saturation temperature at 15 kPa: 53.97 °C, IAPWS-IF97 / any steam table)
    params = [sweep.parse_vary(demo, "steam.pressure=0.15 bar,1 bar")]
    result = sweep.run_sweep(DEMO, params, executor="serial", compile="never")
    assert len(result) == 2
    bad, good = result.outcomes
    assert good.converged and not bad.converged
    assert bad.reason and bad.status != "converged"
    assert all(math.isnan(v) for v in bad.figures)          # a failed case shows no key figures
    assert bad.status == "infeasible specification"
    with pytest.raises(InfeasibleSpecificationError) as direct:   # what a direct solve says
        _direct({"steam.pressure": 0.15e5})
    assert direct.value.message.split(";")[0] in bad.reason
    assert result.counts["failed"] == 1
    row = result.rows()[0]
    assert row[result.columns().index("converged")] is False


def test_vectorised_checks_give_the_verdicts_of_the_exact_checks(demo):
    params = [sweep.parse_vary(demo, "feed.flow=15 t/h:25 t/h:4"),
              sweep.parse_vary(demo, "steam.pressure=0.15 bar,0.6 bar,1 bar,2 bar")]
    screened = sweep.run_sweep(DEMO, params, executor="serial", compile="never", key_figures=False,
                               outputs=["steam.flow"], checks="screen")
    exact = sweep.run_sweep(DEMO, params, executor="serial", compile="never", key_figures=False,
                            outputs=["steam.flow"], checks="exact")
    assert _plain(screened.rows()) == _plain(exact.rows())
    assert 0 < screened.n_converged < len(screened)          # both kinds of case are in the grid
    assert not screened.notes or all("vectorised" not in n for n in screened.notes)


def test_screen_rejects_what_check_values_and_overall_balances_reject(demo):
    """Spoil one figure at a time in a solved case; the screen and the exact checks must agree."""
    from balance.solve.checks import check_values, overall_balances
    engine = sweep.CompiledSweepModel(sweep.ModelSource.from_file(DEMO), ["feed.flow"])
    base = engine.solver.solve()
    x = np.asarray(base.x)
    cases = np.array([[engine.base_p[engine.parameter_rows[0]]]])
    dx, dr = engine.solver.system.scales(x)
    _, figures, _ = engine.batch.run(x[:, None], engine.parameters_for(cases), dx, dr)
    keys = engine.solver.evaluator.keys
    row = {key: i for i, key in enumerate(keys)}
    spoilt = {
        "negative flow": (row[("var", "V2.flow")], -1e-3),
        "fraction above one": (row[("var", "L1.solids")], 1.2),
        "temperature out of range": (row[("var", "L2.temperature")], 1000.0),
        "crossed driving force": (row[("unit", "E2", "driving_force")], -0.5),
        "vapour below saturation": (row[("var", "V1.temperature")], figures[row[("var", "V1.temperature")], 0] - 2),
        "water balance open": (row[("stream", "feed", "water_flow")], figures[row[("stream", "feed", "water_flow")], 0] * 1.01),
        "energy balance open": (row[("stream", "feed", "enthalpy_flow")], figures[row[("stream", "feed", "enthalpy_flow")], 0] + 1e5),
        "not a number": (row[("var", "E1.area")], float("nan")),
    }
    assert engine.assembler.screen(figures).tolist() == [True]
    for what, (i, value) in spoilt.items():
        bad = figures.copy()
        bad[i, 0] = value
        column = dict(zip(keys, bad[:, 0].tolist()))
        exact_ok = not check_values(engine.solver.model, column) and all(
            b.closes for b in overall_balances(engine.solver.model, column).values())
        assert not exact_ok, what
        assert engine.assembler.screen(bad).tolist() == [False], what


def test_compiled_and_interpreted_batches_give_identical_rows(demo):
    if sweep.c_compiler() is None:
        pytest.skip("no C compiler")
    params = [sweep.parse_vary(demo, "feed.flow=16 t/h:24 t/h:4"),
              sweep.parse_vary(demo, "E3.pressure=16 kPa:20 kPa:3")]
    interpreted = sweep.run_sweep(DEMO, params, executor="serial", compile="never", key_figures=False,
                                  outputs=["steam.flow", "E1.area"])
    compiled = sweep.run_sweep(DEMO, params, executor="serial", compile="always", key_figures=False,
                               outputs=["steam.flow", "E1.area"])
    assert compiled.compiled and not interpreted.compiled
    assert _plain(compiled.rows()) == _plain(interpreted.rows())


def test_worker_processes_give_the_rows_of_a_serial_run(demo):
    params = [sweep.parse_vary(demo, "feed.flow=15 t/h:25 t/h:5"),
              sweep.parse_vary(demo, "steam.pressure=0.8 bar:1.2 bar:3")]
    serial = sweep.run_sweep(DEMO, params, executor="serial", compile="never", chunk_size=4)
    pooled = sweep.run_sweep(DEMO, params, executor="processes", workers=2, compile="never", chunk_size=4)
    assert pooled.executor == "processes" and pooled.workers == 2
    assert _plain(pooled.rows()) == _plain(serial.rows())


def test_dask_cluster_gives_the_rows_of_the_local_run(demo):
    distributed = pytest.importorskip("distributed")
    params = [sweep.parse_vary(demo, "feed.flow=15 t/h:25 t/h:4"),
              sweep.parse_vary(demo, "steam.pressure=0.8 bar:1.2 bar:3")]
    local = sweep.run_sweep(DEMO, params, executor="processes", workers=2, compile="never", chunk_size=5)
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None,
                                  host="127.0.0.1") as cluster:
        remote = sweep.run_sweep(DEMO, params, dask_scheduler=cluster.scheduler_address, compile="never",
                                 chunk_size=5)
    assert remote.executor == "dask" and remote.workers == 2
    assert _plain(remote.rows()) == _plain(local.rows())


def test_unreachable_dask_scheduler_is_an_input_error(demo):
    pytest.importorskip("distributed")
    params = [sweep.parse_vary(demo, "feed.flow=15 t/h,20 t/h")]
    with pytest.raises(InputError, match="Dask scheduler"):
        sweep.run_sweep(DEMO, params, dask_scheduler="tcp://127.0.0.1:9", compile="never")


# -- files ------------------------------------------------------------------------------------

def test_csv_reads_back_with_units_in_headers(demo, tmp_path):
    params = [sweep.parse_vary(demo, "feed.flow=18 t/h,22 t/h")]
    result = sweep.run_sweep(DEMO, params, executor="serial", compile="never")
    out = result.write(str(tmp_path / "rows.csv"), units="display")
    with open(out, newline="", encoding="utf-8") as handle:
        rows = list(csv.DictReader(handle))
    assert len(rows) == 2
    assert float(rows[1]["feed.flow [kg/h]"]) == pytest.approx(22000.0, rel=1e-12)
    steam = result.figure_names.index("live_steam")
    assert float(rows[1]["live_steam [kg/h]"]) == pytest.approx(result.outcomes[1].figures[steam] * 3600,
                                                                 rel=1e-12)
    assert rows[0]["converged"] == "True"
    with pytest.raises(InputError, match="exists already"):
        result.write(out)
    with pytest.raises(InputError, match="csv or .parquet"):
        result.write(str(tmp_path / "rows.txt"))


def test_parquet_and_dataframe_read_back(demo, tmp_path):
    pd = pytest.importorskip("pandas")
    pytest.importorskip("pyarrow")
    params = [sweep.parse_vary(demo, "feed.flow=18 t/h,22 t/h")]
    result = sweep.run_sweep(DEMO, params, executor="serial", compile="never")
    path = result.write(str(tmp_path / "rows.parquet"))
    frame = pd.read_parquet(path)
    assert list(frame.columns) == result.columns()
    assert frame["live_steam [kg/s]"].tolist() == [o.figures[result.figure_names.index("live_steam")]
                                                    for o in result.outcomes]
    assert result.to_dataframe().shape == frame.shape


def test_sweep_file(tmp_path):
    spec = tmp_path / "study.toml"
    spec.write_text(f'''
[sweep]
flowsheet = "{os.path.abspath(DEMO)}"
sampling = "random"
samples = 4
seed = 7

[sweep.vary]
"feed.flow" = {{ from = "15 t/h", to = "25 t/h", steps = 2 }}
"steam.pressure" = {{ values = ["0.9 bar", "1.1 bar"] }}

[sweep.fix]
"E3.pressure" = "17 kPa"
''', encoding="utf-8")
    assert sweep.is_sweep_file(spec) and not sweep.is_sweep_file(DEMO)
    loaded = sweep.load_sweep(spec)
    assert [p.path for p in loaded.parameters] == ["feed.flow", "steam.pressure"]
    result = sweep.run_sweep(loaded.source, loaded.parameters, sampling=loaded.sampling, samples=loaded.samples,
                             seed=loaded.seed, executor="serial", compile="never", outputs=["E3.pressure"])
    assert len(result) == 4 and result.n_converged == 4
    assert all(o.outputs[0] == pytest.approx(17e3) for o in result.outcomes)   # the [sweep.fix] applies
    spec.write_text('[sweep]\nflowsheet = "x.toml"\nvary = 3\nmode = "grid"\n', encoding="utf-8")
    with pytest.raises(InputError, match="sweep.mode"):
        sweep.load_sweep(spec)


def test_command_line_sweep_writes_rows(tmp_path, capsys):
    from balance.cli import main
    out = tmp_path / "rows.csv"
    code = main(["sweep", DEMO, "--vary", "feed.flow=18 t/h:22 t/h:3", "--output-figure", "E1.area",
                 "--compile", "never", "--workers", "1", "--no-progress", "-o", str(out)])
    assert code == 0
    with open(out, newline="", encoding="utf-8") as handle:
        rows = list(csv.DictReader(handle))
    assert [r["converged"] for r in rows] == ["True"] * 3
    assert "E1.area [m2]" in rows[0]
    assert "3 cases: 3 converged" in capsys.readouterr().err
    assert main(["sweep", DEMO, "--vary", "E1.area=1 m2,2 m2", "--compile", "never", "--no-progress"]) == 2


# -- the benchmark's baseline -------------------------------------------------------------------

def test_baseline_and_balance_agree_on_the_demo_steam_flow():
    """Two computations of one plant: scipy fsolve on hand-written equations with CoolProp (IAPWS-95)
    against our compiled model (IAPWS-IF97). IF97 reproduces IAPWS-95 to well under 0.1 % in
    enthalpy over 5 kPa-1 MPa (IAPWS R7-97, and the project's own comparison in issue 2), so the
    steam flows must agree within 0.5 %."""
    pytest.importorskip("CoolProp")
    pytest.importorskip("scipy")
    from balance.analysis.benchmark import HandWrittenTrain
    solver = Solver(load(DEMO))
    solution = solver.solve()
    values = {v.path: v.fixed for v in solver.model.parameters}
    baseline = HandWrittenTrain(values, solver.model.states["feed"].liquor)
    z, ok = baseline.solve()
    assert ok
    assert z[0] == pytest.approx(key_figures(solution)["live_steam"].value, rel=5e-3)
    assert z[5] == pytest.approx(solution.value("E1.area"), rel=5e-3)


def test_generated_trains_are_square_and_solve():
    from balance.analysis.benchmark import effect_train_toml, train_flowsheet
    from balance.equations.model import compile_flowsheet
    for n in (1, 2, 3):
        model = compile_flowsheet(train_flowsheet(n))
        assert model.n_unknowns == model.n_equations
    solution = Solver(train_flowsheet(3)).solve()
    assert solution.converged
    areas = [solution.value(f"E{i}.area") for i in (1, 2, 3)]
    assert max(areas) == pytest.approx(min(areas), rel=1e-9)            # the "same" specification
    # water balance over the line: feed water out as vapour and concentrate (closure checked by the solver too)
    assert key_figures(solution)["product_solids"].value == pytest.approx(0.15, rel=1e-9)
    text = effect_train_toml(51)
    assert "[units.split2]" in text and "outlets = 2" in text              # two levels beyond 50 effects
    with pytest.raises(InputError, match="at least one effect"):
        effect_train_toml(0)


def test_benchmark_smoke_runs_a_small_part():
    from balance.analysis.benchmark import run_benchmark
    report = run_benchmark(quick=True, parts=["scaling"], sizes=[1, 2])
    assert [row["effects"] for row in report.scaling] == [1, 2]
    assert all(row["converged"] for row in report.scaling)
    assert "growth exponent" in report.text()
    with pytest.raises(InputError, match="unknown benchmark part"):
        run_benchmark(parts=["everything"])
