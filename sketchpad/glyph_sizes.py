"""Glyph sizes in screen pixels that Qt-free code reads too (the overlay's label placement).

Part of the visual language of :mod:`sketchpad.theme`, which re-exports them: kept here so that the
placement engine, pure geometry, needs no Qt import.
"""

OVERLAY_LABEL_GAP_PX = 6.0  # from the rope to the nearest label edge
ANCHOR_ARROW_PX = 56.0  # length of an anchor's resultant arrow
