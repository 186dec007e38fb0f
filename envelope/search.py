"""Vectorised one-dimensional searches: many brackets at once, one call of the function
per step for all of them.

* :func:`golden_max`: golden-section search for the maximum of a function in each
  bracket (no derivative needed; robust at kinks).
* :func:`illinois_root`: the root of a function that changes sign over each bracket,
  by regula falsi with the Illinois modification (superlinear, exact to round-off);
  :func:`anderson_bjorck_root` the same with the Anderson-Bjorck modification.
* :func:`bisect`: bisection of many brackets on a predicate, to the last bit: it
  stops once no bracket can be narrowed further in floating point (about 55 steps on a
  bracket from zero), which gives what any number of further steps would.
* :func:`quartic_roots`: the root of a polynomial of degree at most four given by its
  values at five nodes (the design search's slopes between stations), each bracket
  searched by itself in Python floats.

The functions searched take an array of positions, one per bracket (or two per bracket
for the first golden-section step, ``[c..., d...]``), and return the values there.
Tolerances and step limits are in :mod:`envelope.config`.

Brackets may come in *groups* (``group``: a small integer per bracket): a group stops
stepping once all its own brackets are done, as if it were searched alone, so that
several searches share each call of the function and still give each one's answers.
With groups, the positions of the brackets whose group has finished are NaN in the
calls of the function, and its values there are not used.
"""

from __future__ import annotations

import math
from collections.abc import Callable

import numpy as np

from envelope import config

#: 1 / golden ratio: each golden-section step keeps this fraction of the bracket.
INV_PHI = (math.sqrt(5.0) - 1.0) / 2.0

Function = Callable[[np.ndarray], np.ndarray]


def _running(finished: np.ndarray, group: np.ndarray | None) -> np.ndarray:
    """Per bracket: does its group still step (some bracket of the group not
    ``finished``)?  Without groups, all brackets step while any is not finished."""
    if group is None:
        return np.full(finished.size, not bool(np.all(finished)))
    return np.bincount(group, ~finished, minlength=int(group.max(initial=-1)) + 1)[group] > 0


def golden_max(f: Function, a: np.ndarray, b: np.ndarray, xtol: np.ndarray,
               group: np.ndarray | None = None) -> tuple[np.ndarray, np.ndarray]:
    """Position and value of the largest of ``f`` found in each bracket [a, b], searched
    until every bracket (of its ``group``) is at most ``xtol`` wide (or
    :data:`envelope.config.GOLDEN_MAX_STEPS` steps)."""
    a = np.asarray(a, dtype=float)
    b = np.asarray(b, dtype=float)
    c = b - INV_PHI * (b - a)
    d = a + INV_PHI * (b - a)
    both = f(np.r_[c, d])
    fc, fd = both[: c.size], both[c.size:]
    for _ in range(config.GOLDEN_MAX_STEPS):
        step = _running(b - a <= xtol, group)
        if not step.any():
            break
        left = fc >= fd  # the maximum is in [a, d]: d becomes the new c
        b2 = np.where(left, d, b)
        a2 = np.where(left, a, c)
        new_x = np.where(left, b2 - INV_PHI * (b2 - a2), a2 + INV_PHI * (b2 - a2))
        f_new = f(new_x if group is None else np.where(step, new_x, np.nan))
        a, b = np.where(step, a2, a), np.where(step, b2, b)
        c, d = (np.where(step, np.where(left, new_x, d), c),
                np.where(step, np.where(left, c, new_x), d))
        fc, fd = (np.where(step, np.where(left, f_new, fd), fc),
                  np.where(step, np.where(left, fc, f_new), fd))
    return np.where(fc >= fd, c, d), np.maximum(fc, fd)


def bisect(short: Callable[[np.ndarray], np.ndarray], lo: np.ndarray, hi: np.ndarray,
           steps: int = 100) -> tuple[np.ndarray, np.ndarray]:
    """Bisect every bracket [lo, hi] on the predicate ``short`` (True where a point is
    below the sought one: the lower end moves there), ``steps`` times or until a step
    moves no end of any bracket: from then on every step would give the same brackets
    (the same midpoints, the same predicate), so the result is that of all ``steps``
    steps, bit for bit, in fewer calls.  The narrowed (lo, hi)."""
    lo = np.asarray(lo, dtype=float)
    hi = np.asarray(hi, dtype=float)
    for _ in range(steps):
        mid = 0.5 * (lo + hi)
        below = short(mid)
        new_lo = np.where(below, mid, lo)
        new_hi = np.where(below, hi, mid)
        if (np.array_equal(new_lo, lo, equal_nan=True)
                and np.array_equal(new_hi, hi, equal_nan=True)):
            break
        lo, hi = new_lo, new_hi
    return lo, hi


