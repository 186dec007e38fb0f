"""The combined design search (envelope.actions) against the slow reference path.

The reference, tests/reference_actions.py, is the design search as it was before it was
combined: three separate searches (moment, service deflection, live deflection), each
step a full evaluation of every unit case.  The combined search contracts the governing
case once per bracket and evaluates every quantity in one step; its answers must equal
the reference's to round-off (1e-12 of the column's largest value in the beam), on the
invented beams of benchmarks/make_cases.py (every load type, patterning method and
combination set) and on the demo cases.  The grouped searches of envelope.search must
give each group the answer it gets alone, bit for bit; the contracted response must
equal the unit-case responses times the coefficients (superposition, round-off).
"""

from __future__ import annotations

import math
from pathlib import Path
from types import ModuleType

import numpy as np
import pytest
import reference_actions

from envelope.actions import _least_moment, design_actions, refine_max, refine_maxima
from envelope.analysis import analyse
from envelope.casefile import load_case
from envelope.contracted import contract, response
from envelope.recovery import combine, evaluate_combined, evaluate_some, make_points
from envelope.search import anderson_bjorck_root, golden_max, illinois_root
from envelope.solved import envelope_at, envelopes_at

from beams import beam_text, make_cases_module
from tolerances import LONG_SUM, ROUND_OFF

REPO = Path(__file__).resolve().parents[1]


def _make_cases() -> ModuleType:
    return make_cases_module()


@pytest.fixture(scope="module")
def generated(tmp_path_factory: pytest.TempPathFactory) -> list[Path]:
    folder = tmp_path_factory.mktemp("beams")
    _make_cases().make_cases(48, folder, seed=11)
    return sorted(folder.glob("*.toml"))


def _assert_same_actions(fast: dict[str, np.ndarray], slow: dict[str, np.ndarray],
                         where: str) -> None:
    assert fast.keys() == slow.keys()
    for key, want in slow.items():
        got = fast[key]
        if want.dtype == object:
            assert got.tolist() == want.tolist(), (where, key)
            continue
        assert np.array_equal(np.isnan(got), np.isnan(want)), (where, key)
        scale = float(np.nanmax(np.abs(want), initial=0.0))
        err = np.nanmax(np.abs(got - want), initial=0.0)
        # round-off (LONG_SUM) of the beam's largest value of the column
        assert err <= LONG_SUM * scale, (where, key, err, scale)


def _reference(a) -> dict[str, np.ndarray]:  # type: ignore[no-untyped-def]
    return reference_actions.design_actions(a.solved, a.stations, a.station_envelopes)


def test_combined_search_matches_the_three_separate_searches(generated: list[Path]) -> None:
    for path in generated:
        a = analyse(load_case(path))
        _assert_same_actions(a.design_actions, _reference(a), path.name)


def test_combined_search_matches_the_reference_on_the_demo_cases() -> None:
    for path in sorted((REPO / "cases").glob("*.toml")):
        a = analyse(load_case(path))
        _assert_same_actions(a.design_actions, _reference(a), path.name)


def test_combined_search_matches_the_reference_with_redistributed_moments(
        generated: list[Path]) -> None:
    # the strength set reads the redistributed solution, the service sets the elastic one
    tried = 0
    for path in generated[:20]:
        a = analyse(load_case(path))
        n = len(a.beam.supports)
        if n < 3:
            continue
        fraction = np.zeros(n)
        fraction[1:-1] = 0.15
        s = a.solved.redistributed(fraction)
        env = envelopes_at(s, a.stations, {"moment": "strength", "shear": "strength",
                                           "deflection": "service"})
        _assert_same_actions(design_actions(s, a.stations, env),
                             reference_actions.design_actions(s, a.stations, env), path.name)
        tried += 1
    assert tried >= 5


def test_one_request_alone_and_among_others_gives_the_same_maxima(
        generated: list[Path]) -> None:
    for path in generated[:16]:
        a = analyse(load_case(path))
        env = a.station_envelopes
        moment, deflection = env["moment"], env["deflection"]
        assert moment is not None and deflection is not None
        both = refine_maxima(a.solved, a.stations, [(moment.max, "moment", None),
                                                    (deflection.max, "deflection", None)])
        for (value, x), (env_max, q) in zip(both, ((moment.max, "moment"),
                                                  (deflection.max, "deflection")),
                                            strict=True):
            alone_value, alone_x = refine_max(a.solved, a.stations, env_max, q)
            scale = float(np.abs(env_max).max())
            np.testing.assert_allclose(value, alone_value, rtol=0, atol=LONG_SUM * scale)
            length = a.beam.geometry.span_length
            np.testing.assert_allclose(x, alone_x, rtol=0,
                                       atol=LONG_SUM * float(np.max(length)))


