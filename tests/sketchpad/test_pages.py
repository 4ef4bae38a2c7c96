"""Pages for the manual and the briefing: framing, schematic, symbol key, greyscale, brief and manual PDFs.

PDF text is read back with pypdf; pictures are checked by their pixels. Page numbers and titles
are compared with what the code laid out (each rig's title from its file, never typed here).
"""

from __future__ import annotations

import math
import re
import unicodedata
from dataclasses import replace

import pypdf
import pytest
from PySide6.QtCore import QPointF, QRectF
from PySide6.QtGui import QImage, QPainter, QPainterPath

from solver.analysis import analyse
from solver.cautions import LIMITS_CAUTION, SHORT_CAUTION
from solver.cli import main
from solver.rigfile import load_rig
from tests.conftest import SAMPLES

RAFT = SAMPLES / "raft-3to1-redirect.rig.json"
ALL = sorted(SAMPLES.glob("*.rig.json"))


def norm(text: str) -> str:
    return " ".join(unicodedata.normalize("NFKC", text).split())


def page_texts(path) -> list[str]:
    return [norm(p.extract_text()) for p in pypdf.PdfReader(path).pages]


def key_words():
    from sketchpad.pages.symbol_key import ENTRIES

    return [w for _, w in ENTRIES]


def has_key(text: str) -> bool:
    """Every key entry is on the page; a drawing showing the failure scan's computed areas keys those in the
    fixed bight's place."""
    from sketchpad.pages.symbol_key import COMPUTED_ENTRY, ENTRIES

    bight = dict(ENTRIES)["bight"]
    return all(w in text or (w == bight and COMPUTED_ENTRY[1] in text) for w in key_words())


# --- framing --------------------------------------------------------------------------------
@pytest.mark.parametrize("path", ALL, ids=lambda p: p.name)
def test_the_drawing_frames_the_rig_and_its_labels_do_not_overlap(qapp, path):
    from sketchpad.export import Drawing
    from sketchpad.pages.framing import label_boxes_px

    rig = load_rig(path)
    d = Drawing(rig)
    fit = d.fit_into(700.0, 360.0)
    xs = [p.x for p in rig.points] + [x for x, _ in d.result.points.values()]
    ys = [-p.y for p in rig.points] + [-y for _, y in d.result.points.values()]
    assert all(fit.source.contains(QPointF(x, y)) for x, y in zip(xs, ys))
    span_x = (max(xs) - min(xs)) * fit.px_per_m / 700.0
    span_y = (max(ys) - min(ys)) * fit.px_per_m / 360.0
    assert max(span_x, span_y) > 0.6  # the rig fills the frame along its longer side
    boxes = label_boxes_px(d.force_item.labels, fit.source, fit.px_per_m)
    page = QRectF(0, 0, 700.0, 360.0).adjusted(-0.5, -0.5, 0.5, 0.5)
    assert all(page.contains(b) for b in boxes)
    for i, a in enumerate(boxes):
        for b in boxes[i + 1:]:
            assert not a.adjusted(0.5, 0.5, -0.5, -0.5).intersects(b.adjusted(0.5, 0.5, -0.5, -0.5))
    # nor does any force label cover a site feature's name (water, banks) as Qt draws it
    from sketchpad.pages.framing import feature_label_boxes

    k, src = fit.px_per_m, fit.source
    names = [QRectF((x - src.left()) * k + bx, (y - src.top()) * k + by, bw, bh)
             for (x, y), (bx, by, bw, bh) in feature_label_boxes(d.scene, k)]
    assert names or not rig.site.features
    assert not [(a, b) for a in boxes for b in names if a.adjusted(0.5, 0.5, -0.5, -0.5).intersects(b)]