def illinois_root(f: Function, lo: np.ndarray, hi: np.ndarray, f_lo: np.ndarray,
                  f_hi: np.ndarray, start: np.ndarray, active: np.ndarray,
                  xtol: np.ndarray, group: np.ndarray | None = None) -> np.ndarray:
    """The root of ``f`` in each active bracket [lo, hi] where ``f_lo > 0 > f_hi``
    (the values at its ends), to ``xtol``; ``start`` where a bracket is not active.

    ``f`` is called with one position per bracket (inactive ones at ``start`` without
    groups, NaN with groups, as are those of a finished ``group``), at most
    :data:`envelope.config.ROOT_MAX_STEPS` times."""
    root = np.array(start, dtype=float)
    if not np.any(active):
        return root
    # an inactive bracket stays at its start: the bracket [start, start] with values
    # (1, -1) puts its regula falsi point there
    lo = np.where(active, lo, root)
    hi = np.where(active, hi, root)
    f_lo = np.where(active, f_lo, 1.0)
    f_hi = np.where(active, f_hi, -1.0)
    stale = np.zeros(root.size, dtype=np.int8)  # +1: lo moved last, -1: hi moved last
    step = np.array(active, dtype=bool)  # an inactive bracket never steps
    for _ in range(config.ROOT_MAX_STEPS):
        c = np.minimum(np.maximum((lo * f_hi - hi * f_lo) / (f_hi - f_lo), lo), hi)
        f_c = f(c if group is None else np.where(step, c, np.nan))
        done = np.abs(c - root) <= xtol
        root = np.where(step, c, root)
        step = step & _running(done, group)
        if not step.any():
            break
        # a finished group keeps its bracket: its root no longer moves
        move_lo = step & (f_c > 0.0)
        move_hi = step & ~move_lo
        lo, f_lo = np.where(move_lo, c, lo), np.where(move_lo, f_c, f_lo)
        hi, f_hi = np.where(move_hi, c, hi), np.where(move_hi, f_c, f_hi)
        # Illinois: halve the stale end's value when the same end moves twice
        f_hi = np.where(move_lo & (stale > 0), 0.5 * f_hi, f_hi)
        f_lo = np.where(move_hi & (stale < 0), 0.5 * f_lo, f_lo)
        stale = np.where(step, move_lo.view(np.int8) - move_hi.view(np.int8), stale)
    return root


def anderson_bjorck_root(f: Function, lo: np.ndarray, hi: np.ndarray, f_lo: np.ndarray,
                         f_hi: np.ndarray, start: np.ndarray, active: np.ndarray,
                         xtol: np.ndarray, group: np.ndarray | None = None) -> np.ndarray:
    """:func:`illinois_root` with the Anderson-Bjorck modification: when the same end
    moves twice running, the value at the other (stale) end is scaled by
    ``1 - f_c / f_old`` (the new value over the value it replaces; a half where that is
    not positive) instead of halved.  The scale follows the function's curvature, so a
    smooth slope needs fewer steps (about 5.6 against 7 a search on the design search's
    deflection slopes); the root is the same to ``xtol``.

    Arguments, calls of ``f`` and groups as in :func:`illinois_root`.  Up to
    :data:`envelope.config.ROOT_SCALAR_BRACKETS` brackets the bookkeeping of each step
    is done with Python floats (the same IEEE operations, so the same numbers as the
    array version, which takes more brackets): on a few brackets numpy's fixed cost per
    call (some forty calls a step) is most of a step's time.  Unlike
    :func:`illinois_root`, ``f`` is not asked at a bracket's last point (whether it is
    done depends on the point alone): the same roots, one call of ``f`` fewer."""
    root = np.array(start, dtype=float)
    if not np.any(active):
        return root
    # an inactive bracket stays at its start: the bracket [start, start] with values
    # (1, -1) puts its regula falsi point there
    lo = np.where(active, lo, root)
    hi = np.where(active, hi, root)
    f_lo = np.where(active, f_lo, 1.0)
    f_hi = np.where(active, f_hi, -1.0)
    xtol = np.broadcast_to(np.asarray(xtol, dtype=float), root.shape)
    if root.size <= config.ROOT_SCALAR_BRACKETS:
        return _ab_scalar(f, lo, hi, f_lo, f_hi, root, np.asarray(active, dtype=bool), xtol,
                          group)
    return _ab_arrays(f, lo, hi, f_lo, f_hi, root, np.asarray(active, dtype=bool), xtol,
                      group)


