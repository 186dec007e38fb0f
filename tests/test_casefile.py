"""Reading valid case files: the bundled demo and cases/ parse, units convert
to consistent values, sections, supports and loads are built as the
case-format contract says.

Conversion factors used as references (independent of pint and of
envelope.units):
- 1 ft = 0.3048 m and 1 lb = 0.45359237 kg exactly (international yard and
  pound agreement, 1959; from memory); standard gravity 9.80665 m/s^2 (3rd CGPM,
  1901; from memory).  So 1 kip = 4.4482216152605 kN.
- 1 ft = 12 in, so 1 in^4 = 1/12^4 ft^4 = 1/20736 ft^4 (exact, by definition).
- SI prefixes: 1 GPa = 1000 MPa, 1 MPa = 1000 kN/m^2 (SI Brochure; common practice).
"""

from __future__ import annotations

import hashlib
import math
from importlib import resources
from pathlib import Path

import pytest

from envelope import stability
from envelope.casefile import load_case, parse_case
from envelope.design import ConcreteDesign, DeflectionLimits, SteelDesign
from envelope.errors import CaseError
from envelope.model import Section, Span, Stretch, Support

from tolerances import ULPS, UNIT_READING

REPO = Path(__file__).resolve().parents[1]
CASE_FILES = sorted((REPO / "cases").glob("*.toml"))

FT = 0.3048  # m, exact
KIP = 0.45359237 * 9.80665  # kN, exact: 1000 lb * g / 1000
IN = FT / 12.0  # m

BASE = """
units = "{units}"
[section]
E = {E}
I = {I}
[[spans]]
length = {L1}
[[spans]]
length = {L2}
[[supports]]
type = "pinned"
[[supports]]
type = "pinned"
[[supports]]
type = "pinned"
[cases]
D = {{ kind = "dead" }}
L = {{ kind = "live" }}
[[loads]]
case = "D"
type = "uniform"
spans = "all"
w = {w}
[combinations]
strength = "asce7-lrfd"
"""


def write(tmp_path: Path, text: str, name: str = "beam.toml") -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def simple(tmp_path: Path, *, units: str = "SI", E: object = 30000, I: object = 8.0e9,  # noqa: E741
           L1: object = 6.0, L2: object = 7.0, w: object = 10.0, extra: str = "",
           name: str = "beam.toml") -> Path:
    def lit(v: object) -> str:
        return f'"{v}"' if isinstance(v, str) else repr(v)

    text = BASE.format(units=units, E=lit(E), I=lit(I), L1=lit(L1), L2=lit(L2), w=lit(w))
    return write(tmp_path, text + extra, name)


# -- the shipped files --------------------------------------------------------


def test_bundled_demo_parses_as_described() -> None:
    demo = resources.files("envelope") / "data" / "demo.toml"
    with resources.as_file(demo) as path:
        beam = load_case(path)
    assert beam.units.name == "SI"
    assert [s.length for s in beam.spans] == [6.0, 7.5, 7.5, 6.0]
    assert all(s.width == 0.4 for s in beam.supports)
    assert [c.name for c in beam.cases] == ["D", "L"]
    assert beam.case("L").patterned and not beam.case("D").patterned
    assert beam.combinations.strength == "asce7-lrfd"
    assert beam.combinations.service == "characteristic"
    assert [(c.name, c.set) for c in beam.combinations.custom] == [("1.35D+1.5L", "strength")]
    assert beam.patterning.method == "exhaustive"
    assert beam.output.stations_per_span == 21
    assert {ld.type for ld in beam.loads} == {"self_weight", "uniform"}
    # A = 227500 mm^2 at 24 kN/m^3: 0.2275 m^2 * 24 = 5.46 kN/m (arithmetic)
    assert beam.spans[0].section.self_weight == pytest.approx(5.46)


def test_the_cases_folder_holds_the_three_examples() -> None:
    names = {p.name for p in CASE_FILES}
    assert {"office-4span-si.toml", "carpark-3span-overhang-si.toml",
            "mezzanine-us.toml"} <= names


