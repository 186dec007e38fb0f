"""Live-load patterns and their envelopes checked against handbook values and
the influence-line rules.

Sources, as tagged in the project's reference list (sections 2 and 3.3):
- "3.3 patterns": equal spans, w on the listed spans only, exact three-moment
  values (derived); the 2- and 3-span rows match AISC Steel Construction Manual
  Table 3-23 (from memory).
- "3.3 live-only envelope": coefficients of the envelope over all 2^n full-span
  patterns, 2-5 equal spans (derived by exhaustive enumeration), printed to 3-4
  digits.
- "2 influence-line rules": which spans to load for each target (from memory,
  verified by exhaustive enumeration, derived); "2 adjacent-only shortfall":
  ACI 318-19 6.4.2(b) / EN 1992-1-1 5.1.3(1)P note (b) against the exact
  envelope (derived).
- Partial loading of a simply supported span: V(x) is largest with the load on
  the part right of x only, V = w (L - x)^2 / (2 L) (statics, common practice).
- Favourable dead load: gamma_G,inf = 1.00 and gamma_G,sup = 1.35, EN 1990
  Table A1.2(B) (confirmed, SCI "Steel Buildings in Europe" Part 3, Table 3.1);
  its use on unloaded spans is the case-format contract's ``favourable_dead``.

Coefficients multiply w L (reactions, shears), w L^2 (moments) and w L^4 / EI
(deflections); positions are fractions of L from the span's left support.
A value written as a Fraction is exact (tolerance 1e-12); a value written as a
string is the printed decimal (tolerance half a unit in its last digit).
"""

from __future__ import annotations

import tomllib
from dataclasses import dataclass, field
from fractions import Fraction as F
from functools import cache

import numpy as np
import pytest

import envelope
from envelope.analysis import Analysis, analyse
from envelope.casefile import parse_case
from envelope.model import Beam
from envelope.recovery import Points, make_points
from envelope.solved import Solved, case_responses, envelope_at, solve_beam

from beams import beam_text
from tolerances import SMALL_SOLVE, SOLVE

Num = F | str
DENSE = 100_001  # points per span for maxima and their positions (spacing 1e-5 L)


def target(value: Num) -> tuple[float, float]:
    """A reference value and its tolerance: exact to SMALL_SOLVE, printed to half a
    unit in the last printed digit (plus SMALL_SOLVE for rounding noise)."""
    if isinstance(value, F):
        return float(value), SMALL_SOLVE
    decimals = len(value.split(".")[1]) if "." in value else 0
    return float(value), 0.5 * 10.0**-decimals + SMALL_SOLVE


def assert_ref(got: float, value: Num, what: str, extra_tol: float = 0.0) -> None:
    expected, tol = target(value)
    assert abs(got - expected) <= tol + extra_tol, f"{what}: got {got!r}, expected {value}"


def beam_toml(n: int, *, loaded: str | list[int] = "all", kind: str = "live",
              method: str = "none", length: float = 1.0, w: float = 1.0, EI: float = 1.0,
              segments: int | None = None, service: bool = False, stations: int = 21) -> str:
    """n equal pinned spans, one load case "L" of intensity w on ``loaded`` spans (1-based,
    or ``"all"``) and a custom strength combination {L = 1.0} (plus a service one if
    asked)."""
    custom = [{"name": "L only", "set": "strength", "factors": {"L": 1.0}}]
    if service:
        custom.append({"name": "L service", "set": "service", "factors": {"L": 1.0}})
    patterning: dict[str, object] = {"method": method}
    if segments is not None:
        patterning["segments"] = segments
    return beam_text([length] * n, ["pinned"] * (n + 1),
                     [{"case": "L", "type": "uniform", "spans": loaded, "w": w}],
                     section={"E": f"{EI!r} kN/m^2", "I": "1 m^4"}, cases={"L": kind},
                     combinations={"strength": "none", "service": "none", "custom": custom},
                     patterning=patterning, output={"stations_per_span": stations})


def build(text: str) -> Beam:
    return parse_case(tomllib.loads(text), "pattern-test.toml")


@cache
def live_analysis(n: int, method: str, stations: int = 21,
                  segments: int | None = None) -> Analysis:
    """Live-only analysis of n unit spans (L = 1, w = 1, EI = 1), strength and service."""
    return analyse(build(beam_toml(n, method=method, service=True, stations=stations,
                                   segments=segments)))


def dense_points(solved: Solved, span: int, m: int = DENSE, right: bool = True) -> Points:
    beam = solved.beam
    x = np.linspace(0.0, beam.spans[span].length, m)
    return make_points(beam, np.full(m, span), x, np.full(m, right))


