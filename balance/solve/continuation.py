"""Continuation: when Newton fails from the initial guess, solve an easier problem and walk to the real one.

Three homotopies, tried in this order by `continuation_solve` (each one a
named strategy in `STRATEGIES`, so a caller can choose):

``boiling-point rise``
    Every liquor's boiling-point rise is multiplied by a parameter
    lambda. At lambda = 0 the liquor boils like water, which is the
    problem the automatic initial guess is built for; lambda is then moved
    to 1 in adaptive steps, each a warm-started Newton solve. The homotopy
    model is compiled from the same flowsheet with each liquor's
    boiling-point-rise correlation wrapped as ``lambda * f(x, T, p)``;
    lambda is appended to the parameters, so the unknowns are the same, in
    the same order, as in the real model. Nothing in the unit operations
    or the liquor models changes.
``concentration``
    The fixed solids fractions of the liquor products are first set a
    quarter of the way from the feed solids to the asked value, solved from
    a fresh initial guess, then raised to the asked value in adaptive
    steps (`Solver.set` and warm starts). A weak product boils close to
    water, with small boiling-point rises and evaporation.
``residual``
    Newton homotopy on the residual itself, H(x, t) = g(x) - (1 - t) g(x0):
    x0 solves it at t = 0 and the real problem is t = 1. It needs nothing
    from the plant and is the last resort.

Every step is a damped Newton solve from the previous point (with a
secant predictor); a step that fails is halved, down to 1/512 of the path;
a quick success doubles the next step. The end point is polished by Newton
on the real model, so whatever a strategy returns has passed the same
convergence test as a plain solve.

Reference: E. L. Allgower and K. Georg, *Introduction to Numerical
Continuation Methods*, SIAM Classics 45 (2003), ch. 1-2 (embedding, natural
parameter continuation, predictor-corrector).
"""

from __future__ import annotations

import functools
import time
import weakref
from dataclasses import dataclass, field, replace
from typing import Callable

import casadi as ca
import numpy as np

from balance.equations.model import Model, Variable, compile_flowsheet
from balance.solve.newton import CompiledSystem, RawSolution, newton

#: Smallest step of a homotopy path, as a share of the whole path.
MIN_STEP = 1.0 / 512
#: Newton iterations allowed for one continuation step.
STEP_ITERATIONS = 30
#: Where the concentration homotopy starts, as a share of the way from feed to product solids.
CONCENTRATION_START = 0.25


@dataclass
class ContinuationResult:
    """What `continuation_solve` returns: the final raw solution and a record of each strategy tried."""

    raw: RawSolution | None
    attempts: list[str] = field(default_factory=list)

    @property
    def converged(self) -> bool:
        return self.raw is not None and self.raw.converged


def track(solve_step: Callable[[float, np.ndarray], RawSolution], x_start: np.ndarray, *,
          first_step: float = 0.25, min_step: float = MIN_STEP) -> tuple[np.ndarray | None, int, str]:
    """Follow a homotopy path from t = 0 (solved by ``x_start``) to t = 1.

    Parameters
    ----------
    solve_step : callable
        ``solve_step(t, x_guess) -> RawSolution`` solves the problem at ``t``.
    x_start : numpy.ndarray
        A solution at t = 0.
    first_step, min_step : float
        First and smallest step in t.

    Returns
    -------
    x : numpy.ndarray or None
        The solution at t = 1, or None when the path could not be followed.
    steps : int
        Solves made.
    message : str
    """
    t, x, x_prev, h_prev = 0.0, np.asarray(x_start, dtype=float), None, None
    h = first_step
    steps = 0
    while t < 1.0:
        t_new = min(1.0, t + h)
        guess = x if x_prev is None else x + (x - x_prev) * ((t_new - t) / h_prev)
        raw = solve_step(t_new, guess)
        steps += 1
        if not raw.converged and x_prev is not None:
            raw = solve_step(t_new, x)      # without the predictor
            steps += 1
        if raw.converged:
            x_prev, h_prev = x, t_new - t
            t, x = t_new, raw.x
            if raw.iterations <= 4:
                h = min(2.0 * h, 0.5)
        else:
            h *= 0.5
            if h < min_step:
                return None, steps, f"stalled at {t:.4f} of the way ({raw.message})"
    return x, steps, "reached the asked problem"


# -- boiling-point rise ------------------------------------------------------------------------------


def _scaled_bpr(model_function, scale):
    @functools.wraps(model_function)
    def scaled(x, T_water, p, **coefficients):
        return scale * model_function(x, T_water, p, **coefficients)
    return scaled


