"""Generated load combinations checked against the standards' equations.

Sources, as tagged in the project's reference list (section 1):
ASCE/SEI 7-22 2.3.1 and 2.4.1; EN 1990:2002+A1 6.4.3.2, 6.5.3, Table A1.1 and
Table A1.2(B).  A check marked "from memory" rests on a value or layout
recalled, not confirmed in a searched source; "derived" is exact algebra here.

Each expected row is typed from the standard's text: its factors, and which of its
cases may be left out where they help (EN 1990 Table A1.2(B): gamma_Q = 0 where
favourable, the leading action always acting; ASCE 7-22 2.3.1 and 2.4.1: "effects
of one or more loads not acting shall be investigated", so every variable load).
"""

from __future__ import annotations

import re

import pytest

from envelope.combinations import (
    GAMMA_G_INF,
    GAMMA_G_SUP,
    PSI,
    PSI_0,
    SERVICE_SETS,
    STRENGTH_SETS,
    XI,
    XI_UK,
    build,
    combination_name,
    partial_factors,
    psi,
    psi0,
    variable_alone,
)
from envelope.model import Combination, CombinationSpec, LoadCase

from tolerances import ROUND_OFF

D = LoadCase("D", "dead", False)
SDL = LoadCase("SDL", "dead", False)
L = LoadCase("L", "live", True)
LR = LoadCase("Lr", "roof_live", True)
S = LoadCase("S", "snow", False)
R = LoadCase("R", "rain", False)
W = LoadCase("W", "wind", False)

Row = frozenset[tuple[str, float]]


def rows(combos: tuple[Combination, ...], which: str = "strength") -> list[Row]:
    """The combinations of one set as factor maps (rounded, so 1.5 * 0.7 == 1.05)."""
    return [
        frozenset((name, round(f, 9)) for name, f in c.factors) for c in combos if c.set == which
    ]


def row(**factors: float) -> Row:
    return frozenset((name, round(f, 9)) for name, f in factors.items())


def strength(cases: tuple[LoadCase, ...], rule_set: str, **spec: object) -> list[Row]:
    return rows(build(cases, CombinationSpec(strength=rule_set, **spec)))  # type: ignore[arg-type]


def assert_same_rows(got: list[Row], expected: list[Row]) -> None:
    assert len(got) == len(set(got)), "a combination is listed twice"
    assert set(got) == set(expected)
    assert len(got) == len(expected)


# --------------------------------------------------------------------------
# ASCE 7-22 2.3.1 (LRFD)
# --------------------------------------------------------------------------


def test_lrfd_dead_and_live_only_gives_exactly_1_4d_and_1_2d_plus_1_6l() -> None:
    # ASCE 7-22 2.3.1 combinations 1 and 2 [C]; a D + L floor beam needs only these.
    combos = build((D, L), CombinationSpec(strength="asce7-lrfd"))
    assert [c.name for c in combos] == ["1.4D", "1.2D + 1.6L"]
    assert [c.factors for c in combos] == [(("D", 1.4),), (("D", 1.2), ("L", 1.6))]
    assert [c.source for c in combos] == ["ASCE 7-22 2.3.1 (1)", "ASCE 7-22 2.3.1 (2)"]
    assert all(c.set == "strength" for c in combos)


def test_lrfd_1_4d_governs_exactly_when_live_is_below_an_eighth_of_dead() -> None:
    # ASCE 7-22 2.3.1 (1) and (2); the D/8 threshold is derived (references 1.1 [D]):
    # 1.4D > 1.2D + 1.6L  <=>  L < D/8.
    combos = build((D, L), CombinationSpec(strength="asce7-lrfd"))
    one, two = combos
    for live, first_governs in ((0.10, True), (0.12, True), (0.13, False), (0.5, False)):
        effect = {"D": 1.0, "L": live}
        e1 = sum(f * effect[n] for n, f in one.factors)
        e2 = sum(f * effect[n] for n, f in two.factors)
        assert (e1 > e2) is first_governs


