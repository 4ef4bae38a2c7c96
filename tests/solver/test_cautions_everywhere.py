"""The cautions go wherever numbers leave the app: --help of every command, the solve table and JSON,
the sweep CSV and plot; and they say that engineered systems may need a qualified engineer and that
rope weight and water on ropes are not modelled (the project's safety rule, solver/cautions.py)."""

from __future__ import annotations

import json

import pytest

from solver.cautions import CAUTION_PARAGRAPHS, HELP_EPILOG, LIMITS_CAUTION, SHORT_CAUTION
from solver.cli import SUBCOMMANDS, build_parser, main
from tests.conftest import SAMPLES

RAFT = SAMPLES / "raft-3to1-redirect.rig.json"


def test_the_cautions_name_engineered_systems_and_what_is_not_modelled():
    text = " ".join(CAUTION_PARAGRAPHS)
    for words in ("qualified engineer", "highlines", "vehicle anchors", "structural anchors",
                  "weight of the ropes", "water on ropes", "not modelled"):
        assert words in text, words
    assert "qualified engineer" in LIMITS_CAUTION and "not modelled" in LIMITS_CAUTION
    assert "\n" not in SHORT_CAUTION and "\n" not in LIMITS_CAUTION  # one line each


@pytest.mark.parametrize("command", [None, *SUBCOMMANDS])
def test_help_of_every_command_ends_with_the_one_line_caution(command, capsys):
    parser = build_parser()
    if command is not None:
        sub = next(a for a in parser._actions if a.dest == "command")
        parser = sub.choices[command]
    text = parser.format_help().rstrip()
    assert text.splitlines()[-1] == HELP_EPILOG and SHORT_CAUTION in HELP_EPILOG


def test_solve_json_carries_the_cautions_and_bearings(capsys):
    assert main(["solve", str(RAFT), "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["cautions"] == list(CAUTION_PARAGRAPHS)
    for a in doc["anchors"].values():
        # bearing clockwise from north = 90 - direction counter-clockwise from east (mod 360)
        assert a["bearing_deg"] == pytest.approx((90.0 - a["direction_deg"]) % 360.0)
        assert a["capacity_kind"] == "strength"
    for ld in doc["loads"].values():
        assert ld["bearing_deg"] == pytest.approx((90.0 - ld["direction_deg"]) % 360.0)
    assert doc["mechanical_advantage"]["nominal"] == 3  # the raft's Z: three strands
    assert doc["forces"] == []


def test_solve_json_gives_a_drawn_force_its_bearing(capsys):
    assert main(["solve", str(SAMPLES / "vector-pull.rig.json"), "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    (f,) = doc["forces"]
    # the sample's pull is drawn due east (0 deg from east) = bearing 090
    assert f["direction_deg"] == 0.0 and f["bearing_deg"] == 90.0
    assert doc["mechanical_advantage"]["nominal"] is None  # a vector pull has no strand count


def test_solve_table_ends_with_both_caution_lines_and_names_the_convention(capsys):
    assert main(["solve", str(RAFT)]) == 0
    out = capsys.readouterr().out.rstrip().splitlines()
    assert out[-2:] == [f"Caution: {SHORT_CAUTION}", f"Caution: {LIMITS_CAUTION}"]
    text = "\n".join(out)
    assert "bearing from north" in text and "103° (ESE)" in text  # the alder, as in the report
    assert "nominal 3:1" in text and "ideal " in text and "actual " in text


def test_elevation_json_has_no_bearing(tmp_path, capsys):
    from dataclasses import replace

    from solver.rigfile import load_rig, save_rig

    rig = replace(load_rig(RAFT), view="elevation")
    path = tmp_path / "side.rig.json"
    save_rig(rig, path)
    main(["solve", str(path), "--json"])
    doc = json.loads(capsys.readouterr().out)
    assert all(a["bearing_deg"] is None for a in doc["anchors"].values())


def test_sweep_plot_has_the_caution_footnote_and_axes_in_display_units(tmp_path):
    import matplotlib

    from solver.rigfile import load_rig
    from solver.sweep import plot, sweep, values_between

    rig = load_rig(RAFT)
    table = sweep(rig, "haul:H1", values_between(400.0, 1200.0, 3))
    svg = tmp_path / "sweep.svg"
    with matplotlib.rc_context({"svg.fonttype": "none"}):  # keep text as text to read it back
        plot(table, svg, "kN", "raft", "m")
    text = svg.read_text()
    assert "Caution: " + SHORT_CAUTION[:40] in text
    assert "not modelled" in text
    assert "haul:H1 (kN)" in text and "peak anchor force (kN)" in text and "(N)" not in text
    assert "nominal MA" in text
