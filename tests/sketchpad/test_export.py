"""Drawing exports: PNG size and content, SVG structure and labels, PDF page size, the render command, File menu.

Expected numbers come from ``solver.analysis.analyse`` formatted by ``solver.units``
(the same functions the app uses), never typed in by hand.
"""

from __future__ import annotations

import json
import xml.etree.ElementTree as ET
from dataclasses import replace

import pytest
from PySide6.QtGui import QImage

from solver.analysis import analyse
from solver.cli import main
from solver.directions import direction_text
from solver.model import Display
from solver.rigfile import load_rig, rig_from_dict
from solver.units import format_force
from tests.conftest import SAMPLES

RAFT = SAMPLES / "raft-3to1-redirect.rig.json"
SVG_NS = "{http://www.w3.org/2000/svg}"

#: a free point with a force and nothing holding it: the solver reports a mechanism
LOOSE_RIG = {
    "format": "ropewright-rig", "version": 1, "title": "loose point",
    "points": [{"id": "A1", "kind": "anchor", "x": 0, "y": 0}, {"id": "P1", "kind": "point", "x": 5, "y": 0},
               {"id": "P2", "kind": "point", "x": 5, "y": 5}],
    "ropes": [{"id": "R1", "material": "kern-11", "path": [{"at": "A1"}, {"at": "P1"}]}],
    "forces": [{"at": "P2", "magnitude_N": 500, "direction_deg": 90}],
}


@pytest.fixture(scope="module")
def raft():
    rig = load_rig(RAFT)
    return rig, analyse(rig)


def _distinct_colours(img: QImage, step: int = 7) -> int:
    return len({img.pixel(x, y) for x in range(0, img.width(), step) for y in range(0, img.height(), step)})


def test_png_has_the_requested_size_and_shows_the_drawing_and_the_panel(qapp, tmp_path, raft):
    from sketchpad.export import export_drawing

    rig, result = raft
    out = tmp_path / "raft.png"
    drawing = export_drawing(rig, out, (900, 640), result)
    img = QImage(str(out))
    assert (img.width(), img.height()) == (900, 640)
    # not blank: many colours both in the drawing (left) and in the title panel (right)
    left = img.copy(0, 0, 600, 640)
    right = img.copy(700, 0, 200, 640)
    assert _distinct_colours(left) > 40
    assert _distinct_colours(right) > 5
    # the overlay placed labels with the solved numbers (label model from sketchpad.overlay)
    texts = {line for lab in drawing.force_item.labels if lab.placed for line in lab.lines}
    placed_tensions = [format_force(s.tension_N, rig.display.force) for s in result.segments]
    assert any(t in texts for t in placed_tensions), (placed_tensions, texts)


def test_png_defaults_to_1600_by_1100(qapp, tmp_path, raft):
    from sketchpad.export import export_drawing

    rig, result = raft
    out = tmp_path / "d.png"
    export_drawing(rig, out, None, result)
    img = QImage(str(out))
    assert (img.width(), img.height()) == (1600, 1100)


def test_every_piece_and_point_is_inside_the_picture(qapp, raft):
    from sketchpad.export import Drawing

    rig, result = raft
    d = Drawing(rig, result)
    fit = d.fit_into(1200, 800)
    for x, y in result.points.values():
        assert fit.source.contains(x, -y), (x, y, fit.source)
    for lab in d.force_item.labels:
        if lab.placed:
            x, y, w, h = lab.rect
            k = fit.px_per_m
            assert fit.source.contains(lab.at[0] + x / k, lab.at[1] + y / k), lab.lines


def test_svg_parses_and_holds_paths_labels_and_rope_names(qapp, tmp_path, raft):
    from sketchpad.export import export_drawing

    rig, result = raft
    out = tmp_path / "raft.svg"
    export_drawing(rig, out, (1200, 800), result)
    root = ET.parse(out).getroot()  # raises if the SVG is not well-formed XML
    assert root.tag == f"{SVG_NS}svg"
    assert len(root.findall(f".//{SVG_NS}path")) > 20
    text = " ".join("".join(t.itertext()) for t in root.iter(f"{SVG_NS}text"))
    text = " ".join(text.split())
    # the placer may leave a crowded label off, so most (not all) tensions are drawn
    shown = [format_force(s.tension_N, rig.display.force) for s in result.segments
             if format_force(s.tension_N, rig.display.force) in text]
    assert len(shown) >= 3, text[:400]
    # the three MAs, each named (the raft Z: nominal 3:1 by strand count)
    assert f"MA nominal 3:1 · ideal {result.ma_ideal:.2f}:1 · actual {result.ma_actual:.2f}:1" in text
    for r in rig.ropes:
        assert r.name in text
    # both caution lines: the planning-aid one and the one on engineered systems and what is not modelled
    assert "Planning aid only" in text and "qualified engineer" in text and "not modelled" in text
    # the labels read as bearings from north, the same numbers the dock and the report print
    # (the alder is pulled toward the grab: atan2(9, -2.6) = 106° as drawn, 103° solved -- ESE either way)
    for aid, a in result.anchors.items():
        assert f"toward {direction_text(a.direction_deg, 'plan', a.force_N)}" in text, aid


