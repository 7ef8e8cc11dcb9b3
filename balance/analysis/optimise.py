"""Optimisation over the flowsheet's own equations (IPOPT): objectives, decisions, limits and
what each active limit is worth.

The square model of a flowsheet fixes as many values as it has spare
degrees of freedom. An optimisation frees some of them (the *decisions*,
each between two bounds), keeps every equation g(x, p) = 0 as an equality
constraint, adds the plant's *limits* as inequality constraints, and lets
IPOPT choose the decisions that minimise or maximise an *objective*. The
optimum is then handed back to the ordinary square solve, with the
decisions fixed at their optimal values, so it passes every result check a
plain solve passes.

The multiplier of each active limit is the rate at which the objective
would improve if the limit were relaxed; `OptimisationResult.text` turns it
into plant words ("one more kg/h of live steam would allow 3.1 kg/h more
feed").

The file format, in the flowsheet file (see docs/optimisation-and-capacity.md)::

    [economics]                        # prices, shared with the cost figures of every report
    steam_price = "35 / t"             # or per MWh of live-steam heat
    electricity_price = "150 / MWh"
    cooling_water_price = "0.05 / t"
    operating_hours = "7500 h"

    [optimise]
    objective = "least live steam"     # or "least energy cost", "least annual cost",
                                       # "most feed", { minimise = "EXPR" }, { maximise = "EXPR" }
    vary = { "steam.pressure" = ["1.2 bar", "3 bar"], "E3.pressure" = ["12 kPa", "25 kPa"] }

    [optimise.capital]                 # for "least annual cost"
    units = ["E1", "E2", "E3"]         # default: every unit with an area
    fixed = 40000                      # money per unit
    per_area = 2500                    # money per m2 ** exponent
    exponent = 0.7
    interest = "8 %"
    life = 15                          # years

    [limits]
    "steam supply" = "live_steam <= 7 t/h"
    "E1 driving force" = "E1.driving_force >= 5 K"
    "product temperature" = { expression = "concentrate.temperature", max = "62 degC" }

An expression is arithmetic (+ - * / **, min, max, abs, numbers in SI) on
variable paths (``E1.area``, ``feed.flow``, ``E2.vapour_out.pressure``), on
the figures each unit reports (``E1.driving_force``, ``E2.boiling_point_rise``)
and on the plant totals in `AGGREGATES` (``live_steam``, ``feed``,
``product``, ``water_removed``, ``cooling_water``, ``heating_area``,
``electric_power``, ``fuel_power``).
"""

from __future__ import annotations

import ast
import re
import time
from contextlib import contextmanager
from dataclasses import dataclass
from typing import Any, Callable

import casadi as ca
import numpy as np

from balance import quantities
from balance.quantities import format_number
from balance.equations.model import Model, compile_flowsheet, resolve_path
from balance.errors import InputError, SolveError, SpecificationError
from balance.flowsheet.graph import Flowsheet

# ---------------------------------------------------------------------------------------------
# Plant totals usable in expressions

PRODUCT_KINDS = ("liquor", "powder")
#: Names of unit quantities or figures counted as purchased electric power, best first
#: (a unit with no electrical figure but a shaft power counts that).
POWER_NAMES = ("electrical_power", "electric_power", "shaft_power")


def _streams_from(model: Model, test) -> list:
    fs = model.flowsheet
    return [model.states[s.name] for s in fs.streams if test(s, fs.unit(s.source), fs.unit(s.target))]


def _sum(items) -> Any:
    total = ca.SX(0)
    for item in items:
        total = total + item
    return total


def _live_steam(model):
    return _sum(s.flow for s in _streams_from(model, lambda s, a, b: a.type_name == "steam_supply"))


def _feed(model):
    return _sum(s.flow for s in _streams_from(model, lambda s, a, b: s.kind in PRODUCT_KINDS
                                              and a.boundary == "source"))


def _product(model):
    return _sum(s.flow for s in _streams_from(model, lambda s, a, b: s.kind in PRODUCT_KINDS
                                              and b.boundary == "sink"))


def _water_removed(model):
    into = _sum(s.water_flow for s in _streams_from(model, lambda s, a, b: s.kind in PRODUCT_KINDS
                                                    and a.boundary == "source"))
    out = _sum(s.water_flow for s in _streams_from(model, lambda s, a, b: s.kind in PRODUCT_KINDS
                                                   and b.boundary == "sink"))
    return into - out


def _cooling_water(model):
    return _sum(s.flow for s in _streams_from(model, lambda s, a, b: a.type_name == "cooling_water"))


def _heating_area(model):
    return _sum(model.by_path[f"{n}.area"].symbol for n, u in model.flowsheet.units.items()
                if u.type_name == "effect" and f"{n}.area" in model.by_path)


def _electric_power(model):
    terms = []
    for name, unit in model.flowsheet.units.items():
        for key in POWER_NAMES:
            if f"{name}.{key}" in model.by_path and model.by_path[f"{name}.{key}"].kind == "power":
                terms.append(model.by_path[f"{name}.{key}"].symbol)
                break
            if key in model.reports.get(name, {}) and model.reports[name][key][1] == "power":
                terms.append(model.reports[name][key][0])
                break
    return _sum(terms)


