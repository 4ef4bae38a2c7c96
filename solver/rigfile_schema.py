"""The rig file's JSON Schema (``schema/rig-v1.schema.json``): the validator, the fast gate, errors in words.

A parsed file first meets the compiled gate (:mod:`solver.schema_gate`); only a file the
gate refuses goes through ``jsonschema``, whose best-matching error is put in a rigger's
words with its field path (``ropes[2].path[3]``).
"""

from __future__ import annotations

import json
import logging
import math
from functools import lru_cache
from importlib import resources
from typing import Any, Callable, Iterable, Mapping, Sequence

from solver.errors import RigFileError
from solver.limits import MAX_COORDINATE_M

log = logging.getLogger(__name__)


def show_value(value: Any, limit: int = 40) -> str:
    """A value as a person would type it in the file, shortened."""
    if isinstance(value, float) and not math.isfinite(value):
        return "NaN" if math.isnan(value) else ("Infinity" if value > 0 else "-Infinity")
    try:
        s = json.dumps(value, ensure_ascii=False)
    except (TypeError, ValueError):
        s = repr(value)
    return s if len(s) <= limit else s[: limit - 1] + "…"


def field_path(path: Iterable[Any]) -> str:
    out = ""
    for part in path:
        if isinstance(part, int):
            out += f"[{part}]"
        else:
            out += f".{part}" if out else str(part)
    return out or "(top level)"


@lru_cache(maxsize=1)
def validator() -> Any:
    import jsonschema

    text = resources.files("solver").joinpath("schema/rig-v1.schema.json").read_text(encoding="utf-8")
    schema = json.loads(text)
    cls = jsonschema.Draft202012Validator
    cls.check_schema(schema)
    return cls(_inline_refs(schema, schema.get("$defs", {})))


@lru_cache(maxsize=1)
def gate() -> Callable[[Any], bool] | None:
    """The schema compiled to a fast valid-or-not test (:mod:`solver.schema_gate`), or None if it cannot be."""
    from solver.schema_gate import Unsupported, compile_schema

    s = schema()
    try:
        return compile_schema(_inline_refs(s, s.get("$defs", {})))
    except Unsupported as exc:  # a schema keyword the gate lacks: every file goes through jsonschema
        log.warning("rig schema uses %s: validating with jsonschema only", exc)
        return None


def _inline_refs(node: Any, defs: Mapping[str, Any]) -> Any:
    """The schema with every local ``{"$ref": "#/$defs/x"}`` replaced by its definition.

    The rig schema is not recursive, so this is finite; it spares the validator a
    reference look-up per object (about half its time on a large rig).
    """
    if isinstance(node, dict):
        ref = node.get("$ref")
        if isinstance(ref, str) and ref.startswith("#/$defs/") and len(node) == 1:
            return _inline_refs(defs[ref[len("#/$defs/"):]], defs)
        return {k: _inline_refs(v, defs) for k, v in node.items() if k != "$defs"}
    if isinstance(node, list):
        return [_inline_refs(v, defs) for v in node]
    return node


def schema() -> dict[str, Any]:
    """The JSON Schema (draft 2020-12) of a version-1 rig file."""
    text = resources.files("solver").joinpath("schema/rig-v1.schema.json").read_text(encoding="utf-8")
    return json.loads(text)


_NOUNS = {"points": "point", "ropes": "rope", "path": "pass", "materials": "material",
          "hardware": "hardware spec", "forces": "force", "features": "site feature", "image": "site image",
          "stretch": "stretch point"}
_TYPE_WORDS = {"number": "a number", "integer": "a whole number", "string": "text in double quotes",
               "array": "a list [...]", "object": "an object {...}", "boolean": "true or false", "null": "null"}


def _noun_for(path: Sequence[Any]) -> str:
    for part in reversed(path):
        if isinstance(part, str):
            return _NOUNS.get(part, part)
    return "rig file"


