"""The result of a solve: a typed object with fixed fields, never an open dict.

`Solution.converged` is True only when the equations were solved *and* the
solution passed every check (residual, signs, bounds, driving forces, overall
balances). A failed solve still carries its numbers, for diagnosis, but
``converged`` is False and `Solution.raise_if_failed` raises.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from balance.errors import SolveError


@dataclass
class StreamResult:
    """One stream at the solution (SI)."""

    name: str
    kind: str
    source: str
    target: str
    values: dict[str, float]
    specific_enthalpy: float
    enthalpy_flow: float
    water_flow: float
    solids_flow: float
    dry_air_flow: float
    liquor: str | None = None


@dataclass
class UnitResult:
    """One unit at the solution: its quantities and reported figures (SI), with their kinds."""

    name: str
    type_name: str
    quantities: dict[str, float]
    figures: dict[str, float]
    kinds: dict[str, str]
    fixed: set[str] = field(default_factory=set)


@dataclass
class Balance:
    """Overall balance over the flowsheet boundary (kg/s or W)."""

    name: str
    into: float
    out_of: float
    closure: float  # (in - out) / max(in, out), signed

    @property
    def closes(self) -> bool:
        return abs(self.closure) < 1e-6


@dataclass
class Solution:
    """A solved (or failed) flowsheet.

    Attributes
    ----------
    converged : bool
        Solved and passed every check.
    status : str
        ``converged``, ``not converged`` or ``checks failed``.
    method : str
        The method that produced the numbers (``newton``, ``ipopt``, ...).
    iterations : int
    residual_norm : float
        Largest scaled residual at the returned point.
    seconds : float
        Wall time of the numerical solve.
    message : str
    streams, units : dict
    balances : dict of Balance
    warnings : list of str
        Range warnings and other notes that do not invalidate the result.
    problems : list of str
        Failed checks (empty when converged).
    worst_equations : list of (str, float)
        The largest scaled residuals with their labels.
    values : dict
        Every variable path -> value (SI).
    attempts : list of str
        The methods tried, in order, with how each ended.
    diagnosis : list of str
        For a failed solve: largest residuals by unit, values pressed against
        their bounds, and likely causes in plant words.
    """

    model: Any
    converged: bool
    status: str
    method: str
    iterations: int
    residual_norm: float
    seconds: float
    message: str
    streams: dict[str, StreamResult]
    units: dict[str, UnitResult]
    balances: dict[str, Balance]
    warnings: list[str]
    problems: list[str]
    worst_equations: list[tuple[str, float]]
    values: dict[str, float]
    x: Any = None
    attempts: list[str] = field(default_factory=list)
    diagnosis: list[str] = field(default_factory=list)

    @property
    def flowsheet(self):
        return self.model.flowsheet

    def value(self, path: str) -> float:
        """The value of a variable by path (``E1.area``, ``feed.flow``, ``S3.temperature``)."""
        from balance.equations.model import resolve_path
        return self.values[resolve_path(self.flowsheet, path)]

    def raise_if_failed(self) -> "Solution":
        if not self.converged:
            detail = "; ".join(self.problems[:6]) or self.message
            worst = ", ".join(f"{label} ({value:.2g})" for label, value in self.worst_equations[:3])
            raise SolveError(f"{self.status}: {detail}" + (f"; largest residuals: {worst}" if worst else ""),
                             file=self.flowsheet.file)
        return self

    def __repr__(self) -> str:
        return (f"Solution({self.status}, method={self.method}, iterations={self.iterations}, "
                f"residual={self.residual_norm:.1e})")
