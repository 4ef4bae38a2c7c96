"""Display units: the one place SI numbers become m/ft and N/kN/lbf for people, and back.

Everything inside Ropewright is SI (metres, newtons).  Conversion happens only
where a person reads or types a number.  Factors are the exact ones of
NIST SP 811 (2008), Appendix B: 1 ft = 0.3048 m, 1 lbf = 4.4482216152605 N.
Typed text is parsed with pint, so "12 ft", "3.5kN", "800 lbf" and "2,500,000 N"
all work; a bare number is taken in the field's own unit.  Numbers are read by the
rules of the user's locale, given as its decimal mark (``decimal``, "." or ","): the
other mark may only group thousands.  What two habits read a thousand times apart
("1,000" is 1000 with a decimal point and 1.0 with a decimal comma) is refused in words.
"""

from __future__ import annotations

import math
import re
from functools import lru_cache

from solver.errors import UnitError

FT_IN_M = 0.3048  # exact, NIST SP 811
LBF_IN_N = 4.4482216152605  # exact: 0.45359237 kg x 9.80665 m/s^2, NIST SP 811

#: metres or newtons per display unit
LENGTH_FACTORS: dict[str, float] = {"m": 1.0, "ft": FT_IN_M}
FORCE_FACTORS: dict[str, float] = {"N": 1.0, "kN": 1000.0, "lbf": LBF_IN_N}

#: m/s per unit of speed: 1 mph = 0.44704 m/s exactly (NIST SP 811); 1 km/h = 1/3.6 m/s by definition
SPEED_FACTORS: dict[str, float] = {"m/s": 1.0, "mph": 0.44704, "km/h": 1.0 / 3.6}
SPEED_ALIASES: dict[str, str] = {"m/s": "m/s", "ms": "m/s", "mps": "m/s", "mph": "mph",
                                 "km/h": "km/h", "kmh": "km/h", "kph": "km/h"}
#: m^2 per unit of area: 1 ft^2 = 0.3048^2 m^2 exactly (NIST SP 811)
AREA_FACTORS: dict[str, float] = {"m²": 1.0, "ft²": FT_IN_M**2}
AREA_ALIASES: dict[str, str] = {"m²": "m²", "m2": "m²", "m^2": "m²", "sqm": "m²",
                                "ft²": "ft²", "ft2": "ft²", "ft^2": "ft²", "sqft": "ft²"}

#: the unit systems offered to a user: (length unit, force unit)
SYSTEMS: dict[str, tuple[str, str]] = {"si": ("m", "kN"), "imperial": ("ft", "lbf")}

_UNIT_ALIASES: dict[str, str] = {
    "m": "meter", "metre": "meter", "metres": "meter", "meters": "meter",
    "ft": "foot", "feet": "foot", "foot": "foot", "'": "foot",
    "cm": "centimeter", "mm": "millimeter", "in": "inch", "inch": "inch", "inches": "inch",
    "n": "newton", "newton": "newton", "newtons": "newton",
    "kn": "kilonewton", "kilonewton": "kilonewton", "kilonewtons": "kilonewton",
    "lbf": "force_pound", "lb": "force_pound", "lbs": "force_pound", "pound": "force_pound", "pounds": "force_pound",
    "kgf": "kilogram_force", "kg": "kilogram_force",
}
_NUMBER_UNIT = re.compile(r"^\s*([-+]?(?:\d[\d_.,]*|[.,]\d+)(?:[eE][-+]?\d+)?)\s*([A-Za-z'/²^0-9 ]*?)\s*$")
#: spaces some locales group thousands with, allowed between digits
_SPACE_GROUPS = re.compile(r"(?<=\d)[\u00a0\u202f\u2009](?=\d)")
_MARK_NAMES = {".": "point", ",": "comma"}


@lru_cache(maxsize=1)
def _registry():
    """The pint registry, built once on first use (pint is slow to import)."""
    import pint

    return pint.UnitRegistry()


def _check_unit(unit: str, table: dict[str, float], what: str) -> float:
    try:
        return table[unit]
    except KeyError:
        raise UnitError(f"unknown {what} unit {unit!r}; use one of {', '.join(table)}") from None


def length_to(metres: float, unit: str) -> float:
    """A length in metres expressed in ``unit`` (m or ft)."""
    return metres / _check_unit(unit, LENGTH_FACTORS, "length")


def length_from(value: float, unit: str) -> float:
    """A length given in ``unit`` (m or ft) in metres."""
    return value * _check_unit(unit, LENGTH_FACTORS, "length")


