"""numba kernels: arrays in, arrays out, nothing else of the package imported.

One kernel: the particular (load) terms of every load item at every point on the
same element, accumulated straight into the (points x unit cases) response
arrays.  The numpy path of :func:`envelope.recovery.evaluate_some` builds every
(point, item) pair as arrays first, which for thousands of load items on one
element costs memory and time in proportion to points x items; this kernel
loops over them without allocating.  It computes exactly what
:func:`envelope.loadterms.load_terms` computes (the same three-point
Gauss-Legendre rule for distributed items), and the tests compare the two.

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
    item_unit = item_int[ITEM_UNIT]
    item_kind = item_int[ITEM_KIND]
    item_a = item[ITEM_A]
    item_b = item[ITEM_B]
    item_wa = item[ITEM_WA]
    item_wb = item[ITEM_WB]
    item_p = item[ITEM_P]
    gx = gauss[0]
    gw = gauss[1]
    n_points = s.size
    for p in prange(n_points):
        e = point_elem[p]
        sp = s[p]
        ei = point_ei[p]
        for it in range(first_item[e], first_item[e + 1]):
            u = item_unit[it]
            kind = item_kind[it]
            a = item_a[it]
            if kind == 0:  # distributed, linear from wa at a to wb at b
                b = item_b[it]
                c = min(max(sp, a), b)
                half = 0.5 * (c - a)
                width = b - a
                slope = (item_wb[it] - item_wa[it]) / width if width > 0.0 else 0.0
                q0 = 0.0
                q1 = 0.0
                q2 = 0.0
                q3 = 0.0
                for g in range(3):
                    t = a + half * (1.0 + gx[g])
                    wq = gw[g] * half * (item_wa[it] + slope * (t - a))
                    r = sp - t
                    q0 += wq
                    q1 += wq * r
                    q2 += wq * r * r / 2.0
                    q3 += wq * r * r * r / 6.0
            else:
                d = sp - a
                on = d > 0.0 or (d == 0.0 and right[p] != 0.0)
                if not on:
                    continue
                pv = item_p[it]
                if kind == 1:  # point force
                    q0 = pv
                    q1 = pv * d
                    q2 = pv * d * d / 2.0
                    q3 = pv * d * d * d / 6.0
                else:  # clockwise point moment
                    q0 = 0.0
                    q1 = -pv
                    q2 = -pv * d
                    q3 = -pv * d * d / 2.0
            out[0, p, u] -= q0
            out[1, p, u] -= q1
            out[2, p, u] -= q2 / ei
            out[3, p, u] -= q3 / ei


def gauss_rule() -> np.ndarray:
    """(2, 3): the three-point Gauss-Legendre abscissae and weights on [-1, 1]."""
    return np.stack([_GX, _GW])
