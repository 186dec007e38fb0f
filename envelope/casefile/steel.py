"""The steel keys of ``[design]``: the given section's properties, the bracing of each
flange, the bearing length of point loads, the camber fraction and the vibration check.

Numbers of the section are in section units (mm, mm^2, ... / in, in^2, ...): plain
numbers kept as given, unit strings converted where the quantity has a unit in the
system (lengths, areas, second moments); section moduli, Cw and weight take plain numbers
only; ``fabrication`` is "rolled" or "welded" (the default).  Brace positions and the
vibration lengths are in the case's customary length (m / ft) like every position; the
vibration ``live`` load in kN/m^2 (SI) or psf (US).
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

from envelope import config
from envelope.casefile.reader import Reader, join
from envelope.design import Bracing, FloorVibration, SteelSection

#: Keys of ``[design] section`` (steel): the full set of a doubly symmetric I-shape,
#: its optional derived values, the strength-only ``Aw`` and how it is made.
DESIGN_SECTION_KEYS = ("name", "d", "bf", "tf", "tw", "Ix", "Zx", "Sx", "Iy", "ry", "J",
                       "Cw", "weight", "rts", "ho", "k", "Aw", "fabrication")
#: Values of ``fabrication`` (Table B4.1b case 10 and G2.1(a) for rolled shapes).
FABRICATIONS = ("rolled", "welded")
#: The full set: every check can be made.
FULL_SECTION = ("d", "bf", "tf", "tw", "Ix", "Zx", "Sx", "Iy", "ry", "J", "Cw")
#: The strength-only set.
STRENGTH_SECTION = ("Zx", "Ix", "Aw")
#: Quantity of each section key for unit strings (None: plain numbers only).
SECTION_QUANTITY: dict[str, str | None] = {
    "d": "length", "bf": "length", "tf": "length", "tw": "length", "ry": "length",
    "rts": "length", "ho": "length", "k": "length", "Ix": "inertia", "Iy": "inertia",
    "J": "inertia", "Aw": "area", "Zx": None, "Sx": None, "Cw": None, "weight": None}
BRACING_KEYS = ("top", "bottom")
BRACING_WORDS = ("continuous", "supports")
VIBRATION_KEYS = ("damping", "live", "spacing", "effective_width", "tolerance")
#: psf to kip/ft^2 (US); kN/m^2 is already consistent (SI).
AREA_LOAD_TO_CONSISTENT = {"SI": 1.0, "US": 1e-3}


Number = Callable[[object, str, "str | None"], float]


def section(r: Reader, value: object, number: Number) -> SteelSection:
    """``[design] section``: the full set, or the strength-only Zx, Ix, Aw."""
    skey = "design.section"
    table = r.table(value, skey)
    r.known_keys(table, skey, DESIGN_SECTION_KEYS)
    name = r.string(r.required(table, skey, "name"), join(skey, "name"))
    if not name.strip():
        r.fail(join(skey, "name"), "the name is empty")
    given = [k for k in FULL_SECTION if k in table]
    wanted = FULL_SECTION if given and set(given) - set(STRENGTH_SECTION) else \
        STRENGTH_SECTION
    for prop in wanted:
        if prop not in table:
            which = ("the full set (d, bf, tf, tw, Ix, Zx, Sx, Iy, ry, J, Cw)"
                     if wanted is FULL_SECTION else "the strength-only set (Zx, Ix, Aw)")
            r.fail(join(skey, prop), f"{prop!r} is required for {which}")
    out: dict[str, Any] = {}
    if "fabrication" in table:
        fkey = join(skey, "fabrication")
        made = r.string(table["fabrication"], fkey)
        if made not in FABRICATIONS:
            shown = repr(made) if len(made) <= config.ECHO_CHARS else \
                repr(made[:config.ECHO_CHARS]) + f" (cut; {len(made)} characters)"
            r.fail(fkey, f"expected \"rolled\" or \"welded\", got {shown}")
        out["fabrication"] = made
    for prop in DESIGN_SECTION_KEYS[1:]:
        if prop in table and prop != "fabrication":
            out[prop] = number(table[prop], join(skey, prop), SECTION_QUANTITY[prop])
    if wanted is FULL_SECTION:
        if 2.0 * out["tf"] >= out["d"]:
            r.fail(join(skey, "tf"), "two flanges are as deep as d or deeper")
        if out["tw"] >= out["bf"]:
            r.fail(join(skey, "tw"), "the web is as wide as the flange or wider")
        if out["Sx"] > out["Zx"]:
            r.fail(join(skey, "Sx"), "is larger than Zx (an I-shape has Zx > Sx)")
        if "k" in out and 2.0 * out["k"] >= out["d"]:
            r.fail(join(skey, "k"), "d - 2k leaves no web")
    return SteelSection(name=name, **out)


def bracing(r: Reader, value: object, span_lengths: tuple[float, ...]) -> Bracing:
    """``[design] bracing``: per flange "continuous", "supports" or a list of brace
    positions per span (consistent length, strictly inside the span), as tuples."""
    key = "design.bracing"
    table = r.table(value, key)
    r.known_keys(table, key, BRACING_KEYS)
    out: dict[str, Any] = {}
    for flange, spec in table.items():
        fkey = join(key, flange)
        if isinstance(spec, str):
            if spec not in BRACING_WORDS:
                r.fail(fkey, f"expected \"continuous\", \"supports\" or a list of brace "
                             f"positions per span, got {spec!r}")
            out[flange] = spec
            continue
        if not isinstance(spec, list) or len(spec) != len(span_lengths):
            r.fail(fkey, f"expected \"continuous\", \"supports\" or a list with one list of "
                         f"brace positions for each of the {len(span_lengths)} spans")
        per_span = []
        for j, positions in enumerate(spec):
            skey = f"{fkey}[{j + 1}]"
            if not isinstance(positions, list):
                r.fail(skey, "expected a list of positions (x from the span's left support)"
                             ", [] for none")
            xs = []
            for i, p in enumerate(positions):
                pkey = f"{skey}[{i + 1}]"
                x = r.number(p, pkey, "length")
                if not 0.0 < x < span_lengths[j]:
                    r.fail(pkey, "a brace position must lie inside its span (between the "
                                 "supports)")
                xs.append(x)
            per_span.append(tuple(sorted(xs)))
        out[flange] = tuple(per_span)
    return Bracing(**out)


def vibration(r: Reader, value: object) -> FloorVibration:
    """``[design] vibration``: the DG11 walking check's inputs (consistent units)."""
    key = "design.vibration"
    table = r.table(value, key)
    r.known_keys(table, key, VIBRATION_KEYS)
    out: dict[str, float] = {}
    for name in ("live", "spacing"):
        r.required(table, key, name)
    for name in ("damping", "tolerance"):
        if name in table:
            v = r.plain_number(table[name], join(key, name))
            if not 0.0 < v < 1.0:
                r.fail(join(key, name), f"must be between 0 and 1, got {v:g}")
            out[name] = v
    live = r.plain_number(table["live"], join(key, "live"))
    if live < 0.0:
        r.fail(join(key, "live"), f"must not be negative, got {live:g}")
    out["live"] = live * AREA_LOAD_TO_CONSISTENT[r.system.name]
    for name in ("spacing", "effective_width"):
        if name in table:
            v = r.number(table[name], join(key, name), "length")
            if v <= 0.0:
                r.fail(join(key, name), f"must be greater than zero, got {v:g}")
            out[name] = v
    return FloorVibration(**out)


def steel_keys(r: Reader, table: dict[str, Any], out: dict[str, Any],
               span_lengths: tuple[float, ...], number: Number) -> None:
    """Read the steel additions of ``[design]`` into ``out``."""
    if "section" in table:
        out["section"] = section(r, table["section"], number)
    if "bracing" in table:
        out["bracing"] = bracing(r, table["bracing"], span_lengths)
    if "vibration" in table:
        out["vibration"] = vibration(r, table["vibration"])
    if "bearing_length" in table:
        out["bearing_length"] = number(table["bearing_length"], "design.bearing_length",
                                       "length")
    if "camber_fraction" in table:
        v = r.plain_number(table["camber_fraction"], "design.camber_fraction")
        if not 0.0 < v <= 1.0:
            r.fail("design.camber_fraction", f"must be above 0 and at most 1, got {v:g}")
        out["camber_fraction"] = v
