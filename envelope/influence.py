"""Influence lines as exact piecewise cubics, and the worst position of moving loads.

The response at a fixed point (shear, moment, rotation, deflection, or a support
reaction) to a unit downward load at position xi is, on every stretch of the beam
between element ends and the points themselves, a cubic in xi: the equivalent nodal
loads of a point load in an element are its Hermite polynomials, and the load's own
effect inside a clamped element is cubic on each side of the point (Maxwell-Betti:
it is the deflected shape under a load at the point, common practice).  So each
influence line is found exactly from four unit solves per piece, sampled inside the
piece and fitted by its 4x4 Vandermonde system, all pieces in one multi-right-hand-side
solve.  Nothing is stepped along the beam.

A single load P placed anywhere on the chosen spans is worst where P times a cubic is
largest on a piece: an end of the piece or a root of its derivative, found in closed
form.  A train of loads at fixed offsets is a sum of shifted cubics, again a cubic
between the positions where any axle crosses a piece end, maximised the same way;
the train runs both ways.  At a point where the response jumps (shear under the
load), the one-sided limits are used: the load just beside the point.

Units are the beam's consistent units (m, kN; ft, kip), downward loads positive.
"""

from __future__ import annotations

import itertools
import sys
from typing import Any

import numpy as np

from envelope import config
from envelope.loading import POINT, UnitCases
from envelope.mesh import Mesh, build_mesh, locate
from envelope.model import Beam
from envelope.recovery import Points, evaluate_some
from envelope.solver import solve
from envelope.values import dataclass

#: Sample positions inside a piece (Chebyshev points of the first kind on [0, 1]):
#: interior, so a sample never sits on an element end or a point, and well spread, so
#: the 4x4 fit loses no digits worth speaking of.
SAMPLES = (1.0 - np.cos((2.0 * np.arange(4) + 1.0) * np.pi / 8.0)) / 2.0
_VANDERMONDE_INV = np.linalg.inv(np.vander(SAMPLES, 4, increasing=True))

QUANTITIES = ("shear", "moment", "rotation", "deflection")


@dataclass(frozen=True, slots=True)
class InfluenceLines:
    """Influence lines of responses at ``points`` for a unit downward load.

    Pieces run along the beam from x = 0 to its length without gaps; piece ``p`` spans
    global positions ``bounds[p]`` to ``bounds[p + 1]`` on span ``span[p]``.  On it the
    influence line of quantity q at point i is ``coef[q][i, p] @ (1, t, t^2, t^3)`` with
    ``t = (xi - bounds[p]) / (bounds[p + 1] - bounds[p])``.  ``reaction`` holds the same
    for the upward reaction of each joint: (n_joints, n_pieces, 4).
    """

    bounds: np.ndarray
    span: np.ndarray
    coef: dict[str, np.ndarray]
    reaction: np.ndarray

    @property
    def n_pieces(self) -> int:
        """Number of pieces."""
        return int(self.span.size)

    def values(self, quantity: str, xi: np.ndarray) -> np.ndarray:
        """(n_rows, len(xi)) influence values at load positions ``xi`` (global), the
        piece on the right taken at a piece end (the left one at the beam's end)."""
        table = self.reaction if quantity == "reaction" else self.coef[quantity]
        xi = np.asarray(xi, dtype=float)
        p = np.clip(np.searchsorted(self.bounds, xi, side="right") - 1, 0, self.n_pieces - 1)
        lo, hi = self.bounds[p], self.bounds[p + 1]
        t = (xi - lo) / (hi - lo)
        powers = np.stack([np.ones_like(t), t, t * t, t * t * t], axis=-1)  # (n_xi, 4)
        return np.einsum("ipk,pk->ip", table[:, p, :], powers)


def _piece_bounds(beam: Beam, mesh: Mesh, points: Points) -> tuple[np.ndarray, np.ndarray]:
    """Global piece ends and the span of each piece: every element end and point."""
    joint_x = np.asarray(beam.joint_x)
    bounds: list[float] = []
    span: list[int] = []
    for j, sp in enumerate(beam.spans):
        cuts = {0.0, sp.length}
        first, count = int(mesh.span_first[j]), int(mesh.span_count[j])
        cuts.update(float(e) for e in mesh.end[first:first + count])
        on = points.span == j
        cuts.update(float(x) for x in points.x_span[on] if 0.0 <= x <= sp.length)
        for a, b in itertools.pairwise(sorted(cuts)):
            if b > a:
                bounds.append(float(joint_x[j]) + a)
                span.append(j)
    bounds.append(float(joint_x[-1]))
    return np.asarray(bounds), np.asarray(span, dtype=np.int64)


