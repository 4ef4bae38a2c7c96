"""Benchmark: a 20-rig training manual (title page, contents, every rig's report pages) written to PDF.

Goal (issue 21): at most 20 s on the project's 2-core machine. The 20 rigs are the four samples,
each five times (rigs loaded and analysed once per file, as the CLI does).
"""

from __future__ import annotations

import itertools

import pytest

from tests.conftest import SAMPLES

pytest.importorskip("pytest_benchmark")


def test_bench_twenty_rig_manual(benchmark, qapp, tmp_path):
    from sketchpad.pages.manual import load_chapters, write_manual

    paths = list(itertools.islice(itertools.cycle(sorted(SAMPLES.glob("*.rig.json"))), 20))

    def make():
        return write_manual(load_chapters(paths), tmp_path / "manual.pdf", "Benchmark manual")

    manual = benchmark.pedantic(make, rounds=1, iterations=1)
    assert len(manual.contents) == 20 and manual.pages > 40
