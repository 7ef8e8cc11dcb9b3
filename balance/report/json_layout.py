"""The JSON layout of a result (documented in docs/json-layout.md).

Every figure carries its value in the unit shown in the terminal report and
that unit's name, so a reader never guesses: ``{"value": 58.7, "unit": "°C"}``.
"""

from __future__ import annotations

import json
import math

from balance.analysis.key_figures import key_figures
from balance.quantities import convert, display_unit
from balance.report.cautions import cautions_for

LAYOUT_VERSION = "balance-result/1"


def _q(value, kind):
    if value is None:
        return None
    shown = convert(float(value), kind)
    return {"value": shown if math.isfinite(shown) else None, "unit": display_unit(kind)}


def to_dict(solution) -> dict:
    """The result as plain Python data, following the documented layout."""
    fs = solution.flowsheet
    model = solution.model
    streams = {}
    for s in solution.streams.values():
        kind = model.states[s.name].kind
        entry = {"kind": s.kind, "from": s.source, "to": s.target, "liquor": s.liquor}
        for var in kind.variables:
            entry[var.name] = _q(s.values[var.name], var.kind)
        entry["specific_enthalpy"] = _q(s.specific_enthalpy, "specific_enthalpy")
        entry["enthalpy_flow"] = _q(s.enthalpy_flow, "enthalpy_flow")
        streams[s.name] = entry
    units = {}
    for u in solution.units.values():
        units[u.name] = {
            "type": u.type_name,
            "quantities": {k: dict(_q(v, u.kinds[k]), fixed=k in u.fixed) for k, v in u.quantities.items()},
            "figures": {k: _q(v, u.kinds[k]) for k, v in u.figures.items()},
        }
    return {
        "layout": LAYOUT_VERSION,
        "flowsheet": {"title": fs.title, "description": fs.description, "file": fs.file},
        "solve": {
            "converged": solution.converged, "status": solution.status, "method": solution.method,
            "iterations": solution.iterations,
            "residual_norm": solution.residual_norm if math.isfinite(solution.residual_norm) else None,
            "seconds": solution.seconds, "message": solution.message, "warnings": list(solution.warnings),
            "problems": list(solution.problems), "attempts": list(solution.attempts),
            "diagnosis": list(solution.diagnosis),
            "worst_equations": [{"equation": label, "scaled_residual": value}
                                for label, value in solution.worst_equations],
        },
        "key_figures": {f.name: dict(_q(f.value, f.kind), label=f.label) for f in key_figures(solution).values()},
        "streams": streams,
        "units": units,
        "balances": {b.name: {"in": b.into, "out": b.out_of, "closure": b.closure,
                              "unit": "kg/s" if b.name != "energy" else "W"}
                     for b in solution.balances.values()},
        "cautions": cautions_for(fs),
    }


def to_json(solution, indent: int = 2) -> str:
    return json.dumps(to_dict(solution), indent=indent, ensure_ascii=False, allow_nan=False, default=float)
