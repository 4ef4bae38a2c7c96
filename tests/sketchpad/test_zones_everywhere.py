"""Every surface tells the same story about where nobody may stand once the failure scan has run:
the Forces dock (after the app's scan), ``ropewright render``, the brief and the report name the failure
that puts a person in its path and draw the computed areas; before a scan the dock's bight warnings say
they are the quick estimate."""

from __future__ import annotations

from dataclasses import replace

import pypdf
from shapely.geometry import Point as ShPoint

from solver.rigfile import load_rig, save_rig
from tests.conftest import SAMPLES
from tests.solver.test_scan_warnings import IN_FAILURE_AREA_ONLY

RAFT = SAMPLES / "raft-3to1-redirect.rig.json"
A2_WARNING = 'If the "bank boulder" anchor lets go, '


def _raft_officer_in_a2_path():
    rig = load_rig(RAFT)
    return rig.with_point(replace(rig.point("P1"), x=IN_FAILURE_AREA_ONLY[0], y=IN_FAILURE_AREA_ONLY[1]))


def _dock_texts(window) -> list[str]:
    lst = window.live.panel.warnings
    return [lst.item(i).text() for i in range(lst.count())]


def test_the_forces_dock_names_the_failure_once_the_scan_has_run(main_window, qtbot):
    rig = _raft_officer_in_a2_path()
    main_window.document.replace_all(rig, RAFT)
    qtbot.waitUntil(lambda: main_window.what_if.scan is not None
                    and main_window.what_if.scan.rig is main_window.document.rig, timeout=15000)
    texts = _dock_texts(main_window)
    assert any(A2_WARNING in t and "safety officer" in t for t in texts), texts
    assert not any("bight of" in t for t in texts), "no fixed-bight warning once the scan has run"
    # the dock and the What-if list say the same thing
    people = main_window.what_if.panel.people
    whatif = [people.item(i).text() for i in range(people.count())]
    assert any(A2_WARNING in t for t in whatif)


def test_before_a_scan_the_dock_says_its_bight_warning_is_the_quick_estimate(main_window, qtbot):
    from solver.analysis import analyse
    from solver.danger import danger_zones

    rig0 = load_rig(RAFT)
    bight = next(z for z in danger_zones(rig0, analyse(rig0)) if z.kind == "bight" and z.subject == "A2")
    spot = bight.geometry.representative_point()
    rig = rig0.with_point(replace(rig0.point("P1"), x=spot.x, y=spot.y))
    main_window.what_if.timer.setInterval(60000)  # hold the scan back: the quick result alone
    main_window.document.replace_all(rig, RAFT)
    qtbot.waitUntil(lambda: main_window.live.scheduler.settled and main_window.live.panel.result is not None
                    and any("bight of" in t for t in _dock_texts(main_window)), timeout=15000)
    quick = [t for t in _dock_texts(main_window) if "bight of" in t]
    assert all("quick estimate" in t and "`ropewright failures`" in t for t in quick)


def test_render_draws_the_computed_areas_and_names_the_failure(qapp, tmp_path):
    from sketchpad.export import Drawing
    from sketchpad.pages.zone_names import failure_key_text

    rig = _raft_officer_in_a2_path()
    d = Drawing(rig, scan_failures=True)
    assert {z.kind for z in d.zones} == {"failure", "recoil"} and d.computed_zones
    assert any(z.geometry.contains(ShPoint(*IN_FAILURE_AREA_ONLY)) for z in d.zones if z.kind == "failure")
    assert any(w.message.startswith(A2_WARNING) for w in d.result.warnings)
    assert not any("bight of" in w.message for w in d.result.warnings)
    assert 'if the "bank boulder" anchor lets go' in failure_key_text(d.zones)
    # the command writes it (PDF: its text read back)
    from solver.cli import main

    src = tmp_path / "raft.rig.json"
    save_rig(rig, src)
    out = tmp_path / "raft.pdf"
    assert main(["render", str(src), "-o", str(out)]) == 0
    text = " ".join(" ".join((p.extract_text() or "").split()) for p in pypdf.PdfReader(out).pages)
    assert "failure area (computed)" in text and "Failure areas (each component let go alone)" in text
    assert "inside of bight" not in text


def test_the_report_and_brief_name_the_failure_in_their_warnings(qapp, tmp_path):
    from sketchpad.pages.brief import write_brief
    from sketchpad.report import write_report

    rig = _raft_officer_in_a2_path()
    # the report prints the whole warning; the one-page brief says who stands inside which failure's area
    for write, name, said in ((write_report, "report.pdf", 'If the "bank boulder" anchor lets go, '),
                              (write_brief, "brief.pdf", 'INSIDE a danger zone: if the "bank boulder" anchor lets go')):
        out = tmp_path / name
        write(rig, out)
        text = " ".join(" ".join((p.extract_text() or "").split()) for p in pypdf.PdfReader(out).pages)
        assert said in text, name
        assert "bight of main line" not in text and "failure area (computed)" in text, name
