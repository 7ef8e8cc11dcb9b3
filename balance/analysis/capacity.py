"""Capacity studies of an existing line: raise the throughput until each limit binds, rank the
limits, and say what binds next once the first is relieved.

The equipment is fixed in the flowsheet (areas, U values, condenser, fan,
heater); the file's specification says how the plant is run (what its
controllers hold, such as the product solids). The *throughput* is one fixed
value of that specification, normally the feed rate. Two methods, checked
against each other in the tests:

``sweep`` (default)
    Continuation along the operating line: the throughput is stepped up from
    today's value with warm-started square solves (`Solver.set`), every
    limit's margin is watched, and where a margin changes sign the crossing
    is found by the Illinois variant of regula falsi to a relative
    tolerance of 1e-6. A step that fails to solve (warm-started Newton) is
    halved; if it still fails after six halvings and once more with the full
    fallback chain of `Solver.solve` (IPOPT, continuation), the line has no
    steady state beyond that rate and the study says so. Because the operating line does not depend on the limits, the rate
    at which each limit binds is its own capacity, the ranking is the order
    in which they bind, and relieving the first leaves the second.

``optimise``
    The throughput is freed and maximised by IPOPT over the same equations
    (`balance.analysis.optimise.Optimiser`), together with the decisions of
    ``[optimise] vary`` (what operators may adjust, such as the cooling-water
    flow): once subject to each limit alone (its capacity), once to all of
    them (the line's capacity and its binding set), then again with the
    binding limits relieved one round at a time (what binds next).

The ``[capacity]`` table::

    [capacity]
    throughput = "feed.flow"     # a fixed value of the file; default: the flow of the only feed
    up_to = "40 t/h"             # highest rate studied; default: twice today's
    method = "sweep"             # or "optimise"
    steps = 24                   # sweep steps from today's rate to up_to
"""

from __future__ import annotations

import time
from dataclasses import dataclass, field

import casadi as ca
import numpy as np

from balance.analysis.optimise import Decision, Optimiser, _show, read_decisions, read_limits
from balance.equations.model import compile_flowsheet, resolve_path
from balance.errors import InputError, SolveError
from balance.flowsheet.graph import Flowsheet
from balance.solve.checks import check_values
from balance.solve.newton import newton

METHODS = ("sweep", "optimise")
TOLERANCE = 1e-6
#: Newton iterations allowed for one sweep step from the neighbouring point, then from the guess.
WARM_ITERATIONS = 8
STEP_ITERATIONS = 30


@dataclass
class LimitCapacity:
    """One limit in a capacity study.

    Attributes
    ----------
    name, text : str
    value_now : float
        The limited quantity at today's throughput (SI).
    margin_now : float
        How far it is from its bound today (SI, positive while it holds).
    capacity : float or None
        The throughput at which it binds (SI); None when it does not bind
        within the range studied.
    exceeded_now : bool
        It is already broken at today's throughput.
    """

    name: str
    text: str
    kind: str | None
    value_now: float
    margin_now: float
    capacity: float | None
    exceeded_now: bool = False


