"""Moment redistribution at interior supports (envelope.redistribution,
envelope.sizing.redistributed).

References, named beside each check:

- statics of a two-span beam under uniform load (three-moment equation: the elastic
  support moment of two equal spans is wL^2/8, common practice);
- ACI 318-19 6.6.5: at most the lesser of 1000 eps_t percent and 20 percent, none where
  eps_t < 0.0075; the reduced moments used for the span moments and the shears and
  reactions from statics, for each loading arrangement;
- EN 1992-1-1:2004 5.5(4) with the recommended values: delta >= k1 + k2 xu/d,
  k1 = 0.44, k2 = 1.25 (0.6 + 0.0014/eps_cu2) for fck <= 50 MPa; delta >= k5 = 0.7
  (class B, C) or k6 = 0.8 (class A); adjacent spans within a ratio of 0.5 to 2; above
  fck = 50 MPa k3 = 0.54, k4 = k2 and eps_cu2 of Table 3.1 are from memory;
- the brute-force reference of tests/reference.py (each case on each cell solved
  alone, every arrangement listed), each arrangement redistributed here by hand.
"""

from __future__ import annotations

import numpy as np
import pytest

from envelope import config
from envelope import redistribution as rd
from envelope.analysis import analyse
from envelope.combinations import build as build_combinations
from envelope.errors import CaseError
from envelope.model import Beam
from envelope.sizing import size

import beams
import reference as ref
from tolerances import ROUND_OFF, SOLVE

ACI = {"material": "concrete", "code": "aci318-19", "b": 300, "h": 600,
       "cover_to_bar_centre": 60, "fc": 30, "fy": 420}
EN = {"material": "concrete", "code": "en1992-1-1", "b": 300, "h": 600,
      "cover_to_bar_centre": 60, "fc": 30, "fy": 500}


def beam(spans: tuple[float, ...], dead: float, live: float = 0.0,
         design: dict | None = None, supports: tuple[str, ...] | None = None,
         method: str = "code") -> Beam:
    """A concrete beam (SI) under uniform dead and (patterned) live load on every span,
    one strength combination U = 1.0 D + 1.0 L and the characteristic service set."""
    loads = [{"case": "D", "type": "uniform", "spans": "all", "w": dead}]
    if live:
        loads.append({"case": "L", "type": "uniform", "spans": "all", "w": live})
    return beams.parse_text(beams.beam_text(
        list(spans), list(supports or ("pinned",) * (len(spans) + 1)), loads,
        section={"E": 30000, "I": 5.4e9}, cases={"D": "dead", "L": "live"},
        patterning={"method": method},
        combinations={"strength": "none", "service": "characteristic", "custom": [
            {"name": "U", "set": "strength", "factors": {"D": 1.0, "L": 1.0}}]},
        design=design), "t.toml")


def _moment_at(a, span: int, x: float) -> tuple[float, float]:
    """Strength moment envelope (max, min) at the station nearest x of a span."""
    st = a.stations
    i = int(np.argmin(np.abs(st.x_span - x) + 1e9 * (st.span != span)))
    env = a.station_envelopes["moment"]
    return float(env.max[i]), float(env.min[i])


# -- the two-span beam by hand --------------------------------------------------------

W, L = 30.0, 8.0


@pytest.mark.parametrize("r", [0.0, 0.1, 0.2])
def test_two_equal_spans_support_moment_is_reduced_by_the_fraction(r: float) -> None:
    # three-moment equation: M_B = -wL^2/8 (common practice); ACI 318-19 6.6.5: reduced
    # by r of its elastic value
    a = analyse(beam((L, L), W, design={**ACI, "redistribution": r}))
    _, m_min = _moment_at(a, 0, L)
    assert m_min == pytest.approx(-(1.0 - r) * W * L**2 / 8.0, rel=SOLVE)


@pytest.mark.parametrize("r", [0.0, 0.2])
def test_two_equal_spans_span_moment_and_reactions_by_statics(r: float) -> None:
    # statics of one span with its end moment (1 - r) wL^2/8: end reaction
    # R_A = wL/2 - (1 - r) wL/8, largest span moment R_A^2 / (2w), interior reaction the
    # rest of the load (ACI 318-19 6.6.5: span moments and reactions from statics)
    a = analyse(beam((L, L), W, design={**ACI, "redistribution": r}))
    ra = W * L / 2.0 - (1.0 - r) * W * L / 8.0
    assert a.design_actions["moment_pos"][0] == pytest.approx(ra**2 / (2.0 * W), rel=SOLVE)
    reactions = a.reaction_envelopes["reaction"].max
    assert reactions == pytest.approx([ra, 2.0 * W * L - 2.0 * ra, ra], rel=SOLVE)
    assert reactions.sum() == pytest.approx(2.0 * W * L, rel=ROUND_OFF)