def bpr_homotopy_model(model: Model) -> Model:
    """The model of the same flowsheet with every boiling-point rise multiplied by a parameter
    ``homotopy.bpr_scale`` (last in `Model.parameters`, fixed at 1)."""
    fs = model.flowsheet
    scale = ca.SX.sym("homotopy.bpr_scale")
    saved = dict(fs.liquors)
    try:
        for name, liquor in saved.items():
            fs.liquors[name] = replace(liquor, bpr_model=_scaled_bpr(liquor.bpr_model, scale))
        raw = compile_flowsheet(fs, require_square=False)
    finally:
        fs.liquors.clear()
        fs.liquors.update(saved)
    # carry the real model's fixed values (they may have been changed with Solver.set)
    fixed = {v.path: v.fixed for v in model.variables}
    for v in raw.variables:
        v.fixed = fixed.get(v.path, v.fixed)
    variables = raw.variables + [Variable("homotopy.bpr_scale", "homotopy", "bpr_scale", "ratio", 0.0, 1.0, 1.0,
                                          scale, fixed=1.0)]
    return Model(fs, variables, raw.equations, raw.states, raw.range_checks, raw.reports, raw.external_power,
                 reference_flow=model.reference_flow)


_HOMOTOPY_SYSTEMS: "weakref.WeakKeyDictionary[CompiledSystem, CompiledSystem]" = weakref.WeakKeyDictionary()


def _by_bpr(system: CompiledSystem, x0: np.ndarray, p: np.ndarray) -> tuple[np.ndarray | None, str]:
    model = system.model
    if not any(s.liquor is not None for s in model.states.values()):
        return None, "no liquor, so no boiling-point rise to scale"
    h_system = _HOMOTOPY_SYSTEMS.get(system)
    if h_system is None:
        h_model = bpr_homotopy_model(model)
        if [v.path for v in h_model.unknowns] != [v.path for v in model.unknowns]:
            return None, "the homotopy model does not match the real one"
        h_system = CompiledSystem(h_model)
        _HOMOTOPY_SYSTEMS[system] = h_system

    def at(t, x):
        return newton(h_system, x, np.concatenate([p, [t]]), max_iter=STEP_ITERATIONS)

    start = at(0.0, x0)
    if not start.converged:
        return None, f"no solution without boiling-point rise either ({start.message})"
    x, steps, message = track(at, start.x)
    return x, f"{message} in {steps} steps"


# -- concentration -----------------------------------------------------------------------------------


def _product_solids(model: Model) -> list[tuple[int, float, float]]:
    """(parameter index, feed solids, asked solids) of every fixed product solids fraction."""
    fs = model.flowsheet
    feeds = [s for s in fs.streams if s.kind == "liquor" and fs.unit(s.source).boundary == "source"]
    feed_solids = [model.by_path[f"{s.name}.solids"].fixed for s in feeds]
    feed_solids = [x for x in feed_solids if x is not None]
    if not feed_solids:
        return []
    x_feed = max(feed_solids)
    out = []
    for i, v in enumerate(model.parameters):
        if v.is_stream and v.name == "solids":
            stream = fs.stream(v.owner)
            if fs.unit(stream.target).boundary == "sink" and v.fixed > x_feed:
                out.append((i, x_feed, v.fixed))
    return out


def _by_concentration(system: CompiledSystem, x0, p, guess: Callable[[np.ndarray], np.ndarray] | None):
    targets = _product_solids(system.model)
    if not targets:
        return None, "no fixed product solids above the feed solids"
    params = system.model.parameters

    def p_at(t):
        q = p.copy()
        for i, x_feed, x_asked in targets:
            q[i] = x_feed + (CONCENTRATION_START + (1.0 - CONCENTRATION_START) * t) * (x_asked - x_feed)
        return q

    q0 = p_at(0.0)
    if guess is not None:
        saved = [params[i].fixed for i, _, _ in targets]
        for i, _, _ in targets:
            params[i].fixed = float(q0[i])
        try:
            x_start = guess(q0)
        finally:
            for (i, _, _), value in zip(targets, saved):
                params[i].fixed = value
    else:
        x_start = x0
    start = newton(system, x_start, q0)
    if not start.converged:
        return None, f"no solution at the weaker product either ({start.message})"
    x, steps, message = track(lambda t, x: newton(system, x, p_at(t), max_iter=STEP_ITERATIONS), start.x)
    return x, f"{message} in {steps} steps"


# -- residual ------------------------------------------------------------------------------------------


