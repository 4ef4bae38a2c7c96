#!/usr/bin/env python3
"""Set-up and run Ropewright with Python 3.11+ (``run`` also needs a display; on Linux the system library
libxcb-cursor0 too).

    python3 dev.py run [RIG]   create .venv if needed, install, open the app on a sample site
    python3 dev.py test [ARGS] create .venv if needed, install, run every test (pytest ARGS)
    python3 dev.py bench       run the benchmarks with timing on

The virtual environment is rebuilt only when pyproject.toml changes.
"""

from __future__ import annotations

import ctypes.util
import hashlib
import os
import pathlib
import subprocess
import sys
import venv

ROOT = pathlib.Path(__file__).resolve().parent
VENV = ROOT / ".venv"
BIN = VENV / ("Scripts" if os.name == "nt" else "bin")
PY = BIN / ("python.exe" if os.name == "nt" else "python")
STAMP = VENV / ".installed"
DEFAULT_SAMPLE = ROOT / "samples" / "raft-3to1-redirect.rig.json"


def ensure_env() -> None:
    """Create .venv and install the project with its test extras, once per pyproject.toml version."""
    digest = hashlib.sha256((ROOT / "pyproject.toml").read_bytes()).hexdigest()
    if STAMP.exists() and STAMP.read_text() == digest and PY.exists():
        return
    if not PY.exists():
        print("dev.py: creating .venv ...", flush=True)
        venv.EnvBuilder(with_pip=True).create(VENV)
    print("dev.py: installing Ropewright and its test tools into .venv ...", flush=True)
    subprocess.run([str(PY), "-m", "pip", "install", "--quiet", "--upgrade", "pip"], check=True)
    subprocess.run([str(PY), "-m", "pip", "install", "--quiet", "-e", f"{ROOT}[test]"], check=True)
    STAMP.write_text(digest)


def display_problem(env: dict, platform: str = sys.platform, find_library=ctypes.util.find_library) -> str | None:
    """Why the app's window cannot open here, in words with what to do instead; None when it can (or cannot tell)."""
    if env.get("QT_QPA_PLATFORM") or not platform.startswith("linux"):
        return None
    headless = ("without a window: QT_QPA_PLATFORM=offscreen .venv/bin/ropewright screenshot RIG -o shot.png, "
                "or .venv/bin/ropewright render RIG -o plan.pdf")
    if not (env.get("DISPLAY") or env.get("WAYLAND_DISPLAY")):
        return f"dev.py: no display (DISPLAY and WAYLAND_DISPLAY are unset), so the window cannot open. Draw {headless}."
    if not env.get("WAYLAND_DISPLAY") and find_library("xcb-cursor") is None:
        return ("dev.py: Qt needs the system library libxcb-cursor0 to open a window on X11 "
                f"(Debian/Ubuntu: sudo apt-get install libxcb-cursor0). Meanwhile, draw {headless}.")
    return None


def run_command(rest: list[str]) -> list[str]:
    """The app's command line for ``dev.py run [RIG]``: the default sample opens as an untitled copy,
    so Save never overwrites the repository's file."""
    if rest:
        return [str(BIN / "ropewright"), *rest]
    return [str(BIN / "ropewright"), "open", "--copy", str(DEFAULT_SAMPLE)]


def main(argv: list[str]) -> int:
    if not argv or argv[0] not in {"run", "test", "bench"}:
        print(__doc__)
        return 2
    ensure_env()
    command, rest = argv[0], argv[1:]
    env = dict(os.environ)
    if command == "run":
        problem = display_problem(env)
        if problem:
            print(problem, file=sys.stderr)
            return 2
        return subprocess.call(run_command(rest), env=env, cwd=ROOT)
    env.setdefault("QT_QPA_PLATFORM", "offscreen")
    if command == "test":
        return subprocess.call([str(PY), "-m", "pytest", *rest], env=env, cwd=ROOT)
    return subprocess.call([str(PY), "-m", "pytest", "tests/bench", "--benchmark-enable", "--benchmark-only", *rest],
                           env=env, cwd=ROOT)


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
