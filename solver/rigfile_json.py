"""Rig-file bytes to parsed JSON, with every problem a :class:`~solver.errors.RigFileError` naming line and column.

Text must be UTF-8; JSON is parsed, never evaluated; a key given twice in one object is noted
(``_DUPLICATE``) so the data check can name it with its path.
"""

from __future__ import annotations

import json
from typing import Any

from solver.errors import RigFileError


def _decode_utf8(raw: bytes) -> str:
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = raw.count(b"\n", 0, exc.start) + 1
        bad = raw[exc.start:exc.start + 1].hex().upper()
        raise RigFileError(
            f"the file is not UTF-8 text (byte 0x{bad} at offset {exc.start}); a rig file is JSON saved as UTF-8 "
            "- is this really a rig file?",
            where=f"line {line}",
        ) from None


_JSON_HINTS = (
    ("Expecting value", "a value is missing or not valid JSON here (a trailing comma, a stray character, "
                        "a decimal comma, or text without double quotes?)"),
    ("Expecting ',' delimiter", "a comma is missing between two items"),
    ("Expecting ':' delimiter", "a colon is missing after a key"),
    ("Expecting property name enclosed in double quotes", "expected a key in double quotes here "
                                                          "(a trailing comma before } ?)"),
    ("Unterminated string", "a text value is not closed with a double quote"),
    ("Invalid control character", "a text value holds a line break or control character; write it as \\n"),
    ("Invalid \\escape", "a backslash escape in a text value is not valid JSON"),
    ("Invalid \\uXXXX escape", "a \\u escape in a text value is not valid JSON"),
    ("Extra data", "unexpected text after the end of the rig object"),
)


def _parse_json(text: str) -> Any:
    """json.loads with errors as RigFileError naming line and column."""
    if not text.strip():
        raise RigFileError("the file is empty", where="line 1, column 1")
    try:
        return json.loads(text, object_pairs_hook=_object_noting_duplicates)
    except json.JSONDecodeError as exc:
        hint = next((h for k, h in _JSON_HINTS if exc.msg.startswith(k)), exc.msg)
        raise RigFileError(f"the file is not valid JSON: {hint}",
                           where=f"line {exc.lineno}, column {exc.colno}") from None
    except RecursionError:
        raise RigFileError("the file is nested too deeply to be a rig file", where="(file)") from None
    except ValueError as exc:  # e.g. an integer with thousands of digits
        raise RigFileError(f"the file holds a value that cannot be read ({exc})", where="(file)") from None


#: Key under which the JSON reader notes a key given twice in one object (not a string,
#: so it can never clash with a key from a file); reported with its path by _check_plain_data.
_DUPLICATE = object()


def _object_noting_duplicates(pairs: list[tuple[str, Any]]) -> dict[Any, Any]:
    out: dict[Any, Any] = dict(pairs)
    if len(out) == len(pairs):
        return out
    seen: set[str] = set()
    for key, _value in pairs:  # a key given twice: note the first repeated one
        if key in seen:
            out[_DUPLICATE] = key
            break
        seen.add(key)
    return out


def _kind_of(value: Any) -> str:
    if value is None:
        return "null"
    if isinstance(value, bool):
        return "true or false"
    if isinstance(value, (int, float)):
        return "a number"
    if isinstance(value, str):
        return "text"
    if isinstance(value, list):
        return "a list"
    if isinstance(value, dict):
        return "an object"
    return type(value).__name__