def test_twenty_percent_gives_the_hand_values() -> None:
    # 0.8 wL^2/8 = 192 kN*m at the support, 0.08 wL^2 = 153.6 kN*m in the span (w = 30
    # kN/m, L = 8 m), by the statics above
    a = analyse(beam((L, L), W, design={**ACI, "redistribution": 0.2}))
    cols = size(a)
    assert cols["moment_design"][2] == pytest.approx(-192.0, rel=SOLVE)
    assert cols["moment_design"][1] == pytest.approx(153.6, rel=SOLVE)
    assert list(cols["redistribution"]) == [0.0, 0.0, 0.2, 0.2, 0.0, 0.0]


def test_shear_jumps_by_the_reactions_after_redistribution() -> None:
    # equilibrium at the interior support: V(right) - V(left) = R_B (statics)
    a = analyse(beam((L, L), W, design={**ACI, "redistribution": 0.15}))
    st = a.stations
    v = a.station_envelopes["shear"].max
    left = int(np.flatnonzero((st.span == 0) & (st.x_span == L))[0])
    right = int(np.flatnonzero((st.span == 1) & (st.x_span == 0.0))[0])
    rb = a.reaction_envelopes["reaction"].max[1]
    assert v[right] - v[left] == pytest.approx(rb, rel=SOLVE)


def test_service_deflection_stays_elastic() -> None:
    # redistribution is a strength device: service results are those of the elastic
    # analysis (common practice)
    plain = analyse(beam((L, L), W, design=ACI))
    redist = analyse(beam((L, L), W, design={**ACI, "redistribution": 0.2}))
    np.testing.assert_array_equal(redist.station_envelopes["deflection"].max,
                                  plain.station_envelopes["deflection"].max)
    np.testing.assert_array_equal(redist.reaction_envelopes["service_reaction"].max,
                                  plain.reaction_envelopes["service_reaction"].max)


# -- the envelope equals every arrangement redistributed by hand -----------------------


def _phi(beam_: Beam, joint: int, span: np.ndarray, x: np.ndarray) -> np.ndarray:
    """The unit support-moment diagram of ``joint``: 1 there, linear to 0 at the joints
    either side (statics of a self-equilibrating support moment)."""
    lengths = [sp.length for sp in beam_.spans]
    out = np.zeros(x.size)
    on_left = span == joint - 1
    on_right = span == joint
    out[on_left] = x[on_left] / lengths[joint - 1]
    out[on_right] = 1.0 - x[on_right] / lengths[joint]
    return out


@pytest.mark.parametrize("method", ["code", "exhaustive"])
def test_envelope_equals_brute_force_redistribution_of_every_arrangement(method: str
                                                                         ) -> None:
    fractions = [0.0, 0.15, 0.08, 0.0]
    b = beam((7.0, 9.0, 6.0), 20.0, 25.0, design={**ACI, "redistribution": fractions},
             method=method)
    a = analyse(b)
    st = a.stations
    points = list(zip(st.span.tolist(), st.x_span.tolist(), st.right.tolist(), strict=True))
    n = len(points)
    joints = [1, 2]
    lengths = [sp.length for sp in b.spans]
    points += [(j - 1, lengths[j - 1], False) for j in joints]  # the support moments
    table = ref.unit_table(b, points, deflection=False)
    combos = [c for c in build_combinations(b.cases, b.combinations) if c.set == "strength"]
    values = []
    for combo in combos:
        coef, _ = ref.arrangements(b, combo, table)
        m = table.values["moment"] @ coef              # (points, arrangements), elastic
        for k, j in enumerate(joints):
            mj = m[n + k]                               # this arrangement's support moment
            m[:n] -= fractions[j] * _phi(b, j, st.span, st.x_span)[:, None] * mj[None, :]
        values.append(m[:n])
    brute = np.concatenate(values, axis=1)
    env = a.station_envelopes["moment"]
    scale = np.abs(brute).max()
    np.testing.assert_allclose(env.max, brute.max(axis=1), rtol=0, atol=SOLVE * scale)
    np.testing.assert_allclose(env.min, brute.min(axis=1), rtol=0, atol=SOLVE * scale)


def test_reactions_of_every_arrangement_sum_to_its_load() -> None:
    # each arrangement stays in equilibrium (ACI 318-19 6.6.5): the strength reactions
    # of the dead load alone, all spans loaded, sum to the load
    b = beam((7.0, 9.0, 6.0), 20.0, design={**ACI, "redistribution": [0, 0.2, 0.1, 0]})
    a = analyse(b)
    assert a.reaction_envelopes["reaction"].max.sum() == pytest.approx(20.0 * 22.0,
                                                                       rel=SOLVE)


# -- the codes' limits by hand ----------------------------------------------------------


