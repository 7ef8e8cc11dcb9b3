"""Parameter sweeps: many cases of one compiled model, solved in batches and checked one by one.

A sweep varies fixed values of a flowsheet (``feed.flow``, ``steam.pressure``,
``E3.pressure``, ``S1.temperature``, ...) over ranges or lists, as a full grid
or as random samples, and writes one row per case: the inputs, the key
figures, whether the case converged, how it was solved and, if it failed,
why. No case is ever dropped.

How a sweep runs
----------------
1. The flowsheet is compiled once per process into a `balance.solve.Solver`
   and solved at its own values: the *base* solution.
2. The cases are cut into chunks. A chunk is solved at once by the *batch
   Newton*: one CasADi Function that takes Newton steps in the scaled
   variables of `balance.solve.newton.CompiledSystem` (sparse QR per step,
   projected onto the variables' bounds, skipped for a case once its
   residual is below tolerance) from the base solution, then evaluates every
   figure of the `balance.solve.evaluate.Evaluator`; it is mapped over the
   chunk and, when that pays, compiled to C and cached on disk.
3. Each case is then checked as a single solve is: the scaled residual
   below the Newton tolerance, `balance.solve.checks.check_values` and the
   overall balances (vectorised over the chunk, or case by case with
   ``checks='exact'``); its key figures come from
   `balance.analysis.key_figures.key_figures` on a `CaseView` (the streams
   and units of a `Solution`, filled in place from the figures), so a row
   holds the numbers a direct solve prints.
4. A case the batch did not solve is tried again in the batch from its
   nearest solved neighbour in the same chunk; then, unless the pre-solve
   feasibility check (`balance.solve.feasibility.precheck`) already says no
   plant can meet it, by the full `Solver` (damped Newton, IPOPT within
   bounds) warm-started from that neighbour, then from the automatic initial
   guess. The row's ``solved_by`` says which; a failed row says why.
5. Chunks run on local worker processes (each compiles the model once) or on
   a Dask cluster (``dask_scheduler=``). A chunk's result depends only on the
   chunk, so every executor gives the same rows.

The sweep file (TOML) names the flowsheet and what varies::

    [sweep]
    flowsheet = "skim_milk_3_effect_forward.toml"   # relative to this file
    sampling = "grid"                                # or "random"
    samples = 1000                                   # random only
    seed = 1                                         # random only

    [sweep.vary]
    "feed.flow" = { from = "15 t/h", to = "25 t/h", steps = 11 }
    "steam.pressure" = { values = ["0.9 bar", "1.0 bar", "1.2 bar"] }

    [sweep.fix]                                      # optional changes to the base
    "E3.pressure" = "16 kPa"

On the command line the same variation is ``--vary 'feed.flow=15 t/h:25 t/h:11'``
(a range of 11 points) or ``--vary 'steam.pressure=0.9 bar,1.0 bar,1.2 bar'``
(a list).
"""

from __future__ import annotations

import csv
import hashlib
import math
import operator
import os
import shutil
import subprocess
import sys
import tempfile
import time
from dataclasses import dataclass, field
from typing import Any, Callable, Iterable, Sequence

import casadi as ca
import numpy as np

from balance.errors import InputError, SolveError
from balance.properties import water
from balance.properties.validity import enforce
from balance.solve.checks import (DRIVING_FORCE_FIGURES, RESIDUAL_LIMIT, check_values, overall_balances,
                                  range_warnings, worst_equations)
from balance.solve.feasibility import precheck
from balance.solve.newton import TOLERANCE
from balance.solve.result import Solution, StreamResult, UnitResult

SAMPLINGS = ("grid", "random")
EXECUTORS = ("auto", "serial", "processes", "dask")
COMPILE_CHOICES = ("auto", "always", "never")
#: Newton steps the batch takes at most per case; most cases need 2-4 from the base.
BATCH_ITERATIONS = 8
#: A case stops stepping once its scaled residual is below this (one more step was already taken).
BATCH_STOP = 1e-10
DEFAULT_CHUNK = 500
TINY = 1e-200
#: In a chunk checked by the vectorised screen, every AUDIT_EVERY-th accepted case is also checked exactly.
AUDIT_EVERY = 50
CHECKS = ("screen", "exact")
STATUS_COLUMNS = ("converged", "status", "solved_by", "iterations", "residual", "reason", "warnings")


# -- what varies -------------------------------------------------------------------------------

@dataclass(frozen=True)
class Parameter:
    """One varied input.

    Attributes
    ----------
    path : str
        The variable as the user wrote it (``feed.flow``).
    kind : str
        Its quantity kind (`balance.quantities.KINDS`), for units in headers.
    values : tuple of float
        The grid points or the listed values [SI].
    low, high : float or None
        The range ends [SI] for random sampling; None for a list.
    """

    path: str
    kind: str
    values: tuple[float, ...]
    low: float | None = None
    high: float | None = None


def _parse_value(fs, path: str, text: str, key: str) -> float:
    from balance.flowsheet.file_format import parse_path_value
    try:
        return parse_path_value(fs, path, text.strip() if isinstance(text, str) else text)
    except InputError as exc:
        raise exc.located(key=key) from None


def _kind(fs, path: str) -> str:
    from balance.flowsheet.file_format import kind_of_path
    return kind_of_path(fs, path)


def range_parameter(fs, path: str, low, high, steps: int) -> Parameter:
    """A parameter over ``steps`` evenly spaced points from ``low`` to ``high`` (ends included).

    ``low`` and ``high`` are written as in files (``"15 t/h"``) or given in SI.
    """
    kind = _kind(fs, path)
    if not isinstance(steps, int) or isinstance(steps, bool) or steps < 1:
        raise InputError(f"'steps' must be a whole number of at least 1, got {steps!r}", file=fs.file, key=path)
    a = _parse_value(fs, path, low, path)
    b = _parse_value(fs, path, high, path)
    values = tuple(float(v) for v in np.linspace(a, b, steps)) if steps > 1 else (a,)
    return Parameter(path, kind, values, min(a, b), max(a, b))


def list_parameter(fs, path: str, values: Sequence) -> Parameter:
    """A parameter taking the listed values (written as in files, or SI numbers)."""
    if not values:
        raise InputError("an empty list of values", file=fs.file, key=path)
    kind = _kind(fs, path)
    return Parameter(path, kind, tuple(_parse_value(fs, path, v, path) for v in values))


def parse_vary(fs, text: str) -> Parameter:
    """Read a ``--vary`` option: ``PATH=LOW:HIGH:STEPS`` (a range) or ``PATH=A,B,C`` (a list).

    Examples
    --------
    >>> from balance.flowsheet.file_format import load
    >>> fs = load("flowsheets/skim_milk_3_effect_forward.toml")  # doctest: +SKIP
    >>> parse_vary(fs, "feed.flow=18 t/h:22 t/h:3").values  # doctest: +SKIP
    (5.0, 5.555..., 6.111...)
    """
    if "=" not in text:
        raise InputError(f"--vary expects PATH=LOW:HIGH:STEPS or PATH=A,B,C, e.g. 'feed.flow=15 t/h:25 t/h:11'; "
                         f"got {text!r}", file=fs.file, key="--vary")
    path, spec = (part.strip() for part in text.split("=", 1))
    if spec.count(":") == 2:
        low, high, steps = spec.split(":")
        try:
            n = int(steps)
        except ValueError:
            raise InputError(f"the number of steps must be a whole number, got {steps!r}",
                             file=fs.file, key=path) from None
        return range_parameter(fs, path, low, high, n)
    if ":" in spec:
        raise InputError(f"a range is LOW:HIGH:STEPS, got {spec!r}", file=fs.file, key=path)
    return list_parameter(fs, path, [v for v in spec.split(",") if v.strip()])


def parameter_from_table(fs, path: str, table: Any, file: str | None = None) -> Parameter:
    """A parameter from a sweep file entry: ``{ from, to, steps }`` or ``{ values = [...] }``."""
    where = f"sweep.vary.{path}"
    if not isinstance(table, dict):
        raise InputError("expected { from = ..., to = ..., steps = N } or { values = [...] }", file=file, key=where)
    keys = set(table)
    if keys == {"values"}:
        if not isinstance(table["values"], list):
            raise InputError("'values' must be a list", file=file, key=where)
        return list_parameter(fs, path, table["values"])
    if keys == {"from", "to", "steps"}:
        return range_parameter(fs, path, table["from"], table["to"], table["steps"])
    raise InputError(f"unexpected keys {', '.join(sorted(keys))}; give from, to and steps, or values",
                     file=file, key=where)


