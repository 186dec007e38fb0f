"""Write the bad-input corpus: tests/corpus/bad/<name>.toml and <name>.expected.

Each ``.toml`` is one malformed case file; its ``.expected`` sidecar holds the one
line the reader must answer with, the file path written as ``{file}``.  The CLI
test (tests/test_corpus.py) checks every pair exactly.

Rows come from two places:

* every row of tests/bad_inputs.py.  Those rows state a key path and a phrase, not
  the whole message, so the message is taken from the reader when the corpus is
  made, after checking that it names the row's key path and contains its phrase;
  the result was then read by hand;
* :data:`NEW_ROWS` below, new kinds of bad input with the whole expected message
  written out here.  The script stops with a list of differences if the reader's
  message is not exactly the one written here, so these rows are not copied from
  the engine.

Run from anywhere: ``python tests/corpus/make_corpus.py`` (rewrites the corpus and
removes stale files), or ``--check`` (exit 1 if the corpus on disk is out of date).
"""

from __future__ import annotations

import argparse
import sys
import tempfile
from collections.abc import Callable
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent))

from envelope.casefile import load_case  # noqa: E402
from envelope.errors import CaseError  # noqa: E402

from bad_inputs import (  # noqa: E402
    BAD_INPUTS,
    COMBINATIONS,
    HEADER,
    SECTION,
    SPRING_COLUMNS,
    doc,
    load,
    supports,
)

BAD = HERE / "bad"
FILE = "{file}"

Row = tuple[str, str | bytes, str]

CONCRETE = {"material": '"concrete"', "code": '"aci318-19"', "b": "350", "h": "650",
            "cover_to_bar_centre": "65", "fc": "32", "fy": "500"}
STEEL = {"material": '"steel"', "code": '"aisc360-22"', "Fy": "345",
         "section": '{ name = "my-beam", Zx = 2.1e6, Ix = 4.2e8, Aw = 5400 }'}


def design(base: dict[str, str], **changes: str | None) -> str:
    """A [design] table: ``base`` with keys replaced, added, or dropped (``None``)."""
    table = dict(base)
    for key, value in changes.items():
        if value is None:
            table.pop(key, None)
        else:
            table[key] = value
    return doc(extra="[design]\n" + "".join(f"{k} = {v}\n" for k, v in table.items()))


def header(*lines: str) -> str:
    return doc(header=HEADER + "".join(line + "\n" for line in lines))


def top(line: str, **parts: str) -> str:
    """A top-level ``key = value`` line (before the first table header), with parts of
    the usual file replaced (``spans=""`` drops the [[spans]] tables, ...)."""
    return doc(header=HEADER + line + "\n", **parts)


def span1(body: str) -> str:
    """Spans: the first span's table body replaced (the second is the usual 7 m)."""
    return doc(spans=f"[[spans]]\n{body}\n[[spans]]\nlength = 7.0\n")


def spring(body: str) -> str:
    """Supports: pinned, a spring with ``body``, pinned."""
    return doc(supports=SPRING_COLUMNS.format(body=body))


def one_load(body: str) -> str:
    return doc(loads=load(body))


def custom(body: str) -> str:
    return doc(combinations="[combinations]\n[[combinations.custom]]\n" + body)


def cases(body: str) -> str:
    return doc(cases="[cases]\n" + body)


COLUMNS = 'E = 30000, I = 5.4e9, height_below = 3.6, far_end = "fixed"'
STRETCH = "[[spans]]\nlength = 6.0\n  [[spans.sections]]\n{body}\n[[spans]]\nlength = 7.0\n"
TOP = ("(valid: id, title, units, section, spans, supports, cases, loads, combinations, "
       "patterning, output, design)")

