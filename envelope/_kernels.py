"""numba kernels: arrays in, arrays out, nothing else of the package imported.

Four kernels.  :func:`column_sums`: the enveloper's superposition sums (fixed,
positive and negative per-unit parts, groups) in one pass over the responses, each
row by itself (see :func:`envelope.enveloper.column_extremes`, whose matrix products
are the tested reference).  :func:`responses`: the whole response of every unit case
at the points in one pass (start state, load terms, signs; the numpy path of
:func:`envelope.recovery.evaluate_some` is the tested reference).
:func:`particular_terms`: the particular (load) terms of every load item at every
point on the same element, accumulated straight into the (points x unit cases) response
arrays.  The numpy path of :func:`envelope.recovery.evaluate_some` builds every
(point, item) pair as arrays first, which for thousands of load items on one
element costs memory and time in proportion to points x items; this kernel
loops over them without allocating.  It computes exactly what
:func:`envelope.loadterms.load_terms` computes (the same three-point
Gauss-Legendre rule for distributed items), and the tests compare the two.
:func:`train_extremes`: a moving train's worst response at every row over every
interval of its reference position, in one pass (the numpy passes of
:func:`envelope.influence._run_extremes` are the tested reference).

Compiled on first use and cached on disk (``cache=True``), so a worker pays the
compile once per machine, not per beam.  numba is imported only when a problem
is large enough to need this (see :data:`envelope.config.KERNEL_MIN_PAIRS`).
"""

from __future__ import annotations

import numpy as np
from numba import njit, prange

#: The three-point Gauss-Legendre rule of envelope.loadterms (numpy.polynomial.legendre.
#: leggauss(3), written out).
_GX = np.array([-0.7745966692414834, 0.0, 0.7745966692414834])
_GW = np.array([0.5555555555555557, 0.8888888888888888, 0.5555555555555557])


#: Rows of the packed point array of :func:`particular_terms`.
POINT_S, POINT_EI, POINT_RIGHT = 0, 1, 2
#: Rows of the packed item arrays: floats (a, b, wa, wb, p) and integers (unit, kind).
ITEM_A, ITEM_B, ITEM_WA, ITEM_WB, ITEM_P = 0, 1, 2, 3, 4
ITEM_UNIT, ITEM_KIND = 0, 1


def pack_points(s: np.ndarray, ei: np.ndarray, right: np.ndarray) -> np.ndarray:
    """(3, n_points) float64: local position s, EI there, 1.0 where the right-hand
    value is asked (a point load exactly at s is then included)."""
    return np.stack([s, ei, right.astype(np.float64)])


def pack_items(unit: np.ndarray, kind: np.ndarray, a: np.ndarray, b: np.ndarray,
               wa: np.ndarray, wb: np.ndarray, p: np.ndarray
               ) -> tuple[np.ndarray, np.ndarray]:
    """(2, n_items) int64 (unit case, kind: 0 distributed, 1 point force, 2 moment)
    and (5, n_items) float64 (a, b, wa, wb, p), items sorted by element."""
    return (np.stack([unit, kind]).astype(np.int64),
            np.stack([a, b, wa, wb, p]).astype(np.float64))


@njit(cache=True, fastmath=False)
def _item_terms(kind: int, a: float, b: float, wa: float, wb: float, pv: float,
                sp: float, right: float, gx: np.ndarray, gw: np.ndarray
                ) -> tuple[bool, float, float, float, float]:  # pragma: no cover
    """One load item's terms (acting?, Q, m, m1, m2) at local position ``sp``: what
    :func:`envelope.loadterms.load_terms` computes for one (point, item) pair."""
    if kind == 0:  # distributed, linear from wa at a to wb at b
        c = min(max(sp, a), b)
        half = 0.5 * (c - a)
        width = b - a
        slope = (wb - wa) / width if width > 0.0 else 0.0
        q0 = 0.0
        q1 = 0.0
        q2 = 0.0
        q3 = 0.0
        for g in range(3):
            t = a + half * (1.0 + gx[g])
            wq = gw[g] * half * (wa + slope * (t - a))
            r = sp - t
            q0 += wq
            q1 += wq * r
            q2 += wq * r * r / 2.0
            q3 += wq * r * r * r / 6.0
        return True, q0, q1, q2, q3
    d = sp - a
    on = d > 0.0 or (d == 0.0 and right != 0.0)
    if not on:
        return False, 0.0, 0.0, 0.0, 0.0
    if kind == 1:  # point force
        return True, pv, pv * d, pv * d * d / 2.0, pv * d * d * d / 6.0
    return True, 0.0, -pv, -pv * d, -pv * d * d / 2.0  # clockwise point moment