def support_points(solved: Solved) -> Points:
    """Every interior support, as the right end of the span on its left (moment and
    left-side shear)."""
    beam = solved.beam
    n = beam.n_spans
    return make_points(beam, np.arange(n - 1), [beam.spans[j].length for j in range(n - 1)],
                       np.zeros(n - 1, dtype=bool))


def labels(spans: list[int] | set[int], n: int) -> str:
    """The contract's ``_loaded`` text for 1-based loaded spans."""
    chosen = sorted(s for s in spans if 1 <= s <= n)
    return "all" if len(chosen) == n else " ".join(str(s) for s in chosen)


# -- influence-line rules (references section 2) as code ------------------------


def rule_span_sagging(i: int, n: int) -> str:
    """Max +M in span i: i, i +- 2, i +- 4 ..."""
    return labels({s for s in range(1, n + 1) if (s - i) % 2 == 0}, n)


def rule_support(j: int, n: int) -> str:
    """Max -M (and max shear, max reaction) at support j between spans j and j+1:
    j and j+1, then every second span beyond: j-2, j-4 ... and j+3, j+5 ..."""
    left = set(range(j, 0, -2))
    right = set(range(j + 1, n + 1, 2))
    return labels(left | right, n)


def rule_span_hogging(i: int, n: int) -> str:
    """Max hogging inside span i: the spans next to i plus alternates beyond; i unloaded."""
    return labels({s for s in range(1, n + 1) if (s - i) % 2 == 1}, n)


def rule_end_reaction(n: int) -> tuple[str, str]:
    """Max end reaction: spans 1, 3, 5 ... (left end), mirrored for the right end."""
    return labels(set(range(1, n + 1, 2)), n), labels(set(range(n, 0, -2)), n)


# -- 3.3 patterns: w on the listed spans only -----------------------------------


@dataclass(frozen=True)
class Pattern:
    """One row of references 3.3 "Patterns" (w on ``loaded`` only), as coefficients."""

    name: str
    n: int
    loaded: tuple[int, ...]  # 1-based spans carrying w
    support_moment: dict[int, Num] = field(default_factory=dict)  # 1-based joint
    reaction: dict[int, Num] = field(default_factory=dict)  # 1-based joint
    span_max: dict[int, tuple[Num, Num | None]] = field(default_factory=dict)  # (M, x/L)
    shear_at_b: dict[str, Num] = field(default_factory=dict)  # "V_BA", "V_BC" magnitudes
    deflection: tuple[int, Num, Num | None] | None = None  # span, max, x/L
    constant_moment: dict[int, Num] = field(default_factory=dict)  # span -> M throughout


PATTERNS = [
    # [D]; 2 spans row matches AISC Table 3-23 [M].
    Pattern("2 spans, span 1", 2, (1,),
            support_moment={2: F(-1, 16)},
            reaction={1: F(7, 16), 2: F(5, 8), 3: F(-1, 16)},
            span_max={1: (F(49, 512), F(7, 16))},
            deflection=(1, "0.00915", "0.472")),
    # [D]; AISC Table 3-23 [M].  Printed as -0.05, 0.45, 0.55, 0.45L: exact decimals of
    # the three-moment solution (M_B = M_C = -1/20; R_A = 1/2 - 1/20; x = R_A / w).
    # Joints 3, 4 and span 3 are the mirror images (the pattern is symmetric).
    Pattern("3 spans, 1+3", 3, (1, 3),
            support_moment={2: F(-1, 20), 3: F(-1, 20)},
            reaction={1: F(9, 20), 2: F(11, 20), 3: F(11, 20), 4: F(9, 20)},
            span_max={1: (F(81, 800), F(9, 20)), 3: (F(81, 800), F(11, 20))},
            deflection=(1, "0.00992", "0.479"),
            constant_moment={2: F(-1, 20)}),
    # [D]; AISC Table 3-23 [M].  0.075 = 1/8 - 1/20 exactly; midspan by symmetry.
    Pattern("3 spans, 2", 3, (2,),
            support_moment={2: F(-1, 20), 3: F(-1, 20)},
            reaction={1: F(-1, 20), 2: F(11, 20), 3: F(11, 20), 4: F(-1, 20)},
            span_max={2: (F(3, 40), F(1, 2))},
            deflection=(2, "0.00677", F(1, 2))),
    # [D]; AISC Table 3-23 [M].  V_BA = 37/60, V_BC = 7/12.
    Pattern("3 spans, 1+2", 3, (1, 2),
            support_moment={2: F(-7, 60), 3: F(-1, 30)},
            reaction={1: F(23, 60), 2: F(6, 5), 3: F(9, 20), 4: F(-1, 30)},
            span_max={1: ("0.0735", None), 2: ("0.0535", None)},
            shear_at_b={"V_BA": F(37, 60), "V_BC": F(7, 12)}),
    # [D].  The table prints span 1's max +M as 0.0997; with its own R_A = 25/56 the
    # maximum is R_A^2 / 2 = 625/6272 = 0.099649 (statics), i.e. 0.0996 to 4 digits:
    # the printed digit is a double rounding (0.09965 -> 0.0997), so the exact value
    # is checked.
    Pattern("4 spans, 1+3", 4, (1, 3),
            support_moment={2: F(-3, 56), 3: F(-1, 28), 4: F(-3, 56)},
            reaction={1: F(25, 56), 2: F(4, 7), 3: F(13, 28), 4: F(4, 7), 5: F(-3, 56)},
            span_max={1: (F(625, 6272), F(25, 56)), 3: ("0.0805", None)},
            deflection=(1, "0.0097", None)),
    # [D].  M_C = -3/28, max +M 11/196 (in span 2; span 3 by symmetry).
    Pattern("4 spans, 2+3", 4, (2, 3),
            support_moment={3: F(-3, 28)},
            span_max={2: (F(11, 196), None), 3: (F(11, 196), None)}),
    # [D].  M_B = -27/224, R_B = 137/112.
    Pattern("4 spans, 1+2+4", 4, (1, 2, 4),
            support_moment={2: F(-27, 224)},
            reaction={2: F(137, 112)}),
]

