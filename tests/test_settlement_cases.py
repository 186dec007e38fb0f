"""Support settlement as a load case of kind ``settlement``: read from the case file,
combined by the rule sets at their factor and only where it makes the effect worse.

Hand values (common practice): two equal spans L on three pins, EI, the middle support
settling delta gives a sagging moment 3 EI delta / L^2 over that support and end
reactions +3 EI delta / L^3; w on both spans gives -w L^2 / 8 there and 3/8 w L at the
ends.  EN 1990:2002 Table A1.2(B): G at 1.35 or 1.00, the settlement at gamma_G,set =
1.20 (NOTE 3, linear analysis) where unfavourable, 0 where favourable.
"""

from __future__ import annotations

from typing import Any

import pytest

import envelope
from envelope.errors import CaseError

from beams import beam_text, parse_text
from tolerances import SOLVE


def settling(strength: str = "en1990-6.10", s1: str | dict[str, Any] = "settlement",
             settlement: dict[str, Any] | None = None, middle: str = "pinned") -> str:
    """Two 6 m spans on three supports, EI = 1e5 kN*m^2: dead 10 kN/m on both and the
    middle support settling 10 mm (case S1); the arguments change one thing each."""
    return beam_text(
        [6.0, 6.0], ["pinned", middle, "pinned"],
        [{"case": "G", "type": "uniform", "spans": "all", "w": 10.0},
         {"case": "S1", "type": "settlement", "support": 2, "delta": "10 mm",
          **(settlement or {})}],
        section={"E": "1 kN/m^2", "I": "1e5 m^4"},
        cases={"G": "dead", "S1": s1},
        combinations={"strength": strength, "service": "characteristic"})


TEXT = settling()
EI, L, W, DELTA = 1e5, 6.0, 10.0, 0.01


def test_settlement_acts_at_1_20_only_where_unfavourable() -> None:
    result = envelope.analyse(parse_text(TEXT))
    tables = envelope.tables(result)
    env = tables["envelope"].to_pydict()
    i = next(k for k, (s, x) in enumerate(zip(env["span"], env["x_span"], strict=True))
             if s == 1 and x == L)
    m_g, m_s = -W * L**2 / 8, 3 * EI * DELTA / L**2
    assert env["moment_max"][i] == pytest.approx(1.0 * m_g + 1.2 * m_s, rel=SOLVE)
    assert env["moment_min"][i] == pytest.approx(1.35 * m_g, rel=SOLVE)
    reactions = tables["reactions"].to_pydict()
    r_g, r_s = 3 / 8 * W * L, 3 * EI * DELTA / L**3
    assert reactions["reaction_max"][0] == pytest.approx(1.35 * r_g + 1.2 * r_s, rel=SOLVE)
    assert reactions["reaction_min"][0] == pytest.approx(1.0 * r_g, rel=SOLVE)
    assert reactions["unfactored_S1"][1] == pytest.approx(-6 * EI * DELTA / L**3, rel=SOLVE)
    # service: the settlement at 1.0 where it deflects the beam more (the middle support
    # itself moves down by delta)
    j = env["x"].index(L)
    assert env["deflection_max"][j] == pytest.approx(DELTA * 1000.0, rel=SOLVE)


def test_asce_rows_take_the_settlement_at_1_0() -> None:
    text = settling(strength="asce7-lrfd")
    tables = envelope.tables(envelope.analyse(parse_text(text)))
    env = tables["envelope"].to_pydict()
    i = next(k for k, (s, x) in enumerate(zip(env["span"], env["x_span"], strict=True))
             if s == 1 and x == L)
    m_g, m_s = -W * L**2 / 8, 3 * EI * DELTA / L**2
    # ASCE 7-22 2.3.1: 1.4D alone (1.2D needs L, Lr, S, R or W with it)
    assert env["moment_max"][i] == pytest.approx(1.4 * m_g + 1.0 * m_s, rel=SOLVE)


@pytest.mark.parametrize(("change", "message"), [
    ({"s1": "dead"}, "kind 'settlement'"),
    ({"s1": {"kind": "settlement", "pattern": True}}, "not patterned"),
    ({"settlement": {"support": 4}}, "support"),
    ({"settlement": {"delta": 0.0}}, "zero"),
    ({"middle": "free"}, "nothing settles"),
])
def test_bad_settlements_are_refused(change: dict[str, Any], message: str) -> None:
    with pytest.raises(CaseError, match=message):
        parse_text(settling(**change))


@pytest.mark.parametrize("service", ["characteristic", "frequent", "quasi-permanent"])
@pytest.mark.parametrize("strength", ["en1990-6.10", "en1990-6.10ab", "asce7-lrfd"])
def test_settlement_beside_a_live_case_is_combined_at_its_own_factor(
        strength: str, service: str) -> None:
    """A settlement never leads nor accompanies as a variable action (it has no psi):
    it is added to each row at its own factor.  At the middle support (two spans, w on
    both): hogging from G and Q on both spans, sagging from the settlement only
    (EN 1990:2002 Table A1.2(B) with gamma_G,set 1.20; ASCE 7-22 2.3.1 and 2.3.4)."""
    text = beam_text(
        [6.0, 6.0], ["pinned", "pinned", "pinned"],
        [{"case": "G", "type": "uniform", "spans": "all", "w": 10.0},
         {"case": "Q", "type": "uniform", "spans": "all", "w": 5.0},
         {"case": "S1", "type": "settlement", "support": 2, "delta": "10 mm"}],
        section={"E": "1 kN/m^2", "I": "1e5 m^4"},
        cases={"G": "dead", "Q": "live", "S1": "settlement"},
        combinations={"strength": strength, "service": service})
    env = envelope.tables(envelope.analyse(parse_text(text)))["envelope"].to_pydict()
    i = next(k for k, (s, x) in enumerate(zip(env["span"], env["x_span"], strict=True))
             if s == 1 and x == L)
    m_g, m_q, m_s = -W * L**2 / 8, -5.0 * L**2 / 8, 3 * EI * DELTA / L**2
    if strength == "asce7-lrfd":   # 1.2D + 1.6L (2.3.1 eq. 2), with the settlement at
        # 1.0 and L left off (no 0.9D row without wind: eq. 5 needs W)
        low, high = 1.2 * m_g + 1.6 * m_q, 1.2 * m_g + 1.0 * m_s
    elif strength == "en1990-6.10":
        low, high = 1.35 * m_g + 1.5 * m_q, 1.0 * m_g + 1.2 * m_s
    else:                          # (6.10a) 1.35 G + 1.5 psi0 Q against (6.10b) 0.85 1.35 G + 1.5 Q
        low = min(1.35 * m_g + 1.5 * 0.7 * m_q, 0.85 * 1.35 * m_g + 1.5 * m_q)
        high = 1.0 * m_g + 1.2 * m_s
    assert env["moment_min"][i] == pytest.approx(low, rel=SOLVE)
    assert env["moment_max"][i] == pytest.approx(high, rel=SOLVE)
