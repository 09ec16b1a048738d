"""Safety notes shown with every assessment, report and in the text UI.

Plain cautions for the work a survey leads to.  They defer to local codes, the
building or vessel owner and licensed practice; figures marked common practice
are rules of thumb of the trade, not law.
"""

from __future__ import annotations

FIXED = (
    "Roof, ladder and mast work can kill. Use fall protection on any roof and never work on one alone.",
    "Set ladders at about 1 in 4 (75 degrees) on firm, level footing, tied off, reaching about 1\u00a0m "
    "above the landing (common practice).",
    "Keep yourself, ladders, masts and cables at least 3\u00a0m (10\u00a0ft) from overhead power lines, more where "
    "local rules say so (common practice); treat every line as live.",
    "Stop in wind, rain, ice or lightning; a wet or mossy roof is a slip hazard.",
    "Before setting a pole, locate buried services, size the footing and guys for its height and wind load, "
    "and keep it farther from power lines than its own length (common practice).",
    "Ground and bond masts and cable shields and fit surge protection as your electrical code requires.",
    "Local building and electrical codes, the owner's rules and licensed trades come first.",
)
VEHICLE = (
    "Check the roof or rack load rating (static and dynamic) and secure the mount for highway speeds.",
    "Note the new clearance height (vehicle plus terminal) for bridges, car parks and garages.",
    "Never mount or adjust a terminal while the vehicle is moving; route cables away from airbags.",
    "The terminal and mount maker's instructions, the vehicle maker's rules and local road codes come first.",
)
MARINE = (
    "Keep the terminal out of radar beams and clear of the compass safe distance.",
    "Keep it and its cable clear of running rigging and sheets; check the standing rigging it is near.",
    "Mount on a rail or mast rated for the sea state; use a harness aloft and never go aloft alone.",
    "Use marine-rated cable, bonding and through-deck fittings; follow the vessel's electrical standard.",
    "The terminal and mount maker's instructions, the vessel's own rules and the local maritime codes come first.",
)


def notes_for(kind: str) -> tuple[str, ...]:
    """The safety lines for a mount kind (fixed | vehicle | marine)."""
    extra = {"vehicle": VEHICLE, "marine": MARINE}.get(kind, ())
    return FIXED + extra


def short_note(kind: str) -> str:
    """One line for places with no room for the full note."""
    if kind == "vehicle":
        return ("Safety: check roof load and clearance height; never adjust while moving; "
                "3\u00a0m from power lines.")
    if kind == "marine":
        return ("Safety: clear of radar beams and the compass safe distance; harness aloft; "
                "3\u00a0m from power lines.")
    return ("Safety: fall protection on roofs, ladder at 1 in 4, 3\u00a0m from power lines, never alone; "
            "local codes first.")


def spot_note(kind: str) -> str:
    """One line for spot search: poles and roof brackets are work at height."""
    rest = short_note(kind).removeprefix("Safety: ")
    return ("Safety: poles and roof brackets are work at height. " + rest[:1].upper() + rest[1:]
            + " Check the pole's rating and footing, and for buried services before digging.")
