"""The solver's own arithmetic: element end forces carried to twice the working
precision against exact rational arithmetic (Python's ``fractions``), and the plain
float64 formula against the same, so that the more accurate path is shown to be needed
and correct; the banded Cholesky against LAPACK's.  The algebra is the Euler-Bernoulli
element's slope-deflection equations (common practice): M1 = EI/l (4 phi1 + 2 phi2),
M2 = EI/l (2 phi1 + 4 phi2), V = (M1 + M2)/l, phi = theta - (v2 - v1)/l."""

from __future__ import annotations

from fractions import Fraction

import numpy as np
import pytest

from envelope.banded import NotPositiveDefinite, cholesky_upper, solve_upper
from envelope.solver import element_end_forces, element_end_forces_exact

from beams import beam_text
from tolerances import REARRANGED, ROUND_OFF, SAME_ALGORITHM, ULPS


def _exact(length: float, EI: float, de: np.ndarray) -> list[float]:
    """The four end forces of one element, one unit case, in exact arithmetic."""
    l, k = Fraction(length), Fraction(EI)  # noqa: E741
    v1, t1, v2, t2 = (Fraction(float(x)) for x in de)
    psi = (v2 - v1) / l
    m1 = k / l * (4 * (t1 - psi) + 2 * (t2 - psi))
    m2 = k / l * (2 * (t1 - psi) + 4 * (t2 - psi))
    v = (m1 + m2) / l
    return [float(v), float(m1), float(-v), float(m2)]


def _deformations(rng: np.random.Generator, length: float, n: int) -> np.ndarray:
    """Deformations of a short element inside a bending beam: large rigid-body motion
    (deflection ~1e-3, rotation ~1e-4) and a small relative part."""
    v1 = rng.uniform(-1e-3, 1e-3, n)
    t1 = rng.uniform(-1e-4, 1e-4, n)
    t2 = t1 + rng.uniform(-1e-9, 1e-9, n)
    v2 = v1 + length * (t1 + t2) / 2 + rng.uniform(-1e-13, 1e-13, n)
    return np.stack([v1, t1, v2, t2])[None]  # (1, 4, n)


@pytest.mark.parametrize("length", [0.025, 0.005, 0.5, 7.3])
def test_exact_end_forces_agree_with_rational_arithmetic(length: float) -> None:
    rng = np.random.default_rng(int(length * 1000))
    EI = 6.0e4
    de = _deformations(rng, length, 50)
    got = element_end_forces_exact(np.array([length]), np.array([EI]), de)[0]
    for u in range(de.shape[2]):
        want = _exact(length, EI, de[0, :, u])
        for i in range(4):
            # rounded a few times at the end (EI / l^3 and the product): a few ulps
            assert abs(got[i, u] - want[i]) <= 4e-15 * abs(want[i]), (i, u)


def test_plain_end_forces_lose_digits_on_a_short_element() -> None:
    """The reason for the exact path: on a 5 mm element the plain formula's shear is
    wrong by more than the engine's 1e-9 tolerance for some of these deformations
    (float64 keeps the deflections to ~1e-19 absolute; the shear needs their chord to
    ~1e-22 over l^3)."""
    rng = np.random.default_rng(5)
    length, EI = 0.005, 6.0e4
    de = _deformations(rng, length, 50)
    plain = element_end_forces(np.array([length]), np.array([EI]), de)[0]
    worst = max(abs(plain[0, u] - s) / abs(s)
                for u in range(de.shape[2]) for s in [_exact(length, EI, de[0, :, u])[0]])
    assert worst > 1e-9


def test_exact_and_plain_end_forces_agree_on_ordinary_elements() -> None:
    rng = np.random.default_rng(3)
    n = 200
    length = rng.uniform(1.0, 12.0, 7)
    EI = rng.uniform(1e3, 1e6, 7)
    de = rng.uniform(-1e-2, 1e-2, (7, 4, n))
    a = element_end_forces_exact(length, EI, de)
    b = element_end_forces(length, EI, de)
    np.testing.assert_allclose(a, b, rtol=0, atol=REARRANGED * np.abs(b).max())


def _random_band(rng: np.random.Generator, n: int, u: int = 3) -> np.ndarray:
    """An SPD banded matrix in upper band storage (diagonally dominant, random)."""
    ab = rng.uniform(-1.0, 1.0, (u + 1, n))
    ab[u] = 2.0 * u + rng.uniform(0.5, 3.0, n)
    for r in range(u):  # entries above the top row of the matrix are unused
        ab[r, :u - r] = 0.0
    return ab


@pytest.mark.parametrize("n, m", [(1, 1), (4, 3), (9, 0), (57, 40), (400, 7)])
def test_banded_cholesky_equals_scipy(n: int, m: int) -> None:
    """The engine's banded Cholesky against LAPACK's (scipy.linalg.cholesky_banded and
    cho_solve_banded), factor and solve, to round-off."""
    scipy_linalg = pytest.importorskip("scipy.linalg")
    rng = np.random.default_rng(n * 100 + m)
    ab = _random_band(rng, n)
    b = rng.standard_normal((n, m))
    want_c = scipy_linalg.cholesky_banded(ab, lower=False)
    got_c = cholesky_upper(ab)
    np.testing.assert_allclose(got_c, want_c, rtol=0, atol=SAME_ALGORITHM * np.abs(want_c).max())
    want = scipy_linalg.cho_solve_banded((want_c, False), b)
    got = solve_upper(got_c, b)
    assert got.shape == want.shape
    if m:
        np.testing.assert_allclose(got, want, rtol=0, atol=ROUND_OFF * np.abs(want).max())
    v = solve_upper(got_c, b[:, 0]) if m else None
    if v is not None:
        np.testing.assert_allclose(v, got[:, 0], rtol=0, atol=ULPS * np.abs(want).max())


