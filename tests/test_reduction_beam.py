"""Live load reduction read from a case file and applied to the analysis: reactions of
the reduced load, the factor in design.parquet and cases.parquet, refusals."""

from __future__ import annotations

import json
from typing import Any

import pytest

import envelope
from envelope.errors import CaseError
from envelope.model import Beam

from beams import beam_text, parse_text
from tolerances import SMALL_SOLVE


def two_spans(reduction: dict[str, Any], strength: str = "asce7-lrfd",
              dead: dict[str, Any] | None = None) -> str:
    """Two 8 m spans on pins: dead 10 and live 15 kN/m on both, the live case with the
    ``reduction`` table (and the dead case with ``dead``'s keys, where given)."""
    return beam_text(
        [8.0, 8.0], ["pinned"] * 3,
        [{"case": "D", "type": "uniform", "spans": "all", "w": 10.0},
         {"case": "L", "type": "uniform", "spans": "all", "w": 15.0}],
        section={"E": 30000, "I": 8.0e9},
        cases={"D": {"kind": "dead", **(dead or {})},
               "L": {"kind": "live", "reduction": reduction}},
        combinations={"strength": strength, "service": "characteristic"})


#: ASCE 7-22 Eq. (4.7-1M): 8 m x 6 m per span, KLL = 2: 0.25 + 4.57 / sqrt(96).
ASCE_FACTOR = 0.25 + 4.57 / 96.0**0.5
#: EN 1991-1-1 Eq. (6.1), category B (psi0 0.7): 0.5 + 10 / 48.
EN_FACTOR = 0.5 + 10.0 / 48.0


def _beam(reduction: dict[str, Any], strength: str = "asce7-lrfd") -> Beam:
    return parse_text(two_spans(reduction, strength))


@pytest.mark.parametrize(("strength", "reduction", "factor"), [
    ("asce7-lrfd", {"tributary_width": 6.0, "kll": 2}, ASCE_FACTOR),
    ("en1990-6.10", {"tributary_width": 6.0}, EN_FACTOR),
])
def test_reduced_live_reactions_and_reported_factor(strength: str, reduction: dict[str, Any],
                                                    factor: float) -> None:
    """Two equal spans, w on both: end reaction 3/8 wL, middle 10/8 wL (common
    practice); the live case's reactions scale by the factor, the dead case's not."""
    result = envelope.analyse(_beam(reduction, strength))
    tables = envelope.tables(result)
    reactions = tables["reactions"].to_pydict()
    assert reactions["unfactored_L"][0] == pytest.approx(3 / 8 * 15.0 * 8.0 * factor,
                                                         rel=SMALL_SOLVE)
    assert reactions["unfactored_L"][1] == pytest.approx(10 / 8 * 15.0 * 8.0 * factor,
                                                         rel=SMALL_SOLVE)
    assert reactions["unfactored_D"][0] == pytest.approx(3 / 8 * 10.0 * 8.0, rel=SMALL_SOLVE)
    assert tables["design"].column("live_reduction").to_pylist() == pytest.approx(
        [factor, factor], rel=SMALL_SOLVE)
    cases = tables["cases"].to_pydict()
    for factors, reduced in zip(cases["factors"], cases["live_reduction"], strict=True):
        uses_live = json.loads(factors).get("L", 0.0) != 0.0
        assert json.loads(reduced) == ({"L": pytest.approx([factor, factor])}
                                       if uses_live else {})


def test_small_area_is_not_reduced() -> None:
    """KLL AT = 8 x 2 x 2 = 32 m^2 < 37.16 m^2: no reduction (ASCE 7-22 4.7.3)."""
    result = envelope.analyse(_beam({"tributary_width": 2.0, "kll": 2}))
    assert envelope.tables(result)["design"].column("live_reduction").to_pylist() == [1.0, 1.0]