NEW_ROWS: list[Row] = [
    # -- the file itself ----------------------------------------------------
    ("png_bytes", b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR",
     f"{FILE}: the file is not UTF-8 text (byte 0x89 at offset 0)"),
    ("utf16_text", doc().encode("utf-16"),
     f"{FILE}: the file is not UTF-8 text (byte 0xff at offset 0)"),
    ("latin1_in_a_comment", doc().encode() + b"# \xb0C\n",
     f"{FILE}: the file is not UTF-8 text (byte 0xb0 at offset {len(doc().encode()) + 2})"),
    ("blank_lines_only", "\n\n   \n\t\n", f"{FILE}: the file is empty (no keys, only blanks or "
                                          "comments)"),
    # -- top level ----------------------------------------------------------
    ("id_not_a_string", header("id = 7"), f"{FILE}: id: expected a string, got an integer (7)"),
    ("id_path_traversal", header('id = "../../etc"'),
     f"{FILE}: id: id '../../etc' is not a valid id: use 1 to 64 letters, digits, '.', '_' "
     "or '-', and not '.' or '..'"),
    ("id_absolute_path", header('id = "/tmp/x"'),
     f"{FILE}: id: id '/tmp/x' is not a valid id: use 1 to 64 letters, digits, '.', '_' "
     "or '-', and not '.' or '..'"),
    ("id_backslash", header('id = "a\\\\b"'),
     f"{FILE}: id: id 'a\\\\b' is not a valid id: use 1 to 64 letters, digits, '.', '_' "
     "or '-', and not '.' or '..'"),
    ("id_single_dot", header('id = "."'),
     f"{FILE}: id: id '.' is not a valid id: use 1 to 64 letters, digits, '.', '_' "
     "or '-', and not '.' or '..'"),
    ("id_empty", header('id = ""'),
     f"{FILE}: id: id '' is not a valid id: use 1 to 64 letters, digits, '.', '_' "
     "or '-', and not '.' or '..'"),
    ("units_not_a_string", doc(header="units = 1\n"),
     f"{FILE}: units: expected a string, got an integer (1)"),
    ("units_a_unit_not_a_system", doc(header='units = "mm"\n'),
     f"{FILE}: units: unknown unit system 'mm'; use \"SI\" or \"US\""),
    ("unknown_top_key_no_suggestion", header('colour = "red"'),
     f"{FILE}: colour: unknown key 'colour' {TOP}"),
    ("title_a_table", doc(header='units = "SI"\ntitle = { text = "x" }\n'),
     f"{FILE}: title: expected a string, got a table"),
    # a top-level key written after a table header belongs to that table (TOML's rule)
    ("top_level_key_after_a_table", doc(extra='id = "L2-C-1"\n'),
     f"{FILE}: combinations.custom[1].id: unknown key 'id' (valid: name, set, factors); top-level keys must come before the first [table] header"),
    ("units_after_the_section_table",
     doc(header='title = "units too late"\n', section=SECTION + 'units = "SI"\n'),
     f"{FILE}: units: required: units = \"SI\" or units = \"US\"; a 'units' was found inside [section]: top-level keys must come before the first [table] header"),
    # -- [section] ----------------------------------------------------------
    ("section_array_of_tables", doc(section="[[section]]\nE = 30000\nI = 8.0e9\n"),
     f"{FILE}: section: expected a table, got an array"),
    ("section_E_array", doc(section="[section]\nE = [30000]\nI = 8.0e9\n"),
     f"{FILE}: section.E: expected a number or a string with units, got an array"),
    ("section_E_a_date", doc(section="[section]\nE = 2024-01-01\nI = 8.0e9\n"),
     f"{FILE}: section.E: expected a number or a string with units, got a date/time"),
    ("section_I_wrong_dimension", doc(section='[section]\nE = 30000\nI = "30 GPa"\n'),
     f"{FILE}: section.I: '30 GPa' is not a second moment of area (expected units like mm^4)"),
    ("section_A_negative", doc(section="[section]\nE = 30000\nI = 8.0e9\nA = -1\n"),
     f"{FILE}: section.A: must be greater than zero, got -1 mm^2"),
    ("section_unit_weight_zero",
     doc(section="[section]\nE = 30000\nI = 8.0e9\nA = 227500\nunit_weight = 0\n"),
     f"{FILE}: section.unit_weight: must be greater than zero, got 0 kN/m^3"),
    ("section_unknown_key_suggestion", doc(section="[section]\nE = 30000\nIx = 8.0e9\n"),
     f"{FILE}: section.Ix: unknown key 'Ix'; did you mean 'I'?"),
    ("section_E_underflows_to_zero", doc(section='[section]\nE = "1e-400 MPa"\nI = 8.0e9\n'),
     f"{FILE}: section.E: must be greater than zero, got '1e-400 MPa'"),
    ("section_E_unit_string_overflows", doc(section='[section]\nE = "1e305 GPa"\nI = 8.0e9\n'),
     f"{FILE}: section.E: '1e305 GPa' is too large a number"),
    # -- [[spans]] ----------------------------------------------------------
    ("spans_plain_numbers", top("spans = [6.0, 7.0]", spans=""),
     f"{FILE}: spans[1]: expected a table, got a number (6)"),
    ("spans_empty_array", top("spans = []", spans=""),
     f"{FILE}: spans: at least one span is required"),
    ("span_length_missing", span1("E = 30000"),
     f"{FILE}: spans[1].length: 'length' is required"),
    ("span_length_huge_integer", span1("length = 1" + "0" * 400),
     f"{FILE}: spans[1].length: number too large"),
    ("span_length_unit_string_nan", span1('length = "nan m"'),
     f"{FILE}: spans[1].length: cannot read 'nan m' as a quantity: write a number and a unit, such as '2.5 m'"),
    ("span_length_zero_in_mm", span1('length = "0 mm"'),
     f"{FILE}: spans[1].length: must be greater than zero, got '0 mm'"),
    ("span_E_wrong_unit", doc(spans='[[spans]]\nlength = 6.0\n[[spans]]\nlength = 7.0\n'
                                    'E = "200 kN"\n'),
     f"{FILE}: spans[2].E: '200 kN' is not a stress or modulus (expected units like MPa)"),
    ("span_I_negative", span1("length = 6.0\nI = -8.0e9"),
     f"{FILE}: spans[1].I: must be greater than zero, got -8e+09 mm^4"),
    ("span_A_without_unit", span1('length = 6.0\nA = "227500"'),
     f"{FILE}: spans[1].A: '227500' has no unit; give a plain number (read in mm^2) or a "
     "number with a unit"),
    ("span_unit_weight_boolean", span1("length = 6.0\nunit_weight = false"),
     f"{FILE}: spans[1].unit_weight: expected a number, got a boolean (false)"),
    ("span_sections_a_table", span1("length = 6.0\nsections = { from = 0.0, to = 1.0 }"),
     f"{FILE}: spans[1].sections: expected an array of tables ([[spans[1].sections]]), got a "
     "table"),
    ("stretch_from_missing", doc(spans=STRETCH.format(body="  to = 1.0\n  I = 1.2e10")),
     f"{FILE}: spans[1].sections[1].from: 'from' is required"),
    ("stretch_to_negative", doc(spans=STRETCH.format(body="  from = 0.0\n  to = -1.0")),
     f"{FILE}: spans[1].sections[1].to: to = -1 m is outside the span (0 to 6 m)"),
    ("stretch_unknown_key", doc(spans=STRETCH.format(body="  from = 0.0\n  to = 1.0\n"
                                                          "  length = 1.0")),
     f"{FILE}: spans[1].sections[1].length: unknown key 'length' (valid: from, to, E, I, A, "
     "unit_weight, h)"),
    ("stretch_h_without_concrete_design",
     doc(spans=STRETCH.format(body="  from = 0.0\n  to = 1.0\n  h = 900"),
         extra="[design]\n" + "".join(f"{k} = {v}\n" for k, v in STEEL.items())),
     f"{FILE}: spans[1].sections: the stretch from 0 m to 1 m gives h, which only concrete "
     'sizing reads ([design] material = "concrete")'),
    ("stretch_h_within_the_cover",
     doc(spans=STRETCH.format(body="  from = 0.0\n  to = 1.0\n  h = 60"),
         extra="[design]\n" + "".join(f"{k} = {v}\n" for k, v in CONCRETE.items())),
     f"{FILE}: spans[1].sections: the stretch from 0 m to 1 m: h = 60 must be more than "
     "cover_to_bar_centre = 65"),
    ("stretch_I_zero", doc(spans=STRETCH.format(body="  from = 0.0\n  to = 1.0\n  I = 0")),
     f"{FILE}: spans[1].sections[1].I: must be greater than zero, got 0 mm^4"),
    ("stretch_E_wrong_unit", doc(spans=STRETCH.format(body='  from = 0.0\n  to = 1.0\n'
                                                           '  E = "30 kN/m"')),
     f"{FILE}: spans[1].sections[1].E: '30 kN/m' is not a stress or modulus (expected units like MPa)"),
    ("stretch_unit_weight_negative",
     doc(spans=STRETCH.format(body="  from = 0.0\n  to = 1.0\n  unit_weight = -24.0")),
     f"{FILE}: spans[1].sections[1].unit_weight: must be greater than zero, got -24 kN/m^3"),
    ("stretch_A_wrong_unit",
     doc(spans=STRETCH.format(body='  from = 0.0\n  to = 1.0\n  A = "0.2 m^3"')),
     f"{FILE}: spans[1].sections[1].A: '0.2 m^3' is not an area (expected units like mm^2)"),
    ("stretch_too_short", doc(spans=STRETCH.format(body="  from = 2.0\n  to = 2.001\n"
                                                        "  I = 1.2e10")),
     f"{FILE}: spans[1].sections[1]: this stretch is 0.001 m long, less than 1/500 of the "
     "span (0.012 m): too short to analyse accurately; merge it with its neighbour"),
    ("stretch_leaves_a_sliver_before_it",
     doc(spans=STRETCH.format(body="  from = 0.005\n  to = 1.0\n  I = 1.2e10")),
     f"{FILE}: spans[1].sections[1]: the part of the span before it is 0.005 m long, less "
     "than 1/500 of the span (0.012 m): too short to analyse accurately; merge it with its "
     "neighbour"),
    ("self_weight_on_a_stretch_without_A",
     doc(section="[section]\nE = 30000\nI = 8.0e9\n",
         spans=STRETCH.format(body="  from = 0.0\n  to = 1.0\n  A = 227500\n"
                                   "  unit_weight = 24.0"),
         loads=load('case = "D"\ntype = "self_weight"\nspans = 1\n')),
     f"{FILE}: loads[1]: self weight on span 1 (stretch 1 m to 6 m) needs A and unit_weight: "
     "give them in [section] or spans[1]"),
    # -- [[supports]] -------------------------------------------------------
    ("supports_missing", doc(supports=""),
     f"{FILE}: supports: required: one [[supports]] per joint (3 for 2 spans)"),
    ("supports_a_string", top('supports = "pinned"', supports=""),
     f"{FILE}: supports: expected an array of tables ([[supports]]), got a string ('pinned')"),
    ("support_type_missing", doc(supports="[[supports]]\nwidth = 0.3\n"
                                          + supports("pinned", "pinned")),
     f"{FILE}: supports[1].type: 'type' is required"),
    ("support_type_not_a_string", doc(supports="[[supports]]\ntype = 1\n"
                                               + supports("pinned", "pinned")),
     f"{FILE}: supports[1].type: expected a string, got an integer (1)"),
    ("support_type_suggestion", doc(supports=supports("pinned", "pined", "pinned")),
     f"{FILE}: supports[2].type: unknown support type 'pined'; did you mean 'pinned'?"),
    ("support_unknown_key", doc(supports='[[supports]]\ntype = "pinned"\nstiffness = 5\n'
                                         + supports("pinned", "pinned")),
     f"{FILE}: supports[1].stiffness: unknown key 'stiffness' (valid: type, width, seat)"),
    ("k_rotation_on_fixed", doc(supports='[[supports]]\ntype = "fixed"\nk_rotation = 5e4\n'
                                         + supports("pinned", "pinned")),
     f"{FILE}: supports[1].k_rotation: key 'k_rotation' applies to spring supports only"),
    ("columns_on_pinned", doc(supports=supports("pinned") + '[[supports]]\ntype = "pinned"\n'
                                       f"columns = {{ {COLUMNS} }}\n" + supports("pinned")),
     f"{FILE}: supports[2].columns: key 'columns' applies to spring supports only"),
    ("width_wrong_dimension", doc(supports='[[supports]]\ntype = "pinned"\nwidth = "0.4 kN"\n'
                                           + supports("pinned", "pinned")),
     f"{FILE}: supports[1].width: '0.4 kN' is not a length (expected units like m)"),
    ("k_vertical_wrong_dimension", spring('k_vertical = "5 kN"'),
     f"{FILE}: supports[2].k_vertical: '5 kN' is not a vertical spring stiffness (force per length) (expected units like kN/m)"),
    ("k_vertical_string_word", spring('k_vertical = "rigid"'),
     f"{FILE}: supports[2].k_vertical: cannot read 'rigid' as a quantity: write a number and a unit, such as '2.5 kN/m'"),
    ("k_vertical_infinite", spring("k_vertical = inf"),
     f"{FILE}: supports[2].k_vertical: must be a finite number (NaN and infinity are refused)"),
    ("k_rotation_negative", spring("k_rotation = -1.0"),
     f"{FILE}: supports[2].k_rotation: must not be negative, got -1 kN*m/rad"),
    ("k_rotation_wrong_dimension", spring('k_rotation = "5 kN/m"'),
     f"{FILE}: supports[2].k_rotation: '5 kN/m' is not a rotational spring stiffness (moment per radian) (expected units like "
     "kN*m/rad)"),
    ("spring_width_without_stiffness", spring("k_vertical = 0\nwidth = 0.3"),
     f"{FILE}: supports[2].width: a spring support with no stiffness restrains nothing, so it "
     "has no support face"),
    ("columns_not_a_table", spring("columns = 5"),
     f"{FILE}: supports[2].columns: expected a table, got an integer (5)"),
    ("columns_E_missing", spring('columns = { I = 5.4e9, height_below = 3.6, far_end = "fixed" }'),
     f"{FILE}: supports[2].columns.E: 'E' is required"),
    ("columns_I_negative",
     spring('columns = { E = 30000, I = -5.4e9, height_below = 3.6, far_end = "fixed" }'),
     f"{FILE}: supports[2].columns.I: must be greater than zero, got -5.4e+09 mm^4"),
    ("columns_unknown_key", spring(f"columns = {{ {COLUMNS}, height = 3.0 }}"),
     f"{FILE}: supports[2].columns.height: unknown key 'height'; did you mean 'height_below'?"),
    ("columns_height_zero",
     spring('columns = { E = 30000, I = 5.4e9, height_below = 0, far_end = "fixed" }'),
     f"{FILE}: supports[2].columns.height_below: must be greater than zero, got 0 m"),
    ("columns_height_above_wrong_unit",
     spring('columns = { E = 30000, I = 5.4e9, height_above = "3 kN", far_end = "fixed" }'),
     f"{FILE}: supports[2].columns.height_above: '3 kN' is not a length (expected units like m)"),
    ("columns_far_end_missing", spring("columns = { E = 30000, I = 5.4e9, height_below = 3.6 }"),
     f"{FILE}: supports[2].columns.far_end: 'far_end' is required"),
    ("unstable_rotation_about_middle_support", doc(supports=supports("free", "pinned", "free")),
     f"{FILE}: supports: unstable beam: the whole beam can rotate about support 2 (x = 6 m); "
     "add a second vertical support or a rotational restraint"),
    ("unstable_rotational_restraint_only",
     doc(supports='[[supports]]\ntype = "spring"\nk_vertical = 0\nk_rotation = 1e5\n'
                  + supports("free", "free")),
     f"{FILE}: supports: unstable beam: no support restrains vertical movement; the whole beam "
     "can drop (a rotational restraint alone does not hold it up); add vertical supports"),
    # -- [cases] ------------------------------------------------------------
    ("cases_an_array", top('cases = ["D", "L"]', cases=""),
     f"{FILE}: cases: expected a table, got an array"),
    ("cases_empty_table", doc(cases="[cases]\n"), f"{FILE}: cases: no load cases declared"),
    ("case_not_a_table", cases('D = "dead"\nL = { kind = "live" }\n'),
     f"{FILE}: cases.D: expected a table, got a string ('dead')"),
    ("case_kind_missing", cases('D = { pattern = false }\nL = { kind = "live" }\n'),
     f"{FILE}: cases.D.kind: 'kind' is required"),
    ("case_unknown_key", cases('D = { kind = "dead", factor = 1.2 }\nL = { kind = "live" }\n'),
     f"{FILE}: cases.D.factor: unknown key 'factor' (valid: kind, pattern, category, "
     "reduction, psi0, psi1, psi2)"),
    ("case_category_not_a_string",
     cases('D = { kind = "dead" }\nL = { kind = "live", category = 1 }\n'),
     f"{FILE}: cases.L.category: expected a string, got an integer (1)"),
    ("case_kind_suggestion", cases('D = { kind = "dead" }\nL = { kind = "lve" }\n'),
     f"{FILE}: cases.L.kind: unknown case kind 'lve'; did you mean 'live'?"),
    # -- [[loads]] ----------------------------------------------------------
    ("moving_with_uniform_unknown",
     one_load('case = "L"\ntype = "concentrated"\nspans = "all"\nP = 9.0\n'
              'with_uniform = "both"\n'),
     f"{FILE}: loads[1].with_uniform: unknown with_uniform 'both' (valid: alternative, added)"),
    ("train_without_axles", one_load('case = "L"\ntype = "train"\nspans = "all"\naxles = []\n'),
     f"{FILE}: loads[1].axles: a train needs at least one load"),
    ("train_negative_offset",
     one_load('case = "L"\ntype = "train"\nspans = "all"\n'
              'axles = [ { P = 30.0, offset = -1.0 } ]\n'),
     f"{FILE}: loads[1].axles[1].offset: must not be negative, got -1 m"),
    ("train_axle_unknown_key",
     one_load('case = "L"\ntype = "train"\nspans = "all"\naxles = [ { P = 30.0, at = 1.0 } ]\n'),
     f"{FILE}: loads[1].axles[1].at: unknown key 'at' (valid: P, offset)"),
    ("concentrated_in_dead_case",
     one_load('case = "D"\ntype = "concentrated"\nspans = "all"\nP = 9.0\n'),
     f"{FILE}: loads[1].case: a concentrated load is a variable action: its case 'D' must "
     "not be of kind 'dead'"),
    ("concentrated_sharing_its_case",
     one_load('case = "L"\ntype = "concentrated"\nspans = "all"\nP = 9.0\n[[loads]]\n'
              'case = "L"\ntype = "uniform"\nspans = "all"\nw = 1.0\n'),
     f"{FILE}: loads[1]: case 'L' holds a concentrated load, which is placed at its worst "
     "position: give it a case of its own"),
    ("loads_a_table", doc(loads='[loads]\ncase = "D"\ntype = "uniform"\nspans = "all"\n'
                                "w = 10.0\n"),
     f"{FILE}: loads: expected an array of tables ([[loads]]), got a table"),
    ("loads_empty_array", top("loads = []", loads=""),
     f"{FILE}: loads: the beam has no loads: add at least one [[loads]]"),
    ("load_item_a_string", top('loads = ["D"]', loads=""),
     f"{FILE}: loads[1]: expected a table, got a string ('D')"),
    ("load_type_missing", one_load('case = "D"\nspans = "all"\nw = 10.0\n'),
     f"{FILE}: loads[1].type: 'type' is required"),
    ("load_type_not_a_string", one_load('case = "D"\ntype = 3\nspans = "all"\nw = 10.0\n'),
     f"{FILE}: loads[1].type: expected a string, got an integer (3)"),
    ("load_case_missing", one_load('type = "uniform"\nspans = "all"\nw = 10.0\n'),
     f"{FILE}: loads[1].case: 'case' is required"),
    ("load_case_not_a_string", one_load('case = 1\ntype = "uniform"\nspans = "all"\nw = 10.0\n'),
     f"{FILE}: loads[1].case: expected a string, got an integer (1)"),
    ("load_spans_missing", one_load('case = "D"\ntype = "uniform"\nw = 10.0\n'),
     f"{FILE}: loads[1].spans: 'spans' is required"),
    ("load_spans_float", one_load('case = "D"\ntype = "uniform"\nspans = 1.0\nw = 10.0\n'),
     f'{FILE}: loads[1].spans: expected "all", a span number or a list of span numbers, '
     "got a number (1)"),
    ("load_spans_list_with_string",
     one_load('case = "D"\ntype = "uniform"\nspans = [1, "2"]\nw = 10.0\n'),
     f'{FILE}: loads[1].spans: expected "all", a span number or a list of span numbers, '
     "got a string ('2')"),
    ("load_spans_negative", one_load('case = "D"\ntype = "uniform"\nspans = -1\nw = 10.0\n'),
     f"{FILE}: loads[1].spans: span -1 is out of range (the beam has 2 spans, numbered from 1)"),
    ("load_unknown_key", one_load('case = "D"\ntype = "uniform"\nspans = 1\nw = 10.0\n'
                                  "magnitude = 5\n"),
     f"{FILE}: loads[1].magnitude: unknown key 'magnitude' (valid: case, type, spans, w, start, "
     "end)"),
    ("uniform_w_string_no_unit", one_load('case = "D"\ntype = "uniform"\nspans = 1\nw = "ten"\n'),
     f"{FILE}: loads[1].w: cannot read 'ten' as a quantity: write a number and a unit, such as '2.5 kN/m'"),
    ("uniform_start_wrong_dimension",
     one_load('case = "D"\ntype = "uniform"\nspans = 1\nw = 10.0\nstart = "1 kN"\n'),
     f"{FILE}: loads[1].start: '1 kN' is not a length (expected units like m)"),
    ("self_weight_with_w", one_load('case = "D"\ntype = "self_weight"\nspans = 1\nw = 3.0\n'),
     f"{FILE}: loads[1].w: key 'w' does not apply to a self_weight load (keys: case, type, "
     "spans, start, end)"),
    ("self_weight_end_outside",
     one_load('case = "D"\ntype = "self_weight"\nspans = 2\nend = 7.5\n'),
     f"{FILE}: loads[1].end: end = 7.5 m is outside span 2 (0 to 7 m)"),
    ("linear_w_end_missing",
     one_load('case = "D"\ntype = "linear"\nspans = 1\nw_start = 1.0\n'),
     f"{FILE}: loads[1].w_end: 'w_end' is required"),
    ("linear_w_start_nan",
     one_load('case = "D"\ntype = "linear"\nspans = 1\nw_start = nan\nw_end = 1.0\n'),
     f"{FILE}: loads[1].w_start: must be a finite number (NaN and infinity are refused)"),
    ("linear_w_end_a_force",
     one_load('case = "D"\ntype = "linear"\nspans = 1\nw_start = 1.0\nw_end = "4 kN"\n'),
     f"{FILE}: loads[1].w_end: '4 kN' is not a line load (force per length) (expected units like kN/m)"),
    ("point_P_missing", one_load('case = "D"\ntype = "point"\nspans = 1\nat = 3.0\n'),
     f"{FILE}: loads[1].P: 'P' is required"),
    ("point_P_a_line_load",
     one_load('case = "D"\ntype = "point"\nspans = 1\nP = "20 kN/m"\nat = 3.0\n'),
     f"{FILE}: loads[1].P: '20 kN/m' is not a force (expected units like kN)"),
    ("point_at_missing", one_load('case = "D"\ntype = "point"\nspans = 1\nP = 20.0\n'),
     f"{FILE}: loads[1].at: 'at' is required"),
    ("point_at_a_force", one_load('case = "D"\ntype = "point"\nspans = 1\nP = 20.0\n'
                                  'at = "3 kN"\n'),
     f"{FILE}: loads[1].at: '3 kN' is not a length (expected units like m)"),
    ("point_at_just_beyond_end",
     one_load('case = "D"\ntype = "point"\nspans = 1\nP = 20.0\nat = 6.000001\n'),
     f"{FILE}: loads[1].at: at = 6 m is outside span 1 (0 to 6 m)"),
    ("point_with_start", one_load('case = "D"\ntype = "point"\nspans = 1\nP = 20.0\n'
                                  "at = 3.0\nstart = 1.0\n"),
     f"{FILE}: loads[1].start: key 'start' does not apply to a point load (keys: case, type, "
     "spans, P, at)"),
    ("moment_M_a_force",
     one_load('case = "D"\ntype = "moment"\nspans = 1\nM = "12 kN"\nat = 1.0\n'),
     f"{FILE}: loads[1].M: '12 kN' is not a moment (expected units like kN*m)"),
    ("moment_at_beyond_span",
     one_load('case = "D"\ntype = "moment"\nspans = 2\nM = 12.0\nat = 7.5\n'),
     f"{FILE}: loads[1].at: at = 7.5 m is outside span 2 (0 to 7 m)"),
    ("moment_with_P", one_load('case = "D"\ntype = "moment"\nspans = 1\nM = 12.0\nat = 1.0\n'
                               "P = 3.0\n"),
     f"{FILE}: loads[1].P: key 'P' does not apply to a moment load (keys: case, type, spans, "
     "M, at)"),
    # -- [combinations] -----------------------------------------------------
    ("combinations_a_string", top('combinations = "asce7-lrfd"', combinations=""),
     f"{FILE}: combinations: expected a table, got a string ('asce7-lrfd')"),
    ("combinations_unknown_key",
     doc(combinations='[combinations]\nstrenght = "asce7-lrfd"\n'),
     f"{FILE}: combinations.strenght: unknown key 'strenght'; did you mean 'strength'?"),
    ("strength_not_a_string", doc(combinations="[combinations]\nstrength = 1.2\n"),
     f"{FILE}: combinations.strength: expected a string, got a number (1.2)"),
    ("unknown_service_set", doc(combinations='[combinations]\nservice = "rare"\n'),
     f"{FILE}: combinations.service: unknown service rule set 'rare' (valid: "
     "characteristic, frequent, quasi-permanent, none)"),
    ("service_set_listed_twice",
     doc(combinations='[combinations]\nservice = ["frequent", "frequent"]\n'),
     f"{FILE}: combinations.service[2]: service set 'frequent' is listed twice"),
    ("national_factors_with_an_asce_set",
     doc(combinations='[combinations]\nstrength = "asce7-lrfd"\nfactors = { G_sup = 1.35 }\n'),
     f"{FILE}: combinations.factors: national partial factors apply to the EN 1990 "
     "strength sets (en1990-6.10, en1990-6.10ab, en1990-6.10ab-uk), not to 'asce7-lrfd'"),
    ("gamma_g_inf_above_gamma_g_sup",
     doc(combinations='[combinations]\nstrength = "en1990-6.10"\n'
                      'factors = { G_sup = 1.1, G_inf = 1.2 }\n'),
     f"{FILE}: combinations.factors.G_inf: gamma_G,inf 1.2 exceeds gamma_G,sup 1.1"),
    ("psi0_above_one",
     doc(cases='[cases]\nD = { kind = "dead" }\nL = { kind = "live", psi0 = 1.2 }\n'),
     f"{FILE}: cases.L.psi0: must be from 0 to 1, got 1.2"),
    ("psi2_on_a_dead_case",
     doc(cases='[cases]\nD = { kind = "dead", psi2 = 0.3 }\nL = { kind = "live" }\n'),
     f"{FILE}: cases.D.psi2: psi factors (EN 1990 Table A1.1) apply to variable actions, "
     "not to a dead case"),
    ("reduced_companion_live_a_string",
     doc(combinations=COMBINATIONS + 'reduced_companion_live = "no"\n'),
     f"{FILE}: combinations.custom[1].reduced_companion_live: unknown key "
     "'reduced_companion_live' (valid: name, set, factors)"),
    ("reduced_companion_live_not_boolean",
     doc(combinations='[combinations]\nstrength = "asce7-lrfd"\nreduced_companion_live = 1\n'),
     f"{FILE}: combinations.reduced_companion_live: expected true or false, got an integer (1)"),
    ("custom_a_table",
     doc(combinations='[combinations.custom]\nname = "U1"\nset = "strength"\n'
                      "factors = { D = 1.4 }\n"),
     f"{FILE}: combinations.custom: expected an array of tables ([[combinations.custom]]), got "
     "a table"),
    ("custom_name_missing", custom('set = "strength"\nfactors = { D = 1.4 }\n'),
     f"{FILE}: combinations.custom[1].name: 'name' is required"),
    ("custom_name_not_a_string", custom('name = 14\nset = "strength"\nfactors = { D = 1.4 }\n'),
     f"{FILE}: combinations.custom[1].name: expected a string, got an integer (14)"),
    ("custom_set_missing", custom('name = "U1"\nfactors = { D = 1.4 }\n'),
     f"{FILE}: combinations.custom[1].set: 'set' is required"),
    ("custom_factors_missing", custom('name = "U1"\nset = "strength"\n'),
     f"{FILE}: combinations.custom[1].factors: 'factors' is required"),
    ("custom_factors_empty", custom('name = "U1"\nset = "strength"\nfactors = {}\n'),
     f"{FILE}: combinations.custom[1].factors: no factors: give at least one case = factor"),
    ("custom_factors_an_array", custom('name = "U1"\nset = "strength"\nfactors = [1.4]\n'),
     f"{FILE}: combinations.custom[1].factors: expected a table, got an array"),
    ("custom_factor_infinite", custom('name = "U1"\nset = "strength"\nfactors = { D = inf }\n'),
     f"{FILE}: combinations.custom[1].factors.D: must be a finite number (NaN and infinity are "
     "refused)"),
    ("custom_factor_huge_integer",
     custom('name = "U1"\nset = "strength"\nfactors = { D = 1' + "0" * 400 + " }\n"),
     f"{FILE}: combinations.custom[1].factors.D: number too large"),
    ("custom_factor_boolean", custom('name = "U1"\nset = "strength"\nfactors = { D = true }\n'),
     f"{FILE}: combinations.custom[1].factors.D: expected a number, got a boolean (true)"),
    ("custom_unknown_key", custom('name = "U1"\nset = "strength"\nfactor = { D = 1.4 }\n'),
     f"{FILE}: combinations.custom[1].factor: unknown key 'factor'; did you mean 'factors'?"),
    # -- [patterning] -------------------------------------------------------
    ("patterning_a_string", header('patterning = "code"'),
     f"{FILE}: patterning: expected a table, got a string ('code')"),
    ("patterning_unknown_key", doc(extra="[patterning]\nsegment = 4\n"),
     f"{FILE}: patterning.segment: unknown key 'segment'; did you mean 'segments'?"),
    ("pattern_method_unknown", doc(extra='[patterning]\nmethod = "checkerboard"\n'),
     f"{FILE}: patterning.method: unknown patterning method 'checkerboard' (valid: none, code, "
     "exhaustive, segments)"),
    ("pattern_method_not_a_string", doc(extra="[patterning]\nmethod = 1\n"),
     f"{FILE}: patterning.method: expected a string, got an integer (1)"),
    ("segments_too_many", doc(extra='[patterning]\nmethod = "segments"\nsegments = 1001\n'),
     f"{FILE}: patterning.segments: must be from 1 to 1000, got 1001"),
    ("segments_fraction", doc(extra='[patterning]\nmethod = "segments"\nsegments = 2.5\n'),
     f"{FILE}: patterning.segments: expected a whole number, got a number (2.5)"),
    ("favourable_dead_a_string", doc(extra='[patterning]\nfavourable_dead = "0.9"\n'),
     f"{FILE}: patterning.favourable_dead: expected a number, got a string ('0.9')"),
    ("favourable_dead_negative", doc(extra="[patterning]\nfavourable_dead = -0.1\n"),
     f"{FILE}: patterning.favourable_dead: must be from 0 to 2, got -0.1"),
    # -- [output] -----------------------------------------------------------
    ("output_an_integer", header("output = 21"),
     f"{FILE}: output: expected a table, got an integer (21)"),
    ("output_unknown_key", doc(extra="[output]\nstations = 21\n"),
     f"{FILE}: output.stations: unknown key 'stations'; did you mean 'stations_per_span'?"),
    ("stations_too_many", doc(extra="[output]\nstations_per_span = 100002\n"),
     f"{FILE}: output.stations_per_span: must be from 2 to 100001, got 100002"),
    ("stations_a_string", doc(extra='[output]\nstations_per_span = "21"\n'),
     f"{FILE}: output.stations_per_span: expected a whole number, got a string ('21')"),
    ("all_cases_a_string", doc(extra='[output]\nall_cases = "yes"\n'),
     f"{FILE}: output.all_cases: expected true or false, got a string ('yes')"),
    ("moment_plot_boolean", doc(extra="[output]\nmoment_plot = true\n"),
     f"{FILE}: output.moment_plot: expected a string, got a boolean (true)"),
    # -- [design] -----------------------------------------------------------
    ("design_a_string", header('design = "concrete"'),
     f"{FILE}: design: expected a table, got a string ('concrete')"),
    ("design_material_missing", design(CONCRETE, material=None),
     f"{FILE}: design.material: 'material' is required"),
    ("design_material_unknown", design(CONCRETE, material='"timber"'),
     f"{FILE}: design.material: unknown material 'timber' (valid: concrete, steel)"),
    ("design_code_missing", design(CONCRETE, code=None),
     f"{FILE}: design.code: 'code' is required"),
    ("design_concrete_code_for_steel", design(CONCRETE, code='"aisc360-22"'),
     f"{FILE}: design.code: unknown concrete design code 'aisc360-22' (valid: aci318-19, "
     "en1992-1-1)"),
    ("design_fc_missing", design(CONCRETE, fc=None),
     f"{FILE}: design.fc: 'fc' is required"),
    ("design_h_zero", design(CONCRETE, h="0"),
     f"{FILE}: design.h: must be greater than zero, got 0"),
    ("design_fy_negative", design(CONCRETE, fy="-500"),
     f"{FILE}: design.fy: must be greater than zero, got -500"),
    ("design_b_wrong_dimension", design(CONCRETE, b='"350 MPa"'),
     f"{FILE}: design.b: '350 MPa' is not a length (expected units like m)"),
    ("design_fc_a_length", design(CONCRETE, fc='"32 mm"'),
     f"{FILE}: design.fc: '32 mm' is not a stress or modulus (expected units like MPa)"),
    ("design_stirrup_fy_boolean", design(CONCRETE, stirrup_fy="true"),
     f"{FILE}: design.stirrup_fy: expected a number, got a boolean (true)"),
    ("design_cover_not_below_h", design(CONCRETE, cover_to_bar_centre="700"),
     f"{FILE}: design.cover_to_bar_centre: must be less than h (d = h - cover)"),
    ("design_flange_width_alone", design(CONCRETE, flange_width="1800"),
     f"{FILE}: design: give flange_width and flange_depth together (a T-beam) or neither"),
    ("design_flange_narrower_than_web", design(CONCRETE, flange_width="300",
                                               flange_depth="150"),
     f"{FILE}: design.flange_width: must not be less than b"),
    ("design_flange_as_deep_as_beam", design(CONCRETE, flange_width="1800",
                                             flange_depth="650"),
     f"{FILE}: design.flange_depth: must be less than h"),
    ("design_deflection_limits_a_number", design(CONCRETE, deflection_limits="360"),
     f"{FILE}: design.deflection_limits: expected a table, got an integer (360)"),
    ("design_deflection_limit_unknown_key",
     design(CONCRETE, deflection_limits="{ live = 360, creep = 480 }"),
     f"{FILE}: design.deflection_limits.creep: unknown key 'creep' (valid: live, total, "
     "long_term, incremental)"),
    ("design_deflection_limit_a_string", design(CONCRETE, deflection_limits='{ live = "360" }'),
     f"{FILE}: design.deflection_limits.live: give a plain number here (unit strings are not "
     "read for this key), got '360'"),
    ("design_deflection_limit_zero", design(CONCRETE, deflection_limits="{ total = 0 }"),
     f"{FILE}: design.deflection_limits.total: must be greater than zero, got 0"),
    ("design_shrinkage_too_large",
     design({**CONCRETE, "code": '"en1992-1-1"'}, long_term="{ shrinkage = 0.4 }"),
     f"{FILE}: design.long_term.shrinkage: free shrinkage strain eps_cs from 0 to 0.003 "
     "(e.g. 0.0004), got 0.4"),
    # -- limits: nesting, text, unit strings, [design] magnitudes -------------
    ("nesting_arrays_5000_deep", header("tags = " + "[" * 5000 + "]" * 5000),
     f"{FILE}: values nested more than 16 levels deep (arrays or tables inside each other); "
     "a case file needs a few"),
    ("nesting_inline_tables_3000_deep", header("tags = " + "{a=" * 3000 + "1" + "}" * 3000),
     f"{FILE}: values nested more than 16 levels deep (arrays or tables inside each other); "
     "a case file needs a few"),
    ("title_with_a_nul", doc(header='units = "SI"\ntitle = "beam\\u0000 one"\n'),
     f"{FILE}: title: control character U+0000 at position 5; write the text without it"),
    ("title_with_a_line_break", doc(header='units = "SI"\ntitle = "beam\\none"\n'),
     f"{FILE}: title: control character U+000A at position 5; write the text without it"),
    ("title_too_long", doc(header='units = "SI"\ntitle = "' + "t" * 5000 + '"\n'),
     f"{FILE}: title: a text of 5000 characters is too long (at most 4096)"),
    ("unit_string_repeated_letters", span1('length = "1 ' + "m" * 30 + '!"'),
     f"{FILE}: spans[1].length: cannot read '1 {'m' * 30}!' as a quantity: write a number "
     "and a unit, such as '2.5 m'"),
    ("unit_string_with_pi", span1('length = "2 pi m"'),
     f"{FILE}: spans[1].length: cannot read '2 pi m' as a quantity: 'pi' is a constant, not "
     "a unit (nothing in a unit string is computed)"),
    ("unit_string_too_long", span1('length = "6 ' + "m " * 40 + '"'),
     f"{FILE}: spans[1].length: a quantity of 82 characters is too long to be read (at most "
     "64): write a number and a unit, such as '2.5 m'"),
    ("design_fc_tiny", design(CONCRETE, fc="1e-300"),
     f"{FILE}: design.fc: 1e-300 is outside the range sizing can carry (1e-30 to 1e+30); "
     "check the value and its unit"),
    ("design_h_huge", design(CONCRETE, h="1e308"),
     f"{FILE}: design.h: 1e+308 is outside the range sizing can carry (1e-30 to 1e+30); "
     "check the value and its unit"),
    ("design_redistribution_above_ceiling", design(CONCRETE, redistribution="0.25"),
     f"{FILE}: design.redistribution: a fraction of the elastic moment from 0 to 0.2 (ACI "
     "318-19 6.6.5: at most 20 percent), got 0.25"),
    ("design_redistribution_unknown_word", design(CONCRETE, redistribution='"most"'),
     f"{FILE}: design.redistribution: expected a fraction such as 0.10 or \"max\", got "
     "'most'"),
    ("design_redistribution_one_per_support", design(CONCRETE, redistribution="[0, 0.1]"),
     f"{FILE}: design.redistribution: give one value per support (3), got 2"),
    ("design_redistribution_at_an_end_support",
     design(CONCRETE, redistribution='[0.1, "max", 0]'),
     f"{FILE}: design.redistribution[1]: support 1 cannot redistribute moment: an end "
     "support; give 0 there"),
    ("design_steel_class_for_aci", design(CONCRETE, steel_class='"B"'),
     f"{FILE}: design.steel_class: steel_class applies to en1992-1-1 design (the k5 / k6 "
     "limit of 5.5(4)); ACI 318-19 6.6.5 limits redistribution by eps_t"),
    ("design_steel_code_for_concrete", design(STEEL, code='"aci318-19"'),
     f"{FILE}: design.code: unknown steel design code 'aci318-19' (valid: aisc360-22)"),
    ("design_concrete_key_on_steel", design(STEEL, fc="32"),
     f"{FILE}: design.fc: key 'fc' does not apply to steel design"),
    ("design_steel_Fy_missing", design(STEEL, Fy=None),
     f"{FILE}: design.Fy: 'Fy' is required"),
    ("design_steel_both_section_and_sections", design(STEEL, sections='"sections.csv"'),
     f"{FILE}: design: give either sections (a CSV table) or section (one beam), not both or "
     "neither"),
    ("design_steel_neither_section_nor_sections", design(STEEL, section=None),
     f"{FILE}: design: give either sections (a CSV table) or section (one beam), not both or "
     "neither"),
    ("design_steel_sections_path_empty", design(STEEL, section=None, sections='" "'),
     f"{FILE}: design.sections: the path is empty"),
    ("design_steel_sections_not_a_string", design(STEEL, section=None, sections="[1, 2]"),
     f"{FILE}: design.sections: expected a string, got an array"),
    ("design_steel_section_a_string", design(STEEL, section='"W18x35"'),
     f"{FILE}: design.section: expected a table, got a string ('W18x35')"),
    ("design_steel_section_name_empty",
     design(STEEL, section='{ name = "", Zx = 2.1e6, Ix = 4.2e8, Aw = 5400 }'),
     f"{FILE}: design.section.name: the name is empty"),
    ("design_steel_section_Zx_missing",
     design(STEEL, section='{ name = "b1", Ix = 4.2e8, Aw = 5400 }'),
     f"{FILE}: design.section.Zx: 'Zx' is required for the strength-only set (Zx, Ix, Aw)"),
    ("design_steel_section_Zx_unit_string",
     design(STEEL, section='{ name = "b1", Zx = "2.1e6 mm^3", Ix = 4.2e8, Aw = 5400 }'),
     f"{FILE}: design.section.Zx: give a plain number here (unit strings are not read for this "
     "key), got '2.1e6 mm^3'"),
    ("design_steel_section_Ix_negative",
     design(STEEL, section='{ name = "b1", Zx = 2.1e6, Ix = -4.2e8, Aw = 5400 }'),
     f"{FILE}: design.section.Ix: must be greater than zero, got -4.2e+08"),
    ("design_steel_section_Aw_wrong_dimension",
     design(STEEL, section='{ name = "b1", Zx = 2.1e6, Ix = 4.2e8, Aw = "5400 mm" }'),
     f"{FILE}: design.section.Aw: '5400 mm' is not an area (expected units like mm^2)"),
    ("design_steel_section_unknown_key",
     design(STEEL, section='{ name = "b1", Zy = 2.1e6, Ix = 4.2e8, Aw = 5400 }'),
     f"{FILE}: design.section.Zy: unknown key 'Zy' (valid: name, d, bf, tf, tw, Ix, Zx, Sx, Iy, "
     "ry, J, Cw, weight, rts, ho, k, Aw, fabrication)"),
    ("design_steel_section_fabrication_unknown",
     design(STEEL, section='{ name = "b1", Zx = 2.1e6, Ix = 4.2e8, Aw = 5400, '
                           'fabrication = "cold-formed" }'),
     f"{FILE}: design.section.fabrication: expected \"rolled\" or \"welded\", got "
     "'cold-formed'"),
    ("design_steel_section_fabrication_not_a_string",
     design(STEEL, section='{ name = "b1", Zx = 2.1e6, Ix = 4.2e8, Aw = 5400, '
                           'fabrication = true }'),
     f"{FILE}: design.section.fabrication: expected a string, got a boolean (true)"),
]