def test_lrfd_dead_live_roof_live_rows_match_combinations_1_to_3() -> None:
    # ASCE 7-22 2.3.1: (1) 1.4D; (2) 1.2D + 1.6L + 0.5Lr; (3) 1.2D + 1.6Lr + L [C];
    # (2) without Lr and (3) without L are the same equations with that load not
    # acting (loads-not-acting rule, from memory for 7-22).  No wind: no (4), (5).
    got = strength((D, L, LR), "asce7-lrfd")
    assert_same_rows(
        got,
        [
            row(D=1.4),
            row(D=1.2, L=1.6),
            row(D=1.2, L=1.6, Lr=0.5),
            row(D=1.2, Lr=1.6),
            row(D=1.2, Lr=1.6, L=1.0),
        ],
    )


def test_lrfd_every_dead_case_takes_the_dead_factor_and_names_show_each_case() -> None:
    # ASCE 7-22 2.3.1 (1), (2): D is every dead load, so SDL takes D's factor [C].
    combos = build((D, SDL, L), CombinationSpec(strength="asce7-lrfd"))
    assert [c.name for c in combos] == ["1.4D + 1.4SDL", "1.2D + 1.2SDL + 1.6L"]
    assert combos[1].factor_map == {"D": 1.2, "SDL": 1.2, "L": 1.6}


def test_lrfd_reduced_companion_live_halves_l_in_combinations_3_and_4_only() -> None:
    # ASCE 7-22 2.3.1 Exception 1: L factor 0.5 in combinations 3 and 4 [C].
    cases = (D, L, LR, W)
    full = build(cases, CombinationSpec(strength="asce7-lrfd"))
    reduced = build(cases, CombinationSpec(strength="asce7-lrfd", reduced_companion_live=True))
    assert len(full) == len(reduced)
    for a, b in zip(full, reduced, strict=True):
        equation = a.source.split("(")[1].split(")")[0]
        if equation in ("3", "4") and a.factor("L"):
            assert a.factor("L") == 1.0
            assert b.factor("L") == 0.5
            assert b.source.endswith("Exception 1")
            assert {n: f for n, f in b.factors if n != "L"} == {
                n: f for n, f in a.factors if n != "L"
            }
        else:
            assert b == a
    # (2) keeps 1.6L: the exception is for the companion live load only.
    assert row(D=1.2, L=1.6) in rows(reduced)
    assert row(D=1.2, Lr=1.6, L=0.5) in rows(reduced)
    assert row(D=1.2, W=1.0, L=0.5, Lr=0.5) in rows(reduced)


def test_wind_rows_only_with_a_wind_case() -> None:
    # ASCE 7-22 2.3.1 (4), (5) and 2.4.1 (5), (6a), (7) name W; 0.9D + 1.0W and
    # 0.6D + 0.6W are the uplift rows [C for LRFD (5); from memory for the ASD list].
    no_wind = (D, L, LR, S, R)
    lrfd = build(no_wind, CombinationSpec(strength="asce7-lrfd"))
    asd = build(no_wind, CombinationSpec(strength="asce7-asd"))
    assert {c.source for c in lrfd} == {f"ASCE 7-22 2.3.1 ({n})" for n in ("1", "2", "3")}
    assert {c.source for c in asd} == {f"ASCE 7-22 2.4.1 ({n})" for n in ("1", "2", "3a", "4a")}
    assert all(c.factor("D") >= 1.0 for c in (*lrfd, *asd))  # no 0.9D or 0.6D row

    lrfd_w = build((D, L, W), CombinationSpec(strength="asce7-lrfd"))
    asd_w = build((D, L, W), CombinationSpec(strength="asce7-asd"))
    assert ("ASCE 7-22 2.3.1 (5)", (("D", 0.9), ("W", 1.0))) in {
        (c.source, c.factors) for c in lrfd_w
    }
    assert ("ASCE 7-22 2.4.1 (7)", (("D", 0.6), ("W", 0.6))) in {
        (c.source, c.factors) for c in asd_w
    }
    assert all(c.factor("W") > 0.0 for c in (*lrfd_w, *asd_w) if c.factor("D") < 1.0)


# --------------------------------------------------------------------------
# ASCE 7-22 2.4.1 (ASD)
# --------------------------------------------------------------------------