def snake_order(sizes: Sequence[int]) -> list[tuple[int, ...]]:
    """Every index tuple of a grid, ordered so that neighbours in the list are neighbours in the grid.

    >>> snake_order([2, 3])
    [(0, 0), (0, 1), (0, 2), (1, 2), (1, 1), (1, 0)]
    """
    if not sizes:
        return [()]
    inner = snake_order(sizes[1:])
    out = []
    for i in range(sizes[0]):
        out.extend((i,) + t for t in (inner if i % 2 == 0 else inner[::-1]))
    return out


def make_cases(parameters: Sequence[Parameter], sampling: str = "grid", samples: int | None = None,
               seed: int = 0) -> np.ndarray:
    """The cases as an array (cases x parameters) [SI].

    ``grid``: every combination, in snake order (each case next to its
    neighbour). ``random``: ``samples`` cases drawn uniformly within each
    range (or from each list), reproducible by ``seed``.
    """
    if sampling not in SAMPLINGS:
        raise InputError(f"unknown sampling {sampling!r}; valid: {', '.join(SAMPLINGS)}", key="sampling")
    if not parameters:
        raise InputError("nothing to vary: give at least one parameter", key="vary")
    if sampling == "grid":
        order = snake_order([len(p.values) for p in parameters])
        return np.array([[p.values[i] for p, i in zip(parameters, idx)] for idx in order], dtype=float)
    if not isinstance(samples, int) or isinstance(samples, bool) or samples < 1:
        raise InputError(f"random sampling needs a number of samples of at least 1, got {samples!r}",
                         key="samples")
    rng = np.random.default_rng(seed)
    columns = []
    for p in parameters:
        if p.low is not None and p.high is not None and len(p.values) > 1:
            columns.append(rng.uniform(p.low, p.high, samples))
        else:
            columns.append(rng.choice(np.asarray(p.values, dtype=float), samples))
    return np.column_stack(columns)


# -- where the model comes from ---------------------------------------------------------------

@dataclass(frozen=True)
class ModelSource:
    """A flowsheet as text plus the changes made to it: cheap to send to another process.

    Attributes
    ----------
    text : str
        The flowsheet file's TOML.
    file : str or None
        Its name, for messages.
    fixed : tuple of (str, float)
        Values to fix after reading [SI].
    freed : tuple of str
        Paths to leave free after reading.
    """

    text: str
    file: str | None = None
    fixed: tuple[tuple[str, float], ...] = ()
    freed: tuple[str, ...] = ()

    @classmethod
    def from_file(cls, path: str | os.PathLike, fixed: dict[str, float] | None = None,
                  freed: Iterable[str] = ()) -> "ModelSource":
        try:
            with open(path, encoding="utf-8") as handle:
                text = handle.read()
        except OSError as exc:
            raise InputError(f"cannot read the file: {exc.strerror}", file=str(path)) from None
        return cls(text, str(path), tuple(sorted((fixed or {}).items())), tuple(sorted(freed)))

    @classmethod
    def from_flowsheet(cls, fs) -> "ModelSource":
        """The file a flowsheet was read from, with its present fixes and frees."""
        if not fs.file or not os.path.isfile(fs.file):
            raise InputError("this flowsheet was not read from a file, so it cannot be sent to worker "
                             "processes; run the sweep with executor='serial'", key="executor")
        return cls.from_file(fs.file, dict(fs.fixed), fs.freed)

    def flowsheet(self):
        try:
            import tomllib
        except ModuleNotFoundError:  # Python < 3.11
            import tomli as tomllib
        from balance.flowsheet.file_format import from_dict
        try:
            data = tomllib.loads(self.text)
        except tomllib.TOMLDecodeError as exc:
            raise InputError(f"not valid TOML: {exc}", file=self.file) from None
        fs = from_dict(data, file=self.file)
        for path in self.freed:
            fs.free(path)
        for path, value in self.fixed:
            fs.fix(path, value)
        return fs

    @property
    def key(self) -> str:
        digest = hashlib.sha256(repr((self.text, self.file, self.fixed, self.freed)).encode())
        return digest.hexdigest()[:20]


# -- the batch Newton -------------------------------------------------------------------------

def cache_dir() -> str:
    """Where compiled batch functions are kept: ``$BALANCE_CACHE_DIR`` or ``~/.cache/balance``."""
    base = os.environ.get("BALANCE_CACHE_DIR") or os.path.join(
        os.environ.get("XDG_CACHE_HOME") or os.path.join(os.path.expanduser("~"), ".cache"), "balance")
    return os.path.join(base, "compiled")


def c_compiler() -> str | None:
    """The C compiler used for compiled batch functions (``$CC``, ``cc`` or ``gcc``), or None."""
    for name in (os.environ.get("CC"), "cc", "gcc", "clang"):
        if name and shutil.which(name):
            return shutil.which(name)
    return None


COMPILE_FLAGS = ("-O1", "-shared", "-fPIC")


