"""Helpers shared by the liquor correlation modules (not public)."""

from __future__ import annotations

from typing import Callable

from balance.errors import InputError


def cite(reference: str) -> Callable:
    """Attach a one-line citation to a correlation (``func.reference``)."""

    def decorate(func: Callable) -> Callable:
        func.reference = reference
        return func

    return decorate


def require_coefficients(values, key: str) -> list:
    """A non-empty list of coefficients, or an `InputError` naming ``key``."""
    try:
        values = list(values)
    except TypeError:
        raise InputError(f"expected a list of numbers, got {values!r}", key=key) from None
    if not values:
        raise InputError("needs at least one coefficient", key=key)
    return values


def horner(x, coefficients: list):
    """sum c_i x^i by Horner's rule; keeps the kind of ``x`` (0 * x added)."""
    out = coefficients[-1] + 0.0 * x
    for c in reversed(coefficients[:-1]):
        out = out * x + c
    return out