def test_asd_roof_live_and_rain_alternatives_are_separate_rows() -> None:
    # ASCE 7-22 2.4.1 (3a), (4a): D + (Lr or 0.7S or R), one row per alternative
    # [C for 0.7S; from memory for the rest].
    got = strength((D, L, LR, S, R), "asce7-asd")
    assert_same_rows(
        got,
        [
            row(D=1.0),
            row(D=1.0, L=1.0),
            row(D=1.0, Lr=1.0),
            row(D=1.0, S=0.7),
            row(D=1.0, R=1.0),
            row(D=1.0, L=0.75, Lr=0.75),
            row(D=1.0, L=0.75, S=0.525),
            row(D=1.0, L=0.75, R=0.75),
        ],
    )
    combos = build((D, L, LR, S, R), CombinationSpec(strength="asce7-asd"))
    assert {c.source for c in combos} == {
        "ASCE 7-22 2.4.1 (1)",
        "ASCE 7-22 2.4.1 (2)",
        "ASCE 7-22 2.4.1 (3a)",
        "ASCE 7-22 2.4.1 (4a)",
    }


# --------------------------------------------------------------------------
# EN 1990 (6.10), (6.10a), (6.10b)
# --------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("category", "expected"),
    [
        ("A", 0.7),  # EN 1990 Table A1.1: domestic [C]
        ("B", 0.7),  # office [C]
        ("C", 0.7),  # congregation [C]
        ("D", 0.7),  # shopping [C]
        ("E", 1.0),  # storage [C]
        ("F", 0.7),  # vehicles <= 30 kN [C]
        ("G", 0.7),  # vehicles 30-160 kN [C]
        ("H", 0.0),  # roofs [C]
    ],
)
def test_psi0_by_category_follows_table_a1_1(category: str, expected: float) -> None:
    assert PSI_0[category] == expected
    assert psi0(LoadCase("Q", "live", True, category)) == expected
    # The category governs a roof-live case too.
    assert psi0(LoadCase("Q", "roof_live", True, category)) == expected


def test_psi0_defaults_office_roofs_low_site_snow_wind_and_rain() -> None:
    assert psi0(L) == 0.7  # EN 1990 Table A1.1, category B office (default) [C]
    assert psi0(LR) == 0.0  # Table A1.1, category H roofs (default) [C]
    assert psi0(S) == 0.5  # Table A1.1, snow, sites at or below 1000 m [C]
    assert psi0(W) == 0.6  # Table A1.1, wind [C]
    assert psi0(R) == 0.0  # no rain row in Table A1.1: this engine's choice
    with pytest.raises(ValueError, match="permanent"):
        psi0(D)
    with pytest.raises(ValueError, match="category"):
        psi0(LoadCase("Q", "live", True, "Z"))


def test_en_6_10_snow_and_wind_match_the_published_worked_cases() -> None:
    # SCI "Steel Buildings in Europe" Part 3 worked cases [C]:
    # snow leading 1.35G + 1.5S + 0.9W; wind leading 1.35G + 1.5W + 0.75S.
    got = strength((D, S, W), "en1990-6.10")
    assert row(D=1.35, S=1.5, W=0.9) in got
    assert row(D=1.35, W=1.5, S=0.75) in got


# --------------------------------------------------------------------------
# Service set, custom combinations, names
# --------------------------------------------------------------------------


def test_none_sets_give_nothing_and_unknown_sets_are_refused() -> None:
    assert build((D, L), CombinationSpec(strength="none", service="none")) == ()
    with pytest.raises(ValueError, match="strength"):
        build((D, L), CombinationSpec(strength="asce7-16"))
    with pytest.raises(ValueError, match="service"):
        build((D, L), CombinationSpec(service="asce7-lrfd"))
    with pytest.raises(ValueError, match="unknown load case"):
        build((D,), CombinationSpec(custom=(Combination("x", "strength", (("Q", 1.0),)),)))




# --------------------------------------------------------------------------
# Rows with what may be left out, typed from the standards' text
# --------------------------------------------------------------------------

#: A row as (factors, cases that act only where unfavourable).
Full = tuple[Row, frozenset[str]]


def full_rows(combos: tuple[Combination, ...], which: str = "strength") -> list[Full]:
    return [(frozenset((n, round(f, 9)) for n, f in c.factors), c.optional)
            for c in combos if c.set == which]


def full(optional: str = "", **factors: float) -> Full:
    """A row: factors by case, and the cases (space separated) that may be left out."""
    return row(**factors), frozenset(optional.split())


def assert_same_full_rows(got: list[Full], expected: list[Full]) -> None:
    assert len(got) == len(set(got)), "a combination is listed twice"
    assert set(got) == set(expected), (set(got) - set(expected), set(expected) - set(got))
    assert len(got) == len(expected)


