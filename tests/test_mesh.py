"""Elements of a beam (envelope.mesh): one prismatic element per stretch of constant
section, nodes left to right, and which element holds a point at a section change.

References: the element layout follows from the case's stretches (common practice:
a prismatic Euler-Bernoulli element per stretch of constant EI); positions are the
joint positions plus span-local coordinates.
"""

from __future__ import annotations

import numpy as np

from envelope.mesh import build_mesh, locate
from envelope.model import Beam

from beams import beam_text, parse_text


def _beam() -> Beam:
    spans = [
        {"length": 5.0, "sections": [{"from": 1.0, "to": 2.5, "I": "2 m^4"}]},
        8.0,
        {"length": 3.0, "sections": [{"from": 0.0, "to": 1.0, "I": "3 m^4"}]},
    ]
    return parse_text(beam_text(spans, ["pinned"] * 4,
                                [{"type": "uniform", "spans": "all", "w": 1.0}]))


def test_one_element_per_stretch_in_order() -> None:
    beam = _beam()
    mesh = build_mesh(beam)
    # span 1: [0,1] I=1, [1,2.5] I=2, [2.5,5] I=1; span 2 whole; span 3: [0,1] I=3, [1,3]
    assert mesh.n_elements == 6 and mesh.n_nodes == 7
    assert mesh.span.tolist() == [0, 0, 0, 1, 2, 2]
    assert mesh.start.tolist() == [0.0, 1.0, 2.5, 0.0, 0.0, 1.0]
    assert mesh.end.tolist() == [1.0, 2.5, 5.0, 8.0, 1.0, 3.0]
    assert mesh.EI.tolist() == [1.0, 2.0, 1.0, 1.0, 3.0, 1.0]
    assert mesh.span_first.tolist() == [0, 3, 4] and mesh.span_count.tolist() == [3, 1, 2]
    assert mesh.joint_node.tolist() == [0, 3, 4, 6]
    np.testing.assert_array_equal(mesh.length, mesh.end - mesh.start)


def test_global_positions_are_joint_positions_plus_local_ones() -> None:
    beam = _beam()
    mesh = build_mesh(beam)
    expected = beam.geometry.joint_x[mesh.span] + mesh.start
    np.testing.assert_array_equal(mesh.x0, expected)
    assert mesh.node_x[-1] == beam.geometry.joint_x[-1] == 16.0


def test_a_point_at_a_section_change_belongs_to_the_side_asked_for() -> None:
    mesh = build_mesh(_beam())
    span = np.array([0, 0, 0, 0, 2, 2])
    x = np.array([1.0, 1.0, 0.5, 5.0, 1.0, 3.0])
    right = np.array([True, False, True, False, False, False])
    # right-side limit at x = 1 takes the element starting there, left-side the one ending
    assert locate(mesh, span, x, right).tolist() == [1, 0, 0, 2, 4, 5]
