"""Internal hinges: moment releases inside a span or at a joint.

References: statics of a determinate hinged (Gerber) beam worked by hand, SymPy's beam
module (with its rotation hinge) as an independent solver for an indeterminate one, and
the mechanism a hinge makes named by the stability check.
"""

from __future__ import annotations

import numpy as np
import pytest

from envelope.errors import CaseError, UnstableBeamError

from beams import beam_text, case_reactions, parse_text, responses, solve_text

#: Exact linear algebra on a few elements: agreement to round-off.
RTOL = 1e-9

UDL = {"type": "uniform", "spans": "all", "w": 10.0}


def _gerber() -> str:
    """Spans 6 m and 6 m on three pins, a hinge 2 m into span 2 (x = 8): statically
    determinate."""
    return beam_text([6.0, {"length": 6.0, "hinges": [{"at": 2.0}]}],
                     ["pinned", "pinned", "pinned"], [UDL])


def test_determinate_hinged_beam_matches_statics() -> None:
    """By hand (common practice): the 4 m drop-in part is simply supported, R3 = 10*4/2
    = 20 kN and 20 kN on the hinge; the left part, 8 m long on supports at 0 and 6 with
    20 kN at its tip: R2 = (80*4 + 20*8)/6 = 80, R1 = 100 - 80 = 20; moment at support 2
    -(10*2^2/2 + 20*2) = -60; zero moment at the hinge; 10*4^2/8 = 20 at x = 10."""
    solved = solve_text(_gerber())
    assert case_reactions(solved)[:, 0] == pytest.approx([20.0, 80.0, 20.0], rel=RTOL)
    r = responses(solved, [0, 1, 1], [6.0, 2.0, 4.0])
    assert r.moment[:, 0] == pytest.approx([-60.0, 0.0, 20.0], abs=RTOL * 60)


def test_hinge_deflection_is_the_tip_of_the_part_that_carries_it() -> None:
    """The hinge deflects as the tip of the left part (an overhanging beam 0..8 on
    supports at 0 and 6, EI = 1, w = 10 over it and 20 kN at its tip) and the drop-in
    part adds 5 w L^4 / 384 EI at its middle to the chord (common practice).  The tip
    deflection by virtual work: for the overhang, delta = (w a / 24 EI)(4 a^2 L - L^3
    + 3 a^3) + P a^2 (L + a) / 3 EI with L = 6, a = 2 (common practice, handbook
    overhanging-beam cases)."""
    solved = solve_text(_gerber())
    L, a, w, P, EI = 6.0, 2.0, 10.0, 20.0, 1.0
    tip = w * a / (24 * EI) * (4 * a**2 * L - L**3 + 3 * a**3) + P * a**2 * (L + a) / (3 * EI)
    r = responses(solved, [1, 1, 1], [2.0, 4.0, 6.0])
    want_mid = tip / 2 + 5 * w * 4.0**4 / (384 * EI)
    assert r.deflection[:, 0] == pytest.approx([tip, want_mid, 0.0], abs=RTOL * abs(tip))


def test_indeterminate_hinged_beam_matches_sympy() -> None:
    """Fixed at 0, pins at 6 and 14, a hinge at 3, 10 kN/m over 14 m: SymPy's beam with
    a rotation hinge gives R = 70/3, 2035/24, 255/8 and deflections -165/4 at x = 3 and
    -820/3 at x = 10 (upward positive there), EI = 1."""
    text = beam_text([{"length": 6.0, "hinges": [{"at": 3.0}]}, 8.0],
                     ["fixed", "pinned", "pinned"], [UDL])
    solved = solve_text(text)
    assert case_reactions(solved)[:, 0] == pytest.approx([70 / 3, 2035 / 24, 255 / 8],
                                                         rel=RTOL)
    r = responses(solved, [0, 1], [3.0, 4.0])
    assert r.deflection[:, 0] == pytest.approx([165 / 4, 820 / 3], rel=RTOL)
    assert abs(responses(solved, 0, 3.0).moment[0, 0]) <= RTOL * 100


