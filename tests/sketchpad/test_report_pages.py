"""The report's pages: no heading left alone at a page foot, and no smaller drawing unless it saves a page.

The pages are read back with poppler's pdftotext (an independent PDF reader), page by page in
``-layout`` mode; the headings are the ones the report's page flow was asked to place.
"""

from __future__ import annotations

import shutil
import subprocess
import unicodedata

import pytest

from sketchpad.report_flow import Flow
from tests.conftest import SAMPLES

SAMPLE_NAMES = tuple(sorted(p.name[: -len(".rig.json")] for p in SAMPLES.glob("*.rig.json")))


def _words(text: str) -> str:
    return " ".join(unicodedata.normalize("NFKC", text).split())


def page_bodies(pdf, pages: int) -> list[list[str]]:
    """Each page's non-empty text lines above its footer (the footer begins "Ropewright — ")."""
    out = []
    for n in range(1, pages + 1):
        text = subprocess.run(["pdftotext", "-layout", "-f", str(n), "-l", str(n), str(pdf), "-"],
                              check=True, capture_output=True, text=True).stdout
        lines = [_words(line) for line in text.splitlines() if line.strip()]
        foot = max((i for i, line in enumerate(lines) if line.startswith("Ropewright —")), default=len(lines))
        out.append(lines[:foot])
    return out


def is_heading_line(line: str, headings: list[str]) -> bool:
    """A line that is a heading or a wrapped part of one."""
    return len(line) >= 4 and any(line in h for h in headings)


@pytest.mark.parametrize("name", SAMPLE_NAMES)
def test_no_page_of_a_sample_report_ends_with_a_heading(qapp, tmp_path, monkeypatch, name):
    if shutil.which("pdftotext") is None:
        pytest.skip("poppler-utils (pdftotext) is not installed")
    from sketchpad.report import write_report
    from solver.rigfile import load_rig

    headings: list[str] = []
    placed = Flow.heading

    def recording(self, text: str) -> None:
        headings.append(_words(text))
        placed(self, text)

    monkeypatch.setattr(Flow, "heading", recording)
    path = SAMPLES / f"{name}.rig.json"
    report = write_report(load_rig(path), tmp_path / f"{name}.pdf", source=str(path))
    assert headings, "the report placed no headings"
    bodies = page_bodies(report.path, report.pages)
    assert len(bodies) == report.pages
    for n, body in enumerate(bodies, start=1):
        assert body, f"page {n} is empty"
        assert not is_heading_line(body[-1], headings), f"page {n} of {name} ends with the heading {body[-1]!r}"


def _counting_flow(height: float = 500.0) -> Flow:
    from PySide6.QtCore import QRectF
    from PySide6.QtGui import QImage

    device = QImage(10, 10, QImage.Format_RGB32)
    return Flow(device, None, QRectF(0, 0, 400, height), lambda p, n: None, lambda: None)


def test_a_heading_goes_to_the_next_page_with_a_figure_that_does_not_fit(qapp):
    flow = _counting_flow()
    flow.block(420, lambda p, r: None)  # 80 px left: room for the heading, not for the figure after it
    flow.heading("A section")
    flow.block(200, lambda p, r: None)
    assert flow.page == 2
    assert flow.y > flow.content.top() + 200  # the heading sits above the figure on page 2


def test_a_heading_goes_to_the_next_page_with_a_table_whose_first_row_does_not_fit(qapp):
    from sketchpad.pages.table import Table

    flow = _counting_flow()
    flow.block(470, lambda p, r: None)  # 30 px left: a heading fits, not a header and a row as well
    flow.table(Table("Rows", ("a", "b"), [("1", "2"), ("3", "4")], (1.0, 1.0)))
    assert flow.page == 2


def test_a_schematic_is_drawn_shorter_in_the_room_left_rather_than_leaving_it_blank(qapp):
    """A figure with a least height fills the room left on the page when that is at least its least height."""
    flow = _counting_flow()
    flow.block(200, lambda p, r: None)
    drawn = flow.block(400, lambda p, r: None, least=250, after=20)
    assert flow.page == 1
    assert drawn == pytest.approx(500 - 200 - 20)
    drawn = flow.block(400, lambda p, r: None, least=250)  # no room at all: a whole figure on the next page
    assert (flow.page, drawn) == (2, 400)


@pytest.mark.parametrize("pages, chosen", [
    ((5, 4, 4, 4), 1),  # the second layout reaches the pages aimed for
    ((5, 5, 5, 5), 0),  # no layout saves a page: the drawing keeps its full size
    ((4, 3, 3, 3), 0),  # the first layout already fits the pages aimed for
    ((5, 5, 5, 4), 3),
    ((7, 5, 5, 5), 0),  # two pages over: the smaller layouts are not tried (they save well under a page)
])
def test_a_smaller_layout_is_chosen_only_when_it_saves_a_page(pages, chosen):
    from sketchpad.report import LAYOUTS, choose_layout

    counts = dict(zip(LAYOUTS, pages))
    sizes, total = choose_layout(counts.__getitem__, 4)
    assert sizes == LAYOUTS[chosen]
    assert total == pages[chosen]