@pytest.mark.parametrize("path", CASE_FILES, ids=[p.stem for p in CASE_FILES])
def test_every_case_file_in_cases_parses(path: Path) -> None:
    beam = load_case(path)
    assert beam.n_spans >= 2
    assert beam.loads
    assert beam.source == str(path)


def test_carpark_case_has_an_overhang_a_spring_with_columns_and_category_F() -> None:
    beam = load_case(REPO / "cases" / "carpark-3span-overhang-si.toml")
    assert beam.supports[-1].kind == "free"
    spring = beam.supports[1]
    assert spring.kind == "spring" and spring.k_vertical == 2.5e5
    # 4EI/h above and below, far ends fixed (common practice)
    EI = 33000e3 * 2.133e9 * 1e-12
    assert spring.k_rotation == pytest.approx(4 * EI / 3.0 + 4 * EI / 2.9, rel=UNIT_READING)
    assert beam.case("Q").category == "F"
    assert beam.combinations.strength == "en1990-6.10"
    assert beam.patterning.method == "code"


def test_mezzanine_case_reads_unit_strings_in_us_units() -> None:
    beam = load_case(REPO / "cases" / "mezzanine-us.toml")
    assert beam.id == "mezz-B3" and beam.units.name == "US"
    assert [s.length for s in beam.spans] == pytest.approx([24.0, 24.0, 18.0], rel=UNIT_READING)
    assert beam.supports[1].width == pytest.approx(10.0 / 12.0, rel=UNIT_READING)
    rack = [ld for ld in beam.loads if ld.key == "loads[5]"]
    assert len(rack) == 1 and rack[0].span == 2
    assert rack[0].w_start == rack[0].w_end == pytest.approx(1.2, rel=UNIT_READING)
    assert (rack[0].start, rack[0].end) == pytest.approx((3.0, 15.0), rel=UNIT_READING)
    assert isinstance(beam.design, SteelDesign) and beam.design.section is not None
    assert beam.design.section.Zx == 141.1


def test_input_sha256_is_the_hash_of_the_raw_bytes(tmp_path: Path) -> None:
    path = simple(tmp_path)
    assert load_case(path).input_sha256 == hashlib.sha256(path.read_bytes()).hexdigest()


def test_utf8_byte_order_mark_is_accepted(tmp_path: Path) -> None:
    path = simple(tmp_path)
    path.write_bytes(b"\xef\xbb\xbf" + path.read_bytes())
    assert load_case(path).n_spans == 2


# -- defaults -------------------------------------------------------------------


def test_defaults_id_from_file_stem_and_empty_title(tmp_path: Path) -> None:
    beam = load_case(simple(tmp_path))
    assert beam.id == "beam"
    assert beam.title == ""
    # docs/case-format.md: [patterning] method defaults to "code" (ACI 318-19 6.4.2,
    # EN 1992-1-1 5.1.3 require the live load patterned), segments to 4
    assert beam.patterning.method == "code" and beam.patterning.segments == 4
    assert beam.patterning.favourable_dead == 1.0
    assert beam.output.stations_per_span == 21 and not beam.output.all_cases
    assert beam.output.moment_plot == "sagging-up"
    assert beam.combinations.service == "none"
    assert beam.design is None


def test_parse_case_takes_a_dict_and_names_the_source() -> None:
    data = {
        "units": "SI", "id": "mem",
        "section": {"E": 30000, "I": 8e9},
        "spans": [{"length": 5.0}],
        "supports": [{"type": "fixed"}, {"type": "free"}],
        "cases": {"D": {"kind": "dead"}},
        "loads": [{"case": "D", "type": "point", "spans": 1, "P": 10.0, "at": 5.0}],
        "combinations": {"strength": "asce7-asd"},
    }
    beam = parse_case(data, "in-memory.toml", "abc")
    assert beam.source == "in-memory.toml" and beam.input_sha256 == "abc"
    assert beam.loads[0].P == 10.0 and beam.loads[0].at == 5.0


