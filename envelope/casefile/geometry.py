"""The beam's geometry: ``[section]``, ``[[spans]]`` (with their stretches) and ``[[supports]]``.

Lengths are read into the consistent units of the file's system; E and I of a
span come from the span, else from ``[section]``; a stretch overrides its
span's values over part of it.
"""

from __future__ import annotations

import itertools
import math
from typing import TYPE_CHECKING, Any, get_args

from envelope.casefile.reader import Reader, item, join, suggest
from envelope.model import RESTRAINTS, Seat, Section, Span, Stretch, Support, SupportKind

if TYPE_CHECKING:
    from envelope.design import Design

SECTION_KEYS = ("E", "I", "A", "unit_weight")
#: Each section property and the quantity its unit strings are read as.
SECTION_QUANTITIES = {"E": "modulus", "I": "inertia", "A": "area", "unit_weight": "unit_weight"}
SPAN_KEYS = ("length", *SECTION_KEYS, "sections", "hinges")
HINGE_KEYS = ("at",)
STRETCH_KEYS = ("from", "to", *SECTION_KEYS, "h")
SUPPORT_TYPES: tuple[SupportKind, ...] = get_args(SupportKind)
#: The seats a support may have (a support's ``seat`` key).
SEATS: tuple[Seat, ...] = get_args(Seat)
SUPPORT_KEYS: dict[str, tuple[str, ...]] = {
    "pinned": ("type", "width", "seat"),
    "fixed": ("type", "width", "seat"),
    "free": ("type",),
    "spring": ("type", "k_vertical", "k_rotation", "columns", "width", "seat"),
}
COLUMN_KEYS = ("E", "I", "height_below", "height_above", "far_end")
#: Column far-end condition -> coefficient c in k = c*E*I/h (common practice:
#: 4EI/h with the far end fixed, 3EI/h with it pinned).
FAR_END_COEFFICIENT = {"fixed": 4.0, "pinned": 3.0}

#: Shortest stretch of constant section, as a fraction of its span.  Shorter elements
#: are so much stiffer than their neighbours that double precision cannot resolve their
#: end forces to the statics tolerance (measured: a 12 m span fails below about 8 mm).
MIN_STRETCH = 2e-3

#: Section properties as read so far (None where not given yet).
Props = dict[str, float | None]


# -- sections and spans -----------------------------------------------------


def section_props(r: Reader, table: dict[str, Any], key: str, base: Props) -> Props:
    """E, I, A, unit_weight from ``table`` over ``base`` (all positive)."""
    props = dict(base)
    for name, quantity in SECTION_QUANTITIES.items():
        if name in table:
            props[name] = r.positive(table[name], join(key, name), quantity)
    return props


def default_section(r: Reader, data: dict[str, Any]) -> Props:
    """The ``[section]`` table: the properties every span starts from."""
    empty: Props = dict.fromkeys(SECTION_KEYS)
    if "section" not in data:
        return empty
    table = r.table(data["section"], "section")
    r.known_keys(table, "section", SECTION_KEYS)
    return section_props(r, table, "section", empty)


def make_section(r: Reader, props: Props, key: str) -> Section:
    """A :class:`Section` from the properties read; E and I are required."""
    for name in ("E", "I"):
        if props[name] is None:
            r.fail(key, f"no {name} for this span: give {name} in [section] or here")
    E, I = props["E"], props["I"]  # noqa: E741 - the engineering names
    assert E is not None and I is not None
    return Section(E=E, I=I, A=props["A"], unit_weight=props["unit_weight"])


def spans(r: Reader, data: dict[str, Any], default: Props) -> tuple[Span, ...]:
    """The ``[[spans]]``, left to right."""
    if "spans" not in data:
        r.fail("spans", "required: at least one [[spans]] with a length")
    items = r.array_of_tables(data["spans"], "spans")
    if not items:
        r.fail("spans", "at least one span is required")
    return tuple(span(r, entry, item("spans", i), default, last=i == len(items) - 1)
                 for i, entry in enumerate(items))