def test_design_actions_takes_the_station_envelopes_as_before(generated: list[Path]) -> None:
    a = analyse(load_case(generated[0]))
    again = design_actions(a.solved, a.stations, a.station_envelopes)
    for key, col in a.design_actions.items():
        assert np.array_equal(col, again[key]) or (
            col.dtype != object and np.array_equal(np.isnan(col), np.isnan(again[key])))


def test_contracted_response_is_the_unit_responses_times_the_coefficients(
        generated: list[Path]) -> None:
    rng = np.random.default_rng(3)
    for path in generated[:12]:
        s = analyse(load_case(path)).solved
        n = 40
        span = rng.integers(0, s.beam.n_spans, n)
        x = rng.random(n) * np.asarray(s.beam.geometry.span_length)[span]
        right = rng.random(n) < 0.5
        pts = make_points(s.beam, span, x, right)
        coef = rng.normal(size=(n, s.unit_cases.n_units))
        names = ("shear", "moment", "rotation", "deflection")
        unit = evaluate_some(s.mesh, s.unit_cases, s.solution, pts, names)
        comb = evaluate_combined(s.mesh, s.unit_cases, combine(s.unit_cases, s.solution, coef),
                                 pts, np.arange(n), names)
        for q in names:
            want = np.einsum("iu,iu->i", unit[q], coef)
            scale = np.abs(unit[q]).max() * np.abs(coef).sum(axis=1).max()
            np.testing.assert_allclose(comb[q], want, rtol=0, atol=LONG_SUM * scale)


def test_case_contracted_on_its_span_equals_the_case_contracted_on_the_whole_beam(
        generated: list[Path]) -> None:
    # envelope.contracted (the search's steps) against envelope.recovery.evaluate_combined
    # (every element's state, every item): the same response of the same combined case
    rng = np.random.default_rng(5)
    several = 0
    for path in generated[:24]:
        s = analyse(load_case(path)).solved
        several += int(s.mesh.span_count.max() > 1)
        n = 60
        span = rng.integers(0, s.beam.n_spans, n)
        length = np.asarray(s.beam.geometry.span_length)[span]
        x = rng.random(n) * length
        x[:6] = [0.0, 0.0, length[2], length[3], x[4], x[4]]  # ends; both sides of a point
        right = rng.random(n) < 0.5
        coef = rng.normal(size=(n, s.unit_cases.n_units))
        coef[:, rng.random(s.unit_cases.n_units) < 0.3] = 0.0  # cases not loaded
        pts = make_points(s.beam, span, x, right)
        names = ("shear", "moment", "rotation", "deflection")
        want = evaluate_combined(s.mesh, s.unit_cases, combine(s.unit_cases, s.solution, coef),
                                 pts, np.arange(n), names)
        sc = contract(s.mesh, s.unit_cases, [(s.solution, np.arange(n))], span, coef)
        for q, defl, slope in (("shear", False, True), ("rotation", True, True),
                               ("moment", False, False), ("deflection", True, False)):
            got = response(sc, x, np.full(n, defl), slope, right)
            scale = np.abs(want[q]).max()
            np.testing.assert_allclose(got, want[q], rtol=0, atol=LONG_SUM * scale,
                                       err_msg=f"{path.name} {q}")
            # a finished bracket (NaN position) gives NaN and leaves the others alone
            x_nan = np.where(np.arange(n) % 7 == 0, np.nan, x)
            got_nan = response(sc, x_nan, np.full(n, defl), slope, right)
            assert np.all(np.isnan(got_nan[::7]))
            keep = np.arange(n) % 7 != 0
            assert np.array_equal(got_nan[keep], got[keep])
    assert several  # some beams have spans of several elements (stretches, hinges)


def test_least_face_moment_is_the_envelope_minimum_bit_for_bit(generated: list[Path]) -> None:
    # the negated maximum of the negated responses: negation is exact in every product
    # and sum, so the same numbers as the full envelope's minimum
    for path in generated[:16]:
        a = analyse(load_case(path))
        env = envelope_at(a.solved, a.stations, "moment", labels=False)
        if env is None:
            continue
        assert np.array_equal(_least_moment(a.solved, a.stations), env.min), path.name


def _peaks(x: np.ndarray, centre: np.ndarray) -> np.ndarray:
    return -np.abs(x - centre) ** 1.5