# -- unit conversion ------------------------------------------------------------


def test_E_as_30_GPa_string_equals_30000_plain_MPa(tmp_path: Path) -> None:
    plain = load_case(simple(tmp_path, E=30000, name="plain.toml"))
    text = load_case(simple(tmp_path, E="30 GPa", name="text.toml"))
    # 30000 MPa = 3.0e7 kN/m^2 (SI prefixes)
    assert pytest.approx(3.0e7, rel=ULPS) == plain.spans[0].section.E
    assert pytest.approx(plain.spans[0].section.E, rel=UNIT_READING) == text.spans[0].section.E


def test_feet_string_in_an_si_file_converts_to_metres(tmp_path: Path) -> None:
    beam = load_case(simple(tmp_path, L1="24 ft"))
    assert beam.spans[0].length == pytest.approx(24 * FT, rel=UNIT_READING)  # 7.3152 m


def test_plain_end_equal_to_a_feet_span_length_is_accepted(tmp_path: Path) -> None:
    """'24 ft' and 7.3152 may differ in the last bit; the end snaps to the span end."""
    extra = ('[[loads]]\ncase = "L"\ntype = "uniform"\nspans = 1\nw = 2.0\n'
             f"start = 1.0\nend = {24 * FT!r}\n")
    beam = load_case(simple(tmp_path, L1="24 ft", extra=extra))
    live = next(ld for ld in beam.loads if ld.case == "L")
    assert live.end == beam.spans[0].length


def test_us_inertia_in_in4_converts_to_ft4(tmp_path: Path) -> None:
    beam = load_case(simple(tmp_path, units="US", E=29000, I=1.0, L1=20.0, L2=20.0, w=1.0))
    assert pytest.approx(1.0 / 20736.0, rel=ULPS) == beam.spans[0].section.I
    # 29000 ksi = 29000 * 144 kip/ft^2 (1 ft^2 = 144 in^2)
    assert pytest.approx(29000 * 144.0, rel=ULPS) == beam.spans[0].section.E