@njit(cache=True, parallel=True, fastmath=False)
def particular_terms(point_elem: np.ndarray, point: np.ndarray, first_item: np.ndarray,
                     item_int: np.ndarray, item: np.ndarray, gauss: np.ndarray,
                     out: np.ndarray) -> None:  # pragma: no cover
    """Subtract the load terms from ``out`` (4, n_points, n_units): shear -= Q,
    moment -= m, upward slope -= m1/EI, upward deflection -= m2/EI.

    ``point_elem`` (n_points) is each point's element, ``point`` its packed floats
    (:func:`pack_points`), ``item_int`` and ``item`` the packed load items
    (:func:`pack_items`), ``first_item[e]:first_item[e + 1]`` element e's items,
    ``gauss`` (2, 3) the Gauss-Legendre abscissae and weights."""
    s = point[POINT_S]
    point_ei = point[POINT_EI]
    right = point[POINT_RIGHT]
    for p in prange(s.size):
        e = point_elem[p]
        ei = point_ei[p]
        for it in range(first_item[e], first_item[e + 1]):
            on, q0, q1, q2, q3 = _item_terms(
                item_int[ITEM_KIND, it], item[ITEM_A, it], item[ITEM_B, it],
                item[ITEM_WA, it], item[ITEM_WB, it], item[ITEM_P, it], s[p], right[p],
                gauss[0], gauss[1])
            if not on:
                continue
            u = item_int[ITEM_UNIT, it]
            out[0, p, u] -= q0
            out[1, p, u] -= q1
            out[2, p, u] -= q2 / ei
            out[3, p, u] -= q3 / ei


@njit(cache=True, fastmath=False)
def _start_state(state: np.ndarray, e: int, sp: float, ei: float, slot: np.ndarray,
                 out: np.ndarray, p: int) -> None:  # pragma: no cover
    """Element e's start state carried to local ``sp``, every unit case, into the
    wanted rows of ``out`` (see :func:`responses`): upward slope and deflection."""
    k_v, k_m, k_r, k_d = slot[0], slot[1], slot[2], slot[3]
    s2 = sp * sp
    s3 = s2 * sp
    for u in range(state.shape[2]):
        v0 = state[0, e, u]
        m0 = state[1, e, u]
        th1 = state[2, e, u]
        if k_v >= 0:
            out[k_v, p, u] = v0
        if k_m >= 0:
            out[k_m, p, u] = m0 + v0 * sp
        if k_r >= 0:
            out[k_r, p, u] = th1 + (m0 * sp + v0 * s2 / 2.0) / ei
        if k_d >= 0:
            out[k_d, p, u] = state[3, e, u] + th1 * sp + (m0 * s2 / 2.0 + v0 * s3 / 6.0) / ei


@njit(cache=True, fastmath=False)
def _less_terms(q: tuple[float, float, float, float], u: int, ei: float, slot: np.ndarray,
                out: np.ndarray, p: int) -> None:  # pragma: no cover
    """Subtract one item's (Q, m, m1, m2) from unit case u's wanted rows at point p."""
    for k in range(4):
        if slot[k] >= 0:
            out[slot[k], p, u] -= q[k] if k < 2 else q[k] / ei


@njit(cache=True, parallel=True, fastmath=False)
def responses(point_elem: np.ndarray, point: np.ndarray, first_item: np.ndarray,
              item_int: np.ndarray, item: np.ndarray, gauss: np.ndarray,
              state: np.ndarray, slot: np.ndarray, out: np.ndarray
              ) -> None:  # pragma: no cover
    """Shear, moment, rotation and deflection of every unit case at every point, in one
    pass: the element's start state carried to the point, less the load terms of the
    element's items, in the contract's signs (deflection downward, rotation clockwise).

    ``state`` (4, n_elements, n_units) is V0, M0, theta1, v1 (``Solution.state``);
    ``slot`` (4,) int64 gives, for shear, moment, rotation and deflection, the index in
    ``out`` (n_wanted, n_points, n_units) to write, or -1 for a quantity not wanted.
    The other arguments are those of :func:`particular_terms`.  The same arithmetic as
    :func:`envelope.recovery.evaluate_some`'s numpy path, which the tests compare
    with it; each point is computed by itself."""
    s = point[POINT_S]
    point_ei = point[POINT_EI]
    right = point[POINT_RIGHT]
    for p in prange(s.size):
        e = point_elem[p]
        ei = point_ei[p]
        _start_state(state, e, s[p], ei, slot, out, p)
        for it in range(first_item[e], first_item[e + 1]):
            on, q0, q1, q2, q3 = _item_terms(
                item_int[ITEM_KIND, it], item[ITEM_A, it], item[ITEM_B, it],
                item[ITEM_WA, it], item[ITEM_WB, it], item[ITEM_P, it], s[p], right[p],
                gauss[0], gauss[1])
            if on:
                _less_terms((q0, q1, q2, q3), item_int[ITEM_UNIT, it], ei, slot, out, p)
        for k in (2, 3):  # downward deflection, clockwise rotation
            if slot[k] >= 0:
                out[slot[k], p] *= -1.0


