"""Names drawn on the plan and in its labels cut to a readable length, the whole text kept for tool tips.

A label may be as long as the rig format allows (200 characters); drawn whole on the plan it hides
the sketch, and the halo outline of a label costs in proportion to its length on every new label.
On the plan a name shows at most :data:`DRAWN_CHARS` characters, ending in "…".
"""

from __future__ import annotations

#: Most characters of a name drawn on the plan, in force labels and in the legend's lines.
DRAWN_CHARS = 48


def drawn(text: str, limit: int = DRAWN_CHARS) -> str:
    """``text`` as drawn: unchanged when short, else its first ``limit - 1`` characters and "…"."""
    text = str(text)
    if len(text) <= limit:
        return text
    return text[: limit - 1].rstrip() + "…"