def test_us_and_si_descriptions_of_one_beam_give_equal_quantities(tmp_path: Path) -> None:
    """The same beam written in US numbers and in SI numbers (converted with the
    exact factors above) gives the same physical quantities."""
    us = {"E": 29000.0, "I": 1330.0, "A": 18.3, "uw": 0.490, "L1": 24.0, "L2": 18.0,
          "w": 1.2, "P": 9.0, "M": 6.0, "kv": 400.0, "kr": 25000.0, "at": 12.0}
    ksi = KIP / IN**2 / 1e3  # MPa per ksi (kN/m^2 -> MPa is / 1e3)
    si = {"E": us["E"] * ksi, "I": us["I"] * (IN * 1e3) ** 4, "A": us["A"] * (IN * 1e3) ** 2,
          "uw": us["uw"] * KIP / FT**3, "L1": us["L1"] * FT, "L2": us["L2"] * FT,
          "w": us["w"] * KIP / FT, "P": us["P"] * KIP, "M": us["M"] * KIP * FT,
          "kv": us["kv"] * KIP / FT, "kr": us["kr"] * KIP * FT, "at": us["at"] * FT}

    def text(units: str, v: dict[str, float]) -> str:
        return f"""
units = "{units}"
[section]
E = {v["E"]!r}
I = {v["I"]!r}
A = {v["A"]!r}
unit_weight = {v["uw"]!r}
[[spans]]
length = {v["L1"]!r}
[[spans]]
length = {v["L2"]!r}
[[supports]]
type = "pinned"
[[supports]]
type = "spring"
k_vertical = {v["kv"]!r}
k_rotation = {v["kr"]!r}
[[supports]]
type = "pinned"
[cases]
D = {{ kind = "dead" }}
[[loads]]
case = "D"
type = "uniform"
spans = "all"
w = {v["w"]!r}
[[loads]]
case = "D"
type = "point"
spans = 1
P = {v["P"]!r}
at = {v["at"]!r}
[[loads]]
case = "D"
type = "moment"
spans = 2
M = {v["M"]!r}
at = 0.0
[combinations]
service = "characteristic"
"""

    b_us = load_case(write(tmp_path, text("US", us), "us.toml"))
    b_si = load_case(write(tmp_path, text("SI", si), "si.toml"))
    s_us, s_si = b_us.spans[0].section, b_si.spans[0].section
    # consistent units: US kip, ft; SI kN, m
    assert pytest.approx(s_us.E * KIP / FT**2, rel=UNIT_READING) == s_si.E
    assert pytest.approx(s_us.I * FT**4, rel=UNIT_READING) == s_si.I
    assert pytest.approx(s_us.A * FT**2, rel=UNIT_READING) == s_si.A
    assert s_si.unit_weight == pytest.approx(s_us.unit_weight * KIP / FT**3, rel=UNIT_READING)
    assert pytest.approx(s_us.EI * KIP * FT**2, rel=UNIT_READING) == s_si.EI
    for a, b in zip(b_si.spans, b_us.spans, strict=True):
        assert a.length == pytest.approx(b.length * FT, rel=UNIT_READING)
    assert b_si.supports[1].k_vertical == pytest.approx(b_us.supports[1].k_vertical * KIP / FT,
                                                        rel=UNIT_READING)
    assert b_si.supports[1].k_rotation == pytest.approx(b_us.supports[1].k_rotation * KIP * FT,
                                                        rel=UNIT_READING)
    for a, b in zip(b_si.loads, b_us.loads, strict=True):
        assert (a.type, a.span) == (b.type, b.span)
        assert a.w_start == pytest.approx(b.w_start * KIP / FT, rel=UNIT_READING)
        assert pytest.approx(b.P * KIP, rel=UNIT_READING) == a.P
        assert pytest.approx(b.M * KIP * FT, rel=UNIT_READING) == a.M
        assert a.at == pytest.approx(b.at * FT, rel=UNIT_READING)
        assert a.end == pytest.approx(b.end * FT, rel=UNIT_READING)


def test_us_unit_strings_in_an_si_file_match_the_exact_factors(tmp_path: Path) -> None:
    beam = load_case(simple(tmp_path, E="29000 ksi", I="1330 in^4", L1="24 ft",
                            w="1.2 kip/ft"))
    section = beam.spans[0].section
    assert pytest.approx(29000 * KIP / IN**2, rel=UNIT_READING) == section.E
    assert pytest.approx(1330 * IN**4, rel=UNIT_READING) == section.I
    assert beam.loads[0].w_start == pytest.approx(1.2 * KIP / FT, rel=UNIT_READING)


# -- sections -------------------------------------------------------------------


def test_span_overrides_and_stretches_cover_the_span_in_order(tmp_path: Path) -> None:
    text = simple(tmp_path).read_text().replace(
        "[[spans]]\nlength = 7.0\n",
        "[[spans]]\nlength = 7.0\nI = 9.0e9\n"
        "  [[spans.sections]]\n  from = 6.0\n  to = 7.0\n  I = 1.4e10\n"
        "  [[spans.sections]]\n  from = 2.0\n  to = 3.0\n  E = 20000\n",
    )
    beam = load_case(write(tmp_path, text))
    first, second = beam.spans
    assert [(s.start, s.end) for s in first.stretches] == [(0.0, 6.0)]
    assert first.section.E == 3.0e7 and pytest.approx(8.0e-3, rel=UNIT_READING) == first.section.I
    pieces = [(s.start, s.end) for s in second.stretches]
    assert pieces == [(0.0, 2.0), (2.0, 3.0), (3.0, 6.0), (6.0, 7.0)]
    # the pieces no stretch covers carry the span's own section (its I override)
    own = second.stretches[0].section
    assert own.E == 3.0e7 and pytest.approx(9.0e-3, rel=UNIT_READING) == own.I
    assert second.stretches[2].section == own
    # a stretch inherits what it does not override from its span
    assert pytest.approx(2.0e7) == second.stretches[1].section.E
    assert pytest.approx(9.0e-3, rel=UNIT_READING) == second.stretches[1].section.I
    assert pytest.approx(1.4e-2, rel=UNIT_READING) == second.stretches[3].section.I
    assert second.section == second.stretches[0].section


