"""Influence lines and the worst position of moving loads.

References: closed forms for a simple span (common practice: the moment influence line
at a is xi (L - a) / L left of a; a load P at midspan gives PL/4; a pair of loads P at
spacing s gives the largest moment P (L - s/2)^2 / (2L) under the load nearer midspan
when s < 0.586 L), the slow reference solver of tests/reference.py for loads at
arbitrary positions, and a brute-force sweep of the load over a fine grid, which may
only fall short of the exact worst position, and only by a little.
"""

from __future__ import annotations

import numpy as np
import pytest

from envelope.influence import influence_lines, train_worst
from envelope.mesh import build_mesh
from envelope.recovery import make_points, stations

import reference as ref
from beams import beam_text, parse_text
from tolerances import SMALL_SOLVE

#: Cubic fits from four exact samples and closed-form maxima: agreement to round-off,
#: relative to the largest value of the line.
FIT_RTOL = 1e-9
#: A load item so the case files are complete; influence lines do not read loads.
DEAD = {"type": "uniform", "spans": "all", "w": 1.0}


def _simple(length: float = 8.0):  # type: ignore[no-untyped-def]
    return parse_text(beam_text([length], ["pinned", "pinned"], [DEAD]))


def _continuous():  # type: ignore[no-untyped-def]
    """Three spans, a stiffer stretch in span 2, a spring at joint 3, a cantilever."""
    spans = [5.0, {"length": 7.0, "sections": [{"from": 2.0, "to": 4.5, "I": "3 m^4"}]},
             6.0, 2.0]
    supports = ["pinned", "pinned", {"type": "spring", "k_vertical": 0.5}, "pinned", "free"]
    return parse_text(beam_text(spans, supports, [DEAD]))


def test_simple_span_moment_line_is_the_closed_form() -> None:
    L, a = 8.0, 3.0
    beam = _simple(L)
    lines = influence_lines(beam, make_points(beam, np.array([0]), np.array([a])))
    xi = np.linspace(0.0, L, 41)
    want = np.where(xi <= a, xi * (L - a) / L, a * (L - xi) / L)
    assert lines.values("moment", xi)[0] == pytest.approx(want, abs=FIT_RTOL * L)
    # reactions: R1 = (L - xi) / L, R2 = xi / L
    r = lines.values("reaction", xi)
    assert r[0] == pytest.approx((L - xi) / L, abs=FIT_RTOL)
    assert r[1] == pytest.approx(xi / L, abs=FIT_RTOL)


@pytest.mark.parametrize("asked", [("moment",), ("deflection", "shear"), ("rotation",)])
def test_lines_of_some_quantities_are_those_of_all_bit_for_bit(asked: tuple[str, ...]
                                                               ) -> None:
    # only the quantities asked for are evaluated and fitted; each is the same line as
    # from the call that makes all four, and the reactions too
    beam = _continuous()
    pts = make_points(beam, np.array([0, 1, 1, 2, 3]), np.array([2.0, 0.0, 3.3, 6.0, 1.0]),
                      np.array([True, True, True, False, True]))
    every = influence_lines(beam, pts)
    some = influence_lines(beam, pts, asked)
    assert set(some.coef) == set(asked)
    for q in asked:
        np.testing.assert_array_equal(some.coef[q], every.coef[q])
    np.testing.assert_array_equal(some.reaction, every.reaction)
    np.testing.assert_array_equal(some.bounds, every.bounds)


def test_point_load_worst_position_gives_pl_over_4_at_midspan() -> None:
    L, P = 8.0, 9.0
    beam = _simple(L)
    lines = influence_lines(beam, make_points(beam, np.array([0]), np.array([L / 2])))
    worst = train_worst(lines, "moment", np.array([P]), np.array([0.0]))
    assert worst.max[0] == pytest.approx(P * L / 4, rel=FIT_RTOL)
    assert worst.x_max[0] == pytest.approx(L / 2, rel=FIT_RTOL)
    assert worst.min[0] == 0.0  # a downward load never hogs a simple span


def test_two_axles_give_the_closed_form_absolute_maximum() -> None:
    """Two loads P at spacing s on a simple span: the largest moment anywhere is
    P (L - s/2)^2 / (2L) under one load, with the span's centre midway between that
    load and the resultant (common practice, valid for s < 0.586 L)."""
    L, P, s = 10.0, 20.0, 2.0
    beam = _simple(L)
    x_crit = L / 2 - s / 4  # the load position of the absolute maximum
    lines = influence_lines(beam, make_points(beam, np.array([0, 0]), np.array([x_crit, L / 2])))
    worst = train_worst(lines, "moment", np.array([P, P]), np.array([0.0, s]))
    want = P * (L - s / 2) ** 2 / (2 * L)
    assert worst.max[0] == pytest.approx(want, rel=FIT_RTOL)
    assert worst.max[1] < want  # at midspan itself it is less
    assert worst.max[1] == pytest.approx(P * L / 4 + P * (L / 2 - s) / 2, rel=FIT_RTOL)


