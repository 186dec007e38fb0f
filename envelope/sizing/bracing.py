"""Unbraced segments of each flange, from where the flanges are braced.

Each flange is braced ``"continuous"`` (by a slab or deck: no segments, Lb = 0),
``"supports"`` (at the supports only) or at listed positions per span (local x from the
span's left support) in addition to the supports.  Every support that restrains the beam
vertically is taken to brace both flanges and to prevent twist there (AISC 360-22 F1 and
Appendix 6 assume it; the engineer provides it).

The top flange is in compression where the moment sags, the bottom flange where it hogs
(over interior supports, and along the whole span under uplift such as 0.9D + 1.0W), so
the top flange's segments are checked for sagging and the bottom flange's for hogging.

Segments run in beam coordinates between consecutive brace points, across an interior
joint that does not restrain the beam; a piece between the last brace point and a free
end is a cantilever segment (its free end unbraced).
"""

from __future__ import annotations

from dataclasses import dataclass
from itertools import pairwise

import numpy as np

from envelope import config

#: The two flanges and the sign of the moment that compresses each.
FLANGE_SIGN = {"top": 1.0, "bottom": -1.0}

BracingSpec = str | tuple[tuple[float, ...], ...]


@dataclass(frozen=True, slots=True)
class Segments:
    """Unbraced segments (beam coordinates, consistent length units)."""

    flange: np.ndarray  # object: "top" | "bottom"
    x0: np.ndarray
    x1: np.ndarray
    cantilever: np.ndarray  # bool: one end is a free end, unbraced

    @property
    def n(self) -> int:
        """Number of unbraced segments."""
        return int(self.x0.size)

    @property
    def length(self) -> np.ndarray:
        """Length of each segment."""
        return self.x1 - self.x0

    @property
    def sign(self) -> np.ndarray:
        """+1 where sagging compresses the flange (top), -1 where hogging does (bottom)."""
        return np.where(self.flange == "top", 1.0, -1.0)


def brace_points(joint_x: np.ndarray, restrained: np.ndarray, spec: BracingSpec
                 ) -> np.ndarray | None:
    """Sorted brace positions of one flange (beam coordinates); None for continuous."""
    if spec == "continuous":
        return None
    pts = list(np.asarray(joint_x, dtype=float)[np.asarray(restrained, dtype=bool)])
    if not isinstance(spec, str):
        for j, positions in enumerate(spec):
            pts.extend(joint_x[j] + float(p) for p in positions)
    pts_arr = np.unique(np.asarray(pts, dtype=float))
    tol = config.ZERO_RTOL * max(float(joint_x[-1] - joint_x[0]), 1.0)
    keep = np.r_[True, np.diff(pts_arr) > tol] if pts_arr.size else pts_arr.astype(bool)
    return pts_arr[keep]


def segments(joint_x: np.ndarray | tuple[float, ...], restrained: np.ndarray,
             top: BracingSpec, bottom: BracingSpec) -> Segments:
    """The unbraced segments of both flanges (top first, each left to right)."""
    joint_x = np.asarray(joint_x, dtype=float)
    start, end = float(joint_x[0]), float(joint_x[-1])
    tol = config.ZERO_RTOL * max(end - start, 1.0)
    flange, x0, x1, cant = [], [], [], []
    for name, spec in (("top", top), ("bottom", bottom)):
        pts = brace_points(joint_x, restrained, spec)
        if pts is None or pts.size == 0:
            continue
        pieces = [(float(a), float(b), False) for a, b in pairwise(pts)]
        if pts[0] - start > tol:
            pieces.insert(0, (start, float(pts[0]), True))
        if end - pts[-1] > tol:
            pieces.append((float(pts[-1]), end, True))
        for a, b, c in pieces:
            flange.append(name)
            x0.append(float(a))
            x1.append(float(b))
            cant.append(c)
    return Segments(np.array(flange, dtype=object), np.array(x0, dtype=float),
                    np.array(x1, dtype=float), np.array(cant, dtype=bool))


def locate(joint_x: np.ndarray, x: np.ndarray, right: np.ndarray
           ) -> tuple[np.ndarray, np.ndarray]:
    """Span (0-based) and local x of beam positions; at a joint, ``right`` picks the span
    to its right (else the span to its left)."""
    joint_x = np.asarray(joint_x, dtype=float)
    n = joint_x.size - 1
    x = np.asarray(x, dtype=float)
    span_r = np.clip(np.searchsorted(joint_x, x, side="right") - 1, 0, n - 1)
    span_l = np.clip(np.searchsorted(joint_x, x, side="left") - 1, 0, n - 1)
    span = np.where(right, span_r, span_l)
    return span, np.clip(x - joint_x[span], 0.0, np.diff(joint_x)[span])
