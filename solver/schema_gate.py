"""A fast yes/no check of a parsed rig file against its JSON Schema, for big rigs.

``jsonschema`` walks a 10,000-point rig file in about 2 s (a validator object per
value); this module compiles the same schema once into nested Python closures that
answer only "valid or not" in a small fraction of that.  It understands exactly the
keywords the rig schema uses (draft 2020-12: ``type``, ``properties``, ``required``,
``items``, ``prefixItems``, ``minItems``, ``maxItems``, ``minLength``, ``maxLength``, ``enum``, ``const``,
``minimum``, ``maximum``, ``exclusiveMinimum``, and local ``$ref`` already inlined);
a schema with any other keyword does not compile (:class:`Unsupported`), so the caller
falls back to ``jsonschema`` rather than pass something unchecked.  When the answer is
"not valid", the caller asks ``jsonschema`` for the error to show (its wording and
field path), so this gate never has to explain anything.
"""

from __future__ import annotations

import math
from typing import Any, Callable, Mapping

Check = Callable[[Any], bool]

#: Keywords that only annotate a schema and never change what is valid.
_ANNOTATIONS = frozenset({"$schema", "$id", "title", "description", "$comment", "default", "examples"})
_SUPPORTED = frozenset({"type", "properties", "required", "items", "prefixItems", "minItems", "maxItems",
                        "minLength", "maxLength", "enum", "const", "minimum", "maximum",
                        "exclusiveMinimum"}) | _ANNOTATIONS


class Unsupported(ValueError):
    """The schema uses a keyword this gate does not implement."""


def _is_number(v: Any) -> bool:
    return isinstance(v, (int, float)) and not isinstance(v, bool)


def _is_integer(v: Any) -> bool:
    # JSON Schema 2020-12: a number with a zero fractional part is an integer (1.0 is)
    return _is_number(v) and (isinstance(v, int) or v.is_integer())


_TYPES: Mapping[str, Check] = {
    "object": lambda v: isinstance(v, dict),
    "array": lambda v: isinstance(v, list),
    "string": lambda v: isinstance(v, str),
    "number": _is_number,
    "integer": _is_integer,
    "boolean": lambda v: isinstance(v, bool),
    "null": lambda v: v is None,
}


#: JSON types a value's exact Python type decides (json.loads makes only these types; bool is not a number).
_PLAIN_TYPES: Mapping[str, frozenset[type]] = {
    "string": frozenset({str}), "number": frozenset({int, float}), "boolean": frozenset({bool}),
    "object": frozenset({dict}), "array": frozenset({list}), "null": frozenset({type(None)}),
}


#: written as jsonschema tests them (an error only when ``v < x``, ``v > x``, ``v <= x``), so a NaN, which
#: compares false with everything, passes here as it passes there (the reader refuses it after the schema)
_COMPARE: Mapping[str, Callable[[Any, Any], bool]] = {
    "minimum": lambda v, x: not v < x, "maximum": lambda v, x: not v > x, "exclusiveMinimum": lambda v, x: not v <= x,
}


def _scalar_equal(a: Any, b: Any) -> bool:
    """JSON equality of two scalars: true/false are not the numbers 1/0, 1 equals 1.0."""
    if isinstance(a, bool) or isinstance(b, bool):
        return isinstance(a, bool) and isinstance(b, bool) and a == b
    if _is_number(a) and _is_number(b):
        return a == b
    return type(a) is type(b) and a == b


def _scalars(values: list[Any]) -> list[Any]:
    if any(isinstance(v, (dict, list)) for v in values):
        raise Unsupported("enum/const with an object or list value")
    return values