def test_banded_cholesky_refuses_a_singular_matrix() -> None:
    """Two free bodies joined by nothing: a zero pivot, reported (as LAPACK does)."""
    ab = np.zeros((4, 4))
    ab[3] = [1.0, 1.0, 0.0, 1.0]
    with pytest.raises(NotPositiveDefinite):
        cholesky_upper(ab)
    ab[3, 2] = -1.0
    with pytest.raises(NotPositiveDefinite):
        cholesky_upper(ab)


_SETTLED_HINGED = beam_text(
    [5.0, {"length": 4.0, "hinges": [{"at": 1.5}]}, 6.0],
    ["pinned", "pinned", {"type": "spring", "k_vertical": 2.0}, "fixed"],
    [{"case": "D", "type": "uniform", "spans": "all", "w": 2.0},
     {"case": "L", "type": "point", "spans": [1, 3], "P": 3.0, "at": 2.0},
     {"case": "L", "type": "moment", "spans": 2, "M": 1.5, "at": 0.5},
     {"case": "S", "type": "settlement", "support": 2, "delta": 0.01}],
    cases={"D": "dead", "L": "live", "S": "settlement"},
    combinations={"custom": [{"name": "U", "set": "strength",
                              "factors": {"D": 1.2, "L": 1.6, "S": 1.0}}]},
    patterning={"method": "segments", "segments": 3},
    top={"id": "blocks"})


@pytest.mark.parametrize("per_block", [1, 2, 5])
def test_solve_in_blocks_of_unit_cases_equals_one_solve_bit_for_bit(monkeypatch, per_block):
    """Solving the unit cases a few columns at a time (SOLVE_CHUNK_VALUES) gives the
    same arrays, bit for bit, as one solve of every column: the solve is column by
    column (a beam with a hinge, a spring, a fixed end and a settlement)."""
    from envelope import config
    from envelope.solved import solve_beam
    from tests.beams import parse_text

    beam = parse_text(_SETTLED_HINGED)
    whole = solve_beam(beam).solution
    monkeypatch.setattr(config, "SOLVE_CHUNK_VALUES", per_block * beam.n_spans)
    monkeypatch.setattr(config, "SOLVE_CHUNK_UNITS", 1)
    solved = solve_beam(beam)
    assert solved.unit_cases.n_units > per_block  # really in several blocks
    blocks = solved.solution
    for name in ("V0", "M0", "theta1", "v1", "reaction", "reaction_moment"):
        assert np.array_equal(getattr(blocks, name), getattr(whole, name)), name
    assert blocks.condition == whole.condition


def test_couples_that_cancel_pass_the_statics_check() -> None:
    # found by test_properties (hypothesis, a fresh install's seed): two opposite couples
    # in one element, a free end, a vertical spring and a rotational-only spring; the
    # unit case's reactions are zero in theory (statics) and 9e-28 / 5e-18 in round-off,
    # and the couples' element totals cancel (Ql = ml = 0), so its balance was measured
    # against the round-off reactions alone and a sound beam was refused ("statics check
    # failed for unit case 1"); the couples' fixed-end forces now set the scale
    from test_reference import BeamSpec, LoadSpec, SpanSpec, SupportSpec, beam_of

    from envelope.solved import solve_beam

    spans = [SpanSpec(2.62, {"I": 3.0e9}, [{"from": 0.393, "to": 0.8122, "I": 4.0e9}]),
             SpanSpec(6.19, {"I": 5.0e9}, [])]
    supports = [SupportSpec("free", {}), SupportSpec("spring", {"k_vertical": 20000.0}),
                SupportSpec("spring", {"k_vertical": 0.0, "k_rotation": 90000.0})]
    loads = [LoadSpec("A", "uniform", 1, {"w": 5.0}),
             LoadSpec("A", "moment", 1, {"M": -5.0, "at": 1.703}),
             LoadSpec("B", "moment", 1, {"M": 6.0, "at": 1.9912}),
             LoadSpec("B", "uniform", 2, {"w": -5.0, "start": 0.6809, "end": 4.4568}),
             LoadSpec("B", "moment", 1, {"M": -6.0, "at": 1.8864})]
    cases = {"A": {"kind": "dead"}, "B": {"kind": "dead"}}
    beam = beam_of(BeamSpec(spans, supports, cases, loads,
                            [("ALL", "strength", {"A": 1.0, "B": 1.0})]))
    solved = solve_beam(beam)
    reactions = solved.solution.reaction
    # each unit case in vertical equilibrium, to round-off of its loads
    assert np.all(np.isfinite(reactions))
