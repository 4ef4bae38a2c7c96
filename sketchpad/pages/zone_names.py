"""The key's words for the computed failure areas a drawing shows: which failure sweeps each shape.

Once a drawing shows a failure scan's areas (:meth:`sketchpad.export.Drawing.use_scan`) the plan's
hatched shape is the union of one area per component; this names each of them ("if the bank-boulder
redirect lets go") under the symbol key, so a reader can tell what every hatched part is about.
A drawing without a scan says its bight shapes are the quick estimate instead.
"""

from __future__ import annotations

import re

from PySide6.QtCore import QRectF
from PySide6.QtGui import QPainter

from sketchpad import theme
from sketchpad.pages.wrapped_text import wrap_text

#: Names listed before "and N more": a big rig's key stays a key (the report's table lists every one).
MAX_NAMED = 8
TEXT_PT = 7.0


def failure_key_text(zones) -> str:
    """One sentence naming each computed failure area of ``zones`` (DangerZone list); "" when none is computed."""
    names = _grouped([z.label for z in zones if z.kind == "failure"])
    if not names:
        if any(z.kind == "bight" for z in zones):
            return ("Bight shapes: a quick estimate from a fixed shape, not computed — "
                    "`ropewright failures` lets each component go.")
        return ""
    shown = names[:MAX_NAMED]
    more = len(names) - len(shown)
    tail = f"; and {more} more (see If something lets go / `ropewright failures`)" if more else ""
    return "Failure areas (each component let go alone): " + "; ".join(shown) + tail + "."


_PIECE = re.compile(r'^if the (rope piece|sling leg) of (.+?) from ".*" to ".*" lets go$')


def _grouped(labels: list[str]) -> list[str]:
    """The labels in order, with every piece of one rope said once ("if any of the 5 rope pieces of main line
    lets go"), so a long rope does not crowd the key."""
    pieces: dict[tuple[str, str], int] = {}
    for lab in labels:
        m = _PIECE.match(lab)
        if m:
            pieces[(m.group(1), m.group(2))] = pieces.get((m.group(1), m.group(2)), 0) + 1
    out, said = [], set()
    for lab in labels:
        m = _PIECE.match(lab)
        if m is None:
            out.append(lab)
            continue
        key = (m.group(1), m.group(2))
        n = pieces[key]
        if n == 1:
            out.append(lab)
        elif key not in said:
            said.add(key)
            out.append(f"if any of the {n} {key[0]}s of {key[1]} lets go")
    return out


def paint_failure_key(painter: QPainter, rect: QRectF, zones, draw: bool = True) -> float:
    """:func:`failure_key_text` wrapped into ``rect``'s width from its top; returns the height used (px)."""
    text = failure_key_text(zones)
    if not text:
        return 0.0
    return wrap_text(painter, QRectF(rect.left(), rect.top(), rect.width(), 0), text,
                     theme.page_font(TEXT_PT), theme.PAGE_INK, draw=draw) + 2
