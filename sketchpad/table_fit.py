"""Column widths for a results table in a narrow dock: every column in view, long texts wrapped at spaces.

Each column wants its natural width (its widest cell or heading on one line); when they do not all fit,
the columns with room to give are narrowed in proportion to what they can give, never below their
widest single word (a number and its unit count as one), and their texts wrap onto a second line (headings too, through the model's
``wrapped`` headings).  Only when even the widest words do not fit does the table scroll.
"""

from __future__ import annotations

from PySide6.QtCore import QSortFilterProxyModel, Qt


class WrappedHeadings(QSortFilterProxyModel):
    """A sorting proxy whose horizontal headings may be shown wrapped (``wrapped``: section -> text with newlines)."""

    def __init__(self, parent=None) -> None:
        super().__init__(parent)
        self.wrapped: dict[int, str] = {}

    def headerData(self, section, orientation, role=Qt.DisplayRole):  # noqa: N802 - Qt override
        if orientation == Qt.Horizontal and role == Qt.DisplayRole and section in self.wrapped:
            return self.wrapped[section]
        if orientation == Qt.Horizontal and role == Qt.ToolTipRole:
            return super().headerData(section, orientation, Qt.DisplayRole)
        return super().headerData(section, orientation, role)


def is_quantity(text: str) -> bool:
    """True for a number with a short unit ("41 %", "2.37 kN", "450 lbf"): kept on one line."""
    words = text.split()
    return len(words) == 2 and words[0][:1].isdigit() and len(words[1]) <= 3


def shrink(natural: list[float], minimal: list[float], available: float) -> list[float]:
    """Widths: ``natural`` when they fit in ``available``, else each column narrowed toward its ``minimal``
    in proportion to the room it has to give, as far as needed (``minimal`` when even that is not enough)."""
    total = sum(natural)
    if total <= available:
        return list(natural)
    room = [max(n - m, 0.0) for n, m in zip(natural, minimal)]
    give = sum(room)
    if give <= 0.0 or total - give >= available:
        return [min(n, m) if m else n for n, m in zip(natural, minimal)]
    k = (total - available) / give
    return [n - r * k for n, r in zip(natural, room)]


def _wrap(text: str, width: float, advance) -> str:
    """``text`` with newlines at spaces so that no line is wider than ``width`` (a word never breaks)."""
    lines, line = [], ""
    for word in text.split(" "):
        trial = f"{line} {word}" if line else word
        if line and advance(trial) > width:
            lines.append(line)
            line = word
        else:
            line = trial
    lines.append(line)
    return "\n".join(lines)


def fit_columns(table) -> None:
    """Set ``table``'s column widths (and wrapped headings) to fit its viewport; rows grow to their wrapped text."""
    model, header = table.model(), table.horizontalHeader()
    n = header.count()
    if n == 0:
        return
    fm = table.fontMetrics()
    advance = fm.horizontalAdvance
    natural, minimal, heads = [], [], []
    for c in range(n):
        head = str(model.sourceModel().headerData(c, Qt.Horizontal) if hasattr(model, "sourceModel")
                   else model.headerData(c, Qt.Horizontal))
        heads.append(head)
        texts = [head] + [str(model.index(r, c).data() or "") for r in range(model.rowCount())]
        longest = max(advance(t) for t in texts)
        # a number with its unit ("41 %", "2.37 kN") never breaks; longer texts wrap at any space
        unbroken = [t for t in texts[1:] if is_quantity(t)]
        widest_word = max([advance(w) for t in texts for w in t.split(" ") if w] + [advance(t) for t in unbroken] + [0])
        extra = max(table.sizeHintForColumn(c) - longest, 0) if model.rowCount() else 0
        pad = max(extra, 18)  # cell margins, a colour swatch, the sort arrow
        natural.append(longest + pad)
        minimal.append(widest_word + pad)
    widths = shrink(natural, minimal, max(table.viewport().width(), 1) - 1)
    wrapped = {}
    for c, (w, head) in enumerate(zip(widths, heads)):
        header.resizeSection(c, int(w))
        if advance(head) + 18 > w:
            wrapped[c] = _wrap(head, w - 18, advance)
    if isinstance(model, WrappedHeadings) and wrapped != model.wrapped:
        model.wrapped = wrapped
        model.headerDataChanged.emit(Qt.Horizontal, 0, n - 1)
    table.resizeRowsToContents()
