"""Solving g(x, p) = 0: damped Newton first, IPOPT with bounds when Newton fails.

Unknowns are scaled by their magnitude in the initial guess and residuals
by the kind of balance they express (mass, energy, temperature, ...), so
one tolerance serves every equation. Newton's step comes from one CasADi
call that evaluates the residual and the sparse Jacobian and solves the
linear system; a backtracking line search on the residual norm keeps the
iterates within the variables' physical bounds.

A solver's own success flag is never trusted: `NewtonSolver.solve` reports
the residual it measured itself, and the result checks run afterwards.
"""

from __future__ import annotations

import time
from dataclasses import dataclass, field

import casadi as ca
import numpy as np

TOLERANCE = 1e-9
MAX_ITERATIONS = 60
#: Iterations a watchdog step may take to beat the residual norm it started from.
WATCHDOG_ITERATIONS = 4


@dataclass
class RawSolution:
    """What a numerical method returns, before the result checks."""

    x: np.ndarray
    converged: bool
    method: str
    iterations: int
    residual_norm: float
    seconds: float
    message: str = ""
    history: list[float] = field(default_factory=list)


class CompiledSystem:
    """CasADi functions of one model in scaled variables.

    ``residual(xs, p, dx, dr)`` returns the scaled residual; ``step(...)``
    returns the scaled residual and the Newton step. ``dx`` and ``dr`` are
    the variable and residual scales, passed as inputs so that one compiled
    function serves every solve of the same model.
    """

    def __init__(self, model):
        self.model = model
        g = model.g
        if hasattr(ca, "cse") and g.numel():
            g = ca.cse(g)
        self.g_function = ca.Function("g", [model.x, model.p], [g])
        n, m, n_g = model.n_unknowns, model.p.numel(), model.n_equations
        # residual and sparse Jacobian in SX (fast, compact); only the linear solve is MX
        xs_sx, p_sx = ca.SX.sym("xs", n), ca.SX.sym("p", m)
        dx_sx, dr_sx = ca.SX.sym("dx", n), ca.SX.sym("dr", n_g)
        gs_sx = self.g_function(xs_sx * dx_sx, p_sx) / dr_sx
        jac_sx = ca.jacobian(gs_sx, xs_sx)
        self.residual = ca.Function("residual", [xs_sx, p_sx, dx_sx, dr_sx], [gs_sx])
        self.jacobian = ca.Function("jacobian", [xs_sx, p_sx, dx_sx, dr_sx], [jac_sx])
        residual_and_jacobian = ca.Function("residual_and_jacobian", [xs_sx, p_sx, dx_sx, dr_sx],
                                            [gs_sx, jac_sx])
        xs, p = ca.MX.sym("xs", n), ca.MX.sym("p", m)
        dx, dr = ca.MX.sym("dx", n), ca.MX.sym("dr", n_g)
        gs, jac = residual_and_jacobian(xs, p, dx, dr)
        self.step = ca.Function("newton_step", [xs, p, dx, dr], [gs, -ca.solve(jac, gs, "csparse")])
        self._xs, self._p, self._dx, self._dr, self._gs = xs_sx, p_sx, dx_sx, dr_sx, gs_sx
        self._ipopt = None
        self.lower = np.array([v.lower for v in model.unknowns], dtype=float)
        self.upper = np.array([v.upper for v in model.unknowns], dtype=float)

    def scales(self, x0: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        nominal = np.array([v.nominal for v in self.model.unknowns], dtype=float)
        dx = np.maximum(np.abs(x0), 1e-3 * nominal)
        dx = np.where(dx > 0, dx, 1.0)
        return dx, np.asarray(self.model.residual_scale, dtype=float)

    def ipopt(self):
        if self._ipopt is None:
            nlp = {"x": self._xs, "p": ca.vertcat(self._p, self._dx, self._dr), "f": 0, "g": self._gs}
            opts = {"ipopt.print_level": 0, "print_time": False, "ipopt.sb": "yes",
                    "ipopt.max_iter": 500, "ipopt.tol": 1e-10, "ipopt.constr_viol_tol": 1e-10}
            self._ipopt = ca.nlpsol("feasibility", "ipopt", nlp, opts)
        return self._ipopt


#: Iterations a watchdog step may take to beat the merit it started from.
WATCHDOG_ITERATIONS = 4


def newton(system: CompiledSystem, x0: np.ndarray, p: np.ndarray, *, tol: float = TOLERANCE,
           max_iter: int = MAX_ITERATIONS) -> RawSolution:
    """Damped Newton with a watchdog line search and projection onto the bounds.

    A full Newton step that raises the residual norm is still taken once
    (the watchdog), because near a solution the norm of mixed residuals can
    rise for a step while the iterate gets much closer: a steam pressure
    moved by 10 % leaves the saturation equation's linearisation off by a
    tenth of a kelvin. If the next `WATCHDOG_ITERATIONS` iterations do not
    beat the norm the watchdog started from, Newton returns to that point
    and backtracks (halving the step until the norm falls) as usual.
    Reference: Chamberlain, Powell, Lemarechal and Pedersen, "The watchdog
    technique for forcing convergence in algorithms for constrained
    optimization", Math. Programming Study 16 (1982) 1-17.
    """
    start = time.perf_counter()
    dx, dr = system.scales(x0)
    lo, hi = system.lower / dx, system.upper / dx
    xs = np.clip(x0 / dx, lo, hi)
    history: list[float] = []
    message = ""
    watchdog = None            # [point, merit, step, iterations left] while a watchdog step is on trial
    watchdog_allowed = True
    watchdog_failures = 0      # after two failed watchdog steps the line search stays monotone
    previous = None            # the last accepted point, to step back to from a singular Jacobian
    for iteration in range(max_iter + 1):
        gs = step = None
        for _retreat in range(6):
            try:
                gs, step = (np.asarray(v, dtype=float).ravel() for v in system.step(xs, p, dx, dr))
                message = ""
                break
            except RuntimeError as exc:  # CasADi's sparse solve on a numerically singular Jacobian
                message = f"the Jacobian is singular at the current point ({str(exc).splitlines()[0][:120]})"
                if previous is None or watchdog is not None:
                    break
                xs = previous + 0.5 * (xs - previous)     # step back halfway towards the last good point
        norm = float(np.max(np.abs(gs))) if gs is not None and gs.size else (0.0 if gs is not None else np.inf)
        history.append(norm)
        if norm < tol:
            return RawSolution(xs * dx, True, "newton", iteration, norm, time.perf_counter() - start,
                               "converged", history)
        ok = gs is not None and np.isfinite(norm) and bool(np.all(np.isfinite(step)))
        merit = float(gs @ gs) if ok else np.inf
        if watchdog is not None:
            if ok and merit <= (1 - 1e-4) * watchdog[1]:
                watchdog = None                                   # the watchdog step paid off
            elif not ok or watchdog[3] <= 1:
                xs, merit, step, _ = watchdog                     # back to where it started
                watchdog, watchdog_allowed, ok, message = None, False, True, ""
                watchdog_failures += 1
            else:
                watchdog[3] -= 1
        if not ok:
            if not message:
                message = ("the residual is not finite (a property was evaluated outside its domain)"
                           if not np.isfinite(norm) else "the Jacobian is singular at the current point")
            break
        if iteration == max_iter:
            message = f"no convergence in {max_iter} iterations"
            break
        alpha, accepted, full = 1.0, False, None
        while alpha > 1e-6:
            trial = np.clip(xs + alpha * step, lo, hi)
            g_trial = np.asarray(system.residual(trial, p, dx, dr), dtype=float).ravel()
            m_trial = float(g_trial @ g_trial)
            if np.isfinite(m_trial) and m_trial <= (1 - 1e-4 * alpha) * merit:
                accepted = True
                break
            if alpha == 1.0 and np.isfinite(m_trial):
                full = trial
            alpha *= 0.5
        if alpha < 1.0 and full is not None and watchdog is None and watchdog_allowed:
            watchdog = [xs, merit, step, WATCHDOG_ITERATIONS]
            trial, accepted = full, True
        if not accepted:
            message = "the line search found no step that reduces the residual"
            break
        if watchdog is None:
            watchdog_allowed = watchdog_failures < 2
        previous = xs
        xs = trial
    return RawSolution(xs * dx, False, "newton", len(history) - 1, history[-1] if history else np.inf,
                       time.perf_counter() - start, message, history)


def bounded_feasibility(system: CompiledSystem, x0: np.ndarray, p: np.ndarray) -> RawSolution:
    """Solve g = 0 as a feasibility problem in IPOPT, within the variables' bounds."""
    start = time.perf_counter()
    dx, dr = system.scales(x0)
    lo, hi = system.lower / dx, system.upper / dx
    solver = system.ipopt()
    try:
        sol = solver(x0=np.clip(x0 / dx, lo, hi), p=np.concatenate([p, dx, dr]), lbx=lo, ubx=hi, lbg=0, ubg=0)
    except RuntimeError as exc:
        return RawSolution(x0, False, "ipopt", 0, np.inf, time.perf_counter() - start, str(exc))
    xs = np.asarray(sol["x"], dtype=float).ravel()
    gs = np.asarray(system.residual(xs, p, dx, dr), dtype=float).ravel()
    norm = float(np.max(np.abs(gs))) if gs.size else 0.0
    stats = solver.stats()
    return RawSolution(xs * dx, bool(np.isfinite(norm) and norm < 1e-7), "ipopt",
                       int(stats.get("iter_count", 0)), norm, time.perf_counter() - start,
                       str(stats.get("return_status", "")))
