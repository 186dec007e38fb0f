"""The ``[[loads]]``: each item becomes one :class:`~envelope.model.Load` per span it names.

Positions are span-local, in the consistent length unit; ``spans`` counts spans
from 1 in the file and from 0 in the model.
"""

from __future__ import annotations

from typing import Any, get_args

from envelope.casefile.reader import Reader, describe, item, join, suggest
from envelope.model import Load, LoadCase, LoadType, Span, Support, WithUniform

LOAD_TYPES: tuple[LoadType, ...] = get_args(LoadType)
#: How a moving load combines with the other cases of its kind (the first is the default).
WITH_UNIFORM: tuple[WithUniform, ...] = get_args(WithUniform)
LOAD_KEYS: dict[str, tuple[str, ...]] = {
    "uniform": ("case", "type", "spans", "w", "start", "end"),
    "linear": ("case", "type", "spans", "w_start", "w_end", "start", "end"),
    "point": ("case", "type", "spans", "P", "at"),
    "moment": ("case", "type", "spans", "M", "at"),
    "self_weight": ("case", "type", "spans", "start", "end"),
    "settlement": ("case", "type", "support", "delta"),
    "concentrated": ("case", "type", "spans", "P", "with_uniform"),
    "train": ("case", "type", "spans", "axles", "with_uniform"),
}
AXLE_KEYS = ("P", "offset")
#: Most loads in one train: each adds a set of breakpoints to the worst-position search.
MAX_AXLES = 64
ALL_LOAD_KEYS = tuple(sorted({k for keys in LOAD_KEYS.values() for k in keys}))
#: Each load magnitude and the quantity its unit strings are read as.
MAGNITUDES = (("w", "line_load"), ("w_start", "line_load"), ("w_end", "line_load"),
              ("P", "force"), ("M", "moment"))


def loads(r: Reader, data: dict[str, Any], spans: tuple[Span, ...],
          cases: tuple[LoadCase, ...]) -> tuple[Load, ...]:
    """Every ``[[loads]]`` item, in file order, split per span."""
    if "loads" not in data:
        r.fail("loads", "the beam has no loads: add at least one [[loads]]")
    items = r.array_of_tables(data["loads"], "loads")
    if not items:
        r.fail("loads", "the beam has no loads: add at least one [[loads]]")
    names = tuple(c.name for c in cases)
    out: list[Load] = []
    for i, entry in enumerate(items):
        out.extend(load(r, entry, item("loads", i), spans, names))
    check_case_contents(r, out, cases)
    return tuple(out)


def check_settled_supports(r: Reader, items: tuple[Load, ...],
                           supports: tuple[Support, ...]) -> None:
    """A settlement moves a support that holds the beam up: a rigid one (its position is
    prescribed) or a vertical spring (its base moves); a free joint has nothing to move."""
    for ld in items:
        if ld.type == "settlement" and not supports[ld.support].restrains_vertical:
            r.fail(join(ld.key, "support"), f"support {ld.support + 1} does not restrain "
                   "vertical movement (free, or a spring with no k_vertical): nothing settles")


def check_case_contents(r: Reader, items: list[Load], cases: tuple[LoadCase, ...]) -> None:
    """A moving load (concentrated, train) is its case's only item, in a variable case;
    settlements stand in cases of their own kind, and only there."""
    kinds = {c.name: c.kind for c in cases}
    by_case: dict[str, list[Load]] = {}
    for ld in items:
        by_case.setdefault(ld.case, []).append(ld)
    for name, group in by_case.items():
        moving = [ld for ld in group if ld.is_moving]
        if moving and len(group) > 1:
            r.fail(moving[0].key, f"case {name!r} holds a {moving[0].type} load, which is "
                                  "placed at its worst position: give it a case of its own")
        if moving and kinds[name] in ("dead", "settlement"):
            r.fail(join(moving[0].key, "case"), f"a {moving[0].type} load is a variable "
                   f"action: its case {name!r} must not be of kind {kinds[name]!r}")
        for ld in group:
            if (ld.type == "settlement") != (kinds[name] == "settlement"):
                what = ("a settlement needs a case of kind 'settlement'"
                        if ld.type == "settlement" else
                        f"a case of kind 'settlement' holds settlements only, not {ld.type}")
                r.fail(join(ld.key, "case"), f"{what} (case {name!r})")