def span(r: Reader, table: dict[str, Any], key: str, default: Props,
         last: bool = False) -> Span:
    """One span: its length and its stretches covering [0, length] without gaps."""
    r.known_keys(table, key, SPAN_KEYS)
    length = r.positive(r.required(table, key, "length"), join(key, "length"), "length")
    props = section_props(r, table, key, default)
    section = make_section(r, props, key)
    pieces: list[tuple[float, float, Section, str, float | None]] = []
    if "sections" in table:
        skey = join(key, "sections")
        for j, entry in enumerate(r.array_of_tables(table["sections"], skey)):
            pieces.append(stretch(r, entry, item(skey, j), length, props))
    pieces.sort(key=lambda p: p[0])
    for (_, prev_end, _, prev_key, _), (start, _, _, this_key, _) in itertools.pairwise(
            pieces):
        if start < prev_end:
            r.fail(this_key, f"overlaps {prev_key} (which ends at {r.fmt_len(prev_end)})")
    stretches: list[Stretch] = []
    x = 0.0
    shortest = MIN_STRETCH * length
    for start, end, sec, skey, depth in pieces:
        if start > x:
            long_enough(r, x, start, shortest, skey, "the part of the span before it")
            stretches.append(Stretch(x, start, section))
        long_enough(r, start, end, shortest, skey, "this stretch")
        stretches.append(Stretch(start, end, sec, depth))
        x = end
    if x < length:
        if pieces:
            long_enough(r, x, length, shortest, pieces[-1][3], "the part of the span after it")
        stretches.append(Stretch(x, length, section))
    hinge_at = hinges(r, table, key, length, stretches, last) if "hinges" in table else ()
    return Span(length=length, stretches=tuple(stretches), hinges=hinge_at)


def hinges(r: Reader, table: dict[str, Any], key: str, length: float,
           stretches: list[Stretch], last: bool) -> tuple[float, ...]:
    """The ``[[spans.hinges]]``: internal moment releases at ``at`` in (0, length].

    A hinge at the span's end releases the moment between the span and the joint on
    its right (not at the beam's right end, which carries no moment to release).  A
    hinge cuts its stretch in two; each piece must be long enough to analyse (see
    MIN_STRETCH), unless the hinge sits exactly on a section change.
    """
    hkey = join(key, "hinges")
    out: list[float] = []
    bounds = sorted({b for st in stretches for b in (st.start, st.end)})
    shortest = MIN_STRETCH * length
    for i, entry in enumerate(r.array_of_tables(table["hinges"], hkey)):
        ikey = item(hkey, i)
        r.known_keys(entry, ikey, HINGE_KEYS)
        at = r.within_span(r.required(entry, ikey, "at"), join(ikey, "at"), length, "at")
        if at == 0.0:
            r.fail(join(ikey, "at"), "a hinge at the span's start: give it at the end of "
                                     "the span on the left (at = its length)")
        if at == length and last:
            r.fail(join(ikey, "at"), "a hinge at the beam's end releases nothing: the end "
                                     "carries no moment unless its support is fixed; use "
                                     "a pinned support instead")
        if at in out:
            r.fail(join(ikey, "at"), f"two hinges at {r.fmt_len(at)}")
        if at not in bounds:
            near = min(bounds, key=lambda b: abs(b - at))
            if abs(near - at) < shortest:
                r.fail(join(ikey, "at"), f"a hinge {r.fmt_len(abs(near - at))} from a "
                       f"section change or span end leaves a piece shorter than "
                       f"1/{round(1 / MIN_STRETCH)} of the span: move it onto "
                       f"{r.fmt_len(near)} or further away")
        out.append(at)
    return tuple(sorted(out))


def long_enough(r: Reader, start: float, end: float, shortest: float, key: str,
                what: str) -> None:
    """Refuse a stretch too short to analyse in double precision (see MIN_STRETCH)."""
    if end - start < shortest:
        r.fail(key, f"{what} is {r.fmt_len(end - start)} long, less than "
                    f"1/{round(1 / MIN_STRETCH)} of the span ({r.fmt_len(shortest)}):"
                    " too short to analyse accurately; merge it with its neighbour")


def stretch(r: Reader, table: dict[str, Any], key: str, length: float,
            span_props: Props) -> tuple[float, float, Section, str, float | None]:
    """One ``[[spans.sections]]`` item: (from, to, section, key path, h).  ``h`` is the
    concrete depth there for sizing, in section units (mm / in), None where not given."""
    r.known_keys(table, key, STRETCH_KEYS)
    start = r.within_span(r.required(table, key, "from"), join(key, "from"), length, "from")
    end = r.within_span(r.required(table, key, "to"), join(key, "to"), length, "to")
    if not start < end:
        r.fail(key, f"'from' ({r.fmt_len(start)}) must be less than 'to' ({r.fmt_len(end)})")
    section = make_section(r, section_props(r, table, key, span_props), key)
    depth = None
    if "h" in table:
        depth = r.positive(table["h"], join(key, "h"), "deflection") / \
            r.system.to_consistent("deflection")
    return start, end, section, key, depth


