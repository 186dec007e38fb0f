"""Moments along each unbraced segment for the cases that govern it, exact by recovery.

For each segment and each candidate case (a fixed set of coefficients over the unit
cases, so a moment diagram of its own) this gives the demand on the segment's
compression flange (the largest moment of the compressing sign: sagging for the top
flange, hogging for the bottom one), the largest absolute moment in the segment, and the
moments at its quarter point, centre and three-quarter point, all from the unit
responses times the case's coefficients (:mod:`envelope.recovery`): exact, not
interpolated between stations.  The largest moment is taken over the quarter points,
33 equally spaced points, the output stations inside the segment (point loads, ends of
distributed loads) and the zero of the case's own shear between neighbouring points.

Candidate cases: every explicit case of the strength set (patterning ``none`` and
``code``); for the superposition methods, which have too many cases to list, the case
that governs the envelope of the compressing sign at each of the segment's points (the
combination with its own subset of loaded cells).  Each candidate is checked with its own
Cb, so a case with a smaller moment but a flatter diagram can govern.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from envelope import config
from envelope.enveloper import ExplicitCaseSet, governing_coefficients, governing_columns
from envelope.loading import UnitCases
from envelope.moving import moving_loads, placements, point_effects, with_placed
from envelope.recovery import Points, evaluate_some, make_points
from envelope.sizing.bracing import Segments, locate
from envelope.sizing.ltb import cb as cb_f1_1
from envelope.solved import Solved
from envelope.solver import Solution

#: Equally spaced points per segment, ends included; 33 puts points on the quarter points
#: (indices 8, 16, 24).
SEGMENT_POINTS = 33
QUARTERS = (8, 16, 24)


@dataclass(frozen=True, slots=True)
class SegmentDemand:
    """Per segment (rows) and candidate case (columns; padded with zero demand): moments
    in consistent units."""

    mu: np.ndarray       # demand on the compression flange, >= 0
    cb: np.ndarray       # Eq. F1-1 (1.0 for a cantilever segment with its tip unbraced)
    m_abs: np.ndarray    # largest |M| in the segment
    quarter: np.ndarray  # (segments, cases, 3): M at the quarter, centre, three-quarter
    x_mu: np.ndarray     # where the demand is largest (beam coordinates)


def _points(solved: Solved, stations: Points, x0: float, x1: float) -> Points:
    """The sample points of one segment, sorted by x (left side first at a jump); the
    first :data:`SEGMENT_POINTS` of them (before sorting) are the equally spaced ones."""
    beam = solved.beam
    joint_x = np.asarray(beam.joint_x)
    xs = np.linspace(x0, x1, SEGMENT_POINTS)
    right = np.ones(xs.size, dtype=bool)
    right[-1] = False
    inside = (stations.x > x0) & (stations.x < x1)
    span_e, xs_e = locate(joint_x, xs, right)
    span = np.r_[span_e, stations.span[inside]]
    x_span = np.r_[xs_e, stations.x_span[inside]]
    side = np.r_[right, stations.right[inside]]
    return make_points(beam, span, x_span, side)


def _governing(solved: Solved, pts: Points, sign: float
               ) -> tuple[UnitCases, Solution, dict[str, np.ndarray], np.ndarray]:
    """Unit cases, solution, moment and shear responses at ``pts`` and the coefficients
    of the case governing ``sign`` x moment at each point (rows).  With moving loads,
    each governing placement of them becomes one more unit case (at its factor), so each
    candidate is still one fixed case."""
    beam, cs = solved.beam, solved.strength
    units, sol = solved.unit_cases, solved.solution
    r = evaluate_some(solved.mesh, units, sol, pts, ("moment", "shear"))
    if not moving_loads(beam):
        return units, sol, r, governing_coefficients(sign * r["moment"], cs)
    effect = point_effects(beam, pts, ("moment",))["moment"]
    effect = effect if sign > 0 else effect.negated()
    gov = governing_coefficients(sign * r["moment"], cs, effect)
    col = governing_columns(sign * r["moment"], cs, effect)
    rows = placements(beam, cs, col, effect)
    flat = [(i, f, placed) for i, row in enumerate(rows) for f, placed in row]
    units, sol, index = with_placed(beam, solved.mesh, units, sol, [p for _, _, p in flat])
    extra = np.zeros((pts.n, units.n_units - gov.shape[1]))
    for (i, f, _), u in zip(flat, index, strict=True):
        extra[i, u - gov.shape[1]] += f
    r = evaluate_some(solved.mesh, units, sol, pts, ("moment", "shear"))
    return units, sol, r, np.c_[gov, extra]


def segment_demands(solved: Solved, stations: Points, segs: Segments) -> SegmentDemand:
    """Demand, Cb and quarter-point moments of every segment for its candidate cases."""
    cs = solved.strength
    per_segment = []
    for s in range(segs.n):
        sign = float(segs.sign[s])
        pts = _points(solved, stations, float(segs.x0[s]), float(segs.x1[s]))
        # the cases governing at some point of the segment (each combination with the
        # arrangement and the variable actions it takes there, moving loads where they
        # stand for that point); with explicit arrangements also every one of them with
        # all its cases acting
        units, sol, r, gov = _governing(solved, pts, sign)
        coef = np.unique(gov, axis=0).T
        if isinstance(cs, ExplicitCaseSet):
            explicit = cs.explicit_cases()[0]
            coef = np.hstack([np.r_[explicit, np.zeros((units.n_units - explicit.shape[0],
                                                        explicit.shape[1]))], coef])
        m = r["moment"] @ coef          # points x cases
        v = r["shear"] @ coef
        quarter = m[list(QUARTERS)].T   # cases x 3
        order = np.argsort(pts.x, kind="stable")
        x = pts.x[order]
        m_o, v_o = m[order], v[order]
        # zeros of each case's shear between distinct neighbouring points: M is extreme
        dx = np.diff(x)
        va, vb = v_o[:-1], v_o[1:]
        cross = (dx[:, None] > 0.0) & (va * vb < 0.0)
        ii, cc = np.nonzero(cross)
        best = sign * m_o
        mu = np.max(best, axis=0)
        i_mu = np.argmax(best, axis=0)
        x_mu = x[i_mu]
        m_abs = np.max(np.abs(m_o), axis=0)
        if ii.size:
            t = va[ii, cc] / (va[ii, cc] - vb[ii, cc])
            xr = x[ii] + t * dx[ii]
            span, xs = locate(np.asarray(solved.beam.joint_x), xr, np.ones(xr.size, bool))
            rr = evaluate_some(solved.mesh, units, sol, make_points(solved.beam, span, xs),
                               ("moment",))["moment"]
            m_root = np.einsum("ij,ji->i", rr, coef[:, cc])
            for k in range(ii.size):
                c = cc[k]
                if sign * m_root[k] > mu[c]:
                    mu[c], x_mu[c] = sign * m_root[k], xr[k]
                m_abs[c] = max(m_abs[c], abs(m_root[k]))
        mu = np.maximum(mu, 0.0)
        if segs.cantilever[s]:
            cbs = np.ones(mu.size)  # F1: Cb = 1.0 for a cantilever with its tip unbraced
        else:
            cbs = cb_f1_1(m_abs, quarter[:, 0], quarter[:, 1], quarter[:, 2])
        per_segment.append((mu, cbs, m_abs, quarter, x_mu))
    # round-off where a case puts no moment of that sign on the segment is no demand
    scale = max((float(np.max(p[2], initial=0.0)) for p in per_segment), default=0.0)
    for p in per_segment:
        p[0][p[0] <= config.ZERO_RTOL * scale] = 0.0
    width = max((p[0].size for p in per_segment), default=0)

    def pad(k: int, fill: float, extra: tuple[int, ...] = ()) -> np.ndarray:
        out = np.full((segs.n, width, *extra), fill)
        for s, p in enumerate(per_segment):
            out[s, :p[k].shape[0]] = p[k]
        return out

    return SegmentDemand(pad(0, 0.0), pad(1, 1.0), pad(2, 0.0), pad(3, 0.0, (3,)),
                         pad(4, np.nan))
