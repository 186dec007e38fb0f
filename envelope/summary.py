"""The console summary of a run: governing values per span, in the output units."""

from __future__ import annotations

import math

from envelope.analysis import Analysis
from envelope.store import CAUTION


def _num(v: float, digits: int = 1) -> str:
    if v is None or (isinstance(v, float) and math.isnan(v)):
        return "-"
    return f"{round(float(v), digits) + 0.0:.{digits}f}"  # + 0.0: never "-0.0"


def span_summary(analysis: Analysis) -> str:
    """A fixed-width table: one line per span, then the caution line."""
    beam = analysis.beam
    u = beam.units.labels
    d = analysis.design_actions
    defl = beam.units.deflection_factor
    head = (f"{'span':>4} {'L':>7} {'M+':>9} {'at':>6} {'M- left':>9} {'M- right':>9} "
            f"{'V left':>8} {'V right':>8} {'defl':>7} {'L/defl':>7}")
    units = (f"{'':>4} {u['length']:>7} {u['moment']:>9} {u['length']:>6} {u['moment']:>9} "
             f"{u['moment']:>9} {u['force']:>8} {u['force']:>8} {u['deflection']:>7} {'':>7}")
    lines = [f"{beam.id}: {beam.title}" if beam.title else beam.id, head, units]
    for j in range(beam.n_spans):
        ratio = d["span_over_deflection"][j]
        lines.append(
            f"{j + 1:>4} {_num(d['length'][j], 2):>7} {_num(d['moment_pos'][j]):>9} "
            f"{_num(d['moment_pos_x'][j], 2):>6} {_num(d['moment_neg_left_face'][j]):>9} "
            f"{_num(d['moment_neg_right_face'][j]):>9} {_num(d['shear_left'][j]):>8} "
            f"{_num(d['shear_right'][j]):>8} {_num(d['deflection_max'][j] * defl, 2):>7} "
            f"{_num(ratio, 0):>7}")
    lines.append("M+ largest sagging moment (strength); M- hogging at the support faces; "
                 "V largest shear at the span ends; defl largest service deflection.")
    lines.append(CAUTION)
    return "\n".join(lines)