def test_influence_values_match_the_reference_solver_at_arbitrary_positions() -> None:
    beam = _continuous()
    pts = stations(beam, build_mesh(beam), _no_units(beam))
    lines = influence_lines(beam, pts)
    rng = np.random.default_rng(7)
    xi = np.sort(rng.uniform(0.0, beam.length, 12))
    loaded = parse_text(_point_loads_text(beam, xi))
    points = list(zip(pts.span.tolist(), pts.x_span.tolist(), pts.right.tolist(),
                      strict=True))
    want = ref.case_table(loaded, points)
    for q in ("shear", "moment", "rotation", "deflection"):
        got = lines.values(q, xi)
        scale = float(np.abs(want[q]).max())
        assert np.abs(got - want[q]).max() <= FIT_RTOL * scale, q
    got_r = lines.values("reaction", xi)
    assert np.abs(got_r - want["reaction"]).max() <= FIT_RTOL * np.abs(want["reaction"]).max()


def _no_units(beam):  # type: ignore[no-untyped-def]
    from envelope.loading import build_cells, build_unit_cases

    return build_unit_cases(beam, build_mesh(beam), build_cells(beam))


def _point_loads_text(beam, xi: np.ndarray) -> str:  # type: ignore[no-untyped-def]
    """The continuous beam with one case per position: a unit point load there."""
    joint_x = np.asarray(beam.joint_x)
    loads, cases = [], {}
    for k, x in enumerate(xi):
        j = int(np.searchsorted(joint_x, x, side="right") - 1)
        j = min(j, beam.n_spans - 1)
        cases[f"P{k}"] = "dead"
        loads.append({"case": f"P{k}", "type": "point", "spans": j + 1, "P": 1.0,
                      "at": float(x - joint_x[j])})
    spans = [5.0, {"length": 7.0, "sections": [{"from": 2.0, "to": 4.5, "I": "3 m^4"}]},
             6.0, 2.0]
    supports = ["pinned", "pinned", {"type": "spring", "k_vertical": 0.5}, "pinned", "free"]
    return beam_text(spans, supports, loads, cases=cases)


@pytest.mark.parametrize(("loads", "offsets", "spans"), [
    ([7.0], [0.0], None),                       # a concentrated load anywhere
    ([7.0], [0.0], [1]),                        # only on span 2
    ([30.0, 30.0, 12.0], [0.0, 1.8, 4.0], None),  # an axle group, both ways
])
def test_worst_position_bounds_a_fine_sweep(loads: list[float], offsets: list[float],
                                            spans: list[int] | None) -> None:
    """Brute force: the train's reference load stepped over a fine grid, the response
    summed from the exact influence values of each load.  The sweep can only be lower
    than the exact worst position, and is close to it."""
    beam = _continuous()
    pts = stations(beam, build_mesh(beam), _no_units(beam))
    lines = influence_lines(beam, pts)
    p, o = np.array(loads), np.array(offsets)
    allowed = (np.ones(lines.n_pieces, dtype=bool) if spans is None
               else np.isin(lines.span, spans))
    for q in ("moment", "shear", "deflection", "reaction"):
        worst = train_worst(lines, q, p, o, None if spans is None else np.array(spans))
        # shifted by an irrational step so that no load lands exactly on a point or a
        # piece end, where a grid value would be a one-sided limit no train can reach
        grid = np.linspace(-o.max() - 1.0, beam.length + o.max() + 1.0, 30001) + np.sqrt(2) / 1e4
        rows = lines.values(q, np.zeros(1)).shape[0]
        sweep = np.zeros(rows)
        for direction in (1.0, -1.0) if p.size > 1 else (1.0,):
            total = np.zeros((rows, grid.size))
            for load, off in zip(p, o * direction, strict=True):
                at = grid + off
                on = (at >= 0.0) & (at <= beam.length)
                piece = np.clip(np.searchsorted(lines.bounds, at, side="right") - 1, 0,
                                lines.n_pieces - 1)
                ok = on & allowed[piece]
                total = total + load * np.where(ok, lines.values(q, np.clip(at, 0, beam.length)),
                                                0.0)
            sweep = np.maximum(sweep, np.max(total, axis=1))
        scale = max(float(np.abs(worst.max).max()), 1e-300)
        assert np.all(sweep <= worst.max + FIT_RTOL * scale), q
        assert np.all(worst.max - sweep <= 2e-3 * scale), q


