"""Ropewright's visual language in one place: colours, pens, fonts, glyph sizes and z-order.

Every ``paint()`` and every widget style reads from here, so the sketch looks
the same on screen, in screenshots and in exports.  Sizes ending in ``_PX`` are
screen pixels (they stay the same at every zoom); everything else on the
canvas is in metres.  The palette is our own: warm paper, muted site colours
and saturated, distinct rope colours so a rigger can follow each line.
"""

from __future__ import annotations

from functools import lru_cache

from PySide6.QtCore import Qt
from PySide6.QtGui import QBrush, QColor, QFont, QPen

from sketchpad.glyph_sizes import ANCHOR_ARROW_PX, OVERLAY_LABEL_GAP_PX  # noqa: F401 (part of the theme)

# --- z-order plan (higher draws on top) ------------------------------------------------
Z_BACKGROUND = 0.0  # site image (sketchpad.background)
Z_FEATURE = 10.0  # water, boulders, banks, hazards, notes
Z_ROPE = 20.0  # rope paths with their pass glyphs
Z_FORCE = 25.0  # external forces drawn from the model
Z_POINT = 30.0  # anchors, loads, haul teams, free points, people
Z_OVERLAY = 40.0  # solver results (tensions, resultants, danger zones)
Z_PREVIEW = 50.0  # what a tool is drawing right now (rubber band, rope in progress)

# --- fonts -----------------------------------------------------------------------------
FONT_FAMILY = "DejaVu Sans"
LABEL_POINT_SIZE = 9
SMALL_POINT_SIZE = 8
HUD_POINT_SIZE = 8


@lru_cache(maxsize=None)
def font(size: int = LABEL_POINT_SIZE, bold: bool = False, italic: bool = False) -> QFont:
    """The one sans-serif face used everywhere, at ``size`` points."""
    f = QFont(FONT_FAMILY, size)
    f.setBold(bold)
    f.setItalic(italic)
    return f


# --- paper and grid ----------------------------------------------------------------------
PAPER = QColor("#f6f4ee")
GRID_MINOR = QColor("#e7e3d8")
GRID_MAJOR = QColor("#d2cbbb")
GRID_AXIS = QColor("#b9ae97")
GRID_MIN_SPACING_PX = 14  # minor grid lines never closer than this
GRID_MAJOR_EVERY = 5

HUD_TEXT = QColor("#3a3a36")
HUD_BACK = QColor(246, 244, 238, 215)
HUD_MARGIN_PX = 14
SCALE_BAR_TARGET_PX = 120
SCALE_BAR_HEIGHT_PX = 6
NORTH_ARROW_PX = 34

# --- labels ---------------------------------------------------------------------------------
LABEL_TEXT = QColor("#23231f")
LABEL_HALO = QColor(246, 244, 238, 220)
LABEL_GAP_PX = 4

# --- selection and previews -------------------------------------------------------------
SELECTION = QColor("#ffb000")
SELECTION_WIDTH_PX = 3.0
PREVIEW = QColor("#2a6fdb")
RUBBER_BAND_FILL = QColor(42, 111, 219, 40)
MEASURE = QColor("#8a2be2")

# --- points ------------------------------------------------------------------------------
#: marker radius in pixels for each point kind
POINT_RADIUS_PX: dict[str, float] = {"anchor": 8.0, "load": 9.0, "haul": 8.0, "point": 4.5, "person": 7.0}
POINT_FILL: dict[str, QColor] = {
    "anchor": QColor("#33414a"),  # slate: something solid in the ground
    "load": QColor("#e07b1a"),  # amber: the thing being moved
    "haul": QColor("#2f8a57"),  # green: people pulling
    "point": QColor("#ffffff"),  # a free junction
    "person": QColor("#7b52a6"),  # violet: a rescuer standing somewhere
}
POINT_OUTLINE = QColor("#1e1e1c")
POINT_OUTLINE_PX = 1.4
POINT_MARK = QColor("#ffffff")  # the small sign inside a marker

# --- ropes ----------------------------------------------------------------------------
#: Rope identity colours: blues and violets only (hues 190-290 deg), well away from every hue of the utilization
#: ramp and the danger zones (green through amber and red to crimson), so a rope's own colour never reads as its load.
ROPE_COLOURS: tuple[QColor, ...] = (
    QColor("#1c64a8"),  # deep blue
    QColor("#6a3fb0"),  # violet
    QColor("#137e9c"),  # cerulean
    QColor("#3a3f94"),  # indigo
    QColor("#9348bf"),  # orchid
    QColor("#36566e"),  # slate blue
)
ROPE_WIDTH_PX = 2.4
ROPE_HIT_PX = 8.0  # how close a click must be to pick a rope
ROPE_LABEL_OFFSET_PX = 9

