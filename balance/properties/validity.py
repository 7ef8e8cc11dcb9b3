"""Validity ranges of correlations, declared once as data and enforced.

A correlation function is decorated with `valid_for`, naming each input's
range in SI units. The ranges are kept on the function as data
(``func.validity``). Symbolic equations cannot be checked while they are
built, so every place that uses a correlation registers a `RangeCheck`; the
solver evaluates them on the numbers (the initial guess and the solution) and
turns any violation into a recorded warning or, under the strict policy, an
`~balance.errors.OutOfRangeError`.
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass, field
from typing import Any, Callable

from balance.errors import OutOfRangeError


@dataclass(frozen=True)
class ValidRange:
    """The interval in which one input of a correlation is valid.

    Parameters
    ----------
    name : str
        The input's name, as in the function signature.
    low, high : float
        Bounds in SI units (inclusive).
    unit : str
        SI unit of the bounds, for messages.
    """

    name: str
    low: float
    high: float
    unit: str = "-"

    def contains(self, value: float, rel_tol: float = 1e-9) -> bool:
        """True if ``value`` lies inside the range (with a small tolerance)."""
        span = self.high - self.low
        span = max(abs(span), 1.0) if math.isfinite(span) else max(abs(self.low), abs(self.high) if math.isfinite(self.high) else 0.0, 1.0)
        return self.low - rel_tol * span <= value <= self.high + rel_tol * span

    def describe(self) -> str:
        return f"{self.name} in [{self.low:g}, {self.high:g}] {self.unit}"


def valid_for(**ranges: tuple) -> Callable:
    """Declare the validity ranges of a correlation.

    Each keyword is an argument name with a ``(low, high)`` or
    ``(low, high, unit)`` tuple in SI units. The function is returned
    unchanged apart from the attribute ``validity``, a tuple of `ValidRange`.

    Examples
    --------
    >>> @valid_for(x=(0.0, 0.7), T=(273.15, 373.15, "K"))
    ... def bpr(x, T):
    ...     return 2.0 * x
    >>> [r.describe() for r in bpr.validity]
    ['x in [0, 0.7] -', 'T in [273.15, 373.15] K']
    >>> check_call(bpr, x=0.8, T=300.0)
    ['bpr: x = 0.8 outside x in [0, 0.7] -']
    """

    def decorate(func: Callable) -> Callable:
        declared = []
        for name, spec in ranges.items():
            low, high = spec[0], spec[1]
            unit = spec[2] if len(spec) > 2 else "-"
            declared.append(ValidRange(name, float(low), float(high), unit))

        @functools.wraps(func)
        def wrapper(*args, **kwargs):
            return func(*args, **kwargs)

        wrapper.validity = tuple(declared)
        return wrapper

    return decorate


def check_call(func: Callable, **values: float) -> list[str]:
    """Return a message for each numeric argument outside ``func``'s ranges."""
    out = []
    for rng in getattr(func, "validity", ()):
        if rng.name in values:
            v = float(values[rng.name])
            if not rng.contains(v):
                out.append(f"{func.__name__}: {rng.name} = {v:g} outside {rng.describe()}")
    return out


@dataclass
class RangeCheck:
    """One validity check to run on numbers once they are known.

    Parameters
    ----------
    label : str
        Where the check applies, in plant words ("E3 boiling-point rise").
    value : Any
        The checked quantity: a CasADi expression of the unknowns, or a number.
    valid : ValidRange
        The declared range.
    source : str
        The correlation the range belongs to.
    unit : str, optional
        The unit operation the check belongs to, for messages.
    """

    label: str
    value: Any
    valid: ValidRange
    source: str = ""
    unit: str | None = None

    def message(self, number: float) -> str:
        return (f"{self.label}: {self.valid.name} = {number:g} {self.valid.unit} is outside "
                f"the validity range of {self.source or 'the correlation'} "
                f"[{self.valid.low:g}, {self.valid.high:g}] {self.valid.unit}")


POLICIES = ("warn", "refuse")


@dataclass
class RangeReport:
    """Violations found by `evaluate_checks`."""

    messages: list[str] = field(default_factory=list)

    def __bool__(self) -> bool:
        return bool(self.messages)


def enforce(checks: list[RangeCheck], numbers: list[float], policy: str = "warn",
            file: str | None = None) -> list[str]:
    """Compare evaluated checks with their ranges.

    Returns the list of warning messages under ``policy='warn'``; raises
    `OutOfRangeError` for the first violation under ``policy='refuse'``.
    """
    if policy not in POLICIES:
        raise ValueError(f"unknown range policy {policy!r}; valid: {', '.join(POLICIES)}")
    out = []
    for check, number in zip(checks, numbers):
        if not check.valid.contains(float(number)):
            msg = check.message(float(number))
            if policy == "refuse":
                raise OutOfRangeError(msg, file=file, unit=check.unit, key=check.valid.name)
            out.append(msg)
    return out