def bad_input_rows() -> list[tuple[str, str | bytes, Callable[[str], str | None]]]:
    """tests/bad_inputs.py rows, each with a check of the captured message (None if fine)."""
    rows = []
    for name, text, key, phrase in BAD_INPUTS:
        prefix = f"{FILE}: {key}: " if key else f"{FILE}: "

        def check(message: str, prefix: str = prefix, phrase: str = phrase) -> str | None:
            if not message.startswith(prefix):
                return f"does not start with {prefix!r}"
            if phrase not in message[len(prefix):]:
                return f"does not contain {phrase!r}"
            return None

        rows.append((name, text, check))
    return rows


def message_for(path: Path) -> str:
    """The reader's one-line message for the file at ``path``, with the path as {file}."""
    try:
        load_case(path)
    except CaseError as exc:
        message = str(exc)
    else:
        raise SystemExit(f"{path.name}: the file was accepted, but it is meant to be bad")
    if "\n" in message or "\r" in message:
        raise SystemExit(f"{path.name}: the message is not one line: {message!r}")
    return message.replace(str(path), FILE)


def build() -> dict[str, tuple[bytes, str]]:
    """name -> (file bytes, expected message) for every row; stops on any disagreement."""
    out: dict[str, tuple[bytes, str]] = {}
    problems: list[str] = []
    rows: list[tuple[str, str | bytes, Callable[[str], str | None]]] = bad_input_rows()
    for name, text, expected in NEW_ROWS:
        rows.append((name, text, lambda m, e=expected: None if m == e else f"expected\n    {e}"))
    with tempfile.TemporaryDirectory() as tmp:
        for name, text, check in rows:
            if name in out:
                problems.append(f"{name}: the name is used twice")
                continue
            data = text.encode() if isinstance(text, str) else text
            path = Path(tmp) / f"{name}.toml"
            path.write_bytes(data)
            message = message_for(path)
            problem = check(message)
            if problem:
                problems.append(f"{name}: got\n    {message}\n  which {problem}"
                                if not problem.startswith("expected") else
                                f"{name}: got\n    {message}\n  {problem}")
            out[name] = (data, message)
    if problems:
        raise SystemExit("the reader disagrees with the corpus:\n" + "\n".join(problems))
    return out


