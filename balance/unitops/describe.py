"""A plain-text description of a unit type: its ports, quantities and settings (for ``balance units``)."""

from __future__ import annotations

import inspect

from balance.quantities import KINDS, convert, display_unit
from balance.unitops.base import REQUIRED, UnitOperation


def _example_instance(cls: type[UnitOperation]) -> UnitOperation:
    settings = {}
    for s in cls.settings():
        if s.default is REQUIRED:
            settings[s.name] = "<name>" if s.kind == "text" else 0.0
    return cls("X", settings)


def describe_unit_type(cls: type[UnitOperation]) -> str:
    """Ports, quantities and settings of a unit type, as text."""
    unit = _example_instance(cls)
    doc = inspect.getdoc(cls) or ""
    lines = [f"{cls.type_name}: {cls.description}"]
    if doc:
        lines.append("  " + doc.splitlines()[0])
    lines.append("  ports:")
    for port in unit.ports():
        extra = " (optional)" if port.optional else ""
        lines.append(f"    {port.name:<18} {port.kind:<8} {port.direction:<3}{extra}  {port.description}")
    quantities = unit.quantities()
    if quantities:
        lines.append("  quantities (fix by giving a value, or leave to be solved):")
        for q in quantities:
            default = ""
            if q.default is not None:
                default = f" [default {convert(q.default, q.kind):g} {display_unit(q.kind)}]"
            lines.append(f"    {q.name:<18} {display_unit(q.kind):<10} {q.description}{default}")
    aliases = unit.aliases()
    if aliases:
        lines.append("  keys for stream variables:")
        for key, (port, var) in aliases.items():
            lines.append(f"    {key:<18} the {var} of the stream at '{port}'")
    settings = cls.settings()
    if settings:
        lines.append("  settings (constants):")
        for s in settings:
            if s.default is REQUIRED:
                default = "required"
            elif s.kind in KINDS and isinstance(s.default, (int, float)):
                default = f"default {convert(s.default, s.kind):g} {display_unit(s.kind)}".rstrip()
            else:
                default = f"default {s.default!r}"
            choices = f"; one of {', '.join(map(str, s.choices))}" if s.choices else ""
            lines.append(f"    {s.name:<18} {s.description} ({default}{choices})")
    return "\n".join(lines)
