"""The pull needed is solved once the drawing is still, never on a drag step (sketchpad.live_solve)."""

from __future__ import annotations

from pathlib import Path

from sketchpad.document import Document
from sketchpad.live_solve import SolveScheduler
from solver.rigfile import load_rig

SAMPLE = Path(__file__).resolve().parents[2] / "samples" / "vector-pull.rig.json"


def test_drag_steps_carry_no_pull_needed_and_the_pause_brings_it(qtbot):
    doc = Document(load_rig(SAMPLE))
    sched = SolveScheduler(doc, delay_ms=0, settle_ms=150)
    got, during = [], []
    sched.result_ready.connect(got.append)
    sched.result_ready.connect(lambda r: during.append((r, sched.settled)))
    sched.solve_now()
    assert got and got[-1].ok and "L1" in got[-1].needs  # a settled analysis has it
    hand = doc.rig.point("V1")
    for i in range(6):  # a drag: previews closer together than the settle time
        doc.preview(doc.rig.moved("V1", hand.x + 0.2 * i, hand.y))
        qtbot.wait(20)
    drag = [r for r, settled in during if not settled]  # delivered while the drawing moved
    assert drag and all(r.ok and not r.needs for r in drag)
    qtbot.waitUntil(lambda: bool(sched.settled and got[-1].needs), timeout=5000)
    assert got[-1].needs["L1"].required_N == 2000.0
