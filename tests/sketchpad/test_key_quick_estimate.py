"""The plan's key says its bight shapes are the quick estimate, in the words solve and the drawings use,
without growing wider (a wider key covered the middle of a small viewport).

Before a failure scan has computed the areas, the two bight rows carry a short marker and one
footnote line explains it with the shared phrase (solver.danger.QUICK_ESTIMATE); once the
scan's areas are drawn the key names those instead, with no marker.
"""

from __future__ import annotations

from PySide6.QtGui import QFont, QFontMetricsF

from sketchpad import legend_key, theme
from solver.analysis import analyse
from solver.cli_solve import quick_zone_line
from solver.rigfile import load_rig
from solver.danger import QUICK_ESTIMATE
from tests.conftest import SAMPLES

RAFT = SAMPLES / "raft-3to1-redirect.rig.json"


def test_the_bight_rows_are_marked_and_the_footnote_says_quick_estimate_as_solve_and_drawings_do(qapp):
    from sketchpad.pages.zone_names import failure_key_text
    from solver.danger import danger_zones

    rows = legend_key.rows_for(theme.DRAWN_ZONE_NAMES)
    bight = [text for kind, _s, text in rows if kind == "bight"]
    assert len(bight) == 2 and all(legend_key.QUICK_MARK in t.split(":")[0] for t in bight)
    notes = [text for _k, shape, text in rows if shape == "note"]
    assert notes == [f"{legend_key.QUICK_MARK} {QUICK_ESTIMATE}"]
    rig = load_rig(RAFT)
    result = analyse(rig)
    assert QUICK_ESTIMATE in quick_zone_line(rig, result)  # `ropewright solve`
    assert QUICK_ESTIMATE in failure_key_text(danger_zones(rig, result))  # a drawing without a scan


def test_once_the_areas_are_computed_the_key_has_no_marker_and_no_footnote():
    rows = legend_key.rows_for(theme.COMPUTED_ZONE_NAMES)
    assert not any(shape == "note" for _k, shape, _t in rows)
    assert not any(legend_key.QUICK_MARK in text for _k, _s, text in rows)


def test_the_footnote_does_not_widen_the_key(qapp):
    metrics = QFontMetricsF(QFont())
    rows = legend_key.rows_for(theme.DRAWN_ZONE_NAMES)
    without_note = tuple(r for r in rows if r[1] != "note")
    assert legend_key.rows_width(rows, metrics.horizontalAdvance) == \
        legend_key.rows_width(without_note, metrics.horizontalAdvance)


def test_the_window_key_with_the_footnote_is_one_line_taller_and_no_wider(main_window, monkeypatch):
    from tests.sketchpad.test_overlay import open_sample

    open_sample(main_window, "raft-3to1-redirect.rig.json")
    legend = main_window.live.overlay.legend
    legend.zone_names = theme.DRAWN_ZONE_NAMES  # the key as it is before the scan has computed the areas
    with_note = legend.sizeHint()
    monkeypatch.setattr(legend_key, "ZONE_ROWS", tuple(r for r in legend_key.ZONE_ROWS if r[1] != "note"))
    without = legend.sizeHint()
    assert with_note.width() == without.width()
    assert abs(with_note.height() - without.height() - (legend.fm.height() + legend_key.ROW_GAP_PX)) <= 1  # int px
