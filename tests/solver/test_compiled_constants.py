"""What a compiled System carries for every solve of it, made once with its geometry: each equal to making it
afresh from that System (solver.compile, solver.pass_order, solver.evaluate.contact_stiffness).

A drag step, a force slider and a re-solve of the same rig all start from these; a stale one would change
an answer, so each is compared bit for bit with the function that defines it.
"""

from __future__ import annotations

import numpy as np
import pytest

from solver import equilibrium, pass_order
from solver.compile import compile_rig
from solver.evaluate import contact_stiffness
from tests.bench.fifty_ropes import fifty_rope_rig
from tests.bench.test_bench_solver import thirty_point_rig, vector_pull_rig


def _systems():
    """(name, System): compiled afresh, moved (the topology's arrays kept) and re-forced (a force slider)."""
    z = thirty_point_rig()
    fifty = fifty_rope_rig()
    h = fifty.point("H4")
    out = [("thirty", compile_rig(z)), ("thirty moved", equilibrium._compiled(z.moved("G", 5.7, 3.2), None)),
           ("fifty moved", equilibrium._compiled(fifty.moved("H4", h.x + 0.8, h.y - 0.3), None))]
    equilibrium.solve(vector_pull_rig(100.0))
    out.append(("vector pull re-forced", equilibrium._compiled(vector_pull_rig(900.0), None)))
    return out


@pytest.mark.parametrize("name,s", _systems(), ids=lambda v: v if isinstance(v, str) else "")
def test_the_constants_a_solve_starts_from_equal_a_fresh_computation(name, s):
    assert np.array_equal(s.contact_k, contact_stiffness(s)), name
    assert np.array_equal(s.keep_len, pass_order.KEEP * s.s_min), name
    assert np.array_equal(s.crossed_below, np.where(s.contact_on, 0.0, -np.inf)), name
    with pytest.raises(ValueError):  # shared by every solve of the System: never written
        s.contact_k[...] = 0.0


def test_the_drawn_pass_order_is_made_on_first_use_as_the_drawing_gives_it():
    s = compile_rig(thirty_point_rig())
    assert s.order_ref is None  # not made by the compile: a moved rig's recompile skips it
    x = s.x_from(s.xy0)
    pass_order.start(s, x)  # the drawing itself: every piece takes its own direction
    assert np.array_equal(s.order_ref, pass_order.drawn(s.xy0, s.a, s.b))