def _fuel_power(model):
    terms = []
    for name, unit in model.flowsheet.units.items():
        if f"{name}.fuel_power" in model.by_path:
            terms.append(model.by_path[f"{name}.fuel_power"].symbol)
        elif unit.type_name == "direct_fired_air_heater" and f"{name}.duty" in model.by_path:
            terms.append(model.by_path[f"{name}.duty"].symbol)      # heat released, LHV basis
    return _sum(terms)


#: name -> (function of the model giving a CasADi expression, quantity kind, words)
AGGREGATES: dict[str, tuple[Callable, str, str]] = {
    "live_steam": (_live_steam, "mass_flow", "live steam"),
    "feed": (_feed, "mass_flow", "feed"),
    "product": (_product, "mass_flow", "product"),
    "water_removed": (_water_removed, "mass_flow", "water removed"),
    "cooling_water": (_cooling_water, "mass_flow", "cooling water"),
    "heating_area": (_heating_area, "area", "heating area of the effects"),
    "electric_power": (_electric_power, "power", "electric power"),
    "fuel_power": (_fuel_power, "power", "fuel burnt (LHV)"),
}

# ---------------------------------------------------------------------------------------------
# Expressions


@dataclass
class Expression:
    """A compiled expression: CasADi in the model's x and p, its quantity kind and words.

    ``kind`` is None when it cannot be told (a product of two quantities);
    then bounds on it are read as plain SI numbers.
    """

    text: str
    expr: Any
    kind: str | None
    words: str


_PATH = re.compile(r"(?<![\w.])([A-Za-z_][A-Za-z0-9_\-]*(?:\.[A-Za-z_][A-Za-z0-9_]*)+|[A-Za-z_][A-Za-z0-9_]*)")
_FUNCTIONS = {"min": ca.fmin, "max": ca.fmax, "abs": ca.fabs}


def _lookup(model: Model, path: str, file, key) -> tuple[Any, str | None, str]:
    if path in AGGREGATES:
        function, kind, words = AGGREGATES[path]
        return function(model), kind, words
    owner, _, name = path.rpartition(".")
    if not owner:
        raise InputError(f"'{path}' is neither a plant total ({', '.join(AGGREGATES)}) nor a path "
                         f"such as E1.area", file=file, key=key)
    try:
        canonical = resolve_path(model.flowsheet, path)
    except InputError:
        canonical = None
    if canonical in model.by_path:
        v = model.by_path[canonical]
        words = f"{owner.replace('.', ' ')} {name}".replace("_", " ")
        return v.symbol, v.kind, words
    if owner in model.reports and name in model.reports[owner]:
        expr, kind = model.reports[owner][name]
        return expr, kind, f"{owner} {name.replace('_', ' ')}"
    figures = sorted(model.reports.get(owner, {}))
    hint = (f"; {owner} reports: {', '.join(figures)}" if figures else "")
    raise InputError(f"'{path}' names no variable or reported figure of this flowsheet{hint}",
                     file=file, key=key)


def _combine_kinds(op, left, right):
    if isinstance(op, (ast.Add, ast.Sub)):
        if left is None or right is None:
            return left or right
        if left == right == "temperature":
            return "temperature_difference" if isinstance(op, ast.Sub) else None
        if {left, right} == {"temperature", "temperature_difference"}:
            return "temperature"
        return left if left == right else None
    return None


def compile_expression(model: Model, text: str, *, file: str | None = None,
                       key: str | None = None) -> Expression:
    """Compile an expression on paths, reported figures and plant totals.

    Parameters
    ----------
    model : Model
    text : str
        ``"E1.duty + E2.duty"``, ``"live_steam"``, ``"min(E1.driving_force, E2.driving_force)"``;
        numbers are SI.
    file, key : str, optional
        Where the text came from, for messages.

    Returns
    -------
    Expression

    Raises
    ------
    InputError
        For a syntax error or a name that is not in the flowsheet.
    """
    if not isinstance(text, str) or not text.strip():
        raise InputError(f"expected an expression such as \"E1.area\", got {text!r}", file=file, key=key)
    names: dict[str, str] = {}

    def substitute(match):
        placeholder = f"__n{len(names)}"
        names[placeholder] = match.group(1)
        return placeholder

    source = _PATH.sub(lambda m: m.group(0) if m.group(1) in _FUNCTIONS else substitute(m), text.strip())
    try:
        tree = ast.parse(source, mode="eval")
    except SyntaxError:
        raise InputError(f"cannot read the expression {text!r}", file=file, key=key) from None

    def walk(node):
        if isinstance(node, ast.Expression):
            return walk(node.body)
        if isinstance(node, ast.Constant) and isinstance(node.value, (int, float)) and not isinstance(node.value, bool):
            return ca.SX(float(node.value)), None, str(node.value)
        if isinstance(node, ast.Name) and node.id in names:
            return _lookup(model, names[node.id], file, key)
        if isinstance(node, ast.UnaryOp) and isinstance(node.op, (ast.USub, ast.UAdd)):
            expr, kind, words = walk(node.operand)
            return (-expr if isinstance(node.op, ast.USub) else expr), kind, words
        if isinstance(node, ast.BinOp) and isinstance(node.op, (ast.Add, ast.Sub, ast.Mult, ast.Div, ast.Pow)):
            (a, ka, _), (b, kb, _) = walk(node.left), walk(node.right)
            op = node.op
            expr = {ast.Add: lambda: a + b, ast.Sub: lambda: a - b, ast.Mult: lambda: a * b,
                    ast.Div: lambda: a / b, ast.Pow: lambda: a ** b}[type(op)]()
            if isinstance(op, (ast.Mult, ast.Div)) and (isinstance(node.right, ast.Constant) or
                                                         isinstance(node.left, ast.Constant) and isinstance(op, ast.Mult)):
                kind = ka if isinstance(node.right, ast.Constant) else kb
            else:
                kind = _combine_kinds(op, ka, kb)
            return expr, kind, text.strip()
        if isinstance(node, ast.Call) and isinstance(node.func, ast.Name) and node.func.id in _FUNCTIONS \
                and node.args and not node.keywords:
            parts = [walk(arg) for arg in node.args]
            if node.func.id == "abs":
                if len(parts) != 1:
                    raise InputError("abs takes one argument", file=file, key=key)
                return ca.fabs(parts[0][0]), parts[0][1], text.strip()
            expr = parts[0][0]
            for other in parts[1:]:
                expr = _FUNCTIONS[node.func.id](expr, other[0])
            kinds = {p[1] for p in parts}
            return expr, (kinds.pop() if len(kinds) == 1 else None), text.strip()
        raise InputError(f"the expression {text!r} uses something other than numbers, paths, + - * / **, "
                         f"min, max and abs", file=file, key=key)

    expr, kind, words = walk(tree)
    if len(names) != 1 or not re.fullmatch(r"\s*__n0\s*", source):
        words = text.strip()
    return Expression(text.strip(), ca.SX(expr), kind, words)


