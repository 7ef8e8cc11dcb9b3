"""Unit operations: one module per operation, each declaring ports, quantities and equations.

Importing this package imports every module in it, which registers each
unit operation in `UNIT_TYPES` under its ``type`` name as used in flowsheet
files. A new unit operation needs only a new module here (see DEVELOPERS.md).
"""

import importlib
import pkgutil

from balance.unitops.base import (Guess, Port, QuantitySpec, Setting, UnitOperation, UNIT_TYPES,
                                  register, unit_type)

for _module in pkgutil.iter_modules(__path__):
    if not _module.name.startswith("_"):
        importlib.import_module(f"{__name__}.{_module.name}")

__all__ = ["Guess", "Port", "QuantitySpec", "Setting", "UnitOperation", "UNIT_TYPES", "register", "unit_type"]
