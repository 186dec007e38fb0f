"""Variable actions left out where they help: the superposed envelope against brute force.

Every generated rule-set row lets each variable action act only where it makes the
effect worse (EN 1990:2002 Table A1.2(B), gamma_Q = 0 where favourable; ASCE 7-22
2.3.1 and 2.4.1, "effects of one or more loads not acting").  The engine does this
without enumeration: a case that is not patterned is one on/off part over the whole
beam beside the per-cell parts of the patterned ones.  The slow reference of
tests/reference.py instead lists every arrangement with every optional case switched
on and off, and takes the plain max and min.  Random beams (tests/test_reference.py)
get a snow case and wind with uplift, every rule set, every patterning method, with
favourable_dead 1.0 and 0.9; envelopes, reactions and the governing labels must agree.
"""

from __future__ import annotations

import functools
from dataclasses import replace

import numpy as np
import pytest
from test_reference import (
    RTOL,
    TIE_RTOL,
    LoadSpec,
    _check_governing,
    _close,
    _scale,
    beam_of,
    random_spec,
)

from envelope.analysis import Analysis, analyse
from envelope.combinations import build as build_combinations
from envelope.model import Beam, Combination, CombinationSpec

import reference as ref

RULES = ("en1990-6.10", "en1990-6.10ab", "asce7-lrfd", "asce7-asd")
METHODS = ("none", "code", "exhaustive", "segments")
SERVICE = ("characteristic", "frequent", "quasi-permanent")


def leave_out_beam(seed: int, method: str, fav: float, rule: str) -> Beam:
    """A random beam of 2 or 3 spans with dead, live, roof live, snow and wind (uplift:
    negative uniform load, and a point moment), combined by ``rule`` and every EN
    service set."""
    n = 2 + seed % 2
    spec = random_spec(100 + seed, method, fav, n_spans=n)
    rng = np.random.default_rng([seed, RULES.index(rule), METHODS.index(method)])
    cases = dict(spec.cases)
    loads = list(spec.loads)
    cases["S"] = {"kind": "snow"}
    for j in range(1, n + 1):
        if rng.random() < 0.8:
            loads.append(LoadSpec("S", "uniform", j, {"w": round(rng.uniform(1.0, 8.0), 2)}))
    if "W" not in cases:
        cases["W"] = {"kind": "wind"}
        loads.append(LoadSpec("W", "uniform", int(rng.integers(1, n + 1)),
                              {"w": round(-rng.uniform(2.0, 12.0), 2)}))
    # an upward wind load on one span and a downward one on another: wind both helps and
    # hurts along the beam
    loads.append(LoadSpec("W", "uniform", int(rng.integers(1, n + 1)),
                          {"w": round(rng.uniform(1.0, 5.0), 2)}))
    spec = replace(spec, cases=cases, loads=loads,
                   combos=[("placeholder", "strength", {"D": 1.0})])
    beam = beam_of(spec)
    return replace(beam, combinations=CombinationSpec(strength=rule, service=SERVICE))


@functools.cache
def compared(seed: int, method: str, fav: float, rule: str
             ) -> tuple[Beam, Analysis, ref.UnitTable, tuple[Combination, ...],
                        tuple[Combination, ...]]:
    beam = leave_out_beam(seed, method, fav, rule)
    a = analyse(beam)
    st = a.stations
    points = list(zip(st.span.tolist(), st.x_span.tolist(), st.right.tolist(), strict=True))
    table = ref.unit_table(beam, points)
    combos = build_combinations(beam.cases, beam.combinations)
    return (beam, a, table, tuple(c for c in combos if c.set == "strength"),
            tuple(c for c in combos if c.set == "service"))


PARAMS = [(s, m, f, r) for r in RULES for m in METHODS for f in (1.0, 0.9) for s in range(2)]


def _ids(p: tuple[int, str, float, str]) -> str:
    return f"{p[3]}-{p[1]}-fav{p[2]}-seed{p[0]}"


class _Compared:
    """The attributes _check_governing reads."""

    def __init__(self, beam: Beam, table: ref.UnitTable) -> None:
        self.beam, self.table = beam, table


@pytest.mark.parametrize("params", PARAMS, ids=_ids)
def test_superposed_envelope_equals_every_on_off_choice(
        params: tuple[int, str, float, str]) -> None:
    """Moment and shear (strength), deflection (every service set) at the stations and
    the strength reactions: values equal the brute-force max and min over every
    arrangement with every optional case on and off, and the governing combination and
    ``_loaded`` text name an arrangement that gives the value (the only one, where the
    reference finds one)."""
    beam, a, table, strength, service = compared(*params)
    assert any(c.optional for c in strength), "the rule set leaves nothing out"
    problems: list[str] = []
    for q, combos in (("moment", strength), ("shear", strength), ("deflection", service)):
        R = table.values[q]
        scale_r = max(float(np.abs(R).max(initial=0.0)), 1e-300) * 1.6
        want = ref.envelope(beam, combos, table, R, TIE_RTOL * scale_r)
        got = a.station_envelopes[q]
        assert got is not None
        scale = _scale(want)
        _close(got.max, want.max, scale, f"{q} max")
        _close(got.min, want.min, scale, f"{q} min")
        problems += _check_governing(_Compared(beam, table), got, want, R, combos, q)
    joints = a.support_joints
    R = table.reaction[joints]
    scale_r = max(float(np.abs(R).max(initial=0.0)), 1e-300) * 1.6
    want = ref.envelope(beam, strength, table, R, TIE_RTOL * scale_r)
    got = a.reaction_envelopes["reaction"]
    assert got is not None
    _close(got.max, want.max, _scale(want), "reaction max")
    _close(got.min, want.min, _scale(want), "reaction min")
    problems += _check_governing(_Compared(beam, table), got, want, R, strength, "reaction")
    assert not problems, f"{len(problems)} problems; first: " + "; ".join(problems[:3])


def test_leaving_out_never_lessens_the_envelope() -> None:
    """The envelope with optional cases is at least as wide as with every case acting
    (each row with all its cases on is one of the choices): a check on the brute
    force itself, on one beam."""
    beam, _, table, strength, _ = compared(0, "exhaustive", 1.0, "en1990-6.10")
    forced = tuple(replace(c, optional=frozenset()) for c in strength)
    R = table.values["moment"]
    free = ref.envelope(beam, strength, table, R, 0.0)
    fixed = ref.envelope(beam, forced, table, R, 0.0)
    scale = _scale(free)
    assert np.all(free.max >= fixed.max - RTOL * scale)
    assert np.all(free.min <= fixed.min + RTOL * scale)
    assert np.any(free.min < fixed.min - 1e-6 * scale), "wind uplift never mattered"