def parse_bound(value, kind: str | None, *, file=None, key=None) -> float:
    """A bound as written ("7 t/h", "62 degC", 5.0) in SI, for an expression of ``kind``."""
    if kind is not None and kind in quantities.KINDS:
        return quantities.parse(value, kind, file=file, key=key)
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        return float(value)
    try:
        q = quantities.UREG.Quantity(quantities._normalise_unit(str(value)))
        return float(q.to_base_units().magnitude)
    except Exception:  # noqa: BLE001 - any pint parse failure
        raise InputError(f"cannot read the bound {value!r}", file=file, key=key) from None


# ---------------------------------------------------------------------------------------------
# Limits, decisions, objectives


@dataclass
class Limit:
    """An equipment or process limit: ``expression <= bound`` (``sense = "max"``) or
    ``expression >= bound`` (``sense = "min"``), bound in SI."""

    name: str
    expression: Expression
    sense: str
    bound: float

    @property
    def text(self) -> str:
        op = "<=" if self.sense == "max" else ">="
        return f"{self.expression.text} {op} {_show(self.bound, self.expression.kind)}"

    def margin(self, value: float) -> float:
        """Positive while the limit holds (SI)."""
        return self.bound - value if self.sense == "max" else value - self.bound


_LIMIT_TEXT = re.compile(r"^(.*?)(<=|>=|<|>)(.*)$")


def read_limits(model: Model, table: dict | None, *, file: str | None = None) -> list[Limit]:
    """The ``[limits]`` table as `Limit` objects.

    Each entry is ``name = "EXPR <= VALUE"`` (or ``>=``) or
    ``name = { expression = "EXPR", max = VALUE, min = VALUE }`` (either or both).
    """
    out = []
    if table is None:
        return out
    if not isinstance(table, dict):
        raise InputError("expected a table of limits", file=file, key="limits")
    for name, spec in table.items():
        key = f"limits.{name}"
        if isinstance(spec, str):
            match = _LIMIT_TEXT.match(spec)
            if not match:
                raise InputError(f"expected \"EXPRESSION <= VALUE\" or \"EXPRESSION >= VALUE\", got {spec!r}",
                                 file=file, key=key)
            expression = compile_expression(model, match.group(1), file=file, key=key)
            sense = "max" if match.group(2).startswith("<") else "min"
            bound = parse_bound(match.group(3).strip(), expression.kind, file=file, key=key)
            out.append(Limit(name, expression, sense, bound))
        elif isinstance(spec, dict):
            unknown = set(spec) - {"expression", "max", "min"}
            if unknown or "expression" not in spec or not ({"max", "min"} & set(spec)):
                raise InputError("a limit table takes 'expression' and 'max' and/or 'min'", file=file, key=key)
            expression = compile_expression(model, spec["expression"], file=file, key=key)
            for sense in ("max", "min"):
                if sense in spec:
                    label = name if not {"max", "min"} <= set(spec) else f"{name} ({sense})"
                    out.append(Limit(label, expression, sense,
                                     parse_bound(spec[sense], expression.kind, file=file, key=key)))
        else:
            raise InputError(f"expected a text or a table, got {spec!r}", file=file, key=key)
    return out


@dataclass
class Decision:
    """A value the optimiser chooses, between bounds (SI)."""

    path: str
    lower: float
    upper: float


def read_decisions(fs: Flowsheet, table: dict | None, *, file: str | None = None) -> list[Decision]:
    """``vary = { PATH = [LOW, HIGH], ... }`` as `Decision` objects."""
    from balance.flowsheet.file_format import parse_path_value
    out = []
    for path, pair in (table or {}).items():
        key = f"optimise.vary.{path}"
        if not isinstance(pair, list) or len(pair) != 2:
            raise InputError("expected [LOW, HIGH], e.g. [\"12 kPa\", \"25 kPa\"]", file=file, key=key)
        low, high = (parse_path_value(fs, path, v) for v in pair)
        if not low < high:
            raise InputError("the lower bound must be below the upper bound", file=file, key=key)
        out.append(Decision(path, low, high))
    return out


