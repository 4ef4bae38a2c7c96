"""The manual's slow part, run on the solve worker: every rig read, analysed, let go component by component
(the failure scan), swept over its haul force and its haul planned, ready for :func:`sketchpad.pages.manual.write_manual`.

The open rig reuses the What-if dock's finished scan and the analysis on screen
(:func:`sketchpad.export_scan.ready_or_job`); each other rig file is read and worked through in turn,
the progress told after each, and a cancel seen before the next.
"""

from __future__ import annotations

import pathlib
from typing import Callable, Sequence

from solver.model import Rig


def manual_chapters(window, rig: Rig, source: str | None, rig_dir: pathlib.Path | None,
                    others: Sequence[str | pathlib.Path], cancelled: list) -> Callable[[Callable], list]:
    """The job (``compute(report)``) that makes the manual's chapters: the open ``rig`` first, then each file of
    ``others``; ``report(done, total, title)`` after each; :class:`sketchpad.export_scan.Cancelled` once
    ``cancelled`` has an entry; ExportError naming a file that cannot be read."""
    from sketchpad.export_scan import ready_or_job

    ready, own_job = ready_or_job(window, rig, report=True)

    def compute(report: Callable[[int, int, str], None]) -> list:
        from sketchpad.export import ExportError
        from sketchpad.export_scan import Cancelled, prepare
        from sketchpad.pages.manual import Chapter, ManualError, load_chapters

        total = 1 + len(others)
        own = ready or own_job()
        title = rig.title or (pathlib.Path(source).name if source else "Untitled rig")
        chapters = [Chapter(rig, own.result, source, rig_dir, title, scan=own.scan, solves=own.solves)]
        report(1, total, title)
        for i, p in enumerate(others):
            if cancelled:
                raise Cancelled("cancelled: no manual was written")
            try:
                (ch,) = load_chapters([p])
            except ManualError as exc:
                raise ExportError(str(exc)) from exc
            done = prepare(ch.rig, ch.result, report=True)
            ch.scan, ch.solves = done.scan, done.solves
            chapters.append(ch)
            report(2 + i, total, ch.title)
        if cancelled:
            raise Cancelled("cancelled: no manual was written")
        return chapters

    return compute


__all__ = ["manual_chapters"]
