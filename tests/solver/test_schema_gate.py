"""The fast schema gate answers exactly as the jsonschema validator does (valid or not) on rig files.

The gate (:mod:`solver.schema_gate`) lets a big rig file skip the slow validator; it must
never pass a file that ``jsonschema`` (the reference implementation of JSON Schema
draft 2020-12) rejects, nor reject one it passes.  Checked on the samples, on the
fuzzer's mutations of them, and on the type rules of the standard that are easy to get
wrong (a boolean is not a number; 1.0 is an integer; const 1 equals 1.0).
"""

from __future__ import annotations

import json

import jsonschema
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from solver import rigfile_schema
from solver.schema_gate import Unsupported, compile_schema
from tests.solver.test_rigfile_fuzz import SAMPLE_DOCS, _mutate


def _jsonschema_says_valid(doc) -> bool:
    return not any(True for _ in rigfile_schema.validator().iter_errors(doc))


def test_every_sample_passes_both():
    gate = rigfile_schema.gate()
    assert gate is not None
    for doc in SAMPLE_DOCS:
        assert gate(doc) and _jsonschema_says_valid(doc)


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(data=st.data())
def test_a_mutated_sample_gets_the_same_answer_from_both(data):
    doc = json.loads(json.dumps(data.draw(st.sampled_from(SAMPLE_DOCS))))
    for _ in range(data.draw(st.integers(1, 4))):
        _mutate(data, doc)
    assert rigfile_schema.gate()(doc) == _jsonschema_says_valid(doc)


@pytest.mark.parametrize("schema, value", [
    ({"type": "number"}, True),            # JSON Schema: a boolean is not a number
    ({"type": "number"}, 3),
    ({"type": "integer"}, 1.0),            # draft 2020-12: a zero fractional part is an integer
    ({"type": "integer"}, 1.5),
    ({"const": 1}, 1.0),
    ({"const": 1}, True),
    ({"enum": ["m", "ft"]}, "ft"),
    ({"type": "number", "exclusiveMinimum": 0}, 0),
    ({"type": "number", "minimum": 0}, -0.0),
    ({"type": "number", "minimum": -1e5, "maximum": 1e5}, float("nan")),  # a NaN compares false: not an error
    ({"type": "number", "exclusiveMinimum": 0}, float("nan")),
    ({"type": "string", "minLength": 1}, ""),
    ({"type": "array", "prefixItems": [{"type": "number"}, {"type": "number"}], "items": False,
      "minItems": 2}, [1, 2, 3]),
    ({"type": "array", "prefixItems": [{"type": "number"}, {"type": "number"}], "items": False,
      "minItems": 2}, [1, 2]),
    ({"type": "object", "required": ["id"], "properties": {"id": {"type": "string"}}}, {"id": 3}),
    ({"type": "object", "required": ["id"], "properties": {"id": {"type": "string"}}}, {"x": "a"}),
    ({"type": "object", "properties": {"x": {"type": "number"}}}, {"x": 1, "other": None}),
    # the inline property rules (text, bounded number, words) and the list shortcut, at their edges
    ({"type": "object", "properties": {"x": {"type": "number", "maximum": 5}}}, {"x": float("-inf")}),
    ({"type": "object", "properties": {"x": {"type": "number", "minimum": 5}}}, {"x": float("inf")}),
    ({"type": "object", "properties": {"x": {"type": "number", "exclusiveMinimum": 0}}}, {"x": float("inf")}),
    ({"type": "object", "properties": {"x": {"type": "number", "exclusiveMinimum": 0}}}, {"x": 0}),
    ({"type": "object", "properties": {"x": {"type": "number", "maximum": 5}}}, {"x": 5}),
    ({"type": "object", "properties": {"x": {"type": "number", "maximum": 5}}}, {"x": 10**400}),
    ({"type": "object", "properties": {"x": {"type": "number", "maximum": 5}}}, {"x": True}),
    ({"type": "object", "properties": {"x": {"type": "number", "maximum": 5}}}, {"x": "4"}),
    ({"type": "object", "properties": {"x": {"enum": ["a", "b"]}}}, {"x": "b"}),
    ({"type": "object", "properties": {"x": {"enum": ["a", "b"]}}}, {"x": ["a"]}),
    ({"type": "object", "properties": {"x": {"enum": ["a", "b"]}}}, {"x": None}),
    ({"type": "object", "properties": {"x": {"type": "string", "maxLength": 2}}}, {"x": "abc"}),
    ({"type": "object", "properties": {"x": {"type": "string", "minLength": 1}}}, {"x": 1}),
    ({"type": "array", "items": {"type": "number"}, "minItems": 1, "maxItems": 2}, []),
    ({"type": "array", "items": {"type": "number"}, "minItems": 1, "maxItems": 2}, [1, 2, 3]),
    ({"type": "array", "items": {"type": "number"}, "minItems": 1, "maxItems": 2}, [1, "2"]),
    ({"type": "array", "items": {"type": "number"}, "minItems": 1, "maxItems": 2}, {"a": 1}),
])
def test_standard_type_rules(schema, value):
    want = jsonschema.Draft202012Validator(schema).is_valid(value)
    assert compile_schema(schema)(value) == want


def test_a_keyword_it_does_not_know_is_refused_not_ignored():
    with pytest.raises(Unsupported):
        compile_schema({"type": "string", "pattern": "^a"})
