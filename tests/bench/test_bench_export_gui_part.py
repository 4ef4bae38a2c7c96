"""How long File ▸ Export report keeps the GUI thread once the solve worker has done its part.

The report's analysis, failure scan, haul sweep and haul plan run on the solve worker
(:func:`sketchpad.export_scan.prepare`); what is left for the GUI thread is the page layout, the
drawing and the sweep plot's picture. The two benchmarks below are that remainder and the whole
report written the old way (everything on one thread), on the same sample; their ratio is the share of
the old freeze that remains. The PDFs are asserted to have the same page count (the texts are compared
in tests/sketchpad/test_export_worker.py). Measure with
``python -m pytest tests/bench/test_bench_export_gui_part.py --benchmark-enable``.
"""

from __future__ import annotations

from solver.rigfile import load_rig
from tests.conftest import SAMPLES

RAFT = SAMPLES / "raft-3to1-redirect.rig.json"


def test_report_gui_part_after_the_worker(benchmark, tmp_path, qapp):
    from sketchpad.export_scan import prepare
    from sketchpad.report import write_report

    rig = load_rig(RAFT)
    done = prepare(rig, report=True)
    path = tmp_path / "gui-part.pdf"
    report = benchmark.pedantic(write_report, args=(rig, path, done.result),
                                kwargs={"rig_dir": RAFT.parent, "scan": done.scan, "solves": done.solves},
                                rounds=3, iterations=1, warmup_rounds=1)
    whole = write_report(rig, tmp_path / "whole.pdf", rig_dir=RAFT.parent)
    assert report.pages == whole.pages and report.result.ok


def test_report_written_all_on_one_thread(benchmark, tmp_path, qapp):
    from sketchpad.report import write_report

    rig = load_rig(RAFT)
    report = benchmark.pedantic(write_report, args=(rig, tmp_path / "whole.pdf"), kwargs={"rig_dir": RAFT.parent},
                                rounds=3, iterations=1, warmup_rounds=1)
    assert report.result.ok and report.pages >= 2
