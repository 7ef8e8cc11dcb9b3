"""Solving a compiled flowsheet: initial guess, Newton, bounded fallback, checked result.

`solve` is the one entry point. ``method`` chooses from `METHODS`:
``auto`` (Newton, then IPOPT with bounds, then Newton from IPOPT's point),
``newton`` or ``ipopt``.
"""

from balance.solve.solver import METHODS, Solver, solve

__all__ = ["METHODS", "Solver", "solve"]
