"""The Forces dock: tables hold the Result's numbers, sort numerically, warnings select their subject."""

from __future__ import annotations

import math
import pathlib
from dataclasses import replace

import pytest
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QApplication

from sketchpad.results_panel import SUBJECT_ROLE, summary_text
from solver.checks import pass_loads
from solver.rigfile import load_rig
from solver.units import force_to, format_force
from tests.conftest import SAMPLES


def open_sample(window, name: str, **settings):
    rig = load_rig(SAMPLES / name)
    if settings:
        rig = replace(rig, settings=replace(rig.settings, **settings))
    window.document.replace_all(rig, pathlib.Path(SAMPLES / name))
    window.view.zoom_to_fit()
    result = window.live.scheduler.solve_now()
    QApplication.processEvents()
    return result


def column_values(table, name: str) -> list[str]:
    c = table.column(name)
    return [table.cell_text(r, c) for r in range(table.proxy.rowCount())]


def test_piece_table_lists_every_segment_with_its_tension_stretch_and_use(main_window):
    result = open_sample(main_window, "compound-2on3.rig.json")
    panel = main_window.live.panel
    unit = main_window.document.rig.display.force
    assert panel.segments.proxy.rowCount() == len(result.segments)
    assert sorted(column_values(panel.segments, "tension")) == sorted(format_force(s.tension_N, unit)
                                                                       for s in result.segments)
    assert sorted(column_values(panel.segments, "use")) == sorted(f"{s.utilization * 100:.0f} %"
                                                                  for s in result.segments)


def test_sorting_by_tension_is_numeric_not_alphabetic(main_window):
    result = open_sample(main_window, "compound-2on3.rig.json", )
    panel = main_window.live.panel
    col = panel.segments.column("tension")
    panel.segments.sortByColumn(col, Qt.DescendingOrder)
    unit = main_window.document.rig.display.force
    want = [format_force(s.tension_N, unit) for s in sorted(result.segments, key=lambda s: -s.tension_N)]
    assert column_values(panel.segments, "tension") == want
    # the sort key is the number in the display unit
    top = panel.segments.proxy.index(0, col).data(Qt.UserRole + 1)
    assert top == pytest.approx(force_to(max(s.tension_N for s in result.segments), unit))


def test_anchor_table_shows_force_direction_capacity_and_use(main_window):
    result = open_sample(main_window, "raft-3to1-redirect.rig.json")
    panel = main_window.live.panel
    rig = main_window.document.rig
    names = column_values(panel.anchors, "anchor")
    assert sorted(names) == sorted(rig.point(a).name for a in result.anchors)
    for row, name in enumerate(names):
        aid = next(a for a in result.anchors if rig.point(a).name == name)
        a = result.anchors[aid]
        assert panel.anchors.cell_text(row, 1) == format_force(a.force_N, rig.display.force)
        # bearing clockwise from north of the resultant (fx east, fy north): atan2(fx, fy), worked here
        # independently of solver.directions; the word is checked against solver/directions tests
        bearing = round(math.degrees(math.atan2(a.fx_N, a.fy_N)) % 360.0) % 360
        assert panel.anchors.cell_text(row, 2).startswith(f"{bearing:03d}° (")
        assert panel.anchors.cell_text(row, 3).endswith(" strength")  # the samples enter breaking strengths
        assert panel.anchors.cell_text(row, 4) == f"{a.utilization * 100:.0f} % of strength ÷ 10"
    # the table says the convention once, in its heading
    assert panel.anchors.source.headerData(2, Qt.Horizontal) == "direction (bearing from north)"


def test_the_raft_anchors_read_as_the_bearings_of_their_pull(main_window):
    # Hand check on the sample's drawn geometry: the alder A1 (-14, 18) is pulled by the Z toward the grab
    # G1 (-5, 15.4) and the haul team; east of south-east of it: bearing atan2(dx, dy) of (9, -2.6) = 106 deg,
    # i.e. ESE (101.25..123.75). The solved resultant swings a few degrees: still ESE.
    open_sample(main_window, "raft-3to1-redirect.rig.json")
    panel = main_window.live.panel
    names = column_values(panel.anchors, "anchor")
    row = names.index(main_window.document.rig.point("A1").name)
    assert panel.anchors.cell_text(row, 2).endswith("(ESE)")


