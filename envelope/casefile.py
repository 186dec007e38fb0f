"""Read one case file (TOML) into a validated, frozen :class:`~envelope.model.Beam`.

This module is the only place input is checked: every value is read, converted
to the consistent units of the file's system (SI: m, kN; US: ft, kip; see
:mod:`envelope.units`) and validated once, so nothing downstream re-checks.
Every problem raises :class:`~envelope.errors.CaseError` with a one-line
message ``<file>: <key path>: <problem>``.

Numbering in key paths: array items are counted from 1, the way engineers
count spans and supports, so ``spans[1]`` is the first span, ``supports[5]``
the fifth joint from the left and ``loads[3]`` the third ``[[loads]]`` item in
the file.  The same 1-based numbers are used for span numbers inside
``spans = [...]`` of a load.  (Inside the model, ``Load.span`` is 0-based.)

Plain numbers are read in the system's customary unit for the quantity (MPa
for E, mm^4 for I in SI, ...); strings such as ``"24 ft"`` are read with their
own unit.  Booleans are never numbers, NaN and infinity are refused, and
unknown keys are refused at every level with the nearest valid key suggested.
"""

from __future__ import annotations

import difflib
import hashlib
import itertools
import json
import math
import os
import re
import tomllib
from collections.abc import Iterable
from pathlib import Path
from typing import Any, NoReturn

from envelope import stability
from envelope.errors import CaseError
from envelope.model import (
    CASE_KINDS,
    LIVE_KINDS,
    PATTERNED_BY_DEFAULT,
    Beam,
    Combination,
    CombinationSpec,
    Load,
    LoadCase,
    OutputOptions,
    Patterning,
    Section,
    Span,
    Stretch,
    Support,
)
from envelope.units import SYSTEMS, UnitError, UnitSystem, parse_quantity

# ---------------------------------------------------------------------------
# The contract's vocabulary (case-format.md)
# ---------------------------------------------------------------------------

TOP_KEYS = ("id", "title", "units", "section", "spans", "supports", "cases", "loads",
            "combinations", "patterning", "output", "design")
SECTION_KEYS = ("E", "I", "A", "unit_weight")
SPAN_KEYS = ("length", *SECTION_KEYS, "sections")
STRETCH_KEYS = ("from", "to", *SECTION_KEYS)
SUPPORT_TYPES = ("pinned", "fixed", "free", "spring")
SUPPORT_KEYS: dict[str, tuple[str, ...]] = {
    "pinned": ("type", "width"),
    "fixed": ("type", "width"),
    "free": ("type",),
    "spring": ("type", "k_vertical", "k_rotation", "columns", "width"),
}
COLUMN_KEYS = ("E", "I", "height_below", "height_above", "far_end")
#: Column far-end condition -> coefficient c in k = c*E*I/h (common practice:
#: 4EI/h with the far end fixed, 3EI/h with it pinned).
FAR_END_COEFFICIENT = {"fixed": 4.0, "pinned": 3.0}
CASE_KEYS = ("kind", "pattern", "category")
CATEGORIES = ("A", "B", "C", "D", "E", "F", "G", "H")
LOAD_TYPES = ("uniform", "linear", "point", "moment", "self_weight")
LOAD_KEYS: dict[str, tuple[str, ...]] = {
    "uniform": ("case", "type", "spans", "w", "start", "end"),
    "linear": ("case", "type", "spans", "w_start", "w_end", "start", "end"),
    "point": ("case", "type", "spans", "P", "at"),
    "moment": ("case", "type", "spans", "M", "at"),
    "self_weight": ("case", "type", "spans", "start", "end"),
}
ALL_LOAD_KEYS = tuple(sorted({k for keys in LOAD_KEYS.values() for k in keys}))
COMBINATION_KEYS = ("strength", "service", "reduced_companion_live", "custom")
STRENGTH_SETS = ("asce7-lrfd", "asce7-asd", "en1990-6.10", "en1990-6.10ab", "none")
SERVICE_SETS = ("characteristic", "none")
CUSTOM_KEYS = ("name", "set", "factors")
COMBINATION_SETS = ("strength", "service")
PATTERNING_KEYS = ("method", "segments", "favourable_dead")
PATTERN_METHODS = ("none", "code", "exhaustive", "segments")
#: Every number, in consistent units, is 0 or of a magnitude in this range.  Products in
#: the analysis (E*I, loads times lengths to the fourth power) must stay inside float64;
#: no real beam comes near either bound.
MIN_MAGNITUDE = 1e-30
MAX_MAGNITUDE = 1e30

#: Shortest stretch of constant section, as a fraction of its span.  Shorter elements
#: are so much stiffer than their neighbours that double precision cannot resolve their
#: end forces to the statics tolerance (measured: a 12 m span fails below about 8 mm).
MIN_STRETCH = 2e-3

#: Upper bound on ``segments``: parts per span, each a separate unit load case.
MAX_SEGMENTS = 1000
#: Bounds on favourable_dead: a factor on dead load, 0 (removed) to 2 (doubled).
FAVOURABLE_DEAD_RANGE = (0.0, 2.0)
OUTPUT_KEYS = ("stations_per_span", "all_cases", "moment_plot")
STATIONS_RANGE = (2, 100_001)
MOMENT_PLOTS = ("sagging-up", "tension-side")

