"""Hogging design moments of a concrete beam by how it sits on each support.

``seat = "monolithic"`` (the default): the moment at the support face (ACI 318-19
9.4.2.1, EN 1992-1-1 5.3.2.2(3)), as :mod:`envelope.sizing.layout` takes it.
``seat = "bearing"`` (a wall or a bearing the beam rotates on): ACI 318-19 allows the
face moment only for members built integrally with their supports, so the centreline
moment is used; EN 1992-1-1 5.3.2.2(4) reduces the centreline moment by
Delta M = F_Ed,sup t / 8 (t the bearing width, F_Ed,sup the support reaction).  The
reduced moment M + R t / 8 is linear in the unit cases, so its envelope over the
strength set is exact (each arrangement with its own reaction).
"""

from __future__ import annotations

import dataclasses

import numpy as np

from envelope.analysis import Analysis
from envelope.enveloper import reduce
from envelope.recovery import evaluate_some, make_points
from envelope.sizing.layout import Rows


def seat_rows(analysis: Analysis, rows: Rows) -> tuple[Rows, list[tuple[int, str]]]:
    """``rows`` with the end moments of bearing supports replaced (see the module
    docstring), and a note per changed row."""
    beam = analysis.beam
    design = beam.design
    assert design is not None
    solved = analysis.solved
    n = beam.n_spans
    moment = rows.moment.copy()
    x_span = rows.x_span.copy()
    notes: list[tuple[int, str]] = []
    if solved.strength.is_empty:
        return rows, notes
    for j in range(n):
        for end, joint in (("left", j), ("right", j + 1)):
            sup = beam.supports[joint]
            if sup.seat != "bearing" or not sup.restrains_vertical:
                continue
            i = 3 * j + (0 if end == "left" else 2)
            x = 0.0 if end == "left" else beam.spans[j].length
            pts = make_points(beam, np.array([j]), np.array([x]),
                              np.array([end == "left"]))
            strength = solved.solution_for("strength")
            m_u = evaluate_some(solved.mesh, solved.unit_cases, strength, pts,
                                ("moment",))["moment"]
            if design.code == "en1992-1-1":
                r_u = strength.reaction[joint][None, :]
                reduced = m_u + r_u * sup.width / 8.0
                text = ("bearing support: centreline moment less F t/8 (EN 1992-1-1 "
                        "5.3.2.2(4))")
            else:
                reduced = m_u
                text = ("bearing support: centreline moment (ACI 318-19 9.4.2.1 takes the "
                        "face only for supports built integrally)")
            low = float(reduce(reduced, solved.strength, labels=False).min[0])
            moment[i] = min(low, 0.0)
            x_span[i] = x
            notes.append((i, text))
    return dataclasses.replace(rows, moment=moment, x_span=x_span), notes