@dataclass
class Objective:
    """What is minimised or maximised: an expression in SI, its kind and words."""

    name: str
    sense: str           # "minimise" or "maximise"
    expr: Any
    kind: str | None     # quantity kind, or "money_per_year" / "money_per_hour"
    words: str
    currency: str = ""


def _economics(model):
    from balance.analysis.energy_figures import economics_of
    return economics_of(model.flowsheet)


def _live_steam_heat(model):
    from balance.properties import water
    total = ca.SX(0)
    for s in _streams_from(model, lambda s, a, b: a.type_name == "steam_supply"):
        total = total + s.flow * (s.specific_enthalpy - water.liquid_enthalpy(water.saturation_temperature(s.pressure)))
    return total


def annuity_factor(rate: float, life: float) -> float:
    """Capital recovery factor r / (1 - (1 + r)^-n): the yearly payment per unit of capital.

    Parameters
    ----------
    rate : float
        Interest rate per year, [-].
    life : float
        Years of service, [year].

    Examples
    --------
    >>> round(annuity_factor(0.08, 10), 5)   # standard interest tables: 0.14903
    0.14903
    >>> annuity_factor(0.0, 20)
    0.05
    """
    if rate == 0:
        return 1.0 / life
    return rate / (1.0 - (1.0 + rate) ** (-life))


def _energy_cost(model, file, per_year_required=False):
    """Energy cost from the ``[economics]`` prices: money per year with ``operating_hours``,
    else per hour. Returns (expression, kind)."""
    econ = _economics(model)
    rate = ca.SX(0)
    used = 0
    steam = econ.get("steam_price")
    if steam is not None:
        rate = rate + steam.value * (_live_steam(model) if steam.kind == "price_mass" else _live_steam_heat(model))
        used += 1
    for key, flow in (("electricity_price", _electric_power), ("cooling_water_price", _cooling_water)):
        factor = econ.get(key)
        if factor is not None:
            rate = rate + factor.value * flow(model)
            used += 1
    if not used:
        raise InputError("a cost objective needs prices: give steam_price, electricity_price and/or "
                         "cooling_water_price in [economics]", file=file, key="economics")
    hours = econ.get("operating_hours")
    if hours is None:
        if per_year_required:
            raise InputError("the annual cost needs operating_hours in [economics]", file=file,
                             key="economics.operating_hours")
        return rate * 3600.0, "money_per_hour"
    return rate * hours.value, "money_per_year"


def _capital(model, table, file):
    table = dict(table or {})
    allowed = {"units", "fixed", "per_area", "exponent", "interest", "life"}
    for key in table:
        if key not in allowed:
            raise InputError(f"unknown key; keys: {', '.join(sorted(allowed))}", file=file,
                             key=f"optimise.capital.{key}")
    for key in ("per_area", "interest", "life"):
        if key not in table:
            raise InputError("missing; the annual cost needs per_area, interest and life", file=file,
                             key=f"optimise.capital.{key}")
    units = table.get("units") or [n for n in model.flowsheet.units if f"{n}.area" in model.by_path]
    rate = quantities.parse(table["interest"], "fraction", file=file, key="optimise.capital.interest")
    life = float(table["life"])
    exponent = float(table.get("exponent", 1.0))
    total = ca.SX(0)
    for name in units:
        if f"{name}.area" not in model.by_path:
            raise InputError(f"unit '{name}' has no area", file=file, key="optimise.capital.units")
        area = model.by_path[f"{name}.area"].symbol
        total = total + float(table.get("fixed", 0.0)) + float(table["per_area"]) * ca.fmax(area, 1e-9) ** exponent
    return annuity_factor(rate, life) * total


def _named_objectives():
    def energy(m, t, f):
        expr, kind = _energy_cost(m, f)
        return expr, kind, "energy cost"

    def annual(m, t, f):
        expr, kind = _energy_cost(m, f, per_year_required=True)
        return expr + _capital(m, t.get("capital"), f), kind, "total annualised cost"

    return {
        "least live steam": ("minimise", lambda m, t, f: (_live_steam(m), "mass_flow", "live steam")),
        "least energy cost": ("minimise", energy),
        "least annual cost": ("minimise", annual),
        "most feed": ("maximise", lambda m, t, f: (_feed(m), "mass_flow", "feed")),
    }


OBJECTIVES = tuple(_named_objectives())


def read_objective(model: Model, table: dict, *, file: str | None = None) -> Objective:
    """The objective of an ``[optimise]`` table (a name in `OBJECTIVES`, or
    ``{ minimise = "EXPR" }`` / ``{ maximise = "EXPR" }``)."""
    spec = table.get("objective")
    if spec is None:
        raise InputError(f"missing 'objective'; one of: {', '.join(OBJECTIVES)}, or {{ minimise = \"EXPR\" }}",
                         file=file, key="optimise.objective")
    if isinstance(spec, str):
        name = spec.strip().lower().replace("_", " ")
        named = _named_objectives()
        if name not in named:
            raise InputError(f"unknown objective {spec!r}; objectives: {', '.join(OBJECTIVES)}, "
                             f"or {{ minimise = \"EXPR\" }} / {{ maximise = \"EXPR\" }}",
                             file=file, key="optimise.objective")
        sense, build = named[name]
        expr, kind, words = build(model, table, file)
        currency = _economics(model).currency if kind and kind.startswith("money") else ""
        return Objective(name, sense, ca.SX(expr), kind, words, currency)
    if isinstance(spec, dict) and len(spec) == 1 and next(iter(spec)) in ("minimise", "maximise"):
        sense, text = next(iter(spec.items()))
        e = compile_expression(model, text, file=file, key="optimise.objective")
        return Objective(f"{sense} {e.text}", sense, e.expr, e.kind, e.words)
    raise InputError("expected an objective name or { minimise = \"EXPR\" } / { maximise = \"EXPR\" }",
                     file=file, key="optimise.objective")