SCALES = [(1.0, 1.0, 1.0), (2.5, 4.0, 7.0)]  # (L, w, EI): coefficients must scale


@pytest.mark.parametrize("scale", SCALES, ids=["unit", "scaled"])
@pytest.mark.parametrize("pat", PATTERNS, ids=[p.name for p in PATTERNS])
def test_single_case_on_listed_spans_matches_handbook_pattern(
    pat: Pattern, scale: tuple[float, float, float]
) -> None:
    """A non-patterned case placed on the listed spans only (references 3.3, [D];
    2- and 3-span rows AISC Table 3-23 [M])."""
    L, w, EI = scale
    beam = build(beam_toml(pat.n, loaded=list(pat.loaded), kind="dead", length=L, w=w, EI=EI))
    solved = solve_beam(beam)
    x_unit = np.linspace(0.0, 1.0, DENSE)
    resp = [case_responses(solved, dense_points(solved, j)) for j in range(pat.n)]
    m_scale, v_scale, d_scale = w * L**2, w * L, w * L**4 / EI

    for joint, value in pat.support_moment.items():
        # moment at joint = end of span joint-1 = start of span joint (continuity)
        end_of_left = resp[joint - 2].moment[-1, 0] / m_scale
        start_of_right = resp[joint - 1].moment[0, 0] / m_scale
        assert_ref(end_of_left, value, f"support moment at joint {joint}")
        assert_ref(start_of_right, value, f"support moment at joint {joint} (right side)")

    per_case = np.zeros((solved.unit_cases.n_units, 1))
    per_case[np.arange(solved.unit_cases.n_units), solved.unit_cases.case] = 1.0
    reaction = (solved.solution.reaction @ per_case)[:, 0] / v_scale
    for joint, value in pat.reaction.items():
        assert_ref(reaction[joint - 1], value, f"reaction at joint {joint}")
    # statics: the reactions carry the load (w on each loaded span)
    assert abs(reaction.sum() - len(pat.loaded)) <= SMALL_SOLVE

    for span, (value, pos) in pat.span_max.items():
        m = resp[span - 1].moment[:, 0] / m_scale
        k = int(np.argmax(m))
        # the dense grid may miss the peak by (w/2) (dx/2)^2 = 1.25e-11 w L^2
        assert_ref(m[k], value, f"max +M in span {span}", extra_tol=2e-11)
        if pos is not None:
            assert_ref(x_unit[k], pos, f"position of max +M in span {span}", extra_tol=1e-5)

    for name, value in pat.shear_at_b.items():
        v = resp[0].shear[-1, 0] if name == "V_BA" else resp[1].shear[0, 0]
        # V_BA is the shear just left of B (negative), V_BC just right of it
        assert_ref(abs(v) / v_scale, value, name)
        assert (v < 0.0) if name == "V_BA" else (v > 0.0)

    for span, value in pat.constant_moment.items():
        m = resp[span - 1].moment[:, 0] / m_scale
        assert_ref(float(m.min()), value, f"constant moment in span {span}")
        assert_ref(float(m.max()), value, f"constant moment in span {span}")

    if pat.deflection is not None:
        span, value, pos = pat.deflection
        d = np.concatenate([r.deflection[:, 0] for r in resp]) / d_scale
        k = int(np.argmax(d))
        assert k // DENSE == span - 1, "the largest deflection is in the stated span"
        assert_ref(d[k], value, f"max deflection in span {span}")
        if pos is not None:
            assert_ref(x_unit[k % DENSE], pos, "position of max deflection", extra_tol=1e-5)


