"""Support settlement solved as a prescribed displacement (rigid supports) or a moved
spring base, checked against closed forms.

Two equal spans L on three rigid supports, the middle one settling delta: the beam bends
as under a point load at the middle of a 2L simple span that deflects it by delta,
P L^3 / (6 EI) = delta, so the middle reaction is -6 EI delta / L^3, the end reactions
3 EI delta / L^3 each and the moment over the middle support 3 EI delta / L^2 (sagging)
(common practice).
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from envelope.loading import build_cells, build_unit_cases
from envelope.mesh import build_mesh
from envelope.recovery import evaluate, make_points
from envelope.solver import solve

from beams import beam_text, parse_text

#: Exact linear algebra on a few elements.
RTOL = 1e-9
L, EI, DELTA = 6.0, 1.0, 0.01

UDL = {"type": "uniform", "spans": "all", "w": 1.0}


def _solve_settled(supports: list, settle: dict[int, float]):  # type: ignore[no-untyped-def]
    beam = parse_text(beam_text([L, L], supports, [UDL]))
    mesh = build_mesh(beam)
    units = build_unit_cases(beam, mesh, build_cells(beam))
    # one more unit case, with no load items and the given settlements
    n = units.n_units + 1
    settlement = np.zeros((3, n))
    for joint, delta in settle.items():
        settlement[joint, -1] = delta
    units = dataclasses.replace(units, case=np.append(units.case, 0),
                                cell=np.append(units.cell, 0), settlement=settlement)
    return beam, mesh, units, solve(mesh, beam.supports, units, "settle.toml")


def test_middle_support_settlement_matches_the_closed_form() -> None:
    beam, mesh, units, sol = _solve_settled(["pinned"] * 3, {1: DELTA})
    k = EI * DELTA / L**3
    assert sol.reaction[:, -1] == pytest.approx([3 * k, -6 * k, 3 * k], rel=RTOL)
    r = evaluate(mesh, units, sol, make_points(beam, np.array([0, 0]), np.array([L, L / 2])))
    assert r.moment[0, -1] == pytest.approx(3 * EI * DELTA / L**2, rel=RTOL)
    assert r.deflection[0, -1] == pytest.approx(DELTA, rel=RTOL)  # the support moved
    # the loaded unit cases are untouched by the settling one
    assert np.abs(sol.reaction[:, :-1]).sum() > 0


def test_settling_a_spring_moves_its_base() -> None:
    """A spring k at the middle: the base settles delta, the beam follows part way.  The
    beam's stiffness at the middle of the 2L span is 6 EI / L^3, in series with k: the
    spring force is k (v - (-delta)) with v = -delta * k / (k + 6 EI / L^3) upward."""
    kv = 0.02
    beam, mesh, units, sol = _solve_settled(
        ["pinned", {"type": "spring", "k_vertical": kv}, "pinned"], {1: DELTA})
    kb = 6 * EI / L**3
    v = DELTA * kv / (kv + kb)  # downward movement of the beam at the spring
    r = evaluate(mesh, units, sol, make_points(beam, np.array([0]), np.array([L])))
    assert r.deflection[0, -1] == pytest.approx(v, rel=RTOL)
    assert sol.reaction[1, -1] == pytest.approx(-kv * (DELTA - v), rel=RTOL)
    assert sol.reaction[:, -1].sum() == pytest.approx(0.0, abs=RTOL * kv * DELTA)
