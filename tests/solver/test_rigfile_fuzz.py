"""Mangled rig files never crash the reader: only a RigFileError naming a place, or a Rig that round-trips.

Hypothesis mutates the real sample files: deletes keys, swaps types, swaps and
duplicates ids, drops in huge numbers and NaN/Infinity tokens, hostile text (markup
that loads files, overlong labels, decimal commas), then optionally truncates the
text or splices in random bytes.
"""

from __future__ import annotations

import json
from typing import Any

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from solver import limits
from solver.errors import RigFileError
from solver.model import Rig
from solver.rigfile import dumps_rig, loads_rig
from tests.conftest import SAMPLES

SAMPLE_DOCS = [json.loads(p.read_text(encoding="utf-8")) for p in sorted(SAMPLES.glob("*.rig.json"))]

_SCALARS = st.one_of(
    st.none(),
    st.booleans(),
    st.integers(min_value=-(10**30), max_value=10**30),
    st.floats(allow_nan=True, allow_infinity=True),
    st.sampled_from([1e308, -1e308, 5e-324, 0.0, -0.0, 1e15, 2**53 + 1, 10**400]),
    st.text(max_size=12),
    st.sampled_from(["", "L1", "A1", "G1", "H1", "P1", "tied", "pulley", "hauled", "edge", "kern-11",
                     "pulley-large", "../x.png", "/etc/passwd", "12,5", "NaN", "\u0000", "\ud7ff"]),
    # hostile text: markup that loads files, overlong labels and ids, decimal commas, numbers as text
    st.sampled_from(['<img src="/dev/zero">', '<img src="/etc/passwd"><b>x</b>', "&lt;img&gt;", "x" * 201,
                     "y" * 101, "z" * 20_001, "1,000", "1.000", "1,2345", "2.500,5", "1e308"]),
    st.sampled_from([1e12, 1e13, -1e5, 100_001.0, 1000, 1001, 10**309 // 10**300]),
)
_VALUES = st.recursive(_SCALARS, lambda inner: st.one_of(st.lists(inner, max_size=3),
                                                         st.dictionaries(st.text(max_size=6), inner, max_size=3)),
                       max_leaves=6)


def _paths(node: Any, prefix: tuple = ()) -> list[tuple]:
    """Every place in the document that can be replaced or deleted."""
    out = []
    if isinstance(node, dict):
        for k, v in node.items():
            out.append(prefix + (k,))
            out += _paths(v, prefix + (k,))
    elif isinstance(node, list):
        for i, v in enumerate(node):
            out.append(prefix + (i,))
            out += _paths(v, prefix + (i,))
    return out


def _parent(doc: Any, path: tuple) -> Any:
    for key in path[:-1]:
        doc = doc[key]
    return doc


def _ids(doc: Any) -> list[tuple]:
    return [p for p in _paths(doc) if p[-1] in ("id", "at", "material", "hardware")]


def _mutate(data: st.DataObject, doc: dict) -> None:
    op = data.draw(st.sampled_from(["delete", "set", "set", "swap_ids", "copy_id", "dup_item"]))
    if op in ("swap_ids", "copy_id"):
        refs = _ids(doc)
        if len(refs) < 2:
            return
        a = data.draw(st.sampled_from(refs))
        b = data.draw(st.sampled_from(refs))
        pa, pb = _parent(doc, a), _parent(doc, b)
        if op == "swap_ids":
            pa[a[-1]], pb[b[-1]] = pb[b[-1]], pa[a[-1]]
        else:
            pa[a[-1]] = pb[b[-1]]
        return
    paths = _paths(doc)
    if not paths:
        return
    path = data.draw(st.sampled_from(paths))
    parent = _parent(doc, path)
    if op == "delete":
        del parent[path[-1]]
    elif op == "dup_item" and isinstance(parent, list):
        parent.insert(path[-1], json.loads(json.dumps(parent[path[-1]])))
    else:
        parent[path[-1]] = data.draw(_VALUES)


def _bytes_damage(data: st.DataObject, blob: bytes) -> bytes:
    op = data.draw(st.sampled_from(["none", "none", "truncate", "insert", "overwrite"]))
    if op == "none" or not blob:
        return blob
    i = data.draw(st.integers(0, len(blob) - 1))
    if op == "truncate":
        return blob[:i]
    junk = data.draw(st.binary(min_size=1, max_size=8))
    if op == "insert":
        return blob[:i] + junk + blob[i:]
    return blob[:i] + junk + blob[i + len(junk):]


def _load_mangled(data: st.DataObject) -> str:
    """Load one mangled sample; "error" for a RigFileError naming a place, "rig" for a Rig that round-trips."""
    doc = json.loads(json.dumps(data.draw(st.sampled_from(SAMPLE_DOCS))))
    for _ in range(data.draw(st.integers(0, 4))):
        _mutate(data, doc)
    blob = json.dumps(doc, allow_nan=True, ensure_ascii=data.draw(st.booleans())).encode("utf-8", "surrogatepass")
    blob = _bytes_damage(data, blob)
    as_text = data.draw(st.booleans())
    payload: str | bytes = blob.decode("utf-8", "replace") if as_text else blob
    strict = data.draw(st.booleans())
    try:
        rig = loads_rig(payload, strict=strict)
    except RigFileError as err:
        assert err.message.strip(), "an error without a message"
        assert err.where.strip(), f"an error without a place: {err.message}"
        assert "Traceback" not in str(err)
        return "error"
    assert isinstance(rig, Rig)
    # whatever loads must save and load back to the very same rig: the reader and writer share one set of limits
    again = loads_rig(dumps_rig(rig, embed=False), strict=strict)
    assert again == rig
    assert loads_rig(dumps_rig(rig), strict=strict) is not None
    # ... and whatever loads stays within the limits the app's fields and drawing rely on
    assert len(rig.points) <= limits.max_items("rig", "points") and len(rig.notes) <= limits.max_chars("rig", "notes")
    assert all(len(p.label) <= limits.max_chars("point", "label") for p in rig.points)
    assert all(p.team is None or p.team <= 1000 for p in rig.points)
    return "rig"


@settings(max_examples=200, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(data=st.data())
def test_a_mangled_sample_gives_a_named_error_or_a_rig_that_round_trips(data):
    _load_mangled(data)


def test_the_fuzzer_reaches_both_outcomes():
    """The fuzzer itself (same strategies, a fixed seed) produces both rigs that load and named errors.

    Guards against a fuzz test that only ever sees errors (every mutation fatal) or only
    ever valid rigs (mutations that change nothing).
    """
    seen: dict[str, int] = {"error": 0, "rig": 0}

    @settings(max_examples=60, deadline=None, database=None, derandomize=True,
              suppress_health_check=[HealthCheck.too_slow])
    @given(data=st.data())
    def run(data):
        seen[_load_mangled(data)] += 1

    run()
    assert seen["error"] > 0 and seen["rig"] > 0, seen


def test_a_nan_coordinate_is_refused_at_its_place():
    doc = json.loads(json.dumps(SAMPLE_DOCS[0]))
    assert isinstance(loads_rig(json.dumps(doc)), Rig)
    doc["points"][0]["x"] = float("nan")
    with pytest.raises(RigFileError) as err:
        loads_rig(json.dumps(doc, allow_nan=True))
    assert err.value.where == "points[0].x"
