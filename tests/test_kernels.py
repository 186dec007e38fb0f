"""The numba kernel of the load terms against the numpy path it replaces for large
problems: the same numbers, to round-off, on every demo case and on random beams with
every load type (the numpy path is itself checked against closed forms, SymPy and the
slow reference)."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from test_reference import beam_of, random_spec

from envelope.casefile import load_case
from envelope.recovery import QUANTITIES, evaluate_some, make_points, stations
from envelope.solved import solve_beam

from tolerances import ROUND_OFF

REPO = Path(__file__).resolve().parents[1]
CASES = sorted((REPO / "cases").glob("*.toml"))


def _compare(beam, points=None) -> None:  # type: ignore[no-untyped-def]
    s = solve_beam(beam)
    pts = points if points is not None else stations(beam, s.mesh, s.unit_cases)
    fast = evaluate_some(s.mesh, s.unit_cases, s.solution, pts, QUANTITIES, kernel=True)
    plain = evaluate_some(s.mesh, s.unit_cases, s.solution, pts, QUANTITIES, kernel=False)
    for q in QUANTITIES:
        scale = max(float(np.abs(plain[q]).max()), 1e-300)
        np.testing.assert_allclose(fast[q], plain[q], rtol=0, atol=ROUND_OFF * scale, err_msg=q)


@pytest.mark.parametrize("case", CASES, ids=[c.stem for c in CASES])
def test_kernel_equals_numpy_on_the_demo_cases(case: Path) -> None:
    _compare(load_case(case))


@pytest.mark.parametrize("seed", range(4))
@pytest.mark.parametrize("method", ["none", "segments"])
def test_kernel_equals_numpy_on_random_beams(seed: int, method: str) -> None:
    beam = beam_of(random_spec(seed, method))
    _compare(beam)
    # both sides of every load position, where the step functions switch
    s = solve_beam(beam)
    e0 = s.mesh.start[s.unit_cases.item_elem]
    span = s.mesh.span[s.unit_cases.item_elem]
    x = np.clip(s.unit_cases.item_a + e0, 0.0, None)
    n = x.size
    _compare(beam, make_points(beam, np.r_[span, span], np.r_[x, x],
                               np.r_[np.zeros(n, bool), np.ones(n, bool)]))
