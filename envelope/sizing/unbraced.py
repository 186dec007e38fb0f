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

Candidate cases: every case of the strength set with each of its on/off parts (the
whole variable cases that act only where unfavourable and, for the superposition methods
``exhaustive`` and ``segments``, each patterned case on each cell) acting or not, every
subset of them, where a combination has at most :data:`ENUMERATE_MAX_PARTS` such parts;
and always the case that governs the envelope of either sign at each of the segment's
points (the combination with its own subset of loaded cells).  Each candidate is checked
with its own Cb, so a case with a smaller moment but a flatter diagram can govern: a
pattern that leaves the segment's hogging below its peak but makes the span sag, so that
Mmax of Eq. F1-1 is large and Cb low, is no case of the hogging envelope, and is found
only by listing it.  A combination with more parts than the limit (a long beam under
``segments``) is checked on the governing cases of either sign only.

Of the candidates only those that no other one dominates are kept (a larger or equal
demand with a smaller or equal Cb governs for every section: Mn of F2 does not fall as
Cb rises), so the list stays short however many are listed.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from envelope import config
from envelope.enveloper import (
    CaseSet,
    SuperposedCaseSet,
    governing_coefficients,
    governing_columns,
)
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
#: Largest number of on/off parts of one combination whose every subset is a candidate
#: case (2^12 = 4096 cases of that combination); beyond it, the governing cases only.
ENUMERATE_MAX_PARTS = 12


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
    of the case governing ``sign`` x moment at each point (the first ``pts.n`` rows) and
    of the case governing the opposite sign there (the next ``pts.n`` rows).  With moving
    loads, each governing placement of them becomes one more unit case (at its factor),
    so each candidate is still one fixed case."""
    beam, cs = solved.beam, solved.strength
    units, sol = solved.unit_cases, solved.solution
    r = evaluate_some(solved.mesh, units, sol, pts, ("moment", "shear"))
    if not moving_loads(beam):
        return units, sol, r, np.vstack([governing_coefficients(s * r["moment"], cs)
                                         for s in (sign, -sign)])
    effect = point_effects(beam, pts, ("moment",))["moment"]
    govs, flat = [], []
    for s in (sign, -sign):
        eff = effect if s > 0 else effect.negated()
        govs.append(governing_coefficients(s * r["moment"], cs, eff))
        col = governing_columns(s * r["moment"], cs, eff)
        rows = placements(beam, cs, col, eff)
        flat.append([(i, f, placed) for i, row in enumerate(rows) for f, placed in row])
    n0 = units.n_units
    every = [p for part in flat for _, _, p in part]
    units, sol, index = with_placed(beam, solved.mesh, units, sol, every)
    out, at = [], 0
    for gov, part in zip(govs, flat, strict=True):
        extra = np.zeros((pts.n, units.n_units - n0))
        for (i, f, _), u in zip(part, index[at:at + len(part)], strict=True):
            extra[i, u - n0] += f
        at += len(part)
        out.append(np.c_[gov, extra])
    r = evaluate_some(solved.mesh, units, sol, pts, ("moment", "shear"))
    return units, sol, r, np.vstack(out)


def _enumerated(cs: CaseSet) -> np.ndarray:
    """Coefficients (units x cases) of each column of ``cs`` with every subset of its
    on/off parts acting: its whole-case groups and, in a superposed set, each patterned
    unit case (one case on one cell), the dead load of a cell left without patterned load
    at ``favourable_dead`` times its factor.  Columns with more than
    :data:`ENUMERATE_MAX_PARTS` parts are left out (the governing cases stand for them)."""
    n_u = cs.fixed.shape[0]
    sup = cs if isinstance(cs, SuperposedCaseSet) else None
    out = [np.zeros((n_u, 0))]
    for k in range(cs.n_columns):
        grp = np.flatnonzero(cs.group_col == k)
        pat = (np.zeros(0, dtype=np.int64) if sup is None
               else np.flatnonzero(sup.patterned[:, k] != 0.0))
        n = pat.size + grp.size
        if n > ENUMERATE_MAX_PARTS:
            continue
        on = ((np.arange(2**n)[:, None] >> np.arange(n)[None, :]) & 1).astype(bool)
        part = np.zeros((n_u, n))
        part[:, pat.size:] = cs.groups[:, cs.group_src[grp]]
        if sup is not None:
            part[pat, np.arange(pat.size)] = sup.patterned[pat, k]
        coef = cs.fixed[:, k][:, None] + part @ on.T
        if sup is not None and sup.dead_var[:, k].any():
            cell_of = np.zeros((pat.size, len(cs.cell_labels)))
            cell_of[np.arange(pat.size), cs.unit_cell[pat]] = 1.0
            loaded = (on[:, :pat.size].astype(float) @ cell_of) > 0.0   # cases x cells
            coef += sup.dead_var[:, k][:, None] * np.where(
                loaded[:, cs.unit_cell], 1.0, sup.favourable_dead).T
        out.append(coef)
    return np.hstack(out)


def _undominated(mu: np.ndarray, cb: np.ndarray) -> np.ndarray:
    """Indices of the candidates that no other dominates (none has a larger or equal
    demand with a smaller Cb, or a larger demand with an equal Cb), by decreasing demand:
    Mn of AISC 360-22 F2 does not fall as Cb rises (F2-1 to F2-4), so a dominated
    candidate never governs any section."""
    order = np.lexsort((cb, -mu))
    cb_o = cb[order]
    before = np.r_[np.inf, np.minimum.accumulate(cb_o)[:-1]]
    return order[cb_o < before]


def segment_demands(solved: Solved, stations: Points, segs: Segments) -> SegmentDemand:
    """Demand, Cb and quarter-point moments of every segment for its candidate cases."""
    cs = solved.strength
    per_segment = []
    listed_once: np.ndarray | None = None
    scale = 0.0
    for s in range(segs.n):
        sign = float(segs.sign[s])
        pts = _points(solved, stations, float(segs.x0[s]), float(segs.x1[s]))
        # the cases governing either sign at some point of the segment (each combination
        # with the arrangement and the variable actions it takes there, moving loads
        # where they stand for that point), every case with all its parts acting, and
        # every subset of each combination's on/off parts (the listed cases are the same
        # for every segment: made once)
        units, sol, r, gov = _governing(solved, pts, sign)
        if listed_once is None:
            listed_once = np.hstack([cs.explicit_cases()[0], _enumerated(cs)])
        listed = np.r_[listed_once, np.zeros((units.n_units - listed_once.shape[0],
                                              listed_once.shape[1]))]
        coef = np.hstack([listed, np.unique(gov, axis=0).T])
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
            np.maximum.at(m_abs, cc, np.abs(m_root))
            # each case's largest root (the first of equal ones), where it beats the points
            val = sign * m_root
            by_case = np.lexsort((-val, cc))
            first = by_case[np.r_[True, cc[by_case][1:] != cc[by_case][:-1]]]
            up = first[val[first] > mu[cc[first]]]
            mu[cc[up]], x_mu[cc[up]] = val[up], xr[up]
        mu = np.maximum(mu, 0.0)
        if segs.cantilever[s]:
            cbs = np.ones(mu.size)  # F1: Cb = 1.0 for a cantilever with its tip unbraced
        else:
            cbs = cb_f1_1(m_abs, quarter[:, 0], quarter[:, 1], quarter[:, 2])
        scale = max(scale, float(np.max(m_abs, initial=0.0)))
        keep = _undominated(mu, cbs)
        per_segment.append((mu[keep], cbs[keep], m_abs[keep], quarter[keep], x_mu[keep]))
    # round-off where a case puts no moment of that sign on the segment is no demand
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
