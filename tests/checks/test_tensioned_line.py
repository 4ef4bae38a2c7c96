"""A tensioned line with a load across it (a highline) is checked on its leg-force factor, not on the
ASME B30.9 sling angle; legs meeting at a master point or a sling keep the sling-angle rule.

Closed form: a point load P square to a line whose sides each make angle θ with the straight line
gives each side T = P / (2 sin θ) (statics of a two-force node; check-values.md, "Vector pull").
"""

from __future__ import annotations

import math

import pytest

from solver.model import Force, Material, Pass, Point, Rig, Rope, Settings
from solver.tensioned_line import LINE_FACTOR_WARN, leg_factors, line_points

STIFF = Material(id="stiff", kind="rope", mbs_N=1e12, stretch=((1e7, 0.01),))  # EA = 1e9 N
SLING = Material(id="tape", kind="sling", mbs_N=1e12, stretch=((1e7, 0.01),))


def _highline(sag_m: float, how: str, material: Material = STIFF, load_N: float = 1000.0) -> Rig:
    """A 40 m line between two anchors, a carriage at mid-span pulled square to it (down the page) by
    ``load_N``, drawn with ``sag_m`` of sag (stiff rope: the solved sag stays within 0.1 %)."""
    pts = (
        Point("A1", "anchor", -20.0, 0.0, capacity_N=1e9, label="east bank alder"),
        Point("A2", "anchor", 20.0, 0.0, capacity_N=1e9, label="west bank boulder"),
        Point("C", "point", 0.0, -sag_m, label="carriage"),
    )
    rope = Rope("track", material.id, (Pass("A1"), Pass("C", how, "pulley-large" if how == "pulley" else None),
                                        Pass("A2")), label="track line")
    return Rig(points=pts, ropes=(rope,), materials=(material,),
               forces=(Force("C", load_N, 270.0, "load across the line"),), settings=Settings(motion="hold"))


@pytest.mark.parametrize("how", ["sliding", "tied", "pulley"])
def test_a_highline_is_not_a_two_leg_anchor_and_gets_its_leg_force_factor(how):
    from solver.analysis import analyse

    rig = _highline(2.0, how)
    res = analyse(rig)
    assert res.ok, res.message
    codes = [w.code for w in res.warnings]
    assert "wide-anchor" not in codes  # the B30.9 sling-angle advice does not fit a tensioned line
    # each side's angle off the straight line, from the solved carriage position
    cx, cy = res.points["C"]
    theta = math.atan2(-cy, 20.0)
    expect = 1.0 / (2.0 * math.sin(theta))  # T / P = 1 / (2 sin θ), vector-pull statics
    ((lp, load, t1, t2, factor),) = leg_factors(rig, res)
    assert lp.point == "C" and load == pytest.approx(1000.0, rel=1e-6)
    assert factor == pytest.approx(expect, rel=1e-4), (factor, expect)
    assert t1 == pytest.approx(t2, rel=1e-4)  # symmetric line
    # drawn 2 m down in 20 m: θ = atan(0.1) = 5.71 deg, factor 5.02 > 2: warned, the factor in the message
    assert expect > LINE_FACTOR_WARN
    w = next(w for w in res.warnings if w.code == "line-leg-factor")
    assert f"{factor:.2f} ×" in w.message and "1.00 kN" in w.message and w.subject == "track,C"


def test_a_well_sagged_highline_is_not_warned():
    from solver.analysis import analyse

    # 12 m sag in 20 m: θ = atan(0.6) = 30.96 deg, T / P = 1 / (2 sin θ) = 0.972 < 2
    res = analyse(_highline(12.0, "sliding"))
    assert res.ok, res.message
    assert not [w for w in res.warnings if w.code in ("line-leg-factor", "wide-anchor")]
    (row,) = leg_factors(_highline(12.0, "sliding"), res)
    assert row[4] == pytest.approx(1.0 / (2.0 * math.sin(math.atan2(-res.points["C"][1], 20.0))), rel=1e-4)


def test_a_sling_through_a_master_point_keeps_the_asme_sling_angle_rule():
    from solver.analysis import analyse

    # the same geometry in a sling (self-equalising through the master point): legs at 168.6 deg > 120
    rig = _highline(2.0, "sliding", SLING)
    assert line_points(rig) == []
    res = analyse(rig)
    assert res.ok, res.message
    codes = [w.code for w in res.warnings]
    assert "wide-anchor" in codes and "line-leg-factor" not in codes


def test_the_two_leg_warning_and_message_follow_the_display_units():
    from dataclasses import replace

    from solver.analysis import analyse
    from solver.model import Display

    rig = _highline(2.0, "sliding")
    rig = replace(rig, display=Display(length="ft", force="lbf"))
    w = next(w for w in analyse(rig).warnings if w.code == "line-leg-factor")
    # 1000 N / 4.4482216152605 N per lbf (NIST SP 811) = 224.8 lbf, shown to the pound
    assert "the 225 lbf across it" in w.message and "kN" not in w.message and " N " not in w.message
