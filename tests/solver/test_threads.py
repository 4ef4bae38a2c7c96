"""Solving from two threads at once (the GUI thread and the worker) gives what one thread gives.

The solver keeps compiled structures, index maps and the records of the last Result between calls
(solver.memo).  Two threads interleaving their solves -- the same rig objects, other rigs, more
structures than the caches hold, so that entries are evicted while the other thread reads them --
must each get Results equal (repr, every digit) to the same solves made one at a time, and never
an exception.
"""

from __future__ import annotations

import math
import sys
import threading
from dataclasses import replace

import pytest

from solver import memo
from solver.equilibrium import solve
from solver.rigfile import load_rig
from tests import rigs
from tests.bench.fifty_ropes import fifty_rope_rig
from tests.solver.test_golden_results import SAMPLES, _test_rigs


def _stiff_edge_rig():
    """A rope over an edge on a practically inextensible rope: its cold solve goes through the soft start,
    which softens the ropes of the System being solved for a while (demo numbers)."""
    return _test_rigs()["edge-capstan"]


def _drag(rig, pid: str, steps: int) -> list:
    """A drag: each step moved from the last and warm-started from its Result, as the live solve does."""
    p = rig.point(pid)
    out, current, res = [], rig, solve(rig)
    for i in range(steps):
        current = current.moved(pid, p.x + 0.3 * math.sin(0.4 * i), p.y + 0.2 * math.cos(0.4 * i))
        res = solve(current, start={k: v for k, v in res.points.items() if k != pid}, ideal=False)
        out.append(repr(res))
    return out


def _many_structures(n: int) -> list:
    """``n`` rigs of different structure (more than solver.memo.TOPOLOGIES keeps): hanging chains of 1..n points."""
    out = []
    for k in range(1, n + 1):
        pts = [rigs.anchor("A", 0.0, 0.0)] + [rigs.free(f"P{i}", 1.0 + i, -0.5 * i) for i in range(k)]
        ropes = [rigs.rope(f"r{i}", ["A" if i == 0 else f"P{i - 1}", f"P{i}"]) for i in range(k)]
        out.append(rigs.make_rig(pts, ropes, [rigs.force(f"P{k - 1}", 200.0, 270.0)], motion="hold"))
    return out


def _work_a(shared: list) -> list:
    raft = load_rig(SAMPLES / "raft-3to1-redirect.rig.json")
    grab = next(p.id for p in raft.points if not p.is_fixed and p.kind == "point")
    out = _drag(raft, grab, 25)
    out += [repr(solve(r)) for r in shared]  # the very rig objects the other thread solves too
    out += _drag(fifty_rope_rig(), "H4", 6)
    return out


def _work_b(shared: list) -> list:
    out = [repr(solve(r)) for r in shared]
    out += [repr(solve(r)) for r in _many_structures(memo.stats()["sizes"]["topologies"][1] + 6)]
    start = None
    for p in (20.0, 300.0, 900.0, 1500.0):  # a force slider (vector pull of the bench)
        rig = rigs.make_rig([rigs.anchor("A1", 0, 0), rigs.anchor("A2", 20, 0), rigs.free("V", 9, 0)],
                            [rigs.rope("line", ["A1", ("V", "sliding"), "A2"], pretension_N=300.0)],
                            [rigs.force("V", p, 80.0)], motion="hold", ea=4e4)
        res = solve(rig, start=start)
        start = rigs.start_from(res)
        out.append(repr(res))
    return out


@pytest.fixture
def busy_switching():
    """Threads switch every microsecond instead of every 5 ms: interleavings inside each solve."""
    before = sys.getswitchinterval()
    sys.setswitchinterval(1e-6)
    yield
    sys.setswitchinterval(before)


def test_two_threads_solving_at_once_get_what_one_thread_gets(busy_switching):
    shared = [_stiff_edge_rig(), _test_rigs()["pass-jammed-into-knot"], fifty_rope_rig()]
    shared = [replace(r, title=f"shared {i}") for i, r in enumerate(shared)]
    memo.forget_all()
    want_a, want_b = _work_a(shared), _work_b(shared)
    for _round in range(3):
        memo.forget_all()
        got: dict[str, list] = {}
        errors: list[BaseException] = []
        barrier = threading.Barrier(2)

        def run(name, work):
            try:
                barrier.wait()
                got[name] = work(shared)
            except BaseException as exc:  # noqa: BLE001 (reported below, with its thread)
                errors.append(exc)

        threads = [threading.Thread(target=run, args=("a", _work_a)), threading.Thread(target=run, args=("b", _work_b))]
        for t in threads:
            t.start()
        for t in threads:
            t.join()
        assert not errors, errors
        assert got["a"] == want_a
        assert got["b"] == want_b
    # the caches stayed within their bounds
    for kept, limit in memo.stats()["sizes"].values():
        assert kept <= limit


def test_a_bounded_cache_used_by_many_threads_stays_bounded_and_never_fails(busy_switching):
    cache = memo.Bounded(4)
    errors: list[BaseException] = []

    def hammer(seed: int):
        try:
            for i in range(3000):
                key = (seed * 7 + i) % 11
                value = cache.get(key)
                assert value is None or value == key * key  # a value is only ever the one put under its key
                cache.put(key, key * key)
        except BaseException as exc:  # noqa: BLE001
            errors.append(exc)

    threads = [threading.Thread(target=hammer, args=(k,)) for k in range(4)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    assert not errors, errors
    assert len(cache) <= 4


def test_each_thread_keeps_its_own_compiled_systems():
    # a System carries the scratch of the solve running on it: no two threads may hold the same one
    # (seen through the solver's public counts: the other thread's solve of the very same Rig is not served
    # this thread's System, and this thread's next solve of it still is)
    rig = fifty_rope_rig()
    memo.forget_all()
    want = repr(solve(rig))
    counts = memo.stats()["systems"]
    theirs = []
    t = threading.Thread(target=lambda: theirs.append((repr(solve(rig)), memo.stats()["systems"])))
    t.start()
    t.join()
    assert theirs and theirs[0][0] == want
    assert theirs[0][1].get("same rig", 0) == counts.get("same rig", 0)  # built its own System
    assert theirs[0][1].get("compiled", 0) == counts.get("compiled", 0) + 1  # from its own, empty list
    assert repr(solve(rig)) == want
    assert memo.stats()["systems"]["same rig"] == counts.get("same rig", 0) + 1  # this thread's own list as it was
