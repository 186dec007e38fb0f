"""bars.parquet: the bar marks of a concrete beam, where each group of bars starts and
stops, from the exact strength envelope of moment.

Per span, the bottom bars of the sagging section are two marks: the bars that run the
whole span (at least a quarter of them into a continuous end, a third where both ends
are discontinuous, and never fewer than 2: ACI 318-19 9.7.3.8.1, EN 1992-1-1 9.2.1.4(1)
and 9.2.1.5(1)), and the rest, cut off where the sagging envelope falls below the
strength of the continuing bars.  Per support with hogging steel, the top bars are two
marks: a third of them (at least 2) carried past the point where the hogging envelope
ends (ACI 318-19 9.7.3.8.4: by the largest of d, 12 db and ln/16), the rest cut off
where the envelope falls below the strength of the carried bars.  Each cut-off point
is found on the envelope itself (sampled, then bisected to
:data:`envelope.config.DESIGN_XTOL` of the span) and extended by the code's rule
(:mod:`envelope.sizing.cutoffs`).

Positions ``start`` and ``end`` are from the left end of span 1 (m / ft); ``span`` is
the span a bottom mark lies in, or the span left of the support for a top mark
(the right span at the first support).
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from envelope import config
from envelope.analysis import Analysis
from envelope.design import ConcreteDesign
from envelope.recovery import make_points
from envelope.sizing import concrete_aci as aci
from envelope.sizing import concrete_en as en
from envelope.sizing import cutoffs
from envelope.sizing.layout import ACI_SCALES, EN_SCALES
from envelope.solved import envelope_at

#: Samples per span of the envelope before the cut-off points are bisected.
SAMPLES = 200
#: Share of the bottom bars run through a span: continuous end / both ends simple.
BOTTOM_SHARE = {"continuous": 0.25, "simple": 1.0 / 3.0}
TOP_SHARE = 1.0 / 3.0


def _envelope(analysis: Analysis, span: int, sign: float):  # type: ignore[no-untyped-def]
    """Demand function of one span: sign * the envelope (max for sagging, -min for
    hogging) of the strength moment at any x_span (consistent units)."""
    def f(x: np.ndarray) -> np.ndarray:
        ext = envelope_at(analysis.solved, make_points(analysis.beam,
                                                       np.full(x.size, span), x),
                          "moment", labels=False)
        assert ext is not None
        return ext.max if sign > 0 else -ext.min
    return f


def bar_marks(analysis: Analysis, sizing: dict[str, np.ndarray]) -> dict[str, np.ndarray]:
    """The bars.parquet columns from the sizing columns of a concrete beam."""
    beam = analysis.beam
    design = beam.design
    assert isinstance(design, ConcreteDesign)
    code = design.code
    system = beam.units.name
    s = ACI_SCALES[system] if code == "aci318-19" else EN_SCALES[system]
    to_c = beam.units.to_consistent("deflection")  # section length -> consistent
    joint_x = np.asarray(beam.joint_x)
    n = beam.n_spans
    lengths = np.array([sp.length for sp in beam.spans])
    bw = float(design.b)
    tee = design.is_tee
    fc, fy = float(design.fc), float(design.fy)
    side = float(design.cover_to_bar_centre)
    rows: list[dict[str, Any]] = []

    def group(i: int) -> tuple[int, str, float, float, float]:
        text = str(sizing["bars"][i])
        count, size = text.split() if text else ("0", "")
        area = float(sizing["as_provided"][i])
        count_i = int(count)
        return count_i, size, area / max(count_i, 1), float(sizing["d"][i]), \
            _diameter(area / max(count_i, 1))

    def strength(area: float, d: float, sagging: bool) -> float:
        """Design strength of ``area`` (section units) at depth d, consistent moment."""
        if code == "aci318-19":
            bf = float(design.flange_width or bw) if (sagging and tee) else bw
            hf = float(design.flange_depth or 0.0) if (sagging and tee) else 0.0
            cap = aci.capacity(np.array([area]), bw, d, fc * s.stress, fy * s.stress,
                               system, bf, hf)
            return float(cap["phi_mn"][0]) / s.moment
        L = s.length
        width = float(design.flange_width or bw) if (sagging and tee) else bw
        res = en.resistance(np.array([area / s.area]), width * L, d * L, fc * s.stress,
                            fy * s.stress)
        return float(res["m_rd"][0]) / s.moment

    def extension(d: float, db: float, top: bool, j: int) -> tuple[float, float]:
        """(extension beyond the cut-off point, development length from the point
        of largest stress), section units."""
        if code == "aci318-19":
            clear_ok = side - db / 2.0 >= db
            ld = float(cutoffs.development_length_aci(db, fy * s.stress, fc * s.stress,
                                                      system, top, clear_ok))
            return max(d, 12.0 * db), ld
        L = s.length
        # EN 1992-1-1 8.4.2(2): top bars of a member deeper than 250 mm are in poor bond
        # (the deepest design section of the span, where a stretch gives its own h)
        depth = float(np.max(np.asarray(sizing["h"], dtype=float)[3 * j:3 * j + 3]))
        good = not (top and depth * L > 250.0)
        lbd = float(cutoffs.anchorage_length_en(db * L, fy * s.stress, fc * s.stress,
                                                good)) / L
        cot = [sizing["cot_theta"][3 * j + k] for k in (0, 2)] if "cot_theta" in sizing \
            else []
        cot = [c for c in cot if np.isfinite(c)]
        a_l = 0.45 * d * max(cot) if cot else d  # z (cot theta) / 2 with z = 0.9 d
        return a_l + lbd, lbd

    for j in range(n):
        L = lengths[j]
        mid = 3 * j + 1
        count, size, ab, d, db = group(mid)
        if count == 0:
            continue
        continuous = any(0 < k < n for k in (j, j + 1))
        keep = count if count <= 2 else max(2, math.ceil(count * BOTTOM_SHARE[
            "continuous" if continuous else "simple"]))
        rows.append(_row(beam.id, j, f"B{j + 1}-1", "bottom", keep, size,
                         joint_x[j], joint_x[j] + L))
        if keep == count:
            continue
        demand = _envelope(analysis, j, 1.0)
        x = np.linspace(0.0, L, SAMPLES + 1)
        x_peak = float(sizing["x_span"][mid])
        x = np.unique(np.r_[x, x_peak])
        m = demand(x)
        seed = int(np.argmin(np.abs(x - x_peak)))
        a, b = cutoffs.run_around(x, m, strength(keep * ab, d, True), seed, demand,
                                  config.DESIGN_XTOL)
        if not np.isfinite(a):
            a = b = x_peak
        ext, ld = (v * to_c for v in extension(d, db, False, j))
        start = max(0.0, min(a - ext, x_peak - ld))
        end = min(L, max(b + ext, x_peak + ld))
        rows.append(_row(beam.id, j, f"B{j + 1}-2", "bottom", count - keep, size,
                         joint_x[j] + start, joint_x[j] + end))

    for k in range(n + 1):
        faces = [i for i in (3 * (k - 1) + 2 if k > 0 else None, 3 * k if k < n else None)
                 if i is not None]
        best = max(faces, key=lambda i: float(sizing["as_provided"][i]))
        count, size, ab, d, db = group(best)
        if count == 0:
            continue
        keep = count if count <= 2 else max(2, math.ceil(count * TOP_SHARE))
        ext, ld = (v * to_c for v in extension(d, db, True, min(k, n - 1)))
        pos: dict[str, list[float]] = {"keep": [], "cut": []}
        for j, at_left in ((k - 1, False), (k, True)):  # span left of / right of joint k
            if not 0 <= j < n:
                continue
            L = lengths[j]
            demand = _envelope(analysis, j, -1.0)
            x = np.linspace(0.0, L, SAMPLES + 1)
            m = demand(x)
            seed = 0 if at_left else x.size - 1
            scale = max(float(np.max(np.abs(m))), np.finfo(float).tiny)
            a0, b0 = cutoffs.run_around(x, m, config.ZERO_RTOL * scale, seed, demand,
                                        config.DESIGN_XTOL)
            a1, b1 = cutoffs.run_around(x, m, strength(keep * ab, d, False), seed, demand,
                                        config.DESIGN_XTOL)
            ln = L - _half_width(beam, j) - _half_width(beam, j + 1)
            face = _half_width(beam, k)
            if at_left:
                reach0 = (b0 if np.isfinite(b0) else face) + max(ext, ln / 16.0 * (
                    code == "aci318-19"))
                reach1 = max((b1 if np.isfinite(b1) else face) + ext, face + ld)
                pos["keep"].append(joint_x[j] + min(L, reach0))
                pos["cut"].append(joint_x[j] + min(L, reach1))
            else:
                reach0 = (a0 if np.isfinite(a0) else L - face) - max(ext, ln / 16.0 * (
                    code == "aci318-19"))
                reach1 = min((a1 if np.isfinite(a1) else L - face) - ext, L - face - ld)
                pos["keep"].insert(0, joint_x[j] + max(0.0, reach0))
                pos["cut"].insert(0, joint_x[j] + max(0.0, reach1))
        span_of = k - 1 if k > 0 else 0
        if len(pos["keep"]) == 1:  # an end support: from the beam's end
            end_x = joint_x[k]
            pos["keep"] = sorted([end_x, pos["keep"][0]])
            pos["cut"] = sorted([end_x, pos["cut"][0]])
        rows.append(_row(beam.id, span_of, f"T{k + 1}-1", "top", keep, size,
                         pos["keep"][0], pos["keep"][1]))
        if keep < count:
            rows.append(_row(beam.id, span_of, f"T{k + 1}-2", "top", count - keep, size,
                             pos["cut"][0], pos["cut"][1]))
    keys = ("beam", "span", "mark", "position", "bars", "start", "end", "length")
    out: dict[str, np.ndarray] = {}
    for key in keys:
        values = [r[key] for r in rows]
        out[key] = np.array(values, dtype=object if key in ("beam", "mark", "position",
                                                            "bars") else None)
    if not rows:
        out = {k: np.array([], dtype=object if k in ("beam", "mark", "position", "bars")
                           else float) for k in keys}
        out["span"] = np.array([], dtype=np.int64)
    return out


def _half_width(beam: Any, joint: int) -> float:
    return beam.supports[joint].width / 2.0


def _diameter(area: float) -> float:
    return math.sqrt(4.0 * area / math.pi)


def _row(beam_id: str, span: int, mark: str, position: str, count: int, size: str,
         start: float, end: float) -> dict[str, Any]:
    return {"beam": beam_id, "span": span + 1, "mark": mark, "position": position,
            "bars": f"{count} {size}", "start": float(start), "end": float(end),
            "length": float(end - start)}
