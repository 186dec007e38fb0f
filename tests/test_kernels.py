"""The numba kernel of the load terms against the numpy path it replaces for large
problems: the same numbers, to round-off, on every demo case and on random beams with
every load type (the numpy path is itself checked against closed forms, SymPy and the
slow reference)."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from test_reference import beam_of, random_spec

from envelope import _kernels
from envelope.casefile import load_case
from envelope.recovery import QUANTITIES, evaluate_some, make_points, stations
from envelope.solved import solve_beam

from tolerances import LONG_SUM, ROUND_OFF

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


_DEMOS = sorted(p.name for p in (Path(__file__).resolve().parent.parent / "cases").glob("*.toml"))


@pytest.mark.parametrize("demo", _DEMOS)
def test_column_sums_kernel_matches_the_matrix_products(demo: str) -> None:
    """The enveloper's one-pass kernel (envelope._kernels.column_sums) against its numpy
    reference (three matrix products, envelope.enveloper.column_extremes): every
    column's largest and smallest value at every station of the demo beams, for each
    quantity and case set, to LONG_SUM of the sum of the magnitudes of its terms (the
    two sum the same products in different orders)."""
    from envelope.enveloper import column_extremes
    from envelope.recovery import evaluate, stations
    from envelope.solved import solve_beam

    beam = load_case(str(Path(__file__).resolve().parent.parent / "cases" / demo))
    solved = solve_beam(beam)
    pts = stations(beam, solved.mesh, solved.unit_cases)
    resp = evaluate(solved.mesh, solved.unit_cases, solved.solution, pts)
    checked = 0
    for name in ("strength", "service", "live"):
        cs = solved.case_set(name)
        if cs.is_empty:
            continue
        magnitude = np.abs(cs.fixed).sum(axis=1) + np.abs(cs.groups).sum(axis=1)
        if hasattr(cs, "patterned"):
            magnitude = magnitude + np.abs(cs.patterned).sum(axis=1)
            magnitude = magnitude + np.abs(cs.dead_var).sum(axis=1)
        for q in ("shear", "moment", "rotation", "deflection"):
            R = getattr(resp, q)
            scale = np.abs(R) @ magnitude + np.finfo(float).tiny
            ref = column_extremes(R, cs)
            got = column_extremes(R, cs, kernel=True)
            for a, b in zip(ref, got, strict=True):
                assert a.shape == b.shape
                assert np.all(np.abs(a - b) <= LONG_SUM * scale[:, None]), (name, q)
            checked += 1
    assert checked


def test_column_sums_kernel_sums_each_row_alone() -> None:
    """A row's sums do not depend on the other rows of the block: the kernel on every
    row at once equals, bit for bit, the kernel on each row by itself (the property
    that makes an envelope computed in blocks the same file)."""
    rng = np.random.default_rng(5)
    R = rng.normal(size=(7, 40))
    coef = rng.normal(size=(40, 6))
    shape = np.array([2, 2, 2], dtype=np.int64)
    whole = np.empty((7, 8))
    _kernels.column_sums(R, coef, shape, whole)
    for r in range(7):
        one = np.empty((1, 8))
        _kernels.column_sums(np.ascontiguousarray(R[r:r + 1]), coef, shape, one)
        assert np.array_equal(one[0], whole[r])
    # and they are the sums they claim: fixed, positive parts, negative parts, groups
    t = R[:, :, None] * coef[None, :, 2:4]
    expected = np.c_[R @ coef[:, :2], np.where(t > 0, t, 0).sum(axis=1),
                     np.where(t > 0, 0, t).sum(axis=1), R @ coef[:, 4:]]
    assert np.allclose(whole, expected, rtol=LONG_SUM, atol=LONG_SUM * np.abs(R).sum())


@pytest.mark.parametrize("path", CASES[:3], ids=lambda p: p.stem)
def test_fused_responses_and_load_term_kernel_agree(path: Path) -> None:
    """Both kernel paths of evaluate_some against each other and against numpy: the fused
    one (start state, load terms and signs in one pass, from the solution's packed
    states) and the load-term kernel used when a solution's states are its own arrays
    (as a redistributed solution's are)."""
    import dataclasses

    s = solve_beam(load_case(str(path)))
    assert s.solution.state is not None and s.solution.V0.base is s.solution.state
    pts = stations(s.beam, s.mesh, s.unit_cases)
    own = dataclasses.replace(s.solution, V0=s.solution.V0.copy())
    fused = evaluate_some(s.mesh, s.unit_cases, s.solution, pts, QUANTITIES, kernel=True)
    terms = evaluate_some(s.mesh, s.unit_cases, own, pts, QUANTITIES, kernel=True)
    plain = evaluate_some(s.mesh, s.unit_cases, s.solution, pts, QUANTITIES, kernel=False)
    some = evaluate_some(s.mesh, s.unit_cases, s.solution, pts, ("moment", "deflection"),
                         kernel=True)
    for q in QUANTITIES:
        scale = max(float(np.abs(plain[q]).max()), 1e-300)
        for got in (fused[q], terms[q]):
            np.testing.assert_allclose(got, plain[q], rtol=0, atol=1e-13 * scale, err_msg=q)
    assert set(some) == {"moment", "deflection"}
    assert np.array_equal(some["moment"], fused["moment"])
    assert np.array_equal(some["deflection"], fused["deflection"])