def test_grouped_golden_search_gives_each_group_its_own_answer() -> None:
    a = np.array([0.0, 1.0, -3.0, 2.0, 0.5])
    b = np.array([1.0, 4.0, 5.0, 2.5, 0.7])
    centre = np.array([0.3, 2.9, 1.1, 2.2, 0.61])
    xtol = np.array([1e-9, 1e-3, 1e-6, 1e-12, 1e-5])
    group = np.array([0, 1, 1, 2, 0])

    def f_of(c: np.ndarray):  # type: ignore[no-untyped-def]
        return lambda x: _peaks(x, np.resize(c, x.size))

    x, v = golden_max(f_of(centre), a, b, xtol, group=group)
    for g in range(3):
        mine = group == g
        xg, vg = golden_max(f_of(centre[mine]), a[mine], b[mine], xtol[mine])
        assert np.array_equal(x[mine], xg) and np.array_equal(v[mine], vg)
    assert np.all(np.abs(x - centre) < 1e-2)


def test_grouped_root_search_gives_each_group_its_own_answer() -> None:
    lo = np.array([0.5, 4.0, 0.0, 0.1])
    hi = np.array([2.5, 5.0, 3.0, 1.0])
    shift = np.array([0.0, math.pi, 0.0, 0.0])
    power = np.array([1.0, 1.0, 3.0, 1.0])
    group = np.array([0, 1, 1, 0])
    active = np.array([True, True, True, False])

    def f_of(sh: np.ndarray, pw: np.ndarray):  # type: ignore[no-untyped-def]
        def f(x: np.ndarray) -> np.ndarray:
            return np.where(pw == 1.0, np.cos(x - sh), 2.0 - x ** pw)
        return f

    f = f_of(shift, power)
    start = (lo + hi) / 2
    xtol = np.full(4, 1e-15)
    root = illinois_root(f, lo, hi, f(lo), f(hi), start, active, xtol, group=group)
    for g in range(2):
        m = group == g
        fg = f_of(shift[m], power[m])
        alone = illinois_root(fg, lo[m], hi[m], fg(lo[m]), fg(hi[m]), start[m], active[m],
                              xtol[m])
        assert np.array_equal(root[m], alone)
    np.testing.assert_allclose(root[:3], [math.pi / 2, 3 * math.pi / 2, 2.0 ** (1 / 3)],
                               rtol=4e-16, atol=0)
    assert root[3] == start[3]


def _slope(centre: np.ndarray, power: np.ndarray):  # type: ignore[no-untyped-def]
    """Per bracket, of the distance d to ``centre`` (a simple root there, positive left of
    it): d (power 1), d^3 + d / 10 (power 2), exp(d) - 1 (power 3)."""
    def f(x: np.ndarray) -> np.ndarray:
        d = centre - x
        return np.where(power == 1.0, d, np.where(power == 2.0, d ** 3 + 0.1 * d,
                                                  np.expm1(d)))
    return f


@pytest.mark.parametrize("n", [5, 40, 200])
def test_anderson_bjorck_root_finds_the_roots_with_its_python_and_array_steps(
        n: int, monkeypatch: pytest.MonkeyPatch) -> None:
    """The design search's root (Anderson-Bjorck regula falsi): the same root as the
    Illinois reference to round-off, each group's answer as if alone, and the same numbers
    bit for bit whether a step's bookkeeping is in Python floats or in arrays."""
    rng = np.random.default_rng(n)
    centre = rng.uniform(0.5, 4.5, n)
    power = rng.choice([1.0, 2.0, 3.0], n)
    lo = centre - rng.uniform(0.01, 2.0, n)
    hi = centre + rng.uniform(0.01, 2.0, n)
    active = rng.random(n) < 0.85
    start = (lo + hi) / 2
    group = rng.integers(0, 3, n)
    xtol = 4 * np.finfo(float).eps * np.maximum(hi, 1.0)
    f = _slope(centre, power)
    args = (lo, hi, f(lo), f(hi), start, active, xtol)
    root = anderson_bjorck_root(f, *args, group=group)
    ref = illinois_root(f, *args, group=group)
    np.testing.assert_allclose(root[active], centre[active], rtol=0, atol=1e-13)
    np.testing.assert_allclose(root, ref, rtol=0, atol=1e-13)
    assert np.array_equal(root[~active], start[~active])
    for g in range(3):
        m = group == g
        alone = anderson_bjorck_root(_slope(centre[m], power[m]), *(v[m] for v in args))
        assert np.array_equal(root[m], alone)
    for limit in (0, 10_000):  # every step in arrays, then every step in Python floats
        monkeypatch.setattr("envelope.config.ROOT_SCALAR_BRACKETS", limit)
        assert np.array_equal(anderson_bjorck_root(f, *args, group=group), root)
        np.testing.assert_allclose(anderson_bjorck_root(f, *args), root, rtol=0, atol=1e-13)