class BatchSolver:
    """The batch Newton of one model: many cases at once, from given starting points.

    Parameters
    ----------
    solver : balance.solve.Solver
        The compiled model (its `CompiledSystem` and `Evaluator` are reused).
    iterations : int
        Newton steps at most per case.

    Notes
    -----
    One case is the CasADi Function ``case(xs0, p, dx, dr) -> (x, figures,
    steps)``: up to ``iterations`` Newton steps on the scaled residual
    g(xs dx, p) / dr, each solving J s = -g by sparse QR and projecting onto
    the variables' bounds like `balance.solve.newton.newton` (without its line
    search: a case that needs one is left to the full solver). A case whose
    residual is already below `BATCH_STOP` skips its remaining steps (a
    conditional call). It then returns every Evaluator figure at the point
    reached. ``case`` is mapped over a chunk; `compile` turns it into a shared
    library, cached by the hash of its C source, which gives the same numbers
    faster.
    """

    def __init__(self, solver, iterations: int = BATCH_ITERATIONS):
        self.solver = solver
        self.iterations = int(iterations)
        model = solver.model
        n, m, k = model.n_unknowns, model.p.numel(), model.n_equations
        xs, dx, dr = ca.SX.sym("xs", n), ca.SX.sym("dx", n), ca.SX.sym("dr", k)
        p = ca.SX.sym("p", m)
        gs = solver.system.g_function(xs * dx, p) / dr
        residual_jacobian = ca.Function("residual_jacobian", [xs, p, dx, dr], [gs, ca.jacobian(gs, xs)])
        lower = ca.DM(solver.system.lower)
        upper = ca.DM(solver.system.upper)
        xm, pm, dxm, drm = ca.MX.sym("xs", n), ca.MX.sym("p", m), ca.MX.sym("dx", n), ca.MX.sym("dr", k)
        g_val, jac = residual_jacobian(xm, pm, dxm, drm)
        # A diagonal of 1e-200 leaves every Jacobian entry above 1e-184 unchanged, and turns an exactly
        # singular Jacobian (which would stop the whole batch) into a huge step that fails that case only.
        jac = jac + TINY * ca.MX.eye(n)
        stepped = ca.fmin(ca.fmax(xm - ca.solve(jac, g_val, "qr"), lower / dxm), upper / dxm)
        norm = ca.mmax(ca.fabs(g_val))
        step = ca.Function("newton_step", [xm, pm, dxm, drm], [stepped, norm])
        hold = ca.Function("hold", [xm, pm, dxm, drm], [xm, ca.MX(0)])
        branch = ca.Function.conditional("step_or_hold", [step, hold], hold)
        x = xm
        done = ca.MX(0)
        steps = ca.MX(0)
        for _ in range(self.iterations):
            x_next, norm_k = branch(done, x, pm, dxm, drm)
            steps = steps + (1 - done)
            done = ca.if_else(done, 1, norm_k < BATCH_STOP)
            x = x_next
        x_si = x * dxm
        # after the Evaluator's figures: the saturation temperature at each vapour stream's pressure,
        # for the vectorised "vapour above its dew point" check
        self.vapour_streams = [name for name, state in model.states.items() if state.kind.name == "vapour"]
        saturation = ca.Function("saturation", [model.x, model.p], [ca.vertcat(
            *[ca.SX(water.saturation_temperature(model.states[name]["pressure"])) for name in self.vapour_streams]
        ) if self.vapour_streams else ca.SX(0, 1)])
        figures = ca.vertcat(solver.evaluator.function(x_si, pm), saturation(x_si, pm))
        self.n_figures = len(solver.evaluator.keys) + len(self.vapour_streams)
        self.case = ca.Function("balance_batch_case", [xm, pm, dxm, drm], [x_si, figures, steps])
        self.compiled_library: str | None = None
        self._function = self.case
        self._maps: dict[int, Any] = {}

    # compiling -------------------------------------------------------------------------------

    def c_source(self) -> str:
        """The C source of the case function."""
        with tempfile.TemporaryDirectory() as folder:
            gen = ca.CodeGenerator("balance_batch.c", {"with_header": False})
            gen.add(self.case)
            gen.generate(folder + os.sep)
            with open(os.path.join(folder, "balance_batch.c"), encoding="utf-8") as handle:
                return handle.read()

    def library_path(self, source: str | None = None) -> str:
        source = source if source is not None else self.c_source()
        digest = hashlib.sha256((source + " ".join(COMPILE_FLAGS) + ca.__version__).encode()).hexdigest()[:24]
        return os.path.join(cache_dir(), f"batch_{digest}.so")

    def compile(self, *, allow_build: bool = True) -> float:
        """Use the compiled case function, building it if it is not cached.

        Returns the seconds spent compiling (0 when cached). Raises
        `SolveError` when no C compiler is found or compiling fails.
        """
        source = self.c_source()
        path = self.library_path(source)
        seconds = 0.0
        if not os.path.exists(path):
            if not allow_build:
                raise SolveError("the compiled batch function is not cached", key="compile")
            compiler = c_compiler()
            if compiler is None:
                raise SolveError("no C compiler found (set CC, or install cc/gcc)", key="compile")
            started = time.perf_counter()
            os.makedirs(os.path.dirname(path), exist_ok=True)
            with tempfile.TemporaryDirectory() as folder:
                c_file = os.path.join(folder, "balance_batch.c")
                with open(c_file, "w", encoding="utf-8") as handle:
                    handle.write(source)
                partial = os.path.join(os.path.dirname(path), f".{os.path.basename(path)}.{os.getpid()}")
                done = subprocess.run([compiler, *COMPILE_FLAGS, "-o", partial, c_file, "-lm"],
                                      capture_output=True, text=True)
                if done.returncode != 0:
                    raise SolveError(f"compiling the batch function failed: {done.stderr.strip()[:400]}",
                                     key="compile")
                os.replace(partial, path)
            seconds = time.perf_counter() - started
        self.use_library(path)
        return seconds

    def is_cached(self) -> bool:
        return os.path.exists(self.library_path())

    def use_library(self, path: str) -> None:
        self._function = ca.external("balance_batch_case", path)
        self.compiled_library = path
        self._maps = {}

    # solving --------------------------------------------------------------------------------

    def _mapped(self, count: int):
        if count not in self._maps:
            self._maps[count] = self._function.map(f"batch_{count}", "serial", count, [2, 3], [])
        return self._maps[count]

    def run(self, x0: np.ndarray, p: np.ndarray, dx: np.ndarray, dr: np.ndarray):
        """Solve the cases in the columns of ``p`` from the columns of ``x0`` [SI].

        Returns ``x`` (unknowns x cases), ``figures`` (the Evaluator's
        figures, then the saturation temperature of each vapour stream, x
        cases) and the Newton steps taken per case.
        """
        count = p.shape[1]
        try:
            x, figures, steps = self._mapped(count)(x0 / dx[:, None], p, dx, dr)
        except RuntimeError:
            # a case made an operation fail: split the chunk until that case is found, and give it NaN
            if count == 1:
                return np.full((x0.shape[0], 1), np.nan), np.full((self.n_figures, 1), np.nan), np.zeros(1)
            half = count // 2
            first = self.run(x0[:, :half], p[:, :half], dx, dr)
            second = self.run(x0[:, half:], p[:, half:], dx, dr)
            return tuple(np.concatenate([a, b], axis=-1) for a, b in zip(first, second))
        return (np.asarray(x, dtype=float), np.asarray(figures, dtype=float),
                np.asarray(steps, dtype=float).ravel())


# -- one process's compiled model ------------------------------------------------------------

def _getter(indices: Sequence[int]) -> Callable[[list], tuple]:
    """``row -> tuple(row[i] for i in indices)`` (`operator.itemgetter`, always giving a tuple)."""
    indices = list(indices)
    if len(indices) > 1:
        return operator.itemgetter(*indices)
    if len(indices) == 1:
        only = indices[0]
        return lambda row: (row[only],)
    return lambda row: ()


@dataclass
class CaseView:
    """One solved case as the key-figure providers read it: the flowsheet, streams and units
    (the fields of a `Solution` they use; `balance.analysis.key_figures.key_figures` accepts either)."""

    flowsheet: Any
    streams: dict
    units: dict


