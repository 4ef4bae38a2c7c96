"""Parameter sweeps: what each --vary changes, warm starts, physics trends, and the command.

Physics references (check-values.md): vector pull on a hand-tight elastic line,
T = P / (2 sin theta) with 1 + T/EA = 1/cos theta, theta ~ (P/EA)^(1/3) for small
angles (H. M. Irvine, Cable Structures, 1981, ch. 1) -- solved here with
scipy.optimize.brentq; T-method MA of a 3:1 = 1 + eta + eta^2 (derived).
"""

from __future__ import annotations

import csv
import math
from dataclasses import replace

import numpy as np
import pytest
from scipy.optimize import brentq

from solver.cli import main
from solver.model import Force, Rigging
from solver.sweep import SweepError, parse_vary, setter, sweep, values_between
from solver.templates import place_template
from tests import rigs

EA = 4.0e4  # N, linear test rope
SPAN = 20.0  # m, load to anchor


def vector_rig(pretension_N: float | None = None):
    """A hand-tight (or pretensioned) line from load to anchor, pulled sideways at mid-span."""
    rig = rigs.make_rig([rigs.load("L", 0.0, 0.0), rigs.anchor("A", 0.0, SPAN)], [], ea=EA, motion="hold")
    return place_template(rig, "vector-pull", load_id="L", anchor_id="A", material="lin",
                          pull_force_N=100.0, pretension_N=pretension_N)


def z_rig(eta: float = 0.9):
    rig = rigs.make_rig([rigs.load("L", 0.0, 0.0), rigs.anchor("A", 0.0, SPAN)], [],
                        hardware=[rigs.pulley("p", eta)], ea=1.0e5)
    return place_template(rig, "3:1", load_id="L", anchor_id="A", material="lin", hardware="p", haul_force_N=400.0)


def centred_t_over_p(p_over_ea: float, t0_over_ea: float = 0.0) -> float:
    """T/P of a centred pull on a linear line tensioned to T0 as drawn (check-values.md, derived; brentq)."""

    def g(theta: float) -> float:
        return 2.0 * math.sin(theta) * ((1.0 + t0_over_ea) / math.cos(theta) - 1.0) - p_over_ea

    theta = brentq(g, 1e-12, math.pi / 2 - 1e-9, xtol=1e-15, rtol=1e-15, maxiter=500)
    return ((1.0 + t0_over_ea) / math.cos(theta) - 1.0) / p_over_ea


# --- reading --vary and setting the value (no solver) ---------------------------------------


@pytest.mark.parametrize("text, words", [
    ("pulleys", "cannot read"),
    ("point:H1", "which coordinate"),
    ("point:H1.z", "which coordinate"),
    ("hardware:p.colour", "efficiency"),
    ("material:lin.stretch", "mbs_N"),
    ("wind:3", "cannot read"),
])
def test_bad_vary_text_is_explained(text, words):
    with pytest.raises(SweepError, match=words):
        parse_vary(text)


@pytest.mark.parametrize("text, words", [
    ("force:nobody", "no force"),
    ("haul:Q9", "no point"),
    ("haul:A", "not a haul team"),
    ("point:Q9.x", "no point"),
    ("pretension:nope", "no rope"),
    ("hardware:no-such-pulley.efficiency", "no hardware"),
])
def test_vary_naming_nothing_in_the_rig_is_explained(text, words):
    rig = vector_rig()
    with pytest.raises(SweepError, match=words):
        setter(rig, parse_vary(text))


def test_each_kind_of_vary_changes_exactly_its_parameter():
    rig = z_rig()
    haul = next(p for p in rig.points if p.kind == "haul")
    out = setter(rig, parse_vary(f"haul:{haul.id}"))(750.0)
    assert out.point(haul.id).haul_force == 750.0
    out = setter(rig, parse_vary("point:A.y"))(22.5)
    assert out.point("A").xy == (0.0, 22.5)
    out = setter(rig, parse_vary("hardware:p.efficiency"))(0.8)
    assert out.embedded_hardware("p").efficiency == 0.8 and len(out.hardware) == 1
    out = setter(rig, parse_vary("material:lin.mbs_N"))(30000.0)
    assert out.embedded_material("lin").mbs_N == 30000.0
    # a library spec is embedded (copied into the rig) with the new value
    out = setter(rig, parse_vary("hardware:pulley-small.efficiency"))(0.7)
    assert out.embedded_hardware("pulley-small").efficiency == 0.7
    v = vector_rig()
    line = v.ropes[0].id
    out = setter(v, parse_vary(f"pretension:{line}"))(900.0)
    assert out.rope(line).rigged == Rigging(pretension_N=900.0)
    # forces by label, by point, by number
    v2 = replace(v, forces=v.forces + (Force("A", 5.0, 0.0, "other"),))
    hand = v.forces[0].at
    for sel, idx in (("sideways pull", 0), (hand, 0), ("2", 1), ("F2", 1), ("other", 1)):
        out = setter(v2, parse_vary(f"force:{sel}"))(321.0)
        assert out.forces[idx].magnitude_N == 321.0 and out.forces[1 - idx] == v2.forces[1 - idx]


