"""Bar marks (envelope.sizing.bar_marks): the cut-off stretches of every mark found
together, in lockstep, against each stretch found alone.

The invented beam: four concrete spans of 5.5-7.5 m under dead and live load and a
two-axle truck moving over every span, so that every evaluation of the envelope at a
new point is an influence-line solve.  The reference narrows each stretch by itself
(:func:`envelope.sizing.cutoffs.run_around`: its own two ends, one evaluation a step),
with the same root search (:func:`envelope.sizing.cutoffs.narrow`), not the one-end
regula falsi bars.parquet was found with before; both stop within
:data:`envelope.config.DESIGN_XTOL` of the span, so they agree to that.
"""

from __future__ import annotations

import numpy as np
import pytest

from envelope import config
from envelope.analysis import analyse
from envelope.recovery import make_points
from envelope.sizing import bar_marks as marks
from envelope.sizing import cutoffs, size
from envelope.solved import envelope_at

from beams import beam_text, parse_text

SPANS = (6.0, 7.5, 5.5, 7.0)


@pytest.fixture(scope="module")
def analysis():  # type: ignore[no-untyped-def]
    text = beam_text(
        SPANS, ["pinned"] * (len(SPANS) + 1),
        [{"case": "D", "type": "uniform", "spans": "all", "w": 25.0},
         {"case": "L", "type": "uniform", "spans": "all", "w": 12.0},
         {"case": "T", "type": "train", "spans": "all",
          "axles": [{"P": 60.0, "offset": 0.0}, {"P": 40.0, "offset": 2.0}]}],
        section={"E": 30000, "I": 1.0e10, "A": 300000, "unit_weight": 24.5},
        cases={"D": "dead", "L": "live", "T": "live"},
        combinations={"strength": "asce7-lrfd", "service": "characteristic"},
        design={"material": "concrete", "code": "aci318-19", "b": 350, "h": 650,
                "cover_to_bar_centre": 60, "fc": 30, "fy": 420, "bars": "US",
                "aggregate": 20})
    return analyse(parse_text(text))


def _alone(analysis, span: int, sign: float, x: np.ndarray, m: np.ndarray,  # type: ignore[no-untyped-def]
           capacity: float, seed: int) -> tuple[float, float]:
    """One stretch narrowed by itself (its two ends, one evaluation a step)."""
    def demand(c: np.ndarray) -> np.ndarray:
        ext = envelope_at(analysis.solved, make_points(analysis.beam, np.full(c.size, span), c),
                          "moment", labels=False)
        return ext.max if sign > 0 else -ext.min
    return cutoffs.run_around(x, m, capacity, seed, demand, config.DESIGN_XTOL)


def test_stretches_found_together_match_each_found_alone(analysis) -> None:  # type: ignore[no-untyped-def]
    spans = list(range(len(SPANS)))
    demand = marks._Demand(analysis, spans, {1: 3.7})
    runs = marks._Runs(demand)
    asked = []
    for j in spans:
        for sign, m in ((1.0, demand.sagging[j]), (-1.0, demand.hogging[j])):
            for share in (0.3, 0.6, 0.9):
                capacity = share * float(np.max(m))
                seed = int(np.argmax(m))
                asked.append((runs.add(j, sign, capacity, seed), j, sign, capacity, seed))
    runs.solve()
    found = 0
    for run, j, sign, capacity, seed in asked:
        m = demand.sagging[j] if sign > 0 else demand.hogging[j]
        expected = _alone(analysis, j, sign, demand.x[j], m, capacity, seed)
        got = runs.ends(run)
        np.testing.assert_allclose(got, expected, rtol=0,
                                   atol=2 * config.DESIGN_XTOL * SPANS[j])
        found += int(np.isfinite(got[0]))
        # the ends are where the envelope meets the capacity (inside the span)
        for end in got:
            if 0.0 < end < SPANS[j] and np.isfinite(end):
                assert demand.at(np.array([j]), np.array([sign]), np.array([end]))[0] == \
                    pytest.approx(capacity, rel=1e-7)
    assert found == len(asked)


def test_bar_marks_ask_the_envelope_a_few_times_not_once_a_step(analysis, monkeypatch
                                                                 ) -> None:  # type: ignore[no-untyped-def]
    cols = size(analysis)
    calls = []
    real = marks.envelope_at

    def counted(*args, **kwargs):  # type: ignore[no-untyped-def]
        calls.append(args[1].n)
        return real(*args, **kwargs)

    monkeypatch.setattr(marks, "envelope_at", counted)
    out = marks.bar_marks(analysis, cols)
    # one sampling of every span, then one call per narrowing step of all the ends
    # (regula falsi: some ten steps to 1e-10 of the span), never one per end and step
    samples = len(SPANS) * (marks.SAMPLES + 1)  # (+ the sagging peak where bars stop)
    assert samples <= calls[0] <= samples + len(SPANS)
    assert len(calls) <= 25
    assert max(calls[1:]) > 1  # the steps move several ends at once
    assert set(out["position"].tolist()) == {"bottom", "top"}