def test_anderson_bjorck_root_reaches_a_value_of_exactly_zero() -> None:
    """A slope that is exactly 0 at a regula falsi point (a line through the origin):
    the root is that point, with no division by zero in the Python-float steps."""
    lo, hi = np.array([-1.0, -3.0]), np.array([1.0, 1.0])

    def f(x: np.ndarray) -> np.ndarray:
        return -x

    root = anderson_bjorck_root(f, lo, hi, f(lo), f(hi), np.zeros(2), np.ones(2, bool),
                                np.full(2, 1e-15))
    assert np.all(root == 0.0)


def test_design_actions_without_the_one_block_matches_the_reference(
        generated: list[Path], monkeypatch: pytest.MonkeyPatch) -> None:
    """Where the stations do not fit one block (here the block made one row), the search
    evaluates the live envelope, the governing cases and the faces on its own: the same
    answers as the reference, and as with the block, to round-off."""
    for path in generated[:12]:
        a = analyse(load_case(path))
        with_block = a.design_actions
        monkeypatch.setattr("envelope.config.STATION_CHUNK_ROWS", 1)
        without = design_actions(a.solved, a.stations, a.station_envelopes)
        monkeypatch.undo()
        _assert_same_actions(without, _reference(a), path.name)
        _assert_same_actions(without, with_block, path.name)


def test_slope_roots_by_quartics_match_the_regula_falsi_on_the_slopes(
        generated: list[Path], monkeypatch: pytest.MonkeyPatch) -> None:
    """The slope roots from five values of each bracket's slope (a quartic between
    stations) against Anderson-Bjorck regula falsi on the contracted slope itself, every
    bracket taken as if a break lay inside it: the same answers to round-off."""
    import envelope.actions

    for path in generated[:16]:
        a = analyse(load_case(path))
        monkeypatch.setattr(envelope.actions, "breaks_inside",
                            lambda breaks, lo, hi: np.ones(lo.size, dtype=bool))
        slow = design_actions(a.solved, a.stations, a.station_envelopes)
        monkeypatch.undo()
        _assert_same_actions(a.design_actions, slow, path.name)


def test_slopes_from_the_unit_cases_match_the_contracted_slopes(
        generated: list[Path], monkeypatch: pytest.MonkeyPatch) -> None:
    """A small beam's slope values for the roots from every unit case's slope times the
    governing coefficients, against the case contracted on its span (a long beam's way):
    the same answers to round-off, also with a redistributed strength solution (two
    solutions, one evaluation each)."""
    import envelope.actions

    for path in generated[:16]:
        a = analyse(load_case(path))
        variants = [(a.solved, a.station_envelopes)]
        n = len(a.beam.supports)
        if n >= 3:
            fraction = np.zeros(n)
            fraction[1:-1] = 0.15
            s = a.solved.redistributed(fraction)
            variants.append((s, envelopes_at(s, a.stations, {
                "moment": "strength", "shear": "strength", "deflection": "service"})))
        for solved, env in variants:
            fast = design_actions(solved, a.stations, env)
            monkeypatch.setattr(envelope.actions, "_by_units", lambda n_points, n_units: False)
            slow = design_actions(solved, a.stations, env)
            monkeypatch.undo()
            _assert_same_actions(fast, slow, path.name)


def test_span_breaks_are_the_element_starts_and_the_load_items_ends() -> None:
    """Per span, the breaks are the starts of its later elements, both ends of its
    distributed items and the positions of its point items, as span positions; a bracket
    has one inside only where one lies strictly between its ends."""
    from envelope.contracted import breaks_inside, span_breaks
    from envelope.loading import DISTRIBUTED

    for path in sorted((REPO / "cases").glob("*.toml")):
        s = analyse(load_case(path)).solved
        units, mesh = s.unit_cases, s.mesh
        breaks = span_breaks(mesh, units, s.beam.n_spans)
        for j in range(s.beam.n_spans):
            want = sorted(mesh.start[(mesh.span == j) & (mesh.start > 0.0)].tolist() + [
                float(mesh.start[e] + v) for e, v, k, on in zip(
                    units.item_elem, units.item_b, units.item_kind,
                    mesh.span[units.item_elem] == j, strict=True)
                if on and k == DISTRIBUTED] + [
                float(mesh.start[e] + v) for e, v, on in zip(
                    units.item_elem, units.item_a, mesh.span[units.item_elem] == j,
                    strict=True) if on])
            got = breaks[j][np.isfinite(breaks[j])].tolist()
            assert got == want, path.name
            for p in want:
                near = np.array([p - 1e-9, p, p]), np.array([p + 1e-9, p + 1e-9, p])
                row = np.repeat(breaks[j:j + 1], 3, axis=0)
                assert breaks_inside(row, *near).tolist()[1:] == [False, False]
                assert breaks_inside(row, *near)[0]


