"""A JSON Schema (draft 2020-12) of the case file, for completion and checking in
editors (TOML editors that read JSON Schemas, such as those using taplo, take
``#:schema envelope.schema.json`` as the file's first line).

Built from the case reader's own key lists (:mod:`envelope.casefile`), so a key the
reader learns appears here unchanged; the reader remains the judge of a file.
"""

from __future__ import annotations

from types import SimpleNamespace
from typing import Any

from envelope.report.echo import DESIGN_UNITS, KEY_QUANTITY
from envelope.units import SYSTEMS, pretty_unit

SCHEMA_ID = "https://envelope.invalid/case-file.schema.json"


def _number(key: str, design: bool = False) -> dict[str, Any]:
    if design and key in DESIGN_UNITS:
        si, us = DESIGN_UNITS[key]
    elif key in KEY_QUANTITY:
        q = KEY_QUANTITY[key]
        si = pretty_unit(SYSTEMS["SI"].customary(q))
        us = pretty_unit(SYSTEMS["US"].customary(q))
    else:
        return {"type": "number"}
    return {"anyOf": [{"type": "number"}, {"type": "string", "pattern": r"^\s*[-+0-9.]"}],
            "description": f"plain number in {si} (SI) or {us} (US), or a string with "
                           f"units such as '2.5 {si}'"}


def _object(keys: tuple[str, ...], props: dict[str, Any], required: tuple[str, ...] = ()
            ) -> dict[str, Any]:
    return {"type": "object", "additionalProperties": False,
            "properties": {k: props.get(k, {}) for k in keys},
            **({"required": list(required)} if required else {})}


def vocabulary() -> SimpleNamespace:
    """Every name of the case reader's modules (its key lists and choices), merged."""
    import importlib
    import pkgutil

    casefile = importlib.import_module("envelope.casefile")
    names: dict[str, Any] = dict(vars(casefile))
    for info in pkgutil.walk_packages(getattr(casefile, "__path__", []),
                                      prefix="envelope.casefile."):
        names.update(vars(importlib.import_module(info.name)))
    return SimpleNamespace(**names)