DESIGN_KEYS = ("material", "code", "b", "h", "cover_to_bar_centre", "flange_width",
               "flange_depth", "fc", "fy", "stirrup_fy", "deflection_limits", "Fy",
               "sections", "section")
DESIGN_MATERIAL_KEYS: dict[str, tuple[str, ...]] = {
    "concrete": ("material", "code", "b", "h", "cover_to_bar_centre", "flange_width",
                 "flange_depth", "fc", "fy", "stirrup_fy", "deflection_limits"),
    "steel": ("material", "code", "Fy", "sections", "section", "deflection_limits"),
}
DESIGN_CODES: dict[str, tuple[str, ...]] = {
    "concrete": ("aci318-19", "en1992-1-1"),
    "steel": ("aisc360-22",),
}
#: [design] numbers and the quantity their unit strings are read as.  Plain
#: numbers are section units (mm, MPa in SI; in, ksi in US) and are kept as given.
DESIGN_LENGTHS = ("b", "h", "cover_to_bar_centre", "flange_width", "flange_depth")
DESIGN_STRESSES = ("fc", "fy", "stirrup_fy", "Fy")
DESIGN_SECTION_KEYS = ("name", "Zx", "Ix", "Aw")
DEFLECTION_LIMIT_KEYS = ("live", "total")

ID_PATTERN = re.compile(r"[A-Za-z0-9._-]{1,64}")
CASE_NAME_PATTERN = re.compile(r"[A-Za-z][A-Za-z0-9_]*")

#: Positions read beyond a span's end by no more than this fraction of its
#: length are taken as the end (a unit string like "24 ft" and the plain
#: number 7.3152 differ in the last bit).
END_RTOL = 1e-12


# ---------------------------------------------------------------------------
# Entry points
# ---------------------------------------------------------------------------


def load_case(path: str | os.PathLike[str]) -> Beam:
    """Read, check and convert the case file at ``path``.

    ``Beam.input_sha256`` is the SHA-256 of the file's raw bytes, so a result
    can be traced to the exact input it came from.  A UTF-8 byte-order mark is
    accepted (some editors write one).
    """
    source = os.fspath(path)
    try:
        raw = Path(source).read_bytes()
    except OSError as exc:
        raise CaseError(source, "", f"cannot read the file ({exc.strerror or exc})") from None
    sha256 = hashlib.sha256(raw).hexdigest()
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise CaseError(
            source, "",
            f"the file is not UTF-8 text (byte 0x{raw[exc.start]:02x} at offset {exc.start})",
        ) from None
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise CaseError(source, "", f"not valid TOML: {_one_line(str(exc))}") from None
    if not data:
        raise CaseError(source, "", "the file is empty (no keys, only blanks or comments)")
    return parse_case(data, source, sha256)


def parse_case(data: dict[str, Any], source: str, sha256: str = "") -> Beam:
    """Check and convert an already-parsed case file (the TOML document as a dict).

    ``source`` names the file in every message; the default id is its stem.
    """
    return _Reader(source).beam(data, sha256)


# ---------------------------------------------------------------------------
# Small helpers
# ---------------------------------------------------------------------------


def _one_line(text: str) -> str:
    return " ".join(text.split())


def _join(base: str, name: str) -> str:
    """Key path ``base.name``; a key name that is not plain text is quoted (escaped), so
    that no key can break the one-line message."""
    if not re.fullmatch(r"[A-Za-z0-9_-]+", name):
        name = json.dumps(name)
    return f"{base}.{name}" if base else name


def _misplaced_hint(document: dict[str, Any], name: str) -> str:
    """Where a missing top-level key was written after a table header instead (TOML puts
    every key after ``[table]`` inside that table)."""
    for header, value in document.items():
        items = value if isinstance(value, list) else [value]
        for item in items:
            if isinstance(item, dict) and name in item:
                return (f"; a {name!r} was found inside [{header}]: top-level keys must "
                        "come before the first [table] header")
    return ""


def _item(base: str, index: int) -> str:
    """Key path of the item at 0-based ``index``, shown 1-based."""
    return f"{base}[{index + 1}]"


def _describe(value: object) -> str:
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


def _suggest(word: str, choices: Iterable[str]) -> str:
    """"; did you mean 'x'?" for the nearest choice, or the list of choices."""
    options = list(choices)
    close = difflib.get_close_matches(word, options, n=1)
    if close:
        return f"; did you mean {close[0]!r}?"
    return f" (valid: {', '.join(options)})"


def _pretty_unit(unit: str) -> str:
    return unit.replace("**", "^")


