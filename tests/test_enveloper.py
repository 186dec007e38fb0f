"""Envelopes by superposition (envelope.enveloper) against brute-force enumeration.

The reduction never enumerates patterns; the reference here does: for every
combination and every subset of loaded cells it forms the combined response and
takes the largest and smallest (the definition of the envelope over all load
patterns, common practice).  With ``favourable_dead`` below 1, a cell left without
live load carries its dead load at that factor (EN 1990 Table A1.2(B) note: the
favourable part of a permanent action; the module docstring states the rule).
"""

from __future__ import annotations

import itertools
from pathlib import Path

import numpy as np
import pytest

from envelope.enveloper import ExplicitCaseSet, SuperposedCaseSet, reduce
from envelope.recovery import evaluate, make_points
from envelope.solved import Solved, solve_beam

from beams import beam_text, parse_text
from tolerances import LONG_SUM


def _solved(method: str, favourable: float) -> Solved:
    text = beam_text([5.0, 7.0, 4.0, 6.0], ["pinned"] * 5,
                     [{"case": "D", "type": "uniform", "spans": "all", "w": 3.0},
                      {"case": "L", "type": "uniform", "spans": "all", "w": 4.0},
                      {"case": "L", "type": "point", "spans": [2], "P": 9.0, "at": 2.0}],
                     cases={"D": "dead", "L": "live"},
                     combinations={"strength": "none", "service": "characteristic",
                                   "custom": [{"name": "U1", "set": "strength",
                                               "factors": {"D": 1.2, "L": 1.6}},
                                              {"name": "U2", "set": "strength",
                                               "factors": {"D": 1.4}}]},
                     patterning={"method": method, "segments": 2,
                                 "favourable_dead": favourable})
    return solve_beam(parse_text(text))


def _brute_force(solved: Solved, R: np.ndarray, favourable: float
                 ) -> tuple[np.ndarray, np.ndarray]:
    beam, units = solved.beam, solved.unit_cases
    kinds = [beam.cases[int(c)].kind for c in units.case]
    names = [beam.cases[int(c)].name for c in units.case]
    n_cells = int(units.cell.max()) + 1
    best_max = np.full(R.shape[0], -np.inf)
    best_min = np.full(R.shape[0], np.inf)
    for combo in solved.strength.combinations:
        factors = [combo.factor(n) for n in names]
        patterned = any(f != 0.0 and k == "live" for f, k in zip(factors, kinds, strict=True))
        subsets = (itertools.product((False, True), repeat=n_cells) if patterned
                   else [(True,) * n_cells])
        for loaded in subsets:
            coef = np.array([
                (f if loaded[cell] else 0.0) if kind == "live" else
                (f if loaded[cell] or not patterned else f * favourable)
                for f, kind, cell in zip(factors, kinds, units.cell.tolist(), strict=True)])
            values = R @ coef
            best_max = np.maximum(best_max, values)
            best_min = np.minimum(best_min, values)
    return best_max, best_min


@pytest.mark.parametrize(("method", "favourable"), [("exhaustive", 1.0),
                                                    ("exhaustive", 0.9),
                                                    ("segments", 1.0)])
def test_superposition_equals_enumerating_every_pattern(method: str,
                                                        favourable: float) -> None:
    solved = _solved(method, favourable)
    span = np.repeat(np.arange(4), 9)
    x = np.concatenate([np.linspace(0.0, L, 9) for L in (5.0, 7.0, 4.0, 6.0)])
    r = evaluate(solved.mesh, solved.unit_cases, solved.solution,
                 make_points(solved.beam, span, x))
    for R in (r.moment, r.shear, r.deflection):
        got = reduce(R, solved.strength, labels=False)
        want_max, want_min = _brute_force(solved, R, favourable)
        scale = float(np.abs(R).sum(axis=1).max()) * 1.6
        np.testing.assert_allclose(got.max, want_max, rtol=0.0, atol=LONG_SUM * scale)
        np.testing.assert_allclose(got.min, want_min, rtol=0.0, atol=LONG_SUM * scale)


@pytest.mark.parametrize(("method", "kind"), [
    ("none", ExplicitCaseSet), ("code", ExplicitCaseSet),
    ("exhaustive", SuperposedCaseSet), ("segments", SuperposedCaseSet)])
def test_the_kind_of_case_set_follows_the_patterning_method(method: str, kind: type) -> None:
    # case-format contract: none and code run explicit arrangements, exhaustive and
    # segments take every subset of cells at once by superposition
    solved = _solved(method, 1.0)
    assert type(solved.strength) is kind and type(solved.service) is kind


def test_every_span_loaded_is_one_case_in_both_kinds_of_set() -> None:
    # "none" runs each combination with every span loaded; a superposed set's explicit
    # cases are each combination with every cell loaded (case-format contract, cases
    # "all"): with favourable_dead 1 both are the combination's own factors, unit case
    # by unit case, exactly
    explicit = _solved("none", 1.0).strength
    superposed = _solved("exhaustive", 1.0).strength
    coef_e, combo_e, text_e = explicit.explicit_cases()
    coef_s, combo_s, text_s = superposed.explicit_cases()
    np.testing.assert_array_equal(coef_e, coef_s)
    np.testing.assert_array_equal(combo_e, combo_s)
    assert text_e == text_s == ("all", "all")
    assert [r["loaded"] for r in superposed.case_rows()] == ["any", "any"]
    assert [r["loaded"] for r in superposed.case_rows(explicit=True)] == [
        "any", "any", "all", "all"]
    assert [r["loaded"] for r in explicit.case_rows()] == ["all", "all"]