def test_hardware_table_holds_pulley_loads_from_the_checks(main_window):
    result = open_sample(main_window, "raft-3to1-redirect.rig.json")
    panel = main_window.live.panel
    loads = pass_loads(main_window.document.rig, result)
    assert panel.hardware.proxy.rowCount() == len(loads)
    unit = main_window.document.rig.display.force
    assert sorted(column_values(panel.hardware, "load")) == sorted(format_force(f, unit) for *_x, f in loads)


def test_summary_gives_ma_haul_haulers_and_load_delivered(main_window):
    result = open_sample(main_window, "raft-3to1-redirect.rig.json")
    rig = main_window.document.rig
    text = main_window.live.panel.summary.text()
    assert text == summary_text(rig, result)
    # the three MAs, each named: the Z counts 3 strands (T-method: 1 + 1 + 1)
    assert f"MA nominal 3:1 · ideal {result.ma_ideal:.2f}:1 · actual {result.ma_actual:.2f}:1" in text
    load = rig.point("L1")
    unit = rig.display.force
    # sentences, not a formula: what the load gets against what it needs, what freeing it takes, who pulls
    assert (f"Reaches {load.name}: {format_force(result.loads['L1'].force_N, unit)} "
            f"(needs {format_force(load.required_N, unit)}).") in text
    need = result.needs["L1"]  # solved on the rig (tests/solver/test_pull_needed.py checks the number)
    n = need.pullers_needed
    assert f"To free {load.name}: pull {format_force(need.pull_needed_N, unit)} = {n} pullers." in text
    assert f"{rig.point('H1').team} haulers pulling." in text
    assert "→" not in text


def test_hold_mode_shows_the_range_static_friction_allows(main_window):
    result = open_sample(main_window, "raft-3to1-redirect.rig.json", motion="hold")
    assert result.ok and result.hold_anchor_range and result.hold_haul_range, "the solver gives hold ranges"
    panel = main_window.live.panel
    unit = main_window.document.rig.display.force
    holds = column_values(panel.anchors, "hold range")
    want = {f"{format_force(r.low, unit)} – {format_force(r.high, unit)}" for r in result.hold_anchor_range.values()}
    assert set(holds) == want
    h = result.hold_haul_range["H1"]
    assert f"hold allows {format_force(h.low, unit)} – {format_force(h.high, unit)}" in panel.summary.text()
    lab = next(l for l in main_window.live.overlay.labels if l.kind == "haul")
    assert lab.values["hold_low_N"] == h.low and lab.values["hold_high_N"] == h.high


def test_clicking_a_warning_selects_and_centres_its_subject(main_window, qtbot):
    result = open_sample(main_window, "compound-2on3.rig.json")
    panel = main_window.live.panel
    anchor_warning = next(w for w in result.warnings if w.subject == "A1")
    row = next(i for i in range(panel.warnings.count())
               if panel.warnings.item(i).data(SUBJECT_ROLE) == anchor_warning.subject)
    item = panel.warnings.item(row)
    main_window.live.dock.show()
    panel.warnings.scrollToItem(item)
    QApplication.processEvents()
    rect = panel.warnings.visualItemRect(item)
    main_window.canvas.clearSelection()
    qtbot.mouseClick(panel.warnings.viewport(), Qt.LeftButton, pos=rect.center())
    assert main_window.canvas.selected_keys() == [("point", "A1")]
    view = main_window.view
    centre = view.mapToScene(view.viewport().rect().center())
    a1 = main_window.canvas.item_for(("point", "A1")).sceneBoundingRect().center()
    assert abs(centre.x() - a1.x()) * view.px_per_m < 3 and abs(centre.y() - a1.y()) * view.px_per_m < 3