def test_touching_stretches_are_allowed(tmp_path: Path) -> None:
    text = simple(tmp_path).read_text().replace(
        "[[spans]]\nlength = 6.0\n",
        "[[spans]]\nlength = 6.0\n"
        "  [[spans.sections]]\n  from = 0.0\n  to = 1.0\n  I = 1.4e10\n"
        "  [[spans.sections]]\n  from = 1.0\n  to = 6.0\n  I = 1.0e10\n",
    )
    span = load_case(write(tmp_path, text)).spans[0]
    assert [(s.start, s.end) for s in span.stretches] == [(0.0, 1.0), (1.0, 6.0)]


# -- supports -------------------------------------------------------------------


def test_support_types_map_to_stiffnesses(tmp_path: Path) -> None:
    text = simple(tmp_path).read_text().replace(
        '[[supports]]\ntype = "pinned"\n[[supports]]\ntype = "pinned"\n[[supports]]\n'
        'type = "pinned"\n',
        '[[supports]]\ntype = "fixed"\nwidth = 0.3\n'
        '[[supports]]\ntype = "spring"\n'
        '[[supports]]\ntype = "free"\n',
    )
    fixed, spring, free = load_case(write(tmp_path, text)).supports
    assert fixed == Support("fixed", math.inf, math.inf, 0.3)
    assert spring == Support("spring", math.inf, 0.0, 0.0)  # defaults: rigid, no rotation
    assert free == Support("free", 0.0, 0.0, 0.0)


def test_spring_columns_give_k_rotation_as_sum_of_4EI_over_h(tmp_path: Path) -> None:
    """Column stiffness 4EI/h with the far end fixed, 3EI/h with it pinned (common
    practice), summed over the columns present."""

    def k_rot(columns: str) -> float:
        text = simple(tmp_path).read_text().replace(
            '[[supports]]\ntype = "pinned"\n',
            f'[[supports]]\ntype = "spring"\nk_vertical = 2.0e5\ncolumns = {columns}\n', 1)
        return load_case(write(tmp_path, text)).supports[0].k_rotation

    EI = 30000e3 * 5.4e9 * 1e-12  # kN*m^2: 30000 MPa, 5.4e9 mm^4
    both = k_rot('{ E = 30000, I = 5.4e9, height_below = 3.6, height_above = 3.3, '
                 'far_end = "fixed" }')
    assert both == pytest.approx(4 * EI / 3.6 + 4 * EI / 3.3, rel=UNIT_READING)
    below_pinned = k_rot('{ E = 30000, I = 5.4e9, height_below = 3.6, far_end = "pinned" }')
    assert below_pinned == pytest.approx(3 * EI / 3.6, rel=UNIT_READING)
    above_only = k_rot('{ E = "30 GPa", I = "5.4e9 mm^4", height_above = "3300 mm", '
                       'far_end = "fixed" }')
    assert above_only == pytest.approx(4 * EI / 3.3, rel=UNIT_READING)


def test_spring_stiffness_zero_is_allowed(tmp_path: Path) -> None:
    text = simple(tmp_path).read_text().replace(
        '[[supports]]\ntype = "pinned"\n', '[[supports]]\ntype = "spring"\nk_vertical = 0\n', 1)
    support = load_case(write(tmp_path, text)).supports[0]
    assert support.k_vertical == 0.0 and not support.is_restrained


# -- cases, loads, combinations -------------------------------------------------