@pytest.mark.parametrize("path", ALL, ids=lambda p: p.name)
def test_printed_names_keep_apart(qapp, path):
    from sketchpad.export import Drawing
    from sketchpad.pages.names import name_boxes_of

    rig = load_rig(path)
    d = Drawing(rig)
    fit = d.fit_into(680.0, 300.0)
    k = fit.px_per_m
    names = [QRectF(x * k + bx, y * k + by, bw, bh) for (x, y), (bx, by, bw, bh) in name_boxes_of(d.scene, rig)]
    names += [QRectF(x * k + bx, y * k + by, bw, bh) for (x, y), (bx, by, bw, bh) in d._rope_name_boxes()]
    assert len(names) >= len(rig.points)
    for i, a in enumerate(names):
        for b in names[i + 1:]:
            assert not a.adjusted(1, 1, -1, -1).intersects(b.adjusted(1, 1, -1, -1)), (a, b)


def test_a_print_frame_is_what_the_drawing_shows(qapp):
    from sketchpad.export import Drawing

    rig = replace(load_rig(RAFT), print_frame=(-30.0, -15.0, 30.0, 30.0))
    fit = Drawing(rig).fit_into(700.0, 360.0)
    frame = QRectF(-30.0, -30.0, 60.0, 45.0)  # scene: y down
    assert fit.source.contains(frame)
    # the frame's height is the limiting side: it takes the height less the label room
    from sketchpad.pages.framing import LABEL_ROOM_PX

    assert fit.px_per_m == pytest.approx((360.0 - 2 * min(LABEL_ROOM_PX, 0.12 * 360.0)) / 45.0)


def test_the_locator_inset_appears_only_when_the_site_reaches_beyond(qapp):
    from sketchpad.export import Drawing
    from sketchpad.pages.framing import needs_inset

    rig = load_rig(RAFT)
    d = Drawing(rig)
    d.fit_into(500.0, 500.0)
    assert needs_inset(rig, d.fit.source)  # the river runs 62 m across; the rig is ~30 m
    wide = Drawing(replace(rig, print_frame=(-40.0, -15.0, 40.0, 30.0)))
    wide.fit_into(500.0, 500.0)
    assert not needs_inset(rig, wide.fit.source)


# --- schematic ------------------------------------------------------------------------------
def _schematic(rig, size=(900, 600)):
    from sketchpad.pages.schematic import paint_schematic

    image = QImage(*size, QImage.Format_ARGB32)
    image.fill(0xFFFFFFFF)
    p = QPainter(image)
    try:
        layout = paint_schematic(p, QRectF(0, 0, *size), rig, analyse(rig))
    finally:
        p.end()
    return layout, image


def test_schematic_draws_strands_side_by_side_with_their_t_units(qapp):
    from sketchpad import theme

    rig = load_rig(RAFT)
    layout, _ = _schematic(rig)
    res = analyse(rig)
    # the Z's two strands between the alder and the rope grab: parallel, one gap apart
    between = [s for s in layout.strands if {rig.rope(s.rope).path[s.index].at, rig.rope(s.rope).path[s.index + 1].at} == {"A1", "G1"}]
    assert len(between) == 2
    a, b = between
    da, db = a.b - a.a, b.b - b.a
    sin = abs(da.x() * db.y() - da.y() * db.x()) / (math.hypot(da.x(), da.y()) * math.hypot(db.x(), db.y()))
    assert sin < math.sin(math.radians(2.0))  # side by side (the sheave beside each point bends them slightly)
    n = QPointF(-da.y(), da.x()) / math.hypot(da.x(), da.y())
    gap = abs(QPointF.dotProduct((b.a + b.b) / 2 - (a.a + a.b) / 2, n))
    assert gap == pytest.approx(theme.SCHEMATIC_GAP_PX, rel=0.3)
    # labels: strand count units beside the solver's tension, in the rig's units
    from solver.units import format_force

    seg = {(s.rope, s.index): s for s in res.segments}
    texts = {(s.rope, s.index): s.text for s in layout.strands}
    assert texts[("main", 0)] == f"3T  {format_force(seg[('main', 0)].tension_N, 'kN')}"
    assert texts[("main", 4)].startswith("1T")
    assert len(layout.sheaves) == 3  # bank boulder, alder, rope grab