def load_spans(r: Reader, value: object, key: str, n_spans: int) -> list[int]:
    """1-based span numbers ("all", one number or a list) -> 0-based indices."""
    if value == "all":
        return list(range(n_spans))
    if isinstance(value, str):
        r.fail(key, f'expected "all", a span number or a list of span numbers, got {value!r}')
    numbers = value if isinstance(value, list) else [value]
    if not numbers:
        r.fail(key, "the list of spans is empty")
    seen: set[int] = set()
    out: list[int] = []
    for number in numbers:
        if isinstance(number, bool) or not isinstance(number, int):
            r.fail(key, f'expected "all", a span number or a list of span numbers, '
                        f"got {describe(number)}")
        if not 1 <= number <= n_spans:
            r.fail(key, f"span {number} is out of range (the beam has {n_spans} "
                        f"span{'s' if n_spans != 1 else ''}, numbered from 1)")
        if number in seen:
            r.fail(key, f"span {number} is listed twice")
        seen.add(number)
        out.append(number - 1)
    return out


def check_keys(r: Reader, table: dict[str, Any], key: str, load_type: str) -> None:
    """Refuse keys that belong to no load type, or to another one."""
    allowed = LOAD_KEYS[load_type]
    for name in table:
        if name in allowed:
            continue
        if name in ALL_LOAD_KEYS:
            r.fail(join(key, name), f"key {name!r} does not apply to a {load_type} "
                                    f"load (keys: {', '.join(allowed)})")
        r.fail(join(key, name), f"unknown key {name!r}{suggest(name, allowed)}")


def load_case_name(r: Reader, table: dict[str, Any], key: str,
                   case_names: tuple[str, ...]) -> str:
    """The load's ``case``, which must be declared in ``[cases]``."""
    case = r.string(r.required(table, key, "case"), join(key, "case"))
    if case not in case_names:
        import difflib  # only for a message

        close = difflib.get_close_matches(case, case_names, n=1)
        hint = f"; did you mean {close[0]!r}?" if close else ""
        r.fail(join(key, "case"), f"case {case!r} is not declared in [cases] "
                                  f"(declared: {', '.join(case_names)}){hint}")
    return case


def load(r: Reader, table: dict[str, Any], key: str, spans: tuple[Span, ...],
         case_names: tuple[str, ...]) -> list[Load]:
    """One ``[[loads]]`` item: one :class:`Load` per span it is on."""
    load_type = r.choice(r.required(table, key, "type"), join(key, "type"), LOAD_TYPES,
                         "load type")
    check_keys(r, table, key, load_type)
    allowed = LOAD_KEYS[load_type]
    case = load_case_name(r, table, key, case_names)
    if load_type == "settlement":
        return [settlement(r, table, key, spans, case)]
    indices = load_spans(r, r.required(table, key, "spans"), join(key, "spans"), len(spans))
    values: dict[str, float] = {}
    for name, quantity in MAGNITUDES:
        if name in allowed:
            values[name] = r.number(r.required(table, key, name), join(key, name), quantity)
    if load_type in ("concentrated", "train"):
        return [moving(r, table, key, load_type, case, indices, values)]
    out = []
    for index in indices:
        span = spans[index]
        if load_type in ("point", "moment"):
            at = r.within_span(r.required(table, key, "at"), join(key, "at"), span.length,
                               "at", index + 1)
            out.append(Load(case=case, type=load_type, span=index, key=key, at=at,
                            P=values.get("P", 0.0), M=values.get("M", 0.0)))
            continue
        start, end = extent(r, table, key, span, index)
        if load_type == "self_weight":
            check_self_weight(r, span, index, start, end, key)
            out.append(Load(case=case, type=load_type, span=index, key=key, start=start,
                            end=end))
            continue
        if load_type == "uniform":
            w_start = w_end = values["w"]
        else:
            w_start, w_end = values["w_start"], values["w_end"]
        out.append(Load(case=case, type=load_type, span=index, key=key, start=start, end=end,
                        w_start=w_start, w_end=w_end))
    return out