def test_lrfd_2_3_1_rows_with_dead_live_snow_wind() -> None:
    # ASCE 7-22 2.3.1: (1) 1.4D; (2) 1.2D + 1.6L + (0.5Lr or 0.3S or 0.5R);
    # (3) 1.2D + 1.0S + (L or 0.5W); (4) 1.2D + 1.0W + L + (0.5Lr or 0.3S or 0.5R);
    # (5) 0.9D + 1.0W.  Strength-level snow at 1.0 and 0.3S [C, STRUCTURE magazine
    # "Ground Snow Loads for ASCE 7-22"]; the layout of (3) and (4) from memory.  An
    # "or" whose load is absent leaves the row without it (kept once).
    got = full_rows(build((D, L, S, W), CombinationSpec(strength="asce7-lrfd")))
    assert_same_full_rows(got, [
        full("", D=1.4),  # (1)
        full("L", D=1.2, L=1.6),  # (2) with Lr or R: absent
        full("L S", D=1.2, L=1.6, S=0.3),  # (2)
        full("S L", D=1.2, S=1.0, L=1.0),  # (3)
        full("S W", D=1.2, S=1.0, W=0.5),  # (3)
        full("W L", D=1.2, W=1.0, L=1.0),  # (4) with Lr or R: absent
        full("W L S", D=1.2, W=1.0, L=1.0, S=0.3),  # (4)
        full("W", D=0.9, W=1.0),  # (5): 0.9D where W does not act
    ])
    factors_on_snow = {f for r, _ in got for name, f in r if name == "S"}
    assert factors_on_snow == {1.0, 0.3}  # not the 7-16 1.6S and 0.5S


def test_asd_2_4_1_rows_with_dead_live_snow_wind() -> None:
    # ASCE 7-22 2.4.1: 1. D; 2. D + L; 3a. D + 0.7S; 4a. D + 0.75L + 0.75(0.7S);
    # 5. D + 0.6W; 6a. D + 0.75L + 0.75(0.6W) + 0.75(0.7S); 7. 0.6D + 0.6W.
    # 0.7S and the labels 3a, 4a, 6a [C, STRUCTURE magazine "ASCE 7-22 Flat Roof Snow
    # Load versus Minimum Snow Load"]; the rest from memory.
    got = full_rows(build((D, L, S, W), CombinationSpec(strength="asce7-asd")))
    assert_same_full_rows(got, [
        full("", D=1.0),  # 1
        full("L", D=1.0, L=1.0),  # 2
        full("S", D=1.0, S=0.7),  # 3a
        full("L S", D=1.0, L=0.75, S=0.525),  # 4a
        full("W", D=1.0, W=0.6),  # 5
        full("L W", D=1.0, L=0.75, W=0.45),  # 6a with Lr or R: absent
        full("L W S", D=1.0, L=0.75, W=0.45, S=0.525),  # 6a
        full("W", D=0.6, W=0.6),  # 7
    ])


def test_en_6_10_every_row_at_gamma_g_sup_and_at_gamma_g_inf() -> None:
    # EN 1990 (6.10) with Table A1.2(B): gamma_G,sup 1.35, gamma_G,inf 1.00, gamma_Q
    # 1.5 (0 where favourable); Table A1.1 psi_0 office 0.7, snow 0.5 [C].  Each
    # variable leads in turn and always acts; the other may be left out.
    assert (GAMMA_G_SUP, GAMMA_G_INF) == (1.35, 1.0)
    got = full_rows(build((D, SDL, L, S), CombinationSpec(strength="en1990-6.10")))
    assert_same_full_rows(got, [
        full("", D=1.35, SDL=1.35),
        full("", D=1.0, SDL=1.0),
        full("S", D=1.35, SDL=1.35, L=1.5, S=0.75),
        full("S", D=1.0, SDL=1.0, L=1.5, S=0.75),
        full("L", D=1.35, SDL=1.35, L=1.05, S=1.5),
        full("L", D=1.0, SDL=1.0, L=1.05, S=1.5),
    ])