@pytest.mark.parametrize("path", ALL, ids=lambda p: p.name)
def test_schematic_labels_never_overlap(qapp, path):
    layout, _ = _schematic(load_rig(path))
    paths = []
    for poly in layout.labels:
        pp = QPainterPath()
        pp.addPolygon(poly)
        paths.append(pp)
    for i, a in enumerate(paths):
        for b in paths[i + 1:]:
            assert not a.intersected(b).boundingRect().width() > 0.5
    assert len(layout.labels) + layout.skipped >= len([s for s in layout.strands if s.text])


# --- symbol key and greyscale -----------------------------------------------------------------
def _swatch_image(kind: str, grey: bool = True) -> QImage:
    from sketchpad.pages.symbol_key import paint_symbol

    image = QImage(40, 30, QImage.Format_ARGB32)
    image.fill(0xFFFFFFFF)
    p = QPainter(image)
    paint_symbol(p, QPointF(20, 15), kind)
    p.end()
    return image.convertToFormat(QImage.Format_Grayscale8) if grey else image


def _dark(image: QImage, below: int = 90) -> int:
    return sum(1 for y in range(image.height()) for x in range(image.width()) if image.pixelColor(x, y).value() < below)


def test_rope_use_classes_differ_in_greyscale_by_pattern(qapp):
    from sketchpad import theme

    # rails only: their dark pixels grow class by class (none, dotted, dashed, solid heavy)
    counts = [_dark(_swatch_image(f"class:{i}")) for i in range(len(theme.UTIL_CLASSES))]
    assert counts == sorted(counts) and len(set(counts)) == len(counts), counts
    # the colours alone would not do: the ramp's green and amber are close in grey (luminance)
    g = theme.utilization_colour(0.0)
    a = theme.utilization_colour(0.9)
    assert abs(QImage_grey(g) - QImage_grey(a)) < 60


def QImage_grey(colour) -> int:
    """Grey level of a colour with Qt's own conversion (qGray weights)."""
    from PySide6.QtGui import qGray

    return qGray(colour.rgb())


def test_zone_hatches_differ_in_greyscale(qapp):
    bight, recoil = _swatch_image("bight"), _swatch_image("recoil")
    differ = sum(1 for y in range(30) for x in range(40) if bight.pixelColor(x, y) != recoil.pixelColor(x, y))
    assert differ > 30  # hatched in opposite directions: the two keep apart in grey


def test_greyscale_png_has_no_colour_and_keeps_the_rails(qapp, tmp_path):
    out = tmp_path / "grey.png"
    assert main(["render", str(RAFT), "-o", str(out), "--greyscale", "--size", "900x600"]) == 0
    image = QImage(str(out))
    assert image.format() == QImage.Format_Grayscale8
    colour = tmp_path / "colour.png"
    assert main(["render", str(RAFT), "-o", str(colour), "--size", "900x600"]) == 0
    c = QImage(str(colour))
    assert any(abs(c.pixelColor(x, y).red() - c.pixelColor(x, y).blue()) > 40 for x in range(0, 900, 7) for y in range(0, 600, 7))


def test_rails_go_on_every_loaded_piece(qapp):
    from sketchpad.export import Drawing
    from sketchpad.pages.greyscale import paint_drawing_rails, util_class

    rig = load_rig(RAFT)
    d = Drawing(rig)
    image = QImage(700, 400, QImage.Format_ARGB32)
    p = QPainter(image)
    d.paint(p, QRectF(0, 0, 700, 400))
    n = paint_drawing_rails(p, QRectF(0, 0, 700, 400), d)
    p.end()
    assert n == sum(1 for s in d.result.segments if s.tension_N > 1.0 and util_class(s.utilization) is not None)


# --- report, brief, manual PDFs ----------------------------------------------------------------
def test_every_report_page_with_a_drawing_has_the_key(qapp, tmp_path):
    from sketchpad.report import write_report

    rep = write_report(load_rig(RAFT), tmp_path / "r.pdf")
    pages = page_texts(rep.path)
    drawing_pages = [t for t in pages if "Rope use: share of allowed load" in t or "Schematic: strands side by side" in t]
    assert len(drawing_pages) >= 2
    for t in drawing_pages:
        assert has_key(t), [w for w in key_words() if w not in t]
    text = " ".join(pages)
    for heading in ("People and roles", "Rope lengths", "Gear list"):
        assert heading in text


