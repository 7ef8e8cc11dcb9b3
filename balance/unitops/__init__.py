"""Unit operations: one module per operation, each declaring ports, quantities and equations.

Importing this package registers every built-in unit operation in
`UNIT_TYPES` under its ``type`` name as used in flowsheet files.
"""

from balance.unitops.base import (Guess, Port, QuantitySpec, Setting, UnitOperation, UNIT_TYPES,
                                  register, unit_type)
from balance.unitops import boundaries, condenser, effect, flash_tank, junctions, preheater  # noqa: F401  (registration)

__all__ = ["Guess", "Port", "QuantitySpec", "Setting", "UnitOperation", "UNIT_TYPES", "register", "unit_type"]