def _by_residual(system: CompiledSystem, x0, p):
    model = system.model
    n = model.n_unknowns
    xs = ca.MX.sym("xs", n)
    pp = ca.MX.sym("p", model.p.numel())
    dx = ca.MX.sym("dx", n)
    dr = ca.MX.sym("dr", model.n_equations)
    r0 = ca.MX.sym("r0", model.n_equations)
    t = ca.MX.sym("t")
    h = system.g_function(xs * dx, pp) / dr - (1 - t) * r0
    step = -ca.solve(ca.jacobian(h, xs), h, "csparse")
    h_step = ca.Function("homotopy_step", [xs, pp, dx, dr, r0, t], [h, step])
    h_res = ca.Function("homotopy_residual", [xs, pp, dx, dr, r0, t], [h])
    d_x, d_r = system.scales(x0)
    lo, hi = system.lower / d_x, system.upper / d_x
    xs0 = np.clip(x0 / d_x, lo, hi)
    res0 = np.asarray(system.residual(xs0, p, d_x, d_r), dtype=float).ravel()
    if not np.all(np.isfinite(res0)):
        return None, "the residual is not finite at the starting point"

    class _Shim:
        """A CompiledSystem look-alike for `newton` at one value of t."""

        def __init__(self, t_value):
            self.t = t_value
            self.lower, self.upper = system.lower, system.upper

        def scales(self, _x):
            return d_x, d_r

        def step(self, x_s, q, a, b):
            return h_step(x_s, q, a, b, res0, self.t)

        def residual(self, x_s, q, a, b):
            return h_res(x_s, q, a, b, res0, self.t)

    x, steps, message = track(lambda tt, x: newton(_Shim(tt), x, p, max_iter=STEP_ITERATIONS), xs0 * d_x)
    return x, f"{message} in {steps} steps"


#: name -> function(system, x0, p, guess) -> (x at the asked problem or None, message)
STRATEGIES: dict[str, Callable] = {
    "boiling-point rise": lambda system, x0, p, guess: _by_bpr(system, x0, p),
    "concentration": _by_concentration,
    "residual": lambda system, x0, p, guess: _by_residual(system, x0, p),
}


def continuation_solve(system: CompiledSystem, x0: np.ndarray, p: np.ndarray, *,
                       strategies: tuple[str, ...] | None = None,
                       guess: Callable[[np.ndarray], np.ndarray] | None = None) -> ContinuationResult:
    """Try each continuation strategy in turn until one reaches the asked problem.

    Parameters
    ----------
    system : CompiledSystem
        The real model's compiled functions.
    x0 : numpy.ndarray
        Starting point (the initial guess).
    p : numpy.ndarray
        The asked fixed values.
    strategies : tuple of str, optional
        Names from `STRATEGIES`, in the order to try (default: all, in order).
    guess : callable, optional
        ``guess(p) -> x``: a fresh initial guess for other fixed values (used by
        the concentration strategy).

    Returns
    -------
    ContinuationResult
        ``raw.method`` is ``"continuation (<strategy>)"``; ``attempts`` has one line per strategy.

    Examples
    --------
    >>> result = continuation_solve(solver.system, solver.guess(), solver.p)   # doctest: +SKIP
    >>> result.converged                                                       # doctest: +SKIP
    True
    """
    names = strategies or tuple(STRATEGIES)
    for name in names:
        if name not in STRATEGIES:
            from balance.errors import InputError
            raise InputError(f"unknown continuation {name!r}; valid: {', '.join(STRATEGIES)}", key="continuation")
    out = ContinuationResult(None)
    for name in names:
        started = time.perf_counter()
        try:
            x, message = STRATEGIES[name](system, np.asarray(x0, dtype=float), np.asarray(p, dtype=float), guess)
        except RuntimeError as exc:      # CasADi: a singular sparse factorisation on the way
            x = None
            message = ("failed: the Jacobian became singular on the way" if "singular" in str(exc)
                       else f"failed: {str(exc).splitlines()[0][:120]}")
        except (ValueError, ZeroDivisionError) as exc:
            x, message = None, f"failed: {exc}"
        if x is not None:
            polished = newton(system, x, p)
            polished.seconds = time.perf_counter() - started
            if polished.converged:
                polished.method = f"continuation ({name})"
                polished.message = f"converged by continuation on the {name}"
                out.attempts.append(f"continuation on the {name}: {message}; converged "
                                    f"({polished.residual_norm:.1e})")
                out.raw = polished
                return out
            message += f"; the end point did not polish ({polished.message})"
            if out.raw is None or polished.residual_norm < out.raw.residual_norm:
                out.raw = polished
        out.attempts.append(f"continuation on the {name}: {message}")
    return out


__all__ = ["ContinuationResult", "STRATEGIES", "bpr_homotopy_model", "continuation_solve", "track"]
