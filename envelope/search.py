"""Vectorised one-dimensional searches: many brackets at once, one call of the function
per step for all of them.

* :func:`golden_max`: golden-section search for the maximum of a function in each
  bracket (no derivative needed; robust at kinks).
* :func:`illinois_root`: the root of a function that changes sign over each bracket,
  by regula falsi with the Illinois modification (superlinear, exact to round-off).

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
