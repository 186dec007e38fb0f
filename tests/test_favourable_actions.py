"""Actions that help are left out: two beams checked by hand, and the deflection check by kind.

Hand values use the handbook coefficients of the project's reference list
(../shared/references.md): simple span wL^2/8 and wL/2 (section 3.1, common
practice); two equal spans, both loaded: end reaction 3/8 wL, support moment
-1/8 wL^2 (section 3.2, Hicks, Civil Engineering Formulas, Table 2.1); load on the
far span only: end reaction -1/16 wL, support moment -1/16 wL^2 (section 3.3,
derived, matching AISC Table 3-23 from memory).  Factors: EN 1990:2002 Table
A1.2(B) (gamma_G,sup 1.35, gamma_G,inf 1.00, gamma_Q 1.5, 0 where favourable)
and Table A1.1 (psi_0 snow 0.5, wind 0.6).
"""

from __future__ import annotations

import json
import tomllib
from collections.abc import Mapping

import numpy as np
import pytest

from envelope.analysis import Analysis, analyse
from envelope.casefile import parse_case
from envelope.store import cases_table, design_table

from beams import beam_text
from tolerances import SMALL_SOLVE, SOLVE


def one_span(wind: Mapping[str, object] | None = None,
             combinations: Mapping[str, object] | None = None) -> str:
    """6 m simple span, EI = 1: dead 2, snow 3 and wind -3 kN/m on the whole span."""
    return beam_text(
        [6.0], ["pinned", "pinned"],
        [{"case": "G", "type": "uniform", "spans": "all", "w": 2.0},
         {"case": "S", "type": "uniform", "spans": "all", "w": 3.0},
         {"case": "W", "type": "uniform", "spans": "all", "w": -3.0}],
        cases={"G": "dead", "S": "snow", "W": wind or "wind"},
        combinations=combinations or {"strength": "en1990-6.10",
                                      "service": "characteristic"},
        patterning={"method": "none"}, output={"stations_per_span": 3})


def two_spans(method: str) -> str:
    """Two 6 m spans, EI = 1: dead 20 and live 12 kN/m on both; segments: 2 a span."""
    patterning: dict[str, object] = {"method": method}
    if method == "segments":
        patterning["segments"] = 2
    return beam_text(
        [6.0, 6.0], ["pinned"] * 3,
        [{"case": "G", "type": "uniform", "spans": "all", "w": 20.0},
         {"case": "Q", "type": "uniform", "spans": "all", "w": 12.0}],
        cases={"G": "dead", "Q": "live"}, combinations={"strength": "en1990-6.10"},
        patterning=patterning, output={"stations_per_span": 5})


def run(text: str) -> Analysis:
    return analyse(parse_case(tomllib.loads(text), "hand.toml"))


def names(a: Analysis, which: str = "strength") -> list[str]:
    return [c.name for c in a.solved.case_set(which).combinations]


def test_favourable_wind_is_left_out_of_the_sagging_maximum() -> None:
    # max M = (1.35 x 2 + 1.5 x 3) x 6^2 / 8 = 32.40: snow leads, wind (favourable,
    # psi_0 0.6) is left out, gamma_Q = 0 where favourable (Table A1.2(B)).
    a = run(one_span())
    m = a.station_envelopes["moment"]
    assert m is not None
    mid = 1  # stations 0, 3, 6 m
    assert m.max[mid] == pytest.approx(32.40, rel=SMALL_SOLVE)
    assert names(a)[m.max_combo[mid]] == "1.35G + 1.5S + 0.9W"
    assert m.max_loaded[mid] == "W: none"


def test_wind_suction_reverses_the_moment_with_permanent_load_at_gamma_g_inf() -> None:
    # min M = (1.0 x 2 - 1.5 x 3) x 6^2 / 8 = -11.25: G at gamma_G,inf 1.00, wind
    # leading, snow (unfavourable here) left out.
    a = run(one_span())
    m = a.station_envelopes["moment"]
    assert m is not None
    assert m.min[1] == pytest.approx(-11.25, rel=SMALL_SOLVE)
    assert names(a)[m.min_combo[1]] == "G + 0.75S + 1.5W"
    assert m.min_loaded[1] == "S: none"


def test_least_reaction_is_the_uplift_of_1_0g_plus_1_5w() -> None:
    # R = (1.0 x 2 - 1.5 x 3) x 6 / 2 = -7.50 at each support (uplift).
    a = run(one_span())
    r = a.reaction_envelopes["reaction"]
    assert r is not None
    assert r.min == pytest.approx([-7.50, -7.50], rel=SMALL_SOLVE)
    assert r.max == pytest.approx([(1.35 * 2 + 1.5 * 3) * 3] * 2, rel=SMALL_SOLVE)


