"""Cholesky factorisation and solve of a symmetric positive definite banded matrix.

The stiffness matrix of a beam (two degrees of freedom per node) has three
super-diagonals.  Its factor takes a few thousand scalar steps, and the solve is one
pass down and one pass up the rows, each row a short product over the right-hand sides
(all unit cases at once, rows contiguous in memory).  Written here rather than taken
from scipy.linalg, whose import costs about 0.3 s per process: more than the whole
analysis of an ordinary beam.  The storage is LAPACK's upper band form, the same as
``scipy.linalg.cholesky_banded(ab, lower=False)`` (the tests compare the two):
``ab[u + i - j, j] = A[i, j]`` for ``j - u <= i <= j``.
"""

from __future__ import annotations

import math

import numpy as np


class NotPositiveDefinite(ValueError):
    """A pivot of the factorisation is not positive (or not finite): the matrix is
    singular or indefinite."""


def cholesky_upper(ab: np.ndarray) -> np.ndarray:
    """The upper factor U (A = U^T U) of the banded matrix ``ab`` (u + 1, n), in the
    same band form; NotPositiveDefinite if a pivot is not positive."""
    u, n = ab.shape[0] - 1, ab.shape[1]
    a = ab.tolist()  # Python floats: scalar steps are faster than on numpy scalars
    c = [[0.0] * n for _ in range(u + 1)]  # c[u + i - j][j] = U[i, j]
    diag = c[u]
    for j in range(n):
        lo = max(0, j - u)
        # U[i, j] for lo <= i < j: (A[i, j] - sum_k U[k, i] U[k, j]) / U[i, i]
        for i in range(lo, j):
            s = a[u + i - j][j]
            for k in range(max(lo, i - u), i):
                s -= c[u + k - i][i] * c[u + k - j][j]
            c[u + i - j][j] = s / diag[i]
        s = a[u][j]
        for k in range(lo, j):
            s -= c[u + k - j][j] ** 2
        if not s > 0.0 or math.isinf(s):  # NaN too
            raise NotPositiveDefinite(f"pivot {j} is {s!r}")
        diag[j] = math.sqrt(s)
    return np.array(c)


def solve_upper(cb: np.ndarray, b: np.ndarray) -> np.ndarray:
    """The solution x of U^T U x = b for the factor ``cb`` of :func:`cholesky_upper`; ``b`` is
    (n,) or (n, m) and is not changed."""
    u, n = cb.shape[0] - 1, cb.shape[1]
    x = np.array(b, dtype=float, order="C", copy=True)
    if x.size == 0:
        return x
    diag = cb[u]
    # column j of U above the diagonal, rows j-u .. j-1: cb[0:u, j] (padded with zeros
    # at the top-left corner, where the band runs out of the matrix)
    col = [cb[max(0, u - j):u, j] for j in range(n)]
    # forward: U^T y = b, row j: y_j = (b_j - sum_{k<j} U[k, j] y_k) / U[j, j]
    for j in range(n):
        lo = max(0, j - u)
        if j > lo:
            x[j] -= col[j] @ x[lo:j]
        x[j] /= diag[j]
    # backward: U x = y, row j: x_j = (y_j - sum_{k>j} U[j, k] x_k) / U[j, j]
    rows = [np.array([cb[u + j - k, k] for k in range(j + 1, min(n, j + u + 1))])
            for j in range(n)]
    for j in range(n - 1, -1, -1):
        hi = min(n, j + u + 1)
        if hi > j + 1:
            x[j] -= rows[j] @ x[j + 1:hi]
        x[j] /= diag[j]
    return x
