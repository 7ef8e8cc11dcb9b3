"""Liquors (water plus dissolved solids): boiling-point rise, heat capacity and enthalpy.

Modules, in import order (each imports only those above it and
`balance.properties.water`):

* `boiling_point_rise` - BPR correlations ``f(x, T_water, p, **coefficients)``;
* `heat_capacity` - c_p correlations ``f(x, T, **coefficients)``;
* `liquor` - `Liquor`, which composes one of each on the IAPWS enthalpy datum,
  the built-in liquors and `liquor_from_table` for flowsheet files.
"""

from . import boiling_point_rise, heat_capacity
from .boiling_point_rise import BPR_MODELS
from .heat_capacity import CP_MODELS
from .liquor import (BUILTIN_LIQUORS, SKIM_MILK_SOLIDS, WHOLE_MILK_SOLIDS, Liquor,
                     LiquorWarning, builtin_liquor, liquor_from_table)

__all__ = [
    "boiling_point_rise", "heat_capacity",
    "BPR_MODELS", "CP_MODELS",
    "Liquor", "LiquorWarning", "BUILTIN_LIQUORS", "builtin_liquor", "liquor_from_table",
    "SKIM_MILK_SOLIDS", "WHOLE_MILK_SOLIDS",
]