class _Assembler:
    """Builds a `Solution` from one column of Evaluator figures, as `Solver` does from its own."""

    def __init__(self, solver):
        model = solver.model
        fs = model.flowsheet
        index = {key: i for i, key in enumerate(solver.evaluator.keys)}
        self.model = model
        self.keys = solver.evaluator.keys
        self.residual_rows = np.array([index[("residual", i)] for i in range(model.n_equations)], dtype=int)
        self.residual_scale = np.asarray(model.residual_scale, dtype=float)
        liquor_names = {name: state.liquor.name for name, state in model.states.items()
                        if state.liquor is not None}
        self.streams = []
        for stream in fs.streams:
            kind = model.states[stream.name].kind
            self.streams.append((stream.name, stream.kind, stream.source, stream.target,
                                 [(var, index[("var", f"{stream.name}.{var}")]) for var in kind.variable_names],
                                 [index[("stream", stream.name, k)] for k in
                                  ("specific_enthalpy", "enthalpy_flow", "water_flow", "solids_flow",
                                   "dry_air_flow")],
                                 liquor_names.get(stream.name)))
        self.units = []
        for name, unit in fs.units.items():
            kinds = {q.name: q.kind for q in unit.quantities()}
            kinds.update({k: kind for k, (_, kind) in model.reports[name].items()})
            fixed = {q.name for q in unit.quantities() if model.by_path[f"{name}.{q.name}"].fixed is not None}
            self.units.append((name, unit.type_name,
                               [(q.name, index[("var", f"{name}.{q.name}")]) for q in unit.quantities()],
                               [(k, index[("unit", name, k)]) for k in model.reports[name]], kinds, fixed))
        self.values = [(v.path, index[("var", v.path)]) for v in model.variables]
        self._prepare_screen(index, solver.evaluator.keys)
        notes = []
        for state in model.states.values():
            if state.liquor is not None and not getattr(state.liquor, "heat_of_dilution_included", False):
                note = f"heat of dilution of liquor '{state.liquor.name}' is neglected"
                if note not in notes:
                    notes.append(note)
        self.notes = notes

    def _prepare_screen(self, index: dict, keys: list) -> None:
        """Row indices and limits for `screen`, read from the model as `check_values` and
        `overall_balances` read them."""
        model = self.model
        fs = model.flowsheet
        self.reference = model.reference_flow
        self.var_rows = np.array([index[("var", v.path)] for v in model.variables], dtype=int)
        kinds = [v.kind for v in model.variables]
        self.is_flow = np.array([k == "mass_flow" for k in kinds])
        self.is_fraction = np.array([k == "fraction" for k in kinds])
        lower = np.array([v.lower for v in model.variables], dtype=float)
        upper = np.array([v.upper for v in model.variables], dtype=float)
        self.lower_limit = lower - 1e-9 * np.maximum(1.0, np.abs(lower))
        self.upper_limit = upper + 1e-9 * np.maximum(1.0, np.abs(upper))
        self.driving_rows = np.array([index[("unit", unit, name)] for unit, figures in model.reports.items()
                                      for name in figures if name in DRIVING_FORCE_FIGURES], dtype=int)
        n_keys = len(keys)
        vapour = [name for name, state in model.states.items() if state.kind.name == "vapour"]
        self.vapour_rows = np.array([[index[("var", f"{name}.{v}")] for name in vapour]
                                     for v in ("temperature", "pressure", "flow")], dtype=int).reshape(3, -1)
        self.saturation_rows = n_keys + np.arange(len(vapour), dtype=int)
        sides = {k: ([], []) for k in ("water", "solids", "dry air", "energy")}
        figure = {"water": "water_flow", "solids": "solids_flow", "dry air": "dry_air_flow", "energy": "enthalpy_flow"}
        for stream in fs.streams:
            source, target = fs.unit(stream.source), fs.unit(stream.target)
            side = 0 if source.boundary == "source" else 1 if target.boundary == "sink" else None
            if side is None:
                continue
            for name in sides:
                sides[name][side].append(index[("stream", stream.name, figure[name])])
        self.balance_rows = {k: (np.array(a, dtype=int), np.array(b, dtype=int)) for k, (a, b) in sides.items()}
        self.external_rows = np.array([index[("external_power", u)] for u in model.external_power], dtype=int)
        self.range_rows = [index[("range", i)] for i in range(len(model.range_checks))]

    def warnings(self, column: np.ndarray) -> list[str]:
        """The validity-range warnings of one case (as `range_warnings`) and the model's notes."""
        numbers = [column[i] for i in self.range_rows]
        return enforce(self.model.range_checks, numbers, "warn", self.model.flowsheet.file) + list(self.notes)

    def screen(self, figures: np.ndarray) -> np.ndarray:
        """Which cases pass every check of `check_values` and `overall_balances`, for all cases at once.

        The same conditions as those two functions, on the columns of the
        batch's figures. A case the screen rejects is run through the two
        functions themselves for its messages; `solve_chunk` also runs them
        on a sample of accepted cases and falls back to them if the two
        ever disagree.
        """
        values = figures[self.var_rows, :]
        with np.errstate(invalid="ignore"):
            ok = np.all(np.isfinite(values), axis=0)
            flows, fractions, others = values[self.is_flow], values[self.is_fraction], values[~self.is_flow]
            ok &= ~np.any(flows < -1e-9 * self.reference, axis=0)
            ok &= np.all((fractions >= -1e-9) & (fractions <= 1 + 1e-9), axis=0)
            ok &= ~np.any((others < self.lower_limit[~self.is_flow, None])
                          | (others > self.upper_limit[~self.is_flow, None]), axis=0)
            if self.driving_rows.size:
                ok &= np.all(figures[self.driving_rows, :] > 0, axis=0)
            if self.saturation_rows.size:
                t, p, flow = (figures[rows, :] for rows in self.vapour_rows)
                colder = (flow > 1e-9 * self.reference) & (p > 0) & (t < figures[self.saturation_rows, :] - 0.01)
                ok &= ~np.any(colder, axis=0)
            external = (figures[self.external_rows, :].sum(axis=0) if self.external_rows.size
                        else np.zeros(figures.shape[1]))
            for name, (into_rows, out_rows) in self.balance_rows.items():
                into = figures[into_rows, :].sum(axis=0)
                out_of = figures[out_rows, :].sum(axis=0)
                if name == "energy":
                    into = into + np.where(external >= 0, external, 0.0)
                    out_of = out_of - np.where(external >= 0, 0.0, external)
                scale = np.maximum(np.abs(into), np.abs(out_of))
                if name == "energy":
                    scale = np.maximum(scale, self.reference * 2.0e6)
                closure = np.where(scale > 0, (into - out_of) / np.where(scale > 0, scale, 1.0), 0.0)
                ok &= np.abs(closure) < 1e-6
        return ok

    def residual_norms(self, figures: np.ndarray) -> np.ndarray:
        scaled = np.abs(figures[self.residual_rows, :] / self.residual_scale[:, None])
        with np.errstate(invalid="ignore"):
            norms = np.max(scaled, axis=0) if scaled.size else np.zeros(figures.shape[1])
        norms[~np.all(np.isfinite(figures), axis=0)] = np.inf
        return norms

    def check(self, column: np.ndarray, residual: float) -> tuple[dict, list[str], dict, list[str]]:
        """The checks a single solve runs, on one case the batch solved (residual below tolerance).

        Returns the figures (key -> float), the problems (empty when the
        case passes), the overall balances and the warnings.
        """
        model = self.model
        figures = dict(zip(self.keys, column.tolist()))
        problems = []
        if residual > RESIDUAL_LIMIT:
            problems.append(f"residual {residual:.2e} above {RESIDUAL_LIMIT:g}")
        problems += check_values(model, figures)
        balances = overall_balances(model, figures)
        for balance in balances.values():
            if not balance.closes:
                problems.append(f"the overall {balance.name} balance does not close "
                                f"({balance.closure:.2e} relative)")
        warnings = range_warnings(model, figures, "warn") + list(self.notes)
        return figures, problems, balances, warnings

    def results(self, column: np.ndarray) -> tuple[dict, dict]:
        """The `StreamResult` and `UnitResult` of every stream and unit, from one column of figures."""
        row = column.tolist()
        streams = {name: StreamResult(name, kind, source, target, {var: row[i] for var, i in variables},
                                      *(row[i] for i in derived), liquor=liquor)
                   for name, kind, source, target, variables, derived, liquor in self.streams}
        units = {name: UnitResult(name, type_name, {q: row[i] for q, i in quantities},
                                  {f: row[i] for f, i in reported}, kinds, fixed)
                 for name, type_name, quantities, reported, kinds, fixed in self.units}
        return streams, units

    def view(self, column: np.ndarray) -> "CaseView":
        """What the key-figure providers read of a case (flowsheet, streams, units), without the
        checks, balances and messages of a full `Solution`."""
        streams, units = self.results(column)
        return CaseView(self.model.flowsheet, streams, units)

    def view_filler(self, column: np.ndarray) -> Callable[[np.ndarray], "CaseView"]:
        """A function ``fill(column) -> CaseView`` that writes a case's numbers into one view in place.

        About twice as fast as `view` (no new objects per case); every call
        returns the same view, so use it before the next call (as
        `solve_chunk` does: key figures are read at once). The view starts
        from ``column``.
        """
        shown = self.view(column)
        streams = [(shown.streams[name].values, tuple(v for v, _ in variables), _getter([i for _, i in variables]),
                    shown.streams[name], _getter(derived))
                   for name, _kind, _source, _target, variables, derived, _liquor in self.streams]
        units = [(shown.units[name].quantities, tuple(q for q, _ in quantities), _getter([i for _, i in quantities]),
                  shown.units[name].figures, tuple(f for f, _ in reported), _getter([i for _, i in reported]))
                 for name, _type, quantities, reported, _kinds, _fixed in self.units]

        def fill(col: np.ndarray) -> CaseView:
            row = col.tolist()
            for values, names, get, stream, derived in streams:
                values.update(zip(names, get(row)))
                (stream.specific_enthalpy, stream.enthalpy_flow, stream.water_flow, stream.solids_flow,
                 stream.dry_air_flow) = derived(row)
            for quantities, q_names, q_get, reported, r_names, r_get in units:
                quantities.update(zip(q_names, q_get(row)))
                reported.update(zip(r_names, r_get(row)))
            return shown

        return fill

    def solution(self, x: np.ndarray, column: np.ndarray, residual: float, steps: int, method: str,
                 checked: tuple | None = None) -> Solution:
        """The `Solution` of a case the batch solved, built as `Solver` builds its own."""
        model = self.model
        figures, problems, balances, warnings = checked or self.check(column, residual)
        row = column.tolist()
        streams, units = self.results(column)
        converged = not problems
        worst = [] if converged else worst_equations(model, figures)
        return Solution(model, converged, "converged" if converged else "checks failed", method, int(steps),
                        float(residual), 0.0, "converged", streams, units, balances, warnings, problems, worst,
                        {path: row[i] for path, i in self.values}, x=x, attempts=[])