PULLEY_RADIUS_PX = 9.0  # sheave
PULLEY_FILL = QColor("#ffffff")
PULLEY_AXLE_PX = 1.8
RING_RADIUS_PX = 6.0  # sliding pass: ring or hand
KNOT_RADIUS_PX = 4.4  # tied pass: knot or rope grab
EDGE_SIZE_PX = 14.0  # edge pass: the wedge of rock or concrete
EDGE_FILL = QColor("#7c6a55")
HAUL_ARROW_PX = 22.0  # arrow beyond a hauled end
HAUL_ARROW_HEAD_PX = 9.0
GLYPH_GAP_PX = 2.0  # space between a point marker and the glyph beside it

# --- forces ---------------------------------------------------------------------------
FORCE_COLOUR = QColor("#0b7a3b")
FORCE_LENGTH_PX = 46.0
FORCE_WIDTH_PX = 2.2
FORCE_HEAD_PX = 9.0

# --- site features ------------------------------------------------------------------------
FEATURE_FILL: dict[str, QColor] = {
    "water": QColor(96, 150, 196, 70),
    "boulder": QColor(150, 140, 126, 150),
    "bank": QColor(0, 0, 0, 0),
    "hazard": QColor(206, 60, 40, 55),
    "note": QColor(0, 0, 0, 0),
}
FEATURE_EDGE: dict[str, QColor] = {
    "water": QColor("#5b8db8"),
    "boulder": QColor("#645a4d"),
    "bank": QColor("#7a6a35"),
    "hazard": QColor("#c23b22"),
    "note": QColor("#6a6a6a"),
}
FEATURE_LABEL_INSET_PX = 5.0  # polygon labels sit this far inside the top-left corner
FEATURE_EDGE_PX: dict[str, float] = {"water": 1.2, "boulder": 1.4, "bank": 2.6, "hazard": 1.6, "note": 1.0}
# --- moving water (sketchpad.water_layer) ----------------------------------------------------
FLOW_ARROW = QColor(31, 84, 140, 150)  # the current's arrow field over water features
FLOW_ARROW_PX = 1.1
FLOW_LABEL = QColor("#1f548c")  # speed and river left / river right
BOWED_ROPE_PX = 3.0  # the rope as the current bows it, in its rope colour
WET_TENSION = QColor("#12355a")  # tension at the ends of a rope's wet part
FEATURE_LABEL: dict[str, QColor] = {
    "water": QColor("#2f5f8a"),
    "boulder": QColor("#4b4237"),
    "bank": QColor("#5e5228"),
    "hazard": QColor("#a02a16"),
    "note": QColor("#4a4a4a"),
}


def cosmetic_pen(colour: QColor, width_px: float, style: Qt.PenStyle = Qt.SolidLine) -> QPen:
    """A pen whose width is in screen pixels whatever the zoom."""
    pen = QPen(colour, width_px, style, Qt.RoundCap, Qt.RoundJoin)
    pen.setCosmetic(True)
    return pen


def pixel_pen(colour: QColor, width_px: float, style: Qt.PenStyle = Qt.SolidLine) -> QPen:
    """A pen for items drawn in pixels (they ignore the view's zoom)."""
    return QPen(colour, width_px, style, Qt.RoundCap, Qt.RoundJoin)


def rope_colour(index: int) -> QColor:
    """The colour of the ``index``-th rope in the rig (the palette repeats)."""
    return ROPE_COLOURS[index % len(ROPE_COLOURS)]


def feature_brush(kind: str) -> QBrush:
    """Fill for a site feature; hazards are hatched so they read even in greyscale print."""
    colour = FEATURE_FILL.get(kind, FEATURE_FILL["note"])
    if kind == "hazard":
        return QBrush(FEATURE_EDGE["hazard"], Qt.BDiagPattern)
    return QBrush(colour)