def settlement(r: Reader, table: dict[str, Any], key: str, spans: tuple[Span, ...],
               case: str) -> Load:
    """A support settlement: the joint (1-based in the file) moves down by ``delta``."""
    n_joints = len(spans) + 1
    number = r.integer(r.required(table, key, "support"), join(key, "support"), 1, n_joints)
    delta = r.number(r.required(table, key, "delta"), join(key, "delta"), "length")
    if delta == 0.0:
        r.fail(join(key, "delta"), "a settlement of zero does nothing: give its size "
                                   "(downward positive)")
    joint = number - 1
    return Load(case=case, type="settlement", span=min(joint, len(spans) - 1), key=key,
                support=joint, delta=delta)


def moving(r: Reader, table: dict[str, Any], key: str, load_type: str, case: str,
           indices: list[int], values: dict[str, float]) -> Load:
    """A concentrated load or a train of loads, placed at its worst position."""
    if load_type == "concentrated":
        axles: tuple[tuple[float, float], ...] = ((values["P"], 0.0),)
    else:
        akey = join(key, "axles")
        entries = r.array_of_tables(r.required(table, key, "axles"), akey)
        if not entries:
            r.fail(akey, "a train needs at least one load")
        if len(entries) > MAX_AXLES:
            r.fail(akey, f"at most {MAX_AXLES} loads in one train, got {len(entries)}")
        found = []
        for i, entry in enumerate(entries):
            ikey = item(akey, i)
            r.known_keys(entry, ikey, AXLE_KEYS)
            p = r.number(r.required(entry, ikey, "P"), join(ikey, "P"), "force")
            off = r.non_negative(r.required(entry, ikey, "offset"), join(ikey, "offset"),
                                 "length")
            found.append((p, off))
        first = min(off for _, off in found)
        axles = tuple(sorted((p, off - first) for p, off in found))
        axles = tuple(sorted(axles, key=lambda a: a[1]))
    with_uniform: WithUniform = WITH_UNIFORM[0]
    if "with_uniform" in table:
        with_uniform = r.choice(table["with_uniform"], join(key, "with_uniform"),
                                WITH_UNIFORM, "with_uniform")
    return Load(case=case, type=load_type, span=indices[0], key=key,  # type: ignore[arg-type]
                moving_spans=tuple(sorted(indices)), axles=axles,
                with_uniform=with_uniform)


def extent(r: Reader, table: dict[str, Any], key: str, span: Span,
           index: int) -> tuple[float, float]:
    """``start`` and ``end`` of a distributed load (the whole span by default)."""
    start = 0.0
    end = span.length
    if "start" in table:
        start = r.within_span(table["start"], join(key, "start"), span.length, "start",
                              index + 1)
    if "end" in table:
        end = r.within_span(table["end"], join(key, "end"), span.length, "end", index + 1)
    if start == end:
        r.fail(key, f"zero-length load on span {index + 1} (start = end = {r.fmt_len(start)})")
    if start > end:
        r.fail(key, f"start ({r.fmt_len(start)}) is after end ({r.fmt_len(end)}) "
                    f"on span {index + 1}")
    return start, end


def check_self_weight(r: Reader, span: Span, index: int, start: float, end: float,
                      key: str) -> None:
    """Self weight needs A and unit_weight on every stretch it covers."""
    for stretch in span.stretches:
        if stretch.end <= start or stretch.start >= end:
            continue
        if stretch.section.self_weight is None:
            part = ("" if len(span.stretches) == 1 else
                    f" (stretch {r.fmt_len(stretch.start)} to {r.fmt_len(stretch.end)})")
            r.fail(key, f"self weight on span {index + 1}{part} needs A and "
                        f"unit_weight: give them in [section] or spans[{index + 1}]")