def test_values_between_is_inclusive_and_even():
    assert values_between(1.0, 2.0, 5) == pytest.approx([1.0, 1.25, 1.5, 1.75, 2.0])
    assert values_between(3.0, 9.0, 1) == [3.0]
    with pytest.raises(SweepError):
        values_between(0.0, 1.0, 0)


# --- solved sweeps ------------------------------------------------------------------------


@pytest.fixture
def solve():
    from solver.equilibrium import solve as solve_rig

    return solve_rig


def test_vector_pull_ma_falls_as_the_pull_rises_like_the_elastic_string(solve):
    values = [20.0, 50.0, 100.0, 200.0, 400.0, 800.0]
    res = sweep(vector_rig(), "force:sideways pull", values, solve=solve)
    assert [r["status"] for r in res.rows] == ["ok"] * len(values)
    ma = np.array(res.column("ma_actual"))
    assert np.all(np.diff(ma) < 0), f"MA must fall as the pull rises: {ma}"
    for p, m in zip(values, ma):
        # sliding hand at mid-span: MA = T/P of the self-consistent elastic string (Irvine; brentq)
        assert m == pytest.approx(centred_t_over_p(p / EA), rel=1e-6)
        # Irvine's small-angle law theta ~ (P/EA)^(1/3), MA ~ 1/(2 theta): within 5 % at these loads
        assert m == pytest.approx(1.0 / (2.0 * (p / EA) ** (1.0 / 3.0)), rel=0.05)
    # the anchor carries the line tension, which rises with the pull
    assert np.all(np.diff(res.column("peak_anchor_N")) > 0)
    defl = [c for c in res.columns if c.startswith("deflection_")]
    assert len(defl) == 1 and np.all(np.diff(res.column(defl[0])) > 0)  # the line bends more


def test_vector_pull_gains_from_pretension(solve):
    rig = vector_rig()
    values = [0.0, 200.0, 500.0, 1000.0]
    res = sweep(rig, f"pretension:{rig.ropes[0].id}", values, solve=solve)
    ma = np.array(res.column("ma_actual"))
    expected = [centred_t_over_p(100.0 / EA, t0 / EA) for t0 in values]  # check-values.md, derived
    assert ma == pytest.approx(expected, rel=1e-6)
    assert np.all(np.diff(ma) > 0)


def test_pulley_efficiency_sweep_follows_the_t_method(solve):
    etas = [0.5, 0.7, 0.9, 0.95, 1.0]
    res = sweep(z_rig(), "hardware:p.efficiency", etas, solve=solve)
    # T-method 1 + eta + eta^2 (check-values.md: 0.50 -> 1.750, 0.95 -> 2.853)
    assert res.column("ma_actual") == pytest.approx([1 + e + e * e for e in etas], rel=1e-6)
    assert res.column("ma_ideal") == pytest.approx([3.0] * len(etas), rel=1e-9)
    assert res.column("load_L_N") == pytest.approx([400.0 * (1 + e + e * e) for e in etas], rel=1e-6)


def test_haul_force_sweep_scales_delivered_force_at_constant_ma(solve):
    rig = z_rig()
    h = next(p.id for p in rig.points if p.kind == "haul")
    res = sweep(rig, f"haul:{h}", [100.0, 300.0, 900.0], solve=solve)
    assert res.column("ma_actual") == pytest.approx([2.71] * 3, rel=1e-6)  # 1 + 0.9 + 0.81
    assert res.column("load_L_N") == pytest.approx([271.0, 813.0, 2439.0], rel=1e-6)


