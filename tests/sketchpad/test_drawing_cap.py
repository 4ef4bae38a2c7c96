"""A rig too big for the window and its drawings is refused there in words, before anything draws it.

The file format holds up to 20,000 points (the solver and ``ropewright solve`` handle them); the
window and the PNG/SVG/PDF drawings and report draw at most ``limits.DRAWN_POINTS`` points and
``limits.DRAWN_ROPES`` ropes (solver/limits.py says why), and say so rather than freeze.
"""

from __future__ import annotations

import json

import pytest

from solver import limits
from solver.rigfile import load_rig
from tests.conftest import SAMPLES
from tests.sketchpad.test_files import make_window, data_dir  # noqa: F401 - fixtures used by name


def _crowd(tmp_path):
    d = json.loads((SAMPLES / "raft-3to1-redirect.rig.json").read_text(encoding="utf-8"))
    d["points"] += [{"id": f"crowd{i}", "kind": "person", "x": i % 50, "y": -(i // 50)} for i in range(limits.DRAWN_POINTS)]
    path = tmp_path / "crowd.rig.json"
    path.write_text(json.dumps(d), encoding="utf-8")
    return path


def test_the_window_refuses_a_rig_too_big_to_draw_and_keeps_the_sketch(make_window, tmp_path):
    window, doc, ctl, dialogs = make_window()
    before = doc.rig
    assert not ctl.open(_crowd(tmp_path))
    kind, _title, _text, detail = dialogs.asked[-1]
    assert kind == "error" and f"at most {limits.DRAWN_POINTS:,} points" in detail and "ropewright solve" in detail
    assert doc.rig is before


def test_drawings_and_reports_refuse_a_rig_too_big_to_draw(tmp_path, qapp):
    from sketchpad.export import ExportError, export_drawing
    from sketchpad.report import write_report

    rig = load_rig(_crowd(tmp_path))  # the file format itself holds it
    with pytest.raises(ExportError, match="at most"):
        export_drawing(rig, tmp_path / "d.pdf")
    with pytest.raises(ExportError, match="at most"):
        write_report(rig, tmp_path / "r.pdf")
    assert not (tmp_path / "d.pdf").exists() and not (tmp_path / "r.pdf").exists()