def force_to(newtons: float, unit: str) -> float:
    """A force in newtons expressed in ``unit`` (N, kN or lbf)."""
    return newtons / _check_unit(unit, FORCE_FACTORS, "force")


def force_from(value: float, unit: str) -> float:
    """A force given in ``unit`` (N, kN or lbf) in newtons."""
    return value * _check_unit(unit, FORCE_FACTORS, "force")


def _digits(value: float, unit: str, kind: str) -> int:
    """Decimals a planner wants to see: enough to read, not false precision."""
    a = abs(value)
    if kind == "force":
        if unit == "kN":
            return 2 if a < 10 else 1
        return 0 if a >= 100 else 1
    return 2 if a < 10 else 1


def format_length(metres: float, unit: str = "m", digits: int | None = None) -> str:
    """A length for people, e.g. ``"12.4 m"`` or ``"40.7 ft"``."""
    v = length_to(metres, unit)
    if not math.isfinite(v):
        return "—"
    d = _digits(v, unit, "length") if digits is None else digits
    return f"{v:.{d}f} {unit}"


#: Thousands are grouped with a narrow no-break space, never a comma or a point, which readers of the
#: two decimal habits take a thousand times apart (SI Brochure, 9th ed., BIPM 2019, 5.4.4).
GROUP_SPACE = "\u202f"


def format_force(newtons: float, unit: str = "kN", digits: int | None = None) -> str:
    """A force for people, e.g. ``"2.71 kN"``, ``"610 lbf"``, ``"12 500 N"`` (thousands spaced)."""
    v = force_to(newtons, unit)
    if not math.isfinite(v):
        return "—"
    d = _digits(v, unit, "force") if digits is None else digits
    text = f"{v:,.{d}f}".replace(",", GROUP_SPACE) if unit != "kN" else f"{v:.{d}f}"
    return f"{text} {unit}"


def format_force_sig(newtons: float, unit: str = "kN", sig: int = 3) -> str:
    """A force to ``sig`` significant figures (a residual, an imbalance), e.g. ``"3.2e-05 kN"``, ``"12.4 lbf"``."""
    v = force_to(newtons, unit)
    if not math.isfinite(v):
        return "—"
    return f"{v:.{sig}g} {unit}"


def _grouped(digits: str, mark: str) -> bool:
    """True if ``digits`` is thousands grouped with ``mark``: 1-3 digits, then groups of exactly 3."""
    parts = digits.lstrip("+-").split(mark)
    return (1 <= len(parts[0]) <= 3 and all(p.isdigit() for p in parts)
            and all(len(p) == 3 for p in parts[1:]))


def plain_number(token: str, raw: str, decimal: str = ".") -> str:
    """A typed number ``token`` (digits, marks, exponent) as Python float text, read with ``decimal``.

    The other mark ("," when ``decimal`` is ".") may only group thousands, in groups of three.
    UnitError in words for a wrong decimal mark, and for a single group ("1,000", "1.000"),
    which the two habits read a thousand times apart.
    """
    if decimal not in _MARK_NAMES:
        raise UnitError(f"unknown decimal mark {decimal!r}")
    group = "," if decimal == "." else "."
    mantissa, exp = re.match(r"^([^eE]*)(.*)$", token).groups()
    mantissa = mantissa.replace("_", "")
    if mantissa.count(decimal) > 1:
        raise UnitError(f"{raw!r} has more than one decimal {_MARK_NAMES[decimal]}")
    whole, _, frac = mantissa.partition(decimal)
    if group in frac:
        raise UnitError(f"{raw!r} is not a number as your settings write them "
                        f"(a {_MARK_NAMES[decimal]} marks decimals, e.g. 1{group}250{decimal}5)")
    if group in whole:
        if not _grouped(whole, group):
            raise UnitError(f"{raw!r}: use a {_MARK_NAMES[decimal]} for decimals "
                            f"(e.g. 12{decimal}5), as your settings do")
        if whole.count(group) == 1 and decimal not in mantissa:
            head, tail = whole.split(group)
            raise UnitError(f"{raw!r} is ambiguous: it could be {head}{tail} or {head}{decimal}{tail}; "
                            f"type {head}{tail} or {head}{decimal}{tail} (no thousands "
                            f"{_MARK_NAMES[group]})")
        whole = whole.replace(group, "")
    return whole + ("." + frac if decimal in mantissa else "") + exp


