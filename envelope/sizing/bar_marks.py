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
is found on the envelope itself and extended by the code's rule
(:mod:`envelope.sizing.cutoffs`): every span the marks need is sampled in one
evaluation of the envelope (both signs at once), and then the ends of every stretch
are narrowed together to :data:`envelope.config.DESIGN_XTOL` of the span, each step
of all of them one more evaluation (:func:`envelope.sizing.cutoffs.narrow`).
With moving loads every evaluation at new points is an influence-line solve: a
handful of them instead of one per end and step.

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


class _Demand:
    """The strength envelope of moment of a beam, sampled per span once and then asked
    at any points of any spans together: sagging demand is the envelope's max, hogging
    demand minus its min (consistent units)."""

    def __init__(self, analysis: Analysis, spans: list[int], x_peak: dict[int, float]
                 ) -> None:
        self.analysis = analysis
        lengths = [analysis.beam.spans[j].length for j in spans]
        self.x = {j: np.unique(np.r_[np.linspace(0.0, L, SAMPLES + 1),
                                     [x_peak[j]] if j in x_peak else []])
                  for j, L in zip(spans, lengths, strict=True)}
        span = np.concatenate([np.full(self.x[j].size, j, dtype=np.int64) for j in spans]
                              + [np.zeros(0, dtype=np.int64)])
        x = np.concatenate([self.x[j] for j in spans] + [np.zeros(0)])
        mmax, mmin = self._at(span, x)
        cuts = np.cumsum([0] + [self.x[j].size for j in spans])
        self.sagging = {j: mmax[cuts[i]:cuts[i + 1]] for i, j in enumerate(spans)}
        self.hogging = {j: -mmin[cuts[i]:cuts[i + 1]] for i, j in enumerate(spans)}

    def _at(self, span: np.ndarray, x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Max and min of the envelope at points given in any order (asked in beam
        order)."""
        if span.size == 0:
            return np.zeros(0), np.zeros(0)
        order = np.lexsort((x, span))
        ext = envelope_at(self.analysis.solved,
                          make_points(self.analysis.beam, span[order], x[order]),
                          "moment", labels=False)
        assert ext is not None
        mmax, mmin = np.empty(x.size), np.empty(x.size)
        mmax[order], mmin[order] = ext.max, ext.min
        return mmax, mmin

    def at(self, span: np.ndarray, sign: np.ndarray, x: np.ndarray) -> np.ndarray:
        """Demand at ``x`` in ``span`` of the sign ``sign`` (+1 sagging, -1 hogging)."""
        mmax, mmin = self._at(span, x)
        return np.where(sign > 0, mmax, -mmin)


class _Runs:
    """Stretches of spans where a demand exceeds a capacity, found together: each is
    asked for (:meth:`add`), the ends of all of them are narrowed in lockstep
    (:meth:`solve`: one envelope evaluation per step for every end), then read
    (:meth:`ends`)."""

    def __init__(self, demand: _Demand) -> None:
        self.demand = demand
        self.found: list[list[float]] = []
        # per end to narrow: (run, slot, span, sign, inside x, beyond x, g inside,
        # g beyond, capacity, tolerance)
        self.brackets: list[tuple[int, int, int, float, float, float, float, float,
                                  float, float]] = []

    def add(self, span: int, sign: float, capacity: float, seed: int) -> int:
        """Ask for the run around sample ``seed`` of ``span``'s sampled demand of the
        sign ``sign`` above ``capacity``; its number for :meth:`ends`."""
        x = self.demand.x[span]
        m = self.demand.sagging[span] if sign > 0 else self.demand.hogging[span]
        run = len(self.found)
        stretch = cutoffs.run_brackets(x, m - capacity, seed)
        if stretch is None:
            self.found.append([np.nan, np.nan])
            return run
        ends, brackets = stretch
        self.found.append(ends)
        tol = config.DESIGN_XTOL * (float(x[-1] - x[0]) or 1.0)
        for slot, i, j in brackets:
            self.brackets.append((run, slot, span, sign, float(x[i]), float(x[j]),
                                  float(m[i]) - capacity, float(m[j]) - capacity,
                                  capacity, tol))
        return run

    def solve(self) -> None:
        """Narrow every end asked for to :data:`envelope.config.DESIGN_XTOL` of its
        span (:func:`envelope.sizing.cutoffs.narrow`)."""
        if not self.brackets:
            return
        run, slot, span, sign, inside, outside, g_in, g_out, capacity, tol = (
            np.array(v) for v in zip(*self.brackets, strict=True))
        span = span.astype(np.int64)

        def g(c: np.ndarray) -> np.ndarray:
            return self.demand.at(span, sign, c) - capacity

        roots = cutoffs.narrow(inside, outside, g_in, g_out, g, tol)
        for r, s, root in zip(run.tolist(), slot.tolist(), roots.tolist(), strict=True):
            self.found[r][s] = root
        self.brackets = []

    def ends(self, run: int) -> tuple[float, float]:
        """The two ends of run ``run`` (span-local; NaN, NaN where there is none)."""
        a, b = self.found[run]
        return a, b


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

    # What to find: the bottom cut-offs of each span with bars to stop, the top
    # stretches each side of each support with hogging steel.
    bottom: list[tuple[int, tuple[int, str, float, float, float], int, float]] = []
    for j in range(n):
        mid = 3 * j + 1
        bars = group(mid)
        count = bars[0]
        if count == 0:
            continue
        continuous = any(0 < k < n for k in (j, j + 1))
        keep = count if count <= 2 else max(2, math.ceil(count * BOTTOM_SHARE[
            "continuous" if continuous else "simple"]))
        bottom.append((j, bars, keep, float(sizing["x_span"][mid])))
    top: list[tuple[int, tuple[int, str, float, float, float], int]] = []
    for k in range(n + 1):
        faces = [i for i in (3 * (k - 1) + 2 if k > 0 else None, 3 * k if k < n else None)
                 if i is not None]
        best = max(faces, key=lambda i: float(sizing["as_provided"][i]))
        bars = group(best)
        if bars[0] == 0:
            continue
        top.append((k, bars, bars[0] if bars[0] <= 2 else max(2, math.ceil(
            bars[0] * TOP_SHARE))))
    cut_spans = {j: x_peak for j, bars, keep, x_peak in bottom if keep < bars[0]}
    sides = {k: [(j, at_left) for j, at_left in ((k - 1, False), (k, True)) if 0 <= j < n]
             for k, _, _ in top}
    sampled = sorted(set(cut_spans) | {j for s in sides.values() for j, _ in s})
    demand = _Demand(analysis, sampled, cut_spans)
    runs = _Runs(demand)
    sag_run = {j: runs.add(j, 1.0, strength(keep * bars[2], bars[3], True),
                           int(np.argmin(np.abs(demand.x[j] - cut_spans[j]))))
               for j, bars, keep, _ in bottom if j in cut_spans}
    hog_runs: dict[tuple[int, int], tuple[int, int]] = {}
    for k, bars, keep in top:
        _, _, ab, d, _ = bars
        for j, at_left in sides[k]:
            seed = 0 if at_left else demand.x[j].size - 1
            scale = max(float(np.max(np.abs(demand.hogging[j]))), np.finfo(float).tiny)
            hog_runs[k, j] = (runs.add(j, -1.0, config.ZERO_RTOL * scale, seed),
                              runs.add(j, -1.0, strength(keep * ab, d, False), seed))
    runs.solve()

    for j, (count, size, _, d, db), keep, x_peak in bottom:
        L = lengths[j]
        rows.append(_row(beam.id, j, f"B{j + 1}-1", "bottom", keep, size,
                         joint_x[j], joint_x[j] + L))
        if keep == count:
            continue
        a, b = runs.ends(sag_run[j])
        if not np.isfinite(a):
            a = b = x_peak
        ext, ld = (v * to_c for v in extension(d, db, False, j))
        start = max(0.0, min(a - ext, x_peak - ld))
        end = min(L, max(b + ext, x_peak + ld))
        rows.append(_row(beam.id, j, f"B{j + 1}-2", "bottom", count - keep, size,
                         joint_x[j] + start, joint_x[j] + end))

    for k, (count, size, _, d, db), keep in top:
        ext, ld = (v * to_c for v in extension(d, db, True, min(k, n - 1)))
        pos: dict[str, list[float]] = {"keep": [], "cut": []}
        for j, at_left in sides[k]:  # span left of / right of joint k
            L = lengths[j]
            a0, b0 = runs.ends(hog_runs[k, j][0])
            a1, b1 = runs.ends(hog_runs[k, j][1])
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
