"""The readers every table of a case file is read with.

:class:`TomlReader` checks the shapes TOML gives (tables, arrays, strings,
booleans, whole and plain numbers, choices, unknown keys) and needs no unit
system.  :class:`Reader` adds quantities and can only be made with the unit
system in hand, so no quantity is ever read before ``units`` is known.

Every failure raises :class:`~envelope.errors.CaseError` with the one-line
message ``<file>: <key path>: <problem>``.  Array items in key paths are
counted from 1 (``spans[1]`` is the first span).
"""

from __future__ import annotations

import json
import math
import re
from collections.abc import Callable, Iterable
from typing import Any, NoReturn, TypeVar

from envelope import config
from envelope.errors import CaseError
from envelope.units import UnitError, UnitSystem, parse_quantity

#: Every number, in consistent units, is 0 or of a magnitude in this range.  Products in
#: the analysis (E*I, loads times lengths to the fourth power) must stay inside float64;
#: no real beam comes near either bound.
MIN_MAGNITUDE = 1e-30
MAX_MAGNITUDE = 1e30

#: Positions read beyond a span's end by no more than this fraction of its
#: length are taken as the end (a unit string like "24 ft" and the plain
#: number 7.3152 differ in the last bit).
END_RTOL = 1e-12

#: Control characters (Unicode category Cc: C0, DEL and C1) and the Unicode line and
#: paragraph separators, refused in every text.
CONTROL = re.compile("[\x00-\x1f\x7f-\x9f\u2028\u2029]")

#: Top-level keys that belong before the first ``[table]`` header.
LEADING_KEYS = ("id", "title", "units")

T = TypeVar("T")
S = TypeVar("S", bound=str)


def one_line(text: str) -> str:
    """``text`` with every run of white space (newlines included) made one space."""
    return " ".join(text.split())


def join(base: str, name: str) -> str:
    """Key path ``base.name``; a key name that is not plain text is quoted (escaped), so
    that no key can break the one-line message."""
    if not re.fullmatch(r"[A-Za-z0-9_-]+", name):
        name = json.dumps(name)
    return f"{base}.{name}" if base else name


def item(base: str, index: int) -> str:
    """Key path of the item at 0-based ``index``, shown 1-based."""
    return f"{base}[{index + 1}]"


def misplaced_hint(document: dict[str, Any], name: str) -> str:
    """Where a missing top-level key was written after a table header instead (TOML puts
    every key after ``[table]`` inside that table)."""
    for header, value in document.items():
        items = value if isinstance(value, list) else [value]
        for entry in items:
            if isinstance(entry, dict) and name in entry:
                return (f"; a {name!r} was found inside [{header}]: top-level keys must "
                        "come before the first [table] header")
    return ""


def describe(value: object) -> str:
    """What a TOML value is, for 'expected X, got Y' messages."""
    if isinstance(value, bool):
        return f"a boolean ({str(value).lower()})"
    if isinstance(value, int):
        return f"an integer ({value})"
    if isinstance(value, float):
        return f"a number ({value:g})"
    if isinstance(value, str):
        return f"a string ({value!r})"
    if isinstance(value, dict):
        return "a table"
    if isinstance(value, list):
        return "an array"
    return "a date/time"


def suggest(word: str, choices: Iterable[str]) -> str:
    """"; did you mean 'x'?" for the nearest choice, or the list of choices."""
    import difflib  # only for a message

    options = list(choices)
    close = difflib.get_close_matches(word, options, n=1)
    if close:
        return f"; did you mean {close[0]!r}?"
    return f" (valid: {', '.join(options)})"


def pretty_unit(unit: str) -> str:
    """A pint unit string for a message: ``m**4`` is shown ``m^4``."""
    return unit.replace("**", "^")