# -- the same patterns through the `code` machinery -----------------------------


@dataclass(frozen=True)
class CodeCheck:
    """A pattern value that `code` patterning must reproduce at a station, with label."""

    name: str
    n: int
    stations: int  # stations_per_span, chosen so that x lies on a station
    quantity: str
    extreme: str  # "max" or "min"
    span: int  # 1-based
    x: F  # x / L
    value: Num
    loaded: str


CODE_CHECKS = [
    # references 3.3 rows [D] (2- and 3-span rows AISC Table 3-23 [M]); the arrangements
    # are those of ACI 318-19 6.4.2 / EN 1992-1-1 5.1.3(1)P (alternate and adjacent
    # spans); one span loaded is the "alternate" set of a 2-span beam.
    CodeCheck("2 spans, span 1: max +M", 2, 17, "moment", "max", 1, F(7, 16), F(49, 512), "1"),
    CodeCheck("3 spans, 1+3: max +M span 1", 3, 21, "moment", "max", 1, F(9, 20),
              F(81, 800), "1 3"),
    CodeCheck("3 spans, 1+3: max +M span 3", 3, 21, "moment", "max", 3, F(11, 20),
              F(81, 800), "1 3"),
    CodeCheck("3 spans, 1+3: span 2 hogging throughout", 3, 21, "moment", "min", 2,
              F(1, 2), F(-1, 20), "1 3"),
    CodeCheck("3 spans, 2: max +M span 2", 3, 21, "moment", "max", 2, F(1, 2), F(3, 40), "2"),
    CodeCheck("3 spans, 2: max deflection span 2", 3, 21, "deflection", "max", 2, F(1, 2),
              "0.00677", "2"),
    CodeCheck("3 spans, 1+2: M_B", 3, 21, "moment", "min", 1, F(1), F(-7, 60), "1 2"),
    CodeCheck("3 spans, 1+2: V_BA", 3, 21, "shear", "min", 1, F(1), F(-37, 60), "1 2"),
    CodeCheck("3 spans, 1+2: V_BC", 3, 21, "shear", "max", 2, F(0), F(7, 12), "1 2"),
    CodeCheck("4 spans, 1+3: max +M span 1", 4, 57, "moment", "max", 1, F(25, 56),
              F(625, 6272), "1 3"),
    CodeCheck("4 spans, 1+3: max +M span 3", 4, 57, "moment", "max", 3, F(27, 56),
              "0.0805", "1 3"),
    CodeCheck("4 spans, 2+3: M_C", 4, 57, "moment", "min", 2, F(1), F(-3, 28), "2 3"),
]


def station_row(a: Analysis, span: int, x: float) -> int:
    """The station row at (span 1-based, x_span); at a span end, the row of that span."""
    pts = a.stations
    rows = np.flatnonzero((pts.span == span - 1) & (np.abs(pts.x_span - x) <= 1e-12))
    assert rows.size == 1, f"x = {x} is one station of span {span}"
    return int(rows[0])


@pytest.mark.parametrize("chk", CODE_CHECKS, ids=[c.name for c in CODE_CHECKS])
def test_code_patterning_reproduces_pattern_value_and_label_at_station(chk: CodeCheck) -> None:
    a = live_analysis(chk.n, "code", chk.stations)
    ext = a.station_envelopes[chk.quantity]
    assert ext is not None
    row = station_row(a, chk.span, float(chk.x))
    got = float(getattr(ext, chk.extreme)[row])
    assert_ref(got, chk.value, chk.name)
    assert getattr(ext, f"{chk.extreme}_loaded")[row] == chk.loaded