def test_brief_is_one_page_with_every_part(qapp, tmp_path):
    out = tmp_path / "brief.pdf"
    assert main(["brief", str(RAFT), "-o", str(out)]) == 0
    pages = page_texts(out)
    assert len(pages) == 1
    t = pages[0]
    rig = load_rig(RAFT)
    for part in ("Commands", "Roles and where they stand", "Worst loads and margins", "What to watch",
                 "Planned by", "Checked by", "Date and time", "safety officer", norm(SHORT_CAUTION),
                 norm(LIMITS_CAUTION)):
        assert part in t, part
    assert has_key(t)
    assert norm(rig.title) in t


def test_brief_refuses_a_non_pdf_name(qapp, tmp_path, capsys):
    assert main(["brief", str(RAFT), "-o", str(tmp_path / "brief.png")]) == 2
    assert "PDF" in capsys.readouterr().err


@pytest.fixture(scope="module")
def manual(qapp, tmp_path_factory):
    from sketchpad.pages.manual import load_chapters, write_manual

    seen = []
    chapters = load_chapters(ALL, lambda *a: seen.append(a))
    path = tmp_path_factory.mktemp("manual") / "manual.pdf"
    m = write_manual(chapters, path, "Greyling River manual", progress=lambda *a: seen.append(a))
    return m, chapters, page_texts(path), seen


def test_manual_contents_give_the_right_pages(manual):
    m, chapters, pages, _ = manual
    assert len(pages) == m.pages
    contents = " ".join(pages[1:1 + m.contents_pages])
    for ch in chapters:
        title = norm(ch.title)
        found = re.search(re.escape(title) + r"\s*(\d+)", contents)
        assert found, title
        n = int(found.group(1))
        assert pages[n - 1].startswith(title)  # the rig's first page starts with its title


def test_manual_numbers_every_page_once_through_the_book(manual):
    m, chapters, pages, _ = manual
    for i, t in enumerate(pages, start=1):
        assert f"page {i} of {m.pages}" in t
    assert "Greyling River manual" in pages[0] and "Ropewright is a planning aid" in pages[0]
    assert sum(ch.pages for ch in chapters) + 1 + m.contents_pages == m.pages


def test_manual_pages_with_drawings_have_the_key_and_progress_counts_up(manual):
    m, chapters, pages, seen = manual
    drawing_pages = [t for t in pages if "Rope use: share of allowed load" in t or "Schematic: strands side by side" in t]
    assert len(drawing_pages) >= 2 * len(chapters)
    assert all(has_key(t) for t in drawing_pages)
    assert [s[0] for s in seen] == list(range(1, 2 * len(chapters) + 1))


def test_manual_names_a_file_it_cannot_read(qapp, tmp_path, capsys):
    bad = tmp_path / "bad.rig.json"
    bad.write_text("{not json")
    out = tmp_path / "m.pdf"
    assert main(["manual", str(RAFT), str(bad), "-o", str(out), "--no-progress"]) == 2
    assert "bad.rig.json" in capsys.readouterr().err
    assert not out.exists()


def test_schematic_render_writes_every_format(qapp, tmp_path):
    for ext in ("png", "svg", "pdf"):
        out = tmp_path / f"s.{ext}"
        assert main(["render", str(RAFT), "-o", str(out), "--schematic"]) == 0
        assert out.stat().st_size > 1000
    grey_svg = tmp_path / "g.svg"
    assert main(["render", str(RAFT), "-o", str(grey_svg), "--schematic", "--greyscale"]) == 0
    colours = set(re.findall(r"#([0-9a-fA-F]{6})", grey_svg.read_text()))
    assert colours and all(c[0:2] == c[2:4] == c[4:6] for c in colours)
    text = norm(" ".join(page_texts(tmp_path / "s.pdf")))
    assert "3T" in text and has_key(text)