@dataclass
class CapacityStudy:
    """The result of `capacity_study`.

    Attributes
    ----------
    throughput : str
        The path raised (``feed.flow``).
    kind : str
        Its quantity kind.
    current : float
        Today's throughput (SI).
    up_to : float
        Highest throughput studied (SI).
    method : str
    limits : list of LimitCapacity
        Ranked: the first to bind first.
    capacity : float or None
        The line's capacity: the rate at which the first limit binds (or
        the optimum with every limit), None when nothing binds up to ``up_to``.
    unsolvable_from : float or None
        The sweep found no steady state above this throughput.
    relief : list of (list of str, float or None, list of str)
        Optimise method: (limits relieved so far, capacity, limits that bind there).
    solves : int
        Number of square solves or optimisations.
    seconds : float
    """

    throughput: str
    kind: str
    current: float
    up_to: float
    method: str
    limits: list[LimitCapacity]
    capacity: float | None
    unsolvable_from: float | None = None
    relief: list[tuple[list[str], float | None, list[str]]] = field(default_factory=list)
    solves: int = 0
    seconds: float = 0.0
    path: list[tuple[float, list[float]]] = field(default_factory=list)

    @property
    def ranking(self) -> list[str]:
        """Limit names, the first to bind first."""
        return [l.name for l in self.limits]

    @property
    def first(self) -> LimitCapacity | None:
        binding = [l for l in self.limits if l.capacity is not None]
        return binding[0] if binding else None

    @property
    def text(self) -> str:
        show = lambda v: _show(v, self.kind) if v is not None else "-"  # noqa: E731
        lines = [f"Capacity study: {self.throughput} raised from {show(self.current)} up to {show(self.up_to)} "
                 f"({self.method}, {self.solves} solves, {self.seconds:.2f} s)", ""]
        rows = [["rank", "limit", "today", "binds at", "vs today"]]
        for rank, l in enumerate(self.limits, 1):
            versus = (f"{100.0 * (l.capacity / self.current - 1.0):+.1f} %" if l.capacity is not None else
                      f"not up to {show(self.up_to)}")
            rows.append([str(rank) if l.capacity is not None else "-", f"{l.name} ({l.text})",
                         _show(l.value_now, l.kind), show(l.capacity), versus])
        widths = [max(len(r[i]) for r in rows) for i in range(len(rows[0]))]
        for k, r in enumerate(rows):
            lines.append("  ".join(c.ljust(w) if i in (0, 1) else c.rjust(w) for i, (c, w) in
                                   enumerate(zip(r, widths))))
            if k == 0:
                lines.append("  ".join("-" * w for w in widths))
        lines.append("")
        binding = [l for l in self.limits if l.capacity is not None]
        exceeded = [l for l in self.limits if l.exceeded_now]
        if exceeded:
            lines.append("already broken today: " + ", ".join(l.name for l in exceeded))
        if self.method == "optimise" and self.relief:
            for k, (relieved, cap, binds) in enumerate(self.relief):
                where = (f", where {', '.join(binds)} bind{'s' if len(binds) == 1 else ''}" if binds
                         else f" (nothing else binds up to {show(self.up_to)})")
                if k == 0:
                    lines.append(f"capacity with every limit: {show(cap)}{where}")
                else:
                    new = [r for r in relieved if r not in self.relief[k - 1][0]]
                    lines.append(f"{'relieve' if k == 1 else 'then relieve'} {', '.join(new)}: {show(cap)}{where}")
        elif binding:
            first = binding[0]
            lines.append(f"first bottleneck: {first.name}, at {show(first.capacity)} "
                         f"({100.0 * (first.capacity / self.current - 1.0):+.1f} % on today)")
            if len(binding) > 1:
                nxt = binding[1]
                lines.append(f"relieve it and the line reaches {show(nxt.capacity)}, where {nxt.name} binds")
                if len(binding) > 2:
                    lines.append("then: " + "; ".join(f"{l.name} at {show(l.capacity)}" for l in binding[2:]))
            else:
                lines.append(f"relieve it and nothing else binds up to {show(self.up_to)}")
        else:
            lines.append(f"no limit binds up to {show(self.up_to)}")
        if self.unsolvable_from is not None:
            lines.append(f"the line has no steady state above about {show(self.unsolvable_from)} with this "
                         f"specification (the equations stop having a solution: the equipment cannot "
                         f"carry the load however the limits are set)")
        return "\n".join(lines)


def _throughput(fs: Flowsheet, table: dict) -> str:
    if "throughput" in table:
        path = table["throughput"]
        if not isinstance(path, str):
            raise InputError("expected a variable path such as \"feed.flow\"", file=fs.file,
                             key="capacity.throughput")
        return path
    feeds = [n for n, u in fs.units.items() if u.type_name == "feed"]
    if len(feeds) != 1:
        raise InputError(f"say which value is raised: throughput = \"<unit>.flow\" (feeds: {', '.join(feeds)})",
                         file=fs.file, key="capacity.throughput")
    return f"{feeds[0]}.flow"


