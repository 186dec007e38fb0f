"""Design actions per span for member sizing (design.parquet), exact.

The largest sagging moment and the largest service deflection of each span are
not limited to stations: every local maximum of the station envelope is
refined by golden-section search on the envelope itself, evaluated exactly at
any point, to :data:`envelope.config.GOLDEN_XTOL` of the span length, then moved
to the root of the governing case's slope (shear for moment, rotation for
deflection), exact to round-off.  Hogging
moments are taken at the support centrelines and at the support faces (half
the support width from the centreline; the centreline where no width is given).
"""

from __future__ import annotations

import math

import numpy as np

from envelope import config
from envelope.analysis import QUANTITY_SET, Solved, envelope_at
from envelope.enveloper import Extremes, governing_coefficients
from envelope.recovery import Points, evaluate_some, make_points

#: The derivative of each quantity along the beam: dM/dx = V, d(deflection)/dx = rotation.
_SLOPE = {"moment": "shear", "deflection": "rotation"}

_INV_PHI = (math.sqrt(5.0) - 1.0) / 2.0


def refine_max(solved: Solved, pts: Points, env_max: np.ndarray, quantity: str,
               case_set: str | None = None) -> tuple[np.ndarray, np.ndarray]:
    """Largest value of the envelope maximum of ``quantity`` in each span, and its x_span.

    ``env_max`` is the envelope maximum at the stations ``pts``.  Each local maximum
    among the stations is bracketed by its neighbouring distinct positions and refined;
    the result is never below the best station."""
    n_spans = solved.beam.n_spans
    best = np.full(n_spans, -np.inf)
    best_x = np.zeros(n_spans)
    for j in range(n_spans):
        rows = np.flatnonzero(pts.span == j)
        k = int(rows[np.argmax(env_max[rows])])
        best[j], best_x[j] = env_max[k], pts.x_span[k]

    lo, hi, owner = [], [], []
    for j in range(n_spans):
        rows = np.flatnonzero(pts.span == j)
        xs, vals = pts.x_span[rows], env_max[rows]
        ux = np.unique(xs)
        uv = np.array([vals[xs == x].max() for x in ux])
        for i in range(ux.size):
            left = uv[i - 1] if i > 0 else -np.inf
            right = uv[i + 1] if i + 1 < ux.size else -np.inf
            if uv[i] >= left and uv[i] >= right:
                lo.append(ux[max(i - 1, 0)])
                hi.append(ux[min(i + 1, ux.size - 1)])
                owner.append(j)
    if not owner:
        return best, best_x
    a, b = np.array(lo), np.array(hi)
    span = np.array(owner, dtype=np.int64)
    length = np.array([solved.beam.spans[j].length for j in owner])

    def f(x: np.ndarray) -> np.ndarray:
        owners = span if x.size == span.size else np.r_[span, span]
        ext = envelope_at(solved, make_points(solved.beam, owners, x), quantity, case_set,
                          labels=False)
        assert ext is not None
        return ext.max

    c = b - _INV_PHI * (b - a)
    d = a + _INV_PHI * (b - a)
    both = f(np.r_[c, d])
    fc, fd = both[: c.size], both[c.size:]
    for _ in range(200):  # golden section: one new point per bracket per step
        if np.all(b - a <= config.GOLDEN_XTOL * length):
            break
        left = fc >= fd  # the maximum is in [a, d]: d becomes the new c
        b = np.where(left, d, b)
        a = np.where(left, a, c)
        new_x = np.where(left, b - _INV_PHI * (b - a), a + _INV_PHI * (b - a))
        f_new = f(new_x)
        c, d = np.where(left, new_x, d), np.where(left, c, new_x)
        fc, fd = np.where(left, f_new, fd), np.where(left, fc, f_new)
    xm = np.where(fc >= fd, c, d)
    vm = np.maximum(fc, fd)
    xm, vm = _polish(solved, span, length, xm, vm, quantity, case_set)
    for i, j in enumerate(owner):
        if vm[i] > best[j]:
            best[j], best_x[j] = vm[i], xm[i]
    return best, best_x


