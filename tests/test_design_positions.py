"""Positions of the design maxima to 1e-9 of the span length (issue: design.parquet exact,
not limited to stations), on cases whose positions are known in closed form."""

from __future__ import annotations

import math

import pytest

from envelope.analysis import analyse

from beams import beam_text, parse_text
from tolerances import SMALL_SOLVE

STRENGTH_D = '[[combinations.custom]]\nname = "D"\nset = "strength"\nfactors = { D = 1.0 }\n'
XTOL = 1e-9  # of the span length: the requirement


def _design(text: str) -> dict:
    text = text.replace('strength = "none"\n', "") + STRENGTH_D
    return analyse(parse_text(text)).design_actions


@pytest.mark.parametrize(("supports", "x_exact", "m_exact"), [
    (["pinned", "pinned"], 0.5, 1 / 8),         # simple span, UDL: wL^2/8 at L/2 (statics)
    (["pinned", "fixed"], 3 / 8, 9 / 128),      # propped: 9wL^2/128 at 3L/8 from the pin
    (["fixed", "pinned"], 5 / 8, 9 / 128),      # the mirror image
    (["fixed", "fixed"], 0.5, 1 / 24),          # fixed-fixed: wL^2/24 at midspan
])
def test_single_span_udl_maximum_position(supports: list[str], x_exact: float,
                                          m_exact: float) -> None:
    # AISC Manual Table 3-23 cases, re-derived by statics (references.md 3.1, [D])
    d = _design(beam_text([1.0], supports, [{"type": "uniform", "spans": "all", "w": 1.0}]))
    assert abs(d["moment_pos_x"][0] - x_exact) <= XTOL
    assert d["moment_pos"][0] == pytest.approx(m_exact, rel=SMALL_SOLVE)


def test_equal_spans_udl_maximum_positions() -> None:
    # 3 equal spans under UDL: +0.080 wL^2 at 0.4L in the end spans (Hicks, Civil Engineering
    # Formulas, Table 2.1 [C]); exactly R_A = 0.4 wL so x = 0.4L and M = 0.08 wL^2 [D]
    d = _design(beam_text([1.0, 1.0, 1.0], ["pinned"] * 4,
                          [{"type": "uniform", "spans": "all", "w": 1.0}]))
    assert abs(d["moment_pos_x"][0] - 0.4) <= XTOL
    assert abs(d["moment_pos_x"][2] - 0.6) <= XTOL
    assert abs(d["moment_pos_x"][1] - 0.5) <= XTOL
    assert d["moment_pos"][0] == pytest.approx(0.08, rel=SMALL_SOLVE)
    assert d["moment_pos"][1] == pytest.approx(0.025, rel=SMALL_SOLVE)


def test_linear_load_maximum_position() -> None:
    # Simple span, triangular load rising to w at the right end: the shear vanishes at
    # x = L / sqrt(3), where M = wL^2 / (9 sqrt(3)) (derived by statics; a standard
    # handbook case, from memory)
    d = _design(beam_text([1.0], ["pinned", "pinned"],
                          [{"type": "linear", "spans": 1, "w_start": 0.0, "w_end": 1.0}]))
    assert abs(d["moment_pos_x"][0] - 1 / math.sqrt(3)) <= XTOL
    assert d["moment_pos"][0] == pytest.approx(1 / (9 * math.sqrt(3)), rel=SMALL_SOLVE)


def test_exhaustive_envelope_maximum_position_is_the_governing_pattern_root() -> None:
    # 2 equal spans, live load on span 1 only governs span 1's sagging: 49/512 wL^2 at
    # 7L/16 (references.md 3.3 [D]; the 2-span row matches AISC Table 3-23 [M])
    text = beam_text([1.0, 1.0], ["pinned"] * 3,
                     [{"case": "L", "type": "uniform", "spans": "all", "w": 1.0}],
                     cases={"L": "live"},
                     combinations={"service": "characteristic",
                                   "custom": [{"name": "L", "set": "strength",
                                               "factors": {"L": 1.0}}]},
                     patterning={"method": "exhaustive"})
    d = analyse(parse_text(text)).design_actions
    assert abs(d["moment_pos_x"][0] - 7 / 16) <= XTOL
    assert abs(d["moment_pos_x"][1] - 9 / 16) <= XTOL
    assert d["moment_pos"][0] == pytest.approx(49 / 512, rel=SMALL_SOLVE)