def _ab_arrays(f: Function, lo: np.ndarray, hi: np.ndarray, f_lo: np.ndarray,
               f_hi: np.ndarray, root: np.ndarray, active: np.ndarray, xtol: np.ndarray,
               group: np.ndarray | None) -> np.ndarray:
    """The steps of :func:`anderson_bjorck_root` on arrays."""
    stale = np.zeros(root.size, dtype=np.int8)  # +1: lo moved last, -1: hi moved last
    step = active.copy()  # an inactive bracket never steps
    for _ in range(config.ROOT_MAX_STEPS):
        c = np.minimum(np.maximum((lo * f_hi - hi * f_lo) / (f_hi - f_lo), lo), hi)
        # whether a bracket is done depends on its new point alone: f is asked only where
        # a bracket goes on (the last point of each needs no value)
        done = np.abs(c - root) <= xtol
        root = np.where(step, c, root)
        step = step & _running(done, group)
        if not step.any():
            break
        f_c = f(c if group is None else np.where(step, c, np.nan))
        # a finished group keeps its bracket: its root no longer moves
        move_lo = step & (f_c > 0.0)
        move_hi = step & ~move_lo
        with np.errstate(divide="ignore", invalid="ignore"):
            m = 1.0 - f_c / np.where(move_lo, f_lo, f_hi)  # the new value over the old
        m = np.where(m > 0.0, m, 0.5)
        lo, f_lo = np.where(move_lo, c, lo), np.where(move_lo, f_c, f_lo)
        hi, f_hi = np.where(move_hi, c, hi), np.where(move_hi, f_c, f_hi)
        f_hi = np.where(move_lo & (stale > 0), m * f_hi, f_hi)
        f_lo = np.where(move_hi & (stale < 0), m * f_lo, f_lo)
        stale = np.where(step, move_lo.view(np.int8) - move_hi.view(np.int8), stale)
    return root


def _ab_scalar(f: Function, lo_a: np.ndarray, hi_a: np.ndarray, f_lo_a: np.ndarray,
               f_hi_a: np.ndarray, root_a: np.ndarray, active: np.ndarray,
               xtol_a: np.ndarray, group: np.ndarray | None) -> np.ndarray:
    """The steps of :func:`anderson_bjorck_root` with Python floats, bracket by bracket
    (the operations of :func:`_ab_arrays`, in the same order)."""
    n = root_a.size
    lo, hi, f_lo, f_hi = lo_a.tolist(), hi_a.tolist(), f_lo_a.tolist(), f_hi_a.tolist()
    root, xtol = root_a.tolist(), xtol_a.tolist()
    step = active.tolist()
    stale = [0] * n  # +1: lo moved last, -1: hi moved last
    owner = [0] * n if group is None else group.tolist()
    nan = float("nan")
    for _ in range(config.ROOT_MAX_STEPS):
        c = [min(max((lo[i] * f_hi[i] - hi[i] * f_lo[i]) / (f_hi[i] - f_lo[i]), lo[i]), hi[i])
             for i in range(n)]
        # a group steps while any of its brackets is not done (without groups: all)
        running = set()
        for i in range(n):
            if abs(c[i] - root[i]) > xtol[i]:
                running.add(owner[i])
            if step[i]:
                root[i] = c[i]
        step = [step[i] and owner[i] in running for i in range(n)]
        if not any(step):
            break
        x = c if group is None else [c[i] if step[i] else nan for i in range(n)]
        f_c = f(np.array(x)).tolist()
        # a finished group keeps its bracket: its root no longer moves
        for i in (i for i in range(n) if step[i]):
            lo[i], hi[i], f_lo[i], f_hi[i], stale[i] = _ab_move(
                c[i], f_c[i], lo[i], hi[i], f_lo[i], f_hi[i], stale[i])
    return np.array(root, dtype=float)