def test_rope_strength_sweep_lowers_utilisation_in_proportion(solve):
    res = sweep(z_rig(), "material:lin.mbs_N", [10000.0, 20000.0, 40000.0], solve=solve)
    u = res.column("max_utilization")
    t = res.column("max_tension_N")
    # utilisation = tension x safety factor / MBS (rig-format.md), safety factor 10 by default
    assert u == pytest.approx([t[0] * 10 / 10000.0, t[1] * 10 / 20000.0, t[2] * 10 / 40000.0], rel=1e-9)


def test_each_solve_starts_from_the_last_solved_geometry(solve):
    starts = []

    def spy(rig, start=None, **kw):
        starts.append(start)
        return solve(rig, start=start, **kw)

    res = sweep(vector_rig(), "force:1", [50.0, 60.0, 70.0], solve=spy)
    assert starts[0] is None
    hand = vector_rig().forces[0].at
    for prev, start in zip(res.results, starts[1:]):
        assert set(start) == {hand}  # only free points are warm-started
        assert start[hand] == pytest.approx(prev.points[hand])


def test_a_value_the_rig_cannot_take_is_a_failed_row_not_a_crash(solve):
    res = sweep(z_rig(), "hardware:p.efficiency", [0.0, 0.9], solve=solve)
    assert res.rows[0]["status"] != "ok" and res.rows[0]["message"]
    assert res.rows[1]["status"] == "ok"
    assert math.isnan(res.column("ma_actual")[0])


# --- the command ----------------------------------------------------------------------


def _save(rig, path):
    from solver.rigfile import save_rig
    save_rig(rig, path)
    return str(path)


def test_command_writes_a_parseable_csv_and_a_png(tmp_path, solve, capsys):
    rig_path = _save(vector_rig(), tmp_path / "pull.rig.json")
    code = main(["sweep", rig_path, "--vary", "force:1", "--from", "50", "--to", "400", "--steps", "8"])
    assert code == 0, capsys.readouterr().err
    csv_path = tmp_path / "pull-sweep.csv"
    with open(csv_path, newline="") as fh:
        lines = fh.read().splitlines()
    assert lines[0].startswith("# Caution: Planning aid only")  # the cautions come first, as comment lines
    rows = list(csv.DictReader(line for line in lines if not line.startswith("#")))
    assert len(rows) == 8 and all(r["status"] == "ok" for r in rows)
    assert [float(r["value"]) for r in rows] == pytest.approx(values_between(50, 400, 8))
    ma = [float(r["ma_actual"]) for r in rows]
    assert all(a > b for a, b in zip(ma, ma[1:]))
    png = tmp_path / "pull-sweep.png"
    data = png.read_bytes()
    assert data[:8] == b"\x89PNG\r\n\x1a\n" and len(data) > 5000
    import matplotlib.image
    img = matplotlib.image.imread(str(png))
    assert img.shape[0] > 300 and img.shape[1] > 400 and float(img[..., :3].std()) > 0.01  # not blank
    err = capsys.readouterr().err
    assert "8/8" in err  # progress bar reached the end


def test_command_rejects_a_bad_vary_with_exit_2(tmp_path, capsys):
    rig_path = _save(vector_rig(), tmp_path / "pull.rig.json")
    code = main(["sweep", rig_path, "--vary", "point:V1", "--from", "0", "--to", "1", "--no-progress"])
    assert code == 2
    assert "which coordinate" in capsys.readouterr().err
    assert not (tmp_path / "pull-sweep.csv").exists()
    code = main(["sweep", str(tmp_path / "missing.rig.json"), "--vary", "force:1", "--from", "0", "--to", "1"])
    assert code == 2


def test_command_exits_3_when_some_values_do_not_solve(tmp_path, solve, capsys):
    rig_path = _save(z_rig(), tmp_path / "z.rig.json")
    out = tmp_path / "out.csv"
    code = main(["sweep", rig_path, "--vary", "hardware:p.efficiency", "--from", "0", "--to", "1",
                 "--steps", "3", "-o", str(out), "--plot", str(tmp_path / "z.svg"), "--no-progress"])
    assert code == 3
    assert "did not solve" in capsys.readouterr().err
    rows = list(csv.DictReader(line for line in open(out, newline="") if not line.startswith("#")))
    assert [r["status"] == "ok" for r in rows] == [False, True, True]
    assert (tmp_path / "z.svg").stat().st_size > 1000