# ---------------------------------------------------------------------------------------------
# Display


def _display_step(kind: str | None) -> tuple[float, str]:
    """One display unit of a kind, in SI, and its name (1 kg/h, 1 K, 1 kPa, 1 m2, 1 kW)."""
    if kind in (None, "ratio") or kind not in quantities.KINDS:
        return 1.0, ""
    if kind in ("temperature", "temperature_difference"):
        return 1.0, "K"
    return 1.0 / quantities.convert(1.0, kind), quantities.display_unit(kind)


_MONEY = {"money_per_year": "per year", "money_per_hour": "per hour"}


def _show(value: float, kind: str | None, currency: str = "") -> str:
    if kind in _MONEY:
        return f"{currency + ' ' if currency and currency != 'money' else ''}{value:,.0f} {_MONEY[kind]}"
    if kind is None or kind not in quantities.KINDS:
        return f"{value:.6g}"
    shown = quantities.convert(value, kind)
    return f"{_number(shown)} {quantities.display_unit(kind)}".rstrip()


def _number(value: float | None) -> str:
    return format_number(value)


# ---------------------------------------------------------------------------------------------
# The optimiser


@dataclass
class LimitState:
    """A limit at the optimum: its value, bound, margin, whether it binds and what relaxing it is worth.

    ``sensitivity`` is d(objective)/d(bound) in SI: the change of the
    objective per unit the bound is moved (positive bound change = raising it).
    """

    name: str
    text: str
    kind: str | None
    sense: str
    value: float
    bound: float
    active: bool
    sensitivity: float
    words: str = ""


@dataclass
class OptimisationResult:
    """The result of `Optimiser.solve`.

    Attributes
    ----------
    converged : bool
        IPOPT found an optimum, the equations hold there, and the square
        solve at the optimal decisions converged and passed its checks.
    status : str
    objective : Objective
    value : float
        The objective at the optimum (SI; money per year for costs).
    base_value : float
        The objective in the base case (the file as it is).
    decisions : dict
        path -> optimal value (SI).
    limits : list of LimitState
        Every limit and every decision bound, active ones flagged.
    solution : balance.solve.result.Solution or None
        The checked square solve at the optimum.
    iterations : int
    seconds : float
        Wall time of IPOPT.
    x : numpy.ndarray
        Unknowns of the optimisation model at the optimum.
    """

    converged: bool
    status: str
    objective: Objective
    value: float
    base_value: float
    decisions: dict[str, float]
    decision_bounds: dict[str, tuple[float, float]]
    decision_kinds: dict[str, str]
    limits: list[LimitState]
    solution: Any
    iterations: int
    seconds: float
    x: Any = None
    lam_g: Any = None

    @property
    def active(self) -> list[LimitState]:
        return [s for s in self.limits if s.active]

    def raise_if_failed(self) -> "OptimisationResult":
        if not self.converged:
            raise SolveError(f"the optimisation did not succeed: {self.status}")
        return self

    @property
    def text(self) -> str:
        obj = self.objective
        lines = [f"Optimisation: {obj.name} ({obj.sense} {obj.words})",
                 f"status: {self.status} (IPOPT, {self.iterations} iterations, {self.seconds:.2f} s)"]
        lines.append(f"{obj.words}: {_show(self.value, obj.kind, obj.currency)} at the optimum; "
                     f"{_show(self.base_value, obj.kind, obj.currency)} as the file stands")
        if self.decisions:
            lines.append("")
            rows = [["decision", "lower", "optimum", "upper"]]
            for path, value in self.decisions.items():
                low, high = self.decision_bounds[path]
                kind = self.decision_kinds.get(path)
                rows.append([path, _show(low, kind), _show(value, kind), _show(high, kind)])
            lines += _columns(rows)
        if self.limits:
            lines.append("")
            rows = [["limit", "value", "bound", "binds"]]
            for s in self.limits:
                rows.append([s.name, _show(s.value, s.kind), ("<= " if s.sense == "max" else ">= ")
                             + _show(s.bound, s.kind), "yes" if s.active else ""])
            lines += _columns(rows)
        active = self.active
        if active:
            lines.append("")
            lines.append("what the binding limits are worth:")
            for s in active:
                lines.append(f"  {s.name}: {s.words}")
        elif self.converged:
            lines.append("")
            lines.append("no limit binds: the optimum lies inside every limit")
        return "\n".join(lines)


def _columns(rows: list[list[str]]) -> list[str]:
    widths = [max(len(r[i]) for r in rows) for i in range(len(rows[0]))]
    out = []
    for k, r in enumerate(rows):
        out.append("  ".join(c.ljust(w) if i == 0 else c.rjust(w) for i, (c, w) in enumerate(zip(r, widths))))
        if k == 0:
            out.append("  ".join("-" * w for w in widths))
    return out