def _ab_move(c: float, f_c: float, lo: float, hi: float, f_lo: float, f_hi: float,
             stale: int) -> tuple[float, float, float, float, int]:
    """One bracket's move to its new point ``c`` (value ``f_c``): the end of the same
    sign moves, the other end's value is scaled where it is stale; the new (lo, hi,
    f_lo, f_hi, stale)."""
    if f_c > 0.0:
        m = 1.0 - _divide(f_c, f_lo)
        if stale > 0:
            f_hi = (m if m > 0.0 else 0.5) * f_hi
        return c, hi, f_c, f_hi, 1
    m = 1.0 - _divide(f_c, f_hi)
    if stale < 0:
        f_lo = (m if m > 0.0 else 0.5) * f_lo
    return lo, c, f_lo, f_c, -1


def _divide(a: float, b: float) -> float:
    """``a / b`` as numpy divides floats: infinite (or NaN for 0 / 0) where ``b`` is 0
    (a value reaching exactly 0 at a root)."""
    if b != 0.0:
        return a / b
    if a == 0.0 or math.isnan(a):
        return math.nan
    return math.copysign(math.inf, a) * math.copysign(1.0, b)


#: The five Chebyshev-Lobatto nodes on [-1, 1], ascending (-cos(j pi / 4)): where
#: :func:`quartic_roots` takes the values of the polynomial it searches.
LOBATTO_NODES = -np.cos(np.arange(5) * np.pi / 4.0)
LOBATTO_NODES[2] = 0.0  # (cos(pi / 2) is 6e-17 in floats)
#: From the values at :data:`LOBATTO_NODES` to the coefficients of the quartic through
#: them (constant term first): the inverse of the nodes' Vandermonde matrix, transposed
#: (values x this = coefficients).  On these nodes its condition is about 20, so the
#: coefficients carry the values' round-off, hardly more.
_LOBATTO_TO_POWERS = np.linalg.inv(np.vander(LOBATTO_NODES, 5, increasing=True)).T


def quartic_roots(values: np.ndarray, active: np.ndarray, utol: np.ndarray,
                  start: np.ndarray) -> np.ndarray:
    """The root in [-1, 1] of the polynomial of degree at most four through each row of
    ``values`` (rows x 5, its values at :data:`LOBATTO_NODES`), where the polynomial is
    positive at -1 and negative at +1; -1 where it is not positive at -1, +1 where it
    is not negative at +1 (the root is then a jump at that end).  ``start`` where a row
    is not ``active``.

    The root is found as :func:`anderson_bjorck_root` finds it (the same steps, to
    ``utol`` per row), each row by itself, on the polynomial evaluated with Python floats
    (Horner's rule): a slope of the design search is exactly such a polynomial between
    neighbouring stations (its load terms are polynomials of degree at most four there,
    and the three-point Gauss rule integrates them exactly), so five values replace a
    response at every step.  At most :data:`envelope.config.ROOT_MAX_STEPS` steps."""
    out = np.array(start, dtype=float)
    rows = np.flatnonzero(active)
    if not rows.size:
        return out
    coef = (values[rows] @ _LOBATTO_TO_POWERS).tolist()
    tols = np.broadcast_to(np.asarray(utol, dtype=float), out.shape)[rows].tolist()
    roots = [_quartic_root(c, tol, s) for c, tol, s in
             zip(coef, tols, out[rows].tolist(), strict=True)]
    out[rows] = roots
    return out


def _quartic_root(c: list[float], tol: float, root: float) -> float:
    """:func:`quartic_roots` of one polynomial (coefficients ``c``, constant first),
    from ``root`` (where the first step is measured from)."""
    c0, c1, c2, c3, c4 = c
    lo, hi = -1.0, 1.0
    f_lo = c0 + (-1.0) * (c1 + (-1.0) * (c2 + (-1.0) * (c3 + (-1.0) * c4)))
    f_hi = c0 + (c1 + (c2 + (c3 + c4)))
    if not f_lo > 0.0:
        return lo
    if not f_hi < 0.0:
        return hi
    stale = 0  # +1: lo moved last, -1: hi moved last
    for _ in range(config.ROOT_MAX_STEPS):
        u = min(max((lo * f_hi - hi * f_lo) / (f_hi - f_lo), lo), hi)
        done = abs(u - root) <= tol
        root = u
        if done:
            break
        f_u = c0 + u * (c1 + u * (c2 + u * (c3 + u * c4)))
        lo, hi, f_lo, f_hi, stale = _ab_move(u, f_u, lo, hi, f_lo, f_hi, stale)
    return root
