"""The model sketch of a report as SVG text: the beam to scale along its length, its
supports, span numbers and lengths, and every load item drawn on a row of its own case.

Drawn from the case document as the case reader reads it, so the sketch shows what was
analysed.  Plain SVG written here (no plotting library): it is small and exact.
"""

from __future__ import annotations

from html import escape
from pathlib import Path
from typing import Any

WIDTH = 900.0
MARGIN = 40.0
ROW = 26.0
_CASE_COLOURS = ("#555555", "#b2182b", "#2166ac", "#1b7837", "#762a83", "#e08214")


def _n(v: float) -> str:
    return f"{v:.3g}"


def _support(kind: str, x: float, y: float) -> str:
    if kind == "pinned":
        return (f'<polygon points="{x},{y} {x - 8},{y + 13} {x + 8},{y + 13}" '
                'fill="white" stroke="black"/>')
    if kind == "fixed":
        return (f'<rect x="{x - 3}" y="{y - 14}" width="6" height="28" fill="#333"/>')
    if kind == "spring":
        zig = " ".join(f"{x + (5 if i % 2 else -5)},{y + 3 + 3 * i}" for i in range(6))
        return (f'<polyline points="{x},{y} {zig} {x},{y + 22}" fill="none" '
                f'stroke="black"/><line x1="{x - 8}" y1="{y + 22}" x2="{x + 8}" '
                f'y2="{y + 22}" stroke="black"/>')
    return ""