def schema() -> dict[str, Any]:
    """The JSON Schema of a case file, as a dict."""
    cf = vocabulary()
    get = vars(cf).get
    section = {k: _number(k) for k in cf.SECTION_KEYS}
    spans_of = {"anyOf": [{"const": "all"}, {"type": "integer", "minimum": 1},
                          {"type": "array", "items": {"type": "integer", "minimum": 1}}]}
    stretch = _object(cf.STRETCH_KEYS, {**section, "from": _number("from"),
                                        "to": _number("to")})
    span = _object(cf.SPAN_KEYS, {**section, "length": _number("length"),
                                  "sections": {"type": "array", "items": stretch}},
                   ("length",))
    support_keys = tuple(dict.fromkeys(k for ks in cf.SUPPORT_KEYS.values() for k in ks))
    columns = _object(cf.COLUMN_KEYS, {k: _number(k) for k in cf.COLUMN_KEYS} |
                      {"far_end": {"enum": list(cf.FAR_END_COEFFICIENT)}})
    support = _object(support_keys, {"type": {"enum": list(cf.SUPPORT_TYPES)},
                                     "columns": columns,
                                     **{k: _number(k) for k in support_keys
                                        if k not in ("type", "columns", "seat")}},
                      ("type",))
    load = _object(cf.ALL_LOAD_KEYS, {"case": {"type": "string"},
                                      "type": {"enum": list(cf.LOAD_TYPES)},
                                      "spans": spans_of,
                                      **{k: _number(k) for k in cf.ALL_LOAD_KEYS
                                         if k not in ("case", "type", "spans")}},
                   ("case", "type"))
    case = _object(cf.CASE_KEYS, {"kind": {"enum": list(get("CASE_KINDS", ())) or
                                           ["dead", "live", "roof_live", "snow", "rain",
                                            "wind"]},
                                  "pattern": {"type": "boolean"},
                                  "category": {"enum": list(cf.CATEGORIES)}}, ("kind",))
    custom = _object(cf.CUSTOM_KEYS, {"name": {"type": "string"},
                                      "set": {"enum": list(cf.COMBINATION_SETS)},
                                      "factors": {"type": "object",
                                                  "additionalProperties": {"type": "number"}}},
                     cf.CUSTOM_KEYS)
    combinations = _object(cf.COMBINATION_KEYS, {
        "strength": {"enum": list(cf.STRENGTH_SETS)},
        "service": {"anyOf": [{"enum": list(cf.SERVICE_SETS)},
                              {"type": "array", "items": {"enum": list(cf.SERVICE_SETS)}}]},
        "reduced_companion_live": {"type": "boolean"},
        "custom": {"type": "array", "items": custom}})
    patterning = _object(cf.PATTERNING_KEYS, {"method": {"enum": list(cf.PATTERN_METHODS)},
                                              "segments": {"type": "integer", "minimum": 1},
                                              "favourable_dead": {"type": "number"}})
    output = _object(cf.OUTPUT_KEYS, {"stations_per_span": {"type": "integer", "minimum": 2},
                                      "all_cases": {"type": "boolean"},
                                      "moment_plot": {"enum": list(cf.MOMENT_PLOTS)}})
    design_props: dict[str, Any] = {k: _number(k, design=True) for k in cf.DESIGN_KEYS}
    design_props.update({
        "material": {"enum": list(cf.DESIGN_MATERIAL_KEYS)},
        "code": {"enum": sorted({c for cs in cf.DESIGN_CODES.values() for c in cs})},
        "sections": {"type": "string", "description": "a CSV of sections, relative to the "
                                                      "case file"},
        "section": {"type": "object", "properties": {
            k: ({"type": "string"} if k == "name" else
                {"enum": list(cf.FABRICATIONS)} if k == "fabrication" else
                _number(k, design=True))
            for k in cf.DESIGN_SECTION_KEYS}},
        "bracing": _object(cf.BRACING_KEYS, {k: {"anyOf": [
            {"enum": list(cf.BRACING_WORDS)},
            {"type": "array", "description": "brace positions, one list per span",
             "items": {"type": "array", "items": {"type": ["number", "string"]}}}]}
            for k in cf.BRACING_KEYS}),
        "vibration": _object(cf.VIBRATION_KEYS, {
            k: ({"type": ["number", "string"]} if k in ("spacing", "effective_width")
                else {"type": "number", "minimum": 0}) for k in cf.VIBRATION_KEYS},
            ("live", "spacing")),
        "camber_fraction": {"type": "number", "exclusiveMinimum": 0, "maximum": 1},
        "deflection_limits": _object(cf.DEFLECTION_LIMIT_KEYS,
                                     {k: {"type": "number", "exclusiveMinimum": 0}
                                      for k in cf.DEFLECTION_LIMIT_KEYS}),
    })
    design = _object(cf.DESIGN_KEYS, design_props, ("material", "code"))
    top = {
        "id": {"type": "string", "pattern": cf.ID_PATTERN.pattern},
        "title": {"type": "string"},
        "units": {"enum": list(SYSTEMS)},
        "section": _object(cf.SECTION_KEYS, section),
        "spans": {"type": "array", "minItems": 1, "items": span},
        "supports": {"type": "array", "minItems": 2, "items": support},
        "cases": {"type": "object", "additionalProperties": case},
        "loads": {"type": "array", "items": load},
        "combinations": combinations, "patterning": patterning, "output": output,
        "design": design,
    }
    doc = _object(cf.TOP_KEYS, top, ("units", "spans", "supports"))
    return {"$schema": "https://json-schema.org/draft/2020-12/schema", "$id": SCHEMA_ID,
            "title": "envelope case file",
            "description": "One continuous beam: spans, supports, sections, loads, load "
                           "cases, combinations, patterning and output choices.  Results "
                           "are for checking by a licensed engineer and defer to local "
                           "codes.", **doc}