class _Reader:
    """Reads one case document; holds the file name and, once known, the unit system."""

    def __init__(self, source: str) -> None:
        self.source = source
        self.system: UnitSystem = SYSTEMS["SI"]

    # -- failures and generic shapes ---------------------------------------

    def fail(self, key: str, problem: str) -> NoReturn:
        raise CaseError(self.source, key, _one_line(problem))

    def table(self, value: object, key: str, *, what: str = "a table") -> dict[str, Any]:
        if not isinstance(value, dict):
            self.fail(key, f"expected {what}, got {_describe(value)}")
        return value

    def array_of_tables(self, value: object, key: str) -> list[dict[str, Any]]:
        if not isinstance(value, list):
            self.fail(key, f"expected an array of tables ([[{key}]]), got {_describe(value)}")
        for i, item in enumerate(value):
            self.table(item, _item(key, i))
        return value

    def known_keys(self, table: dict[str, Any], key: str, allowed: Iterable[str]) -> None:
        allowed = tuple(allowed)
        for name in table:
            if name not in allowed:
                misplaced = ("; top-level keys must come before the first [table] header"
                             if key and name in ("id", "title", "units") else "")
                self.fail(_join(key, name),
                          f"unknown key {name!r}{_suggest(name, allowed)}{misplaced}")

    def required(self, table: dict[str, Any], key: str, name: str) -> Any:
        if name not in table:
            hint = _misplaced_hint(table, name) if not key else ""
            self.fail(_join(key, name), f"{name!r} is required{hint}")
        return table[name]

    def string(self, value: object, key: str) -> str:
        if not isinstance(value, str):
            self.fail(key, f"expected a string, got {_describe(value)}")
        return value

    def choice(self, value: object, key: str, choices: tuple[str, ...], what: str) -> str:
        text = self.string(value, key)
        if text not in choices:
            self.fail(key, f"unknown {what} {text!r}{_suggest(text, choices)}")
        return text

    def boolean(self, value: object, key: str) -> bool:
        if not isinstance(value, bool):
            self.fail(key, f"expected true or false, got {_describe(value)}")
        return value

    def integer(self, value: object, key: str, lo: int, hi: int | None = None) -> int:
        if isinstance(value, bool) or not isinstance(value, int):
            self.fail(key, f"expected a whole number, got {_describe(value)}")
        if value < lo or (hi is not None and value > hi):
            bound = f"at least {lo}" if hi is None else f"from {lo} to {hi}"
            self.fail(key, f"must be {bound}, got {value}")
        return value

    def plain_number(self, value: object, key: str) -> float:
        """A dimensionless number (a factor or a ratio): no unit strings."""
        if isinstance(value, bool) or not isinstance(value, int | float):
            self.fail(key, f"expected a number, got {_describe(value)}")
        try:
            out = float(value)
        except OverflowError:
            self.fail(key, "number too large")
        if not math.isfinite(out):
            self.fail(key, "must be a finite number (NaN and infinity are refused)")
        return out

    # -- quantities ---------------------------------------------------------

    def number(self, value: object, key: str, quantity: str) -> float:
        """A quantity in consistent units: plain numbers are customary, strings carry units."""
        if isinstance(value, bool):
            self.fail(key, f"expected a number, got {_describe(value)}")
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
            self.fail(key, f"expected a number or a string with units, got {_describe(value)}")
        if not math.isfinite(out):
            self.fail(key, "must be a finite number (NaN and infinity are refused)")
        if out != 0.0 and not (MIN_MAGNITUDE <= abs(out) <= MAX_MAGNITUDE):
            unit = _pretty_unit(self.system.consistent(quantity))
            self.fail(key, f"{self.shown(value, quantity)} is {abs(out):.3g} {unit}, outside "
                           f"the range the analysis can carry ({MIN_MAGNITUDE:g} to "
                           f"{MAX_MAGNITUDE:g} {unit}); check the value and its unit")
        return out

    def shown(self, value: object, quantity: str) -> str:
        """The value as the user wrote it, with the customary unit for plain numbers."""
        if isinstance(value, str):
            return repr(value)
        return f"{value:g} {_pretty_unit(self.system.customary(quantity))}"

    def positive(self, value: object, key: str, quantity: str) -> float:
        out = self.number(value, key, quantity)
        if out <= 0.0:
            self.fail(key, f"must be greater than zero, got {self.shown(value, quantity)}")
        return out

    def non_negative(self, value: object, key: str, quantity: str) -> float:
        out = self.number(value, key, quantity)
        if out < 0.0:
            self.fail(key, f"must not be negative, got {self.shown(value, quantity)}")
        return out

    def length_unit(self) -> str:
        return self.system.customary("length")

    def fmt_len(self, x: float) -> str:
        return f"{x:.6g} {self.length_unit()}"

    # -- the document -------------------------------------------------------

    def beam(self, data: dict[str, Any], sha256: str) -> Beam:
        self.table(data, "")
        self.known_keys(data, "", TOP_KEYS)
        self.system = self.units(data)
        beam_id = self.beam_id(data)
        title = self.string(data["title"], "title") if "title" in data else ""
        default = self.section_table(data)
        spans = self.spans(data, default)
        supports = self.supports(data, spans)
        cases = self.cases(data)
        loads = self.loads(data, spans, cases)
        combinations = self.combinations(data, cases)
        patterning = self.patterning(data)
        output = self.output(data)
        design = self.design(data)
        stability.check(spans, supports, self.source, length_unit=self.length_unit())
        return Beam(
            id=beam_id, title=title, units=self.system, spans=spans, supports=supports,
            cases=cases, loads=loads, combinations=combinations, patterning=patterning,
            output=output, design=design, source=self.source, input_sha256=sha256,
        )

    def units(self, data: dict[str, Any]) -> UnitSystem:
        if "units" not in data:
            self.fail("units", 'required: units = "SI" or units = "US"'
                               + _misplaced_hint(data, "units"))
        name = self.string(data["units"], "units")
        if name not in SYSTEMS:
            self.fail("units", f'unknown unit system {name!r}; use "SI" or "US"')
        return SYSTEMS[name]

    def beam_id(self, data: dict[str, Any]) -> str:
        if "id" in data:
            beam_id = self.string(data["id"], "id")
            given = "id"
        else:
            beam_id = Path(self.source).stem
            given = "the file name"
        if not ID_PATTERN.fullmatch(beam_id) or beam_id in (".", ".."):
            hint = "" if given == "id" else "; give an id in the file"
            self.fail("id", f"{given} {beam_id!r} is not a valid id: use 1 to 64 letters, "
                            f"digits, '.', '_' or '-', and not '.' or '..'{hint}")
        return beam_id

    # -- sections and spans -------------------------------------------------

    def section_props(self, table: dict[str, Any], key: str,
                      base: dict[str, float | None]) -> dict[str, float | None]:
        """E, I, A, unit_weight from ``table`` over ``base`` (all positive)."""
        props = dict(base)
        quantities = {"E": "modulus", "I": "inertia", "A": "area", "unit_weight": "unit_weight"}
        for name, quantity in quantities.items():
            if name in table:
                props[name] = self.positive(table[name], _join(key, name), quantity)
        return props

    def section_table(self, data: dict[str, Any]) -> dict[str, float | None]:
        empty: dict[str, float | None] = {"E": None, "I": None, "A": None, "unit_weight": None}
        if "section" not in data:
            return empty
        table = self.table(data["section"], "section")
        self.known_keys(table, "section", SECTION_KEYS)
        return self.section_props(table, "section", empty)

    def make_section(self, props: dict[str, float | None], key: str) -> Section:
        for name in ("E", "I"):
            if props[name] is None:
                self.fail(key, f"no {name} for this span: give {name} in [section] or here")
        E, I = props["E"], props["I"]  # noqa: E741 - the engineering names
        assert E is not None and I is not None
        return Section(E=E, I=I, A=props["A"], unit_weight=props["unit_weight"])

    def spans(self, data: dict[str, Any], default: dict[str, float | None]) -> tuple[Span, ...]:
        if "spans" not in data:
            self.fail("spans", "required: at least one [[spans]] with a length")
        items = self.array_of_tables(data["spans"], "spans")
        if not items:
            self.fail("spans", "at least one span is required")
        return tuple(self.span(item, _item("spans", i), default) for i, item in enumerate(items))

    def span(self, table: dict[str, Any], key: str, default: dict[str, float | None]) -> Span:
        self.known_keys(table, key, SPAN_KEYS)
        length = self.positive(self.required(table, key, "length"), _join(key, "length"),
                               "length")
        props = self.section_props(table, key, default)
        section = self.make_section(props, key)
        pieces: list[tuple[float, float, Section, str]] = []
        if "sections" in table:
            skey = _join(key, "sections")
            for j, stretch in enumerate(self.array_of_tables(table["sections"], skey)):
                pieces.append(self.stretch(stretch, _item(skey, j), length, props))
        pieces.sort(key=lambda p: p[0])
        for (_, prev_end, _, prev_key), (start, _, _, this_key) in itertools.pairwise(pieces):
            if start < prev_end:
                self.fail(this_key, f"overlaps {prev_key} (which ends at {self.fmt_len(prev_end)})")
        stretches: list[Stretch] = []
        x = 0.0
        shortest = MIN_STRETCH * length
        for start, end, sec, skey in pieces:
            if start > x:
                self.long_enough(x, start, shortest, skey, "the part of the span before it")
                stretches.append(Stretch(x, start, section))
            self.long_enough(start, end, shortest, skey, "this stretch")
            stretches.append(Stretch(start, end, sec))
            x = end
        if x < length:
            if pieces:
                self.long_enough(x, length, shortest, pieces[-1][3],
                                 "the part of the span after it")
            stretches.append(Stretch(x, length, section))
        return Span(length=length, stretches=tuple(stretches))

    def long_enough(self, start: float, end: float, shortest: float, key: str,
                    what: str) -> None:
        """Refuse a stretch too short to analyse in double precision (see MIN_STRETCH)."""
        if end - start < shortest:
            self.fail(key, f"{what} is {self.fmt_len(end - start)} long, less than "
                           f"1/{round(1 / MIN_STRETCH)} of the span ({self.fmt_len(shortest)}):"
                           " too short to analyse accurately; merge it with its neighbour")

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

    def stretch(self, table: dict[str, Any], key: str, length: float,
                span_props: dict[str, float | None]) -> tuple[float, float, Section, str]:
        self.known_keys(table, key, STRETCH_KEYS)
        start = self.within_span(self.required(table, key, "from"), _join(key, "from"),
                                 length, "from")
        end = self.within_span(self.required(table, key, "to"), _join(key, "to"),
                               length, "to")
        if not start < end:
            self.fail(key, f"'from' ({self.fmt_len(start)}) must be less than 'to' "
                           f"({self.fmt_len(end)})")
        section = self.make_section(self.section_props(table, key, span_props), key)
        return start, end, section, key

    # -- supports -----------------------------------------------------------

    def supports(self, data: dict[str, Any], spans: tuple[Span, ...]) -> tuple[Support, ...]:
        if "supports" not in data:
            self.fail("supports", f"required: one [[supports]] per joint ({len(spans) + 1} "
                                  f"for {len(spans)} spans)")
        items = self.array_of_tables(data["supports"], "supports")
        if len(items) != len(spans) + 1:
            self.fail("supports", f"expected {len(spans) + 1} supports (one per joint: "
                                  f"{len(spans)} spans + 1), found {len(items)}")
        supports = tuple(self.support(item, _item("supports", j)) for j, item in enumerate(items))
        for i, span in enumerate(spans):
            faces = supports[i].width / 2.0 + supports[i + 1].width / 2.0
            if faces >= span.length:
                wider = i + 1 if supports[i + 1].width > 0.0 else i  # 0-based joint
                self.fail(_join(_item("supports", wider), "width"),
                          f"the support faces meet or overlap in span {i + 1} (half-widths "
                          f"add up to {self.fmt_len(faces)}, span {self.fmt_len(span.length)})")
        return supports

    def support(self, table: dict[str, Any], key: str) -> Support:
        kind = self.choice(self.required(table, key, "type"), _join(key, "type"),
                           SUPPORT_TYPES, "support type")
        allowed = SUPPORT_KEYS[kind]
        for name in table:
            if name in allowed:
                continue
            if kind == "free" and name == "width":
                self.fail(_join(key, name), "a free support has no width (it restrains "
                                            "nothing, so there is no support face)")
            if name in SUPPORT_KEYS["spring"]:
                self.fail(_join(key, name), f"key {name!r} applies to spring supports only")
            self.fail(_join(key, name), f"unknown key {name!r}{_suggest(name, allowed)}")
        width = 0.0
        if "width" in table:
            width = self.non_negative(table["width"], _join(key, "width"), "length")
        if kind == "pinned":
            return Support("pinned", math.inf, 0.0, width)
        if kind == "fixed":
            return Support("fixed", math.inf, math.inf, width)
        if kind == "free":
            return Support("free", 0.0, 0.0, 0.0)
        k_vertical = math.inf
        if "k_vertical" in table:
            k_vertical = self.non_negative(table["k_vertical"], _join(key, "k_vertical"),
                                           "k_vertical")
        if "k_rotation" in table and "columns" in table:
            self.fail(_join(key, "columns"), "give either k_rotation or columns, not both")
        k_rotation = 0.0
        if "k_rotation" in table:
            k_rotation = self.non_negative(table["k_rotation"], _join(key, "k_rotation"),
                                           "k_rotation")
        if "columns" in table:
            k_rotation = self.columns(table["columns"], _join(key, "columns"))
        if width > 0.0 and k_vertical == 0.0 and k_rotation == 0.0:
            self.fail(_join(key, "width"), "a spring support with no stiffness restrains "
                                           "nothing, so it has no support face")
        return Support("spring", k_vertical, k_rotation, width)

    def columns(self, value: object, key: str) -> float:
        """Rotational stiffness of the columns framing in: sum of c*E*I/h over the
        columns present, c = 4 with the far end fixed, 3 with it pinned (common practice)."""
        table = self.table(value, key)
        self.known_keys(table, key, COLUMN_KEYS)
        E = self.positive(self.required(table, key, "E"), _join(key, "E"), "modulus")
        I = self.positive(self.required(table, key, "I"), _join(key, "I"), "inertia")  # noqa: E741
        far_end = self.choice(self.required(table, key, "far_end"), _join(key, "far_end"),
                              tuple(FAR_END_COEFFICIENT), "far-end condition")
        heights = [self.positive(table[h], _join(key, h), "length")
                   for h in ("height_below", "height_above") if h in table]
        if not heights:
            self.fail(key, "give height_below, height_above or both")
        c = FAR_END_COEFFICIENT[far_end]
        return math.fsum(c * E * I / h for h in heights)

    # -- cases and loads ----------------------------------------------------

    def cases(self, data: dict[str, Any]) -> tuple[LoadCase, ...]:
        if "cases" not in data:
            self.fail("cases", "required: declare every load case, e.g. D = { kind = \"dead\" }")
        table = self.table(data["cases"], "cases")
        if not table:
            self.fail("cases", "no load cases declared")
        out = []
        for name, value in table.items():
            key = _join("cases", name)
            if not CASE_NAME_PATTERN.fullmatch(name):
                self.fail(key, f"case name {name!r} must start with a letter and use only "
                               "letters, digits and '_'")
            case = self.table(value, key)
            self.known_keys(case, key, CASE_KEYS)
            kind = self.choice(self.required(case, key, "kind"), _join(key, "kind"),
                               CASE_KINDS, "case kind")
            patterned = kind in PATTERNED_BY_DEFAULT
            if "pattern" in case:
                patterned = self.boolean(case["pattern"], _join(key, "pattern"))
            category = None
            if "category" in case:
                category = self.choice(case["category"], _join(key, "category"), CATEGORIES,
                                       "category")
                if kind not in LIVE_KINDS:
                    self.fail(_join(key, "category"),
                              "categories A to H (EN 1990 Table A1.1) apply to imposed loads: "
                              f"kind 'live' or 'roof_live', not {kind!r}")
            out.append(LoadCase(name=name, kind=kind, patterned=patterned,  # type: ignore[arg-type]
                                category=category))
        return tuple(out)

    def loads(self, data: dict[str, Any], spans: tuple[Span, ...],
              cases: tuple[LoadCase, ...]) -> tuple[Load, ...]:
        if "loads" not in data:
            self.fail("loads", "the beam has no loads: add at least one [[loads]]")
        items = self.array_of_tables(data["loads"], "loads")
        if not items:
            self.fail("loads", "the beam has no loads: add at least one [[loads]]")
        names = tuple(c.name for c in cases)
        out: list[Load] = []
        for i, item in enumerate(items):
            out.extend(self.load(item, _item("loads", i), spans, names))
        return tuple(out)

    def load_spans(self, value: object, key: str, n_spans: int) -> list[int]:
        """1-based span numbers ("all", one number or a list) -> 0-based indices."""
        if value == "all":
            return list(range(n_spans))
        if isinstance(value, str):
            self.fail(key, f'expected "all", a span number or a list of span numbers, '
                           f"got {value!r}")
        numbers = value if isinstance(value, list) else [value]
        if not numbers:
            self.fail(key, "the list of spans is empty")
        seen: set[int] = set()
        for number in numbers:
            if isinstance(number, bool) or not isinstance(number, int):
                self.fail(key, f'expected "all", a span number or a list of span numbers, '
                               f"got {_describe(number)}")
            if not 1 <= number <= n_spans:
                self.fail(key, f"span {number} is out of range (the beam has {n_spans} "
                               f"span{'s' if n_spans != 1 else ''}, numbered from 1)")
            if number in seen:
                self.fail(key, f"span {number} is listed twice")
            seen.add(number)
        return [n - 1 for n in numbers]

    def load(self, table: dict[str, Any], key: str, spans: tuple[Span, ...],
             case_names: tuple[str, ...]) -> list[Load]:
        load_type = self.choice(self.required(table, key, "type"), _join(key, "type"),
                                LOAD_TYPES, "load type")
        allowed = LOAD_KEYS[load_type]
        for name in table:
            if name in allowed:
                continue
            if name in ALL_LOAD_KEYS:
                self.fail(_join(key, name), f"key {name!r} does not apply to a {load_type} "
                                            f"load (keys: {', '.join(allowed)})")
            self.fail(_join(key, name), f"unknown key {name!r}{_suggest(name, allowed)}")
        case = self.string(self.required(table, key, "case"), _join(key, "case"))
        if case not in case_names:
            close = difflib.get_close_matches(case, case_names, n=1)
            hint = f"; did you mean {close[0]!r}?" if close else ""
            self.fail(_join(key, "case"), f"case {case!r} is not declared in [cases] "
                                          f"(declared: {', '.join(case_names)}){hint}")
        indices = self.load_spans(self.required(table, key, "spans"), _join(key, "spans"),
                                  len(spans))
        values: dict[str, float] = {}
        for name, quantity in (("w", "line_load"), ("w_start", "line_load"),
                               ("w_end", "line_load"), ("P", "force"), ("M", "moment")):
            if name in allowed:
                values[name] = self.number(self.required(table, key, name), _join(key, name),
                                           quantity)
        out = []
        for index in indices:
            span = spans[index]
            common = {"case": case, "type": load_type, "span": index, "key": key}
            if load_type in ("point", "moment"):
                at = self.within_span(self.required(table, key, "at"), _join(key, "at"),
                                      span.length, "at", index + 1)
                force = {"P": values["P"]} if load_type == "point" else {"M": values["M"]}
                out.append(Load(**common, at=at, **force))  # type: ignore[arg-type]
                continue
            start, end = self.extent(table, key, span, index)
            if load_type == "self_weight":
                self.check_self_weight(span, index, start, end, key)
                out.append(Load(**common, start=start, end=end))  # type: ignore[arg-type]
                continue
            if load_type == "uniform":
                w_start = w_end = values["w"]
            else:
                w_start, w_end = values["w_start"], values["w_end"]
            out.append(Load(**common, start=start, end=end,  # type: ignore[arg-type]
                            w_start=w_start, w_end=w_end))
        return out

    def extent(self, table: dict[str, Any], key: str, span: Span,
               index: int) -> tuple[float, float]:
        start = 0.0
        end = span.length
        if "start" in table:
            start = self.within_span(table["start"], _join(key, "start"), span.length,
                                     "start", index + 1)
        if "end" in table:
            end = self.within_span(table["end"], _join(key, "end"), span.length, "end",
                                   index + 1)
        if start == end:
            self.fail(key, f"zero-length load on span {index + 1} (start = end = "
                           f"{self.fmt_len(start)})")
        if start > end:
            self.fail(key, f"start ({self.fmt_len(start)}) is after end ({self.fmt_len(end)}) "
                           f"on span {index + 1}")
        return start, end

    def check_self_weight(self, span: Span, index: int, start: float, end: float,
                          key: str) -> None:
        for stretch in span.stretches:
            if stretch.end <= start or stretch.start >= end:
                continue
            if stretch.section.self_weight is None:
                part = ("" if len(span.stretches) == 1 else
                        f" (stretch {self.fmt_len(stretch.start)} to {self.fmt_len(stretch.end)})")
                self.fail(key, f"self weight on span {index + 1}{part} needs A and "
                               f"unit_weight: give them in [section] or spans[{index + 1}]")

    # -- combinations, patterning, output -----------------------------------

    def combinations(self, data: dict[str, Any], cases: tuple[LoadCase, ...]) -> CombinationSpec:
        key = "combinations"
        table = self.table(data.get(key, {}), key)
        self.known_keys(table, key, COMBINATION_KEYS)
        strength = "none"
        if "strength" in table:
            strength = self.choice(table["strength"], _join(key, "strength"), STRENGTH_SETS,
                                   "strength rule set")
        service = "none"
        if "service" in table:
            service = self.choice(table["service"], _join(key, "service"), SERVICE_SETS,
                                  "service rule set")
        reduced = False
        if "reduced_companion_live" in table:
            reduced = self.boolean(table["reduced_companion_live"],
                                   _join(key, "reduced_companion_live"))
        custom: list[Combination] = []
        if "custom" in table:
            ckey = _join(key, "custom")
            for i, item in enumerate(self.array_of_tables(table["custom"], ckey)):
                combo = self.custom(item, _item(ckey, i), cases)
                if any(c.name == combo.name for c in custom):
                    self.fail(_join(_item(ckey, i), "name"),
                              f"combination name {combo.name!r} is used twice")
                custom.append(combo)
        if strength == "none" and service == "none" and not custom:
            self.fail(key, 'nothing to run: strength and service are both "none" and there '
                           "are no [[combinations.custom]]")
        return CombinationSpec(strength=strength, service=service,
                               reduced_companion_live=reduced, custom=tuple(custom))

    def custom(self, table: dict[str, Any], key: str,
               cases: tuple[LoadCase, ...]) -> Combination:
        self.known_keys(table, key, CUSTOM_KEYS)
        name = self.string(self.required(table, key, "name"), _join(key, "name"))
        if not name.strip():
            self.fail(_join(key, "name"), "the name is empty")
        combo_set = self.choice(self.required(table, key, "set"), _join(key, "set"),
                                COMBINATION_SETS, "combination set")
        fkey = _join(key, "factors")
        factors = self.table(self.required(table, key, "factors"), fkey)
        if not factors:
            self.fail(fkey, "no factors: give at least one case = factor")
        names = tuple(c.name for c in cases)
        read: dict[str, float] = {}
        for case, value in factors.items():
            if case not in names:
                self.fail(_join(fkey, case), f"case {case!r} is not declared in [cases] "
                                             f"(declared: {', '.join(names)})")
            read[case] = self.plain_number(value, _join(fkey, case))
        ordered = tuple((c, read[c]) for c in names if c in read)
        return Combination(name=name, set=combo_set, factors=ordered,  # type: ignore[arg-type]
                           source="custom")

    def patterning(self, data: dict[str, Any]) -> Patterning:
        key = "patterning"
        table = self.table(data.get(key, {}), key)
        self.known_keys(table, key, PATTERNING_KEYS)
        method = "none"
        if "method" in table:
            method = self.choice(table["method"], _join(key, "method"), PATTERN_METHODS,
                                 "patterning method")
        segments = 1
        if "segments" in table:
            segments = self.integer(table["segments"], _join(key, "segments"), 1, MAX_SEGMENTS)
        if method == "segments" and segments < 2:
            self.fail(_join(key, "segments"), 'method "segments" needs segments = 2 or more '
                                              f"(parts per span), got {segments}")
        favourable = 1.0
        if "favourable_dead" in table:
            fkey = _join(key, "favourable_dead")
            favourable = self.plain_number(table["favourable_dead"], fkey)
            lo, hi = FAVOURABLE_DEAD_RANGE
            if not lo <= favourable <= hi:
                self.fail(fkey, f"must be from {lo:g} to {hi:g}, got {favourable:g}")
        return Patterning(method=method, segments=segments,  # type: ignore[arg-type]
                          favourable_dead=favourable)

    def output(self, data: dict[str, Any]) -> OutputOptions:
        key = "output"
        table = self.table(data.get(key, {}), key)
        self.known_keys(table, key, OUTPUT_KEYS)
        defaults = OutputOptions()
        stations = defaults.stations_per_span
        if "stations_per_span" in table:
            stations = self.integer(table["stations_per_span"], _join(key, "stations_per_span"),
                                    *STATIONS_RANGE)
        all_cases = defaults.all_cases
        if "all_cases" in table:
            all_cases = self.boolean(table["all_cases"], _join(key, "all_cases"))
        moment_plot = defaults.moment_plot
        if "moment_plot" in table:
            moment_plot = self.choice(table["moment_plot"], _join(key, "moment_plot"),
                                      MOMENT_PLOTS, "moment plot convention")
        return OutputOptions(stations_per_span=stations, all_cases=all_cases,
                             moment_plot=moment_plot)  # type: ignore[arg-type]

    # -- [design] -----------------------------------------------------------

    def design_number(self, value: object, key: str, quantity: str | None) -> float | int:
        """A positive [design] number in section units (mm, MPa / in, ksi).

        Plain numbers are kept as given; a unit string is converted to the section
        unit of ``quantity``.  ``quantity=None`` allows plain numbers only.
        """
        if isinstance(value, str) and quantity is not None:
            consistent = self.number(value, key, quantity)
            # section units: lengths in mm / in (the deflection unit), the rest customary
            scale = self.system.to_consistent("deflection" if quantity == "length" else quantity)
            out: float | int = consistent / scale
        else:
            if isinstance(value, str):
                self.fail(key, f"give a plain number here (unit strings are not read for "
                               f"this key), got {value!r}")
            out = self.plain_number(value, key)
            out = value if isinstance(value, int) else out  # type: ignore[assignment]
        if out <= 0:
            self.fail(key, f"must be greater than zero, got {out:g}")
        return out

    def design(self, data: dict[str, Any]) -> dict[str, Any] | None:
        key = "design"
        if key not in data:
            return None
        table = self.table(data[key], key)
        self.known_keys(table, key, DESIGN_KEYS)
        material = self.choice(self.required(table, key, "material"), _join(key, "material"),
                               tuple(DESIGN_MATERIAL_KEYS), "material")
        for name in table:
            if name not in DESIGN_MATERIAL_KEYS[material]:
                self.fail(_join(key, name), f"key {name!r} does not apply to {material} design")
        code = self.choice(self.required(table, key, "code"), _join(key, "code"),
                           DESIGN_CODES[material], f"{material} design code")
        out: dict[str, Any] = {"material": material, "code": code}
        for name in DESIGN_LENGTHS:
            if name in table:
                out[name] = self.design_number(table[name], _join(key, name), "length")
        for name in DESIGN_STRESSES:
            if name in table:
                out[name] = self.design_number(table[name], _join(key, name), "modulus")
        if "deflection_limits" in table:
            lkey = _join(key, "deflection_limits")
            limits = self.table(table["deflection_limits"], lkey)
            self.known_keys(limits, lkey, DEFLECTION_LIMIT_KEYS)
            out["deflection_limits"] = {
                name: self.design_number(value, _join(lkey, name), None)
                for name, value in limits.items()
            }
        if material == "concrete":
            self.check_concrete(table, out)
        else:
            self.check_steel(table, out)
        return out

    def check_concrete(self, table: dict[str, Any], out: dict[str, Any]) -> None:
        for name in ("b", "h", "cover_to_bar_centre", "fc", "fy"):
            self.required(table, "design", name)
        if out["cover_to_bar_centre"] >= out["h"]:
            self.fail("design.cover_to_bar_centre", "must be less than h (d = h - cover)")
        if ("flange_width" in out) != ("flange_depth" in out):
            self.fail("design", "give flange_width and flange_depth together (a T-beam) or "
                                "neither")
        if "flange_width" in out:
            if out["flange_width"] < out["b"]:
                self.fail("design.flange_width", "must not be less than b")
            if out["flange_depth"] >= out["h"]:
                self.fail("design.flange_depth", "must be less than h")

    def check_steel(self, table: dict[str, Any], out: dict[str, Any]) -> None:
        self.required(table, "design", "Fy")
        if ("sections" in table) == ("section" in table):
            self.fail("design", "give either sections (a CSV table) or section (one beam), "
                                "not both or neither")
        if "sections" in table:
            path = self.string(table["sections"], "design.sections")
            if not path.strip():
                self.fail("design.sections", "the path is empty")
            out["sections"] = path
            return
        skey = "design.section"
        section = self.table(table["section"], skey)
        self.known_keys(section, skey, DESIGN_SECTION_KEYS)
        name = self.string(self.required(section, skey, "name"), _join(skey, "name"))
        if not name.strip():
            self.fail(_join(skey, "name"), "the name is empty")
        quantities = {"Zx": None, "Ix": "inertia", "Aw": "area"}
        read: dict[str, Any] = {"name": name}
        for prop, quantity in quantities.items():
            read[prop] = self.design_number(self.required(section, skey, prop),
                                            _join(skey, prop), quantity)
        out["section"] = read
