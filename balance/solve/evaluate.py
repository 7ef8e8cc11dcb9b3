"""Numbers from a model: every stream's properties, every unit's figures, in one CasADi call."""

from __future__ import annotations

import casadi as ca
import numpy as np


class Evaluator:
    """One compiled function returning every figure a result needs.

    Figures are registered as (key, expression); `evaluate` returns a dict
    key -> float for given unknowns and parameters.
    """

    def __init__(self, model):
        self.model = model
        keys, exprs = [], []

        def add(key, expr):
            keys.append(key)
            exprs.append(ca.SX(expr) if not isinstance(expr, ca.SX) else expr)

        for v in model.variables:
            add(("var", v.path), v.symbol)
        for name, state in model.states.items():
            add(("stream", name, "specific_enthalpy"), state.specific_enthalpy)
            add(("stream", name, "enthalpy_flow"), state.enthalpy_flow)
            add(("stream", name, "water_flow"), state.water_flow)
            add(("stream", name, "solids_flow"), state.solids_flow)
            add(("stream", name, "dry_air_flow"), state.dry_air_flow)
        for unit, figures in model.reports.items():
            for figure, (expr, _kind) in figures.items():
                add(("unit", unit, figure), expr)
        for unit, expr in model.external_power.items():
            add(("external_power", unit), expr)
        for i, check in enumerate(model.range_checks):
            add(("range", i), check.value)
        for i, eq in enumerate(model.equations):
            add(("residual", i), eq.residual)
        self.keys = keys
        flat = ca.vertcat(*exprs) if exprs else ca.SX(0, 1)
        self.function = ca.Function("figures", [model.x, model.p], [flat])

    def evaluate(self, x: np.ndarray, p: np.ndarray) -> dict:
        out = np.asarray(self.function(x, p), dtype=float).ravel()
        return dict(zip(self.keys, out.tolist()))
