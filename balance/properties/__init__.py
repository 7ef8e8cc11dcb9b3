"""Physical properties: water and steam, moist air, liquors and sorption.

Every function here accepts Python floats, NumPy arrays or CasADi symbols and
returns the same kind, so one definition serves the symbolic equations and
plain numeric checks. SI throughout: K, Pa, J/kg, J/(kg K), kg/kg.
"""
