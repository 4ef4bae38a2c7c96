"""solver.completeness: what a half-drawn rig still lacks, checked on small rigs and on every sample."""

from __future__ import annotations

import pathlib

import pytest

from solver.analysis import analyse
from solver.completeness import START_HINT, sketch_gap
from solver.model import Force, Pass, Point, Rig, Rope
from solver.rigfile import load_rig

SAMPLES = sorted((pathlib.Path(__file__).resolve().parents[2] / "samples").glob("*.rig.json"))
L1, A1, A2 = Point("L1", "load", 0, 0), Point("A1", "anchor", 0, 10), Point("A2", "anchor", 6, 12)
H1 = Point("H1", "haul", 8, 2, team=4, force_per_person_N=220.0)
J1 = Point("J1", "point", 4, 6)


def rope(rid, *passes):
    return Rope(rid, "kern-11", tuple(Pass(*p) for p in passes))


def test_the_empty_sketch_says_where_to_start():
    assert sketch_gap(Rig()).message == START_HINT
    assert sketch_gap(Rig(points=(Point("P1", "person", 0, 0),))).message == START_HINT  # people are markers


def test_a_point_no_rope_reaches_is_named_and_the_solver_agrees_it_is_not_held():
    rig = Rig(points=(L1, A1, H1, J1), ropes=(rope("r1", ("L1", "tied"), ("A1", "pulley", "pulley-large"),
                                                      ("H1", "hauled")),))
    gap = sketch_gap(rig)
    assert gap.subject == "J1" and gap.message.startswith("Sketch incomplete: J1 is not held by any rope yet")
    result = analyse(rig)
    assert not result.ok and result.subject == "J1"  # the solver fails on the same point


def test_a_pulley_on_one_rope_is_not_slung_until_a_second_rope_holds_it():
    main = rope("r1", ("L1", "tied"), ("J1", "pulley", "pulley-large"), ("H1", "hauled"))
    rig = Rig(points=(L1, H1, J1), ropes=(main,))
    gap = sketch_gap(rig)
    assert gap.subject == "J1" and "pulley at J1 is not slung" in gap.message
    assert not analyse(rig).ok
    slung = Rig(points=(L1, A1, H1, J1), ropes=(main, rope("s1", ("J1", "tied"), ("A1", "tied"))))
    assert sketch_gap(slung) is None


def test_a_loose_rope_end_and_a_pulled_free_point():
    loose = Rig(points=(L1, A1, J1), ropes=(rope("r1", ("L1", "tied"), ("A1", "pulley", "pulley-large"),
                                                     ("J1", "tied")),))
    assert "J1 is a loose rope end" in sketch_gap(loose).message
    # a hand pulling a tensioned line sideways: a running pass with an applied force is held
    line = Rig(points=(L1, A2, J1), ropes=(rope("r1", ("L1", "tied"), ("J1", "sliding"), ("A2", "tied")),),
               forces=(Force("J1", 300.0, 0.0),))
    assert sketch_gap(line) is None


@pytest.mark.parametrize("path", SAMPLES, ids=lambda p: p.name)
def test_every_sample_is_complete(path):
    assert sketch_gap(load_rig(path)) is None
