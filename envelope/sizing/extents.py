"""Extents of the hogging and sagging regions of each span, from the strength envelope,
for detailing the cut-off of top and bottom bars.

Per span (x_span measured from the span's left support centreline, consistent length):

- ``hogging_left_extent``: from the left support to the last point of the hogging region
  that starts there (where the envelope minimum rises to zero); 0 where there is no
  hogging next to the support, the span length where the envelope can hog over the whole
  span (a zero moment at a pin or a free tip counts as part of the region beside it);
- ``hogging_right_extent``: the same measured back from the right support;
- ``sagging_start``, ``sagging_end``: the first and last x_span where the envelope
  maximum is sagging (NaN where the span never sags).

Crossings are bracketed on a grid of the stations plus ``samples`` equal steps, then
narrowed together on the envelope itself (evaluated exactly at any point) to
:data:`envelope.config.DESIGN_XTOL` of the span length
(:func:`envelope.sizing.cutoffs.narrow`: a root search on how far the moment goes
past the round-off band, a handful of evaluations where bisection took some thirty).  Moments below
:data:`envelope.config.ZERO_RTOL` of the largest are round-off, not hogging or sagging.
These are the points of zero moment only: bar extensions beyond them (development
length, d or 12 db) are the detailer's.
"""

from __future__ import annotations

import numpy as np

from envelope import config
from envelope.analysis import Analysis
from envelope.recovery import make_points
from envelope.sizing import cutoffs
from envelope.solved import envelope_at

EXTENT_KEYS = ("hogging_left_extent", "hogging_right_extent", "sagging_start", "sagging_end")


def _envelope(analysis: Analysis, span: np.ndarray, x: np.ndarray,
              length: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    right = x < length  # the left-side limit at the span's right end
    ext = envelope_at(analysis.solved, make_points(analysis.beam, span, x, right), "moment",
                      labels=False)
    assert ext is not None
    return ext.max, ext.min


def extents(analysis: Analysis, samples: int = config.EXTENT_SAMPLES) -> dict[str, np.ndarray]:
    """Hogging and sagging extents per span (see the module docstring); consistent
    length units; all NaN where there is no strength set."""
    beam = analysis.beam
    n = beam.n_spans
    out = {k: np.full(n, np.nan) for k in EXTENT_KEYS}
    env = analysis.station_envelopes["moment"]
    if env is None:
        return out
    tol = config.ZERO_RTOL * max(float(np.abs(env.max).max()), float(np.abs(env.min).max()),
                                 np.finfo(float).tiny)
    lengths = beam.geometry.span_length
    pts = analysis.stations
    grids = []
    for j, L in enumerate(lengths):
        grids.append(np.unique(np.r_[np.linspace(0.0, L, samples + 1),
                                     pts.x_span[pts.span == j]]))
    span_all = np.concatenate([np.full(g.size, j) for j, g in enumerate(grids)])
    x_all = np.concatenate(grids)
    mmax, mmin = _envelope(analysis, span_all, x_all, lengths[span_all])

    # brackets where the predicate ("hogging" or "sagging") changes between lo and hi
    brackets: list[tuple[int, str, float, float, bool]] = []
    for j, L in enumerate(lengths):
        rows = span_all == j
        x, neg, pos = x_all[rows], mmin[rows] < -tol, mmax[rows] > tol
        # a support moment of round-off zero (a pin, a free tip) belongs to the region
        # next to it, so that a region reaching the end starts exactly there
        for v, flags in ((mmin[rows], neg), (mmax[rows], pos)):
            for end, inner in ((0, 1), (-1, -2)):
                if abs(v[end]) <= tol:
                    flags[end] = flags[inner]
        if not neg[0]:
            out["hogging_left_extent"][j] = 0.0
        elif neg.all():
            out["hogging_left_extent"][j] = L
        else:
            k = int(np.argmin(neg))
            brackets.append((j, "hogging_left_extent", x[k - 1], x[k], True))
        if not neg[-1]:
            out["hogging_right_extent"][j] = 0.0
        elif neg.all():
            out["hogging_right_extent"][j] = L
        else:
            k = int(np.flatnonzero(~neg)[-1])
            brackets.append((j, "hogging_right_extent", x[k], x[k + 1], True))
        if pos.any():
            first, last = np.flatnonzero(pos)[[0, -1]]
            if first == 0:
                out["sagging_start"][j] = 0.0
            else:
                brackets.append((j, "sagging_start", x[first - 1], x[first], False))
            if last == x.size - 1:
                out["sagging_end"][j] = L
            else:
                brackets.append((j, "sagging_end", x[last], x[last + 1], False))
    if not brackets:
        return out

    span = np.array([b[0] for b in brackets])
    lo = np.array([b[2] for b in brackets])
    hi = np.array([b[3] for b in brackets])
    is_neg = np.array([b[4] for b in brackets])
    L = lengths[span]

    def excess(x: np.ndarray, copies: int = 1) -> np.ndarray:
        """How far the moment of each bracket's sign goes past the round-off band at
        ``x`` (one point per bracket, or ``copies`` in turn): positive exactly where the
        point is hogging (sagging) for a hogging (sagging) bracket."""
        neg = np.tile(is_neg, copies)
        vmax, vmin = _envelope(analysis, np.tile(span, copies), x, np.tile(L, copies))
        return np.where(neg, -vmin - tol, vmax - tol)

    # the end inside the region, as the grid found it (a hogging region's end is on its
    # left for the left support's region, a sagging region's last point on its left)
    inner_lo = np.array([b[1] in ("hogging_left_extent", "sagging_end") for b in brackets])
    at = excess(np.r_[lo, hi], 2)
    g_lo, g_hi = at[: lo.size], at[lo.size:]
    g_in, g_out = np.where(inner_lo, g_lo, g_hi), np.where(inner_lo, g_hi, g_lo)
    # a value within round-off of the band's edge keeps the side the grid gave it
    g_in, g_out = np.maximum(g_in, np.finfo(float).tiny), np.minimum(g_out, 0.0)
    crossing = cutoffs.narrow(np.where(inner_lo, lo, hi), np.where(inner_lo, hi, lo), g_in,
                              g_out, excess, config.DESIGN_XTOL * L)
    for i, (j, key, *_) in enumerate(brackets):
        out[key][j] = lengths[j] - crossing[i] if key == "hogging_right_extent" else crossing[i]
    return out