def gauss_rule() -> np.ndarray:
    """(2, 3): the three-point Gauss-Legendre abscissae and weights on [-1, 1]."""
    return np.stack([_GX, _GW])


#: Layout of the packed shape argument of :func:`column_sums`: fixed columns, patterned
#: (on/off per unit) columns, distinct group vectors.
SUM_FIXED, SUM_PATTERNED, SUM_GROUPS = 0, 1, 2


@njit(cache=True, parallel=True, fastmath=False)
def column_sums(R: np.ndarray, coef: np.ndarray, shape: np.ndarray,
                out: np.ndarray) -> None:  # pragma: no cover
    """The enveloper's superposition sums in one pass over the responses, row by row.

    ``R`` (rows, units) responses; ``coef`` (units, f + p + g) the fixed, patterned and
    group coefficients side by side; ``shape`` (3,) int64 = (f, p, g).  Writes ``out``
    (rows, f + 2 p + g): sum_u R c for each fixed column, then sum_u max(R c, 0) and
    sum_u min(R c, 0) for each patterned column, then sum_u R c for each group.

    Each row is summed in unit order, by itself: its values do not depend on which
    other rows are in the block (a matrix product's may), so an envelope computed in
    blocks of any size is the same, bit for bit."""
    n_rows, n_units = R.shape
    n_f = shape[SUM_FIXED]
    n_p = shape[SUM_PATTERNED]
    n_g = shape[SUM_GROUPS]
    for r in prange(n_rows):
        acc = np.zeros(n_f + 2 * n_p + n_g)
        for u in range(n_units):
            a = R[r, u]
            c = coef[u]
            for j in range(n_f):
                acc[j] += a * c[j]
            for j in range(n_p):
                t = a * c[n_f + j]
                if t > 0.0:
                    acc[n_f + j] += t
                else:
                    acc[n_f + n_p + j] += t
            for j in range(n_g):
                acc[n_f + 2 * n_p + j] += a * c[n_f + n_p + j]
        for j in range(n_f + 2 * n_p + n_g):
            out[r, j] = acc[j]


#: Rows of the packed output of :func:`train_extremes`.
TRAIN_MAX, TRAIN_MIN, TRAIN_X_MAX, TRAIN_X_MIN = 0, 1, 2, 3


@njit(cache=True, fastmath=False)
def _train_pieces(bounds: np.ndarray, axles: np.ndarray, runs: np.ndarray,
                  fit: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray
                                            ]:  # pragma: no cover
    """Per (interval, load): the piece a load stands on over the interval (judged at
    its middle), whether it is on the beam, and the powers (1, t, t^2, t^3) of its four
    sample positions in that piece (see :func:`train_extremes`)."""
    n_pieces = bounds.size - 1
    n_loads, n_int = axles.shape[1], runs.shape[1]
    piece = np.empty((n_int, n_loads), dtype=np.int64)
    on = np.zeros((n_int, n_loads), dtype=np.bool_)
    powers = np.empty((n_int, n_loads, 4, 4))
    b0, b1 = bounds[0], bounds[n_pieces]
    for n in range(n_int):
        lo, hi = runs[0, n], runs[1, n]
        mid = 0.5 * (lo + hi)
        for m in range(n_loads):
            off = axles[1, m]
            at_mid = mid + off
            on[n, m] = at_mid > b0 and at_mid < b1
            p = np.searchsorted(bounds, at_mid, side="right") - 1
            p = min(max(p, 0), n_pieces - 1)
            piece[n, m] = p
            width = bounds[p + 1] - bounds[p]
            for s in range(4):
                t = ((lo + fit[0, s] * (hi - lo)) + off - bounds[p]) / width
                powers[n, m, s, 0] = 1.0
                powers[n, m, s, 1] = t
                powers[n, m, s, 2] = t * t
                powers[n, m, s, 3] = t * t * t
    return piece, on, powers


