"""Saving never loses work: through symbolic links, after a killed save, and under kill -9 mid-save."""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import textwrap
import time

import fcntl

from solver import rigfile
from solver.rigfile import load_rig, save_rig
from tests.conftest import ROOT, SAMPLES

RAFT = SAMPLES / "raft-3to1-redirect.rig.json"


def test_saving_a_rig_opened_through_a_symbolic_link_writes_the_target_and_keeps_the_link(tmp_path):
    real = tmp_path / "store" / "raft.rig.json"
    real.parent.mkdir()
    save_rig(load_rig(RAFT), real)
    link = tmp_path / "raft.rig.json"
    link.symlink_to(real)
    rig = load_rig(link)
    edited = rig.moved("G1", 1.25, 2.5)
    save_rig(edited, link)
    assert link.is_symlink() and os.readlink(link) == str(real)
    assert load_rig(real).point("G1").x == 1.25
    assert not [p for p in tmp_path.iterdir() if p.name.endswith(".tmp")]


def test_a_killed_saves_temp_file_is_removed_by_the_next_save_but_a_running_ones_is_kept(tmp_path):
    target = tmp_path / "raft.rig.json"
    stale = tmp_path / ".raft.rig.json.ab12cd_9.tmp"
    stale.write_bytes(b"x" * 10_000)  # what a kill -9 during a save leaves
    busy = tmp_path / ".other.rig.json.zz99yy00.tmp"
    busy.write_bytes(b"y")
    foreign = tmp_path / ".notes.txt.ab12cd_9.tmp"  # not ours: not a rig file's temp
    foreign.write_bytes(b"z")
    fd = os.open(busy, os.O_RDONLY)
    fcntl.flock(fd, fcntl.LOCK_EX)  # a save in another process still writing it
    try:
        save_rig(load_rig(RAFT), target)
    finally:
        os.close(fd)
    assert not stale.exists() and busy.exists() and foreign.exists()
    assert rigfile.clean_stale_temps(tmp_path) == [busy.name]  # its save is gone now


_SAVER = textwrap.dedent("""
    import sys
    from solver.rigfile import load_rig, save_rig
    rig = load_rig(sys.argv[1])
    print("ready", flush=True)
    i = 0
    while True:
        i += 1
        save_rig(rig.moved("G1", float(i), 0.0), sys.argv[2])
""")


def test_kill_9_during_saves_never_leaves_a_broken_rig_and_the_next_save_cleans_up(tmp_path):
    target = tmp_path / "raft.rig.json"
    save_rig(load_rig(RAFT), target)
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    for k in range(4):
        child = subprocess.Popen([sys.executable, "-c", _SAVER, str(RAFT), str(target)], env=env,
                                 stdout=subprocess.PIPE, text=True)
        assert child.stdout.readline().strip() == "ready"
        time.sleep(0.05 + 0.03 * k)
        child.send_signal(signal.SIGKILL)
        child.wait(timeout=30)
        rig = load_rig(target)  # always a whole rig: the old one or a new one
        assert rig.point("G1").y == 0.0 or rig == load_rig(RAFT)
    save_rig(load_rig(RAFT), target)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["raft.rig.json"]