# --- force overlay (sketchpad.overlay, sketchpad.results_panel) -------------------------------
#: Utilization ramp, our own: (utilization = tension x SF / MBS, colour). 1.0 = exactly at the safety factor.
UTIL_RAMP: tuple[tuple[float, QColor], ...] = (
    (0.0, QColor("#2f9e6a")),  # green: plenty of margin
    (0.5, QColor("#8fb32b")),  # yellow-green
    (0.8, QColor("#e2a21a")),  # amber: getting close
    (1.0, QColor("#d9541e")),  # orange-red: at the safety factor
    (1.5, QColor("#9c1238")),  # crimson: well past it
)
UTIL_UNKNOWN = QColor("#8a8a86")  # capacity not known
OVERLAY_POINT_SIZE = 8
OVERLAY_LABEL_TEXT = QColor("#1d1d1a")
OVERLAY_LABEL_BACK = QColor(255, 254, 250, 235)
OVERLAY_LABEL_PAD_PX = 3.0
OVERLAY_LABEL_BORDER_PX = 1.6
OVERLAY_LEADER = QColor(60, 60, 56, 170)
OVERLAY_BAND_PX = 7.0  # translucent band along each solved piece of a stale (greyed) result
#: A live band's width grows with utilization, so a greyscale print keeps the meaning the colour gives:
#: BAND_MIN_PX at no load, BAND_MAX_PX from BAND_FULL_UTIL (150 % of allowed) on.
BAND_MIN_PX = 4.0
BAND_MAX_PX = 14.0
BAND_FULL_UTIL = 1.5
OVERLAY_BAND_ALPHA = 125
OVERLAY_SOLVED_POINT_PX = 4.0  # ring where the solver moved a free point
DRAWN_PLACE = QColor(90, 90, 86, 150)  # where a free point was drawn when the solver moved it (sketchpad.solved_places)
DRAWN_PLACE_RADIUS_PX = 6.0
ANGLE_TEXT = QColor("#2c3e8c")
#: overlay label kinds whose text has a colour of its own (every other label's text is OVERLAY_LABEL_TEXT): turns,
#: and the water's numbers in the water's colours (sketchpad.water_labels)
LABEL_KIND_TEXT: dict[str, QColor] = {"angle": ANGLE_TEXT, "wet-end": WET_TENSION, "current": FLOW_LABEL}
ANCHOR_ARROW_HEAD_PX = 11.0
ANCHOR_ARROW_WIDTH_PX = 3.2
ZONE_COLOURS: dict[str, QColor] = {"recoil": QColor(224, 120, 20), "bight": QColor(196, 28, 36),
                                   "failure": QColor(176, 20, 120)}  # painted in this order
#: The zone key of the legend: the drawn shapes, and once the failure scan has run, the computed ones.
DRAWN_ZONE_NAMES: tuple[tuple[str, str], ...] = (("bight", "bight (quick estimate)"), ("recoil", "recoil band"))
COMPUTED_ZONE_NAMES: tuple[tuple[str, str], ...] = (("failure", "failure areas"),
                                                    ("recoil", "recoil band"))
# the What-if ghost: one failure's outcome over the rig
GHOST_ZONE_EDGE = QColor(25, 35, 120)
GHOST_ZONE_FILL = QColor(40, 70, 200, 45)
GHOST_ZONE_PX = 2.5
GHOST_ROPE = QColor(40, 60, 150)
GHOST_MOVE = QColor(40, 60, 150)
GHOST_ROPE_PX = 2.0
GHOST_MARK_PX = 6.0
DANGER_TEXT = QColor(163, 29, 24)
MUTED_TEXT = QColor(100, 100, 96)
ZONE_FILL_ALPHA = 28
ZONE_HATCH_ALPHA = 95
ZONE_EDGE_PX = 1.0
OVERLAY_GREY = QColor("#9d9d98")  # last good overlay while the current solve has failed
OVERLAY_GREY_OPACITY = 0.55
FAIL_RING_PX = 15.0
BANNER_BACK = QColor(163, 29, 24, 235)
HINT_BACK = QColor(236, 241, 247, 235)  # the hint strip over the canvas: calm slate blue, never an alarm colour
HINT_EDGE = QColor("#9fb3c8")
HINT_TEXT = QColor("#1f2d3d")
HINT_STATE_TEXT = QColor("#24507a")  # "sketch incomplete: ..." and the empty sketch's first message
BANNER_TEXT = QColor("#ffffff")
BANNER_MARGIN_PX = 10
LEGEND_BACK = QColor(255, 254, 250, 232)
LEGEND_EDGE = QColor("#b9ae97")
LEGEND_RAMP_W_PX = 150
LEGEND_RAMP_H_PX = 14  # the wedge's tallest end: as tall as the widest band
LEGEND_MARGIN_PX = 12


#: The ramp's stops with their channels as floats (QColor.redF() and kin), read once: the overlay colours
#: every new label of a drag step by its utilization.
_RAMP_RGBF = [(u, (c.redF(), c.greenF(), c.blueF())) for u, c in UTIL_RAMP]


