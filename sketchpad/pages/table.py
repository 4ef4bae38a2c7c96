"""A table of text for the printed pages: what the report, the briefing and the manual lay out row by row."""

from __future__ import annotations

from dataclasses import dataclass, field


@dataclass
class Table:
    """Header, rows of cell text, relative column widths, right-aligned columns, rows to flag red."""

    title: str
    header: tuple[str, ...]
    rows: list[tuple[str, ...]]
    widths: tuple[float, ...]
    right: frozenset[int] = frozenset()
    flagged: set[int] = field(default_factory=set)
    note: str = ""