@pytest.mark.parametrize(
    ("n", "joint", "extreme", "value", "loaded"),
    [
        (2, 1, "max", F(7, 16), "1"),  # 3.3: 2 spans, span 1 [D]
        (2, 3, "min", F(-1, 16), "1"),  # uplift at the far end, same row
        (3, 1, "max", F(9, 20), "1 3"),  # 3.3: 3 spans, 1+3 [D]
        (3, 1, "min", F(-1, 20), "2"),  # 3.3: 3 spans, 2 [D]
        (3, 2, "max", F(6, 5), "1 2"),  # 3.3: 3 spans, 1+2 [D]
        (4, 1, "max", F(25, 56), "1 3"),  # 3.3: 4 spans, 1+3 [D]
        (4, 5, "min", F(-3, 56), "1 3"),
    ],
)
def test_code_patterning_reactions_match_pattern_rows(n: int, joint: int, extreme: str,
                                                      value: F, loaded: str) -> None:
    a = live_analysis(n, "code")
    ext = a.reaction_envelopes["reaction"]
    assert ext is not None
    i = int(np.flatnonzero(a.support_joints == joint - 1)[0])
    assert_ref(float(getattr(ext, extreme)[i]), value, f"reaction {extreme} at joint {joint}")
    assert getattr(ext, f"{extreme}_loaded")[i] == loaded


def test_envelope_table_carries_the_pattern_label_and_combination() -> None:
    # 3.3: 3 spans, 1+3 [D]: 81/800 at 0.45 L in span 1, as written to envelope.parquet
    a = live_analysis(3, "code")
    table = envelope.tables(a)["envelope"].to_pylist()
    rows = [r for r in table if r["span"] == 1 and abs(r["x_span"] - 0.45) <= 1e-12]
    assert len(rows) == 1
    assert abs(rows[0]["moment_max"] - 81 / 800) <= SMALL_SOLVE
    assert rows[0]["moment_max_loaded"] == "1 3"
    assert rows[0]["moment_max_combo"] == "L only"


# -- live-only envelope over all 2^n full-span patterns --------------------------

# references 3.3 "Live-only envelope over all 2^n full-span patterns" [D].  Values
# for the remaining supports and spans are the mirror images (symmetric beams).
# 4 spans, span 1: printed 0.0997, exact 625/6272 = 0.099649 (see "4 spans, 1+3").
LIVE_ENVELOPE: dict[int, tuple[list[Num], list[Num], Num]] = {
    2: (["-0.125"], ["0.0957"], "0.625"),
    3: (["-0.1167"], ["0.1013", "0.075"], "0.6167"),
    4: (["-0.1205", "-0.1071"], [F(625, 6272), "0.0805"], "0.6205"),
    5: (["-0.1196", "-0.1112"], ["0.1001", "0.0790", "0.0855"], "0.6196"),
}


def mirrored(half: list[Num], count: int) -> list[Num]:
    return [half[min(i, count - 1 - i)] for i in range(count)]


def span_maxima(a: Analysis, m: int = 4001) -> tuple[np.ndarray, list[str], np.ndarray]:
    """Max of the moment envelope in each span on a grid (spacing 2.5e-4 L: the peak is
    missed by at most (w/2)(1.25e-4 L)^2 < 1e-8 w L^2), its label and position."""
    values, texts, where = [], [], []
    for j in range(a.beam.n_spans):
        pts = dense_points(a.solved, j, m)
        ext = envelope_at(a.solved, pts, "moment")
        assert ext is not None
        k = int(np.argmax(ext.max))
        values.append(ext.max[k])
        texts.append(str(ext.max_loaded[k]))
        where.append(pts.x_span[k])
    return np.array(values), texts, np.array(where)


@pytest.mark.parametrize("n", [2, 3, 4, 5])
def test_exhaustive_live_envelope_matches_coefficients_and_influence_rules(n: int) -> None:
    supports, spans, shear = LIVE_ENVELOPE[n]
    a = live_analysis(n, "exhaustive")
    solved = a.solved

    sup = envelope_at(solved, support_points(solved), "moment")
    assert sup is not None
    for j, value in enumerate(mirrored(supports, n - 1), start=1):
        assert_ref(float(sup.min[j - 1]), value, f"max -M at support {j + 1}")
        assert sup.min_loaded[j - 1] == rule_support(j, n), f"support {j + 1}"

    values, texts, _ = span_maxima(a)
    for i, value in enumerate(mirrored(spans, n), start=1):
        assert_ref(float(values[i - 1]), value, f"max +M in span {i}", extra_tol=1e-8)
        assert texts[i - 1] == rule_span_sagging(i, n), f"span {i}"

    # max shear at the first interior support: V_BA, just left of B (negative)
    v = envelope_at(solved, support_points(solved), "shear")
    assert v is not None
    assert_ref(-float(v.min[0]), shear, "max shear at the first interior support")
    # max shear at every interior support, either side: same spans as max -M there
    right = make_points(a.beam, np.arange(1, n), np.zeros(n - 1), np.ones(n - 1, dtype=bool))
    v_right = envelope_at(solved, right, "shear")
    assert v_right is not None
    for j in range(1, n):
        assert v.min_loaded[j - 1] == rule_support(j, n), f"shear left of support {j + 1}"
        assert v_right.max_loaded[j - 1] == rule_support(j, n), f"shear right of {j + 1}"

    # max hogging inside a span (at midspan): the neighbouring spans and alternates
    mid = make_points(a.beam, np.arange(n), np.full(n, 0.5))
    m_mid = envelope_at(solved, mid, "moment")
    assert m_mid is not None
    for i in range(1, n + 1):
        assert m_mid.min_loaded[i - 1] == rule_span_hogging(i, n), f"midspan of span {i}"

    # reactions: interior as max -M at that support; ends from spans 1, 3, 5 ...
    r = a.reaction_envelopes["reaction"]
    assert r is not None
    first, last = rule_end_reaction(n)
    assert r.max_loaded[0] == first and r.max_loaded[n] == last
    for j in range(1, n):
        assert r.max_loaded[j] == rule_support(j, n), f"reaction at support {j + 1}"