def _sample_cases(beam: Beam, mesh: Mesh, bounds: np.ndarray,
                  span: np.ndarray) -> UnitCases:
    """A unit downward point load at each sample position of each piece, one unit case
    each (unit 4p + k is sample k of piece p)."""
    joint_x = np.asarray(beam.joint_x)
    lo, hi = bounds[:-1], bounds[1:]
    xi = (lo[:, None] + SAMPLES[None, :] * (hi - lo)[:, None]).ravel()
    sp = np.repeat(span, 4)
    x_span = xi - joint_x[sp]
    elem = locate(mesh, sp, x_span, np.ones(sp.shape, dtype=bool))
    order = np.argsort(elem, kind="stable")
    n = xi.size
    item_elem = elem[order]
    zeros = np.zeros(n)
    return UnitCases(
        case=np.zeros(n, dtype=np.int64),
        cell=np.zeros(n, dtype=np.int64),
        item_unit=np.arange(n, dtype=np.int64)[order],
        item_elem=item_elem,
        item_kind=np.full(n, POINT, dtype=np.int64),
        item_a=(x_span - mesh.start[elem])[order],
        item_b=(x_span - mesh.start[elem])[order],
        item_wa=zeros,
        item_wb=zeros,
        item_p=np.ones(n),
        elem_first=np.searchsorted(item_elem, np.arange(mesh.n_elements + 1)),
    )


def influence_lines(beam: Beam, points: Points,
                    quantities: tuple[str, ...] = QUANTITIES) -> InfluenceLines:
    """Exact influence lines of ``quantities`` (default all four) at ``points`` and of
    every reaction: only the quantities asked for are evaluated and fitted (the
    evaluation at every point of every sample load is most of the work)."""
    mesh = build_mesh(beam)
    bounds, span = _piece_bounds(beam, mesh, points)
    units = _sample_cases(beam, mesh, bounds, span)
    sol = solve(mesh, beam.supports, units, beam.source)
    resp = evaluate_some(mesh, units, sol, points, quantities)
    n_p = span.size

    def fit(values: np.ndarray) -> np.ndarray:
        return values.reshape(values.shape[0], n_p, 4) @ _VANDERMONDE_INV.T

    coef = {q: fit(resp[q]) for q in QUANTITIES if q in quantities}
    return InfluenceLines(bounds, span, coef, fit(sol.reaction))


@dataclass(frozen=True, slots=True)
class Worst:
    """Per row: the largest and least response of a moving load and the position of
    its reference load (global x) where each occurs; ``reversed_max`` / ``reversed_min``
    say whether the train ran right to left there."""

    max: np.ndarray
    min: np.ndarray
    x_max: np.ndarray
    x_min: np.ndarray
    reversed_max: np.ndarray
    reversed_min: np.ndarray