def test_en_6_10_storage_accompanies_in_full_and_roofs_never_accompany() -> None:
    # EN 1990 Table A1.1: category E psi_0 = 1.0, category H psi_0 = 0 [C].
    storage = LoadCase("Ls", "live", True, "E")
    roof = LoadCase("Lr", "roof_live", True, "H")
    got = full_rows(build((D, storage, roof, W), CombinationSpec(strength="en1990-6.10")))
    expected = []
    for g in (1.35, 1.0):
        expected += [
            full("", D=g),
            full("W", D=g, Ls=1.5, W=0.9),  # storage leading; roof at 1.5 x 0 absent
            full("Ls W", D=g, Ls=1.5, Lr=1.5, W=0.9),  # roof leading
            full("Ls", D=g, Ls=1.5, W=1.5),  # wind leading
        ]
    assert_same_full_rows(got, expected)


def test_en_6_10ab_gives_6_10a_at_psi0_and_6_10b_with_xi_on_gamma_g_sup_only() -> None:
    # EN 1990 (6.10a): gamma_G G + gamma_Q psi_0 Q; (6.10b): xi gamma_G,sup G + gamma_Q Q
    # (xi reduces unfavourable permanent actions only); xi = 0.85, Table A1.2(B) [C].
    assert XI == 0.85
    combos = build((D, L), CombinationSpec(strength="en1990-6.10ab"))
    assert_same_full_rows(full_rows(combos), [
        full("", D=1.35), full("", D=1.0),  # (6.10a), no variable action
        full("", D=1.35, L=1.05), full("", D=1.0, L=1.05),  # (6.10a)
        full("", D=0.85 * 1.35, L=1.5), full("", D=1.0, L=1.5),  # (6.10b)
    ])
    assert [c.name for c in combos] == ["1.35D", "D", "1.35D + 1.05L", "D + 1.05L",
                                        "1.1475D + 1.5L", "D + 1.5L"]
    assert all("(6.10a)" in c.source for c in combos[:4])
    assert all("(6.10b)" in c.source for c in combos[4:])
    assert [c.leading for c in combos] == ["", "", "L", "L", "L", "L"]


def test_en_6_10b_governs_above_the_derived_ratio_0_45() -> None:
    # With one variable action, (6.10b) governs when Qk/Gk > 1.35(1 - xi)/(1.5(1 - psi0)),
    # 0.45 for xi = 0.85 and psi0 = 0.7 (references 1.3, derived).
    combos = build((D, L), CombinationSpec(strength="en1990-6.10ab"))
    six_a = [c for c in combos if "(6.10a)" in c.source and c.factor("L")
             and c.factor("D") == 1.35]
    six_b = [c for c in combos if "(6.10b)" in c.source and c.factor("D") < 1.35
             and c.factor("D") > 1.0]
    assert len(six_a) == 1 and len(six_b) == 1
    threshold = 1.35 * (1 - XI) / (1.5 * (1 - psi0(L)))
    assert threshold == pytest.approx(0.45, rel=ROUND_OFF)
    for ratio in (0.1, 0.3, 0.44, 0.46, 0.6, 2.0):
        effect = {"D": 1.0, "L": ratio}
        a = sum(f * effect[n] for n, f in six_a[0].factors)
        b = sum(f * effect[n] for n, f in six_b[0].factors)
        assert (b > a) is (ratio > threshold)


def test_uk_rule_set_takes_xi_0_925_so_1_25g_in_6_10b() -> None:
    # UK choice: xi = 0.925, so xi gamma_G,sup = 1.25 (references 1.3 [M]; a UK worked
    # example uses 1.25Gk + 1.5Qk [C]).
    assert XI_UK == 0.925
    combos = build((D, L), CombinationSpec(strength="en1990-6.10ab-uk"))
    six_b = [c for c in combos if "(6.10b)" in c.source]
    assert {c.factor("D") for c in six_b} == {round(0.925 * 1.35, 10), 1.0}
    assert "xi 0.925 x gamma_G,sup 1.35" in six_b[0].derivation


def test_national_partial_factors_and_psi_replace_the_recommended_values() -> None:
    spec = CombinationSpec(strength="en1990-6.10ab",
                           factors=(("G_sup", 1.2), ("G_inf", 0.9), ("Q", 1.6), ("xi", 0.9)))
    assert partial_factors(spec) == {"G_sup": 1.2, "G_inf": 0.9, "Q": 1.6, "xi": 0.9}
    wind = LoadCase("W", "wind", False, psi0=0.5, psi1=0.3, psi2=0.1)
    got = full_rows(build((D, S, wind), spec))
    assert full("W", D=1.2, S=1.6 * 0.5, W=1.6 * 0.5) in got  # (6.10a), S leading
    assert full("W", D=0.9 * 1.2, S=1.6, W=0.8) in got  # (6.10b), S leading
    assert full("S", D=0.9, S=0.8, W=1.6) in got  # (6.10b) at G_inf, W leading
    assert (psi(wind, 0), psi(wind, 1), psi(wind, 2)) == (0.5, 0.3, 0.1)
    with pytest.raises(ValueError, match="unknown key"):
        build((D,), CombinationSpec(strength="en1990-6.10", factors=(("gamma", 1.0),)))