class CompiledSweepModel:
    """Everything one process needs to solve chunks of cases of one model.

    Parameters
    ----------
    source : ModelSource or Flowsheet
    paths : list of str
        The varied paths (each must be a fixed value of the flowsheet).
    iterations : int
        Newton steps at most per case in the batch.
    """

    def __init__(self, source, paths: Sequence[str], iterations: int = BATCH_ITERATIONS):
        from balance.equations.model import resolve_path
        from balance.solve.solver import Solver
        started = time.perf_counter()
        fs = source.flowsheet() if isinstance(source, ModelSource) else source
        self.solver = Solver(fs)
        model = self.solver.model
        self.paths = list(paths)
        self.parameter_rows = []
        fixed = [v.path for v in model.parameters]
        for path in self.paths:
            canonical = resolve_path(fs, path)
            if canonical not in fixed:
                raise InputError(f"'{path}' is not a fixed value of this flowsheet, so it cannot be varied; "
                                 f"fix it in the file or with --fix; fixed values: {', '.join(fixed)}",
                                 file=fs.file, key=path)
            self.parameter_rows.append(fixed.index(canonical))
        self.batch = BatchSolver(self.solver, iterations)
        self.assembler = _Assembler(self.solver)
        self.base_p = self.solver.p.copy()
        self._predictor: tuple[bytes, np.ndarray] | None = None
        self.build_seconds = time.perf_counter() - started

    def output_rows(self, outputs: Sequence[str]) -> list[int]:
        """Rows of the Evaluator figures for output paths: a variable (``E1.area``, ``V1.pressure``,
        ``feed.flow``) or a unit's reported figure (``E2.driving_force``)."""
        from balance.equations.model import resolve_path
        index = {key: i for i, key in enumerate(self.solver.evaluator.keys)}
        fs = self.solver.model.flowsheet
        rows = []
        for path in outputs:
            owner, _, name = path.rpartition(".")
            if ("unit", owner, name) in index:
                rows.append(index[("unit", owner, name)])
                continue
            try:
                canonical = resolve_path(fs, path)
            except InputError as exc:
                raise exc.located(key=path) from None
            if ("var", canonical) not in index:
                raise InputError(f"'{path}' names no variable or unit figure of this flowsheet",
                                 file=fs.file, key=path)
            rows.append(index[("var", canonical)])
        return rows

    def output_kinds(self, outputs: Sequence[str]) -> list[str]:
        keys = self.solver.evaluator.keys
        model = self.solver.model
        kinds = []
        for row in self.output_rows(outputs):
            key = keys[row]
            if key[0] == "var":
                kinds.append(model.by_path[key[1]].kind)
            else:
                kinds.append(model.reports[key[1]][key[2]][1])
        return kinds

    def parameters_for(self, cases: np.ndarray) -> np.ndarray:
        p = np.repeat(self.base_p[:, None], cases.shape[0], axis=1)
        for column, row in enumerate(self.parameter_rows):
            p[row, :] = cases[:, column]
        return p

    def predicted(self, base_x: np.ndarray, cases: np.ndarray) -> np.ndarray:
        """Starting points: the base solution moved along its tangent, x0 = x_b - J_x^-1 J_p (p - p_b),
        projected onto the bounds (first-order continuation from the base)."""
        key = base_x.tobytes()
        if self._predictor is None or self._predictor[0] != key:
            model = self.solver.model
            jacobians = ca.Function("tangent", [model.x, model.p],
                                    [ca.jacobian(model.g, model.x), ca.jacobian(model.g, model.p)])
            jx, jp = (np.asarray(ca.densify(j), dtype=float) for j in jacobians(base_x, self.base_p))
            try:
                tangent = -np.linalg.solve(jx, jp[:, self.parameter_rows])
            except np.linalg.LinAlgError:
                tangent = np.zeros((len(base_x), len(self.parameter_rows)))
            if not np.all(np.isfinite(tangent)):
                tangent = np.zeros_like(tangent)
            self._predictor = (key, tangent)
        tangent = self._predictor[1]
        shift = (cases - self.base_p[self.parameter_rows][None, :]).T
        x0 = base_x[:, None] + tangent @ shift
        lower, upper = self.solver.system.lower, self.solver.system.upper
        return np.clip(x0, lower[:, None], upper[:, None])

    def set_case(self, values: np.ndarray) -> None:
        for row, value in zip(self.parameter_rows, values):
            self.solver.p[row] = float(value)
            self.solver.model.parameters[row].fixed = float(value)

    def restore_base(self) -> None:
        for row, v in enumerate(self.solver.model.parameters):
            v.fixed = float(self.base_p[row])
        self.solver.p[:] = self.base_p


# -- one chunk --------------------------------------------------------------------------------

@dataclass
class CaseOutcome:
    """How one case ended: what its row needs."""

    converged: bool
    status: str
    solved_by: str
    iterations: int
    residual: float
    reason: str
    warnings: str
    figures: list[float]
    outputs: list[float]


@dataclass
class ChunkResult:
    """The outcomes of one chunk of cases, in case order."""

    start: int
    outcomes: list[CaseOutcome]
    seconds: float
    batch_seconds: float
    counts: dict[str, int] = field(default_factory=dict)
    notes: list[str] = field(default_factory=list)


@dataclass(frozen=True)
class ChunkPlan:
    """What every chunk of one sweep shares (sent once with each chunk; small)."""

    base_x: np.ndarray
    scale: np.ndarray
    figure_names: tuple[str, ...]
    outputs: tuple[str, ...]
    checks: str = "screen"


def _reason(solution: Solution) -> str:
    if solution.converged:
        return ""
    parts = list(solution.problems) or [solution.message]
    if solution.worst_equations:
        label, value = solution.worst_equations[0]
        parts.append(f"largest residual: {label} ({value:.2g})")
    return "; ".join(parts)


def _key_figure_values(solution, names: Sequence[str]) -> list[float]:
    if not names:
        return []
    from balance.analysis.key_figures import key_figures
    figures = key_figures(solution)
    return [figures[n].value if n in figures else float("nan") for n in names]


def _nearest(cases: np.ndarray, scale: np.ndarray, i: int, candidates: np.ndarray) -> int | None:
    if candidates.size == 0:
        return None
    distance = np.sum(((cases[candidates] - cases[i]) / scale) ** 2, axis=1)
    return int(candidates[np.argmin(distance)])  # ties go to the earlier case: the same on every executor


def solve_chunk(engine: CompiledSweepModel, cases: np.ndarray, start: int, plan: ChunkPlan) -> ChunkResult:
    """Solve a chunk of cases (rows of ``cases``, SI): batch first, then from neighbours, then the full solver."""
    started = time.perf_counter()
    count = cases.shape[0]
    names, nan = plan.figure_names, float("nan")
    output_rows = engine.output_rows(plan.outputs)
    p = engine.parameters_for(cases)
    dx, dr = engine.solver.system.scales(plan.base_x)
    x, figures, steps = engine.batch.run(engine.predicted(plan.base_x, cases), p, dx, dr)
    norms = engine.assembler.residual_norms(figures)
    batch_seconds = time.perf_counter() - started
    outcomes: list[CaseOutcome | None] = [None] * count
    solved_x: dict[int, np.ndarray] = {}
    counts = {"batch": 0, "batch from neighbour": 0, "full solver": 0, "failed": 0}

    notes: list[str] = []
    exact = plan.checks == "exact"

    fill_view = engine.assembler.view_filler(figures[:, 0]) if names and count else None

    def key_figure_values(i) -> list[float]:
        return _key_figure_values(fill_view(figures[:, i]), names) if names else []

    def accept_exact(i, label) -> bool:
        checked = engine.assembler.check(figures[:, i], float(norms[i]))
        if checked[1]:
            return False  # failed a check: the full solver decides
        values = key_figure_values(i)
        outcomes[i] = CaseOutcome(True, "converged", label(i), int(steps[i]), float(norms[i]), "",
                                  "; ".join(checked[3]), values, figures[output_rows, i].tolist())
        return True

    def accept(indices, label) -> int:
        nonlocal exact
        indices = [i for i in indices if outcomes[i] is None and norms[i] < TOLERANCE]
        passed = engine.assembler.screen(figures[:, indices]) if indices and not exact else None
        accepted = 0
        for j, i in enumerate(indices):
            if exact:
                ok = accept_exact(i, label)
            elif not passed[j]:
                ok = accept_exact(i, label)   # the real checks give the messages (and the last word)
                if ok:
                    notes.append("the vectorised checks rejected a case the exact checks accept; "
                                 "the exact checks were used")
            else:
                if accepted % AUDIT_EVERY == 0 and engine.assembler.check(figures[:, i], float(norms[i]))[1]:
                    notes.append("the vectorised checks accepted a case the exact checks reject; "
                                 "the exact checks were used for the rest of the chunk")
                    exact = True
                    ok = accept_exact(i, label)
                else:
                    column = figures[:, i]
                    outcomes[i] = CaseOutcome(True, "converged", label(i), int(steps[i]), float(norms[i]), "",
                                              "; ".join(engine.assembler.warnings(column)),
                                              key_figure_values(i), column[output_rows].tolist())
                    ok = True
            if ok:
                solved_x[i] = x[:, i].copy()
                accepted += 1
        return accepted

    counts["batch"] = accept(range(count), lambda i: "batch newton from the base")

    pending = np.array([i for i in range(count) if outcomes[i] is None], dtype=int)
    if pending.size and solved_x:
        solved = np.array(sorted(solved_x), dtype=int)
        starts = {int(i): _nearest(cases, plan.scale, int(i), solved) for i in pending}
        x0 = np.column_stack([solved_x[starts[int(i)]] for i in pending])
        x2, f2, s2 = engine.batch.run(x0, p[:, pending], dx, dr)
        n2 = engine.assembler.residual_norms(f2)
        x[:, pending], figures[:, pending], steps[pending], norms[pending] = x2, f2, s2, n2
        counts["batch from neighbour"] = accept(pending, lambda i: f"batch newton from case {start + starts[i]}")

    for i in [i for i in range(count) if outcomes[i] is None]:
        neighbour = _nearest(cases, plan.scale, i, np.array(sorted(solved_x), dtype=int))
        warm, label = (solved_x[neighbour], f"case {start + neighbour}") if neighbour is not None \
            else (plan.base_x, "the base")
        engine.set_case(cases[i])
        try:
            infeasible = precheck(engine.solver.model, engine.solver.p)
            if infeasible:   # no plant meets this case: say why in plant words, without a solve
                outcomes[i] = CaseOutcome(False, "infeasible specification", "pre-solve check", 0, float("nan"),
                                          "; ".join(infeasible), "", [nan] * len(names), [nan] * len(output_rows))
                counts["failed"] += 1
                continue
            solution = engine.solver.solve(warm=warm)
            solved_by = f"{solution.method} from {label}"
            if not solution.converged and "infeasible" not in solution.message.lower():
                cold = engine.solver.solve()
                if cold.converged or cold.residual_norm < solution.residual_norm:
                    solution, solved_by = cold, f"{cold.method} from the initial guess"
            column = np.asarray(engine.solver.evaluator.function(solution.x, engine.solver.p), dtype=float).ravel()
        finally:
            engine.restore_base()
        good = solution.converged
        outcomes[i] = CaseOutcome(good, solution.status, solved_by, int(solution.iterations),
                                  float(solution.residual_norm), _reason(solution), "; ".join(solution.warnings),
                                  _key_figure_values(solution, names) if good else [nan] * len(names),
                                  column[output_rows].tolist() if good else [nan] * len(output_rows))
        if good:
            solved_x[i] = np.asarray(solution.x, dtype=float).copy()
            counts["full solver"] += 1
        else:
            counts["failed"] += 1
    return ChunkResult(start, outcomes, time.perf_counter() - started, batch_seconds, counts,
                       sorted(set(notes)))


