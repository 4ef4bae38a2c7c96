"""The moving-water lookup (solver.water_site.flow_field) is kept per thread.

Its polygons are prepared GEOS geometries, which build their index lazily on first use and are
not safe to share between threads (GEOS prepared geometries: not thread-safe, libgeos/geos pull
request 826); the app solves on the GUI thread and on the solve worker at once (an export's failure
scan beside the What-if scan), and a shared one crashed the process in ``shapely.intersects``.
"""

from __future__ import annotations

import threading

import numpy as np

from solver.rigfile import load_rig
from solver.water_site import build_field, flow_field
from tests.conftest import SAMPLES

RAFT = SAMPLES / "raft-3to1-redirect.rig.json"


def _in_thread(fn):
    out = []
    t = threading.Thread(target=lambda: out.append(fn()))
    t.start()
    t.join()
    return out[0]


def test_each_thread_gets_its_own_flow_field_equal_to_a_fresh_build():
    rig = load_rig(RAFT)
    here = flow_field(rig)
    assert not here.empty
    assert flow_field(rig) is here  # the same thread reuses it (a drag step)
    there = _in_thread(lambda: flow_field(rig))
    assert there is not here
    assert all(a is not b for a, b in zip(there.polygons, here.polygons))  # no prepared geometry shared
    fresh = build_field(tuple((f.id, f.polygon, f.flow) for f in rig.site.features
                              if f.kind == "water" and f.flow is not None and f.polygon is not None))
    for field in (here, there):
        assert field.ids == fresh.ids
        assert np.array_equal(field.velocities, fresh.velocities)
        assert all(a.equals(b) for a, b in zip(field.polygons, fresh.polygons))