def _polish(solved: Solved, span: np.ndarray, length: np.ndarray, x: np.ndarray,
            value: np.ndarray, quantity: str, case_set: str | None
            ) -> tuple[np.ndarray, np.ndarray]:
    """Move each maximum to the root of the governing case's slope (shear for moment,
    rotation for deflection) by regula falsi, where the slope changes sign within
    :data:`envelope.config.ROOT_BRACKET` of the span length; elsewhere (a kink under a
    point load, an end of the span) the golden-section position stands."""
    beam = solved.beam
    cs = solved.case_set(case_set or QUANTITY_SET[quantity])
    h = config.ROOT_BRACKET * length
    lo = np.clip(x - h, 0.0, length)
    hi = np.clip(x + h, 0.0, length)
    owners = np.r_[span, span]

    def responses(xs: np.ndarray, names: tuple[str, ...]) -> dict[str, np.ndarray]:
        pts = make_points(beam, owners[: xs.size] if xs.size == span.size else owners, xs)
        return evaluate_some(solved.mesh, solved.units, solved.solution, pts, names)

    coef = governing_coefficients(responses(x, (quantity,))[quantity], cs)
    slope_name = _SLOPE[quantity]
    ends = responses(np.r_[lo, hi], (slope_name,))[slope_name]
    s_lo = np.einsum("iu,iu->i", ends[: x.size], coef)
    s_hi = np.einsum("iu,iu->i", ends[x.size:], coef)
    ok = (s_lo > 0.0) & (s_hi < 0.0)
    if not ok.any():
        return x, value
    # Illinois regula falsi: superlinear, and the root stays bracketed
    f_lo, f_hi = s_lo, s_hi
    root = x.copy()
    last = np.zeros(x.size)
    tol = 4.0 * np.finfo(float).eps * np.maximum(length, 1.0)
    for _ in range(60):
        denom = np.where(ok, f_hi - f_lo, -1.0)
        c = np.where(ok, (lo * f_hi - hi * f_lo) / denom, x)
        c = np.clip(c, lo, hi)
        f_c = np.einsum("iu,iu->i", responses(c, (slope_name,))[slope_name], coef)
        done = np.abs(c - root) <= tol
        root = c
        if np.all(done | ~ok):
            break
        move_lo = f_c > 0.0
        lo, f_lo = np.where(move_lo, c, lo), np.where(move_lo, f_c, f_lo)
        hi, f_hi = np.where(move_lo, hi, c), np.where(move_lo, f_hi, f_c)
        # Illinois: halve the stale end's value when the same end moves twice
        f_hi = np.where(move_lo & (last > 0), 0.5 * f_hi, f_hi)
        f_lo = np.where(~move_lo & (last < 0), 0.5 * f_lo, f_lo)
        last = np.where(move_lo, 1.0, -1.0)
    ext = envelope_at(solved, make_points(beam, span, root), quantity, case_set, labels=False)
    assert ext is not None
    better = ok & (ext.max >= value - config.ZERO_RTOL * np.abs(value))
    return np.where(better, root, x), np.where(better, np.maximum(ext.max, value), value)


def _at_span_ends(pts: Points, n_spans: int) -> tuple[np.ndarray, np.ndarray]:
    """Station rows of each span's left end (x_span = 0) and right end (x_span = L)."""
    left = np.zeros(n_spans, dtype=np.int64)
    right = np.zeros(n_spans, dtype=np.int64)
    for j in range(n_spans):
        rows = np.flatnonzero(pts.span == j)
        left[j], right[j] = rows[0], rows[-1]
    return left, right


def design_actions(solved: Solved, pts: Points,
                   env: dict[str, Extremes | None]) -> dict[str, np.ndarray]:
    """Per-span design actions in consistent units (the design.parquet columns)."""
    beam = solved.beam
    n = beam.n_spans
    length = np.array([s.length for s in beam.spans])
    nan = np.full(n, np.nan)
    left, right = _at_span_ends(pts, n)
    out: dict[str, np.ndarray] = {"span": np.arange(1, n + 1), "length": length}

    moment, shear = env["moment"], env["shear"]
    if moment is not None:
        pos, pos_x = refine_max(solved, pts, moment.max, "moment")
        # round-off at a free end is not a sagging moment
        zero = config.ZERO_RTOL * max(float(np.abs(moment.max).max()),
                                      float(np.abs(moment.min).max()))
        out["moment_pos"] = np.where(pos > zero, pos, 0.0)
        out["moment_pos_x"] = np.where(pos > zero, pos_x, np.nan)
        out["moment_neg_left"] = np.minimum(moment.min[left], 0.0)
        out["moment_neg_right"] = np.minimum(moment.min[right], 0.0)
        half_l = np.array([beam.supports[j].width / 2 for j in range(n)])
        half_r = np.array([beam.supports[j + 1].width / 2 for j in range(n)])
        faces = make_points(beam, np.r_[np.arange(n), np.arange(n)],
                            np.r_[np.minimum(half_l, length), np.maximum(length - half_r, 0)],
                            np.r_[np.ones(n, bool), np.zeros(n, bool)])
        face = envelope_at(solved, faces, "moment", labels=False)
        assert face is not None
        out["moment_neg_left_face"] = np.minimum(face.min[:n], 0.0)
        out["moment_neg_right_face"] = np.minimum(face.min[n:], 0.0)
    else:
        for key in ("moment_pos", "moment_pos_x", "moment_neg_left", "moment_neg_right",
                    "moment_neg_left_face", "moment_neg_right_face"):
            out[key] = nan
    if shear is not None:
        mag = np.maximum(np.abs(shear.max), np.abs(shear.min))
        out["shear_left"], out["shear_right"] = mag[left], mag[right]
    else:
        out["shear_left"] = out["shear_right"] = nan

    deflection = env["deflection"]
    if deflection is not None:
        dmax, _ = refine_max(solved, pts, deflection.max, "deflection")
        out["deflection_max"] = np.maximum(dmax, 0.0)
    else:
        out["deflection_max"] = nan
    live = envelope_at(solved, pts, "deflection", "live", labels=False)
    if live is not None:
        lmax, _ = refine_max(solved, pts, live.max, "deflection", "live")
        out["deflection_live"] = np.maximum(lmax, 0.0)
    else:
        out["deflection_live"] = np.zeros(n)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = length / out["deflection_max"]
    out["span_over_deflection"] = np.where(out["deflection_max"] > 0.0, ratio, np.nan)
    return out
