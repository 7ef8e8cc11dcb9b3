"""The cautions every report carries, in one place."""

GENERAL = (
    "Results are steady-state estimates for engineering review, not a design. Pressure and vacuum "
    "vessels, steam systems and their relief follow local pressure-equipment codes and standards "
    "and the judgement of licensed engineers."
)

DRYING = (
    "Dryers handling combustible powders carry a dust explosion and fire risk: explosion venting, "
    "suppression and isolation, inlet-air temperature limits and the handling of deposits follow "
    "local codes and standards (for example VDI 2263 Part 7, NFPA 652/61/654/68/69, "
    "EN 14491, EN 14373, EN 15089, ATEX 2014/34/EU and 1999/92/EC) and the powder's measured "
    "explosibility and ignition data."
)


def cautions_for(flowsheet) -> list[str]:
    """The cautions that apply to a flowsheet."""
    out = [GENERAL]
    if any(getattr(u, "dries", False) for u in flowsheet.units.values()):
        out.append(DRYING)
    return out
