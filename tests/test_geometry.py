"""Joint positions, span lengths and support faces (envelope.geometry), worked out once.

References: a joint's position is the sum of the span lengths to its left, and a
support face lies half the support's width from the joint centreline (common
practice; the case-format contract defines ``width`` as the full bearing width).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from envelope.geometry import geometry_of, joint_positions
from envelope.model import Beam

from beams import beam_text, parse_text, solve_text


def _beam() -> Beam:
    return parse_text(beam_text(
        [6.0, 7.5, 2.25],
        [{"type": "pinned", "width": 0.3}, {"type": "fixed", "width": 0.5},
         {"type": "pinned"}, "free"],
        [{"type": "uniform", "spans": "all", "w": 1.0}]))


def test_joints_are_the_running_sum_of_span_lengths() -> None:
    beam = _beam()
    g = beam.geometry
    assert g.joint_x.tolist() == [0.0, 6.0, 13.5, 15.75]
    assert g.span_length.tolist() == [6.0, 7.5, 2.25]
    assert math.fsum(g.span_length) == g.joint_x[-1] == beam.length
    assert beam.joint_x == tuple(g.joint_x.tolist()) == joint_positions(beam.spans)


def test_support_faces_are_half_a_width_from_the_joint() -> None:
    g = _beam().geometry
    # span 1: 0.3 m support at the left (face at 0.15), 0.5 m at the right (6 - 0.25)
    assert g.face_left.tolist() == [0.15, 0.25, 0.0]
    assert g.face_right.tolist() == [5.75, 7.5, 2.25]


def test_geometry_is_read_only_and_carried_by_the_solution() -> None:
    solved = solve_text(beam_text([4.0, 4.0], ["pinned", "pinned", "pinned"],
                                  [{"type": "uniform", "spans": "all", "w": 2.0}]))
    assert solved.geometry is solved.beam.geometry
    with pytest.raises(ValueError):
        solved.geometry.joint_x[0] = 1.0
    # the mesh's joint nodes sit exactly at the geometry's joints
    assert np.array_equal(solved.mesh.node_x[solved.mesh.joint_node], solved.geometry.joint_x)


def test_geometry_of_spans_and_supports_alone() -> None:
    beam = _beam()
    g = geometry_of(beam.spans, beam.supports)
    assert g.n_spans == 3
    for name in ("joint_x", "span_length", "face_left", "face_right"):
        assert np.array_equal(getattr(g, name), getattr(beam.geometry, name))
