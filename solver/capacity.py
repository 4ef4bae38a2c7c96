"""What an anchor's ``capacity_N`` means, and the margin each meaning gives (one place for every surface).

``capacity_kind`` is ``"strength"`` (the default: a breaking strength, so the force
allowed is capacity ÷ the rig's safety factor) or ``"working"`` (a rated working
load, which already has its maker's or engineer's factor in it: the force allowed is
the capacity itself, and only a force above it is warned about).  Forces in N.
"""

from __future__ import annotations

CAPACITY_KINDS: tuple[str, ...] = ("strength", "working")
DEFAULT_KIND = "strength"

#: What a person calls each kind (property panel, dock, report).
KIND_WORDS: dict[str, str] = {"strength": "breaking strength", "working": "rated working load"}
#: A short tag beside a capacity in a table cell.
KIND_TAGS: dict[str, str] = {"strength": "strength", "working": "working load"}


def kind_of(kind: str | None) -> str:
    """The kind, with None (not given) read as the default ``"strength"``."""
    return DEFAULT_KIND if kind is None else kind


def allowed_N(capacity_N: float, kind: str | None, safety_factor: float) -> float:
    """The most force the margin allows (N): capacity ÷ SF for a strength, the capacity for a working load."""
    return float(capacity_N) if kind_of(kind) == "working" else float(capacity_N) / float(safety_factor)


def utilization(force_N: float, capacity_N: float | None, kind: str | None, safety_factor: float) -> float | None:
    """Force ÷ the force allowed (1.0 = at the limit), None when no capacity is entered."""
    if not capacity_N:
        return None
    return float(force_N) / allowed_N(capacity_N, kind, safety_factor)


def margin_words(kind: str | None, safety_factor: float) -> str:
    """How the margin of this kind is taken: ``"of strength ÷ 10"`` or ``"of working load"``."""
    return "of working load" if kind_of(kind) == "working" else f"of strength ÷ {safety_factor:g}"