def test_identical_generated_rows_are_kept_once_the_first() -> None:
    # With a roof (category H, psi_0 = 0 [EN 1990 Table A1.1]) as the only variable,
    # (6.10a) with the roof at 1.5 x 0 is the permanent-only 1.35G again.
    combos = build((D, LR), CombinationSpec(strength="en1990-6.10ab"))
    assert [c.name for c in combos] == ["1.35D", "D", "1.1475D + 1.5Lr", "D + 1.5Lr"]
    assert "(6.10a)" in combos[0].source


@pytest.mark.parametrize(
    ("category", "expected"),
    [("A", (0.7, 0.5, 0.3)), ("B", (0.7, 0.5, 0.3)), ("C", (0.7, 0.7, 0.6)),
     ("D", (0.7, 0.7, 0.6)), ("E", (1.0, 0.9, 0.8)), ("F", (0.7, 0.7, 0.6)),
     ("G", (0.7, 0.5, 0.3)), ("H", (0.0, 0.0, 0.0))],
)
def test_psi_1_and_psi_2_by_category_follow_table_a1_1(
        category: str, expected: tuple[float, float, float]) -> None:
    # EN 1990 Table A1.1, recommended values [C].
    assert PSI[category] == expected
    case = LoadCase("Q", "live", True, category)
    assert (psi(case, 0), psi(case, 1), psi(case, 2)) == expected
    assert PSI["snow"] == (0.5, 0.2, 0.0)  # sites at or below 1000 m [C]
    assert PSI["wind"] == (0.6, 0.2, 0.0)  # [C]


# --------------------------------------------------------------------------
# Service sets, deflection by kind, custom combinations, names
# --------------------------------------------------------------------------


def test_characteristic_6_14b_leads_each_action_in_turn_with_psi0_companions() -> None:
    # EN 1990 (6.14b): G + Qk,1 + sum psi_0,i Qk,i (references 1.3 [M]); psi_0 office
    # 0.7, snow 0.5 (Table A1.1 [C]).
    got = full_rows(build((D, L, S), CombinationSpec(service="characteristic")), "service")
    assert_same_full_rows(got, [
        full("", D=1.0),
        full("S", D=1.0, L=1.0, S=0.5),
        full("L", D=1.0, L=0.7, S=1.0),
    ])


def test_frequent_6_15b_psi1_on_the_leading_action_psi2_on_the_others() -> None:
    # EN 1990 (6.15b): G + psi_1,1 Qk,1 + sum psi_2,i Qk,i (references 1.3 [M]);
    # office psi_1 0.5, psi_2 0.3; snow psi_1 0.2, psi_2 0 (Table A1.1 [C]).
    got = full_rows(build((D, L, S), CombinationSpec(service="frequent")), "service")
    assert_same_full_rows(got, [
        full("", D=1.0),
        full("", D=1.0, L=0.5),  # snow at psi_2 = 0 is absent
        full("L", D=1.0, L=0.3, S=0.2),
    ])


def test_quasi_permanent_6_16b_every_variable_at_psi2() -> None:
    # EN 1990 (6.16b): G + sum psi_2,i Qk,i (references 1.3 [M]); storage psi_2 0.8.
    storage = LoadCase("Ls", "live", True, "E")
    got = full_rows(build((D, storage, S, W), CombinationSpec(service="quasi-permanent")),
                    "service")
    assert_same_full_rows(got, [full("Ls", D=1.0, Ls=0.8)])


def test_service_sets_may_be_listed_and_keep_their_rule_names() -> None:
    combos = build((D, L), CombinationSpec(
        strength="asce7-asd", service=("characteristic", "quasi-permanent")))
    assert [(c.name, c.set, c.rule) for c in combos] == [
        ("D", "strength", "asce7-asd"),
        ("D + L", "strength", "asce7-asd"),
        ("D (characteristic)", "service", "characteristic"),
        ("D + L (characteristic)", "service", "characteristic"),
        ("D + 0.3L", "service", "quasi-permanent"),
    ]


