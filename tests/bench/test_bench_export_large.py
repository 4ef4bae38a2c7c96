"""Speed of a drawing PDF and a report of a large rig at the format's limits of text: 300 ropes and 600
anchors, every label 200 characters (drawn elided to 48).

A label's halo drawn on a vector page as a stroked glyph outline made a PDF's writer grow faster
than the labels' number (1,000 such ropes: 35 s, and 76 s for a report); the measured ratio of
1,000 to 250 ropes is now about 3.5 (near-linear).  Correctness is asserted, never time; measure
with ``python -m pytest tests/bench/test_bench_export_large.py --benchmark-enable``.
"""

from __future__ import annotations

from solver.analysis import analyse
from solver.model import Pass, Point, Rig, Rope


def long_label_rig(n: int) -> Rig:
    """``n`` ropes, each tied between two anchors of its own, every label as long as the format allows."""
    points, ropes = [], []
    for i in range(n):
        x, y = (i % 25) * 3.0, (i // 25) * 3.0
        points += [Point(f"A{i}", "anchor", x, y, label="L" * 200), Point(f"B{i}", "anchor", x + 2.0, y + 1.0)]
        ropes.append(Rope(f"R{i}", "kern-11", (Pass(f"A{i}"), Pass(f"B{i}")), label="R" * 200))
    return Rig(points=tuple(points), ropes=tuple(ropes), title="T" * 200)


def test_pdf_drawing_of_300_long_labelled_ropes(benchmark, tmp_path, qapp):
    from sketchpad.export import export_drawing

    rig = long_label_rig(300)
    result = analyse(rig)
    assert result.ok, result.message
    path = tmp_path / "big.pdf"
    benchmark.pedantic(export_drawing, args=(rig, path), kwargs={"result": result}, rounds=1, iterations=1)
    assert path.read_bytes().startswith(b"%PDF")


def test_report_of_300_long_labelled_ropes(benchmark, tmp_path, qapp):
    from sketchpad.report import write_report

    rig = long_label_rig(300)
    result = analyse(rig)
    path = tmp_path / "big-report.pdf"
    report = benchmark.pedantic(write_report, args=(rig, path), kwargs={"result": result}, rounds=1, iterations=1)
    assert report.pages >= 3 and path.read_bytes().startswith(b"%PDF")