# -- executors --------------------------------------------------------------------------------

_ENGINES: dict[tuple, CompiledSweepModel] = {}


def _engine_for(source: ModelSource, paths: tuple[str, ...], library: str | None,
                iterations: int) -> CompiledSweepModel:
    key = (source.key, paths, library, iterations)
    engine = _ENGINES.get(key)
    if engine is None:
        engine = CompiledSweepModel(source, paths, iterations)
        if library is not None:
            if os.path.exists(library):
                engine.batch.use_library(library)
            else:  # another machine: build the same library from the same source
                engine.batch.compile()
        _ENGINES.clear()
        _ENGINES[key] = engine
    return engine


def _remote_chunk(source: ModelSource, paths: tuple[str, ...], library: str | None, iterations: int,
                  cases: np.ndarray, start: int, plan: ChunkPlan) -> ChunkResult:
    """A chunk solved in a worker process (spawned or Dask): the model is compiled once per process."""
    return solve_chunk(_engine_for(source, paths, library, iterations), cases, start, plan)


_FORKED: CompiledSweepModel | None = None


def _forked_chunk(cases: np.ndarray, start: int, plan: ChunkPlan) -> ChunkResult:
    """A chunk solved in a forked worker, which inherited the parent's compiled model."""
    return solve_chunk(_FORKED, cases, start, plan)


class Progress:
    """A progress bar on standard error: tqdm when installed, else a plain one of our own."""

    def __init__(self, total: int, enabled: bool, label: str = "sweep"):
        self.total, self.done, self.enabled = total, 0, enabled
        self.started = time.perf_counter()
        self._bar = None
        if enabled:
            try:
                from tqdm import tqdm
                self._bar = tqdm(total=total, desc=label, unit="case", file=sys.stderr, leave=True)
            except ImportError:
                self._bar = None
        self._last = 0.0

    def update(self, count: int) -> None:
        self.done += count
        if not self.enabled:
            return
        if self._bar is not None:
            self._bar.update(count)
            return
        now = time.perf_counter()
        if now - self._last < 0.2 and self.done < self.total:
            return
        self._last = now
        width = 30
        filled = int(width * self.done / max(self.total, 1))
        rate = self.done / max(now - self.started, 1e-9)
        sys.stderr.write(f"\r[{'#' * filled}{'.' * (width - filled)}] {self.done}/{self.total} cases, "
                         f"{rate:,.0f}/s")
        sys.stderr.flush()

    def close(self) -> None:
        if not self.enabled:
            return
        if self._bar is not None:
            self._bar.close()
        else:
            sys.stderr.write("\n")
            sys.stderr.flush()


# -- the result ------------------------------------------------------------------------------

@dataclass
class SweepResult:
    """One row per case, in case order; failed cases included.

    Attributes
    ----------
    parameters : list of Parameter
        What varied.
    inputs : numpy.ndarray
        Cases x parameters [SI].
    figure_names, figure_kinds, figure_labels : list of str
        The key figures in the rows, as `balance.analysis.key_figures.key_figures` names them.
    outputs, output_kinds : list of str
        Further columns: variables or unit figures asked for by path.
    outcomes : list of CaseOutcome
    seconds : float
        Wall time from the first chunk sent to the last row received.
    setup_seconds : float
        Compiling the model, solving the base case, compiling the batch function, starting workers.
    executor : str
    workers : int
    compiled : bool
        Whether the batch function ran compiled to C.
    counts : dict
        How many cases each stage solved, and how many failed.
    notes : list of str
    """

    parameters: list[Parameter]
    inputs: np.ndarray
    figure_names: list[str]
    figure_kinds: list[str]
    figure_labels: list[str]
    outputs: list[str]
    output_kinds: list[str]
    outcomes: list[CaseOutcome]
    seconds: float
    setup_seconds: float
    executor: str
    workers: int
    compiled: bool
    counts: dict[str, int]
    notes: list[str] = field(default_factory=list)

    def __len__(self) -> int:
        return len(self.outcomes)

    @property
    def cases_per_second(self) -> float:
        return len(self) / self.seconds if self.seconds > 0 else float("inf")

    @property
    def n_converged(self) -> int:
        return sum(o.converged for o in self.outcomes)

    def columns(self, units: str = "si") -> list[str]:
        """Column headers, each numeric one with its unit: ``feed.flow [kg/s]``."""
        return (["case"] + [f"{p.path} [{_unit(p.kind, units)}]" for p in self.parameters]
                + [f"{n} [{_unit(k, units)}]" for n, k in zip(self.figure_names, self.figure_kinds)]
                + [f"{n} [{_unit(k, units)}]" for n, k in zip(self.outputs, self.output_kinds)]
                + list(STATUS_COLUMNS))

    def rows(self, units: str = "si") -> list[list]:
        """The rows as lists of Python values: numbers in SI, or in display units with ``units='display'``."""
        in_conv = [_converter(p.kind, units) for p in self.parameters]
        fig_conv = [_converter(k, units) for k in self.figure_kinds]
        out_conv = [_converter(k, units) for k in self.output_kinds]
        out = []
        for i, o in enumerate(self.outcomes):
            out.append([i] + [f(v) for f, v in zip(in_conv, self.inputs[i].tolist())]
                       + [f(v) for f, v in zip(fig_conv, o.figures)]
                       + [f(v) for f, v in zip(out_conv, o.outputs)]
                       + [o.converged, o.status, o.solved_by, o.iterations, o.residual, o.reason, o.warnings])
        return out

    def column_arrays(self, units: str = "si") -> dict[str, list]:
        names = self.columns(units)
        rows = self.rows(units)
        return {name: [r[j] for r in rows] for j, name in enumerate(names)}

    def to_dataframe(self, units: str = "si"):
        """A pandas DataFrame (pandas is an optional extra)."""
        try:
            import pandas as pd
        except ImportError:
            raise InputError("pandas is not installed; pip install pandas", key="pandas") from None
        return pd.DataFrame(self.column_arrays(units))

    def write_csv(self, handle, units: str = "si") -> None:
        """Write the rows as CSV to an open text file.

        SI numbers are written with every digit (``repr``); numbers converted
        to display units with 12 significant digits, which hides the last-bit
        noise of the conversion. A missing number (a key figure of a failed
        case) is an empty field.
        """
        number = repr if units == "si" else (lambda v: f"{v:.12g}")
        writer = csv.writer(handle)
        writer.writerow(self.columns(units))
        for row in self.rows(units):
            writer.writerow(["" if isinstance(v, float) and math.isnan(v) else
                             number(v) if isinstance(v, float) else v for v in row])

    def write(self, path: str, units: str = "si", overwrite: bool = False) -> str:
        """Write the rows to CSV or Parquet, chosen by the file's ending; never over a file unless asked.

        In CSV a number is written with all its digits (``repr``), a missing
        one (a key figure of a failed case) as an empty field.
        """
        path = str(path)
        if os.path.exists(path) and not overwrite:
            raise InputError("exists already; choose another name or pass --overwrite", file=path)
        ending = os.path.splitext(path)[1].lower()
        if ending == ".csv":
            with open(path, "w", newline="", encoding="utf-8") as handle:
                self.write_csv(handle, units)
        elif ending in (".parquet", ".pq"):
            try:
                import pyarrow as pa
                import pyarrow.parquet as pq
            except ImportError:
                raise InputError("writing Parquet needs pyarrow; pip install pyarrow, or write .csv",
                                 file=path) from None
            pq.write_table(pa.table(self.column_arrays(units)), path)
        else:
            raise InputError(f"unknown output type {ending or '(none)'}; write .csv or .parquet", file=path)
        return path

    def summary(self) -> str:
        failed = len(self) - self.n_converged
        parts = [f"{len(self)} cases: {self.n_converged} converged, {failed} failed",
                 f"{self.seconds:.3g} s, {self.cases_per_second:,.0f} cases/s, on {self.workers} "
                 f"{'worker' if self.workers == 1 else 'workers'} ({self.executor}, "
                 f"{'compiled' if self.compiled else 'interpreted'} batch); set-up {self.setup_seconds:.2g} s",
                 "solved by: " + (", ".join(f"{k} {v}" for k, v in self.counts.items() if v) or "-")]
        return "\n".join(parts + [f"note: {n}" for n in self.notes])