def capacity_study(fs: Flowsheet, throughput: str | None = None, up_to: float | None = None,
                   method: str | None = None, limits=None, steps: int | None = None,
                   vary=None) -> CapacityStudy:
    """How far the throughput of an existing line can be raised, and which limit binds first.

    Parameters
    ----------
    fs : Flowsheet
        The existing line, square and solvable at today's throughput.
    throughput : str, optional
        Path of the fixed value to raise; default from ``[capacity]`` or the only feed's flow.
    up_to : float, optional
        Highest throughput studied (SI); default from ``[capacity]`` or twice today's.
    method : {'sweep', 'optimise'}, optional
    limits : dict, optional
        A ``[limits]`` table; default: the file's.
    steps : int, optional
        Sweep steps (default 24).
    vary : dict, optional
        Optimise method: further decisions, as `Optimiser` takes them
        (default: the file's ``[optimise] vary``, without the throughput).

    Returns
    -------
    CapacityStudy
    """
    table = dict(fs.extras.get("capacity", {}) or {})
    for key in table:
        if key not in ("throughput", "up_to", "method", "steps"):
            raise InputError("unknown key in [capacity]; keys: throughput, up_to, method, steps",
                             file=fs.file, key=f"capacity.{key}")
    path = throughput or _throughput(fs, table)
    method = method or table.get("method", "sweep")
    if method not in METHODS:
        raise InputError(f"unknown method {method!r}; methods: {', '.join(METHODS)}", file=fs.file,
                         key="capacity.method")
    steps = int(steps or table.get("steps", 24))
    if method == "sweep":
        return _sweep(fs, path, up_to, table, limits, steps)
    return _by_optimisation(fs, path, up_to, table, limits, vary)


def _up_to(fs, path, up_to, table, current):
    from balance.flowsheet.file_format import parse_path_value
    if up_to is None and "up_to" in table:
        up_to = parse_path_value(fs, path, table["up_to"])
    if up_to is None:
        up_to = 2.0 * current
    if not up_to > current:
        raise InputError(f"up_to must lie above today's value {current:g}", file=fs.file, key="capacity.up_to")
    return float(up_to)


# -- sweep ----------------------------------------------------------------------------------------


