"""Calculation reports, the building view, exports, beam schedules, units in the data,
the case-file template and its JSON Schema.

Outside references: unit conversions are exact by the definitions of the foot
(0.3048 m) and the pound-force (4.4482216152605 N) (NIST SP 811, Appendix B); the
schedule's line loads are load per area times tributary width (common practice); every
other value is compared with the engine's own run of the equivalent case file.
"""

from __future__ import annotations

import csv
import json
import math
import shutil
from pathlib import Path

import pyarrow as pa
import pyarrow.parquet as pq
import pytest
from click.testing import CliRunner

from envelope import casefile, engine_version
from envelope.cli import main
from envelope.report import checks, collect, schedule, template
from envelope.report.schema import schema, vocabulary

from beams import beam_text

ROOT = Path(__file__).resolve().parents[1]
CASES = ROOT / "cases"
CAUTION = "for checking by a licensed engineer and defer to local codes"


def _invoke(*args: str) -> object:
    return CliRunner().invoke(main, list(args))


@pytest.fixture(scope="module")
def office(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """office-4span-si run with --report (concrete sizing, ACI 318-19)."""
    out = tmp_path_factory.mktemp("office")
    run = _invoke("run", str(CASES / "office-4span-si.toml"), "-o", str(out), "--no-plots",
                  "-q", "--report")
    assert run.exit_code == 0, run.output
    return out / "office-4span-si"


# -- units in the data ---------------------------------------------------------------------


def test_every_numeric_column_names_its_unit_in_its_field_metadata(office: Path) -> None:
    labels = json.loads(pq.read_schema(office / "design.parquet").metadata[b"envelope:units"])
    expected = {"x": labels["length"], "moment_max": labels["moment"],
                "shear_min": labels["force"], "deflection_max": labels["deflection"]}
    env = pq.read_schema(office / "envelope.parquet")
    for name, unit in expected.items():
        assert env.field(name).metadata[b"unit"].decode() == unit
    sizing = pq.read_schema(office / "sizing.parquet")
    own = json.loads(sizing.metadata[b"envelope:sizing_units"])
    for name, unit in own.items():
        assert sizing.field(name).metadata[b"unit"].decode() == unit, name
    for stem in ("envelope", "design", "reactions", "sizing"):
        for f in pq.read_schema(office / f"{stem}.parquet"):
            if pa.types.is_floating(f.type):
                assert f.metadata and b"unit" in f.metadata, (stem, f.name)


# -- the calculation report -----------------------------------------------------------------


def test_report_holds_caution_provenance_input_combinations_and_every_check(
        office: Path) -> None:
    page = (office / "report.html").read_text()
    meta = pq.read_schema(office / "cases.parquet").metadata
    assert CAUTION in page
    assert engine_version() in page
    assert meta[b"envelope:input_sha256"].decode() in page
    # the input echoed with units: a span length in m, E in MPa, a line load in kN/m
    data = collect.collect(office)
    echo = {r["key"]: r for r in data.echo}
    assert echo["spans[1].length"]["unit"] == "m"
    assert echo["section.E"]["unit"] == "MPa"
    assert echo["loads[2].w"]["unit"] == "kN/m"
    # combinations with their clauses
    for source in data.tables["cases"].column("source"):
        assert source in page
    assert "ASCE 7-22 2.3.1" in page
    # every sizing column appears (rendered from the table's own columns)
    for name in data.tables["sizing"].columns:
        assert f"<th scope=\"col\">{name}</th>" in page
    # every check with its clause and result: flexure at each section with a moment,
    # shear at each end section, deflection on each span row
    sizing = data.tables["sizing"]
    kinds = [c["check"] for c in data.checks]
    assert kinds.count("flexure") == sum(1 for m in sizing.column("moment_design") if m)
    assert kinds.count("shear") == 8
    assert kinds.count("deflection") == 4
    assert page.count('<tr class="pass">') + page.count('<tr class="fail">') == len(kinds)
    assert page.count("ACI 318-19 22.2, 21.2.2, 9.5.1.1") == kinds.count("flexure")
    assert all(c["clause"].startswith("ACI 318-19") for c in data.checks)
    assert {c["result"] for c in data.checks} <= {"pass", "fail"}
    assert "<svg" in page and "model sketch" in page


#: Keys whose numbers are dimensionless (docs/case-format.md lists no unit for them):
#: counts, span numbers, factors, ratios and strains.
UNITLESS = ("spans", "stations_per_span", "segments", "favourable_dead", "camber_fraction",
            "damping", "tolerance", "creep", "shrinkage", "xi", "redistribution")


def test_every_plain_number_of_every_example_is_echoed_with_its_unit() -> None:
    import re
    import tomllib

    from envelope.report import echo

    for path in [*sorted(CASES.glob("*.toml")), ROOT / "envelope" / "data" / "demo.toml"]:
        document = tomllib.loads(path.read_text())
        for r in echo.echo(document, document.get("units", "SI")):
            last = re.sub(r"\[\d+\]", "", r["key"]).rsplit(".", 1)[-1]
            if not re.fullmatch(r"[-+0-9.eE, \[\]]+", r["value"]) or last in UNITLESS \
                    or ".factors." in r["key"] or ".sustained." in r["key"]:
                continue
            assert r["unit"], (path.name, r)
    # brace positions, one list per span, keep their lists (case-format "bracing")
    rows = {r["key"]: r for r in echo.echo(
        {"design": {"bracing": {"bottom": [[], [13.0]]}, "bearing_length": 100,
                    "vibration": {"live": 0.5, "spacing": 3.0}}}, "US")}
    assert rows["design.bracing.bottom"] == {"key": "design.bracing.bottom",
                                             "value": "[], [13]", "unit": "ft"}
    assert rows["design.bearing_length"]["unit"] == "in"
    assert rows["design.vibration.live"]["unit"] == "psf"
    assert rows["design.vibration.spacing"]["unit"] == "ft"


def test_a_new_sizing_column_appears_in_the_report_without_a_code_change(
        office: Path, tmp_path: Path) -> None:
    folder = tmp_path / office.name
    shutil.copytree(office, folder)
    table = pq.read_table(folder / "sizing.parquet")
    n = table.num_rows
    table = table.append_column("utilisation_buckling", pa.array([1.25] + [0.5] * (n - 1)))
    table = table.append_column("lap_note", pa.array(["lap 40 db"] * n))
    pq.write_table(table, folder / "sizing.parquet")
    data = collect.collect(folder)
    assert "utilisation_buckling" in data.tables["sizing"].columns
    buckling = [c for c in data.checks if c["check"] == "buckling"]
    assert len(buckling) == n
    assert [c["result"] for c in buckling].count("fail") == 1
    assert data.status == "fails"
    assert data.max_utilisation == pytest.approx(1.25)


def test_a_failing_section_is_reported_as_failing(tmp_path: Path) -> None:
    text = (CASES / "office-4span-si.toml").read_text()
    small = text.replace("h = 700", "h = 300").replace("b = 400", "b = 200")
    assert small != text
    case = tmp_path / "small.toml"
    case.write_text(small)
    run = _invoke("run", str(case), "-o", str(tmp_path / "out"), "--no-plots", "-q",
                  "--report")
    assert run.exit_code == 0, run.output
    folder = next((tmp_path / "out").iterdir())
    data = collect.collect(folder)
    assert data.status == "fails"
    failed = [c for c in data.checks if c["result"] == "fail"]
    assert failed and all(c["detail"] for c in failed)
    assert "fail" in (folder / "report.html").read_text()


def test_a_beam_without_design_says_no_check_was_made(tmp_path: Path) -> None:
    run = _invoke("run", "-o", str(tmp_path), "--no-plots", "-q", "--report")
    assert run.exit_code == 0, run.output
    folder = next(p for p in tmp_path.iterdir() if p.is_dir())
    page = (folder / "report.html").read_text()
    assert "no design check was made" in page
    assert collect.collect(folder).status == "not sized"


def test_every_steel_check_names_its_clause(tmp_path: Path) -> None:
    run = _invoke("run", str(CASES / "floor-beam-si.toml"), "-o", str(tmp_path),
                  "--no-plots", "-q")
    assert run.exit_code == 0, run.output
    folder = next(p for p in tmp_path.iterdir() if p.is_dir())
    rows = collect.collect(folder).checks
    kinds = {r["check"] for r in rows}
    assert {"moment", "shear", "bearing", "deflection"} <= kinds
    for r in rows:
        assert r["clause"] != checks.OTHER_CLAUSE, r
        assert r["clause"].startswith("AISC"), r


def test_checks_without_values_never_pass_a_failing_status() -> None:
    table = collect.Table("sizing", "", ("span", "section", "moment_design", "shear_design",
                                         "as_required", "as_max", "status"),
                          {}, ((1, "left", -50.0, 90.0, None, 900.0,
                                "section too small for shear: Vu exceeds"),
                               (1, "span", 80.0, None, None, 900.0,
                                "section too small for singly reinforced design")))
    rows = checks.checks(table, None, "aci318-19")
    assert [(r["check"], r["result"]) for r in rows] == [
        ("flexure", "not checked"), ("shear", "fail"), ("flexure", "fail")]
    assert checks.overall(rows)[0] == "fails"


def _close(shown: str, value: float, digits: int) -> bool:
    """A displayed number is ``value`` rounded to ``digits`` decimals."""
    return shown == collect.fmt(abs(value), digits)


def test_every_concrete_check_shows_its_demand_capacity_and_unit(office: Path) -> None:
    # ACI 318-19 9.5.1.1: phiMn >= Mu, the ratio Mu / phiMn of the bars provided
    # (phiMn_provided); phiVn >= Vu (22.5.1.1); the demand and capacity are the sizing
    # table's own columns, shown as its table shows them
    data = collect.collect(office)
    sizing = data.tables["sizing"]
    rows = [dict(zip(sizing.columns, r, strict=True)) for r in sizing.rows]
    digits = {c: collect.decimals(sizing.column(c)) for c in sizing.columns}
    flexure = [c for c in data.checks if c["check"] == "flexure"]
    assert len(flexure) == 12
    for c in flexure:
        r = next(r for r in rows if str(r["span"]) == c["span"]
                 and r["section"] == c["section"])
        assert _close(c["demand"], r["moment_design"], digits["moment_design"]), c
        assert _close(c["capacity"], r["phiMn_provided"], digits["phiMn_provided"]), c
        assert c["unit"] == "kN*m"
        assert float(c["value"]) == pytest.approx(
            abs(r["moment_design"]) / r["phiMn_provided"], abs=5e-4)
    kinds = {c["check"] for c in data.checks}
    assert {"maximum steel", "bars provided", "crack control"} <= kinds
    for c in data.checks:
        if c["check"] in ("maximum steel", "bars provided"):
            assert c["unit"] == "mm2" and c["demand"] != "-" and c["capacity"] != "-"
        if c["check"] == "deflection":  # ACI 318-19 24.2.2: incremental vs span/240
            assert c["unit"] == "mm" and float(c["demand"]) / float(c["capacity"]) == \
                pytest.approx(float(c["value"]), abs=2e-3)
        if c["check"] == "shear":  # the stirrups chosen, stated, and their strength
            assert c["demand"] != "-" and c["unit"] == "kN"
            assert "Av/s required" in c["detail"] and "stirrups #" in c["detail"]
            r = next(r for r in rows if str(r["span"]) == c["span"]
                     and r["section"] == c["section"])
            assert _close(c["capacity"], r["phiVn"], digits["phiVn"]), c
            assert float(c["value"]) == pytest.approx(r["shear_design"] / r["phiVn"],
                                                      abs=5e-4)
    page = (office / "report.html").read_text()
    assert "<th>demand</th><th>capacity</th><th>unit</th>" in page
    # the largest utilisation is the largest ratio of the table
    assert data.max_utilisation == max(float(c["value"]) for c in data.checks
                                       if c["value"] != "-")


def test_an_en_deflection_check_shows_the_limit_it_was_checked_against(
        tmp_path: Path) -> None:
    # EN 1992-1-1:2004 7.4.1(4) span/250 long-term and 7.4.1(5) span/500 after
    # construction: the report's ratio is demand over the tabulated limit
    # (deflection_long_term_allowed, deflection_incremental_allowed), not "not tabulated"
    run = _invoke("run", str(CASES / "school-2span-en.toml"), "-o", str(tmp_path),
                  "--no-plots", "-q")
    assert run.exit_code == 0, run.output
    data = collect.collect(tmp_path / "school-2span-en")
    found = [c for c in data.checks if c["check"] == "deflection"]
    assert len(found) == 2
    for c in found:
        assert c["detail"] in ("deflection_long_term / deflection_long_term_allowed",
                               "deflection_incremental / deflection_incremental_allowed")
        assert c["unit"] == "mm" and float(c["demand"]) / float(c["capacity"]) == \
            pytest.approx(float(c["value"]), abs=2e-3)


def test_a_sized_concrete_beam_is_checked_against_the_strength_of_what_is_provided(
        office: Path, tmp_path: Path) -> None:
    # flexure over the bars provided (ACI 318-19 22.2, 21.2.2; EN 1992-1-1:2004 6.1) and
    # shear over the stirrups provided (ACI 318-19 22.5.1.1, 22.5.8.5.3; EN 6.2.3 (6.8),
    # (6.9)): bars and stirrups are rounded up, so no ratio sits at 1.000 by
    # construction, and the largest is a check that shows its demand and capacity
    run = _invoke("run", str(CASES / "school-2span-en.toml"), "-o", str(tmp_path),
                  "--no-plots", "-q", "--report")
    assert run.exit_code == 0, run.output
    for folder in (office, tmp_path / "school-2span-en"):
        data = collect.collect(folder)
        strength = [c for c in data.checks if c["check"] in ("flexure", "shear")]
        assert strength and all(c["capacity"] != "-" for c in strength)
        assert all(float(c["value"]) < 1.0 for c in strength)
        assert all(float(c["value"]) == pytest.approx(
            float(c["demand"]) / float(c["capacity"]), abs=2e-3) for c in strength)
        if folder == office:
            # ACI 318-19: its largest utilisation is below 1 and comes from such a check
            assert data.max_utilisation is not None and data.max_utilisation < 1.0
            worst = max((c for c in data.checks if c["value"] != "-"),
                        key=lambda c: float(c["value"]))
            assert worst["demand"] != "-" and worst["capacity"] != "-"
            assert float(worst["value"]) == pytest.approx(
                float(worst["demand"]) / float(worst["capacity"]), abs=2e-3)
    page = (tmp_path / "school-2span-en" / "report.html").read_text()
    assert "EN 1992-1-1:2004 6.2.3 (VRd of the links provided" in page


def test_each_design_action_names_its_governing_combination_and_pattern(
        office: Path) -> None:
    data = collect.collect(office)
    gov = data.tables["governing"]
    rows = {(r[0], r[1]): dict(zip(gov.columns, r, strict=True)) for r in gov.rows}
    design = data.tables["design"]
    cells = {(r[0], c): v for r, shown in zip(design.rows, design.cells(), strict=True)
             for c, v in zip(design.columns, shown, strict=True)}
    for (span, action), r in rows.items():
        assert r["value"] == cells[(span, action)]  # the design table's number
        assert r["combination"] and r["loaded"], r
    # the checkerboard of influence lines (common practice; ACI 318-19 6.4.2): the
    # largest sagging moment of span 1 with spans 1 and 3 loaded, the hogging moment at
    # support 2 with the spans beside it and the next but one (1, 2 and 4)
    assert rows[(1, "moment_pos")]["loaded"] == "1 3"
    assert rows[(1, "moment_neg_right")]["loaded"] == "1 2 4"
    assert rows[(2, "moment_pos")]["loaded"] == "2 4"
    assert rows[(1, "moment_pos")]["combination"] == "1.2D + 1.2SDL + 1.6L"
    assert rows[(1, "moment_pos")]["unit"] == "kN*m"
    page = (office / "report.html").read_text()
    assert 'id="governing-table"' in page and ">1 2 4<" in page


def test_end_actions_are_governed_at_the_span_ends_of_either_sign(tmp_path: Path) -> None:
    # a cantilever's tip shear is positive (upward reaction-free end, load at the tip):
    # the design shear_right is a magnitude, so the shear_max column governs there;
    # 16.2 kN = 1.35 x the 12 kN dead tip load (EN 1990 6.10, Table A1.2(B))
    run = _invoke("run", str(CASES / "carpark-3span-overhang-si.toml"), "-o",
                  str(tmp_path), "--no-plots", "-q")
    assert run.exit_code == 0, run.output
    data = collect.collect(next(p for p in tmp_path.iterdir() if p.is_dir()))
    gov = data.tables["governing"]
    rows = {(r[0], r[1]): dict(zip(gov.columns, r, strict=True)) for r in gov.rows}
    tip = rows[(4, "shear_right")]
    assert tip["value"] == "16.2" and tip["x_span"] == pytest.approx(2.2)
    assert tip["combination"].startswith("1.35G")
    lengths = dict(zip(data.tables["design"].column("span"),
                       data.tables["design"].column("length"), strict=True))
    for (span, action), r in rows.items():
        if action in ("shear_left", "moment_neg_left"):
            assert r["x_span"] == 0.0, r
        if action in ("shear_right", "moment_neg_right"):
            assert r["x_span"] == pytest.approx(lengths[span]), r


def test_the_design_actions_say_what_their_columns_mean_and_patterning_its_clauses(
        office: Path) -> None:
    from envelope.report import html, pdf

    page = (office / "report.html").read_text()
    # every column of design.parquet that is not self-evident is named in the legend
    legend = collect.LEGENDS["design"]
    for name in ("moment_pos", "moment_neg_left", "_face", "shear_left", "deflection_max",
                 "deflection_live", "span_over_deflection"):
        assert name in legend
    assert 'id="design-legend"' in page and "support centrelines" in page
    assert pdf.report_json(collect.collect(office))["legends"]["design"] == legend
    # partial loading of live load: ASCE 7-22 4.3.3 beside ACI 318-19 6.4.2 and EN 5.1.3
    for method in ("exhaustive", "segments"):
        assert "ASCE 7-22 4.3.3" in html.patterning_text({"patterning": {"method": method}})


def test_a_check_the_sizing_could_not_make_is_not_checked_never_pass() -> None:
    table = collect.Table(
        "sizing", "", ("span", "section", "moment_design", "shear_design", "as_required",
                       "as_max", "phiMn", "av_over_s_required", "utilisation_deflection",
                       "status"), {},
        ((1, "left", -50.0, 90.0, 300.0, 900.0, None, None, None, "ok"),
         (1, "span", 80.0, None, 400.0, 900.0, 100.0, None, None,
          "cracked deflection not computed for this span (an internal limit)"),
         (1, "right", -60.0, 95.0, 320.0, 900.0, 70.0, 0.3, None,
          "not checked: the web is noncompact")))
    rows = checks.checks(table, None, "aci318-19")
    got = [(r["section"], r["check"], r["result"]) for r in rows]
    # no strength (phiMn) and no Av/s: nothing to check against, so not checked
    assert ("left", "flexure", "not checked") in got
    assert ("left", "shear", "not checked") in got
    # a status that says a check was not done or not computed is not a failure
    assert ("span", "deflection", "not checked") not in got  # no ratio: no deflection row
    assert ("span", "other", "not checked") in got
    assert ("right", "other", "not checked") in got
    assert ("right", "flexure", "pass") in got and ("right", "shear", "pass") in got
    assert checks.overall(rows)[0] == "incomplete"


def test_a_failure_whose_text_holds_a_semicolon_stays_one_failure_of_its_check() -> None:
    # sizing joins failures with "; " and some failures go on after "; " with their
    # advice or inside a bracket: neither is a failure of its own
    shear = ("section too small for shear: Vu = 263.3 kN exceeds phi(Vc + Vs,max) = "
             "189.9 kN (ACI 318-19 22.5.1.2) by 38.6%; widen or deepen the section")
    bars = ("no arrangement of the bar set gives the compression steel 5471 mm2 in one or "
            "two layers of a 200 mm web: widen the section or allow larger bars")
    redistributed = ("moment redistribution 20.0 % at support 2 exceeds the 9.3 % allowed "
                     "(ACI 318-19 6.6.5: the lesser of 1000 eps_t percent and 20 percent, "
                     "none below eps_t = 0.0075; eps_t = 0.0093 here)")
    deflection = ("deflection: with Ix = 445 in4 the live-load deflection is 12% over its "
                  "limit; needs Ix >= 500 in4")
    cracked = ("cracked deflection not computed: the service moment cracks a section where "
               "no tension steel is provided")
    assert checks.failures("; ".join([shear, bars, redistributed, deflection, cracked])) == [
        shear, bars, redistributed, deflection, cracked]
    assert checks.failures("ok") == []
    table = collect.Table(
        "sizing", "", ("span", "section", "moment_design", "shear_design", "as_required",
                       "as_max", "as_design", "as_provided", "phiMn", "av_over_s_required",
                       "status"), {},
        ((1, "left", -170.0, 263.3, 2578.0, 3525.0, 2578.0, 3277.0, 170.0, None,
          f"{shear}; {bars}"),
         (1, "span", 270.0, None, 4033.0, 5705.0, 4033.0, 4200.0, 270.0, None, cracked)))
    rows = checks.checks(table, None, "aci318-19")
    got = {(r["section"], r["check"]): (r["result"], r["detail"]) for r in rows}
    assert got[("left", "shear")][0] == "fail" and shear in got[("left", "shear")][1]
    assert got[("left", "bars provided")] == ("fail", bars)
    assert ("left", "other") not in got  # the advice is no failure of its own
    # the cracked-deflection text says "tension steel": it is no maximum-steel failure
    assert got[("span", "maximum steel")] == ("pass", "")
    assert got[("span", "other")] == ("not checked", cracked)


def test_a_steel_ratio_whose_demand_and_limit_are_not_tabulated_says_so() -> None:
    table = collect.Table(
        "sizing", "", ("span", "section", "deflection_live", "deflection_live_allowed",
                       "utilisation_deflection", "status"), {"deflection_live": "mm"},
        ((1, "span", 10.0, 20.0, 0.5, "ok"), (2, "span", 10.0, 20.0, 0.8, "ok")))
    rows = checks.checks(table, None, "en1992-1-1")
    assert [(r["demand"], r["capacity"], r["unit"]) for r in rows] == [
        ("10.00", "20.00", "mm"), ("-", "-", "")]
    assert rows[0]["detail"] == "deflection_live / deflection_live_allowed"
    assert rows[1]["detail"] == "the demand and limit of this ratio are not tabulated"
    # a steel moment check at a support names the unbraced segment its demand is from
    segment = collect.Table(
        "sizing", "", ("span", "section", "moment_design", "moment_segment", "phi_mn",
                       "segment", "utilisation_moment", "status"), {"moment_segment": "kN*m"},
        ((1, "left", 0.0, 190.0, 238.0, "bottom flange 0.00-6.00 m", 190.0 / 238.0, "ok"),))
    row = checks.checks(segment, None, "aisc360-22")[0]
    assert (row["demand"], row["capacity"], row["unit"]) == ("190.0", "238.0", "kN*m")
    assert row["detail"] == ("moment_segment / phi_mn of the governing segment, bottom "
                             "flange 0.00-6.00 m")


def test_json_and_empty_cells_read_as_text_never_as_brackets(office: Path) -> None:
    assert collect.fmt("{}") == "none" and collect.fmt("[]") == "none"
    assert collect.fmt('{"D": 1.2, "L": 1.6}') == "D: 1.2, L: 1.6"
    assert collect.fmt('["L", "Lr"]') == "L, Lr"
    assert collect.fmt('{"L": [1.0, 0.8]}') == "L: (1, 0.8)"
    assert collect.fmt("") == "-" and collect.fmt("[not json") == "[not json"
    page = (office / "report.html").read_text()
    for token in (">{}<", ">[]<", ">None<", ">nan<", ">-0.0<"):
        assert token not in page, token
    assert ">D: 1.2, SDL: 1.2, L: 1.6<" in page


def test_long_texts_of_the_html_tables_wrap_instead_of_running_off_the_page(
        office: Path) -> None:
    # table cells keep numbers on one line (nowrap); a clause, a failing reason or a
    # sizing note of a sentence or more wraps within the page
    from html.parser import HTMLParser

    class Cells(HTMLParser):
        def __init__(self) -> None:
            super().__init__()
            self.cells: list[tuple[str, str]] = []
            self.open: str | None = None

        def handle_starttag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
            if tag == "td":
                self.open = dict(attrs).get("class") or ""

        def handle_data(self, data: str) -> None:
            if self.open is not None:
                self.cells.append((self.open, data))
                self.open = None

    parser = Cells()
    parser.feed((office / "report.html").read_text())
    long = [(cls, text) for cls, text in parser.cells if len(text) > 60 and " " in text]
    assert long, "no long cell: the test needs a note or a clause"
    assert all(cls == "prose" for cls, _ in long), [t for c, t in long if c != "prose"]
    assert "td.prose { white-space: normal" in (office / "report.html").read_text()


def test_pdf_table_headings_can_break_so_they_never_run_over_each_other(
        office: Path) -> None:
    import re

    from envelope.report import pdf

    data = pdf.report_json(collect.collect(office))
    longest = 0
    for table in data["tables"].values():
        for part in table["parts"]:
            for name in part["columns"]:
                longest = max([longest, *(len(w) for w in re.split("[\u200b ]", name))])
    # reactions.parquet has service_reaction_max_combo (26 characters) among columns of
    # numbers about 8 characters wide; a heading breaks after each underscore
    assert longest <= 16


# -- exports -----------------------------------------------------------------------------


def test_xlsx_export_has_a_sheet_per_table_units_in_headings_and_numbers(
        office: Path, tmp_path: Path) -> None:
    from python_calamine import CalamineWorkbook

    target = tmp_path / "r.xlsx"
    run = _invoke("export", str(office), "--format", "xlsx", "-o", str(target))
    assert run.exit_code == 0, run.output
    book = CalamineWorkbook.from_path(str(target))
    assert book.sheet_names == ["about", "design", "reactions", "sizing", "envelope", "cases"]
    assert CAUTION in book.get_sheet_by_name("about").to_python()[1][0]
    rows = book.get_sheet_by_name("design").to_python()
    head = rows[0]
    assert "moment_pos [kN*m]" in head and "deflection_max [mm]" in head
    design = pq.read_table(office / "design.parquet").to_pylist()
    k = head.index("moment_pos [kN*m]")
    for row, ref in zip(rows[1:], design, strict=True):
        assert isinstance(row[k], float)
        assert row[k] == pytest.approx(ref["moment_pos"], rel=5e-6)  # 6 figures


def test_csv_export_writes_a_file_per_table_with_units_in_the_heading(
        office: Path, tmp_path: Path) -> None:
    run = _invoke("export", str(office), "--format", "csv", "-o", str(tmp_path / "csv"))
    assert run.exit_code == 0, run.output
    with (tmp_path / "csv" / "reactions.csv").open() as fh:
        rows = list(csv.reader(fh))
    assert "reaction_max [kN]" in rows[0]
    assert CAUTION in (tmp_path / "csv" / "CAUTION.txt").read_text()


def test_a_batch_exports_its_combined_tables_with_each_systems_unit(tmp_path: Path) -> None:
    from python_calamine import CalamineWorkbook

    paths = [str(CASES / "office-4span-si.toml"), str(CASES / "platform-us.toml")]
    out = tmp_path / "out"
    assert _invoke("batch", *paths, "-o", str(out), "--workers", "1").exit_code == 0
    assert _invoke("export", str(out)).exit_code == 0
    book = CalamineWorkbook.from_path(str(out / "results.xlsx"))
    assert book.sheet_names == ["about", "design", "sizing"]
    head = book.get_sheet_by_name("design").to_python()[0]
    assert "moment_pos [SI: kN*m; US: kip*ft]" in head and "system" in head


def test_a_rerun_without_report_removes_the_report_of_earlier_results(
        tmp_path: Path) -> None:
    case = str(CASES / "mezzanine-us.toml")
    assert _invoke("run", case, "-o", str(tmp_path), "--no-plots", "-q", "--report"
                   ).exit_code == 0
    folder = next(p for p in tmp_path.iterdir() if p.is_dir())
    assert (folder / "report.html").is_file() and (folder / "report.pdf").is_file()
    assert _invoke("run", case, "-o", str(tmp_path), "--no-plots", "-q").exit_code == 0
    assert not (folder / "report.html").exists() and not (folder / "report.pdf").exists()


def test_report_of_a_folder_that_is_not_a_result_is_one_line_and_status_2(
        tmp_path: Path) -> None:
    run = _invoke("report", str(tmp_path))
    assert run.exit_code == 2
    assert "not a result folder" in run.output and "Traceback" not in run.output


# -- beam schedules ----------------------------------------------------------------------------

HEAD = ("id", "title", "units", "spans [m]", "supports", "E", "I", "tributary_width",
        "dead_area", "live_area", "dead_line", "patterning")


def _equivalent_case(path: Path, beam_id: str) -> Path:
    """The case file of the schedule row ``S1`` written by hand: 5.0 kN/m^2 and 3.0 kN/m^2
    over 4.2 m give 21.0 and 12.6 kN/m (load per area times width, common practice)."""
    path.write_text(beam_text(
        [6.0, 7.5], ["pinned", "pinned", "fixed"],
        [{"case": "D", "type": "uniform", "spans": "all", "w": 21.0},
         {"case": "L", "type": "uniform", "spans": "all", "w": 12.6},
         {"case": "D", "type": "uniform", "spans": "all", "w": 2.5}],
        section={"E": 30000, "I": 8.0e9}, cases={"D": "dead", "L": "live"},
        combinations={"strength": "asce7-lrfd", "service": "characteristic"},
        patterning={"method": "exhaustive"}, top={"id": beam_id}))
    return path


def test_schedule_rows_run_as_their_case_files_would(tmp_path: Path) -> None:
    rows = [HEAD, ("S1", "Line 1", "SI", "6 7.5", "pinned pinned fixed", 30000, 8.0e9,
                   4.2, 5.0, 3.0, 2.5, "exhaustive")]
    sheet = schedule.write_schedule(tmp_path / "beams.xlsx", rows)
    out = tmp_path / "out"
    run = _invoke("batch", str(sheet), "-o", str(out), "--workers", "1")
    assert run.exit_code == 0, run.output
    ref = _invoke("run", str(_equivalent_case(tmp_path / "ref.toml", "S1")), "-o",
                  str(tmp_path / "ref"), "--no-plots", "-q")
    assert ref.exit_code == 0, ref.output
    got = pq.read_table(out / "S1" / "design.parquet").to_pylist()
    want = pq.read_table(tmp_path / "ref" / "S1" / "design.parquet").to_pylist()
    for g, w in zip(got, want, strict=True):
        for key in ("moment_pos", "moment_neg_right", "shear_left", "deflection_max"):
            assert g[key] == pytest.approx(w[key], rel=1e-12), key
    # the generated case file is kept for the record, and reruns are skipped
    assert (out / "_all" / "schedule" / "S1.toml").is_file()
    again = _invoke("batch", str(sheet), "-o", str(out), "--workers", "1")
    assert "1 skipped" in again.output


def test_a_bad_schedule_cell_names_sheet_row_and_column_and_the_rest_runs(
        tmp_path: Path) -> None:
    rows = [HEAD,
            ("G1", "", "SI", "6 7.5", "pinned", 30000, 8.0e9, 4.2, 5.0, 3.0, 0, "code"),
            ("G2", "", "SI", "6 7.5", "pinned", 30000, 8.0e9, 4.2, "five", 3.0, 0, "code"),
            ("G3", "", "SI", "6 7.5", "hinged", 30000, 8.0e9, 4.2, 5.0, 3.0, 0, "code")]
    sheet = schedule.write_schedule(tmp_path / "beams.xlsx", rows)
    out = tmp_path / "out"
    run = _invoke("batch", str(sheet), "-o", str(out), "--workers", "1")
    assert run.exit_code == 2
    with (out / "_all" / "failures.csv").open() as fh:
        failures = {r["id"]: r["error"] for r in csv.DictReader(fh)}
    assert set(failures) == {"G2", "G3"}
    assert "sheet beams, row 3, column dead_area (I): expected a number, got 'five'" \
        in failures["G2"]
    assert "sheet beams, row 4, column supports (E)" in failures["G3"]
    assert "hinged" in failures["G3"]
    assert (out / "G1" / "design.parquet").is_file()


def test_a_schedule_with_an_unknown_heading_is_refused_with_its_column(tmp_path: Path) -> None:
    sheet = tmp_path / "beams.csv"
    sheet.write_text("id,units,spans,spam\nA,SI,6,1\n")
    run = _invoke("batch", str(sheet), "-o", str(tmp_path / "out"))
    assert run.exit_code == 2
    assert "row 1, column D: unknown heading 'spam'" in run.output
    assert "Traceback" not in run.output


def test_check_reads_a_schedule_as_batch_would_and_writes_nothing(tmp_path: Path) -> None:
    """`envelope check` on a schedule: every row checked by the case reader (the same
    messages as `batch`), a repeated id refused, exit 2, no OUT or case files written."""
    rows = [HEAD,
            ("G1", "", "SI", "6 7.5", "pinned", 30000, 8.0e9, 4.2, 5.0, 3.0, 0, "code"),
            ("G2", "", "SI", "6 7.5", "pinned", 30000, 8.0e9, 4.2, "five", 3.0, 0, "code"),
            ("G1", "", "SI", "6", "pinned", 30000, 8.0e9, 4.2, 5.0, 3.0, 0, "code")]
    sheet = schedule.write_schedule(tmp_path / "beams.xlsx", rows)
    before = sorted(p.name for p in tmp_path.iterdir())
    run = _invoke("check", "-v", str(sheet))
    assert run.exit_code == 2
    assert "ok: " in run.output and "row 2 (G1)" in run.output
    assert "sheet beams, row 3, column dead_area (I): expected a number, got 'five'" \
        in run.output
    assert "row 4, column id (A): id 'G1' is already used by" in run.output
    assert "3 schedule rows, 2 bad" in run.output
    assert "Traceback" not in run.output
    assert sorted(p.name for p in tmp_path.iterdir()) == before
    good = schedule.write_schedule(tmp_path / "good.xlsx", rows[:2])
    assert _invoke("check", str(good)).exit_code == 0



def test_check_and_batch_refuse_a_repeated_id_with_the_same_message(tmp_path: Path) -> None:
    """One row reader serves `envelope check` and `envelope batch`: an id repeated in a
    second schedule, and one repeated by a bad row, give the very same lines in both."""
    good = ("SI", "6", "pinned", 30000, 8.0e9, 4.2, 5.0, 3.0, 0, "code")
    first = schedule.write_schedule(tmp_path / "a.csv", [
        HEAD, ("G1", "", *good), ("G2", "", "SI", "6", "hinged", *good[3:])])
    second = schedule.write_schedule(tmp_path / "b.xlsx", [
        HEAD, ("G1", "", *good), ("G2", "", *good), ("G3", "", *good)])
    run = _invoke("check", "-v", str(first), str(second))
    assert run.exit_code == 2
    said = [line.removeprefix("error: ") for line in run.output.splitlines()
            if line.startswith("error: ")]
    files, failures = schedule.expand_schedules([str(first), str(second)], tmp_path / "out")
    assert said == [f.error for f in failures]
    items = list(schedule.checked_rows([str(first), str(second)]))
    assert said == [str(i.error) for i in items if i.error is not None]
    assert [i.beam_id for i in items if i.doc is not None] == ["G1", "G3"]
    assert len(said) == 3
    assert f"{second}: sheet beams, row 2, column id (A): id 'G1' is already used by " \
        f"{first}: row 2" in said
    assert f"{second}: sheet beams, row 3, column id (A): id 'G2' is already used by " \
        f"{first}: row 3" in said  # the bad row that used it first keeps it
    assert [Path(f).stem for f in files] == ["G1", "G3"]
    assert "5 schedule rows, 3 bad" in run.output

# -- the combined tables of a batch keep units per row system or convert ---------------------

LBF_KN = 4.4482216152605e-3   # kN per lbf, exact (NIST SP 811)
FT_M = 0.3048                 # m per ft, exact


def test_combined_tables_name_units_per_system_or_convert_to_one(tmp_path: Path) -> None:
    paths = [str(CASES / "office-4span-si.toml"), str(CASES / "platform-us.toml")]
    mixed = tmp_path / "mixed"
    assert _invoke("batch", *paths, "-o", str(mixed), "--workers", "1").exit_code == 0
    table = pq.read_table(mixed / "_all" / "design.parquet")
    field = table.schema.field("moment_pos")
    assert b"unit" not in field.metadata
    assert json.loads(field.metadata[b"unit_by_system"]) == {"SI": "kN*m", "US": "kip*ft"}
    si = tmp_path / "si"
    assert _invoke("batch", *paths, "-o", str(si), "--workers", "1", "--units", "SI"
                   ).exit_code == 0
    conv = pq.read_table(si / "_all" / "design.parquet")
    assert conv.schema.field("moment_pos").metadata[b"unit"] == b"kN*m"
    assert conv.schema.field("deflection_max").metadata[b"unit"] == b"mm"
    before = [r for r in table.to_pylist() if r["system"] == "US"]
    after = [r for r in conv.to_pylist() if r["system"] == "US"]
    for b, a in zip(before, after, strict=True):
        assert a["moment_pos"] == pytest.approx(b["moment_pos"] * 1000 * LBF_KN * FT_M)
        assert a["length"] == pytest.approx(b["length"] * FT_M)
        assert a["deflection_max"] == pytest.approx(b["deflection_max"] * 25.4)


# -- envelope new and the JSON Schema --------------------------------------------------------


@pytest.mark.parametrize("system", ["SI", "US"])
def test_the_template_case_file_is_a_valid_case_naming_every_top_key(
        tmp_path: Path, system: str) -> None:
    import envelope

    path = tmp_path / "beam.toml"
    run = _invoke("new", str(path), "--units", system)
    assert run.exit_code == 0, run.output
    beam = envelope.load_case(path)
    assert beam.units.name == system
    envelope.analyse(beam)
    text = path.read_text()
    for key in casefile.TOP_KEYS:
        assert key in text
    assert CAUTION in text
    assert _invoke("new", str(path)).exit_code == 2  # never overwritten unasked


def test_the_schedule_template_runs(tmp_path: Path) -> None:
    path = tmp_path / "beams.csv"
    assert _invoke("new", str(path), "--schedule").exit_code == 0
    rows = schedule.read_rows(str(path))
    assert len(rows) == 1
    assert casefile.parse_case(schedule.check_row(rows[0]), "x").n_spans == 3
    assert len(template.SCHEDULE_HEADINGS) == len(template.SCHEDULE_EXAMPLE)


def _walk(doc: object, node: dict, path: str) -> None:
    """Every key of ``doc`` is a property the schema names (additionalProperties off)."""
    if "anyOf" in node or not isinstance(doc, dict | list):
        return
    if isinstance(doc, list):
        for i, item in enumerate(doc):
            _walk(item, node.get("items", {}), f"{path}[{i}]")
        return
    props = node.get("properties")
    for k, v in doc.items():
        if props is None:
            _walk(v, node.get("additionalProperties", {}) or {}, f"{path}.{k}")
            continue
        assert k in props, f"{path}.{k} not in the schema"
        _walk(v, props[k], f"{path}.{k}")


def test_the_schema_names_every_key_of_the_reader_and_of_every_example() -> None:
    import tomllib

    s = schema()
    keys = vocabulary()
    assert set(s["properties"]) == set(keys.TOP_KEYS)
    assert set(s["properties"]["design"]["properties"]) == set(keys.DESIGN_KEYS)
    assert set(s["properties"]["loads"]["items"]["properties"]) == set(keys.ALL_LOAD_KEYS)
    examples = [*CASES.glob("*.toml"), ROOT / "envelope" / "data" / "demo.toml"]
    for path in examples:
        _walk(tomllib.loads(path.read_text()), s, path.name)
    json.dumps(s)  # plain JSON


def test_display_rounding_keeps_about_four_significant_figures() -> None:
    assert collect.decimals([1234.5, 2.0]) == 0
    assert collect.decimals([0.01234]) == 4
    assert collect.decimals([12.3456]) == 2
    assert collect.fmt(-0.0001, 2) == "0.00"
    assert collect.fmt(math.nan) == "-"


# -- the building view ----------------------------------------------------------------------


@pytest.fixture(scope="module")
def building(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """A batch of three example beams (no reports: the building view reads the tables):
    a sized concrete beam (ACI 318-19), a sized steel beam whose chosen section is stiffer
    than the analysis's first guess, and a beam with no [design]."""
    out = tmp_path_factory.mktemp("building")
    run = _invoke("batch", *(str(CASES / f"{name}.toml") for name in
                             ("office-4span-si", "floor-beam-si",
                              "carpark-3span-overhang-si")), "-o", str(out), "-q")
    assert run.exit_code == 0, run.output
    return out


def _span_rows(folder: Path, column: str) -> list[float]:
    sizing = pq.read_table(folder / "sizing.parquet").to_pylist()
    return [r[column] for r in sizing if r["section"] == "span"]


def test_the_building_view_shows_the_deflections_the_design_checks(building: Path) -> None:
    from envelope.report import index

    rows = {r["id"]: r for r in index.index_rows(building)}
    # concrete: the cracked long-term deflection of the sizing (ACI 318-19 24.2.3, 24.2.4),
    # several times the gross-section deflection of the analysis
    office = rows["office-4span-si"]
    design = pq.read_table(building / "office-4span-si" / "design.parquet").to_pylist()
    long_term = _span_rows(building / "office-4span-si", "deflection_long_term")
    incremental = _span_rows(building / "office-4span-si", "deflection_incremental")
    assert office["values"]["deflection"] == pytest.approx(max(long_term))
    assert office["values"]["deflection"] > 3 * max(r["deflection_max"] for r in design)
    assert office["values"]["deflection_incremental"] == pytest.approx(max(incremental))
    # span / deflection in one unit: m to mm by the definition of the SI prefixes
    assert office["values"]["span_over_deflection"] == pytest.approx(
        min(1000.0 * r["length"] / d for r, d in zip(design, long_term, strict=True)))
    assert office["basis"] == "cracked, long-term"
    utilisation = _span_rows(building / "office-4span-si", "utilisation_deflection")
    assert office["values"]["utilisation_deflection"] == pytest.approx(max(utilisation))
    # steel: the analysed deflection with the chosen section's Ix, as its check takes it
    steel = rows["office-FB7"]
    total = _span_rows(building / "office-FB7", "deflection_total")
    analysed = pq.read_table(building / "office-FB7" / "design.parquet").to_pylist()
    assert steel["values"]["deflection"] == pytest.approx(max(total))
    assert steel["values"]["deflection_incremental"] is None
    assert steel["basis"] == "steel, chosen section"
    # with the [section] I of the case itself, the chosen section's deflection is the
    # analysed one times I / Ix (linear elastic, one I over the beam: common practice)
    sizing = pq.read_table(building / "office-FB7" / "sizing.parquet").to_pylist()
    assert steel["values"]["deflection"] == pytest.approx(
        max(r["deflection_max"] for r in analysed) * 3.0e8 / sizing[0]["Ix"], rel=1e-9)
    # not sized: the analysis
    plain = rows["carpark-3span-overhang-si"]
    carpark = pq.read_table(building / "carpark-3span-overhang-si" / "design.parquet")
    assert plain["values"]["deflection"] == max(carpark.column("deflection_max").to_pylist())
    assert plain["values"]["utilisation_deflection"] is None
    assert plain["basis"] == "analysed"
    page = index.render_html(list(rows.values()), "test")
    assert "cracked, long-term" in page and "largest incremental deflection" in page
    assert f"{max(long_term):.2f} mm" in page


def test_a_station_whose_value_shows_zero_names_no_governing_combination(
        building: Path) -> None:
    # a pinned end carries no moment (statics); office-FB7's ends are pinned
    table, _ = collect.read_table(building / "office-FB7" / "envelope.parquet",
                                  "envelope", "")
    cells = [dict(zip(table.columns, r, strict=True)) for r in table.cells()]
    end = cells[0]
    assert end["x_span"] == "0.000" and end["moment_max"] == "0.0"
    assert end["moment_max_combo"] == "-" and end["moment_max_loaded"] == "-"
    assert end["moment_min_combo"] == "-" and end["deflection_max_combo"] == "-"
    assert end["shear_max_combo"] != "-"  # the end shear is not zero: its combination stays
    middle = cells[len(cells) // 4]
    assert middle["moment_max"] != "0.0" and middle["moment_max_combo"] != "-"