class TomlReader:
    """Checks the shapes of TOML values; knows the file name, no unit system."""

    def __init__(self, source: str) -> None:
        self.source = source

    def fail(self, key: str, problem: str) -> NoReturn:
        """Refuse the value at ``key``: the one-line message, nothing half-read."""
        raise CaseError(self.source, key, one_line(problem))

    def table(self, value: object, key: str, *, what: str = "a table") -> dict[str, Any]:
        """``value`` as a table (a dict)."""
        if not isinstance(value, dict):
            self.fail(key, f"expected {what}, got {describe(value)}")
        return value

    def array_of_tables(self, value: object, key: str) -> list[dict[str, Any]]:
        """``value`` as an array of tables (``[[key]]``)."""
        if not isinstance(value, list):
            self.fail(key, f"expected an array of tables ([[{key}]]), got {describe(value)}")
        for i, entry in enumerate(value):
            self.table(entry, item(key, i))
        return value

    def optional_table(self, data: dict[str, Any], key: str,
                       allowed: Iterable[str]) -> dict[str, Any]:
        """The optional top-level table ``key`` (empty when absent), its keys checked."""
        table = self.table(data.get(key, {}), key)
        self.known_keys(table, key, allowed)
        return table

    def known_keys(self, table: dict[str, Any], key: str, allowed: Iterable[str]) -> None:
        """Refuse any key of ``table`` not in ``allowed``, suggesting the nearest."""
        allowed = tuple(allowed)
        for name in table:
            if name not in allowed:
                misplaced = ("; top-level keys must come before the first [table] header"
                             if key and name in LEADING_KEYS else "")
                self.fail(join(key, name),
                          f"unknown key {name!r}{suggest(name, allowed)}{misplaced}")

    def required(self, table: dict[str, Any], key: str, name: str) -> Any:
        """The value of the required key ``name`` of ``table``."""
        if name not in table:
            hint = misplaced_hint(table, name) if not key else ""
            self.fail(join(key, name), f"{name!r} is required{hint}")
        return table[name]

    def optional(self, table: dict[str, Any], key: str, name: str,
                 read: Callable[[object, str], T], default: T) -> T:
        """``read`` of the key ``name`` of ``table`` where it is given, else ``default``."""
        if name in table:
            return read(table[name], join(key, name))
        return default

    def string(self, value: object, key: str) -> str:
        """``value`` as a string: of at most ``config.TEXT_MAX_CHARS`` characters and
        without control characters (a line break, a NUL...), which no title, name or
        path needs and which would reach messages, tables and figures."""
        if not isinstance(value, str):
            self.fail(key, f"expected a string, got {describe(value)}")
        if len(value) > config.TEXT_MAX_CHARS:
            self.fail(key, f"a text of {len(value)} characters is too long (at most "
                           f"{config.TEXT_MAX_CHARS})")
        bad = CONTROL.search(value)
        if bad is not None:
            self.fail(key, f"control character U+{ord(bad.group()):04X} at position "
                           f"{bad.start() + 1}; write the text without it")
        return value

    def choice(self, value: object, key: str, choices: tuple[S, ...], what: str) -> S:
        """``value`` as one of ``choices`` (a string); ``what`` names it in messages."""
        text = self.string(value, key)
        if text not in choices:
            self.fail(key, f"unknown {what} {text!r}{suggest(text, choices)}")
        return text  # checked against the choices above

    def boolean(self, value: object, key: str) -> bool:
        """``value`` as true or false (never a number)."""
        if not isinstance(value, bool):
            self.fail(key, f"expected true or false, got {describe(value)}")
        return value

    def integer(self, value: object, key: str, lo: int, hi: int | None = None) -> int:
        """``value`` as a whole number from ``lo`` to ``hi`` (no upper bound when None)."""
        if isinstance(value, bool) or not isinstance(value, int):
            self.fail(key, f"expected a whole number, got {describe(value)}")
        if value < lo or (hi is not None and value > hi):
            bound = f"at least {lo}" if hi is None else f"from {lo} to {hi}"
            self.fail(key, f"must be {bound}, got {value}")
        return value

    def plain_number(self, value: object, key: str) -> float:
        """A dimensionless number (a factor or a ratio): no unit strings."""
        if isinstance(value, bool) or not isinstance(value, int | float):
            self.fail(key, f"expected a number, got {describe(value)}")
        try:
            out = float(value)
        except OverflowError:
            self.fail(key, "number too large")
        if not math.isfinite(out):
            self.fail(key, "must be a finite number (NaN and infinity are refused)")
        return out


class Reader(TomlReader):
    """Reads quantities as well: made only once the file's unit system is known."""

    def __init__(self, source: str, system: UnitSystem) -> None:
        super().__init__(source)
        self.system = system

    def number(self, value: object, key: str, quantity: str) -> float:
        """A quantity in consistent units: plain numbers are customary, strings carry units."""
        if isinstance(value, bool):
            self.fail(key, f"expected a number, got {describe(value)}")
        if isinstance(value, int | float):
            try:
                out = float(value) * self.system.to_consistent(quantity)
            except OverflowError:
                self.fail(key, "number too large")
        elif isinstance(value, str):
            try:
                out = parse_quantity(value, self.system, quantity)
            except UnitError as exc:
                self.fail(key, str(exc))
        else:
            self.fail(key, f"expected a number or a string with units, got {describe(value)}")
        if not math.isfinite(out):
            self.fail(key, "must be a finite number (NaN and infinity are refused)")
        if out != 0.0 and not (MIN_MAGNITUDE <= abs(out) <= MAX_MAGNITUDE):
            unit = pretty_unit(self.system.consistent(quantity))
            self.fail(key, f"{self.shown(value, quantity)} is {abs(out):.3g} {unit}, outside "
                           f"the range the analysis can carry ({MIN_MAGNITUDE:g} to "
                           f"{MAX_MAGNITUDE:g} {unit}); check the value and its unit")
        return out

    def shown(self, value: object, quantity: str) -> str:
        """The value as the user wrote it, with the customary unit for plain numbers."""
        if isinstance(value, str):
            return repr(value)
        return f"{value:g} {pretty_unit(self.system.customary(quantity))}"

    def positive(self, value: object, key: str, quantity: str) -> float:
        """A quantity greater than zero, in consistent units."""
        out = self.number(value, key, quantity)
        if out <= 0.0:
            self.fail(key, f"must be greater than zero, got {self.shown(value, quantity)}")
        return out

    def non_negative(self, value: object, key: str, quantity: str) -> float:
        """A quantity of zero or more, in consistent units."""
        out = self.number(value, key, quantity)
        if out < 0.0:
            self.fail(key, f"must not be negative, got {self.shown(value, quantity)}")
        return out

    def length_unit(self) -> str:
        """The customary length unit of the system (m or ft), for messages."""
        return self.system.customary("length")

    def fmt_len(self, x: float) -> str:
        """A length for a message: six significant digits and its unit."""
        return f"{x:.6g} {self.length_unit()}"

    def within_span(self, value: object, key: str, length: float, what: str,
                    span_no: int | None = None) -> float:
        """A span-local position in [0, length] (ends within END_RTOL snap to the end)."""
        x = self.number(value, key, "length")
        if x > length and x <= length * (1.0 + END_RTOL):
            x = length
        if x < 0.0 or x > length:
            where = f"span {span_no}" if span_no is not None else "the span"
            self.fail(key, f"{what} = {self.shown(value, 'length')} is outside {where} "
                           f"(0 to {self.fmt_len(length)})")
        return x