def test_exhaustive_reproduces_the_1_2_4_pattern_of_four_spans() -> None:
    # 3.3: 4 spans, 1+2+4 [D]: M_B = -27/224, R_B = 137/112; section 2 rules: max -M
    # at B and max reaction at B load spans 1, 2 and 4.
    a = live_analysis(4, "exhaustive")
    row = station_row(a, 1, 1.0)
    moment = a.station_envelopes["moment"]
    assert moment is not None
    assert_ref(float(moment.min[row]), F(-27, 224), "M_B")
    assert moment.min_loaded[row] == "1 2 4"
    r = a.reaction_envelopes["reaction"]
    assert r is not None
    assert_ref(float(r.max[1]), F(137, 112), "R_B")
    assert r.max_loaded[1] == "1 2 4"


# -- adjacent spans only underestimates the support moment ----------------------


@pytest.mark.parametrize(
    ("n", "span", "quantity", "code_value", "exhaustive_value", "code_loaded", "exh_loaded",
     "shortfall"),
    [
        # references section 2 table [D]
        (4, 1, "moment", F(-13, 112), F(-27, 224), "1 2", "1 2 4", "0.037"),
        (5, 1, "moment", "-0.11603", "-0.11962", "1 2", "1 2 4", "0.030"),
        (5, 2, "moment", "-0.10646", "-0.11124", "2 3", "2 3 5", "0.043"),
        (4, 1, "shear", "-0.61607", "-0.62054", "1 2", "1 2 4", "0.007"),
    ],
    ids=["4 spans M_B", "5 spans M_B", "5 spans M_C", "4 spans V_BA"],
)
def test_adjacent_spans_rule_falls_short_of_the_exact_envelope(
    n: int, span: int, quantity: str, code_value: Num, exhaustive_value: Num, code_loaded: str,
    exh_loaded: str, shortfall: str
) -> None:
    got = {}
    for method, value, loaded in (("code", code_value, code_loaded),
                                  ("exhaustive", exhaustive_value, exh_loaded)):
        a = live_analysis(n, method)
        ext = a.station_envelopes[quantity]
        assert ext is not None
        row = station_row(a, span, 1.0)  # right end of `span`: left side of the support
        got[method] = float(ext.min[row])
        assert_ref(got[method], value, f"{method} {quantity} at support {span + 1}")
        assert ext.min_loaded[row] == loaded
    ratio = (got["exhaustive"] - got["code"]) / got["exhaustive"]
    assert_ref(ratio, shortfall, "shortfall")


def dense_both_sides(solved: Solved, m: int = 2001) -> list[Points]:
    n = solved.beam.n_spans
    x = np.tile(np.linspace(0.0, 1.0, m), n)
    span = np.repeat(np.arange(n), m)
    return [make_points(solved.beam, span, x, np.full(span.size, side)) for side in (True, False)]


def assert_at_least_as_severe(strong: Analysis, weak: Analysis, what: str) -> None:
    """``strong`` envelope >= ``weak`` max and <= ``weak`` min everywhere (1e-12)."""
    for pts in dense_both_sides(strong.solved):
        for q in ("moment", "shear", "deflection"):
            s = envelope_at(strong.solved, pts, q, labels=False)
            w = envelope_at(weak.solved, pts, q, labels=False)
            assert s is not None and w is not None
            assert np.all(s.max >= w.max - 1e-12), f"{what}: {q} max"
            assert np.all(s.min <= w.min + 1e-12), f"{what}: {q} min"
    rs, rw = strong.reaction_envelopes["reaction"], weak.reaction_envelopes["reaction"]
    assert rs is not None and rw is not None
    assert np.all(rs.max >= rw.max - 1e-12) and np.all(rs.min <= rw.min + 1e-12)