def check_schema(d: dict[str, Any]) -> None:
    """Raise the best-matching schema error in a rigger's words; a file the fast gate passes is valid as is."""
    gate_ = gate()
    if gate_ is not None and gate_(d):
        return
    from jsonschema.exceptions import best_match

    errors = list(validator().iter_errors(d))
    if not errors:
        return
    err = best_match(errors)
    where, message = _translate(err)
    if len(errors) > 1:
        more = len(errors) - 1
        message += f" (and {more} more problem{'s' if more > 1 else ''} in the file)"
    raise RigFileError(message, where=where)


def _translate(err: Any) -> tuple[str, str]:
    """A jsonschema error as (field path, message in a rigger's words)."""
    path = list(err.absolute_path)
    kw = err.validator
    val = err.validator_value
    inst = err.instance
    where = field_path(path)
    if kw == "type":
        wanted = [val] if isinstance(val, str) else list(val)
        words = " or ".join(_TYPE_WORDS.get(w, w) for w in wanted)
        msg = f"must be {words}, got {show_value(inst)}"
        if "number" in wanted and isinstance(inst, str):
            fixed = inst.strip().replace(",", ".", 1) if inst.count(",") == 1 else inst.strip()
            try:
                num = float(fixed)
            except ValueError:
                pass
            else:
                if math.isfinite(num):
                    msg += f" (write {fixed} with a decimal point and no quotes)"
        return where, msg
    if kw == "required":
        missing = [k for k in val if isinstance(inst, dict) and k not in inst]
        key = missing[0] if missing else val[0]
        noun = _noun_for(path)
        needs = ", ".join(val[:-1]) + f" and {val[-1]}" if len(val) > 1 else val[0]
        return field_path(path + [key]), f"is missing (every {noun} needs {needs})"
    if kw == "enum":
        choices = ", ".join(show_value(c) for c in val)
        return where, f"must be one of {choices}; got {show_value(inst)}"
    if kw == "const":
        return where, f"must be {show_value(val)}, got {show_value(inst)}"
    if kw in ("minimum", "maximum") and abs(val) == MAX_COORDINATE_M and isinstance(inst, (int, float)):
        return where, (f"{inst:g} m is more than {MAX_COORDINATE_M / 1000:g} km from the site origin; "
                       "is the unit right?")
    if kw == "minimum":
        return where, f"must be at least {val:g}, got {show_value(inst)}"
    if kw == "exclusiveMinimum":
        return where, f"must be more than {val:g}, got {show_value(inst)}"
    if kw == "maximum":
        return where, f"must be at most {val:g}, got {show_value(inst)}"
    if kw == "exclusiveMaximum":
        return where, f"must be less than {val:g}, got {show_value(inst)}"
    if kw in ("minItems", "maxItems", "items") and _is_pair_schema(err):
        return where, f"must be a pair of numbers [x, y], got {show_value(inst)}"
    if kw == "minItems":
        if path and path[-1] == "path":
            return where, (f"a rope needs at least {val} passes (where it starts and where it ends); "
                           f"this one has {len(inst)}")
        item = _NOUNS.get(str(path[-1]), "item") if path else "item"
        return where, f"needs at least {val} {item}{'s' if val != 1 else ''}, has {len(inst)}"
    if kw == "minLength":
        return where, "must not be empty"
    if kw == "maxLength":
        return where, f"is {len(inst):,} characters long; at most {val:,} fit here - shorten it"
    if kw == "maxItems":
        return where, too_many(path, len(inst), val)
    return where, f"is not valid here ({show_value(inst)})"


def too_many(path: Sequence[Any], count: int, limit: int) -> str:
    """Words for a list longer than the app handles (``limit`` entries; solver.limits)."""
    noun = _NOUNS.get(str(path[-1]), "entrie") if path else "entrie"
    return (f"holds {count:,} {noun}s; Ropewright handles at most {limit:,} in one rig "
            "(split the site into several rigs)")


def _is_pair_schema(err: Any) -> bool:
    sch = err.schema if isinstance(err.schema, dict) else {}
    return "prefixItems" in sch or sch is False
