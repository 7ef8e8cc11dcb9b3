"""Steady-state mass, solids, moisture and energy balances of water-removal lines.

`balance` compiles a flowsheet of evaporator effects, preheaters, flash tanks,
condensers, vapour compressors and convective dryers into one simultaneous
system of equations and solves it with CasADi.

Layers, from the bottom up; a module imports only from layers below its own:

1. ``errors``, ``quantities``          exceptions, units of measure at the edges
2. ``properties``                      water and steam (IAPWS-IF97), moist air,
                                       liquors, sorption isotherms
3. ``unitops``                         one module per unit operation: its ports,
                                       variables and equations
4. ``flowsheet``                       the networkx graph and the file format
5. ``equations``                       variables, residual assembly, degrees of
                                       freedom and structural analysis
6. ``solve``                           initial guess, Newton, fallbacks, the result
7. ``analysis``                        key figures, comparisons, optimisation
8. ``report``                          tables, JSON, exports
9. ``cli``                             the command line, argument handling only

Inside, every quantity is SI: K, Pa, kg/s, J/kg, W, m2. Units of measure are
converted only when a file is read and when a report is written.

Results are estimates for engineering review. Design, pressure and vacuum
vessels, steam systems, relief, explosion protection and operation follow
local codes, standards and licensed engineers.
"""

__version__ = "0.1.0"
