"""Prismatic elements of a beam: spans cut where the section changes.

Nodes run left to right; element ``e`` joins nodes ``e`` and ``e + 1``, so the
stiffness matrix is banded with three diagonals above the main one.  Joints
(supports) are the nodes listed in ``joint_node``.  Lengths are in the
consistent unit (m or ft) and EI in force*length^2.
"""

from __future__ import annotations

import itertools

import numpy as np

from envelope.model import Beam
from envelope.values import dataclass


@dataclass(frozen=True, slots=True)
class Mesh:
    """Element arrays for a whole beam (all length ``n_elements`` unless noted)."""

    span: np.ndarray  # int: span index of each element (0-based)
    start: np.ndarray  # element start, span-local
    end: np.ndarray  # element end, span-local: exactly the stretch's end
    length: np.ndarray
    EI: np.ndarray
    x0: np.ndarray  # element start, global (from the left end of span 1)
    joint_node: np.ndarray  # int, n_joints: node index of each joint
    span_first: np.ndarray  # int, n_spans: first element of each span
    span_count: np.ndarray  # int, n_spans: elements in each span
    #: bool: the element's right end is a hinge (its end moment is released; the node's
    #: rotation belongs to the element on the right).  None: no hinges in the beam.
    released: np.ndarray | None = None

    @property
    def n_elements(self) -> int:
        """Number of elements."""
        return int(self.length.size)

    @property
    def n_nodes(self) -> int:
        """Number of nodes (elements + 1)."""
        return self.n_elements + 1

    @property
    def node_x(self) -> np.ndarray:
        """Global position of every node."""
        return np.append(self.x0, self.x0[-1] + self.length[-1])


def build_mesh(beam: Beam) -> Mesh:
    """One element per stretch of constant section in every span, stretches cut at
    the span's hinges."""
    span: list[int] = []
    start: list[float] = []
    end: list[float] = []
    length: list[float] = []
    ei: list[float] = []
    x0: list[float] = []
    released: list[bool] = []
    joint_node = [0]
    span_first: list[int] = []
    span_count: list[int] = []
    joint_x = beam.geometry.joint_x
    for j, sp in enumerate(beam.spans):
        span_first.append(len(span))
        first = len(span)
        for st in sp.stretches:
            cuts = [st.start, *(h for h in sp.hinges if st.start < h < st.end), st.end]
            for a, b in itertools.pairwise(cuts):
                span.append(j)
                start.append(a)
                end.append(b)
                length.append(b - a)
                ei.append(st.section.EI)
                x0.append(float(joint_x[j]) + a)
                released.append(b in sp.hinges)
        span_count.append(len(span) - first)
        joint_node.append(len(span))
    return Mesh(
        span=np.asarray(span, dtype=np.int64),
        start=np.asarray(start, dtype=float),
        end=np.asarray(end, dtype=float),
        length=np.asarray(length, dtype=float),
        EI=np.asarray(ei, dtype=float),
        x0=np.asarray(x0, dtype=float),
        joint_node=np.asarray(joint_node, dtype=np.int64),
        span_first=np.asarray(span_first, dtype=np.int64),
        span_count=np.asarray(span_count, dtype=np.int64),
        released=np.asarray(released, dtype=bool) if any(released) else None,
    )


def locate(mesh: Mesh, span: np.ndarray, x_span: np.ndarray, right: np.ndarray) -> np.ndarray:
    """Element holding each point: the right-side limit takes the element starting at a
    section change, the left-side limit the element ending there."""
    span = np.asarray(span, dtype=np.int64)
    x_span = np.asarray(x_span, dtype=float)
    right = np.asarray(right, dtype=bool)
    elem = np.empty(span.shape, dtype=np.int64)
    # per span, the element boundaries are few: a small loop over spans' element counts
    first = mesh.span_first[span]
    count = mesh.span_count[span]
    elem[:] = first
    for k in range(1, int(mesh.span_count.max(initial=1))):
        has = count > k
        e = first + k
        e_safe = np.where(has, e, 0)
        b = mesh.start[e_safe]
        step = has & np.where(right, x_span >= b, x_span > b)
        elem = np.where(step, e, elem)
    return elem