def test_live_largest_at_the_stations_is_the_envelopes_bit_for_bit(
        generated: list[Path]) -> None:
    """The live deflection's largest value and its combination at the stations, read
    from the one block without the least values, against envelope_at (the reference):
    the same numbers and the same first governing combination."""
    from envelope.actions import _live_at_stations, _one_block
    from envelope.unitpoints import element_items

    checked = 0
    for path in generated[:24]:
        a = analyse(load_case(path))
        s, pts = a.solved, a.stations
        block = _one_block(s, pts, None, element_items(s.unit_cases, s.mesh.n_elements))
        want = envelope_at(s, pts, "deflection", "live", labels=False)
        if block is None or want is None:
            continue
        got = _live_at_stations(s, block)
        assert got is not None
        assert np.array_equal(got.max, want.max), path.name
        assert np.array_equal(got.max_combo, want.max_combo), path.name
        checked += 1
    assert checked >= 12


def _mid_span_couple(couple: float) -> str:
    """The invented beam of the test below: a 6 m simple span, 10 kN/m dead and a dead
    couple ``couple`` (kN m) at mid-span."""
    return beam_text(
        [6.0], ["pinned"] * 2,
        [{"case": "D", "type": "uniform", "spans": "all", "w": 10.0},
         {"case": "D", "type": "moment", "spans": 1, "M": couple, "at": 3.0}],
        section={"E": 30000, "I": 4.0e9},
        combinations={"strength": "asce7-lrfd", "service": "characteristic"},
        top={"id": "mid-span-couple"})


@pytest.mark.parametrize("couple", [20.0, -20.0])
def test_a_point_moments_jump_is_a_vertex_at_its_larger_side_without_golden_section(
        couple: float, tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    """An invented simply supported 6 m span, 10 kN/m and a 20 kN m couple at mid-span
    (either sense): by statics the moment either side of the couple is
    w L^2 / 8 +- M / 2 = 45 +- 10 kN m, so the largest is 1.4 x 55 = 77 kN m (ASCE 7-22
    2.3.1, 1.4 D) at mid-span, on whichever side is larger.  The envelope falls away on
    both sides of that side's value: a vertex at the station, found by the probes
    without golden section (which the right-side limit alone sent there)."""
    import envelope.actions

    path = tmp_path / "couple.toml"
    path.write_text(_mid_span_couple(couple))

    def no_golden(*args: object, **kwargs: object) -> None:
        raise AssertionError("golden section")

    monkeypatch.setattr(envelope.actions, "golden_max", no_golden)
    d = analyse(load_case(path)).design_actions
    np.testing.assert_allclose(d["moment_pos"], [77.0], rtol=ROUND_OFF, atol=0)
    assert d["moment_pos_x"].tolist() == [3.0]


def test_station_maxima_by_runs_are_those_by_sorting(generated: list[Path],
                                                     monkeypatch: pytest.MonkeyPatch) -> None:
    """Stations in order of span and position: each group's best station and the local
    maxima found by runs, the same arrays as by sorting the rows (the general way)."""
    import envelope.actions
    from envelope.actions import _in_order, _station_maxima

    for path in generated[:16]:
        a = analyse(load_case(path))
        pts, n = a.stations, a.beam.n_spans
        groups = np.concatenate([pts.span, n + pts.span])
        x = np.tile(pts.x_span, 2)
        values = np.concatenate([a.station_envelopes["moment"].max,
                                 a.station_envelopes["deflection"].max])
        assert _in_order(groups, x, values)
        fast = _station_maxima(groups, x, values, 2 * n)
        monkeypatch.setattr(envelope.actions, "_in_order", lambda *args: False)
        slow = _station_maxima(groups, x, values, 2 * n)
        monkeypatch.undo()
        for name in fast.__slots__:
            assert np.array_equal(getattr(fast, name), getattr(slow, name)), (path.name, name)
