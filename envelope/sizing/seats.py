"""Hogging design moments of a concrete beam by how it sits on each support.

``seat = "monolithic"`` (the default): the moment at the support face (ACI 318-19
9.4.2.1, EN 1992-1-1 5.3.2.2(3)), as :mod:`envelope.sizing.layout` takes it.
``seat = "bearing"`` (a wall or a bearing the beam rotates on): ACI 318-19 allows the
face moment only for members built integrally with their supports, so the centreline
moment is used; EN 1992-1-1 5.3.2.2(4) reduces the centreline moment by
Delta M = F_Ed,sup t / 8 (t the bearing width, F_Ed,sup the support reaction).  The
reduced moment M + R t / 8 is linear in the unit cases, so its envelope over the
strength set is exact (each arrangement with its own reaction).

EN 1992-1-1 5.3.2.2(3) also floors the face moment of a monolithic support at 0.65 of
the full fixed-end moment (:func:`fixed_end_floor`).
"""

from __future__ import annotations

import dataclasses
import itertools

import numpy as np

from envelope import config
from envelope.analysis import Analysis
from envelope.enveloper import reduce
from envelope.moving import (
    MovingEffect,
    moment_and_reaction_effect,
    moment_functional_effect,
    moving_loads,
)
from envelope.recovery import Points, evaluate_some, make_points
from envelope.sizing.layout import Rows

#: EN 1992-1-1 5.3.2.2(3) note: the face moment of a monolithic support is at least
#: this share of the full fixed-end moment.
FIXED_END_SHARE = 0.65


def seat_rows(analysis: Analysis, rows: Rows) -> tuple[Rows, list[tuple[int, str]]]:
    """``rows`` with the end moments of bearing supports replaced (see the module
    docstring), and a note per changed row."""
    beam = analysis.beam
    design = beam.design
    assert design is not None
    solved = analysis.solved
    n = beam.n_spans
    moment = rows.moment.copy()
    x_span = rows.x_span.copy()
    notes: list[tuple[int, str]] = []
    if solved.strength.is_empty:
        return rows, notes
    for j in range(n):
        for end, joint in (("left", j), ("right", j + 1)):
            sup = beam.supports[joint]
            if sup.seat != "bearing" or not sup.restrains_vertical:
                continue
            i = 3 * j + (0 if end == "left" else 2)
            x = 0.0 if end == "left" else beam.spans[j].length
            pts = make_points(beam, np.array([j]), np.array([x]),
                              np.array([end == "left"]))
            strength = solved.solution_for("strength")
            m_u = evaluate_some(solved.mesh, solved.unit_cases, strength, pts,
                                ("moment",))["moment"]
            weight = sup.width / 8.0 if design.code == "en1992-1-1" else 0.0
            moving = (moment_and_reaction_effect(beam, pts, joint, weight)
                      if moving_loads(beam) else None)
            if design.code == "en1992-1-1":
                r_u = strength.reaction[joint][None, :]
                reduced = m_u + r_u * weight
                text = ("bearing support: centreline moment less F t/8 (EN 1992-1-1 "
                        "5.3.2.2(4))")
            else:
                reduced = m_u
                text = ("bearing support: centreline moment (ACI 318-19 9.4.2.1 takes the "
                        "face only for supports built integrally)")
            low = float(reduce(reduced, solved.strength, labels=False, moving=moving).min[0])
            moment[i] = min(low, 0.0)
            x_span[i] = x
            notes.append((i, text))
    return dataclasses.replace(rows, moment=moment, x_span=x_span), notes


def _simpson(lo: float, hi: float, n: int) -> tuple[np.ndarray, np.ndarray]:
    """Points and weights of the composite Simpson rule on [lo, hi], ``n`` even."""
    x = np.linspace(lo, hi, n + 1)
    w = np.full(n + 1, 2.0)
    w[1::2] = 4.0
    w[0] = w[-1] = 1.0
    return x, w * (hi - lo) / (3.0 * n)


def fixed_end_moments(analysis: Analysis, span: int) -> np.ndarray:
    """Fixed-end moments (2 x n_unit_cases: left end, right end; consistent units,
    sagging positive, so hogging is negative) of every unit case on span ``span`` taken
    as built in at both ends, with the span's own stretches.

    The span's free-body moment of its own loads is M0(x) = M(x) - M(0) (1 - x/L) -
    M(L) x/L (statics of the span cut from the beam; M from the analysis).  The built-in
    end moments Ma, Mb make both end rotations zero (unit-load method, 1/EI per stretch):
    integral (M0 + Ma (1 - x/L) + Mb x/L) (1 - x/L) / EI dx = 0 and the same with x/L,
    integrated by Simpson's rule piecewise between stretch ends and point loads (exact
    for uniform and point loads, whose integrands are cubic at most there).  A prismatic
    span under w gives -w L^2 / 12 at each end."""
    solved = analysis.solved
    pts, weights = fem_functional(analysis, span)
    m = evaluate_some(solved.mesh, solved.unit_cases, solved.solution, pts,
                      ("moment",))["moment"]
    return weights @ m


