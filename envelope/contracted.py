"""One combined load case per row, contracted once with the solution on one span: the
start state of each element of the span and the case's own load items there, so that
its response at a point of the span costs a handful of items (those of the span with a
non-zero factor), not every unit case.

The design search (:mod:`envelope.actions`) steps along the slope of the case governing
each bracket: a row here is one bracket's governing case on the bracket's span.  The
values are those of :func:`envelope.recovery.evaluate_combined` (the reference, kept and
tested against this) to round-off: the same closed-form load terms
(:mod:`envelope.loadterms`), summed over the items of the point's element.  Contracting
on the span alone keeps the work linear in the unit cases per row, so that a long beam's
search grows as its stations times its unit cases, no faster.

Units and signs are those of :mod:`envelope.recovery`: shear, moment (sagging
positive), rotation (clockwise positive) and deflection (downward positive) in
consistent units.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from envelope.loading import DISTRIBUTED, POINT, UnitCases
from envelope.loadterms import GAUSS_W, GAUSS_X
from envelope.mesh import Mesh
from envelope.solver import Solution

#: the Gauss points' offsets along a distributed item, (1 + xi) of each point
_GAUSS_1X = 1.0 + GAUSS_X


#: sums along axes without the Python layer of ``ndarray.sum`` (the same reduction: a
#: step of the search makes a dozen of them on small arrays)
_sum = np.add.reduce


#: the element arrays of a row, in the order of the first axis of ``SpanCases.elem``
_ELEM = ("start", "length", "EI", "V0", "M0", "theta1", "v1")


@dataclass(frozen=True, slots=True)
class SpanCases:
    """Per row (one combined case on one span), padded to the longest row.

    ``elem`` (7 x rows x elements of the longest span): per element of the row's span
    its span-local start (+inf beyond the span's last element), length, EI and the
    case's start states V0, M0, theta1, v1 (:data:`_ELEM`).  The case's distributed
    items on the span (``d_*``, rows x items x 1, ready for the Gauss points): element
    (its index in the row; -1 for padding), element-local start and end, intensity at
    the start, slope of the intensity, and the case's factor (0 for padding).  Its
    concentrated items (``c_*``, rows x items): element, element-local position, force
    or moment times the case's factor, and whether it is a force (1.0) or a moment
    (0.0)."""

    elem: np.ndarray
    d_elem: np.ndarray
    d_a: np.ndarray
    d_b: np.ndarray
    d_wa: np.ndarray
    d_slope: np.ndarray
    d_w: np.ndarray
    c_elem: np.ndarray
    c_a: np.ndarray
    c_p: np.ndarray
    c_force: np.ndarray
    c_w: np.ndarray

    def take(self, rows: np.ndarray) -> SpanCases:
        """The rows ``rows`` (in that order, repeats allowed)."""
        return SpanCases(self.elem[:, rows], *(getattr(self, name)[rows]
                                               for name in self.__slots__[1:]))


def _padded(row: np.ndarray, n_rows: int, index: np.ndarray, values: np.ndarray
            ) -> tuple[np.ndarray, np.ndarray]:
    """Items listed row by row (``row`` non-decreasing) as (n_rows x longest row)
    arrays, each row's items in their order: their ``index`` (-1 after them) and
    ``values`` (items x k; 0 after them, n_rows x longest row x k)."""
    rank = np.arange(row.size) - np.searchsorted(row, row)
    width = int(rank.max(initial=-1)) + 1
    where = np.full((n_rows, width), -1, dtype=index.dtype)
    where[row, rank] = index
    full = np.zeros((n_rows, width, values.shape[1]))
    full[row, rank] = values
    return where, full


def item_values(units: UnitCases) -> np.ndarray:
    """Per load item (items x 5): its start and end (element-local), intensity at the
    start, slope of the intensity (the load terms' quotient) and force or moment of a
    point item: what a contraction gathers of each item."""
    a, b = units.item_a, units.item_b
    width = b - a
    slope = np.divide(units.item_wb - units.item_wa, width, out=np.zeros_like(width),
                      where=width > 0.0)
    return np.stack([a, b, units.item_wa, slope, units.item_p], axis=1)


def contract(mesh: Mesh, units: UnitCases, solutions: list[tuple[Solution, np.ndarray]],
             span: np.ndarray, coef: np.ndarray, values: np.ndarray | None = None
             ) -> SpanCases:
    """The cases ``coef`` (rows x unit cases) on the spans ``span`` (one per row), each
    row's states from the solution of its group (``solutions``: each solution and the
    rows that read it; every row in one group).  ``values``: :func:`item_values` of
    ``units``, where already made."""
    n = span.size
    n_elem = int(mesh.span_count.max(initial=1))
    first = mesh.span_first[span]
    count = mesh.span_count[span]
    k = np.arange(n_elem)
    elem = first[:, None] + np.minimum(k, count[:, None] - 1)
    start = np.where(k < count[:, None], mesh.start[elem], np.inf)
    states = np.empty((4, n, n_elem))
    for sol, rows in solutions:
        packed = sol.state if sol.state is not None and all(
            getattr(sol, name).base is sol.state for name in _ELEM[3:]) else np.stack(
            [getattr(sol, name) for name in _ELEM[3:]])
        c = coef[rows]
        for j in range(n_elem):
            states[:, rows, j] = np.einsum("sru,ru->sr", packed[:, elem[rows, j]], c)

    # the load items of each row's span, then only those the case loads
    lo = units.elem_first[first]
    many = units.elem_first[first + count] - lo
    row = np.repeat(np.arange(n), many)
    item = np.repeat(lo - np.cumsum(many) + many, many) + np.arange(int(many.sum()))
    w = coef[row, units.item_unit[item]]
    keep = w != 0.0
    row, item, w = row[keep], item[keep], w[keep]
    at = units.item_elem[item] - first[row]
    v = (item_values(units) if values is None else values)[item]
    kind = units.item_kind[item]
    dist = kind == DISTRIBUTED
    d_elem, d = _padded(row[dist], n, at[dist], np.column_stack([v[dist][:, :4], w[dist]]))
    conc = ~dist
    c_elem, c = _padded(row[conc], n, at[conc], np.column_stack(
        [v[conc][:, [0, 4]], (kind[conc] == POINT).astype(float), w[conc]]))
    elem_arrays = np.concatenate([np.stack([start, mesh.length[elem], mesh.EI[elem]]),
                                  states])
    return SpanCases(elem_arrays, d_elem[..., None], d[..., 0:1], d[..., 1:2], d[..., 2:3],
                     d[..., 3:4], d[..., 4:5], c_elem, c[..., 0], c[..., 1], c[..., 2],
                     c[..., 3])


def response(sc: SpanCases, x_span: np.ndarray, deflection: np.ndarray, slope: bool,
             right: np.ndarray | None = None) -> np.ndarray:
    """Each row's case at its own point ``x_span`` (the right-side limit unless
    ``right`` says otherwise): per row the moment, or the deflection where
    ``deflection``; with ``slope`` their slopes instead (shear, rotation).  NaN at a
    NaN position.  Each term is the same product as in :mod:`envelope.loadterms` and
    :mod:`envelope.recovery`."""
    n = x_span.size
    xc = x_span[:, None]
    n_elem = sc.elem.shape[2]
    if n_elem == 1:
        start, length, EI, V0, M0, theta1, v1 = sc.elem[:, :, 0]
        d_w, c_w = sc.d_w, sc.c_w
    else:
        # the element holding the point: the right-side limit takes the element starting
        # at a section change, the left-side limit the element ending there
        later = xc >= sc.elem[0, :, 1:] if right is None else np.where(
            right[:, None], xc >= sc.elem[0, :, 1:], xc > sc.elem[0, :, 1:])
        e = later.sum(axis=1)
        start, length, EI, V0, M0, theta1, v1 = sc.elem.reshape(7, -1)[
            :, np.arange(n) * n_elem + e]
        d_w = np.where(sc.d_elem == e[:, None, None], sc.d_w, 0.0)
        c_w = np.where(sc.c_elem == e[:, None], sc.c_w, 0.0)
    s = np.minimum(np.maximum(x_span - start, 0.0), length)
    sd = s[:, None]
    ei = EI[:, None]

    # distributed items: the three Gauss points of each (rows x items x points)
    sg = sd[..., None]
    half = 0.5 * (np.minimum(np.maximum(sg, sc.d_a), sc.d_b) - sc.d_a)
    t = sc.d_a + half * _GAUSS_1X
    wq = GAUSS_W * half * (sc.d_wa + sc.d_slope * (t - sc.d_a))
    r = sg - t
    # concentrated items: the Heaviside step with the side of the limit
    dc = sd - sc.c_a
    h = dc >= 0.0 if right is None else (dc > 0.0) | ((dc == 0.0) & right[:, None])
    dc = dc * h
    pc = sc.c_p * h
    pcd = pc * dc
    if slope:
        q = _sum(d_w * _sum(wq, axis=2, keepdims=True), axis=(1, 2))
        shear = V0 - (q + _sum(c_w * (pc * sc.c_force), axis=1))
        wqr = wq * r
        m1 = _sum(d_w * (_sum(wqr * r / 2.0, axis=2, keepdims=True) / ei[..., None]),
                  axis=(1, 2))
        c1 = pcd * (0.5 * sc.c_force * dc + (sc.c_force - 1.0))
        rotation = theta1 + (M0 * s + V0 * s**2 / 2.0) / EI - (
            m1 + _sum(c_w * (c1 / ei), axis=1))
        return np.where(deflection, -rotation, shear)
    wqr = wq * r
    m = _sum(d_w * _sum(wqr, axis=2, keepdims=True), axis=(1, 2))
    c0 = np.where(sc.c_force > 0.0, pcd, -pc)
    moment = M0 + V0 * s - (m + _sum(c_w * c0, axis=1))
    m2 = _sum(d_w * (_sum(wqr * r * r / 6.0, axis=2, keepdims=True) / ei[..., None]),
              axis=(1, 2))
    c2 = np.where(sc.c_force > 0.0, pcd * dc * dc / 6.0, -pcd * dc / 2.0)
    v = v1 + theta1 * s + (M0 * s**2 / 2.0 + V0 * s**3 / 6.0) / EI - (
        m2 + _sum(c_w * (c2 / ei), axis=1))
    return np.where(deflection, -v, moment)


def span_breaks(mesh: Mesh, units: UnitCases, n_spans: int) -> np.ndarray:
    """Per span (spans x breaks, padded with +inf), where some unit case's response is
    not smooth, as span positions: the starts of the span's elements after its first,
    the ends of distributed items and the positions of point items (added as
    :func:`envelope.recovery.stations` adds them).  Between breaks every response and
    its slope are each one polynomial in the position (of degree at most five and four:
    the load terms of linearly varying loads)."""
    later = np.flatnonzero(mesh.start > 0.0)  # elements not first in their span
    dist = units.item_kind == DISTRIBUTED
    start = mesh.start[units.item_elem]
    span = np.concatenate([mesh.span[later], mesh.span[units.item_elem],
                           mesh.span[units.item_elem[dist]]])
    at = np.concatenate([mesh.start[later], units.item_a + start,
                         units.item_b[dist] + start[dist]])
    order = np.lexsort((at, span))
    span, at = span[order], at[order]
    rank = np.arange(span.size) - np.searchsorted(span, span)
    out = np.full((n_spans, int(rank.max(initial=-1)) + 1), np.inf)
    out[span, rank] = at
    return out


def breaks_inside(breaks: np.ndarray, a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Per row, whether one of its ``breaks`` (rows x breaks, :func:`span_breaks` of the
    row's span) lies strictly inside (a, b)."""
    return np.any((breaks > a[:, None]) & (breaks < b[:, None]), axis=1)