def _cubic_extremes(c: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Largest and least of cubics ``c[..., k] t^k`` on [0, 1] and the t of each."""
    c0, c1, c2, c3 = c[..., 0], c[..., 1], c[..., 2], c[..., 3]
    a, b = 3.0 * c3, 2.0 * c2
    disc = b * b - 4.0 * a * c1
    sq = np.sqrt(np.maximum(disc, 0.0))
    with np.errstate(divide="ignore", invalid="ignore"):
        # stable roots of a t^2 + b t + c1 (citardauq form for the second)
        q = -0.5 * (b + np.copysign(sq, b))
        r1 = np.where(a != 0.0, q / a, np.where(b != 0.0, -c1 / b, np.nan))
        r2 = np.where(q != 0.0, c1 / q, np.nan)
    r1 = np.where((disc >= 0.0) & (r1 > 0.0) & (r1 < 1.0), r1, np.nan)
    r2 = np.where((disc >= 0.0) & (r2 > 0.0) & (r2 < 1.0), r2, np.nan)
    t = np.stack([np.zeros_like(c0), np.ones_like(c0), r1, r2], axis=-1)
    v = c0[..., None] + t * (c1[..., None] + t * (c2[..., None] + t * c3[..., None]))
    hi = np.where(np.isnan(v), -np.inf, v)
    lo = np.where(np.isnan(v), np.inf, v)
    i_hi = hi.argmax(axis=-1)
    i_lo = lo.argmin(axis=-1)
    pick = np.take_along_axis
    return (pick(hi, i_hi[..., None], -1)[..., 0], pick(t, i_hi[..., None], -1)[..., 0],
            pick(lo, i_lo[..., None], -1)[..., 0], pick(t, i_lo[..., None], -1)[..., 0])


def _best(values_max: np.ndarray, t_max: np.ndarray, values_min: np.ndarray,
          t_min: np.ndarray, lo: np.ndarray, hi: np.ndarray) -> tuple[np.ndarray, ...]:
    """Reduce (rows, intervals) extremes to rows, with the global position of each."""
    i_hi = values_max.argmax(axis=1)
    i_lo = values_min.argmin(axis=1)
    rows = np.arange(values_max.shape[0])
    width = hi - lo
    return (values_max[rows, i_hi], values_min[rows, i_lo],
            lo[i_hi] + t_max[rows, i_hi] * width[i_hi],
            lo[i_lo] + t_min[rows, i_lo] * width[i_lo])


def train_worst(lines: InfluenceLines, quantity: str, loads: np.ndarray,
                offsets: np.ndarray, spans: np.ndarray | None = None,
                both_ways: bool = True) -> Worst:
    """The worst response of point loads ``loads`` (downward) at fixed ``offsets`` from
    a reference position, moving over the spans in ``spans`` (0-based; all when None),
    for every row of ``quantity`` (a point quantity or ``"reaction"``).

    A load off the chosen spans acts on nothing.  Where no position puts any load on
    the chosen spans the response is 0 (the load is absent).  One load with offset 0 is
    a single concentrated load placed anywhere.  With ``both_ways`` the train also runs
    mirrored (each offset negated), and the worse direction is kept per row.
    """
    table = lines.reaction if quantity == "reaction" else lines.coef[quantity]
    allowed = (np.ones(lines.n_pieces, dtype=bool) if spans is None
               else np.isin(lines.span, np.asarray(spans, dtype=np.int64)))
    table = np.where(allowed[None, :, None], table, 0.0)
    loads = np.asarray(loads, dtype=float)
    offsets = np.asarray(offsets, dtype=float)
    runs = [(offsets, False)]
    if both_ways and loads.size > 1:
        runs.append((-offsets, True))
    best: list[tuple[Any, ...]] = []  # (max, min, x_max, x_min, reversed)
    for off, rev in runs:
        best.append((*_run_extremes(lines, table, loads, off), rev))
    mx, mn, xmx, xmn, rev0 = best[0]
    rmx = np.full(mx.shape, rev0)
    rmn = np.full(mn.shape, rev0)
    for mx2, mn2, xmx2, xmn2, rev in best[1:]:
        up, down = mx2 > mx, mn2 < mn
        mx, xmx, rmx = np.where(up, mx2, mx), np.where(up, xmx2, xmx), np.where(up, rev, rmx)
        mn, xmn, rmn = np.where(down, mn2, mn), np.where(down, xmn2, xmn), np.where(down, rev,
                                                                                   rmn)
    # an absent load gives 0: the envelope never takes a relieving moving load
    return Worst(np.maximum(mx, 0.0), np.minimum(mn, 0.0), xmx, xmn, rmx, rmn)


def _run_extremes(lines: InfluenceLines, table: np.ndarray, loads: np.ndarray,
                  offsets: np.ndarray) -> tuple[np.ndarray, ...]:
    """Extremes over reference positions for one direction of travel."""
    b = lines.bounds
    if loads.size == 1 and offsets[0] == 0.0:
        vmax, tmax, vmin, tmin = _cubic_extremes(table * loads[0])
        return _best(vmax, tmax, vmin, tmin, b[:-1], b[1:])
    # reference positions where some load crosses a piece end
    cuts = np.unique((b[None, :] - offsets[:, None]).ravel())
    lo, hi = cuts[:-1], cuts[1:]
    keep = hi > lo
    lo, hi = lo[keep], hi[keep]
    n_rows = table.shape[0]
    if _use_kernel(n_rows * lo.size * loads.size):
        return _run_extremes_kernel(table, b, loads, offsets, lo, hi)
    mid = 0.5 * (lo + hi)
    samples = np.zeros((n_rows, lo.size, 4))
    for load, off in zip(loads, offsets, strict=True):
        at_mid = mid + off
        on = (at_mid > b[0]) & (at_mid < b[-1])
        p = np.clip(np.searchsorted(b, at_mid, side="right") - 1, 0, lines.n_pieces - 1)
        width = b[p + 1] - b[p]
        xi = lo[:, None] + SAMPLES[None, :] * (hi - lo)[:, None] + off  # (n_int, 4)
        t = (xi - b[p][:, None]) / width[:, None]
        powers = np.stack([np.ones_like(t), t, t * t, t * t * t], axis=-1)  # (n_int, 4, 4)
        part = np.einsum("ink,nsk->ins", table[:, p, :], powers)
        samples += load * np.where(on[None, :, None], part, 0.0)
    coef = samples @ _VANDERMONDE_INV.T
    vmax, tmax, vmin, tmin = _cubic_extremes(coef)
    return _best(vmax, tmax, vmin, tmin, lo, hi)


def _use_kernel(values: int) -> bool:
    """Whether a train's extremes over ``values`` (rows x intervals x loads) are found
    by the numba kernel: where numba is loaded already (a long beam's solve or an
    earlier large train loaded it), or where the numpy passes would cost more than
    loading it (:data:`envelope.config.KERNEL_MIN_TRAIN_VALUES`)."""
    return "numba" in sys.modules or values >= config.KERNEL_MIN_TRAIN_VALUES


def _run_extremes_kernel(table: np.ndarray, bounds: np.ndarray, loads: np.ndarray,
                         offsets: np.ndarray, lo: np.ndarray, hi: np.ndarray
                         ) -> tuple[np.ndarray, ...]:
    """:func:`_run_extremes` for intervals ``lo``-``hi`` by
    :func:`envelope._kernels.train_extremes`: one pass, no (rows x intervals x 4 x 4)
    temporaries; the numpy path is its tested reference."""
    from envelope import _kernels  # numba is imported only here

    out = np.empty((4, table.shape[0]))
    fit = np.vstack([SAMPLES[None, :], _VANDERMONDE_INV])
    _kernels.train_extremes(np.ascontiguousarray(table, dtype=np.float64),
                            np.ascontiguousarray(bounds, dtype=np.float64),
                            np.vstack([loads, offsets]).astype(np.float64),
                            np.vstack([lo, hi]).astype(np.float64), fit, out)
    return (out[_kernels.TRAIN_MAX], out[_kernels.TRAIN_MIN], out[_kernels.TRAIN_X_MAX],
            out[_kernels.TRAIN_X_MIN])


def influence_at(beam: Beam, span: int, x_span: float, right: bool = True,
                 samples: int = 17) -> tuple[np.ndarray, dict[str, np.ndarray]]:
    """The influence lines at one point, tabulated for a table or a figure.

    ``span`` is 0-based, ``x_span`` from its left support, ``right`` the side taken
    where the response jumps.  Returns the load positions (global x) and, per quantity
    (shear, moment, rotation, deflection and ``reaction_<joint>`` for each restrained
    joint, 1-based), the response to a unit downward load there.  Every piece is
    sampled at ``samples`` points ends included, so a jump shows as two rows at one x
    (the left piece's end first).
    """
    joint_x = np.asarray(beam.joint_x)
    points = Points(np.array([span], dtype=np.int64), np.array([float(x_span)]),
                    np.array([right]), np.array([joint_x[span] + x_span]))
    lines = influence_lines(beam, points)
    t = np.linspace(0.0, 1.0, samples)
    powers = np.stack([np.ones_like(t), t, t * t, t * t * t], axis=-1)  # (samples, 4)
    lo, hi = lines.bounds[:-1], lines.bounds[1:]
    xi = (lo[:, None] + t[None, :] * (hi - lo)[:, None]).ravel()
    out = {q: (lines.coef[q][0] @ powers.T).ravel() for q in QUANTITIES}
    for j, sup in enumerate(beam.supports):
        if sup.restrains_vertical:
            out[f"reaction_{j + 1}"] = (lines.reaction[j] @ powers.T).ravel()
    return xi, out