def test_greyscale_pdf_pages_render_without_colour(qapp, tmp_path):
    """Rasterised by poppler's pdftoppm (an independent PDF renderer): a --greyscale briefing has no colour
    at all, the colour one has some."""
    import shutil
    import subprocess

    if shutil.which("pdftoppm") is None:
        pytest.skip("poppler-utils (pdftoppm) is not installed")
    spread = {}
    for grey in (True, False):
        out = tmp_path / f"brief-{grey}.pdf"
        assert main(["brief", str(RAFT), "-o", str(out)] + (["--greyscale"] if grey else [])) == 0
        subprocess.run(["pdftoppm", "-png", "-r", "30", str(out), str(tmp_path / f"p{grey}")], check=True)
        image = QImage(str(next(tmp_path.glob(f"p{grey}*.png"))))
        spread[grey] = max(max(c.red(), c.green(), c.blue()) - min(c.red(), c.green(), c.blue())
                           for c in (image.pixelColor(x, y) for x in range(0, image.width(), 2)
                                     for y in range(0, image.height(), 2)))
    assert spread[True] == 0 and spread[False] > 60


def test_a_rig_that_does_not_solve_gets_pages_that_say_so(qapp, tmp_path, capsys):
    import json

    from tests.sketchpad.test_export import LOOSE_RIG

    loose = tmp_path / "loose.rig.json"
    loose.write_text(json.dumps(LOOSE_RIG))
    out = tmp_path / "m.pdf"
    assert main(["manual", str(RAFT), str(loose), "-o", str(out), "--no-progress"]) == 3  # written, a rig failed
    assert "loose point" in capsys.readouterr().err
    text = " ".join(page_texts(out))
    assert "THE RIG DID NOT SOLVE" in text
    brief = tmp_path / "b.pdf"
    assert main(["brief", str(loose), "-o", str(brief)]) == 3
    assert "did not solve" in " ".join(page_texts(brief))


def test_manual_contents_read_the_same_with_poppler(manual, tmp_path):
    """pdftotext (poppler, an independent PDF reader) finds each title on the contents page with its page number."""
    import shutil
    import subprocess

    if shutil.which("pdftotext") is None:
        pytest.skip("poppler-utils (pdftotext) is not installed")
    m, chapters, _, _ = manual
    text = subprocess.run(["pdftotext", "-layout", "-f", "2", "-l", str(1 + m.contents_pages), str(m.path), "-"],
                          check=True, capture_output=True, text=True).stdout
    lines = [norm(line) for line in text.splitlines()]
    for ch in chapters:
        row = next(line for line in lines if line.startswith(norm(ch.title)))
        assert row.split()[-1] == str(ch.first_page)


def test_a_z_sketched_in_one_line_is_drawn_side_by_side(qapp):
    """The three-strokes sample draws its Z straight (load, grab, anchor and haul team on one line): the two
    strands between grab and anchor and the haul strand past the anchor are spread across that line."""
    from sketchpad import theme

    rig = load_rig(SAMPLES / "raft-three-strokes.rig.json")
    layout, _ = _schematic(rig)
    by_piece = {(s.rope, s.index): s for s in layout.strands}
    z = [by_piece[("main1", i)] for i in (1, 2, 3)]  # grab -> anchor, anchor -> grab, grab -> haul team
    assert len({s.bundle for s in z}) == 1
    d = z[0].b - z[0].a
    n = QPointF(-d.y(), d.x()) / math.hypot(d.x(), d.y())
    offsets = sorted(QPointF.dotProduct((s.a + s.b) / 2 - (z[0].a + z[0].b) / 2, n) for s in z)
    assert all(b - a > 0.6 * theme.SCHEMATIC_GAP_PX for a, b in zip(offsets, offsets[1:]))
    assert by_piece[("main1", 0)].bundle != z[0].bundle  # the load's strand ends where the Z starts