def _sweep(fs, path, up_to, table, limits, steps) -> CapacityStudy:
    from balance.solve.solver import Solver
    started = time.perf_counter()
    model = compile_flowsheet(fs)
    canonical = resolve_path(fs, path)
    params = [v.path for v in model.parameters]
    if canonical not in params:
        raise InputError(f"'{path}' is not a fixed value of this flowsheet: the throughput raised must be fixed",
                         file=fs.file, key="capacity.throughput")
    kind = model.by_path[canonical].kind
    limits = read_limits(model, limits if limits is not None else fs.extras.get("limits"), file=fs.file)
    if not limits:
        raise InputError("a capacity study needs limits: add a [limits] table", file=fs.file, key="limits")
    solver = Solver(model)
    index = params.index(canonical)
    current = float(solver.p[index])
    top = _up_to(fs, path, up_to, table, current)
    values = ca.Function("limits", [model.x, model.p], [ca.vertcat(*[l.expression.expr for l in limits])])
    scale = np.array([max(abs(l.bound), 1e-6) for l in limits])
    counter = {"solves": 0}

    def solve_at(rate, warm, method="newton"):
        """A warm-started Newton solve (the sweep's steps are small) checked for physical sense;
        the full fallback chain of `Solver.solve` (IPOPT, continuation) only where asked, since a
        failing step is halved anyway."""
        solver.set(path, rate)
        counter["solves"] += 1
        x = None
        if method == "newton" and warm is not None:
            # From the neighbouring point first; if the line search crawls (Newton's monotone line
            # search can refuse the full step near a solution), from the plant-reasoning guess.
            for start, iterations in ((lambda: np.asarray(warm, dtype=float), WARM_ITERATIONS),
                                      (solver.guess, STEP_ITERATIONS)):
                raw = newton(solver.system, start(), solver.p, max_iter=iterations)
                if raw.converged and not check_values(model, solver.evaluator.evaluate(raw.x, solver.p)):
                    x = raw.x
                    break
        else:
            sol = solver.solve(warm=warm)
            if sol.converged:
                x = np.asarray(sol.x, dtype=float)
        if x is None:
            return None, None
        vals = np.asarray(values(x, solver.p), dtype=float).ravel()
        return x, vals

    def margins(vals):
        return np.array([l.margin(v) for l, v in zip(limits, vals)]) / scale

    x0, v0 = solve_at(current, None, method="auto")
    if x0 is None:
        raise SolveError(f"the line does not solve at today's {path}; a capacity study starts from a solved plant",
                         file=fs.file)
    m0 = margins(v0)
    capacity: list[float | None] = [None] * len(limits)
    trace = [(current, v0.tolist())]

    def crossing(i, lo, x_lo, m_lo, hi, x_hi, m_hi):
        """Illinois regula falsi on margin i between lo (margin m_lo) and hi (m_hi) of opposite signs."""
        side = 0
        for _ in range(60):
            if abs(hi - lo) <= TOLERANCE * max(abs(current), 1e-9):
                break
            t = (lo * m_hi - hi * m_lo) / (m_hi - m_lo)
            if not min(lo, hi) < t < max(lo, hi):
                t = 0.5 * (lo + hi)
            x_t, v_t = solve_at(t, x_lo + (t - lo) / (hi - lo) * (x_hi - x_lo))
            if x_t is None:
                t = 0.5 * (lo + hi)
                x_t, v_t = solve_at(t, x_lo)
                if x_t is None:
                    break
            m_t = margins(v_t)[i]
            if m_t * m_hi > 0:
                hi, x_hi, m_hi = t, x_t, m_t
                if side == -1:
                    m_lo *= 0.5
                side = -1
            else:
                lo, x_lo, m_lo = t, x_t, m_t
                if side == 1:
                    m_hi *= 0.5
                side = 1
        return 0.5 * (lo + hi) if abs(hi - lo) > TOLERANCE * abs(current) else (lo if abs(m_lo) < abs(m_hi) else hi)

    # limits already broken today: look downwards to where they bind
    for i in np.flatnonzero(m0 < 0):
        rate, x_prev, m_prev = current, x0, m0
        for k in range(1, steps + 1):
            t = current * (1.0 - 0.9 * k / steps)
            x_t, v_t = solve_at(t, x_prev)
            if x_t is None:
                break
            m_t = margins(v_t)
            if m_t[i] >= 0:
                capacity[i] = crossing(i, t, x_t, m_t[i], rate, x_prev, m_prev[i])
                break
            rate, x_prev, m_prev = t, x_t, m_t

    unsolvable = None
    rate, x_prev, m_prev = current, x0, m0
    before = None                       # (rate, x) one step back, for the secant predictor
    step = (top - current) / steps

    def predict(t):
        if before is None:
            return x_prev
        return x_prev + (t - rate) / (rate - before[0]) * (x_prev - before[1])

    while rate < top - 1e-12 * top:
        t = min(rate + step, top)
        x_t, v_t = solve_at(t, predict(t))
        halvings = 0
        while x_t is None and halvings < 6:
            halvings += 1
            t = rate + (t - rate) / 2
            x_t, v_t = solve_at(t, predict(t))
        if x_t is None:
            x_t, v_t = solve_at(t, x_prev, method="auto")     # the whole fallback chain, once
        if x_t is None:
            unsolvable = rate
            break
        m_t = margins(v_t)
        trace.append((t, v_t.tolist()))
        for i in range(len(limits)):
            if capacity[i] is None and m_prev[i] >= 0 > m_t[i]:
                capacity[i] = crossing(i, rate, x_prev, m_prev[i], t, x_t, m_t[i])
        before = (rate, x_prev)
        rate, x_prev, m_prev = t, x_t, m_t
    solver.set(path, current)

    rows = [LimitCapacity(l.name, l.text, l.expression.kind, float(v0[i]), float(l.margin(v0[i])), capacity[i],
                          bool(m0[i] < 0)) for i, l in enumerate(limits)]
    rows.sort(key=lambda r: (r.capacity is None, r.capacity if r.capacity is not None else 0.0))
    first = next((r.capacity for r in rows if r.capacity is not None), None)
    return CapacityStudy(path, kind, current, top, "sweep", rows, first, unsolvable, [],
                         counter["solves"], time.perf_counter() - started, trace)