def test_case_patterning_defaults_by_kind_and_override(tmp_path: Path) -> None:
    text = simple(tmp_path).read_text().replace(
        'L = { kind = "live" }',
        'L = { kind = "live", category = "B" }\nLr = { kind = "roof_live", pattern = false }\n'
        'S = { kind = "snow" }\nX = { kind = "dead", pattern = true }')
    beam = load_case(write(tmp_path, text))
    flags = {c.name: c.patterned for c in beam.cases}
    assert flags == {"D": False, "L": True, "Lr": False, "S": False, "X": True}
    assert beam.case("L").category == "B" and beam.case("D").category is None


def test_uniform_on_all_spans_expands_to_one_load_per_span(tmp_path: Path) -> None:
    beam = load_case(simple(tmp_path))
    assert len(beam.loads) == 2
    for index, (load, span) in enumerate(zip(beam.loads, beam.spans, strict=True)):
        assert load.type == "uniform" and load.case == "D" and load.key == "loads[1]"
        assert load.span == index  # 0-based in the model
        assert (load.start, load.end) == (0.0, span.length)
        assert load.w_start == load.w_end == 10.0


def test_span_list_is_one_based_and_keeps_file_order(tmp_path: Path) -> None:
    extra = (
        '[[loads]]\ncase = "L"\ntype = "point"\nspans = [2, 1]\nP = 20.0\nat = 3.0\n'
        '[[loads]]\ncase = "L"\ntype = "linear"\nspans = 2\nw_start = 1.0\nw_end = 4.0\n'
        "start = 1.0\n"
        '[[loads]]\ncase = "D"\ntype = "self_weight"\nspans = 1\nend = 2.5\n'
    )
    text = simple(tmp_path).read_text().replace("[section]\n",
                                                "[section]\nA = 2.0e5\nunit_weight = 24.0\n")
    beam = load_case(write(tmp_path, text + extra))
    got = [(ld.key, ld.type, ld.span) for ld in beam.loads]
    assert got == [("loads[1]", "uniform", 0), ("loads[1]", "uniform", 1),
                   ("loads[2]", "point", 1), ("loads[2]", "point", 0),
                   ("loads[3]", "linear", 1), ("loads[4]", "self_weight", 0)]
    linear = beam.loads[4]
    assert (linear.start, linear.end, linear.w_start, linear.w_end) == (1.0, 7.0, 1.0, 4.0)
    weight = beam.loads[5]
    assert (weight.start, weight.end) == (0.0, 2.5)


def test_self_weight_needs_A_only_where_the_load_lies(tmp_path: Path) -> None:
    """A stretch without A outside the self-weight extent does not matter."""
    text = simple(tmp_path).read_text().replace(
        "[[spans]]\nlength = 6.0\n",
        "[[spans]]\nlength = 6.0\nA = 2.0e5\nunit_weight = 24.0\n")
    extra = '[[loads]]\ncase = "D"\ntype = "self_weight"\nspans = 1\n'
    beam = load_case(write(tmp_path, text + extra))
    assert beam.loads[-1].type == "self_weight" and beam.loads[-1].span == 0


def test_custom_combination_factors_follow_case_declaration_order(tmp_path: Path) -> None:
    extra = ('[[combinations.custom]]\nname = "mine"\nset = "service"\n'
             "factors = { L = 0.5, D = 1.0 }\n")
    text = simple(tmp_path).read_text().replace('strength = "asce7-lrfd"\n',
                                                'strength = "asce7-lrfd"\n' + extra)
    combo = load_case(write(tmp_path, text)).combinations.custom[0]
    assert combo.factors == (("D", 1.0), ("L", 0.5))
    assert combo.source == "custom" and combo.set == "service"


@pytest.mark.parametrize(("factor", "why"), [(1.7e308, "from -10 to 10"),
                                             (-11.0, "from -10 to 10"),
                                             (float("inf"), "a finite number")])