#: Larger steps for the words when one display unit is worth too little to read.
_BIG_STEPS = {"mass_flow": (1000.0 / 3600.0, "t/h"), "power": (1e6, "MW")}


def _worth(objective: Objective, limit_words: str, kind: str | None, sense: str, sensitivity: float) -> str:
    """"one more kg/h of live steam would allow 3.1 kg/h more feed"."""
    step, unit = _display_step(kind)
    ostep, ounit = _display_step(objective.kind)
    if kind in _BIG_STEPS and abs(sensitivity) * step / ostep < 0.1:
        step, unit = _BIG_STEPS[kind]
    delta = step if sense == "max" else -step
    gain = sensitivity * delta * (1.0 if objective.sense == "maximise" else -1.0)
    if kind in ("temperature", "temperature_difference"):
        move = f"{limit_words} one kelvin {'higher' if sense == 'max' else 'lower'}"
    elif unit:
        move = f"one {'more' if sense == 'max' else 'less'} {unit} of {limit_words}"
    else:
        move = f"raising {limit_words} by one" if sense == "max" else f"lowering {limit_words} by one"
    if objective.kind in _MONEY:
        amount = _show(abs(gain), objective.kind, objective.currency)
    else:
        amount = f"{_number(abs(gain) / ostep)} {ounit}".rstrip()
    if gain < 0:
        return f"{move} would cost {amount} of {objective.words}"
    if objective.sense == "maximise":
        return f"{move} would allow {amount} more {objective.words}"
    if objective.kind in _MONEY:
        return f"{move} would lower the {objective.words} by {amount}"
    return f"{move} would save {amount} of {objective.words}"


@contextmanager
def _freed(fs: Flowsheet, paths):
    fixed, freed = dict(fs.fixed), set(fs.freed)
    try:
        for path in paths:
            fs.free(path)
        yield fs
    finally:
        fs.fixed.clear()
        fs.fixed.update(fixed)
        fs.freed.clear()
        fs.freed.update(freed)


