"""Physical properties: water and steam, moist air, liquors and sorption.

Every function here accepts Python floats or CasADi symbols (SX, MX) and
returns the same kind, so one definition serves the symbolic equations and
plain numeric checks. NumPy arrays are accepted too but come back as CasADi
``DM`` matrices from some functions; convert with ``numpy.asarray``. SI throughout: K, Pa, J/kg, J/(kg K), kg/kg.
"""