def test_variable_actions_alone_one_row_per_kind() -> None:
    # The deflection check by kind: L alone, and for roofs Lr, S or W alone (IBC Table
    # 1604.3, from memory); every case of a kind together, each leaving out what helps.
    partitions = LoadCase("Lp", "live", False)
    got = variable_alone((D, L, partitions, LR, S, W))
    assert [(c.name, c.factors, c.optional) for c in got] == [
        ("L + Lp", (("L", 1.0), ("Lp", 1.0)), frozenset({"L", "Lp"})),
        ("Lr", (("Lr", 1.0),), frozenset({"Lr"})),
        ("S", (("S", 1.0),), frozenset({"S"})),
        ("W", (("W", 1.0),), frozenset({"W"})),
    ]
    assert variable_alone((D, SDL)) == ()


def test_custom_combinations_follow_their_own_set_and_always_act() -> None:
    custom = (
        Combination("svc", "service", (("L", 1.0), ("D", 1.0))),
        Combination("1.25D+1.5L", "strength", (("D", 1.25), ("SDL", 1.25), ("L", 1.5))),
        Combination("zero", "strength", (("D", 1.0), ("L", 0.0))),
    )
    combos = build(
        (D, SDL, L),
        CombinationSpec(strength="asce7-lrfd", service="characteristic", custom=custom),
    )
    assert [c.name for c in combos] == [
        "1.4D + 1.4SDL",
        "1.2D + 1.2SDL + 1.6L",
        "1.25D+1.5L",
        "zero",
        "D + SDL",
        "D + SDL + L",
        "svc",
    ]
    by_name = {c.name: c for c in combos}
    assert by_name["svc"].set == "service"
    assert by_name["svc"].factors == (("D", 1.0), ("L", 1.0))  # declaration order
    assert by_name["zero"].factors == (("D", 1.0),)  # zero factor left out
    assert by_name["1.25D+1.5L"].source == "custom"
    assert all(not by_name[n].optional for n in ("svc", "zero", "1.25D+1.5L"))
    assert by_name["1.2D + 1.2SDL + 1.6L"].optional == frozenset({"L"})


def test_names_are_unique_and_readable_for_every_rule_set() -> None:
    cases = (D, SDL, L, LR, S, R, W)
    term = re.compile(r"^(\d+(\.\d+)?)?(D|SDL|L|Lr|S|R|W)$")
    for strength_set in STRENGTH_SETS:
        for service_set in SERVICE_SETS:
            spec = CombinationSpec(strength=strength_set, service=service_set)
            combos = build(cases, spec)
            names = [c.name for c in combos]
            assert len(names) == len(set(names)), (strength_set, service_set)
            for c in combos:
                base = re.sub(r" \([a-z0-9.-]+( \d+)?\)$", "", c.name)
                assert base == combination_name(c.factors)
                assert all(term.match(t) for t in base.split(" + ")), c.name
                assert c.source  # every row cites where it comes from
                assert all(f != 0.0 for _, f in c.factors)
                order = [n for n, _ in c.factors]
                assert order == [x.name for x in cases if x.name in order]
                # only variable actions are ever left out, and only those with a factor
                assert c.optional <= {n for n in order if n not in ("D", "SDL")}
                assert c.rule in (strength_set, service_set)
                assert len(c.derivation.split("; ")) == len(c.factors)


def test_a_custom_name_is_kept_and_a_generated_row_of_that_name_is_renamed() -> None:
    # ASCE 7-22 2.3.1 (1) is 1.4D [C]; the user's own "1.4D" keeps its name.
    mine = Combination("1.4D", "service", (("D", 1.0),))
    combos = build((D, L), CombinationSpec(strength="asce7-lrfd", custom=(mine,)))
    assert [(c.name, c.set, c.source) for c in combos] == [
        ("1.4D (asce7-lrfd)", "strength", "ASCE 7-22 2.3.1 (1)"),
        ("1.2D + 1.6L", "strength", "ASCE 7-22 2.3.1 (2)"),
        ("1.4D", "service", "custom"),
    ]
    with pytest.raises(ValueError, match="used twice"):
        build((D, L), CombinationSpec(custom=(mine, mine)))
