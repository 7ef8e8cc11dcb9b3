"""One plant, many specifications; two computations, one answer.

* Design -> rating -> feed rate: solve a train in design mode (product solids
  given, equal areas solved), give it the areas it got and free the product
  solids (rating) or the feed flow (feed rate): the same plant comes back.
* Any square choice: fix a pressure inside the train and free the condenser's
  cooling-water outlet temperature instead: the same plant again.
* Compiled equations against a plain-float evaluation of every unit's
  equations, over one case list (every demo flowsheet).
* The simultaneous solve against a hand sequence for a single effect without
  recycle, computed with CoolProp's IAPWS-IF97 backend for water and steam,
  the liquor model as floats and scipy's brentq.

Agreement demanded: 1e-6 relative between modes (the solves converge to a
scaled residual below 1e-9, so the answers agree to about 1e-8); 1e-8
relative against the hand sequence (two implementations of IF97, which
IAPWS asks to agree to 1e-8 on its verification values).
"""

from __future__ import annotations

import warnings
from pathlib import Path

import casadi as ca
import CoolProp.CoolProp as CP
import numpy as np
import pytest
from scipy.optimize import brentq

from balance.equations.model import compile_flowsheet
from balance.flowsheet import Flowsheet
from balance.flowsheet.file_format import load
from balance.properties.liquors import LiquorWarning, builtin_liquor
from balance.solve import Solver, solve
from balance.unitops.streams import StreamState

ROOT = Path(__file__).resolve().parent.parent
TRAIN = ROOT / "flowsheets" / "sweetwater_4_effect_backward.toml"
EFFECTS = ("E1", "E2", "E3", "E4")
SAME_PLANT = 1e-6


def _design():
    return load(TRAIN)


@pytest.fixture(scope="module")
def design():
    solution = solve(_design())
    assert solution.converged, solution.problems
    return solution


def _assert_same_plant(a, b, rel=SAME_PLANT):
    """Every stream's flow, solids, temperature and pressure and every unit quantity agree."""
    assert set(a.values) == set(b.values)
    for path, value in a.values.items():
        assert b.values[path] == pytest.approx(value, rel=rel, abs=1e-9), path


def _rating_flowsheet(design):
    fs = _design()
    fs.same = []
    for name in EFFECTS:
        fs.fix(f"{name}.area", design.value(f"{name}.area"))
    fs.free("syrup.solids")
    return fs


def test_rating_gives_back_the_design(design):
    fs = _rating_flowsheet(design)
    model = compile_flowsheet(fs)
    assert not model.variable("syrup.solids").fixed
    assert not model.variable("steam.flow").fixed
    rating = solve(model)
    assert rating.converged, rating.problems
    assert rating.value("syrup.solids") == pytest.approx(0.60, rel=SAME_PLANT)
    assert rating.value("steam.flow") == pytest.approx(design.value("steam.flow"), rel=SAME_PLANT)
    _assert_same_plant(design, rating)


def test_feed_rate_mode_gives_back_the_feed(design):
    fs = _rating_flowsheet(design)
    fs.fix("syrup.solids", 0.60)
    fs.free("feed.flow")
    fs.guesses["feed.flow"] = 2.0       # start well away from the answer (12 t/h = 3.33 kg/s)
    capacity = solve(fs)
    assert capacity.converged, capacity.problems
    assert capacity.value("feed.flow") * 3.6 == pytest.approx(12.0, rel=SAME_PLANT)
    _assert_same_plant(design, capacity)


def test_any_square_choice_pressure_inside_the_train(design):
    # Fix E2's pressure instead of E4's, and the cooling-water flow instead of its outlet
    # temperature, at their design values. (Fixing E2's pressure while E4's stays fixed and
    # freeing the outlet temperature is square in count but structurally singular: see
    # tests/test_bad_input.py.)
    fs = _design()
    fs.fix("E2.pressure", design.value("E2.pressure"))
    fs.free("E4.pressure")
    fs.fix("cooling.flow", design.value("cooling.flow"))
    fs.free("condenser.cooling_out.temperature")
    other = solve(fs)
    assert other.converged, other.problems
    assert other.value("condenser.cooling_out.temperature") == pytest.approx(38.0 + 273.15, rel=SAME_PLANT)
    _assert_same_plant(design, other)


def test_rating_answers_a_different_steam_pressure_sensibly(design):
    # A rated plant given hotter steam evaporates more: stronger product, more steam.
    fs = _rating_flowsheet(design)
    fs.fix("steam.pressure", 1.6e5)
    hotter = solve(fs)
    assert hotter.converged, hotter.problems
    assert hotter.value("syrup.solids") > 0.60
    assert hotter.value("steam.flow") > design.value("steam.flow")


# ---------------------------------------------------------------------------
# Compiled equations against a plain-float evaluation


class FloatContext:
    """A `UnitContext` that hands a unit plain floats and collects float residuals."""

    def __init__(self, ports, quantities):
        self._ports = ports
        self._quantities = quantities
        self.residuals: list[tuple[str, float]] = []

    def port(self, name):
        return self._ports.get(name)

    def quantity(self, name):
        return self._quantities[name]

    def equation(self, purpose, residual, scale="other"):
        assert not isinstance(residual, (ca.SX, ca.MX)), purpose
        self.residuals.append((purpose, float(residual)))

    def check_range(self, check):
        pass