def sketch(document: dict[str, Any], folder: Path | None = None) -> str:
    """SVG text of the model, or an empty string when the document cannot be read."""
    from envelope.casefile import parse_case
    from envelope.errors import EnvelopeError

    try:
        beam = parse_case(document, str(folder or "case"))
    except EnvelopeError:
        return ""
    labels = beam.units.labels
    total = beam.length
    scale = (WIDTH - 2 * MARGIN) / total if total > 0 else 1.0
    joints = beam.joint_x
    cases = [c.name for c in beam.cases if any(ld.case == c.name for ld in beam.loads)]

    def gx(span: int, local: float) -> float:
        return MARGIN + (joints[span] + local) * scale

    def extent(ld: Any) -> tuple[float, float]:
        if ld.type not in ("point", "moment", "uniform", "linear", "self_weight"):
            return gx(ld.span, 0.0), gx(ld.span, 0.0) + 60.0  # named, not drawn
        if ld.type in ("point", "moment"):
            x = gx(ld.span, ld.at)
            return x - 6.0, x + 60.0  # the arrow and its label
        end = ld.end if ld.end > ld.start else beam.spans[ld.span].length
        return gx(ld.span, ld.start), gx(ld.span, end)

    # each load item on the first lane of its case where it overlaps nothing drawn
    lanes: dict[str, list[list[tuple[float, float]]]] = {}
    placed: list[tuple[Any, str, int]] = []
    for ld in beam.loads:
        x0, x1 = extent(ld)
        rows = lanes.setdefault(ld.case, [])
        k = next((i for i, row in enumerate(rows)
                  if all(x1 <= a + 1 or x0 >= b - 1 for a, b in row)), len(rows))
        if k == len(rows):
            rows.append([])
        rows[k].append((x0, x1))
        placed.append((ld, ld.case, k))
    first_lane: dict[str, int] = {}
    total_lanes = 0
    for name in cases:
        first_lane[name] = total_lanes
        total_lanes += max(len(lanes.get(name, [])), 1)
    top = 30.0
    beam_y = top + ROW * total_lanes + 18.0
    height = beam_y + 70.0
    parts = [f'<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 {WIDTH:.0f} '
             f'{height:.0f}" width="{WIDTH:.0f}" height="{height:.0f}" '
             'font-family="sans-serif" font-size="11" role="img" '
             'aria-label="model sketch">',
             f'<text x="{MARGIN}" y="16" font-size="12">Model: spans, supports and loads '
             f'(lengths in {labels["length"]}, line loads in {labels["line_load"]}, '
             f'forces in {labels["force"]})</text>']

    parts.append(f'<line x1="{MARGIN}" y1="{beam_y}" x2="{WIDTH - MARGIN}" y2="{beam_y}" '
                 'stroke="black" stroke-width="3"/>')
    for j, s in enumerate(beam.supports):
        parts.append(_support(s.kind, MARGIN + joints[j] * scale, beam_y + 1.5))
    for j, span in enumerate(beam.spans):
        mid = gx(j, span.length / 2)
        parts.append(f'<text x="{mid:.1f}" y="{beam_y + 34}" text-anchor="middle">span '
                     f'{j + 1}: {_n(span.length)}</text>')
        parts.append(f'<line x1="{gx(j, 0):.1f}" y1="{beam_y + 44}" x2="{gx(j, span.length):.1f}"'
                     f' y2="{beam_y + 44}" stroke="#999" marker-end="none"/>')
    colours = {name: _CASE_COLOURS[k % len(_CASE_COLOURS)] for k, name in enumerate(cases)}
    for name in cases:
        y = top + ROW * first_lane[name] + 16.0
        parts.append(f'<text x="4" y="{y - 2}" fill="{colours[name]}">{escape(name)}'
                     '</text>')
    for ld, name, lane in placed:
        y = top + ROW * (first_lane[name] + lane) + 16.0
        colour = colours[name]
        span_len = beam.spans[ld.span].length
        if ld.type in ("uniform", "linear", "self_weight"):
            end = ld.end if ld.end > ld.start else span_len
            x0, x1 = gx(ld.span, ld.start), gx(ld.span, end)
            if ld.type == "self_weight":
                text = "self weight"
            elif ld.type == "uniform":
                text = f"w {_n(ld.w_start)}"
            else:
                text = f"w {_n(ld.w_start)} to {_n(ld.w_end)}"
            big = max(abs(ld.w_start), abs(ld.w_end), 1e-12)
            h0 = 4 + 10 * abs(ld.w_start) / big if ld.type == "linear" else 12
            h1 = 4 + 10 * abs(ld.w_end) / big if ld.type == "linear" else 12
            parts.append(f'<polygon points="{x0:.1f},{y} {x1:.1f},{y} {x1:.1f},{y - h1:.1f} '
                         f'{x0:.1f},{y - h0:.1f}" fill="{colour}" fill-opacity="0.25" '
                         f'stroke="{colour}"/>')
            parts.append(f'<text x="{(x0 + x1) / 2:.1f}" y="{y - 3}" text-anchor="middle"'
                         f' font-size="9">{escape(text)}</text>')
        elif ld.type == "point":
            x = gx(ld.span, ld.at)
            parts.append(f'<line x1="{x:.1f}" y1="{y - 14}" x2="{x:.1f}" y2="{y}" '
                         f'stroke="{colour}" stroke-width="2"/><polygon points="{x:.1f},'
                         f'{y + 2} {x - 4:.1f},{y - 5} {x + 4:.1f},{y - 5}" '
                         f'fill="{colour}"/><text x="{x + 5:.1f}" y="{y - 6}" '
                         f'font-size="9">P {_n(ld.P)}</text>')
        elif ld.type == "moment":
            x = gx(ld.span, ld.at)
            parts.append(f'<circle cx="{x:.1f}" cy="{y - 6}" r="6" fill="none" '
                         f'stroke="{colour}"/><text x="{x + 8:.1f}" y="{y - 6}" '
                         f'font-size="9">M {_n(ld.M)}</text>')
        else:  # a load type this sketch does not know: named, not drawn
            x = gx(ld.span, 0.0)
            parts.append(f'<text x="{x:.1f}" y="{y - 3}" font-size="9">'
                         f'{escape(ld.type)}</text>')
    parts.append("</svg>")
    return "\n".join(parts)
