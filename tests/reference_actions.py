"""The design-action search as it was before the combined search (three separate
searches, every step a full evaluation of every unit case): the slow reference that
tests/test_design_search.py compares envelope.actions with.  Kept verbatim apart from
this docstring; not used by the program.
"""

from __future__ import annotations

import numpy as np

from envelope import config
from envelope.enveloper import Extremes, governing_coefficients
from envelope.recovery import Points, evaluate_some, make_points
from envelope.search import golden_max, illinois_root
from envelope.solved import QUANTITY_SET, Solved, envelope_at

#: The derivative of each quantity along the beam: dM/dx = V, d(deflection)/dx = rotation.
_SLOPE = {"moment": "shear", "deflection": "rotation"}


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

    lo, hi, at, owner = [], [], [], []
    for j in range(n_spans):
        rows = np.flatnonzero(pts.span == j)
        xs, vals = pts.x_span[rows], env_max[rows]
        ux = np.sort(xs)  # np.unique without its numpy.ma import (about 20 ms)
        ux = ux[np.r_[True, ux[1:] != ux[:-1]]]
        uv = np.array([vals[xs == x].max() for x in ux])
        for i in range(ux.size):
            left = uv[i - 1] if i > 0 else -np.inf
            right = uv[i + 1] if i + 1 < ux.size else -np.inf
            if uv[i] > left and uv[i] >= right:  # a plateau counts once, at its start
                lo.append(ux[max(i - 1, 0)])
                hi.append(ux[min(i + 1, ux.size - 1)])
                at.append(ux[i])
                owner.append(j)
    if not owner:
        return best, best_x
    a, b = np.array(lo), np.array(hi)
    x_station = np.array(at)
    span = np.array(owner, dtype=np.int64)
    length = np.array([solved.beam.spans[j].length for j in owner])

    # a smooth maximum: the case governing at the station has a slope root between the
    # neighbouring stations and still governs there -> exact at once
    xm, vm, done = _root_of_governing(solved, span, length, x_station, a, b, quantity,
                                      case_set)
    if not np.all(done):
        # a vertex at the station itself (under a point load, at a span end): the
        # envelope is lower on both sides, near and far
        rest = np.flatnonzero(~done)
        steps = np.array(config.VERTEX_PROBES) * length[rest, None]
        probes = np.clip(np.c_[x_station[rest, None] - steps, x_station[rest, None] + steps],
                         a[rest, None], b[rest, None])
        inside = _envelope_max(solved, np.repeat(span[rest], probes.shape[1]),
                               probes.ravel(), quantity, case_set).reshape(probes.shape)
        own = probes == x_station[rest, None]  # clipped onto the station: no information
        vertex = np.all(own | (inside <= vm[rest, None]), axis=1)
        done[rest] = vertex
    if not np.all(done):
        # a kink, or the governing case changes: golden section on the envelope itself
        rest = np.flatnonzero(~done)
        xg, vg = _golden(solved, span[rest], length[rest], a[rest], b[rest], quantity,
                         case_set)
        h = config.ROOT_BRACKET * length[rest]
        xr, vr, _ = _root_of_governing(solved, span[rest], length[rest], xg,
                                       np.maximum(xg - h, 0.0), np.minimum(xg + h, length[rest]),
                                       quantity, case_set)
        better = vr >= vg - config.ZERO_RTOL * np.abs(vg)
        xm[rest] = np.where(better, xr, xg)
        vm[rest] = np.where(better, np.maximum(vr, vg), vg)
    for i, j in enumerate(owner):
        if vm[i] > best[j]:
            best[j], best_x[j] = vm[i], xm[i]
    return best, best_x


def _envelope_max(solved: Solved, span: np.ndarray, x: np.ndarray, quantity: str,
                  case_set: str | None) -> np.ndarray:
    ext = envelope_at(solved, make_points(solved.beam, span, x), quantity, case_set,
                      labels=False)
    assert ext is not None
    return ext.max


def _golden(solved: Solved, span: np.ndarray, length: np.ndarray, a: np.ndarray,
            b: np.ndarray, quantity: str, case_set: str | None
            ) -> tuple[np.ndarray, np.ndarray]:
    """Golden-section search for the envelope maximum in each bracket [a, b], to
    :data:`envelope.config.GOLDEN_XTOL` of the span; one new point per bracket a step."""
    def f(x: np.ndarray) -> np.ndarray:
        owners = span if x.size == span.size else np.r_[span, span]
        return _envelope_max(solved, owners, x, quantity, case_set)

    return golden_max(f, a, b, config.GOLDEN_XTOL * length)