def _unit(kind: str, units: str) -> str:
    from balance.quantities import KINDS, display_unit
    if kind not in KINDS:
        return "-"
    if units == "display":
        return display_unit(kind) or "-"
    return (KINDS[kind].si or "-").replace("**", "")


def _converter(kind: str, units: str) -> Callable[[float], float]:
    if units == "si":
        return lambda v: v
    if units != "display":
        raise InputError(f"unknown units {units!r}; valid: si, display", key="units")
    from balance.quantities import KINDS, convert
    if kind not in KINDS:
        return lambda v: v
    offset = convert(0.0, kind)
    factor = convert(1.0, kind) - offset
    return lambda v: v * factor + offset


# -- running a sweep --------------------------------------------------------------------------

def _decide_compile(engine: CompiledSweepModel, policy: str, n_cases: int, notes: list[str]) -> float:
    """Compile the batch function when asked, when cached, or when it pays; returns the compile seconds.

    ``auto`` compiles when the time saved on ``n_cases`` (the interpreted
    batch, timed on a few cases, is about 4x slower than the compiled one)
    exceeds the expected compile time (about 7 ms per kB of C with -O1,
    measured on 2 cores).
    """
    if policy not in COMPILE_CHOICES:
        raise InputError(f"unknown compile choice {policy!r}; valid: {', '.join(COMPILE_CHOICES)}", key="compile")
    if policy == "never":
        return 0.0
    try:
        source = engine.batch.c_source()
        if os.path.exists(engine.batch.library_path(source)):
            return engine.batch.compile(allow_build=False)
        if policy == "auto":
            if c_compiler() is None:
                notes.append("no C compiler found: the batch function runs interpreted")
                return 0.0
            trial = 8
            p = np.repeat(engine.base_p[:, None], trial, axis=1)
            x0 = np.repeat(engine.solver.guess()[:, None], trial, axis=1)
            dx, dr = engine.solver.system.scales(x0[:, 0])
            started = time.perf_counter()
            engine.batch.run(x0, p, dx, dr)
            per_case = (time.perf_counter() - started) / trial
            if n_cases * per_case * 0.75 < 7e-3 * len(source) / 1000:
                return 0.0
        return engine.batch.compile()
    except SolveError as exc:
        notes.append(f"the batch function runs interpreted: {exc.message}")
        return 0.0


def run_sweep(flowsheet, parameters: Sequence[Parameter], *, sampling: str = "grid",
              samples: int | None = None, seed: int = 0, cases: np.ndarray | None = None,
              outputs: Sequence[str] = (), key_figures: bool = True, checks: str = "screen",
              executor: str = "auto", workers: int | None = None, dask_scheduler: str | None = None,
              dask_client: Any = None, chunk_size: int = DEFAULT_CHUNK, compile: str = "auto",
              iterations: int = BATCH_ITERATIONS, progress: bool = False) -> SweepResult:
    """Solve every case of a sweep; returns one row per case.

    Parameters
    ----------
    flowsheet : str, ModelSource or Flowsheet
        A flowsheet file, or a flowsheet read from one (its present fixes and
        frees are kept), or one built in Python (then only ``executor='serial'``).
    parameters : list of Parameter
        What varies (`parse_vary`, `range_parameter`, `list_parameter`).
    sampling, samples, seed
        ``grid`` (every combination) or ``random`` (``samples`` cases).
    cases : numpy.ndarray, optional
        The cases (cases x parameters, SI), instead of sampling.
    outputs : list of str
        Further columns by path: variables (``E1.area``, ``V2.pressure``) or
        unit figures (``E2.driving_force``).
    key_figures : bool
        Include the key figures (computed per case in Python by the same
        providers as a report, about 70-90 µs a case: still the slowest
        part of a fast sweep; see docs/sweeps.md).
    checks : {'screen', 'exact'}
        How a case the batch solved is checked. ``exact``: `check_values`
        and `overall_balances` on every case. ``screen``: the same
        conditions vectorised over the chunk; a rejected case and every
        `AUDIT_EVERY`-th accepted one still go through the two functions,
        which have the last word. Key figures or not, the same checks.
    executor : {'auto', 'serial', 'processes', 'dask'}
        ``auto``: Dask when a scheduler or client is given; else local
        processes when more than one worker and more than one chunk; else serial.
    workers : int, optional
        Local worker processes (default: the number of cores).
    dask_scheduler : str, optional
        Address of a running Dask scheduler (``tcp://scheduler-host:8786``).
    dask_client : distributed.Client, optional
        An existing client, instead of an address.
    chunk_size : int
        Cases per batch call.
    compile : {'auto', 'always', 'never'}
        Compile the batch function to C (cached on disk, see `cache_dir`).
    iterations : int
        Newton steps at most per case in the batch.
    progress : bool
        Show a progress bar on standard error.

    Returns
    -------
    SweepResult

    Raises
    ------
    InputError
        For a path that is not a fixed value, a malformed range, an unknown
        executor or an unreachable Dask scheduler.
    """
    from balance.flowsheet.graph import Flowsheet
    setup_started = time.perf_counter()
    notes: list[str] = []
    if executor not in EXECUTORS:
        raise InputError(f"unknown executor {executor!r}; valid: {', '.join(EXECUTORS)}", key="executor")
    if checks not in CHECKS:
        raise InputError(f"unknown checks {checks!r}; valid: {', '.join(CHECKS)}", key="checks")
    if isinstance(flowsheet, Flowsheet):
        fs = flowsheet
        try:
            source: ModelSource | None = ModelSource.from_flowsheet(fs)
        except InputError:
            source = None
    elif isinstance(flowsheet, ModelSource):
        source, fs = flowsheet, flowsheet.flowsheet()
    else:
        source = ModelSource.from_file(flowsheet)
        fs = source.flowsheet()
    if cases is None:
        cases = make_cases(parameters, sampling, samples, seed)
    cases = np.atleast_2d(np.asarray(cases, dtype=float))
    if cases.shape[1] != len(parameters):
        raise InputError(f"the cases have {cases.shape[1]} columns for {len(parameters)} parameters", key="cases")
    if not np.all(np.isfinite(cases)):
        raise InputError("the cases contain a value that is not a finite number", key="cases")
    if not isinstance(chunk_size, int) or isinstance(chunk_size, bool) or chunk_size < 1:
        raise InputError(f"the chunk size must be a whole number of at least 1, got {chunk_size!r}",
                         key="chunk_size")
    paths = tuple(p.path for p in parameters)
    n_cases = cases.shape[0]
    if executor == "auto":
        if dask_scheduler or dask_client is not None:
            executor = "dask"
        else:
            workers = workers or os.cpu_count() or 1
            executor = "processes" if workers > 1 and n_cases > chunk_size and source is not None else "serial"
    if executor in ("processes", "dask") and source is None:
        raise InputError("this flowsheet was built in Python, not read from a file, so it cannot be sent to "
                         "worker processes; use executor='serial'", key="executor")
    workers = 1 if executor == "serial" else (workers or os.cpu_count() or 1)

    engine = CompiledSweepModel(source if source is not None else fs, paths, iterations)
    outputs = tuple(outputs)
    output_kinds = engine.output_kinds(outputs)
    base = engine.solver.solve()
    if base.converged:
        base_x = np.asarray(base.x, dtype=float)
    else:
        notes.append(f"the flowsheet's own values did not solve ({base.status}); the batch starts from the "
                     f"initial guess")
        base_x = engine.solver.guess()
    names: tuple[str, ...] = ()
    kinds, labels = [], []
    if key_figures:
        from balance.analysis.key_figures import key_figures as all_key_figures
        reference = all_key_figures(base)
        names = tuple(reference)
        kinds = [reference[n].kind for n in names]
        labels = [reference[n].label for n in names]
    compile_seconds = _decide_compile(engine, compile, n_cases, notes)
    library = engine.batch.compiled_library
    span = np.ptp(cases, axis=0)
    plan = ChunkPlan(base_x, np.where(span > 0, span, 1.0), names, outputs, checks)
    chunks = [(start, cases[start:start + chunk_size]) for start in range(0, n_cases, chunk_size)]

    outcomes: list[CaseOutcome | None] = [None] * n_cases
    counts: dict[str, int] = {}
    bar = Progress(n_cases, progress)

    def collect(result: ChunkResult) -> None:
        for j, outcome in enumerate(result.outcomes):
            outcomes[result.start + j] = outcome
        for k, v in result.counts.items():
            counts[k] = counts.get(k, 0) + v
        for note in result.notes:
            if note not in notes:
                notes.append(note)
        bar.update(len(result.outcomes))

    global _FORKED
    try:
        if executor == "serial":
            setup = time.perf_counter() - setup_started
            started = time.perf_counter()
            for start, chunk in chunks:
                collect(solve_chunk(engine, chunk, start, plan))
        elif executor == "processes":
            import concurrent.futures as cf
            import multiprocessing as mp
            if "fork" in mp.get_all_start_methods():
                # the workers inherit the compiled model, the base solution and the loaded library
                _FORKED = engine
                engine.predicted(base_x, cases[:1])
                pool = cf.ProcessPoolExecutor(max_workers=workers, mp_context=mp.get_context("fork"))
                setup = time.perf_counter() - setup_started
                started = time.perf_counter()
                futures = [pool.submit(_forked_chunk, chunk, start, plan) for start, chunk in chunks]
            else:
                pool = cf.ProcessPoolExecutor(max_workers=workers, mp_context=mp.get_context("spawn"))
                setup = time.perf_counter() - setup_started
                started = time.perf_counter()
                futures = [pool.submit(_remote_chunk, source, paths, library, iterations, chunk, start, plan)
                           for start, chunk in chunks]
            try:
                for future in cf.as_completed(futures):
                    collect(future.result())
            finally:
                pool.shutdown(wait=True, cancel_futures=True)
        else:
            client, own = _dask_client(dask_scheduler, dask_client)
            try:
                workers = max(len(client.scheduler_info().get("workers", {})), 1)
                setup = time.perf_counter() - setup_started
                started = time.perf_counter()
                futures = [client.submit(_remote_chunk, source, paths, library, iterations, chunk, start, plan,
                                         pure=False) for start, chunk in chunks]
                from distributed import as_completed
                for future in as_completed(futures):
                    collect(future.result())
            finally:
                if own:
                    client.close()
    finally:
        _FORKED = None
        bar.close()
    seconds = time.perf_counter() - started
    if compile_seconds:
        notes.append(f"compiled the batch function in {compile_seconds:.1f} s (cached for later sweeps)")
    return SweepResult(list(parameters), cases, list(names), kinds, labels, list(outputs), output_kinds,
                       outcomes, seconds, setup, executor, workers, library is not None, counts, notes)


