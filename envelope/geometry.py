"""Where things are along the beam: joints, span lengths and support faces, worked out once.

Every :class:`~envelope.model.Beam` carries its :class:`Geometry` (made when the
beam is made), and so does the solution (``Solved.geometry``); nothing
downstream sums span lengths or halves support widths again.  Lengths are in
the consistent unit (m or ft); arrays are read-only.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import TYPE_CHECKING

import numpy as np

from envelope.values import dataclass

if TYPE_CHECKING:
    from envelope.model import Span, Support


def joint_positions(spans: Sequence[Span]) -> tuple[float, ...]:
    """Global position of every joint (len(spans) + 1 values), from the left end of span 1.

    Summed left to right: the one place joint positions are computed, so every
    position along the beam (mesh nodes, stations, table columns) agrees to the bit.
    """
    xs = [0.0]
    for span in spans:
        xs.append(xs[-1] + span.length)
    return tuple(xs)


def _frozen(values: Sequence[float] | np.ndarray) -> np.ndarray:
    out = np.array(values, dtype=float)
    out.setflags(write=False)
    return out


@dataclass(frozen=True, slots=True, eq=False)
class Geometry:
    """Positions along one beam (consistent length unit, read-only arrays).

    ``face_left`` and ``face_right`` are the span-local positions of the support
    faces: half the width of the support at each end from the joint (0 and the
    span's length for knife-edge supports).
    """

    joint_x: np.ndarray  # (n_spans + 1,): global position of each joint
    span_length: np.ndarray  # (n_spans,)
    face_left: np.ndarray  # (n_spans,): span-local position of the left support face
    face_right: np.ndarray  # (n_spans,): span-local position of the right support face

    @property
    def n_spans(self) -> int:
        """Number of spans."""
        return int(self.span_length.size)


def geometry_of(spans: Sequence[Span], supports: Sequence[Support]) -> Geometry:
    """The :class:`Geometry` of a beam of ``spans`` on ``supports`` (one per joint)."""
    length = [s.length for s in spans]
    half_left = [supports[j].width / 2 for j in range(len(spans))]
    half_right = [supports[j + 1].width / 2 for j in range(len(spans))]
    return Geometry(
        joint_x=_frozen(joint_positions(spans)),
        span_length=_frozen(length),
        face_left=_frozen(np.minimum(half_left, length)),
        face_right=_frozen(np.maximum(np.subtract(length, half_right), 0.0)),
    )
