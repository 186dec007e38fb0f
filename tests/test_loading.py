"""Cells and unit cases (envelope.loading): every load item cut at element and cell
boundaries, with nothing lost.

References (statics, common practice): the pieces of a distributed load carry the
same total force and the same first moment as the load itself, a linear load's total
is (w1 + w2) / 2 times its length, its centroid is at (w1 + 2 w2) / (3 (w1 + w2)) of
the length from its start; self weight is A times the unit weight per length.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from envelope.loading import DISTRIBUTED, POINT, UnitCases, build_cells, build_unit_cases
from envelope.mesh import build_mesh
from envelope.model import Beam

from beams import beam_text, parse_text
from tolerances import LONG_SUM


def _segments_beam(extra: str = "") -> Beam:
    text = beam_text(
        [{"length": 6.0, "sections": [{"from": 2.0, "to": 3.5, "I": "2 m^4"}]}, 9.0],
        ["pinned", "pinned", "pinned"],
        [{"type": "linear", "spans": [1], "w_start": 2.0, "w_end": 5.0, "start": 0.5,
          "end": 5.5},
         {"type": "uniform", "spans": "all", "w": 1.5},
         {"type": "point", "spans": [2], "P": 7.0, "at": 4.5}])
    text += '\n[patterning]\nmethod = "segments"\nsegments = 3\n' + extra
    return parse_text(text)


def test_segments_cut_every_span_into_equal_cells() -> None:
    beam = _segments_beam()
    cells = build_cells(beam)
    assert cells.label == ("1.1", "1.2", "1.3", "2.1", "2.2", "2.3")
    assert cells.start.tolist() == [0.0, 2.0, 4.0, 0.0, 3.0, 6.0]
    assert cells.end.tolist() == [2.0, 4.0, 6.0, 3.0, 6.0, 9.0]


def _pieces(beam: Beam) -> tuple[UnitCases, np.ndarray]:
    mesh = build_mesh(beam)
    units = build_unit_cases(beam, mesh, build_cells(beam))
    x0 = beam.geometry.joint_x[mesh.span[units.item_elem]] + mesh.start[units.item_elem]
    return units, x0


def test_distributed_pieces_keep_the_total_and_the_first_moment() -> None:
    beam = _segments_beam()
    units, x0 = _pieces(beam)
    dist = units.item_kind == DISTRIBUTED
    a, b = units.item_a[dist] + x0[dist], units.item_b[dist] + x0[dist]
    wa, wb = units.item_wa[dist], units.item_wb[dist]
    force = (wa + wb) / 2 * (b - a)
    moment = (b - a) * (wa * (2 * a + b) + wb * (a + 2 * b)) / 6  # trapezoid about x = 0
    # the linear load: (2 + 5)/2 * 5 = 17.5 at 0.5 + 5 (2 + 10)/(3 * 7); uniform 1.5 * 15
    total = 17.5 + 1.5 * 15.0
    first = 17.5 * (0.5 + 5.0 * 12.0 / 21.0) + 1.5 * 15.0 * 7.5
    assert math.fsum(force) == pytest.approx(total, rel=LONG_SUM)
    assert math.fsum(moment) == pytest.approx(first, rel=LONG_SUM)
    # no piece crosses an element or a cell boundary
    cuts = np.array([0.0, 2.0, 3.5, 4.0, 6.0, 9.0, 12.0, 15.0])
    for lo, hi in zip(a, b, strict=True):
        assert not np.any((cuts > lo + 1e-12) & (cuts < hi - 1e-12))


def test_a_point_load_is_one_item_in_its_element_and_cell() -> None:
    beam = _segments_beam()
    units, x0 = _pieces(beam)
    point = np.flatnonzero(units.item_kind == POINT)
    assert point.size == 1
    i = point[0]
    assert units.item_p[i] == 7.0 and units.item_a[i] + x0[i] == 6.0 + 4.5
    assert units.cell[units.item_unit[i]] == 4  # cell "2.2" holds 3 <= 4.5 < 6


def test_self_weight_is_area_times_unit_weight_on_each_stretch() -> None:
    text = beam_text([{"length": 4.0, "sections": [{"from": 1.0, "to": 3.0,
                                                    "A": "0.5 m^2"}]}],
                     ["pinned", "pinned"], [{"type": "self_weight", "spans": "all"}],
                     section={"E": "1 kN/m^2", "I": "1 m^4", "A": "0.2 m^2",
                              "unit_weight": "25 kN/m^3"})
    units, x0 = _pieces(parse_text(text))
    w = sorted(zip((units.item_a + x0).tolist(), units.item_wa.tolist(),
                   units.item_wb.tolist(), strict=True))
    assert w == [(0.0, 5.0, 5.0), (1.0, 12.5, 12.5), (3.0, 5.0, 5.0)]
