"""Capacity studies: limits whose binding rate is known by construction, two methods on one case list,
and every capacity confirmed by an independent square solve.

* Known by construction: on the existing evaporator (flowsheets/debottleneck_evaporator.toml)
  a feed-pump limit of 23 t/h must bind at exactly 23 t/h; a boiler limit set
  to the live steam a square solve needs at 25 t/h must bind at exactly 25 t/h
  (live steam rises with the feed); a limit set to the last-effect pressure at
  18 t/h is already broken today and must be found at 18 t/h below today's
  rate; a limit far out of reach must not bind.
* The sweep (continuation on the feed rate with regula falsi) and the
  optimisation (IPOPT maximising the feed under each limit alone) are run on
  the same limits and must agree.
* On both demos, each capacity the sweep finds is re-solved as a plain square
  problem at that feed rate: the limited quantity must sit on its bound.

Tolerances: the crossing is located to 1e-6 relative in the feed rate, so the
rates agree to 1e-5 relative.
"""

from __future__ import annotations

import casadi as ca
import pytest

from balance.analysis.capacity import capacity_study
from balance.analysis.optimise import read_limits
from balance.errors import InputError
from balance.flowsheet.file_format import load
from balance.solve import Solver

EXISTING = "flowsheets/debottleneck_evaporator.toml"
LINE = "flowsheets/debottleneck_evaporator_and_dryer.toml"
T_PER_H = 1000.0 / 3600.0


def _solve_at(path, feed_t_per_h, fs=None):
    solver = Solver(fs or load(path))
    solver.set("feed.flow", feed_t_per_h * T_PER_H)
    solution = solver.solve()
    assert solution.converged, solution.problems
    return solver, solution


@pytest.fixture(scope="module")
def constructed_limits():
    _, at_25 = _solve_at(EXISTING, 25.0)
    _, at_18 = _solve_at(EXISTING, 18.0)
    return {
        "feed pump": "feed.flow <= 23 t/h",
        "boiler": f"live_steam <= {at_25.value('steam.flow') * 3600:.15g} kg/h",
        "last-effect vacuum": f"E3.pressure <= {at_18.value('E3.pressure'):.15g} Pa",
        "far away": "live_steam <= 100 t/h",
    }


@pytest.mark.parametrize("method", ["sweep", "optimise"])
def test_limits_bind_where_they_were_built_to(constructed_limits, method):
    study = capacity_study(load(EXISTING), up_to=30 * T_PER_H, limits=constructed_limits, method=method,
                           vary={})
    by_name = {l.name: l for l in study.limits}
    assert study.ranking == ["last-effect vacuum", "feed pump", "boiler", "far away"]
    assert by_name["last-effect vacuum"].capacity / T_PER_H == pytest.approx(18.0, rel=1e-5)
    assert by_name["last-effect vacuum"].exceeded_now
    assert by_name["feed pump"].capacity / T_PER_H == pytest.approx(23.0, rel=1e-5)
    assert by_name["boiler"].capacity / T_PER_H == pytest.approx(25.0, rel=1e-5)
    assert by_name["far away"].capacity is None
    assert study.current / T_PER_H == pytest.approx(20.0, rel=1e-12)


def test_sweep_text_ranks_and_says_what_binds_next(constructed_limits):
    study = capacity_study(load(EXISTING), up_to=30 * T_PER_H, limits=constructed_limits)
    text = study.text
    assert "already broken today: last-effect vacuum" in text
    assert "first bottleneck: last-effect vacuum, at 18,000 kg/h (-10.0 % on today)" in text
    assert "relieve it and the line reaches 23,000 kg/h, where feed pump binds" in text
    assert "not up to 30,000 kg/h" in text


@pytest.fixture(scope="module")
def evaporator_sweep():
    return capacity_study(load(EXISTING))