def _root_of_governing(solved: Solved, span: np.ndarray, length: np.ndarray, x: np.ndarray,
                       lo: np.ndarray, hi: np.ndarray, quantity: str, case_set: str | None
                       ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The root in [lo, hi] of the slope (shear for moment, rotation for deflection) of
    the case governing at ``x``, by Illinois regula falsi, exact to round-off.

    Returns the root, the envelope there, and whether that is a true maximum of the
    envelope: the slope changed sign from + to - (or, with ``x`` at an end of its
    bracket, falls away from it) and the same case still governs there.  Elsewhere
    the root and value are ``x`` and the envelope at ``x``."""
    beam = solved.beam
    cs = solved.case_set(case_set or QUANTITY_SET[quantity])
    solution = solved.solution_for(case_set or QUANTITY_SET[quantity])
    slope_name = _SLOPE[quantity]

    def responses(xs: np.ndarray, names: tuple[str, ...]) -> dict[str, np.ndarray]:
        owners = span if xs.size == span.size else np.r_[span, span]
        return evaluate_some(solved.mesh, solved.unit_cases, solution,
                             make_points(beam, owners, xs), names)

    coef = governing_coefficients(responses(x, (quantity,))[quantity], cs)
    ends = responses(np.r_[lo, hi], (slope_name,))[slope_name]
    f_lo = np.einsum("iu,iu->i", ends[: x.size], coef)
    f_hi = np.einsum("iu,iu->i", ends[x.size:], coef)
    ok = (f_lo > 0.0) & (f_hi < 0.0)

    def slope(xs: np.ndarray) -> np.ndarray:
        return np.einsum("iu,iu->i", responses(xs, (slope_name,))[slope_name], coef)

    tol = config.ROOT_XTOL_EPS * np.finfo(float).eps * np.maximum(length, 1.0)
    root = illinois_root(slope, lo, hi, f_lo, f_hi, x, ok, tol)
    # a maximum at an end of its bracket (a span end): the case falls away inwards and
    # the envelope is lower at probes inside the bracket (several cases may tie at a
    # support, so the governing one alone does not decide)
    at_end = ~ok & (((x == lo) & (f_lo <= 0.0)) | ((x == hi) & (f_hi >= 0.0)))
    value = _envelope_max(solved, span, root, quantity, case_set)
    if at_end.any():
        ends = np.flatnonzero(at_end)
        probes = lo[ends, None] + (hi - lo)[ends, None] * np.array(config.END_PROBES)
        inside = _envelope_max(solved, np.repeat(span[ends], probes.shape[1]),
                               probes.ravel(), quantity, case_set).reshape(probes.shape)
        at_end[ends] = np.all(inside < value[ends, None], axis=1)
    own = np.einsum("iu,iu->i", responses(root, (quantity,))[quantity], coef)
    scale = np.maximum(np.abs(value), np.finfo(float).tiny)
    governs = value <= own + config.GOVERNS_RTOL * scale
    return root, value, (ok | at_end) & governs


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
    geometry = beam.geometry
    length = np.array(geometry.span_length)
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
        faces = make_points(beam, np.r_[np.arange(n), np.arange(n)],
                            np.r_[geometry.face_left, geometry.face_right],
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
    out["deflection_live_combo"] = np.full(n, "", dtype=object)
    if live is not None:
        lmax, lx = refine_max(solved, pts, live.max, "deflection", "live")
        out["deflection_live"] = np.maximum(lmax, 0.0)
        # which variable action alone governs, at the span's largest deflection
        at = envelope_at(solved, make_points(beam, np.arange(n), lx), "deflection", "live",
                         labels=False)
        assert at is not None
        names = np.array([c.name for c in solved.live.combinations], dtype=object)
        out["deflection_live_combo"] = np.where(lmax > 0.0, names[at.max_combo], "")
    else:
        out["deflection_live"] = np.zeros(n)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = length / out["deflection_max"]
    out["span_over_deflection"] = np.where(out["deflection_max"] > 0.0, ratio, np.nan)
    return out
