"""The beam as the figure draws it: spans, supports, hinges and loads as plain JSON.

Written into envelope.parquet as the ``envelope:sketch`` metadata, so that ``envelope
plot`` redraws the beam strip from the result files alone.  Values are in the consistent
units of the case (length m or ft, force kN or kip); a rigid restraint is ``null``;
supports and spans are numbered from 1, as in the case file.
Load types this module does not know are kept with their type only (the figure counts
them).  At most :data:`MAX_LOADS` load items are kept; ``loads_omitted`` counts the rest.
"""

from __future__ import annotations

import json
import math
from typing import Any

from envelope.model import Beam

#: Load items kept in the sketch (a figure cannot show more at any useful size).
MAX_LOADS = 2000
_FIELDS = ("start", "end", "w_start", "w_end", "P", "M", "at")


def _stiffness(k: float) -> float | None:
    return None if math.isinf(k) else float(k)


def _hinges(beam: Beam) -> list[float]:
    """Global x of internal moment releases, read from whatever the spans carry."""
    out: list[float] = []
    x0 = 0.0
    for span in beam.spans:
        for h in getattr(span, "hinges", ()) or ():
            at = getattr(h, "at", h)
            try:
                out.append(x0 + float(at))
            except (TypeError, ValueError):
                continue
        x0 += span.length
    return out


def _load(beam: Beam, load: Any) -> list[dict[str, Any]]:
    kind = str(getattr(load, "type", "?"))
    item: dict[str, Any] = {"case": str(load.case), "type": kind}
    span = getattr(load, "span", None)
    if isinstance(span, int):
        item["span"] = span + 1
    if kind == "self_weight" and isinstance(span, int):
        parts = []
        for stretch in beam.spans[span].stretches:
            w = stretch.section.self_weight
            lo, hi = max(stretch.start, load.start), min(stretch.end, load.end)
            if w is not None and hi > lo:
                parts.append({**item, "type": "uniform", "start": lo, "end": hi,
                              "w_start": w, "w_end": w})
        return parts
    for name in _FIELDS:
        value = getattr(load, name, None)
        if isinstance(value, int | float) and math.isfinite(value):
            item[name] = float(value)
    if kind == "settlement":
        item.update(_settlement(load))
    if getattr(load, "is_moving", False):
        item.update(_moving(load))
    return [item]


def _settlement(load: Any) -> dict[str, Any]:
    """A settlement's support as numbered in the case file (from 1) and its delta."""
    out: dict[str, Any] = {}
    support, delta = getattr(load, "support", None), getattr(load, "delta", None)
    if isinstance(support, int) and support >= 0:
        out["support"] = support + 1
    if isinstance(delta, int | float) and math.isfinite(delta):
        out["delta"] = float(delta)
    return out


def _moving(load: Any) -> dict[str, Any]:
    """A moving load's spans (numbered from 1) and its axles as [P, offset] pairs (a
    concentrated load is one axle at offset 0)."""
    axles = getattr(load, "axles", ()) or ((float(getattr(load, "P", 0.0)), 0.0),)
    return {"spans": [int(j) + 1 for j in getattr(load, "moving_spans", ())],
            "axles": [[float(p), float(o)] for p, o in axles]}


def sketch(beam: Beam) -> dict[str, Any]:
    """The JSON-able sketch of ``beam`` (see the module docstring)."""
    loads: list[dict[str, Any]] = []
    omitted = 0
    for load in beam.loads:
        if len(loads) >= MAX_LOADS:
            omitted += 1
            continue
        loads.extend(_load(beam, load))
    return {
        "spans": [float(s.length) for s in beam.spans],
        "supports": [{"type": s.kind, "width": float(s.width),
                      "k_vertical": _stiffness(s.k_vertical),
                      "k_rotation": _stiffness(s.k_rotation)} for s in beam.supports],
        "hinges": _hinges(beam),
        "cases": {c.name: c.kind for c in beam.cases},
        "loads": loads,
        "loads_omitted": omitted,
    }


def encode(beam: Beam) -> bytes:
    """The beam strip as compact JSON (stored in the envelope table's metadata)."""
    return json.dumps(sketch(beam), separators=(",", ":")).encode()


def decode(raw: str | bytes | None) -> dict[str, Any] | None:
    """The sketch from metadata, or None when absent or unreadable (older files)."""
    if not raw:
        return None
    try:
        data = json.loads(raw)
    except (ValueError, TypeError):
        return None
    return data if isinstance(data, dict) and isinstance(data.get("spans"), list) else None