def test_the_two_methods_agree_on_the_evaporator_demo(evaporator_sweep):
    by_optimisation = capacity_study(load(EXISTING), method="optimise", vary={})
    assert by_optimisation.ranking == evaporator_sweep.ranking
    for a, b in zip(evaporator_sweep.limits, by_optimisation.limits):
        assert a.capacity == pytest.approx(b.capacity, rel=1e-5), a.name
    # Relieving the limits one round at a time follows the ranking of the sweep.
    binding = [binds for _, _, binds in by_optimisation.relief if binds]
    assert [b[0] for b in binding] == evaporator_sweep.ranking


@pytest.mark.parametrize("path", [EXISTING, LINE])
def test_each_capacity_is_confirmed_by_a_square_solve(path, evaporator_sweep):
    fs = load(path)
    study = evaporator_sweep if path == EXISTING else capacity_study(fs)
    assert study.unsolvable_from is None
    solver = Solver(load(path))
    limits = {l.name: l for l in read_limits(solver.model, fs.extras["limits"])}
    for entry in study.limits:
        if entry.capacity is None:
            continue
        solver.set("feed.flow", entry.capacity)
        solution = solver.solve()
        assert solution.converged, solution.problems
        limit = limits[entry.name]
        value = float(ca.Function("v", [solver.model.x, solver.model.p], [limit.expression.expr])(
            solution.x, solver.p))
        assert value == pytest.approx(limit.bound, rel=1e-5), entry.name


def test_the_powder_line_is_held_back_by_its_fan_first():
    # The fan moves 47,600 m3/h today against 51,000 m3/h it can move: the dryer's air, nearly
    # proportional to the water it removes, runs out at about +7 %, before the evaporator's
    # limits at +10 % and beyond (by construction of the demo).
    study = capacity_study(load(LINE))
    assert study.ranking[0] == "fan capacity"
    assert study.first.capacity / T_PER_H == pytest.approx(20.0 * 51000 / 47628, rel=0.01)
    assert study.ranking[1] == "concentrate temperature"
    assert "first bottleneck: fan capacity" in study.text


def test_a_line_without_a_steady_state_beyond_some_rate_says_so():
    # Steam pressure held at 1 bar and the cooling water left to follow the load: the condenser
    # must pull an ever deeper vacuum, and beyond some feed no cooling-water flow can.
    fs = load(EXISTING)
    fs.fix("steam.pressure", 1.0e5)
    fs.free("cooling.flow")
    study = capacity_study(fs, up_to=24 * T_PER_H, limits={"pump": "cooling_water <= 1000 t/h"}, steps=4)
    assert study.unsolvable_from is not None
    assert 20.0 < study.unsolvable_from / T_PER_H < 24.0
    assert study.limits[0].capacity < study.unsolvable_from
    assert "no steady state above about" in study.text


def test_bad_requests_name_the_key():
    fs = load(EXISTING)
    with pytest.raises(InputError, match="'E1.duty' is not a fixed value") as info:
        capacity_study(fs, throughput="E1.duty")
    assert info.value.key == "capacity.throughput"
    with pytest.raises(InputError, match="unknown method 'fastest'; methods: sweep, optimise"):
        capacity_study(fs, method="fastest")
    with pytest.raises(InputError, match=r"needs limits: add a \[limits\] table"):
        capacity_study(fs, limits={})
    with pytest.raises(InputError, match="up_to must lie above today's value"):
        capacity_study(fs, up_to=10 * T_PER_H)


def test_command_line_capacity_and_optimise(capsys):
    from balance.cli import main
    assert main(["capacity", EXISTING, "--up-to", "30 t/h", "--steps", "12"]) == 0
    out = capsys.readouterr().out
    assert "first bottleneck: concentrate temperature" in out
    assert main(["optimise", EXISTING]) == 0
    out = capsys.readouterr().out
    assert "concentrate temperature one kelvin higher would allow" in out
    assert main(["optimise", EXISTING, "--objective", "cheapest"]) == 2
    assert "unknown objective 'cheapest'" in capsys.readouterr().err