@pytest.mark.parametrize("n", [3, 4, 5])
def test_code_envelope_never_exceeds_exhaustive(n: int) -> None:
    # The code arrangements (ACI 318-19 6.4.2, EN 1992-1-1 5.1.3) are some of the 2^n
    # subsets, so the exact envelope contains them (common practice; section 2 [D]).
    assert_at_least_as_severe(live_analysis(n, "exhaustive"), live_analysis(n, "code"),
                              f"{n} spans")


# -- segments: partial-span loading -----------------------------------------------


@pytest.mark.parametrize("n", [3, 4])
def test_segments_envelope_is_at_least_as_severe_as_exhaustive(n: int) -> None:
    # Every full-span subset is also a subset of segments (section 2: exact extremes
    # near inflection points and shears away from supports need partial loading [P]).
    seg = live_analysis(n, "segments", segments=4)
    exh = live_analysis(n, "exhaustive")
    assert_at_least_as_severe(seg, exh, f"{n} spans, 4 segments")
    mid = make_points(seg.beam, np.arange(n), np.full(n, 0.5))
    vs = envelope_at(seg.solved, mid, "shear")
    ve = envelope_at(exh.solved, mid, "shear")
    assert vs is not None and ve is not None
    # strictly more severe for shear at midspan, by a clear margin
    assert np.all(vs.max > ve.max + 0.05), (vs.max, ve.max)
    assert np.all(vs.min < ve.min - 0.05), (vs.min, ve.min)


def test_single_span_segments_give_partial_loading_shear() -> None:
    # Statics, common practice: the largest shear at x in a simply supported span under
    # a uniform load that may cover any part of it is w (L - x)^2 / (2 L), with the load
    # from x to the right support; at midspan wL/8 (right half loaded, label "1.2"),
    # and -wL/8 with the left half loaded.  Full-span loading gives 0 at midspan.
    L, w = 6.0, 4.0
    seg2 = analyse(build(beam_toml(1, method="segments", length=L, w=w, segments=2)))
    pts = make_points(seg2.beam, [0, 0], [L / 2, L / 2], [False, True])
    v = envelope_at(seg2.solved, pts, "shear")
    assert v is not None
    assert np.allclose(v.max, w * L / 8, rtol=0, atol=SMALL_SOLVE)
    assert np.allclose(v.min, -w * L / 8, rtol=0, atol=SMALL_SOLVE)
    assert list(v.max_loaded) == ["1.2", "1.2"] and list(v.min_loaded) == ["1.1", "1.1"]

    exh = analyse(build(beam_toml(1, method="exhaustive", length=L, w=w)))
    v_full = envelope_at(exh.solved, pts, "shear")
    assert v_full is not None
    assert np.all(np.abs(v_full.max) <= SMALL_SOLVE) and np.all(np.abs(v_full.min) <= SMALL_SOLVE)

    seg4 = analyse(build(beam_toml(1, method="segments", length=L, w=w, segments=4)))
    x = np.array([L / 4, L / 2, 3 * L / 4])
    v4 = envelope_at(seg4.solved, make_points(seg4.beam, np.zeros(3, int), x), "shear")
    assert v4 is not None
    assert np.allclose(v4.max, w * (L - x) ** 2 / (2 * L), rtol=0, atol=SMALL_SOLVE)
    assert np.allclose(v4.min, -w * x**2 / (2 * L), rtol=0, atol=SMALL_SOLVE)
    assert list(v4.max_loaded) == ["1.2 1.3 1.4", "1.3 1.4", "1.4"]


# -- favourable dead load on unloaded spans ---------------------------------------


def two_span_dead_live(method: str, favourable: float, L: float, wd: float,
                       wl: float) -> str:
    """Two equal pinned spans, dead ``wd`` and live ``wl`` on both, one strength
    combination 1.35D + 1.5L, the dead factor on unloaded spans ``favourable``."""
    return beam_text(
        [L, L], ["pinned"] * 3,
        [{"case": "D", "type": "uniform", "spans": "all", "w": wd},
         {"case": "L", "type": "uniform", "spans": "all", "w": wl}],
        section={"E": 30000, "I": 5.0e9}, cases={"D": "dead", "L": "live"},
        combinations={"strength": "none", "service": "none",
                      "custom": [{"name": "1.35D + 1.5L", "set": "strength",
                                  "factors": {"D": 1.35, "L": 1.5}}]},
        patterning={"method": method, "favourable_dead": favourable})