def check_depths(r: Reader, spans: tuple[Span, ...], design: Design | None) -> None:
    """A stretch's ``h`` is for concrete sizing: refused without a concrete ``[design]``,
    and it must leave room for the cover and a T-beam's flange."""
    for i, one in enumerate(spans):
        key = join(item("spans", i), "sections")
        for st in one.stretches:
            if st.h is None:
                continue
            where = f"the stretch from {r.fmt_len(st.start)} to {r.fmt_len(st.end)}"
            from envelope.design import ConcreteDesign  # only where a depth is given

            if not isinstance(design, ConcreteDesign):
                r.fail(key, f"{where} gives h, which only concrete sizing reads "
                            f"([design] material = \"concrete\")")
            if st.h <= design.cover_to_bar_centre:
                r.fail(key, f"{where}: h = {st.h:g} must be more than "
                            f"cover_to_bar_centre = {design.cover_to_bar_centre:g}")
            if design.flange_depth is not None and st.h <= design.flange_depth:
                r.fail(key, f"{where}: h = {st.h:g} must be more than flange_depth = "
                            f"{design.flange_depth:g}")


# -- supports ---------------------------------------------------------------


def supports(r: Reader, data: dict[str, Any], spans: tuple[Span, ...]) -> tuple[Support, ...]:
    """The ``[[supports]]``, one per joint; the support faces of a span must not meet."""
    if "supports" not in data:
        r.fail("supports", f"required: one [[supports]] per joint ({len(spans) + 1} "
                           f"for {len(spans)} spans)")
    items = r.array_of_tables(data["supports"], "supports")
    if len(items) != len(spans) + 1:
        r.fail("supports", f"expected {len(spans) + 1} supports (one per joint: "
                           f"{len(spans)} spans + 1), found {len(items)}")
    out = tuple(support(r, entry, item("supports", j)) for j, entry in enumerate(items))
    for i, one in enumerate(spans):
        faces = out[i].width / 2.0 + out[i + 1].width / 2.0
        if faces >= one.length:
            wider = i + 1 if out[i + 1].width > 0.0 else i  # 0-based joint
            r.fail(join(item("supports", wider), "width"),
                   f"the support faces meet or overlap in span {i + 1} (half-widths "
                   f"add up to {r.fmt_len(faces)}, span {r.fmt_len(one.length)})")
    return out


def support(r: Reader, table: dict[str, Any], key: str) -> Support:
    """One joint's restraint (see :data:`envelope.model.RESTRAINTS` for each kind)."""
    kind = r.choice(r.required(table, key, "type"), join(key, "type"), SUPPORT_TYPES,
                    "support type")
    allowed = SUPPORT_KEYS[kind]
    for name in table:
        if name in allowed:
            continue
        if kind == "free" and name in ("width", "seat"):
            r.fail(join(key, name), f"a free support has no {name} (it restrains "
                                    "nothing, so there is no support face)")
        if name in SUPPORT_KEYS["spring"]:
            r.fail(join(key, name), f"key {name!r} applies to spring supports only")
        r.fail(join(key, name), f"unknown key {name!r}{suggest(name, allowed)}")
    width = r.optional(table, key, "width",
                       lambda v, k: r.non_negative(v, k, "length"), 0.0)
    seat: Seat = r.optional(table, key, "seat",
                            lambda v, k: r.choice(v, k, SEATS, "seat"), "monolithic")
    k_vertical, k_rotation = RESTRAINTS[kind]
    if kind != "spring":
        return Support(kind, k_vertical, k_rotation, width, seat)
    k_vertical = r.optional(table, key, "k_vertical",
                            lambda v, k: r.non_negative(v, k, "k_vertical"), k_vertical)
    if "k_rotation" in table and "columns" in table:
        r.fail(join(key, "columns"), "give either k_rotation or columns, not both")
    k_rotation = r.optional(table, key, "k_rotation",
                            lambda v, k: r.non_negative(v, k, "k_rotation"), k_rotation)
    k_rotation = r.optional(table, key, "columns", lambda v, k: columns(r, v, k), k_rotation)
    if width > 0.0 and k_vertical == 0.0 and k_rotation == 0.0:
        r.fail(join(key, "width"), "a spring support with no stiffness restrains "
                                   "nothing, so it has no support face")
    return Support("spring", k_vertical, k_rotation, width, seat)


def columns(r: Reader, value: object, key: str) -> float:
    """Rotational stiffness of the columns framing in: sum of c*E*I/h over the
    columns present, c = 4 with the far end fixed, 3 with it pinned (common practice)."""
    table = r.table(value, key)
    r.known_keys(table, key, COLUMN_KEYS)
    E = r.positive(r.required(table, key, "E"), join(key, "E"), "modulus")
    I = r.positive(r.required(table, key, "I"), join(key, "I"), "inertia")  # noqa: E741
    far_end = r.choice(r.required(table, key, "far_end"), join(key, "far_end"),
                       tuple(FAR_END_COEFFICIENT), "far-end condition")
    heights = [r.positive(table[h], join(key, h), "length")
               for h in ("height_below", "height_above") if h in table]
    if not heights:
        r.fail(key, "give height_below, height_above or both")
    c = FAR_END_COEFFICIENT[far_end]
    return math.fsum(c * E * I / h for h in heights)