@pytest.mark.parametrize(("eps_t", "allowed"), [
    (0.0075, 0.075),   # ACI 318-19 6.6.5: 1000 * 0.0075 = 7.5 percent
    (0.0100, 0.100),   # 10 percent
    (0.0200, 0.200),   # 20 percent, the ceiling
    (0.0300, 0.200),   # the ceiling still
    (0.0074, 0.0),     # below eps_t = 0.0075: none
])
def test_aci_allowed_fraction_from_eps_t(eps_t: float, allowed: float) -> None:
    assert float(rd.aci_allowed(eps_t)) == pytest.approx(allowed, abs=ROUND_OFF)


@pytest.mark.parametrize(("xu_d", "fck", "steel", "delta"), [
    (0.25, 30.0, "B", 0.44 + 1.25 * 0.25),    # k1 + k2 xu/d, k2 = 1.25 (0.6 + 0.4) = 1.25
    (0.448, 30.0, "B", 1.0),                  # the x/d = 0.448 of delta = 1
    (0.10, 30.0, "B", 0.7),                   # k5 governs
    (0.10, 30.0, "C", 0.7),                   # k5 for class C too
    (0.10, 30.0, "A", 0.8),                   # k6, class A
    # fck = 70 (from memory): eps_cu2 = 2.6 + 35 (0.2)^4 = 2.656 per mille (Table 3.1),
    # k4 = 1.25 (0.6 + 1.4 / 2.656), k3 = 0.54
    (0.25, 70.0, "B", 0.54 + 1.25 * (0.6 + 1.4 / 2.656) * 0.25),
])
def test_en_least_delta_by_hand(xu_d: float, fck: float, steel: str, delta: float) -> None:
    # EN 1992-1-1:2004 5.5(4), recommended values
    assert float(rd.en_delta_min(xu_d, fck, steel)) == pytest.approx(delta, rel=ROUND_OFF)
    assert float(rd.en_allowed(xu_d, fck, steel)) == pytest.approx(max(1.0 - delta, 0.0),
                                                                   abs=ROUND_OFF)


# -- checked after sizing, and "max" -----------------------------------------------------


def test_status_fails_where_the_fraction_asked_is_not_allowed() -> None:
    # heavy load on a small section: eps_t at the support about 0.009 after 20 percent,
    # so ACI 318-19 6.6.5 allows 1000 eps_t = about 9 percent, less than the 20 asked
    cols = size(analyse(beam((L, L), 55.0, design={**ACI, "redistribution": 0.2})))
    eps = cols["eps_t"][2]
    for i in (2, 3):
        assert "moment redistribution 20.0 % at support 2 exceeds" in cols["status"][i]
        assert "ACI 318-19 6.6.5" in cols["status"][i]
    assert cols["redistribution_allowed"][2] < 0.2
    assert 0.0075 <= eps < 0.02


def test_status_ok_where_the_fraction_asked_is_allowed() -> None:
    cols = size(analyse(beam((L, L), W, design={**ACI, "redistribution": 0.2})))
    assert cols["redistribution_allowed"][2] == pytest.approx(0.2)
    assert all("redistribution" not in s for s in cols["status"])
    assert "redistributed by 20.0 %" in cols["note"][2]


def test_en_span_ratio_outside_half_to_two_fails() -> None:
    # EN 1992-1-1 5.5(4): adjacent spans 8 / 3.5 = 2.29, outside 0.5 to 2
    cols = size(analyse(beam((8.0, 3.5), 20.0, design={**EN, "redistribution": 0.1})))
    assert cols["redistribution_allowed"][2] == 0.0
    assert "adjacent spans ratio 2.29" in cols["status"][2]
    assert "EN 1992-1-1 5.5(4)" in cols["status"][2]


@pytest.mark.parametrize("design", [ACI, EN])
def test_largest_allowed_converges_within_the_limit(design: dict) -> None:
    # a trial at the ceiling that the section does not allow: lowered, sized again,
    # until the fraction used is within what the section designed allows
    a = analyse(beam((L, L), 45.0, design={**design, "redistribution": "max"}))
    cols = size(a)
    used, allowed = cols["redistribution"][2], cols["redistribution_allowed"][2]
    assert 2 <= a.redistribution_sizings <= config.REDISTRIBUTION_MAX_SIZINGS
    assert 0.0 < used <= allowed + config.REDISTRIBUTION_ATOL
    assert used < rd.largest(a.beam.design)
    assert all("redistribution" not in s for s in cols["status"])
    assert "the largest allowed" in cols["note"][2]


def test_largest_allowed_is_the_ceiling_where_the_section_allows_it() -> None:
    a = analyse(beam((L, L), W, design={**ACI, "redistribution": "max"}))
    assert a.redistribution_sizings == 1
    assert size(a)["redistribution"][2] == pytest.approx(0.2)