def compile_schema(schema: Any, shortcuts: bool = True) -> Check:
    """A function telling whether a JSON value satisfies ``schema`` (refs inlined; see module doc).

    ``shortcuts`` False compiles the top node keyword by keyword (what a shortcut falls back to).
    """
    if schema is True:
        return lambda v: True
    if schema is False:
        return lambda v: False
    if not isinstance(schema, dict):
        raise Unsupported(f"schema node {schema!r}")
    unknown = set(schema) - _SUPPORTED
    if unknown:
        raise Unsupported(", ".join(sorted(unknown)))
    fast = (_object_check(schema) or _leaf_check(schema) or _array_check(schema)) if shortcuts else None
    if fast is not None:
        return fast
    checks: list[Check] = []
    if "type" in schema:
        names = [schema["type"]] if isinstance(schema["type"], str) else list(schema["type"])
        tests = [_TYPES[n] for n in names]
        checks.append(tests[0] if len(tests) == 1 else (lambda v, ts=tuple(tests): any(t(v) for t in ts)))
    if "const" in schema:
        (want,) = _scalars([schema["const"]])
        checks.append(lambda v, w=want: not isinstance(v, (dict, list)) and _scalar_equal(v, w))
    if "enum" in schema:
        allowed = _scalars(list(schema["enum"]))
        checks.append(lambda v, ws=tuple(allowed): not isinstance(v, (dict, list))
                      and any(_scalar_equal(v, w) for w in ws))
    for key, cmp in _COMPARE.items():
        if key in schema:
            checks.append(lambda v, x=schema[key], c=cmp: not _is_number(v) or c(v, x))
    if "minLength" in schema:
        checks.append(lambda v, n=schema["minLength"]: not isinstance(v, str) or len(v) >= n)
    if "maxLength" in schema:
        checks.append(lambda v, n=schema["maxLength"]: not isinstance(v, str) or len(v) <= n)
    if "minItems" in schema:
        checks.append(lambda v, n=schema["minItems"]: not isinstance(v, list) or len(v) >= n)
    if "maxItems" in schema:
        checks.append(lambda v, n=schema["maxItems"]: not isinstance(v, list) or len(v) <= n)
    if "required" in schema:
        keys = tuple(schema["required"])

        def required(v: Any, keys: tuple[str, ...] = keys) -> bool:
            if isinstance(v, dict):
                for k in keys:
                    if k not in v:
                        return False
            return True

        checks.append(required)
    if "properties" in schema:
        rules = _split_properties(schema["properties"])
        checks.append(lambda v, rules=rules: not isinstance(v, dict) or _properties_hold(v, rules))
    prefix = tuple(compile_schema(sub) for sub in schema.get("prefixItems", ()))
    rest = compile_schema(schema["items"]) if "items" in schema else None
    if prefix or rest is not None:

        def items(v: Any, prefix: tuple[Check, ...] = prefix, rest: Check | None = rest) -> bool:
            if isinstance(v, list):
                for check, x in zip(prefix, v):
                    if not check(x):
                        return False
                if rest is not None:
                    for x in v[len(prefix):] if prefix else v:
                        if not rest(x):
                            return False
            return True

        checks.append(items)
    if not checks:
        return lambda v: True
    if len(checks) == 1:
        return checks[0]
    cs = tuple(checks)

    def every(v: Any, cs: tuple[Check, ...] = cs) -> bool:
        for c in cs:
            if not c(v):
                return False
        return True

    return every


# --- one closure for the common shapes (an object of typed fields, a typed number or text) -----------


#: What one property's schema asks, checked inline by _properties_hold (no call for the common shapes):
#: only plain JSON types; text of a length; a number within bounds; one of some words; anything else.
_TYPES_ONLY, _TEXT, _NUMBER, _WORDS, _OTHER = range(5)


def _property_rule(sub: Any) -> tuple[int, Any]:
    """(rule code, its data) for one property's schema; the exact-type tests fall back to the compiled
    schema for a value of another Python type (a subclass), so the answer is always the schema's."""
    keys = set(sub) - _ANNOTATIONS if isinstance(sub, dict) else None
    kind = sub.get("type") if keys is not None else None
    if keys == {"type"} and kind in _PLAIN_TYPES:
        return _TYPES_ONLY, _PLAIN_TYPES[kind]
    if kind == "string" and keys <= {"type", "minLength", "maxLength"}:
        return _TEXT, (sub.get("minLength", 0), sub.get("maxLength", math.inf))
    if kind == "number" and keys <= {"type", *_COMPARE}:
        return _NUMBER, (sub.get("minimum", -math.inf), sub.get("maximum", math.inf),
                         sub.get("exclusiveMinimum", math.nan), compile_schema(sub))  # x <= NaN: never
    if keys == {"enum"} and all(type(w) is str for w in sub["enum"]):
        return _WORDS, (frozenset(sub["enum"]), compile_schema(sub))
    return _OTHER, compile_schema(sub)


