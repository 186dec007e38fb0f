"""The input echoed with units: every key of the case file, its value as written, and
the unit a plain number is read in (case-format contract, "Units" and "[design]")."""

from __future__ import annotations

from typing import Any

from envelope.units import SYSTEMS, pretty_unit

#: Case-file key (the last part of its path) -> quantity of :mod:`envelope.units`.
KEY_QUANTITY: dict[str, str] = {
    "length": "length", "width": "length", "from": "length", "to": "length",
    "start": "length", "end": "length", "at": "length", "height_below": "length",
    "height_above": "length", "delta": "length", "tributary_width": "length",
    "offset": "length",
    "E": "modulus", "I": "inertia", "A": "area", "unit_weight": "unit_weight",
    "k_vertical": "k_vertical", "k_rotation": "k_rotation",
    "w": "line_load", "w_start": "line_load", "w_end": "line_load",
    "P": "force", "M": "moment",
}
#: [design] keys -> section unit (SI, US): plain numbers are mm, MPa / in, ksi.
DESIGN_UNITS: dict[str, tuple[str, str]] = {
    **{k: ("mm", "in") for k in ("b", "h", "cover_to_bar_centre", "flange_width",
                                 "flange_depth", "aggregate", "d", "bf", "tf", "tw")},
    **{k: ("MPa", "ksi") for k in ("fc", "fy", "stirrup_fy", "Fy")},
    "Zx": ("mm^3", "in^3"), "Sx": ("mm^3", "in^3"), "Ix": ("mm^4", "in^4"),
    "Iy": ("mm^4", "in^4"), "Aw": ("mm^2", "in^2"), "ry": ("mm", "in"),
    "J": ("mm^4", "in^4"), "Cw": ("mm^6", "in^6"),
    **{k: ("mm", "in") for k in ("bearing_length", "rts", "ho", "k")},
    "weight": ("kg/m", "lb/ft"), "crack_width": ("mm", "mm"),
    "months": ("months", "months"),
}
#: [design] keys whose plain numbers are in the case's own units (case-format
#: "bracing (steel)", "vibration (steel)"): key path prefix -> quantity.
DESIGN_QUANTITY: dict[str, str] = {
    "design.bracing": "length", "design.vibration.spacing": "length",
    "design.vibration.effective_width": "length",
}
#: [design] keys in a unit of their own: path -> (SI, US).
DESIGN_OWN: dict[str, tuple[str, str]] = {
    "design.vibration.live": ("kN/m^2", "psf"),
    "design.bars": ("mm", ""),  # a list of metric bar diameters; US sizes are names
}


def unit_of(path: str, system: str) -> str:
    """The unit a plain number at key ``path`` (``spans[2].length``) is read in."""
    last = path.rsplit(".", 1)[-1].split("[", 1)[0]
    if path.startswith("design"):
        if path.startswith("design.deflection_limits"):
            return "span / value"
        for prefix, quantity in DESIGN_QUANTITY.items():
            if path == prefix or path.startswith(prefix + "."):
                return pretty_unit(SYSTEMS[system].customary(quantity))
        own = DESIGN_OWN.get(path)
        if own:
            return own[0 if system == "SI" else 1]
        pair = DESIGN_UNITS.get(last)
        return pair[0 if system == "SI" else 1] if pair else ""
    q = KEY_QUANTITY.get(last)
    return pretty_unit(SYSTEMS[system].customary(q)) if q else ""


def _walk(value: Any, path: str, out: list[dict[str, str]], system: str) -> None:
    if isinstance(value, dict):
        for k, v in value.items():
            _walk(v, f"{path}.{k}" if path else str(k), out, system)
    elif isinstance(value, list) and value and all(isinstance(v, dict) for v in value):
        for i, v in enumerate(value, 1):
            _walk(v, f"{path}[{i}]", out, system)
    else:
        shown = _shown(value)
        unit = "as written" if isinstance(value, str) and _has_unit(value, path) else \
            unit_of(path, system) if _numbers(value) else ""
        out.append({"key": path, "value": shown, "unit": unit})


def _numbers(value: Any) -> bool:
    """A plain number, or a list (of lists) holding plain numbers only."""
    if isinstance(value, list):
        return bool(value) and all(_numbers(v) or v == [] for v in value) and \
            any(_numbers(v) for v in value)
    return isinstance(value, int | float) and not isinstance(value, bool)


def _has_unit(text: str, path: str) -> bool:
    return any(c.isdigit() for c in text[:1]) and unit_of(path, "SI") != ""


def _shown(value: Any) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, list):
        if any(isinstance(v, list) for v in value):  # one list per span: keep the brackets
            return ", ".join(f"[{_shown(v)}]" if isinstance(v, list) else _shown(v)
                             for v in value)
        return ", ".join(_shown(v) for v in value)
    if isinstance(value, float):
        return f"{value:g}"
    return str(value)


def echo(document: dict[str, Any], system: str) -> list[dict[str, str]]:
    """Every key of the case document as ``{"key", "value", "unit"}`` rows, in file
    order; spans, supports and loads are numbered from 1 as in the messages."""
    rows: list[dict[str, str]] = []
    system = system if system in SYSTEMS else "SI"
    _walk(document, "", rows, system)
    return rows