def test_hinge_at_a_joint_releases_the_moment_over_the_support() -> None:
    """A hinge at the end of span 1 over support 2 makes two simple spans: R = wL/2 at
    each end of each span and no moment over the support."""
    text = beam_text([{"length": 5.0, "hinges": [{"at": 5.0}]}, 7.0],
                     ["pinned", "pinned", "pinned"], [UDL])
    solved = solve_text(text)
    assert case_reactions(solved)[:, 0] == pytest.approx([25.0, 60.0, 35.0], rel=RTOL)
    r = responses(solved, [0, 1], [5.0, 3.5])
    assert r.moment[:, 0] == pytest.approx([0.0, 10 * 7.0**2 / 8], abs=RTOL * 100)


def test_a_hinge_in_a_simple_span_is_named_as_a_mechanism() -> None:
    text = beam_text([{"length": 6.0, "hinges": [{"at": 2.0}]}], ["pinned", "pinned"], [UDL])
    with pytest.raises(UnstableBeamError, match=r"hinges make a mechanism \(the part from "
                                                r"x = 0 m to x = 2 m; the part from x = 2 m"):
        parse_text(text)


def test_a_link_between_two_hinges_is_stable_but_three_in_a_row_are_not() -> None:
    """A drop-in part between two hinges hangs from two stable parts: stable.  Hinges at
    2 and 4 in the first of two 6 m spans on three pins leave the part 0..2 and the part
    2..4 free to fold (three hinges in a line with the pin at 0 and the part from 4 on)."""
    link = beam_text([6.0, {"length": 6.0, "hinges": [{"at": 2.0}, {"at": 4.0}]}, 6.0],
                     ["pinned"] * 4, [UDL])
    solved = solve_text(link)
    # the 2 m link carries 10 * 2 / 2 = 10 kN to each neighbour; statics of the whole
    assert case_reactions(solved)[:, 0].sum() == pytest.approx(180.0, rel=RTOL)
    assert responses(solved, 1, 3.0).moment[0, 0] == pytest.approx(10 * 2.0**2 / 8, rel=RTOL)
    folding = beam_text([{"length": 6.0, "hinges": [{"at": 2.0}, {"at": 4.0}]}, 6.0],
                        ["pinned"] * 3, [UDL])
    with pytest.raises(UnstableBeamError, match="x = 0 m to x = 2 m; the part from "
                                                "x = 2 m to x = 4 m can move"):
        parse_text(folding)


@pytest.mark.parametrize(("hinges", "message"), [
    ([{"at": 0.0}], "span's start"),
    ([{"at": 6.0}], "beam's end"),
    ([{"at": 2.0}, {"at": 2.0}], "two hinges"),
    ([{"at": 0.005}], "shorter than 1/500"),
    ([{"where": 2.0}], "unknown key"),
])
def test_bad_hinges_are_refused(hinges: list[dict[str, float]], message: str) -> None:
    text = beam_text([6.0, {"length": 6.0, "hinges": hinges}], ["pinned"] * 3, [UDL])
    with pytest.raises(CaseError, match=message) as err:
        parse_text(text)
    assert "spans[2].hinges[" in str(err.value)


def test_hinge_is_a_station_with_zero_moment_envelope() -> None:
    import envelope

    text = _gerber().replace('strength = "none"', 'strength = "asce7-lrfd"')
    table = envelope.tables(envelope.analyse(parse_text(text)))["envelope"].to_pydict()
    x = np.array(table["x"])
    at = np.flatnonzero(np.isclose(x, 8.0))
    assert at.size >= 1
    assert np.abs(np.array(table["moment_max"])[at]).max() <= 1e-9 * 100
    assert np.abs(np.array(table["moment_min"])[at]).max() <= 1e-9 * 100