def test_a_custom_factor_out_of_any_use_is_refused(tmp_path: Path, factor: float,
                                                   why: str) -> None:
    # a factor of 1.7e308 overflowed the envelope (exit 3, "non-finite value") instead of
    # being refused as input; load factors in use lie well within -10 to 10 (common
    # practice)
    value = "inf" if factor == float("inf") else repr(factor)
    extra = ('[[combinations.custom]]\nname = "mine"\nset = "strength"\n'
             f"factors = {{ D = {value} }}\n")
    text = simple(tmp_path).read_text().replace('strength = "asce7-lrfd"\n',
                                                'strength = "asce7-lrfd"\n' + extra)
    with pytest.raises(CaseError, match=r"combinations\.custom\[\d+\]\.factors\.D: .*"
                                        + why):
        load_case(write(tmp_path, text))


def test_patterning_output_and_design_tables_are_read(tmp_path: Path) -> None:
    extra = (
        '[patterning]\nmethod = "segments"\nsegments = 4\nfavourable_dead = 0.9\n'
        '[output]\nstations_per_span = 11\nall_cases = true\nmoment_plot = "tension-side"\n'
        '[design]\nmaterial = "concrete"\ncode = "en1992-1-1"\nb = "0.35 m"\nh = 650\n'
        'cover_to_bar_centre = "65 mm"\nfc = "32 MPa"\nfy = 500\n'
        "flange_width = 1800\nflange_depth = 150\n"
        "deflection_limits = { live = 360, total = 250 }\n"
    )
    beam = load_case(simple(tmp_path, extra=extra))
    assert (beam.patterning.method, beam.patterning.segments,
            beam.patterning.favourable_dead) == ("segments", 4, 0.9)
    assert (beam.output.stations_per_span, beam.output.all_cases,
            beam.output.moment_plot) == (11, True, "tension-side")
    design = beam.design
    assert isinstance(design, ConcreteDesign)
    assert design.b == pytest.approx(350.0) and design.h == 650
    assert design.cover_to_bar_centre == pytest.approx(65.0)
    assert design.fc == pytest.approx(32.0) and design.fy == 500
    assert design.deflection_limits == DeflectionLimits(live=360, total=250)


# -- stability --------------------------------------------------------------------


def test_joint_positions_accumulate_span_lengths() -> None:
    section = Section(1.0, 1.0)
    spans = [Span(length, (Stretch(0.0, length, section),)) for length in (6.0, 7.5, 2.0)]
    assert stability.joint_positions(spans) == (0.0, 6.0, 13.5, 15.5)


@pytest.mark.parametrize(
    "kinds",
    [
        (("fixed", math.inf, math.inf), ("free", 0.0, 0.0)),  # cantilever
        (("free", 0.0, 0.0), ("fixed", math.inf, math.inf)),  # cantilever the other way
        (("spring", 1e3, 0.0), ("spring", 1e3, 0.0)),  # two soft vertical springs
        (("pinned", math.inf, 0.0), ("spring", 0.0, 5e3)),  # pin plus a rotational spring
    ],
    ids=["fixed-free", "free-fixed", "two-springs", "pin-and-rotation-spring"],
)
def test_stable_single_spans_pass_the_stability_check(
    kinds: tuple[tuple[str, float, float], ...]
) -> None:
    section = Section(1.0, 1.0)
    spans = [Span(4.0, (Stretch(0.0, 4.0, section),))]
    supports = [Support(k, kv, kr) for k, kv, kr in kinds]  # type: ignore[arg-type]
    stability.check(spans, supports, "x.toml", "m")


def test_rotation_about_an_interior_support_names_it_and_its_position() -> None:
    from envelope.errors import UnstableBeamError

    section = Section(1.0, 1.0)
    spans = [Span(length, (Stretch(0.0, length, section),)) for length in (6.0, 2.5)]
    supports = [Support("free", 0.0, 0.0), Support("pinned", math.inf, 0.0),
                Support("free", 0.0, 0.0)]
    with pytest.raises(UnstableBeamError) as info:
        stability.check(spans, supports, "x.toml", "ft")
    assert "rotate about support 2 (x = 6 ft)" in str(info.value)