def test_tabulated_shear_line_jumps_by_the_unit_load_at_the_point() -> None:
    """Simple span, shear right of a: -xi/L left of a, (L - xi)/L right of it
    (common practice); the table holds both sides of the jump, left piece first."""
    from envelope.influence import influence_at

    L, a = 8.0, 2.0
    beam = _simple(L)
    xi, lines = influence_at(beam, 0, a)
    at = np.flatnonzero(xi == a)
    assert lines["shear"][at].tolist() == pytest.approx([-a / L, (L - a) / L], abs=SMALL_SOLVE)
    want = np.where(xi < a, -xi / L, (L - xi) / L)
    off = xi != a
    assert lines["shear"][off] == pytest.approx(want[off], abs=FIT_RTOL)
    assert set(lines) == {"shear", "moment", "rotation", "deflection", "reaction_1",
                          "reaction_2"}


@pytest.mark.parametrize(("loads", "offsets"), [
    ([30.0, 30.0, 12.0], [0.0, 1.8, 4.0]),     # an axle group, both ways
    ([18.0, 8.0], [0.0, 1.4]),                 # two axles
])
def test_the_train_kernel_gives_the_numpy_extremes(monkeypatch: pytest.MonkeyPatch,
                                                   loads: list[float],
                                                   offsets: list[float]) -> None:
    """envelope._kernels.train_extremes against its reference, the numpy passes of
    _run_extremes: the same largest and least values to round-off and the same
    positions, every quantity and reaction, one-way and both ways, on all spans and on
    some."""
    from envelope import influence

    beam = _continuous()
    pts = stations(beam, build_mesh(beam), _no_units(beam))
    lines = influence_lines(beam, pts)
    p, o = np.array(loads), np.array(offsets)
    for spans in (None, np.array([1, 2])):
        for q in ("moment", "shear", "deflection", "rotation", "reaction"):
            got = {}
            for use in (False, True):
                monkeypatch.setattr(influence, "_use_kernel", lambda values, u=use: u)
                got[use] = train_worst(lines, q, p, o, spans)
            want, fast = got[False], got[True]
            scale = max(float(np.abs(want.max).max()), float(np.abs(want.min).max()))
            for field in ("max", "min"):
                assert np.allclose(getattr(fast, field), getattr(want, field), rtol=0.0,
                                   atol=1e-12 * scale), (q, field)
            if q in ("moment", "deflection", "rotation"):
                # continuous lines: the train placed at the kernel's position (positions
                # may differ from the reference's where the extreme ties) gives the value,
                # with a load exactly at an end of the beam on it or just off it (a
                # one-sided limit); a shear or reaction line jumps, so only its values
                allowed = (np.ones(lines.n_pieces, dtype=bool) if spans is None
                           else np.isin(lines.span, spans))
                for field in ("max", "min"):
                    x = getattr(fast, f"x_{field}")
                    sign = np.where(getattr(fast, f"reversed_{field}"), -1.0, 1.0)
                    inside, closed = np.zeros(x.size), np.zeros(x.size)
                    for load, off in zip(p, o, strict=True):
                        at = x + sign * off
                        piece = np.clip(np.searchsorted(lines.bounds, at, side="right") - 1,
                                        0, lines.n_pieces - 1)
                        value = load * np.diagonal(
                            lines.values(q, np.clip(at, 0.0, beam.length)))
                        on = allowed[piece]
                        inside += np.where(on & (at > 0.0) & (at < beam.length), value, 0.0)
                        closed += np.where(on & (at >= 0.0) & (at <= beam.length), value, 0.0)
                    worst = getattr(fast, field)
                    moved = np.abs(worst) > 1e-9 * scale  # else the load is absent
                    gap = np.minimum(np.abs(inside - worst), np.abs(closed - worst))
                    assert np.all(gap[moved] <= 1e-9 * scale), (q, field)
            # the direction may differ only where both directions reach the same value
            ways = [train_worst(lines, q, p, sign * o, spans, both_ways=False)
                    for sign in (1.0, -1.0)]
            for field in ("max", "min"):
                differ = getattr(fast, f"reversed_{field}") != getattr(want, f"reversed_{field}")
                tie = np.abs(getattr(ways[0], field) - getattr(ways[1], field))
                assert np.all(tie[differ] <= 1e-12 * scale), (q, field)