@pytest.mark.parametrize(("reduction", "message"), [
    ({"tributary_width": 6.0}, "kll is required"),
    ({"tributary_width": 6.0, "kll": 5}, "KLL is 1 to 4"),
    ({"tributary_width": -1.0, "kll": 2}, "tributary_width"),
    ({"tributary_width": 6.0, "kll": 2, "occupancy": "stadium"}, "occupancy"),
    ({"width": 6.0, "kll": 2}, "unknown key"),
])
def test_bad_reduction_is_refused_at_its_key(reduction: dict[str, Any], message: str) -> None:
    with pytest.raises(CaseError, match=message) as err:
        _beam(reduction)
    assert "cases.L.reduction" in str(err.value)


def test_reduction_only_on_live_cases() -> None:
    text = two_spans({"tributary_width": 6.0, "kll": 2},
                     dead={"reduction": {"tributary_width": 6.0}})
    with pytest.raises(CaseError, match="kind 'live'"):
        parse_text(text)


def test_a_concentrated_live_load_is_not_reduced_and_the_outputs_say_so() -> None:
    """ASCE 7-22 4.7.1 reduces the uniformly distributed live load Lo (4.4 concentrated
    loads are not reduced); EN 1991-1-1:2002 6.3.1.2(10) reduces qk, not Qk.  A reduced
    case holding a ``concentrated`` load keeps its full value (an end reaction of the full
    P at the end support, the load there: statics) and reports the factor 1.0."""
    text = beam_text(
        [8.0, 8.0], ["pinned"] * 3,
        [{"case": "D", "type": "uniform", "spans": "all", "w": 10.0},
         {"case": "L", "type": "concentrated", "spans": "all", "P": 40.0}],
        section={"E": 30000, "I": 8.0e9},
        cases={"D": "dead", "L": {"kind": "live",
                                  "reduction": {"tributary_width": 6.0, "kll": 2}}},
        combinations={"strength": "asce7-lrfd", "service": "characteristic"})
    tables = envelope.tables(envelope.analyse(parse_text(text)))
    assert tables["reactions"].to_pydict()["unfactored_L"][0] == pytest.approx(
        40.0, rel=SMALL_SOLVE)
    assert tables["design"].column("live_reduction").to_pylist() == [1.0, 1.0]
    for reduced in tables["cases"].to_pydict()["live_reduction"]:
        assert all(f == 1.0 for per_span in json.loads(reduced).values() for f in per_span)


def test_overlapping_items_are_summed_for_the_heavy_load_rule() -> None:
    """ASCE 7-22 4.7.4: live loads above 100 psf are not reduced on one floor.  Two
    uniform items of 0.6 kip/ft on a 10 ft width over the same 40 ft span are 120 psf
    together, heavy (each alone is 60 psf, which Eq. 4.7-1 would take to 0.25 + 15 /
    sqrt(2 x 400) = 0.780); 0.6 kip/ft with 0.35 kip/ft over half the span are 95 psf at
    most, not heavy: reduced to 0.780."""
    def factor(second: dict[str, Any]) -> float:
        text = beam_text(
            [40.0], ["pinned"] * 2,
            [{"case": "D", "type": "uniform", "spans": "all", "w": 0.5},
             {"case": "L", "type": "uniform", "spans": "all", "w": 0.6},
             {"case": "L", "type": "uniform", "spans": "all", **second}],
            units="US", section={"E": 29000, "I": 800},
            cases={"D": "dead", "L": {"kind": "live",
                                      "reduction": {"tributary_width": 10.0, "kll": 2}}},
            combinations={"strength": "asce7-lrfd", "service": "characteristic"})
        design = envelope.tables(envelope.analyse(parse_text(text)))["design"]
        return float(design.column("live_reduction").to_pylist()[0])

    assert factor({"w": 0.6}) == 1.0
    assert factor({"w": 0.35, "start": 20.0, "end": 40.0}
                  ) == pytest.approx(0.25 + 15.0 / 800.0**0.5)