@pytest.mark.parametrize("method", ["code", "exhaustive"])
@pytest.mark.parametrize("favourable", [1.0 / 1.35, 1.0], ids=["inf/sup", "same"])
def test_favourable_dead_on_the_unloaded_span(method: str, favourable: float) -> None:
    # 1.35D + 1.5L with favourable_dead = gamma_G,inf / gamma_G,sup = 1.00 / 1.35 (EN 1990
    # Table A1.2(B) [C]; case-format contract): for max sagging in span 1, span 1 carries
    # q1 = 1.35 wd + 1.5 wl and span 2 only favourable * 1.35 wd (1.0 wd).
    # Hand value by superposition of the handbook coefficients (references 3.3, "2 spans,
    # span 1" [D] and its mirror image): R_A = (7/16) q1 L - (1/16) q2 L; by statics of
    # span 1, max M = R_A^2 / (2 q1) at x = R_A / q1.
    L, wd, wl = 6.0, 10.0, 5.0
    q1 = 1.35 * wd + 1.5 * wl
    q2 = favourable * 1.35 * wd
    r_a = (7 / 16 * q1 - 1 / 16 * q2) * L
    a = analyse(build(two_span_dead_live(method, favourable, L, wd, wl)))
    x = np.linspace(0.0, L, DENSE)
    ext = envelope_at(a.solved, make_points(a.beam, np.zeros(DENSE, int), x), "moment")
    assert ext is not None
    k = int(np.argmax(ext.max))
    expected = r_a**2 / (2 * q1)
    # grid misses the peak by at most (q1 / 2) (dx / 2)^2 ~ 2e-8 kN*m
    assert abs(ext.max[k] - expected) <= 1e-7, (ext.max[k], expected)
    assert abs(x[k] - r_a / q1) <= L * 1e-5
    assert ext.max_loaded[k] == "1"
    assert abs(a.design_actions["moment_pos"][0] - expected) <= SOLVE * expected
    # span 2, midspan, least sagging (same arrangement): Clapeyron for two equal spans,
    # M_B = -(q1 + q2) L^2 / 16, then M(L/2) = M_B / 2 + q2 L^2 / 8
    mid = envelope_at(a.solved, make_points(a.beam, [1], [L / 2]), "moment")
    assert mid is not None
    m_b = -(q1 + q2) * L**2 / 16
    assert abs(mid.min[0] - (m_b / 2 + q2 * L**2 / 8)) <= SOLVE * abs(m_b)
    assert mid.min_loaded[0] == "1"
    # the support moment still takes both spans fully loaded: -q1 L^2 / 8 (3.2, n = 2)
    sup = envelope_at(a.solved, support_points(a.solved), "moment")
    assert sup is not None
    assert abs(sup.min[0] + q1 * L**2 / 8) <= SOLVE * q1 * L**2
    assert sup.min_loaded[0] == "all"


# -- cases.parquet ----------------------------------------------------------------


def test_cases_table_lists_the_code_arrangements_of_three_spans() -> None:
    # ACI 318-19 6.4.2 / EN 1992-1-1 5.1.3(1)P and the UK NA (all spans): for 3 spans,
    # all; alternate 1 3 and 2; adjacent 1 2 and 2 3 (case-format contract, "code").
    a = live_analysis(3, "code")
    rows = envelope.tables(a)["cases"].to_pylist()
    for which in ("strength", "service"):
        loaded = [r["loaded"] for r in rows if r["set"] == which]
        assert sorted(loaded) == sorted(["all", "1 3", "2", "1 2", "2 3"]), which
    assert {r["combination"] for r in rows} == {"L only", "L service"}
    assert all(r["factors"] == '{"L": 1.0}' for r in rows)


@pytest.mark.parametrize(("method", "segments"), [("exhaustive", None), ("segments", 3)])
def test_cases_table_says_any_for_the_superposition_methods(method: str,
                                                            segments: int | None) -> None:
    # outputs contract, cases.parquet: "any" where the method envelopes all subsets
    a = live_analysis(3, method, segments=segments)
    rows = envelope.tables(a)["cases"].to_pylist()
    assert [(r["set"], r["combination"], r["loaded"]) for r in rows] == [
        ("strength", "L only", "any"), ("service", "L service", "any")]


def test_cases_table_for_no_patterning_is_all_spans_once() -> None:
    # case-format contract, "none": every patterned case on every span
    a = live_analysis(3, "none")
    rows = envelope.tables(a)["cases"].to_pylist()
    assert [(r["set"], r["loaded"]) for r in rows] == [("strength", "all"), ("service", "all")]