def test_pdf_page_is_landscape_a4_for_metric_and_letter_for_imperial(qapp, tmp_path, raft):
    import pypdf

    from sketchpad.export import export_drawing

    rig, result = raft
    export_drawing(rig, tmp_path / "m.pdf", None, result)
    imperial = replace(rig, display=Display("ft", "lbf"))
    export_drawing(imperial, tmp_path / "i.pdf")
    m = pypdf.PdfReader(tmp_path / "m.pdf").pages[0].mediabox
    i = pypdf.PdfReader(tmp_path / "i.pdf").pages[0]
    # ISO 216 A4 is 210 x 297 mm = 595.3 x 841.9 pt; ANSI Letter 8.5 x 11 in = 612 x 792 pt
    assert (round(float(m.width)), round(float(m.height))) == (842, 595)
    assert (round(float(i.mediabox.width)), round(float(i.mediabox.height))) == (792, 612)
    text = " ".join(i.extract_text().split())
    assert " lbf" in text and "ft" in text and " kN" not in text


def test_failed_solve_still_draws_the_sketch_and_names_the_reason(qapp, tmp_path):
    from sketchpad.export import export_drawing

    rig = rig_from_dict(LOOSE_RIG)
    out = tmp_path / "loose.svg"
    d = export_drawing(rig, out)
    assert not d.result.ok
    text = " ".join(" ".join("".join(t.itertext()) for t in ET.parse(out).getroot().iter(f"{SVG_NS}text")).split())
    assert "not held" in text and "No forces are shown" in text
    assert d.force_item.fail_point == (5.0, -5.0)


def test_unknown_suffix_and_bad_size_are_refused_in_words(qapp, tmp_path, raft):
    from sketchpad.export import ExportError, export_drawing, parse_size

    with pytest.raises(ExportError, match=r"\.png, \.svg or \.pdf"):
        export_drawing(raft[0], tmp_path / "x.bmp")
    with pytest.raises(ExportError, match="WIDTHxHEIGHT"):
        parse_size("big")
    with pytest.raises(ExportError, match="200 to 12000"):
        parse_size("10x10")
    assert parse_size("800x600") == (800, 600)


# --- the command line ------------------------------------------------------------------------
def test_render_cli_writes_a_png_of_the_given_size(qapp, tmp_path, capsys):
    out = tmp_path / "cli.png"
    assert main(["render", str(RAFT), "-o", str(out), "--size", "800x560"]) == 0
    img = QImage(str(out))
    assert (img.width(), img.height()) == (800, 560)
    assert "wrote" in capsys.readouterr().out


def test_render_cli_on_a_broken_rig_file_exits_2_with_a_message(qapp, tmp_path, capsys):
    bad = tmp_path / "bad.rig.json"
    bad.write_text('{"format": "ropewright-rig", "version": 1, "points": [', encoding="utf-8")
    out = tmp_path / "bad.png"
    assert main(["render", str(bad), "-o", str(out)]) == 2
    err = capsys.readouterr().err
    assert "bad.rig.json" in err and "Traceback" not in err
    assert not out.exists()


def test_render_cli_missing_file_and_wrong_suffix_exit_2(qapp, tmp_path, capsys):
    assert main(["render", str(tmp_path / "none.rig.json"), "-o", str(tmp_path / "a.png")]) == 2
    err = capsys.readouterr().err
    assert "none.rig.json" in err and "no such file" in err
    assert main(["render", str(RAFT), "-o", str(tmp_path / "a.gif")]) == 2
    assert ".png, .svg or .pdf" in capsys.readouterr().err


def test_render_cli_on_a_rig_that_does_not_solve_writes_it_and_exits_3(qapp, tmp_path, capsys):
    rig_path = tmp_path / "loose.rig.json"
    rig_path.write_text(json.dumps(LOOSE_RIG), encoding="utf-8")
    out = tmp_path / "loose.png"
    assert main(["render", str(rig_path), "-o", str(out)]) == 3
    assert out.exists()
    assert "not held" in capsys.readouterr().err


# --- File menu -------------------------------------------------------------------------------
def test_file_menu_exports_drawing_and_report_to_the_chosen_paths(main_window, tmp_path, qtbot):
    asked = []
    exports = main_window.exports
    assert exports.action_drawing in main_window.menu_file.actions()
    assert exports.action_report in main_window.menu_file.actions()
    main_window.document.replace_all(load_rig(RAFT), RAFT)
    exports.ask_path = lambda parent, title, start, filters: asked.append((title, start)) or tmp_path / "menu.svg"
    exports.action_drawing.trigger()
    qtbot.waitUntil(lambda: not exports.busy, timeout=60000)  # the failure scan runs on the solve worker
    assert (tmp_path / "menu.svg").exists()
    assert asked[0][1].endswith("raft-3to1-redirect.png")
    assert "Drawing saved" in exports.last_message
    exports.ask_path = lambda *a: tmp_path / "menu-report"
    exports.action_report.trigger()
    assert (tmp_path / "menu-report.pdf").exists()
    assert "Report saved" in exports.last_message


def test_cancelled_export_writes_nothing_and_a_bad_folder_is_reported(main_window, tmp_path):
    shown = []
    exports = main_window.exports
    exports.show = lambda parent, title, text, error: shown.append(text)
    exports.ask_path = lambda *a: None
    assert exports.export_drawing() is None
    assert list(tmp_path.iterdir()) == []
    exports.ask_path = lambda *a: tmp_path / "missing" / "x.png"
    assert exports.export_drawing() is None
    assert shown and "does not exist" in shown[0]