def test_every_warning_of_the_result_is_listed(main_window):
    result = open_sample(main_window, "compound-2on3.rig.json")
    panel = main_window.live.panel
    listed = [panel.warnings.item(i).text() for i in range(panel.warnings.count())]
    assert len(listed) == len(result.warnings)
    for w in result.warnings:
        assert any(w.message in t for t in listed)


def test_a_failed_solve_is_named_and_the_tables_keep_the_last_good_numbers(main_window, qtbot):
    good = open_sample(main_window, "vector-pull.rig.json")
    doc = main_window.document
    from solver.result import Result

    # a finished rig whose solve fails: the solver's answer is injected (no drawn rig here fails on purpose)
    def fails(rig, start=None):
        return Result(status="diverged", message="no equilibrium within 200 iterations", subject="V1")

    main_window.live.scheduler.analyse = main_window.live.scheduler.quick = fails
    doc.apply(doc.rig.moved("V1", 1.0, 2.0), "Move hand")
    with qtbot.waitSignal(main_window.live.scheduler.result_ready, timeout=3000) as got:
        pass
    failed = got.args[0]
    panel = main_window.live.panel
    assert not failed.ok
    assert failed.message in panel.status.text() and not panel.status.isHidden()
    assert panel.segments.proxy.rowCount() == len(good.segments)
    assert panel.warnings.item(0).text().startswith("DANGER: Solve failed")
    assert panel.warnings.item(0).data(SUBJECT_ROLE) == "V1"
    assert main_window.live.overlay.banner_text  # the red banner: a finished rig that fails


def test_a_point_no_rope_holds_yet_is_a_calm_note_not_an_alarm(main_window, qtbot):
    good = open_sample(main_window, "vector-pull.rig.json")
    doc = main_window.document
    from solver.model import Point

    doc.apply(doc.rig.with_point(Point("K9", "point", -20.0, 5.0)), "Place free point")
    with qtbot.waitSignal(main_window.live.scheduler.result_ready, timeout=3000) as got:
        pass
    assert not got.args[0].ok  # the solver cannot hold K9 ...
    panel = main_window.live.panel
    # ... but the rig is still being drawn: a note saying what to do, no red banner, no DANGER line
    assert panel.status.text().startswith("Sketch incomplete: K9 is not held by any rope yet")
    assert main_window.live.overlay.banner_text == ""
    assert main_window.hints.shown_text().startswith("Sketch incomplete: K9")
    texts = [panel.warnings.item(i).text() for i in range(panel.warnings.count())]
    assert not any(t.startswith("DANGER") for t in texts)
    assert panel.segments.proxy.rowCount() == len(good.segments)  # the last complete numbers stay, greyed


def test_the_dock_says_which_capacity_each_anchor_margin_used(main_window):
    # bank boulder as a rated working load of 4 kN: use = force / 4 kN (no safety factor); the alder
    # keeps its breaking strength: use = force x 10 / 20 kN (rig-format.md additions, capacity_kind)
    rig = load_rig(SAMPLES / "raft-3to1-redirect.rig.json")
    rig = rig.with_point(replace(rig.point("A2"), capacity_kind="working", capacity_N=4000.0))
    main_window.document.replace_all(rig, pathlib.Path(SAMPLES / "raft-3to1-redirect.rig.json"))
    result = main_window.live.scheduler.solve_now()
    QApplication.processEvents()
    panel = main_window.live.panel
    names = column_values(panel.anchors, "anchor")
    boulder = names.index("bank boulder")
    f = result.anchors["A2"].force_N
    assert column_values(panel.anchors, "capacity")[boulder] == "4.00 kN working load"
    assert column_values(panel.anchors, "use")[boulder] == f"{100 * f / 4000.0:.0f} % of working load"
    alder = names.index("alder")
    fa = result.anchors["A1"].force_N
    assert column_values(panel.anchors, "use")[alder] == f"{100 * fa * 10 / 20000.0:.0f} % of strength ÷ 10"