def test_loaded_texts_shared_between_stations_and_supports_equal_texts_built_alone(
        tmp_path: Path) -> None:
    """The analysis builds each distinct ``_loaded`` text once per case set for the
    stations and the supports together (the fast path); the support envelopes equal
    those reduced on their own, every text built afresh (the reference path)."""
    from envelope.analysis import analyse, support_moments
    from envelope.casefile import load_case
    from envelope.enveloper import reduce

    from beams import make_cases_module

    paths = make_cases_module().make_cases(12, tmp_path, 21)
    for path in paths:
        result = analyse(load_case(path))
        solved, joints = result.solved, result.support_joints
        rows = {"reaction": (solved.solution_for("strength").reaction, solved.strength),
                "service_reaction": (solved.solution.reaction, solved.service),
                "support_moment": (support_moments(solved.solution_for(
                    "strength").reaction_moment), solved.strength)}
        for name, (R, cs) in rows.items():
            got = result.reaction_envelopes[name]
            if cs.is_empty:
                assert got is None
                continue
            alone = reduce(R[joints], cs)
            assert got is not None
            assert list(got.max_loaded) == list(alone.max_loaded), (path, name)
            assert list(got.min_loaded) == list(alone.min_loaded), (path, name)
            np.testing.assert_array_equal(got.max, alone.max)


@pytest.mark.parametrize("method", ["exhaustive", "segments"])
def test_parts_of_the_favourable_choice_kept_with_the_case_set_are_its_own(method: str) -> None:
    """The response-free parts of the cell-by-cell choice (favourable dead load 0.9),
    made once with the case set, against their definitions: the patterned units of the
    column, the cells some patterned case of it leaves unloaded (fewer patterned units
    in the cell than patterned cases), the units ordered cell by cell; and the group runs
    are the distinct group columns."""
    cs = _solved(method, 0.9).strength
    assert isinstance(cs, SuperposedCaseSet)
    fav = np.flatnonzero(cs.dead_var.any(axis=0))
    assert fav.size and np.array_equal(cs.fav_cols, fav)
    n_cells = len(cs.cell_labels)
    onehot = np.zeros((cs.unit_cell.size, n_cells))
    onehot[np.arange(cs.unit_cell.size), cs.unit_cell] = 1.0
    for k, part in zip(fav.tolist(), cs.fav_parts, strict=True):
        is_pat = cs.patterned[:, k] != 0.0
        cases = {n for n, p in zip(cs.unit_case_name, is_pat.tolist(), strict=True) if p}
        assert np.array_equal(part.is_pat, is_pat)
        assert np.array_equal(part.can_zero, is_pat.astype(float) @ onehot < len(cases))
        assert np.array_equal(cs.unit_cell[part.order], np.sort(cs.unit_cell))
        assert np.array_equal(part.cells_present, np.unique(cs.unit_cell))
    runs, start = np.unique(cs.group_col, return_index=True)
    assert np.array_equal(cs.group_runs, runs) and np.array_equal(cs.group_run_start, start)
    assert [cs.case_names[i] for i in cs.unit_case] == list(cs.unit_case_name)


def test_a_single_service_rule_set_is_the_whole_service_set(tmp_path: Path) -> None:
    """With one service rule set (the usual case) the set of that rule is the whole
    service set, built once (the fast path); it equals the set built from that rule's
    combinations (the reference path), field by field."""
    from envelope.casefile import load_case
    from envelope.enveloper import build_case_set

    from beams import make_cases_module

    checked = 0
    for path in make_cases_module().make_cases(10, tmp_path, 22):
        solved = solve_beam(load_case(path))
        rules = sorted({c.rule for c in solved.service.combinations})
        for rule in rules:
            got = solved.case_set(rule)
            want = build_case_set(solved.beam, tuple(c for c in solved.service.combinations
                                                     if c.rule == rule),
                                  solved.unit_cases, solved.cells, favourable_dead=1.0)
            _assert_same_fields(got, want)
            checked += len(rules) == 1
    assert checked >= 3


def _assert_same_fields(got: object, want: object) -> None:
    """Dataclass instances equal field by field (arrays element by element, tuples and
    nested dataclasses item by item)."""
    import dataclasses

    assert type(got) is type(want)
    if isinstance(want, np.ndarray):
        np.testing.assert_array_equal(got, want)
    elif dataclasses.is_dataclass(want):
        for f in dataclasses.fields(want):
            _assert_same_fields(getattr(got, f.name), getattr(want, f.name))
    elif isinstance(want, tuple | list):
        assert isinstance(got, tuple | list) and len(got) == len(want)
        for a, b in zip(got, want, strict=True):
            _assert_same_fields(a, b)
    else:
        assert got == want
