"""The safety cautions every screen, README and exported report carries, in one place."""

SHORT_CAUTION = (
    "Planning aid only: not a substitute for training, on-site judgement, "
    "load testing or your team's protocols and local codes."
)

CAUTION_PARAGRAPHS: tuple[str, ...] = (
    "Ropewright is a planning aid. Its numbers come from a model of the rig as drawn: "
    "ideal geometry, the rope and hardware specs entered, and simple friction laws. "
    "Real anchors, ropes, knots, edges and loads differ from any model.",
    "It is not a substitute for rescue training, on-site judgement by a qualified rigging "
    "lead, inspection and load testing of every anchor and component, or your team's "
    "protocols and the codes and standards that apply where you work.",
    "Never stand in a marked danger zone or in line with a loaded rope, redirect or "
    "anchor. Keep the whole-system safety factor your team requires, and stop and "
    "re-assess when anything moves, slips or sounds wrong.",
)

FULL_CAUTION = "\n\n".join(CAUTION_PARAGRAPHS)
