"""The safety cautions every screen, README, command and exported report carries, in one place.

``SHORT_CAUTION`` is the one line (status bar, page footers, the end of every
``--help``); ``LIMITS_CAUTION`` the one line on what the model leaves out and who
must design an engineered system; ``CAUTION_PARAGRAPHS`` the full text (About box,
PDF report, ``solve --json`` ``cautions``).  ``caution_lines()`` is what a short
surface prints (CLI table, drawing sidebar, sweep CSV and plot footnote).
"""

SHORT_CAUTION = (
    "Planning aid only: not a substitute for training, on-site judgement, "
    "load testing or your team's protocols and local codes."
)

LIMITS_CAUTION = (
    "Engineered systems (highlines, structural or vehicle anchors) may need a qualified engineer; "
    "rope weight is not modelled, and water on the ropes only where a current is drawn (simple drag)."
)

CAUTION_PARAGRAPHS: tuple[str, ...] = (
    "Ropewright is a planning aid. Its numbers come from a model of the rig as drawn: "
    "ideal geometry, the rope and hardware specs entered, and simple friction laws. "
    "Real anchors, ropes, knots, edges and loads differ from any model.",
    "It is not a substitute for rescue training, on-site judgement by a qualified rigging "
    "lead, inspection and load testing of every anchor and component, or your team's "
    "protocols and the codes and standards that apply where you work.",
    "Engineered systems (highlines and other tensioned lines, structural anchors, vehicle "
    "anchors) may need design or approval by a qualified engineer. The weight of the ropes "
    "is not modelled, and the push of moving water on ropes and loads only where a current is drawn, "
    "from simple drag coefficients: surges, waves and debris add to the forces shown.",
    "Never stand in a marked danger zone or in line with a loaded rope, redirect or "
    "anchor. Keep the whole-system safety factor your team requires, and stop and "
    "re-assess when anything moves, slips or sounds wrong.",
)

FULL_CAUTION = "\n\n".join(CAUTION_PARAGRAPHS)


def caution_lines() -> tuple[str, str]:
    """The two caution lines a short surface (CLI, drawing, CSV, plot) carries."""
    return (SHORT_CAUTION, LIMITS_CAUTION)


#: The last line of every command's ``--help``.
HELP_EPILOG = f"Caution: {SHORT_CAUTION}"