@njit(cache=True, fastmath=False)
def _cubic_extremes(c0: float, c1: float, c2: float, c3: float
                    ) -> tuple[float, float, float, float]:  # pragma: no cover
    """Largest and least of c0 + c1 t + c2 t^2 + c3 t^3 on [0, 1] and the t of each:
    the ends and the stable roots of the derivative, the first candidate on a tie
    (what :func:`envelope.influence._cubic_extremes` does for arrays)."""
    a, b = 3.0 * c3, 2.0 * c2
    disc = b * b - 4.0 * a * c1
    q = -0.5 * (b + np.copysign(np.sqrt(max(disc, 0.0)), b))
    if a != 0.0:
        r1 = q / a
    elif b != 0.0:
        r1 = -c1 / b
    else:
        r1 = np.nan
    r2 = c1 / q if q != 0.0 else np.nan
    if not (disc >= 0.0 and r1 > 0.0 and r1 < 1.0):
        r1 = np.nan
    if not (disc >= 0.0 and r2 > 0.0 and r2 < 1.0):
        r2 = np.nan
    v_hi, t_hi, v_lo, t_lo = -np.inf, 0.0, np.inf, 0.0
    for j in range(4):
        t = 0.0 if j == 0 else 1.0 if j == 1 else r1 if j == 2 else r2
        v = c0 + t * (c1 + t * (c2 + t * c3))
        if np.isnan(v):
            continue
        if v > v_hi or j == 0:
            v_hi, t_hi = v, t
        if v < v_lo or j == 0:
            v_lo, t_lo = v, t
    return v_hi, t_hi, v_lo, t_lo


@njit(cache=True, fastmath=False)
def train_extremes(table: np.ndarray, bounds: np.ndarray,  # noqa: C901 (one loop nest:
                   axles: np.ndarray, runs: np.ndarray,  # a helper called per row and
                   fit: np.ndarray, out: np.ndarray  # interval took 1.5x the time)
                   ) -> None:  # pragma: no cover
    """The worst response of a train of loads at every row, over every interval of
    reference positions, in one pass (what :func:`envelope.influence._run_extremes`
    does in numpy, its tested reference).

    ``table`` (rows, pieces, 4) the influence cubics of each row per piece; ``bounds``
    (pieces + 1,) the pieces' ends; ``axles`` (2, loads): load and offset; ``runs``
    (2, intervals): the reference positions' interval ends lo, hi; ``fit`` (5, 4): the
    four sample positions in an interval (row 0) and the inverse Vandermonde matrix
    (rows 1-4).  Writes ``out`` (4, rows): largest, least, and the reference position
    of each (the first interval on a tie, as numpy's argmax)."""
    piece, on, powers = _train_pieces(bounds, axles, runs, fit)
    n_int = runs.shape[1]
    for r in range(table.shape[0]):  # serial: parallel rows took more CPU and wall
        best_hi, best_lo, x_hi, x_lo = -np.inf, np.inf, np.nan, np.nan
        sample = np.empty(4)
        coef = np.empty(4)
        for n in range(n_int):
            sample[:] = 0.0
            for m in range(axles.shape[1]):
                if on[n, m]:
                    for s in range(4):
                        part = 0.0
                        for k in range(4):
                            part += table[r, piece[n, m], k] * powers[n, m, s, k]
                        sample[s] += axles[0, m] * part
            for k in range(4):
                acc = 0.0
                for s in range(4):
                    acc += sample[s] * fit[1 + k, s]
                coef[k] = acc
            v_hi, t_hi, v_lo, t_lo = _cubic_extremes(coef[0], coef[1], coef[2], coef[3])
            lo, width = runs[0, n], runs[1, n] - runs[0, n]
            if v_hi > best_hi or n == 0:
                best_hi, x_hi = v_hi, lo + t_hi * width
            if v_lo < best_lo or n == 0:
                best_lo, x_lo = v_lo, lo + t_lo * width
        out[TRAIN_MAX, r] = best_hi
        out[TRAIN_MIN, r] = best_lo
        out[TRAIN_X_MAX, r] = x_hi
        out[TRAIN_X_MIN, r] = x_lo