class Optimiser:
    """An optimisation problem over a flowsheet, compiled once and solved as often as needed.

    Parameters
    ----------
    fs : Flowsheet
        The flowsheet as a square, solvable specification (the base case);
        its ``[optimise]`` and ``[limits]`` tables are used for what is not given.
    objective : Objective or str or dict, optional
        A name in `OBJECTIVES`, ``{"minimise": "EXPR"}``, or an `Objective`.
    vary : dict or list of Decision, optional
        Decisions: path -> (low, high) in SI, or as written in a file.
    limits : list of Limit or dict, optional
        Limits, or a ``[limits]`` table.
    base : Solution, optional
        A converged solution of the base case (solved here otherwise).

    Examples
    --------
    >>> opt = Optimiser(load("line.toml"))          # doctest: +SKIP
    >>> result = opt.solve()                        # doctest: +SKIP
    >>> print(result.text)                          # doctest: +SKIP
    """

    def __init__(self, fs: Flowsheet, objective=None, vary=None, limits=None, base=None,
                 table: dict | None = None):
        from balance.solve.solver import Solver
        started = time.perf_counter()
        self.flowsheet = fs
        file = fs.file
        self.table = dict(table if table is not None else fs.extras.get("optimise", {}) or {})
        for key in self.table:
            if key not in ("objective", "vary", "capital"):
                raise InputError("unknown key in [optimise]; keys: objective, vary, capital",
                                 file=file, key=f"optimise.{key}")
        base_model = compile_flowsheet(fs)      # the file as it stands must be square

        if vary is None:
            decisions = read_decisions(fs, self.table.get("vary"), file=file)
        elif isinstance(vary, dict):
            decisions = [Decision(path, float(lo), float(hi)) if not isinstance(lo, str) else
                         read_decisions(fs, {path: [lo, hi]}, file=file)[0] for path, (lo, hi) in vary.items()]
        else:
            decisions = list(vary)
        self.decisions = decisions
        with _freed(fs, [d.path for d in decisions]):
            self.model = compile_flowsheet(fs, require_square=False)
        dof = self.model.n_unknowns - self.model.n_equations
        newly_free = [d for d in decisions if resolve_path(fs, d.path) in
                      {v.path for v in base_model.parameters}]
        if dof != len(newly_free):
            raise SpecificationError(f"freeing the decisions should leave {len(newly_free)} degrees of freedom, "
                                     f"but leaves {dof}", file=file, key="optimise.vary")
        m = self.model
        self.decision_index = {}
        for d in decisions:
            canonical = resolve_path(fs, d.path)
            self.decision_index[d.path] = [v.path for v in m.unknowns].index(canonical)

        if isinstance(objective, Objective):
            self.objective = objective
        else:
            spec = dict(self.table)
            if objective is not None:
                spec["objective"] = objective
            self.objective = read_objective(m, spec, file=file)
        if limits is None:
            limits = fs.extras.get("limits")
        self.limits = limits if isinstance(limits, list) else read_limits(m, limits, file=file)

        self.base_solver = Solver(base_model)
        self.base_p = self.base_solver.p.copy()
        self.base = base if base is not None else self.base_solver.solve()
        if not self.base.converged:
            raise SolveError("the base case does not solve, and an optimisation starts from a solved plant: "
                             + "; ".join(self.base.problems[:3]), file=file)

        # starting point: the base case
        self.x0 = np.array([self.base.values[v.path] for v in m.unknowns], dtype=float)
        self.p = np.array([self.base.values[v.path] for v in m.parameters], dtype=float)
        nominal = np.array([v.nominal for v in m.unknowns], dtype=float)
        self.dx = np.where(np.maximum(np.abs(self.x0), 1e-3 * nominal) > 0,
                           np.maximum(np.abs(self.x0), 1e-3 * nominal), 1.0)
        self.rs = np.asarray(m.residual_scale, dtype=float)
        limit_exprs = ca.vertcat(*[l.expression.expr for l in self.limits]) if self.limits else ca.SX(0, 1)
        self._values = ca.Function("values", [m.x, m.p], [limit_exprs, self.objective.expr])
        lim0, f0 = (np.asarray(v, dtype=float).ravel() for v in self._values(self.x0, self.p))
        if not np.all(np.isfinite(lim0)) or not np.isfinite(f0[0]):
            raise SolveError("a limit or the objective is not finite in the base case", file=file)
        self.base_value = float(f0[0])
        self.f_scale = max(abs(self.base_value), 1e-9)
        self.l_scale = np.array([max(abs(l.bound), abs(v), 1e-6) for l, v in zip(self.limits, lim0)])

        xs = ca.SX.sym("xs", m.n_unknowns)
        p = ca.SX.sym("p", m.p.numel())
        g_of = ca.Function("g", [m.x, m.p], [m.g])
        x = xs * ca.DM(self.dx)
        g = g_of(x, p) / ca.DM(self.rs)
        lim, f = self._values(x, p)
        sign = -1.0 if self.objective.sense == "maximise" else 1.0
        nlp = {"x": xs, "p": p, "f": sign * f / self.f_scale,
               "g": ca.vertcat(g, lim / ca.DM(self.l_scale)) if self.limits else g}
        opts = {"ipopt.print_level": 0, "print_time": False, "ipopt.sb": "yes", "ipopt.max_iter": 400,
                "ipopt.tol": 1e-10, "ipopt.constr_viol_tol": 1e-10, "ipopt.acceptable_tol": 1e-7}
        self.nlp = ca.nlpsol("optimise", "ipopt", nlp, opts)
        self.residual = ca.Function("residual", [xs, p], [g])
        self.lower = np.array([v.lower for v in m.unknowns], dtype=float)
        self.upper = np.array([v.upper for v in m.unknowns], dtype=float)
        for d in decisions:
            j = self.decision_index[d.path]
            self.lower[j] = max(self.lower[j], d.lower)
            self.upper[j] = min(self.upper[j], d.upper)
        self.build_seconds = time.perf_counter() - started

    # -- solving --------------------------------------------------------------------------

    def set(self, path: str, value: float) -> None:
        """Change a fixed value (SI) of both the optimisation and the base case."""
        canonical = resolve_path(self.flowsheet, path)
        index = [v.path for v in self.model.parameters].index(canonical)
        self.p[index] = float(value)
        self.base_solver.set(path, value)

    def solve(self, active_limits: list[str] | None = None, bounds: dict[str, float] | None = None,
              decision_bounds: dict[str, tuple[float, float]] | None = None, warm=None,
              polish: bool = True) -> OptimisationResult:
        """Optimise.

        Parameters
        ----------
        active_limits : list of str, optional
            Names of the limits to impose (default: all).
        bounds : dict, optional
            Limit name -> bound (SI) overriding the file's.
        decision_bounds : dict, optional
            Decision path -> (low, high) overriding the file's.
        warm : OptimisationResult, optional
            Start from a previous optimum.
        polish : bool
            Re-solve the square model at the optimal decisions and check it.
        """
        m = self.model
        names = [l.name for l in self.limits]
        use = set(names if active_limits is None else active_limits)
        for name in use:
            if name not in names:
                raise InputError(f"unknown limit {name!r}; limits: {', '.join(names)}", key="limits")
        bounds = dict(bounds or {})
        lbg = [0.0] * m.n_equations
        ubg = [0.0] * m.n_equations
        used_bounds = []
        for limit, scale in zip(self.limits, self.l_scale):
            b = bounds.get(limit.name, limit.bound)
            used_bounds.append(b)
            on = limit.name in use
            lbg.append(b / scale if on and limit.sense == "min" else -np.inf)
            ubg.append(b / scale if on and limit.sense == "max" else np.inf)
        lower, upper = self.lower.copy(), self.upper.copy()
        for path, (lo, hi) in (decision_bounds or {}).items():
            j = self.decision_index[path]
            lower[j], upper[j] = lo, hi
        x_start = np.asarray(warm.x, dtype=float) if warm is not None else self.x0
        x_start = np.clip(x_start, lower, upper)
        started = time.perf_counter()
        try:
            sol = self.nlp(x0=x_start / self.dx, p=self.p, lbx=lower / self.dx, ubx=upper / self.dx,
                           lbg=lbg, ubg=ubg)
            stats = self.nlp.stats()
            status = str(stats.get("return_status", ""))
            iterations = int(stats.get("iter_count", 0))
        except RuntimeError as exc:
            return self._failed(str(exc), time.perf_counter() - started)
        seconds = time.perf_counter() - started
        xs = np.asarray(sol["x"], dtype=float).ravel()
        x = xs * self.dx
        lam_g = np.asarray(sol["lam_g"], dtype=float).ravel()
        lam_x = np.asarray(sol["lam_x"], dtype=float).ravel()
        residual = np.asarray(self.residual(xs, self.p), dtype=float).ravel()
        res_norm = float(np.max(np.abs(residual))) if residual.size else 0.0
        lim, f = (np.asarray(v, dtype=float).ravel() for v in self._values(x, self.p))
        sign = -1.0 if self.objective.sense == "maximise" else 1.0
        ok = status in ("Solve_Succeeded", "Solved_To_Acceptable_Level") and res_norm < 1e-6
        states = []
        for i, (limit, scale) in enumerate(zip(self.limits, self.l_scale)):
            if limit.name not in use:
                continue
            mult = lam_g[m.n_equations + i]
            sens = -sign * self.f_scale * mult / scale
            b = used_bounds[i]
            active = (abs(limit.margin(lim[i])) <= 1e-6 * scale
                      and abs(sens) * scale > 1e-6 * max(self.f_scale, abs(float(f[0]))))
            state = LimitState(limit.name, limit.text if b == limit.bound else
                               f"{limit.expression.text} {'<=' if limit.sense == 'max' else '>='} "
                               f"{_show(b, limit.expression.kind)}",
                               limit.expression.kind, limit.sense, float(lim[i]), float(b), bool(active),
                               float(sens))
            if active:
                state.words = _worth(self.objective, limit.expression.words, limit.expression.kind,
                                     limit.sense, sens)
            states.append(state)
        kinds = {}
        for d in self.decisions:
            j = self.decision_index[d.path]
            kind = m.unknowns[j].kind
            kinds[d.path] = kind
            for sense, bound in (("max", upper[j]), ("min", lower[j])):
                mult = lam_x[j]
                at = abs(x[j] - bound) <= 1e-7 * max(abs(bound), 1e-9) + 1e-9
                if not at:
                    continue
                sens = -sign * self.f_scale * mult / self.dx[j]
                word = "upper" if sense == "max" else "lower"
                state = LimitState(f"{d.path} ({word} bound)", f"{d.path} {'<=' if sense == 'max' else '>='} "
                                   f"{_show(bound, kind)}", kind, sense, float(x[j]), float(bound), True,
                                   float(sens))
                state.words = _worth(self.objective, d.path.replace(".", " ").replace("_", " "), kind, sense,
                                     sens)
                states.append(state)
        decisions = {d.path: float(x[self.decision_index[d.path]]) for d in self.decisions}
        solution = None
        if ok and polish:
            solution = self._polish(decisions, x)
            if solution is None or not solution.converged:
                ok = False
                status += "; the square solve at the optimum failed its checks" + (
                    f" ({'; '.join(solution.problems[:2])})" if solution is not None else "")
        return OptimisationResult(ok, status if ok or "square" in status else f"{status} (residual {res_norm:.1e})",
                                  self.objective, float(f[0]), self.base_value, decisions,
                                  {d.path: (float(lower[self.decision_index[d.path]]),
                                            float(upper[self.decision_index[d.path]])) for d in self.decisions},
                                  kinds, states, solution, iterations, seconds, x=x, lam_g=lam_g)

    def _polish(self, decisions: dict[str, float], x: np.ndarray):
        solver = self.base_solver
        fixed_paths = {v.path for v in solver.model.parameters}
        for path, value in decisions.items():
            if resolve_path(self.flowsheet, path) in fixed_paths:
                solver.set(path, value)
        by_path = dict(zip((v.path for v in self.model.unknowns), x))
        by_path.update(zip((v.path for v in self.model.parameters), self.p))
        warm = np.array([by_path[v.path] for v in solver.model.unknowns], dtype=float)
        try:
            return solver.solve(warm=warm)
        finally:
            solver.p[:] = self.base_p_for_current()
            for v, value in zip(solver.model.parameters, solver.p):
                v.fixed = float(value)

    def base_p_for_current(self) -> np.ndarray:
        """The base case's fixed values, with any values changed through `set`."""
        by_path = dict(zip((v.path for v in self.model.parameters), self.p))
        base = self.base_p.copy()
        for i, v in enumerate(self.base_solver.model.parameters):
            if v.path in by_path:
                base[i] = by_path[v.path]
        return base

    def _failed(self, message: str, seconds: float) -> OptimisationResult:
        return OptimisationResult(False, f"IPOPT stopped: {message}", self.objective, float("nan"),
                                  self.base_value, {}, {}, {}, [], None, 0, seconds)


def optimise(fs: Flowsheet, objective=None, vary=None, limits=None) -> OptimisationResult:
    """Optimise a flowsheet as its ``[optimise]`` and ``[limits]`` tables say (or as given).

    Parameters
    ----------
    fs : Flowsheet
        A square, solvable flowsheet (the base case).
    objective, vary, limits
        See `Optimiser`.

    Returns
    -------
    OptimisationResult
        Check ``converged``.
    """
    return Optimiser(fs, objective=objective, vary=vary, limits=limits).solve()


__all__ = ["AGGREGATES", "Decision", "Expression", "Limit", "LimitState", "OBJECTIVES", "Objective",
           "OptimisationResult", "Optimiser", "annuity_factor", "compile_expression", "optimise",
           "parse_bound", "read_decisions", "read_limits", "read_objective"]