# -- by optimisation ------------------------------------------------------------------------------


def _by_optimisation(fs, path, up_to, table, limits, vary) -> CapacityStudy:
    started = time.perf_counter()
    base_model = compile_flowsheet(fs)
    canonical = resolve_path(fs, path)
    if canonical not in {v.path for v in base_model.parameters}:
        raise InputError(f"'{path}' is not a fixed value of this flowsheet: the throughput raised must be fixed",
                         file=fs.file, key="capacity.throughput")
    kind = base_model.by_path[canonical].kind
    current = float(base_model.by_path[canonical].fixed)
    top = _up_to(fs, path, up_to, table, current)
    if vary is None:
        others = read_decisions(fs, (fs.extras.get("optimise") or {}).get("vary"), file=fs.file)
    else:
        others = [Decision(p, lo, hi) for p, (lo, hi) in vary.items()]
    others = [d for d in others if resolve_path(fs, d.path) != canonical]
    decisions = [Decision(path, 0.0, top)] + others
    table_limits = limits if limits is not None else fs.extras.get("limits")
    if not table_limits:
        raise InputError("a capacity study needs limits: add a [limits] table", file=fs.file, key="limits")
    optimiser = Optimiser(fs, objective={"maximise": path}, vary=decisions, limits=table_limits, table={})
    model = optimiser.model
    limit_list = optimiser.limits
    solves = 0

    def run(active):
        nonlocal solves
        solves += 1
        result = optimiser.solve(active_limits=active, polish=False)
        if not result.converged:
            return None, []
        value = result.decisions[path]
        binds = [s.name for s in result.limits if s.active and s.name in active]
        return value, binds

    x_now = optimiser.x0
    lim_fn = ca.Function("limits", [model.x, model.p], [ca.vertcat(*[l.expression.expr for l in limit_list])])
    v_now = np.asarray(lim_fn(x_now, optimiser.p), dtype=float).ravel()
    rows = []
    for i, l in enumerate(limit_list):
        value, binds = run([l.name])
        cap = value if value is not None and l.name in binds else None
        rows.append(LimitCapacity(l.name, l.text, l.expression.kind, float(v_now[i]), float(l.margin(v_now[i])),
                                  cap, bool(l.margin(v_now[i]) < 0)))
    rows.sort(key=lambda r: (r.capacity is None, r.capacity if r.capacity is not None else 0.0))

    relief = []
    active = [l.name for l in limit_list]
    relieved: list[str] = []
    for _ in range(len(limit_list) + 1):
        value, binds = run(active)
        relief.append((list(relieved), value, binds))
        if value is None or not binds:
            break
        relieved += binds
        active = [a for a in active if a not in binds]
    capacity = relief[0][1] if relief and relief[0][2] else None
    return CapacityStudy(path, kind, current, top, "optimise", rows, capacity, None, relief, solves,
                         time.perf_counter() - started)


__all__ = ["CapacityStudy", "LimitCapacity", "METHODS", "capacity_study"]
