"""The optional ``[design]`` table, read into the frozen values of :mod:`envelope.design`.

Numbers here are in *section units* (mm, MPa in SI; in, ksi in US): plain
numbers are kept as given, unit strings are converted to the section unit.
"""

from __future__ import annotations

from typing import Any, get_args

from envelope.casefile import redistribution, steel
from envelope.casefile.concrete_design import CONCRETE_DETAIL_KEYS, concrete_detailing
from envelope.casefile.reader import MAX_MAGNITUDE, MIN_MAGNITUDE, Reader, join
from envelope.design import (
    ConcreteCode,
    ConcreteDesign,
    DeflectionLimits,
    Design,
    SteelCode,
    SteelDesign,
)

DESIGN_KEYS = ("material", "code", "b", "h", "cover_to_bar_centre", "flange_width",
               "flange_depth", "fc", "fy", "stirrup_fy", "deflection_limits", "Fy",
               "sections", "section", "bracing", "bearing_length", "camber_fraction",
               "vibration", *CONCRETE_DETAIL_KEYS, *redistribution.REDISTRIBUTION_KEYS)
DESIGN_MATERIAL_KEYS: dict[str, tuple[str, ...]] = {
    "concrete": ("material", "code", "b", "h", "cover_to_bar_centre", "flange_width",
                 "flange_depth", "fc", "fy", "stirrup_fy", "deflection_limits",
                 *CONCRETE_DETAIL_KEYS, *redistribution.REDISTRIBUTION_KEYS),
    "steel": ("material", "code", "Fy", "sections", "section", "deflection_limits",
              "bracing", "bearing_length", "camber_fraction", "vibration"),
}
DESIGN_CODES: dict[str, tuple[str, ...]] = {
    "concrete": get_args(ConcreteCode),
    "steel": get_args(SteelCode),
}
#: [design] numbers and the quantity their unit strings are read as.  Plain
#: numbers are section units (mm, MPa in SI; in, ksi in US) and are kept as given.
DESIGN_LENGTHS = ("b", "h", "cover_to_bar_centre", "flange_width", "flange_depth")
DESIGN_STRESSES = ("fc", "fy", "stirrup_fy", "Fy")
DEFLECTION_LIMIT_KEYS = ("live", "total", "long_term", "incremental")


def design_number(r: Reader, value: object, key: str, quantity: str | None) -> float | int:
    """A positive [design] number in section units (mm, MPa / in, ksi).

    Plain numbers are kept as given; a unit string is converted to the section
    unit of ``quantity``.  ``quantity=None`` allows plain numbers only.  The value
    is under the magnitude rule of every other number (MIN_MAGNITUDE to
    MAX_MAGNITUDE in section units), so no product in sizing leaves float64.
    """
    out: float | int
    if isinstance(value, str) and quantity is not None:
        consistent = r.number(value, key, quantity)
        # section units: lengths in mm / in (the deflection unit), the rest customary
        scale = r.system.to_consistent("deflection" if quantity == "length" else quantity)
        out = consistent / scale
    else:
        if isinstance(value, str):
            r.fail(key, f"give a plain number here (unit strings are not read for "
                        f"this key), got {value!r}")
        number = r.plain_number(value, key)
        out = value if isinstance(value, int) else number
    if out <= 0:
        r.fail(key, f"must be greater than zero, got {out:g}")
    if not MIN_MAGNITUDE <= out <= MAX_MAGNITUDE:
        r.fail(key, f"{out:.3g} is outside the range sizing can carry ({MIN_MAGNITUDE:g} "
                    f"to {MAX_MAGNITUDE:g}); check the value and its unit")
    return out


def design(r: Reader, data: dict[str, Any], span_lengths: tuple[float, ...] = ()
           ) -> Design | None:
    """The ``[design]`` table, or None when the file has none."""
    key = "design"
    if key not in data:
        return None
    table = r.table(data[key], key)
    r.known_keys(table, key, DESIGN_KEYS)
    material = r.choice(r.required(table, key, "material"), join(key, "material"),
                        tuple(DESIGN_MATERIAL_KEYS), "material")
    for name in table:
        if name not in DESIGN_MATERIAL_KEYS[material]:
            r.fail(join(key, name), f"key {name!r} does not apply to {material} design")
    code = r.choice(r.required(table, key, "code"), join(key, "code"),
                    DESIGN_CODES[material], f"{material} design code")
    out: dict[str, Any] = {"code": code}
    for name in DESIGN_LENGTHS:
        if name in table:
            out[name] = design_number(r, table[name], join(key, name), "length")
    for name in DESIGN_STRESSES:
        if name in table:
            out[name] = design_number(r, table[name], join(key, name), "modulus")
    if "deflection_limits" in table:
        lkey = join(key, "deflection_limits")
        limits = r.table(table["deflection_limits"], lkey)
        r.known_keys(limits, lkey, DEFLECTION_LIMIT_KEYS)
        out["deflection_limits"] = DeflectionLimits(**{
            name: design_number(r, value, join(lkey, name), None)
            for name, value in limits.items()
        })
    if material == "concrete":
        check_concrete(r, table, out)
        concrete_detailing(r, table, out, data.get("cases") or {})
        redistribution.read(r, table, out, len(span_lengths) + 1)
        return ConcreteDesign(**out)
    check_steel(r, table, out, span_lengths)
    return SteelDesign(**out)


def check_concrete(r: Reader, table: dict[str, Any], out: dict[str, Any]) -> None:
    """A concrete section: required keys, d > 0, a T-beam's flange given whole."""
    for name in ("b", "h", "cover_to_bar_centre", "fc", "fy"):
        r.required(table, "design", name)
    if out["cover_to_bar_centre"] >= out["h"]:
        r.fail("design.cover_to_bar_centre", "must be less than h (d = h - cover)")
    if ("flange_width" in out) != ("flange_depth" in out):
        r.fail("design", "give flange_width and flange_depth together (a T-beam) or neither")
    if "flange_width" in out:
        if out["flange_width"] < out["b"]:
            r.fail("design.flange_width", "must not be less than b")
        if out["flange_depth"] >= out["h"]:
            r.fail("design.flange_depth", "must be less than h")


def check_steel(r: Reader, table: dict[str, Any], out: dict[str, Any],
                span_lengths: tuple[float, ...]) -> None:
    """A steel beam: Fy, either a sections table or one given section, and the steel
    keys of :mod:`envelope.casefile.steel`."""
    r.required(table, "design", "Fy")
    if ("sections" in table) == ("section" in table):
        r.fail("design", "give either sections (a CSV table) or section (one beam), "
                         "not both or neither")
    if "sections" in table:
        path = r.string(table["sections"], "design.sections")
        if not path.strip():
            r.fail("design.sections", "the path is empty")
        out["sections"] = path
    steel.steel_keys(r, table, out, span_lengths,
                     lambda value, key, quantity: design_number(r, value, key, quantity))