def test_largest_allowed_is_none_where_the_section_is_not_ductile() -> None:
    # ACI 318-19 6.6.5: eps_t < 0.0075 at the support even after 20 percent: none
    cols = size(analyse(beam((L, L), 70.0, design={**ACI, "redistribution": "max"})))
    assert cols["redistribution"][2] == 0.0
    assert "the section designed allows none" in cols["note"][2]
    assert all("redistribution" not in s for s in cols["status"])


# -- where moment cannot be redistributed ------------------------------------------------


def test_supports_beside_a_cantilever_or_at_the_ends_are_excluded() -> None:
    b = beam((8.0, 6.0, 2.0), 20.0, design=ACI,
             supports=("pinned", "pinned", "pinned", "free"))
    why = rd.excluded(b)
    assert why[0] == why[3] == "an end support"
    assert why[1] == ""
    assert "neighbouring joint" in why[2]


def test_a_single_fraction_skips_excluded_supports_and_says_why() -> None:
    b = beam((8.0, 6.0, 2.0), 20.0, design={**ACI, "redistribution": 0.1},
             supports=("pinned", "pinned", "pinned", "free"))
    cols = size(analyse(b))
    joint_rows = {(s, sec): i for i, (s, sec) in enumerate(zip(cols["span"],
                                                                cols["section"],
                                                                strict=True))}
    assert cols["redistribution"][joint_rows[(1, "right")]] == 0.1
    assert cols["redistribution"][joint_rows[(2, "right")]] == 0.0
    assert "no moment redistribution at support 3" in cols["note"][joint_rows[(2, "right")]]


def test_a_fraction_at_an_excluded_support_is_refused() -> None:
    with pytest.raises(CaseError, match=r"design.redistribution\[3\]: support 3 cannot"):
        beam((8.0, 6.0, 2.0), 20.0, design={**ACI, "redistribution": [0, 0.1, 0.1, 0]},
             supports=("pinned", "pinned", "pinned", "free"))


# -- shown where concrete sizing is shown --------------------------------------------------


def test_console_summary_names_the_redistribution_per_support() -> None:
    from envelope.sizing.table import sizing_summary

    text = sizing_summary(analyse(beam((L, L), W, design={**ACI, "redistribution": 0.15})))
    cols = size(analyse(beam((L, L), W, design={**ACI, "redistribution": 0.15})))
    allowed = 100.0 * cols["redistribution_allowed"][2]
    assert ("Moment redistribution (ACI 318-19 6.6.5), of the elastic support moment in "
            f"every strength arrangement: support 2 15.0 % (allowed {allowed:.1f} %)") in text
    assert "Service deflections are elastic" in text


def test_console_summary_is_silent_without_redistribution() -> None:
    from envelope.sizing.table import sizing_summary

    assert "redistribution" not in sizing_summary(analyse(beam((L, L), W, design=ACI)))


def test_report_checks_list_redistribution_with_its_clause() -> None:
    from envelope.report import checks, collect

    table = collect.Table("sizing", "", ("span", "section", "moment_design", "as_required",
                                         "as_max", "redistribution",
                                         "redistribution_allowed", "status"), {},
                          ((1, "right", -192.0, 1500.0, 4000.0, 0.2, 0.093,
                            "moment redistribution 20.0 % at support 2 exceeds the 9.3 % "
                            "allowed by 10.7 points (ACI 318-19 6.6.5: ...)"),
                           (2, "left", -192.0, 1500.0, 4000.0, 0.1, 0.2, "ok")))
    rows = [r for r in checks.checks(table, None, "aci318-19")
            if r["check"] == "redistribution"]
    assert [(r["result"], r["value"]) for r in rows] == [("fail", f"{0.2 / 0.093:.3f}"),
                                                        ("pass", "0.500")]
    assert all(r["clause"].startswith("ACI 318-19 6.6.5") for r in rows)


def test_explicit_cases_carry_redistributed_strength_and_elastic_service() -> None:
    # stations.parquet: a strength case's moment at the support is (1 - r) of the elastic
    # one (ACI 318-19 6.6.5); the service case's stays elastic, -wL^2/8 (common practice)
    from envelope.analysis import explicit_case_blocks

    a = analyse(beam((L, L), W, design={**ACI, "redistribution": 0.2}))
    n_strength = a.solved.strength.explicit_cases()[0].shape[1]
    support = -W * L**2 / 8.0
    found = 0
    for block in explicit_case_blocks(a):
        at = (block["span"] == 1) & (block["x_span"] == L)
        for case, m in zip(block["case"][at], block["moment"][at], strict=True):
            expected = 0.8 * support if case < n_strength else support
            assert m == pytest.approx(expected, rel=SOLVE)
            found += 1
    assert found >= 2
