"""The support envelopes (reactions and support moments) reduced in blocks of rows
(``envelope.analysis.reduce_blocks``, sized by ``config.SUPPORT_CHUNK_VALUES``) against
the reference: :func:`envelope.enveloper.reduce` of all rows at once.  The values may
differ at round-off only (a block's matrix products may sum in another order); the
governing combinations and the ``_loaded`` texts are the same."""

from __future__ import annotations

from typing import Any

import numpy as np
import pytest

from envelope.analysis import analyse_solved, reduce_blocks, support_moments
from envelope.enveloper import CaseSet, Extremes, reduce
from envelope.moving import MovingEffect, moving_loads, reaction_effects
from envelope.solved import Solved, solve_beam

from beams import beam_text, parse_text
from tolerances import LONG_SUM

SPANS = [5.0, 6.5, 4.0, 7.0, 5.5, 6.0, 4.5]
LOADS: list[dict[str, Any]] = [
    {"case": "D", "type": "uniform", "spans": "all", "w": 12.0},
    {"case": "D", "type": "point", "spans": [2, 5], "P": 30.0, "at": 1.5},
    {"case": "L", "type": "uniform", "spans": "all", "w": 9.0},
    {"case": "W", "type": "uniform", "spans": [1, 3, 4], "w": -3.0},
]
CASES = {"D": "dead", "L": "live", "W": "wind"}


def _solved(patterning: dict[str, Any], moving: bool = False) -> Solved:
    loads = list(LOADS)
    cases: dict[str, Any] = dict(CASES)
    if moving:
        loads.append({"case": "Q", "type": "train", "spans": "all",
                      "axles": [{"P": 40.0, "offset": 0.0}, {"P": 40.0, "offset": 1.8}]})
        cases["Q"] = "live"
    text = beam_text(SPANS, ["fixed", *["pinned"] * (len(SPANS) - 1), "pinned"], loads,
                     cases=cases, combinations={"strength": "en1990-6.10",
                                                "service": "characteristic"},
                     patterning=patterning)
    return solve_beam(parse_text(text))


def _inputs(solved: Solved) -> list[tuple[str, np.ndarray, CaseSet, MovingEffect | None]]:
    """The three support reductions of the analysis: name, rows, case set, moving effects."""
    beam = solved.beam
    joints = np.array([j for j, s in enumerate(beam.supports) if s.is_restrained])
    moving = reaction_effects(beam, joints) if moving_loads(beam) else (None, None)
    sol = solved.solution
    return [("reaction", solved.solution_for("strength").reaction[joints], solved.strength,
             moving[0]),
            ("service_reaction", sol.reaction[joints], solved.service, moving[0]),
            ("support_moment", support_moments(sol.reaction_moment)[joints],
             solved.strength, moving[1])]


def _same(blocks: Extremes, whole: Extremes, what: str) -> None:
    for field in ("max", "min"):
        got, want = getattr(blocks, field), getattr(whole, field)
        scale = float(np.max(np.abs(want)))
        assert np.max(np.abs(got - want)) <= LONG_SUM * scale, (what, field)
    for field in ("max_combo", "min_combo", "max_loaded", "min_loaded"):
        assert getattr(blocks, field).tolist() == getattr(whole, field).tolist(), (what, field)


@pytest.mark.parametrize(("patterning", "moving"), [
    ({"method": "segments", "segments": 3, "favourable_dead": 0.9}, False),
    ({"method": "exhaustive"}, False),
    ({"method": "code"}, False),
    ({"method": "exhaustive"}, True),
])
@pytest.mark.parametrize("rows", [1, 3, 5])
def test_support_envelopes_in_blocks_match_all_rows_at_once(
        patterning: dict[str, Any], moving: bool, rows: int) -> None:
    """Blocks of ``rows`` of the 8 support rows (the last block shorter), with
    pattern-dependent dead load (favourable 0.9), explicit arrangements and a moving
    train: every value within round-off of the whole reduction, the same governing
    combinations and texts."""
    solved = _solved(patterning, moving)
    for name, R, cs, effect in _inputs(solved):
        whole = reduce(R, cs, moving=effect)
        _same(reduce_blocks(R, cs, effect, values=rows * R.shape[1]), whole, name)


def test_analysis_reactions_use_the_blocks() -> None:
    """The analysis's support envelopes are those of the blocks (here many blocks of one
    row each, the chunk size set low) and, to round-off, of the whole reduction."""
    solved = _solved({"method": "segments", "segments": 2})
    with pytest.MonkeyPatch.context() as mp:
        mp.setattr("envelope.config.SUPPORT_CHUNK_VALUES", 1)
        analysis = analyse_solved(solved)
    for name, R, cs, effect in _inputs(solved):
        got = analysis.reaction_envelopes[name]
        assert got is not None
        _same(got, reduce(R, cs, moving=effect), name)