def on_disk() -> dict[str, tuple[bytes, str]]:
    found = {}
    for path in sorted(BAD.glob("*.toml")):
        sidecar = path.with_suffix(".expected")
        text = sidecar.read_text(encoding="utf-8").rstrip("\n") if sidecar.exists() else ""
        found[path.stem] = (path.read_bytes(), text)
    return found


def write(corpus: dict[str, tuple[bytes, str]]) -> None:
    BAD.mkdir(parents=True, exist_ok=True)
    for path in [*BAD.glob("*.toml"), *BAD.glob("*.expected")]:
        if path.stem not in corpus:
            path.unlink()
    for name, (data, message) in corpus.items():
        (BAD / f"{name}.toml").write_bytes(data)
        (BAD / f"{name}.expected").write_text(message + "\n", encoding="utf-8")


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--check", action="store_true",
                        help="only compare the corpus on disk with the rows; exit 1 if stale")
    args = parser.parse_args(argv)
    corpus = build()
    if args.check:
        stale = sorted(set(corpus) ^ set(on_disk()) |
                       {n for n, v in on_disk().items() if corpus.get(n) != v})
        if stale:
            print("out of date: " + ", ".join(stale))
            return 1
        print(f"corpus up to date: {len(corpus)} files")
        return 0
    write(corpus)
    print(f"wrote {len(corpus)} bad case files to {BAD}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