def _split_properties(subs: Mapping[str, Any]) -> dict[str, tuple[int, Any]]:
    """Property schemas as key -> (rule code, data) (:func:`_property_rule`)."""
    return {k: _property_rule(sub) for k, sub in subs.items()}


def _properties_hold(v: dict, rules: dict[str, tuple[int, Any]]) -> bool:
    """Every key of ``v`` that has a schema meets it (walks the value's keys: a point has 4 of its 13).

    Numbers compare as jsonschema compares them (an error only when ``v < minimum``, ``v > maximum``,
    ``v <= exclusiveMinimum``), so a NaN passes here as there (the reader refuses it after the schema).
    """
    for k, x in v.items():
        rule = rules.get(k)
        if rule is None:
            continue
        code, data = rule
        if code == _TYPES_ONLY:
            if type(x) not in data:
                return False
        elif code == _TEXT:
            if type(x) is not str or not data[0] <= len(x) <= data[1]:
                return False
        elif code == _NUMBER:
            t = type(x)
            if t is float or t is int:
                if x < data[0] or x > data[1] or x <= data[2]:
                    return False
            elif not data[3](x):
                return False
        elif code == _WORDS:
            if not (x in data[0] if type(x) is str else data[1](x)):
                return False
        elif not data(x):
            return False
    return True


def _leaf_check(schema: dict[str, Any]) -> Check | None:
    """``{"type": "number", "minimum": 0}`` or ``{"type": "string", "minLength": 1}`` as one test, else None."""
    kind = schema.get("type")
    rest = set(schema) - _ANNOTATIONS - {"type"}
    if kind in ("number", "integer") and rest <= set(_COMPARE):
        bounds = tuple((_COMPARE[k], schema[k]) for k in _COMPARE if k in schema)
        is_kind = _TYPES[kind]

        def number(v: Any, bounds: tuple = bounds, is_kind: Check = is_kind) -> bool:
            if not is_kind(v):
                return False
            for cmp, x in bounds:
                if not cmp(v, x):
                    return False
            return True

        return number
    if kind == "string" and rest <= {"minLength", "maxLength"}:
        lo, hi = schema.get("minLength", 0), schema.get("maxLength", float("inf"))
        return lambda v, lo=lo, hi=hi: type(v) is str and lo <= len(v) <= hi
    return None


def _object_check(schema: dict[str, Any]) -> Check | None:
    """An object schema (type, required, properties) as one test of the value's keys, else None."""
    if schema.get("type") != "object" or set(schema) - _ANNOTATIONS - {"type", "required", "properties"}:
        return None
    required = tuple(schema.get("required", ()))
    rules = _split_properties(schema.get("properties", {}))

    def obj(v: Any) -> bool:
        if type(v) is not dict:
            return isinstance(v, dict) and _slow_object(v)
        for k in required:
            if k not in v:
                return False
        return _properties_hold(v, rules)

    def _slow_object(v: Any) -> bool:
        return obj(dict(v))

    return obj


def _array_check(schema: dict[str, Any]) -> Check | None:
    """A list schema (type, items, minItems, maxItems) as one test, else None; a list subclass goes the long way."""
    if schema.get("type") != "array" or "items" not in schema \
            or set(schema) - _ANNOTATIONS - {"type", "items", "minItems", "maxItems"}:
        return None
    item = compile_schema(schema["items"])
    lo, hi = schema.get("minItems", 0), schema.get("maxItems", math.inf)
    general = compile_schema(schema, shortcuts=False)

    def array(v: Any) -> bool:
        if type(v) is not list:
            return general(v)
        if not lo <= len(v) <= hi:
            return False
        for x in v:
            if not item(x):
                return False
        return True

    return array
