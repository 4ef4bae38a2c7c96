"""Speed of refusing a hostile rig file: a text far over its limit is turned away in a moment (pytest-benchmark).

Goal (2-core machine): a rig whose notes hold a million characters is refused within 1 s (measured
about 10 ms), so opening such a file never freezes the app.  The refusal and its words are always
asserted; the time goal only when timing is on (``--benchmark-enable``).
"""

from __future__ import annotations

import json

import pytest

from solver.errors import RigFileError
from solver.rigfile import loads_rig
from tests.conftest import SAMPLES


def _refusal(text: str) -> RigFileError:
    with pytest.raises(RigFileError) as info:
        loads_rig(text)
    return info.value


def test_bench_a_million_character_notes_is_refused_in_a_moment(benchmark):
    d = json.loads((SAMPLES / "raft-3to1-redirect.rig.json").read_text(encoding="utf-8"))
    d["notes"] = "n" * 1_000_000
    text = json.dumps(d)
    err = benchmark.pedantic(_refusal, args=(text,), rounds=5, iterations=1, warmup_rounds=1)
    assert err.where == "notes" and "1,000,000 characters" in err.message
    if not getattr(benchmark, "disabled", True):
        assert benchmark.stats.stats.median <= 1.0, benchmark.stats.stats.median
