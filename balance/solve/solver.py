"""The solve entry point: from a flowsheet or model to a checked `Solution`."""

from __future__ import annotations

import time

import numpy as np

from balance.equations.model import Model, compile_flowsheet
from balance.equations.diagnostics import describe_failure
from balance.equations.structure import analyse, describe_imbalance
from balance.errors import InputError, SpecificationError
from balance.flowsheet.graph import Flowsheet
from balance.solve.checks import (RESIDUAL_LIMIT, check_values, overall_balances, range_warnings,
                                  unit_problems, worst_equations)
from balance.solve.evaluate import Evaluator
from balance.solve.feasibility import precheck, raise_if_infeasible
from balance.solve.guess import initial_guess
from balance.solve.newton import CompiledSystem, RawSolution, bounded_feasibility, newton
from balance.solve.result import Solution, StreamResult, UnitResult

METHODS = ("auto", "newton", "ipopt")


class Solver:
    """A compiled model with its functions, reusable for many solves.

    Parameters
    ----------
    model : Model or Flowsheet
        A flowsheet is compiled first.

    Examples
    --------
    >>> solver = Solver(flowsheet)            # doctest: +SKIP
    >>> solution = solver.solve()             # doctest: +SKIP
    >>> solver.set("feed.flow", 6.0)          # doctest: +SKIP
    >>> solution = solver.solve(warm=solution)  # doctest: +SKIP
    """

    def __init__(self, model: Model | Flowsheet):
        started = time.perf_counter()
        self.model = model if isinstance(model, Model) else compile_flowsheet(model)
        structure = analyse(self.model)
        if not structure.structurally_sound:
            raise SpecificationError(describe_imbalance(self.model, structure), file=self.model.flowsheet.file)
        raise_if_infeasible(self.model, self.model.parameter_values())
        self.system = CompiledSystem(self.model)
        self.evaluator = Evaluator(self.model)
        self.build_seconds = time.perf_counter() - started
        self.p = self.model.parameter_values()
        self._param_index = {v.path: i for i, v in enumerate(self.model.parameters)}

    def set(self, path: str, value: float) -> None:
        """Change the value of a fixed variable (SI) without recompiling."""
        from balance.equations.model import resolve_path
        canonical = resolve_path(self.model.flowsheet, path)
        if canonical not in self._param_index:
            raise InputError(f"'{path}' is not a fixed variable of this model; fixed: "
                             f"{', '.join(sorted(self._param_index)[:20])} ...",
                             file=self.model.flowsheet.file, key=path)
        self.p[self._param_index[canonical]] = float(value)
        self.model.parameters[self._param_index[canonical]].fixed = float(value)

    def guess(self) -> np.ndarray:
        values = initial_guess(self.model)
        return np.array([values[v.path] for v in self.model.unknowns], dtype=float)

    def solve(self, method: str = "auto", warm: Solution | np.ndarray | None = None,
              range_policy: str = "warn") -> Solution:
        """Solve and check; never raises for a failed solve (see `Solution.converged`)."""
        if method not in METHODS:
            raise InputError(f"unknown method {method!r}; valid: {', '.join(METHODS)}", key="method")
        if warm is None:
            x0 = self.guess()
        elif isinstance(warm, Solution):
            x0 = np.asarray(warm.x, dtype=float)
        else:
            x0 = np.asarray(warm, dtype=float)
        attempts = []
        raw = None
        if method in ("auto", "newton"):
            raw = newton(self.system, x0, self.p)
            attempts.append(f"newton: {raw.message} ({raw.iterations} iterations, residual {raw.residual_norm:.1e})")
            if raw.converged and method == "auto" and self._problems(raw.x):
                attempts.append("newton: the root found is not physical; retrying within bounds")
                raw = RawSolution(raw.x, False, "newton", raw.iterations, raw.residual_norm, raw.seconds,
                                  "unphysical root")
        if method == "ipopt" or (method == "auto" and not raw.converged):
            start = x0
            bounded = bounded_feasibility(self.system, start, self.p)
            attempts.append(f"ipopt: {bounded.message} ({bounded.iterations} iterations, "
                            f"residual {bounded.residual_norm:.1e})")
            if np.all(np.isfinite(bounded.x)):
                polished = newton(self.system, bounded.x, self.p)
                if polished.converged:
                    polished.method = "ipopt+newton"
                    polished.seconds += bounded.seconds
                    polished.iterations += bounded.iterations
                    bounded = polished
            if raw is None or bounded.residual_norm < raw.residual_norm or bounded.converged:
                raw = bounded
        if method == "auto" and (not raw.converged or self._problems(raw.x)):
            # continuation from an easier problem (balance/solve/continuation.py) before giving up
            from balance.solve.continuation import continuation_solve
            rescued = continuation_solve(self.system, x0, self.p, guess=lambda _p: self.guess())
            attempts += rescued.attempts
            if rescued.converged and not self._problems(rescued.raw.x):
                raw = rescued.raw
            elif rescued.raw is not None and not raw.converged and rescued.raw.residual_norm < raw.residual_norm:
                raw = rescued.raw
        return self._result(raw, attempts, range_policy)

    def _figures(self, x: np.ndarray) -> dict:
        """Every figure at ``x`` (remembered for the last point: the checks and the result share it)."""
        key = (np.asarray(x, dtype=float).tobytes(), self.p.tobytes())
        if getattr(self, "_last_figures", (None,))[0] != key:
            self._last_figures = (key, self.evaluator.evaluate(x, self.p))
        return self._last_figures[1]

    def _problems(self, x: np.ndarray) -> list[str]:
        """`check_values` at ``x``, remembered for the last point."""
        figures = self._figures(x)
        if getattr(self, "_last_problems", (None,))[0] is not figures:
            self._last_problems = (figures, check_values(self.model, figures))
        return self._last_problems[1]

    def _result(self, raw: RawSolution, attempts: list[str], range_policy: str) -> Solution:
        model = self.model
        fs = model.flowsheet
        figures = self._figures(raw.x)
        problems = [] if raw.converged else [f"the equations were not solved ({raw.message})"]
        if raw.residual_norm > RESIDUAL_LIMIT or not np.isfinite(raw.residual_norm):
            if raw.converged:
                problems.append(f"residual {raw.residual_norm:.2e} above {RESIDUAL_LIMIT:g}")
        problems += list(self._problems(raw.x))
        problems += unit_problems(model, figures)
        balances = overall_balances(model, figures)
        for balance in balances.values():
            if raw.converged and not balance.closes:
                problems.append(f"the overall {balance.name} balance does not close "
                                f"({balance.closure:.2e} relative)")
        warnings = range_warnings(model, figures, range_policy)
        liquor_names = {}
        for name, state in model.states.items():
            if state.liquor is not None:
                liquor_names[name] = state.liquor.name
                if not getattr(state.liquor, "heat_of_dilution_included", False):
                    note = f"heat of dilution of liquor '{state.liquor.name}' is neglected"
                    if note not in warnings:
                        warnings.append(note)
        streams = {}
        for stream in fs.streams:
            kind = model.states[stream.name].kind
            streams[stream.name] = StreamResult(
                stream.name, stream.kind, stream.source, stream.target,
                {var: figures[("var", f"{stream.name}.{var}")] for var in kind.variable_names},
                *(figures[("stream", stream.name, k)] for k in
                  ("specific_enthalpy", "enthalpy_flow", "water_flow", "solids_flow", "dry_air_flow")),
                liquor=liquor_names.get(stream.name))
        units = {}
        for name, unit in fs.units.items():
            kinds = {q.name: q.kind for q in unit.quantities()}
            kinds.update({k: kind for k, (_, kind) in model.reports[name].items()})
            fixed = {q.name for q in unit.quantities() if model.by_path[f"{name}.{q.name}"].fixed is not None}
            units[name] = UnitResult(name, unit.type_name,
                                     {q.name: figures[("var", f"{name}.{q.name}")] for q in unit.quantities()},
                                     {k: figures[("unit", name, k)] for k in model.reports[name]}, kinds, fixed)
        converged = raw.converged and not problems
        status = "converged" if converged else ("checks failed" if raw.converged else "not converged")
        diagnosis = []
        if not converged:
            # values changed by `set` since the build may ask the impossible: say so first
            diagnosis = [f"likely cause: {m}" for m in precheck(model, self.p)]
            try:
                diagnosis += describe_failure(model, raw.x, self.p).text.splitlines()
            except Exception as exc:  # noqa: BLE001 - a diagnosis must never hide the failure itself
                diagnosis.append(f"no diagnosis ({type(exc).__name__})")
        return Solution(model, converged, status, raw.method, raw.iterations, raw.residual_norm, raw.seconds,
                        raw.message, streams, units, balances, warnings, problems,
                        worst_equations(model, figures), {v.path: figures[("var", v.path)] for v in model.variables},
                        x=raw.x, attempts=attempts, diagnosis=diagnosis)


def solve(flowsheet: Flowsheet | Model, method: str = "auto", range_policy: str = "warn") -> Solution:
    """Compile (if needed) and solve a flowsheet; returns a checked `Solution`."""
    return Solver(flowsheet).solve(method=method, range_policy=range_policy)