@pytest.mark.parametrize("method", ["exhaustive", "code", "segments"])
def test_least_end_reaction_has_live_load_on_the_far_span_only(method: str) -> None:
    # 1.0 x 20 x 6 x 3/8 - 1.5 x 12 x 6 x 1/16 = 45 - 6.75 = 38.25 (G at gamma_G,inf,
    # Q on span 2 only).  Segments (2 per span) reach the same: a whole span is a
    # choice of its segments.
    a = run(two_spans(method))
    r = a.reaction_envelopes["reaction"]
    assert r is not None
    assert r.min[0] == pytest.approx(38.25, rel=SMALL_SOLVE)
    assert r.min[2] == pytest.approx(38.25, rel=SMALL_SOLVE)
    assert names(a)[r.min_combo[0]] == "G + 1.5Q"
    expected = {"exhaustive": "2", "code": "2", "segments": "2.1 2.2"}[method]
    assert r.min_loaded[0] == expected


@pytest.mark.parametrize("method", ["exhaustive", "code", "none"])
def test_least_hogging_at_the_middle_support_is_1_0g_alone(method: str) -> None:
    # -1/8 x 20 x 6^2 = -90.0 with G at gamma_G,inf and no live load anywhere; the most
    # hogging is 1.35 x -90 + 1.5 x -1/8 x 12 x 36 = -202.5 (Q on both spans).
    a = run(two_spans(method))
    m = a.station_envelopes["moment"]
    assert m is not None
    st = a.stations
    at = np.flatnonzero((st.span == 0) & (st.x_span == 6.0))
    assert m.max[at] == pytest.approx(-90.0, rel=SMALL_SOLVE)
    assert m.min[at] == pytest.approx(-202.5, rel=SMALL_SOLVE)
    assert a.design_actions["moment_neg_right"][0] == pytest.approx(-202.5, rel=SMALL_SOLVE)


def test_cases_table_records_every_factor_and_what_may_be_left_out() -> None:
    a = run(one_span())
    t = cases_table(a).to_pylist()
    row = next(r for r in t if r["combination"] == "1.35G + 1.5S + 0.9W")
    assert json.loads(row["factors"]) == {"G": 1.35, "S": 1.5, "W": 0.9}
    assert row["rule"] == "en1990-6.10"
    assert row["leading"] == "S"
    assert json.loads(row["optional"]) == ["W"]
    assert "gamma_G,sup 1.35" in row["derivation"]
    assert "psi_0 0.6" in row["derivation"]
    inf = next(r for r in t if r["combination"] == "G + 0.75S + 1.5W")
    assert "gamma_G,inf 1" in inf["derivation"]
    service = [r for r in t if r["set"] == "service"]
    assert {r["rule"] for r in service} == {"characteristic"}


def test_deflection_live_is_the_worst_variable_action_alone_and_says_which() -> None:
    # Simple span, downward deflection 5wL^4/384EI (common practice): snow 3 kN/m
    # deflects; wind -3 kN/m lifts, so alone it never governs a downward deflection.
    a = run(one_span())
    d = a.design_actions
    L, EI = 6.0, 1.0
    assert d["deflection_live"][0] == pytest.approx(5 * 3.0 * L**4 / (384 * EI), rel=SOLVE)
    assert d["deflection_live_combo"][0] == "S"
    # characteristic (6.14b): G + S + 0.6W with the wind left out, 5 x 5 L^4 / 384
    assert d["deflection_max"][0] == pytest.approx(5 * 5.0 * L**4 / 384, rel=SOLVE)
    table = design_table(a).to_pylist()
    assert table[0]["deflection_live_combo"] == "S"


def test_national_factors_psi_and_service_lists_are_read_and_used() -> None:
    # The one-span beam with national choices: gamma_G,sup 1.25, gamma_Q 1.6, and the
    # wind's own psi_0 0.5.  Snow leading: (1.25 x 2 + 1.6 x 3) x 36 / 8 = 32.85; wind
    # leading with G at gamma_G,inf 0.9: (0.9 x 2 - 1.6 x 3) x 36 / 8 = -13.50.
    text = one_span(wind={"kind": "wind", "psi0": 0.5, "psi2": 0.1},
                    combinations={"strength": "en1990-6.10",
                                  "service": ["characteristic", "quasi-permanent"],
                                  "factors": {"G_sup": 1.25, "G_inf": 0.9, "Q": 1.6}})
    beam = parse_case(tomllib.loads(text), "national.toml")
    assert beam.combinations.service_sets == ("characteristic", "quasi-permanent")
    assert dict(beam.combinations.factors) == {"G_sup": 1.25, "G_inf": 0.9, "Q": 1.6}
    assert (beam.case("W").psi0, beam.case("W").psi1, beam.case("W").psi2) == (0.5, None, 0.1)
    a = analyse(beam)
    m = a.station_envelopes["moment"]
    assert m is not None
    assert m.max[1] == pytest.approx(32.85, rel=SMALL_SOLVE)
    assert m.min[1] == pytest.approx(-13.50, rel=SMALL_SOLVE)
    assert names(a)[m.max_combo[1]] == "1.25G + 1.6S + 0.8W"
    rules = {c.rule for c in a.solved.service.combinations}
    assert rules == {"characteristic", "quasi-permanent"}
    # quasi-permanent (6.16b): G + psi_2 W with the case's own psi_2 = 0.1
    qp = a.solved.case_set("quasi-permanent")
    assert [c.name for c in qp.combinations] == ["G + 0.1W"]