def utilization_colour(u: float | None) -> QColor:
    """Colour of a utilization on the overlay ramp (linear between stops; None = capacity unknown)."""
    if u is None or u != u:
        return UTIL_UNKNOWN
    stops = UTIL_RAMP
    if u <= stops[0][0]:
        return QColor(stops[0][1])
    for (u0, (r0, g0, b0)), (u1, (r1, g1, b1)) in zip(_RAMP_RGBF, _RAMP_RGBF[1:]):
        if u <= u1:
            t = (u - u0) / (u1 - u0)
            return QColor.fromRgbF(r0 + t * (r1 - r0), g0 + t * (g1 - g0), b0 + t * (b1 - b0))
    return QColor(stops[-1][1])


def band_width_px(u: float) -> float:
    """Width (px) of the utilization band of a piece at utilization ``u`` (1.0 = at the safety factor)."""
    t = min(max(float(u), 0.0), BAND_FULL_UTIL) / BAND_FULL_UTIL
    return round(BAND_MIN_PX + t * (BAND_MAX_PX - BAND_MIN_PX), 1)


def zone_brushes(kind: str) -> tuple[QBrush, QBrush]:
    """(translucent fill, hatch) brushes of a danger zone kind ("bight" or "recoil")."""
    base = ZONE_COLOURS.get(kind, ZONE_COLOURS["bight"])
    fill, hatch = QColor(base), QColor(base)
    fill.setAlpha(ZONE_FILL_ALPHA)
    hatch.setAlpha(ZONE_HATCH_ALPHA)
    return QBrush(fill), QBrush(hatch, Qt.FDiagPattern if kind == "recoil" else Qt.BDiagPattern)

# --- haul plan (preview of the rig part-way through a haul, and its plot) -----------------------
HAUL_GHOST = QColor(28, 100, 168, 200)  # the rig as it stands at the scrubbed step
HAUL_GHOST_WIDTH_PX = 3.0
HAUL_GHOST_HALO = QColor(246, 244, 238, 230)  # paper, under the preview
HAUL_GHOST_HALO_PX = 2.0
HAUL_GHOST_POINT_PX = 4.5
Z_HAUL_GHOST = 45.0  # above the result overlay, below what a tool is drawing
HAUL_CURVE = QColor("#1c64a8")  # load travel against rope paid in
HAUL_IDEAL = QColor("#55554f")  # the same haul without stretch (ideal MA)
HAUL_RESET = QColor("#b9ae97")  # a reset between strokes
HAUL_MOVE = QColor("#2f8a57")  # where the load first moves
HAUL_CURSOR = QColor("#c2362b")  # the scrubbed step
HAUL_PLOT_BACK = QColor("#fbfaf6")
HAUL_PLOT_GRID = QColor("#e7e3d8")
HAUL_PLOT_TEXT = QColor("#3a3a36")
HAUL_STOP = QColor("#b3122e")  # a haul that stops short
HAUL_CAUTION_STYLE = "color: #55554f; font-size: 8pt"  # the cautions under the haul plan

# --- printed pages (sketchpad.export, sketchpad.report, sketchpad.pages) --------------------------------
PAGE_INK = QColor("#1d1d1a")  # body text and lines on paper
PAGE_MUTED = QColor("#55554f")  # secondary text
PAGE_RULE = QColor("#b9ae97")  # rules and frames


def page_font(size: float, bold: bool = False, italic: bool = False) -> QFont:
    """A fresh copy of the app's face at ``size`` points (fractions allowed), for drawings and reports."""
    f = QFont(FONT_FAMILY)
    f.setPointSizeF(size)
    f.setBold(bold)
    f.setItalic(italic)
    return f


#: Rope-use classes as line patterns (so a black-and-white print keeps what the ramp colours say):
#: (lowest utilization, words, rail pen style, rail width px). Class bounds are the ramp's stops.
UTIL_CLASSES: tuple[tuple[float, str, Qt.PenStyle, float], ...] = (
    (0.0, "under 50 %", Qt.NoPen, 0.0),
    (0.5, "50–80 %", Qt.DotLine, 1.2),
    (0.8, "80–100 %", Qt.DashLine, 1.4),
    (1.0, "100 % or more", Qt.SolidLine, 2.2),
)
UTIL_RAIL = QColor("#1d1d1a")  # rails beside a loaded piece's band
SCHEMATIC_GAP_PX = 13.0  # between side-by-side strands of one rope in the schematic
SCHEMATIC_STRAND_PX = 2.2
SCHEMATIC_T_TEXT = QColor("#1d1d1a")
PRINT_FRAME_EDGE = QColor("#c23b22")  # the print frame drawn on the canvas (dashed)