def float_residuals(model, values):
    """Every unit's residuals, written by the unit itself with floats; label -> value."""
    fs = model.flowsheet
    states = {name: StreamState(state.kind, {var: values[f"{name}.{var}"] for var in state.kind.variable_names},
                                name=name, liquor=state.liquor)
              for name, state in model.states.items()}
    out = {}
    for name, unit in fs.units.items():
        ports = {}
        for stream in fs.streams:
            if stream.source == name:
                ports[stream.source_port] = states[stream.name]
            if stream.target == name:
                ports[stream.target_port] = states[stream.name]
        ctx = FloatContext(ports, {q.name: values[f"{name}.{q.name}"] for q in unit.quantities()})
        unit.equations(ctx)
        for purpose, residual in ctx.residuals:
            out[f"{name}: {purpose}"] = residual
    return out


CASES = sorted((ROOT / "flowsheets").glob("*.toml"))


@pytest.mark.parametrize("path", CASES, ids=lambda p: p.stem)
def test_compiled_equations_match_a_plain_float_evaluation(path):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", LiquorWarning)
        solver = Solver(load(path))
    solution = solver.solve()
    assert solution.converged, solution.problems
    model = solver.model
    evaluator = solver.evaluator
    scale = dict(zip((e.label for e in model.equations), model.residual_scale))
    rng = np.random.default_rng(7)
    for x in (np.asarray(solution.x, dtype=float),
              np.asarray(solution.x, dtype=float) * (1 + 1e-3 * rng.standard_normal(model.n_unknowns))):
        figures = evaluator.evaluate(x, solver.p)
        values = {v.path: figures[("var", v.path)] for v in model.variables}
        compiled = {e.label: figures[("residual", i)] for i, e in enumerate(model.equations)
                    if e.unit != "specification"}
        plain = float_residuals(model, values)
        assert set(plain) == set(compiled)
        for label, value in compiled.items():
            # Same equation, two evaluations: agree to round-off in the residual's own scale.
            assert plain[label] == pytest.approx(value, rel=1e-9, abs=1e-9 * scale[label]), label
    at_root = float_residuals(model, solution.values)
    worst = max(abs(r) / scale[label] for label, r in at_root.items())
    assert worst < 1e-8


# ---------------------------------------------------------------------------
# The simultaneous solve against a hand sequence (single effect, no recycle)


def _if97(output, name1, value1, name2, value2):
    return CP.PropsSI(output, name1, value1, name2, value2, "IF97::Water")


def test_single_effect_against_a_hand_sequence():
    liquor = builtin_liquor("sucrose")
    F, x_F, T_F = 5.0, 0.20, 330.0          # kg/s, -, K
    x_P, T_P = 0.55, 343.15                  # product solids; the boiling temperature is fixed
    p_s, U = 2.0e5, 1800.0                   # saturated live steam [Pa]; W/m2/K

    fs = Flowsheet("single effect, sucrose")
    fs.liquors["sucrose"] = liquor
    fs.add("feed", "feed", liquor="sucrose", flow=f"{F} kg/s", solids=x_F, temperature=f"{T_F} K")
    fs.add("steam_supply", "steam", pressure=f"{p_s} Pa")
    fs.add("effect", "E1", U=f"{U} W/m2/K")
    fs.add("product", "product", solids=x_P, temperature=f"{T_P} K")
    fs.add("outlet", "vapour", stream="vapour")
    fs.connect("feed.out", "E1.liquor_in")
    fs.connect("steam.out", "E1.heating_in")
    fs.connect("E1.liquor_out", "product.in")
    fs.connect("E1.vapour_out", "vapour.in")
    solution = solve(fs)
    assert solution.converged, solution.problems

    # By hand, in sequence. Mass balances:
    L = F * x_F / x_P
    V = F - L
    # The pressure at which the concentrate boils at T_P (water-activity BPR depends on T and p).
    def boiling_gap(p):
        t_water = _if97("T", "P", p, "Q", 0)
        return t_water + float(liquor.boiling_point_rise(x_P, t_water, p)) - T_P
    p = brentq(boiling_gap, 5e3, 1e5, xtol=1e-10, rtol=1e-14)
    # Energy balance of the boiling side; vapour superheated by the BPR at (T_P, p).
    h_F = float(liquor.enthalpy(x_F, T_F))
    h_L = float(liquor.enthalpy(x_P, T_P))
    h_V = _if97("H", "T", T_P, "P", p)
    Q = L * h_L + V * h_V - F * h_F
    # Steam condenses from saturated vapour to saturated liquid.
    T_s = _if97("T", "P", p_s, "Q", 1)
    S = Q / (_if97("H", "P", p_s, "Q", 1) - _if97("H", "P", p_s, "Q", 0))
    A = Q / (U * (T_s - T_P))

    assert solution.value("E1.pressure") == pytest.approx(p, rel=1e-8)
    assert solution.value("E1.duty") == pytest.approx(Q, rel=1e-8)
    assert solution.value("steam.flow") == pytest.approx(S, rel=1e-8)
    assert solution.value("E1.area") == pytest.approx(A, rel=1e-8)
    assert solution.value("E1.vapour_out.flow") == pytest.approx(V, rel=1e-12)
