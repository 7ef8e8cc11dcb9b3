"""The exception tree: every error `balance` raises on purpose.

One root, `BalanceError`. Each subclass also inherits the built-in exception a
caller would catch anyway (``ValueError``, ``KeyError``, ``RuntimeError``).
Errors keep structured fields (file, unit, key) and build their message from
them, so a user reads *where* the problem is before *what* it is.
"""

from __future__ import annotations


class BalanceError(Exception):
    """Root of all errors raised by `balance`.

    Parameters
    ----------
    message : str
        What is wrong, in plant words.
    file : str, optional
        The flowsheet file the problem was found in.
    unit : str, optional
        The unit operation (or stream) concerned.
    key : str, optional
        The key, port or variable concerned.
    hint : str, optional
        What the user can do about it.
    """

    def __init__(self, message: str, *, file: str | None = None,
                 unit: str | None = None, key: str | None = None,
                 hint: str | None = None):
        self.message = message
        self.file = file
        self.unit = unit
        self.key = key
        self.hint = hint
        super().__init__(self._compose())

    def _compose(self) -> str:
        where = []
        if self.file:
            where.append(str(self.file))
        if self.unit:
            where.append(f"unit '{self.unit}'")
        if self.key:
            where.append(f"key '{self.key}'")
        text = (": ".join(where) + ": " if where else "") + self.message
        if self.hint:
            text += f" ({self.hint})"
        return text

    def located(self, *, file: str | None = None, unit: str | None = None,
                key: str | None = None) -> "BalanceError":
        """Return the same error with missing location fields filled in."""
        err = self.__class__.__new__(self.__class__)
        BalanceError.__init__(err, self.message,
                              file=self.file or file, unit=self.unit or unit,
                              key=self.key or key, hint=self.hint)
        return err

    def __reduce__(self):
        return (_rebuild, (self.__class__, self.message, self.file, self.unit,
                           self.key, self.hint))


def _rebuild(cls, message, file, unit, key, hint):
    err = cls.__new__(cls)
    BalanceError.__init__(err, message, file=file, unit=unit, key=key, hint=hint)
    return err


class InputError(BalanceError, ValueError):
    """The flowsheet file or the Python call is malformed: a missing or
    unknown key, a wrong type, a value outside its physical range."""


class UnitOfMeasureError(InputError):
    """A quantity has no unit, an unknown unit, or a unit of the wrong kind."""


class PortError(InputError):
    """A stream connects ports that do not exist, do not match in kind, or
    are already connected."""


class SpecificationError(BalanceError, ValueError):
    """The set of fixed quantities does not make a square, solvable system:
    too many or too few specifications, or a structurally singular set."""


class InfeasibleSpecificationError(SpecificationError):
    """The specification asks for something physically impossible, such as a
    product weaker than its feed or steam colder than the liquor it boils."""


class OutOfRangeError(BalanceError, ValueError):
    """A correlation was asked for a value outside its declared validity
    range and the policy is to refuse."""


class SolveError(BalanceError, RuntimeError):
    """The equations could not be solved, or the solution failed its checks."""