def _read_number(text: str, default_unit: str, what: str, decimal: str = ".") -> tuple[float, str, str]:
    """Split typed text into (number, unit text, raw text); UnitError in words if it is not a number."""
    raw = (text or "").strip()
    if not raw:
        raise UnitError(f"enter a {what}, e.g. 2{decimal}5 {default_unit}")
    cleaned = _SPACE_GROUPS.sub("", raw.replace("\u2212", "-"))
    m = _NUMBER_UNIT.match(cleaned)
    if not m:
        raise UnitError(f"{raw!r} is not a number: type a {what} like 2{decimal}5 or 2{decimal}5 {default_unit}")
    try:
        number = float(plain_number(m.group(1), raw, decimal))
    except ValueError:
        raise UnitError(f"{raw!r} is not a number: type a {what} like 2{decimal}5") from None
    if not math.isfinite(number):
        raise UnitError(f"{raw!r} is not a finite number")
    return number, m.group(2), raw


def read_plain_number(text: str, decimal: str = ".", what: str = "number") -> float:
    """A typed plain number (no unit), read with the locale's ``decimal`` mark; UnitError in words."""
    number, unit_text, raw = _read_number(text, "", what, decimal)
    if unit_text:
        raise UnitError(f"{raw!r} is not a number")
    return number


def _parse(text: str, default_unit: str, dimension: str, factors: dict[str, float], what: str,
           decimal: str = ".") -> float:
    """Read typed text as an SI quantity of ``dimension``; bare numbers are in ``default_unit``."""
    _check_unit(default_unit, factors, what)
    number, unit_text, raw = _read_number(text, default_unit, what, decimal)
    if not unit_text:
        return number * factors[default_unit]
    if unit_text in factors:
        return number * factors[unit_text]
    name = _UNIT_ALIASES.get(unit_text.lower())
    if name is None:
        raise UnitError(f"{raw!r}: unknown unit {unit_text!r}; use {', '.join(factors)}")
    ureg = _registry()
    q = number * ureg(name)
    if not q.check(dimension):
        raise UnitError(f"{raw!r} is not a {what} (unit {unit_text!r})")
    base = "meter" if dimension == "[length]" else "newton"
    return float(q.to(base).magnitude)


def parse_in_table(text: str, default_unit: str, factors: dict[str, float], aliases: dict[str, str],
                   what: str, decimal: str = ".") -> float:
    """Typed text in one of a few named units (speed, area) as SI; bare numbers are in ``default_unit``."""
    _check_unit(default_unit, factors, what)
    number, unit_text, raw = _read_number(text, default_unit, what, decimal)
    if not unit_text:
        return number * factors[default_unit]
    unit = aliases.get(unit_text.replace(" ", "").lower()) or aliases.get(unit_text)
    if unit is None:
        raise UnitError(f"{raw!r}: unknown unit {unit_text!r}; use {', '.join(factors)}")
    return number * factors[unit]


def speed_unit_for(length_unit: str) -> str:
    """The speed unit people read beside a length unit: m/s with metres, mph with feet (as the load estimate)."""
    return "mph" if length_unit == "ft" else "m/s"


def format_speed(m_s: float, length_unit: str = "m") -> str:
    """A current speed for people in the rig's unit system, e.g. ``"2.0 m/s"``, ``"4.5 mph"``."""
    unit = speed_unit_for(length_unit)
    return f"{m_s / SPEED_FACTORS[unit]:.1f} {unit}"


def parse_speed(text: str, unit: str = "m/s", decimal: str = ".") -> float:
    """Typed current speed (``"2"``, ``"4.5 mph"``, ``"7 km/h"``) in m/s."""
    return parse_in_table(text, unit, SPEED_FACTORS, SPEED_ALIASES, "speed", decimal)


def parse_area(text: str, unit: str = "m²", decimal: str = ".") -> float:
    """Typed area (``"1.5"``, ``"16 ft2"``) in m²."""
    return parse_in_table(text, unit, AREA_FACTORS, AREA_ALIASES, "area", decimal)


def parse_length(text: str, unit: str = "m", decimal: str = ".") -> float:
    """Typed length text (``"12"``, ``"40 ft"``, ``"3.2 m"``) in metres; UnitError in words if unreadable."""
    return _parse(text, unit, "[length]", LENGTH_FACTORS, "length", decimal)


def parse_force(text: str, unit: str = "kN", decimal: str = ".") -> float:
    """Typed force text (``"2.5"``, ``"2.5 kN"``, ``"600 lbf"``) in newtons; UnitError in words if unreadable."""
    return _parse(text, unit, "[force]", FORCE_FACTORS, "force", decimal)


def system_units(system: str) -> tuple[str, str]:
    """(length unit, force unit) of a named system, ``si`` or ``imperial``."""
    try:
        return SYSTEMS[system]
    except KeyError:
        raise UnitError(f"unknown unit system {system!r}; use si or imperial") from None