def fem_functional(analysis: Analysis, span: int) -> tuple[Points, np.ndarray]:
    """The points of :func:`fixed_end_moments` (its Simpson grid, then the span's two
    ends) and the (2, points) weights that take the moments there to the fixed-end
    moments: the solve is linear in the moments, so any load's fixed-end moments are
    these weights on its moments (a moving load's, on its influence lines)."""
    beam = analysis.beam
    sp = beam.spans[span]
    length = sp.length
    loads = np.array([ld.at for ld in beam.loads
                      if getattr(ld, "type", "") == "point" and ld.span == span
                      and ld.at is not None], dtype=float)
    xs: list[np.ndarray] = []
    weights: list[np.ndarray] = []
    for st in sp.stretches:
        cuts = np.unique(np.r_[st.start, loads[(loads > st.start) & (loads < st.end)],
                               st.end])
        for lo, hi in itertools.pairwise(cuts.tolist()):
            n = 2 * max(4, int(np.ceil(config.DEFLECTION_GRID * (hi - lo) / length / 2)))
            x, w = _simpson(lo, hi, n)
            xs.append(x)
            weights.append(w / st.section.EI)
    x = np.concatenate(xs)
    w = np.concatenate(weights)
    pts = make_points(beam, np.full(x.size + 2, span), np.r_[x, 0.0, length],
                      np.r_[x < length, True, False])
    return pts, _fem_weights(x, w, length)


def _fem_weights(x: np.ndarray, w: np.ndarray, length: float) -> np.ndarray:
    """(2, n + 2) weights taking the moments at the grid ``x`` and the two span ends to
    the fixed-end moments (the solve of :func:`fixed_end_moments`, linear in them)."""
    xi = x / length
    a, b = 1.0 - xi, xi
    f = np.array([[np.sum(w * a * a), np.sum(w * a * b)],
                  [np.sum(w * a * b), np.sum(w * b * b)]])
    A = np.vstack([w * a, w * b])  # M0 = M - Ma (1 - xi) - Mb xi at the grid
    return np.asarray(np.linalg.solve(f, np.c_[-A, A @ a, A @ b]))


def _built_in(analysis: Analysis, joint: int) -> bool:
    """A joint whose support is monolithic and carries moment in the analysis: the beam
    runs on over it (a span each side) or the support restrains rotation."""
    beam = analysis.beam
    sup = beam.supports[joint]
    if sup.seat != "monolithic" or not sup.restrains_vertical:
        return False
    return 0 < joint < beam.n_spans or sup.restrains_rotation


def fixed_end_floor(analysis: Analysis, rows: Rows) -> tuple[Rows, list[tuple[int, str]]]:
    """EN 1992-1-1 5.3.2.2(3) note: the design moment at the face of a monolithic
    support is at least 0.65 of the full fixed-end moment.  The fixed-end moment of each
    unit case (:func:`fixed_end_moments`) is linear in the loads, so its most hogging
    value over the strength set is exact; each built-in face row (:func:`_built_in`) is
    raised to 0.65 of it where its own hogging moment is smaller, with a note.  End
    supports modelled free to rotate carry no moment in the analysis and are left as
    they are (one note for the beam, on the first such end's row, lists them)."""
    beam = analysis.beam
    solved = analysis.solved
    moment = rows.moment.copy()
    notes: list[tuple[int, str]] = []
    if solved.strength.is_empty:
        return rows, notes
    lab = beam.units.labels["moment"]
    free: list[tuple[int, int]] = []  # (row, joint) of each end free to rotate
    for j in range(beam.n_spans):
        fem = None
        moving: MovingEffect | None = None
        for k, (end, joint) in enumerate((("left", j), ("right", j + 1))):
            i = 3 * j + (0 if end == "left" else 2)
            sup = beam.supports[joint]
            if not _built_in(analysis, joint):
                if sup.seat == "monolithic" and sup.restrains_vertical:
                    free.append((i, joint))
                continue
            if fem is None:
                fem = fixed_end_moments(analysis, j)
                moving = (moment_functional_effect(beam, *fem_functional(analysis, j))
                          if moving_loads(beam) else None)
            low = float(reduce(fem[k:k + 1], solved.strength, labels=False,
                               moving=None if moving is None else
                               moving.rows(np.array([k]))).min[0])
            floor = FIXED_END_SHARE * min(low, 0.0)
            if floor < moment[i]:
                notes.append((i, f"face moment raised to 0.65 of the fixed-end moment "
                                 f"{low:.1f} {lab} (EN 1992-1-1 5.3.2.2(3))"))
                moment[i] = floor
    if free:  # said once for the beam, on the first such end's row
        which = " and ".join(str(joint + 1) for _, joint in free)
        notes.append((free[0][0], f"end support{'s' if len(free) > 1 else ''} {which} "
                                  "free to rotate in the analysis: the 0.65 fixed-end "
                                  "moment floor of EN 1992-1-1 5.3.2.2(3) not applied "
                                  f"{'at either' if len(free) > 1 else 'there'}"))
    return dataclasses.replace(rows, moment=moment), notes