def _dask_client(address: str | None, client: Any):
    if client is not None:
        return client, False
    try:
        from distributed import Client
    except ImportError:
        raise InputError("running on a Dask cluster needs dask.distributed; pip install 'dask[distributed]'",
                         key="--dask-scheduler") from None
    try:
        return Client(address, timeout="5s"), True
    except (OSError, TimeoutError) as exc:
        raise InputError(f"cannot reach the Dask scheduler: {exc}", key="--dask-scheduler") from None


# -- the sweep file --------------------------------------------------------------------------

@dataclass
class SweepSpec:
    """A sweep as read from a sweep file: the flowsheet and what varies."""

    flowsheet: str
    source: ModelSource
    parameters: list[Parameter]
    sampling: str = "grid"
    samples: int | None = None
    seed: int = 0


def load_sweep(path: str | os.PathLike) -> SweepSpec:
    """Read a sweep file (see the module docstring)."""
    from balance.flowsheet.file_format import read_toml
    file = str(path)
    return sweep_from_dict(read_toml(file), file)


def is_sweep_file(path: str | os.PathLike) -> bool:
    """Whether a TOML file is a sweep file (has a [sweep] table) rather than a flowsheet."""
    try:
        import tomllib
    except ModuleNotFoundError:  # Python < 3.11
        import tomli as tomllib
    try:
        with open(path, "rb") as handle:
            return "sweep" in tomllib.load(handle)
    except (OSError, tomllib.TOMLDecodeError):
        return False


def sweep_from_dict(data: dict, file: str | None = None) -> SweepSpec:
    sweep = data.get("sweep")
    if not isinstance(sweep, dict):
        raise InputError("a sweep file needs a [sweep] table", file=file, key="sweep")
    extra = set(data) - {"sweep"}
    if extra:
        raise InputError(f"unknown section [{sorted(extra)[0]}] in a sweep file; it holds only [sweep]",
                         file=file, key=sorted(extra)[0])
    allowed = {"flowsheet", "sampling", "samples", "seed", "vary", "fix", "free"}
    for key in sweep:
        if key not in allowed:
            raise InputError(f"unknown key in [sweep]; keys: {', '.join(sorted(allowed))}", file=file,
                             key=f"sweep.{key}")
    if not isinstance(sweep.get("flowsheet"), str):
        raise InputError("name the flowsheet file: flowsheet = \"...\"", file=file, key="sweep.flowsheet")
    folder = os.path.dirname(os.path.abspath(file)) if file else os.getcwd()
    fs_path = sweep["flowsheet"]
    if not os.path.isabs(fs_path):
        fs_path = os.path.normpath(os.path.join(folder, fs_path))
    plain = ModelSource.from_file(fs_path)
    fs = plain.flowsheet()
    fixed = {}
    fix = sweep.get("fix", {})
    if not isinstance(fix, dict):
        raise InputError("expected a table of PATH = VALUE", file=file, key="sweep.fix")
    for path, value in fix.items():
        fixed[path] = _parse_value(fs, path, value, f"sweep.fix.{path}")
    free = sweep.get("free", [])
    if not isinstance(free, list) or not all(isinstance(p, str) for p in free):
        raise InputError("expected a list of variable names", file=file, key="sweep.free")
    source = ModelSource(plain.text, plain.file, tuple(sorted(fixed.items())), tuple(sorted(free)))
    fs = source.flowsheet()
    vary = sweep.get("vary")
    if not isinstance(vary, dict) or not vary:
        raise InputError("nothing varies: add a [sweep.vary] table", file=file, key="sweep.vary")
    parameters = [parameter_from_table(fs, path, table, file) for path, table in vary.items()]
    sampling = sweep.get("sampling", "grid")
    if sampling not in SAMPLINGS:
        raise InputError(f"unknown sampling {sampling!r}; valid: {', '.join(SAMPLINGS)}", file=file,
                         key="sweep.sampling")
    samples = sweep.get("samples")
    if sampling == "random" and (not isinstance(samples, int) or isinstance(samples, bool) or samples < 1):
        raise InputError("random sampling needs samples = N (a whole number of at least 1)", file=file,
                         key="sweep.samples")
    seed = sweep.get("seed", 0)
    if not isinstance(seed, int) or isinstance(seed, bool):
        raise InputError("seed must be a whole number", file=file, key="sweep.seed")
    return SweepSpec(fs_path, source, parameters, sampling, samples, seed)
