"""Bad case files and the error each must give: a table shared by the parse-level
test (tests/test_bad_input.py) and, later, the command-line test.

Each row is ``(name, toml_text, expected_key, expected_phrase)``: ``toml_text``
is the whole file (``bytes`` where the point is bad bytes), ``expected_key`` the
key path the message must name ("" for file-level problems: malformed TOML,
bad encoding, an empty file) and ``expected_phrase`` a phrase the problem part
of the message must contain.  Every file is a small valid two-span beam
(:func:`doc`) with one thing broken, so each row tests exactly one check.
"""

from __future__ import annotations

HEADER = 'units = "SI"\ntitle = "two-span test beam"\n'
SECTION = "[section]\nE = 30000\nI = 8.0e9\nA = 227500\nunit_weight = 24.0\n"
SPANS = "[[spans]]\nlength = 6.0\n[[spans]]\nlength = 7.0\n"
SUPPORTS = '[[supports]]\ntype = "pinned"\n' * 3
CASES = '[cases]\nD = { kind = "dead" }\nL = { kind = "live" }\n'
LOADS = (
    '[[loads]]\ncase = "D"\ntype = "uniform"\nspans = "all"\nw = 10.0\n'
    '[[loads]]\ncase = "L"\ntype = "uniform"\nspans = 1\nw = 5.0\n'
)
COMBINATIONS = (
    "[combinations]\n"
    '[[combinations.custom]]\nname = "1.2D+1.6L"\nset = "strength"\n'
    "factors = { D = 1.2, L = 1.6 }\n"
)


def doc(
    *,
    header: str = HEADER,
    section: str = SECTION,
    spans: str = SPANS,
    supports: str = SUPPORTS,
    cases: str = CASES,
    loads: str = LOADS,
    combinations: str = COMBINATIONS,
    extra: str = "",
) -> str:
    """A valid two-span case file, with any part replaced."""
    return "\n".join([header, section, spans, supports, cases, loads, combinations, extra])


def load(body: str) -> str:
    """Loads: the given single [[loads]] item only."""
    return "[[loads]]\n" + body


def supports(*types: str) -> str:
    return "".join(f'[[supports]]\ntype = "{t}"\n' for t in types)


SPRING_COLUMNS = (
    '[[supports]]\ntype = "pinned"\n'
    '[[supports]]\ntype = "spring"\n{body}\n'
    '[[supports]]\ntype = "pinned"\n'
)

BAD_INPUTS: list[tuple[str, str | bytes, str, str]] = [
    # -- the file itself ----------------------------------------------------
    ("malformed_toml", doc(extra="[output]\nstations_per_span = \n"), "", "not valid TOML"),
    ("duplicate_toml_key", doc(header=HEADER + 'units = "US"\n'), "", "not valid TOML"),
    ("non_utf8_bytes", doc(header='units = "SI"\ntitle = "caf').encode() + b"\xe9\"\n",
     "", "not UTF-8"),
    ("empty_file", "", "", "the file is empty"),
    ("comments_only_file", "  \n\n# nothing here\n", "", "the file is empty"),
    # -- top level ----------------------------------------------------------
    ("missing_units", doc(header='title = "no units"\n'), "units", "required"),
    ("unknown_unit_system", doc(header='units = "metric"\n'), "units",
     "unknown unit system 'metric'"),
    ("units_lower_case", doc(header='units = "si"\n'), "units", 'use "SI" or "US"'),
    ("unknown_top_key_with_suggestion", doc(extra='[patterns]\nmethod = "code"\n'),
     "patterns", "unknown key 'patterns'; did you mean 'patterning'?"),
    ("title_not_a_string", doc(header='units = "SI"\ntitle = 42\n'), "title",
     "expected a string"),
    ("bad_id_characters", doc(header='units = "SI"\nid = "beam 1/a"\n'), "id",
     "not a valid id"),
    ("id_dot_dot", doc(header='units = "SI"\nid = ".."\n'), "id", "not '.' or '..'"),
    ("id_too_long", doc(header=f'units = "SI"\nid = "{"x" * 65}"\n'), "id", "1 to 64"),
    # -- sections and spans -------------------------------------------------
    ("string_where_table", doc(section='section = "concrete"\n'), "section",
     "expected a table, got a string"),
    ("zero_E", doc(section="[section]\nE = 0\nI = 8.0e9\n"), "section.E",
     "must be greater than zero"),
    ("nan_number", doc(section="[section]\nE = nan\nI = 8.0e9\n"), "section.E", "finite"),
    ("inf_number", doc(spans="[[spans]]\nlength = inf\n[[spans]]\nlength = 7.0\n"),
     "spans[1].length", "finite"),
    ("negative_length", doc(spans="[[spans]]\nlength = -6.0\n[[spans]]\nlength = 7.0\n"),
     "spans[1].length", "must be greater than zero"),
    ("boolean_as_length", doc(spans="[[spans]]\nlength = true\n[[spans]]\nlength = 7.0\n"),
     "spans[1].length", "got a boolean"),
    ("wrong_dimension_unit_string",
     doc(spans='[[spans]]\nlength = "6 kN"\n[[spans]]\nlength = 7.0\n'),
     "spans[1].length", "is not a length"),
    ("unparseable_unit_string",
     doc(spans='[[spans]]\nlength = "six metres-ish"\n[[spans]]\nlength = 7.0\n'),
     "spans[1].length", "cannot read"),
    ("unit_string_without_unit",
     doc(spans='[[spans]]\nlength = "6"\n[[spans]]\nlength = 7.0\n'),
     "spans[1].length", "has no unit"),
    ("unknown_span_key_with_suggestion",
     doc(spans="[[spans]]\nlenght = 6.0\n[[spans]]\nlength = 7.0\n"),
     "spans[1].lenght", "unknown key 'lenght'; did you mean 'length'?"),
    ("missing_spans", doc(spans=""), "spans", "required"),
    ("spans_as_table", doc(spans="[spans]\nlength = 6.0\n"), "spans",
     "expected an array of tables"),
    ("no_E_anywhere", doc(section="[section]\nI = 8.0e9\n"), "spans[1]", "no E"),
    ("stretch_beyond_span",
     doc(spans="[[spans]]\nlength = 6.0\n  [[spans.sections]]\n  from = 5.0\n  to = 6.5\n"
              "  I = 1.2e10\n[[spans]]\nlength = 7.0\n"),
     "spans[1].sections[1].to", "outside the span"),
    ("stretch_from_not_below_to",
     doc(spans="[[spans]]\nlength = 6.0\n  [[spans.sections]]\n  from = 2.0\n  to = 2.0\n"
              "  I = 1.2e10\n[[spans]]\nlength = 7.0\n"),
     "spans[1].sections[1]", "must be less than 'to'"),
    ("stretches_overlap",
     doc(spans="[[spans]]\nlength = 6.0\n"
              "  [[spans.sections]]\n  from = 0.0\n  to = 1.5\n  I = 1.2e10\n"
              "  [[spans.sections]]\n  from = 1.0\n  to = 2.0\n  I = 1.2e10\n"
              "[[spans]]\nlength = 7.0\n"),
     "spans[1].sections[2]", "overlaps spans[1].sections[1]"),
    # -- supports -----------------------------------------------------------
    ("support_count_mismatch", doc(supports=supports("pinned", "pinned")), "supports",
     "expected 3 supports (one per joint: 2 spans + 1), found 2"),
    ("unknown_support_type", doc(supports=supports("pinned", "roller", "pinned")),
     "supports[2].type", "unknown support type 'roller'"),
    ("k_vertical_on_pinned",
     doc(supports='[[supports]]\ntype = "pinned"\nk_vertical = 1e5\n'
                  + supports("pinned", "pinned")),
     "supports[1].k_vertical", "applies to spring supports only"),
    ("width_on_free_support",
     doc(supports=supports("pinned", "pinned") + '[[supports]]\ntype = "free"\nwidth = 0.3\n'),
     "supports[3].width", "a free support has no width"),
    ("negative_width",
     doc(supports='[[supports]]\ntype = "pinned"\nwidth = -0.3\n'
                  + supports("pinned", "pinned")),
     "supports[1].width", "must not be negative"),
    ("support_faces_overlap",
     doc(supports='[[supports]]\ntype = "pinned"\nwidth = 6.0\n'
                  + '[[supports]]\ntype = "pinned"\nwidth = 6.0\n' + supports("pinned")),
     "supports[2].width", "support faces meet or overlap in span 1"),
    ("negative_spring_stiffness",
     doc(supports=SPRING_COLUMNS.format(body="k_vertical = -2.0e5")),
     "supports[2].k_vertical", "must not be negative"),
    ("k_rotation_with_columns",
     doc(supports=SPRING_COLUMNS.format(
         body="k_rotation = 8.0e4\ncolumns = { E = 30000, I = 5.4e9, height_below = 3.6, "
              'far_end = "fixed" }')),
     "supports[2].columns", "either k_rotation or columns, not both"),
    ("columns_without_height",
     doc(supports=SPRING_COLUMNS.format(
         body='columns = { E = 30000, I = 5.4e9, far_end = "fixed" }')),
     "supports[2].columns", "height_below, height_above or both"),
    ("columns_bad_far_end",
     doc(supports=SPRING_COLUMNS.format(
         body='columns = { E = 30000, I = 5.4e9, height_below = 3.6, far_end = "hinged" }')),
     "supports[2].columns.far_end", "unknown far-end condition 'hinged'"),
    ("unstable_one_pinned_support", doc(supports=supports("pinned", "free", "free")),
     "supports", "the whole beam can rotate about support 1 (x = 0 m)"),
    ("unstable_all_free", doc(supports=supports("free", "free", "free")), "supports",
     "no support restrains vertical movement; the whole beam can drop"),
    ("unstable_springs_with_no_vertical_stiffness",
     doc(supports=SPRING_COLUMNS.format(body="k_vertical = 0\nk_rotation = 5e4").replace(
         'type = "pinned"', 'type = "free"')),
     "supports", "the whole beam can drop"),
    # -- cases --------------------------------------------------------------
    ("missing_cases", doc(cases=""), "cases", "required"),
    ("bad_case_name", doc(cases='[cases]\nD = { kind = "dead" }\nL = { kind = "live" }\n'
                                '1L = { kind = "live" }\n'),
     "cases.1L", "must start with a letter"),
    ("unknown_case_kind", doc(cases='[cases]\nD = { kind = "dead" }\nL = { kind = "imposed" }\n'),
     "cases.L.kind", "unknown case kind 'imposed'"),
    ("pattern_not_boolean",
     doc(cases='[cases]\nD = { kind = "dead" }\nL = { kind = "live", pattern = "yes" }\n'),
     "cases.L.pattern", "expected true or false"),
    ("bad_category",
     doc(cases='[cases]\nD = { kind = "dead" }\nL = { kind = "live", category = "Z" }\n'),
     "cases.L.category", "unknown category 'Z'"),
    ("category_on_dead_case",
     doc(cases='[cases]\nD = { kind = "dead", category = "B" }\nL = { kind = "live" }\n'),
     "cases.D.category", "apply to imposed loads"),
    # -- loads --------------------------------------------------------------
    ("no_loads", doc(loads=""), "loads", "the beam has no loads"),
    ("unknown_load_type",
     doc(loads=load('case = "D"\ntype = "unifrom"\nspans = "all"\nw = 10.0\n')),
     "loads[1].type", "unknown load type 'unifrom'; did you mean 'uniform'?"),
    ("key_of_another_load_type",
     doc(loads=load('case = "D"\ntype = "uniform"\nspans = "all"\nw = 10.0\nP = 5.0\n')),
     "loads[1].P", "does not apply to a uniform load"),
    ("undeclared_case",
     doc(loads=LOADS + load('case = "LL"\ntype = "uniform"\nspans = 2\nw = 3.0\n')),
     "loads[3].case", "case 'LL' is not declared in [cases] (declared: D, L)"),
    ("missing_w", doc(loads=load('case = "D"\ntype = "uniform"\nspans = "all"\n')),
     "loads[1].w", "'w' is required"),
    ("boolean_as_load", doc(loads=load('case = "D"\ntype = "uniform"\nspans = 1\nw = true\n')),
     "loads[1].w", "expected a number, got a boolean"),
    ("wrong_dimension_load",
     doc(loads=load('case = "D"\ntype = "uniform"\nspans = 1\nw = "10 kN"\n')),
     "loads[1].w", "is not a line load"),
    ("load_end_outside_span",
     doc(loads=load('case = "D"\ntype = "uniform"\nspans = 1\nw = 10.0\nend = 9.0\n')),
     "loads[1].end", "outside span 1 (0 to 6 m)"),
    ("load_outside_a_listed_span",
     doc(loads=load('case = "D"\ntype = "uniform"\nspans = [2, 1]\nw = 10.0\nstart = 6.5\n')),
     "loads[1].start", "outside span 1"),
    ("point_at_outside_span",
     doc(loads=load('case = "D"\ntype = "point"\nspans = 2\nP = 20.0\nat = -0.5\n')),
     "loads[1].at", "outside span 2"),
    ("zero_length_load",
     doc(loads=load('case = "D"\ntype = "uniform"\nspans = 1\nw = 10.0\nstart = 2.0\n'
                    "end = 2.0\n")),
     "loads[1]", "zero-length load on span 1"),
    ("load_start_after_end",
     doc(loads=load('case = "D"\ntype = "linear"\nspans = 1\nw_start = 1.0\nw_end = 4.0\n'
                    "start = 4.0\nend = 1.0\n")),
     "loads[1]", "is after end"),
    ("duplicate_span_in_list",
     doc(loads=load('case = "D"\ntype = "uniform"\nspans = [1, 1]\nw = 10.0\n')),
     "loads[1].spans", "span 1 is listed twice"),
    ("span_number_out_of_range",
     doc(loads=load('case = "D"\ntype = "uniform"\nspans = 3\nw = 10.0\n')),
     "loads[1].spans", "span 3 is out of range (the beam has 2 spans"),
    ("span_number_zero",
     doc(loads=load('case = "D"\ntype = "uniform"\nspans = 0\nw = 10.0\n')),
     "loads[1].spans", "numbered from 1"),
    ("empty_span_list",
     doc(loads=load('case = "D"\ntype = "uniform"\nspans = []\nw = 10.0\n')),
     "loads[1].spans", "the list of spans is empty"),
    ("spans_word_not_all",
     doc(loads=load('case = "D"\ntype = "uniform"\nspans = "every"\nw = 10.0\n')),
     "loads[1].spans", 'expected "all"'),
    ("self_weight_without_A",
     doc(section="[section]\nE = 30000\nI = 8.0e9\nunit_weight = 24.0\n",
         loads=load('case = "D"\ntype = "self_weight"\nspans = "all"\n')),
     "loads[1]", "self weight on span 1 needs A and unit_weight"),
    # -- combinations -------------------------------------------------------
    ("nothing_to_run", doc(combinations='[combinations]\nstrength = "none"\n'), "combinations",
     "nothing to run"),
    ("unknown_strength_set",
     doc(combinations='[combinations]\nstrength = "asce7-lrdf"\n'), "combinations.strength",
     "did you mean 'asce7-lrfd'?"),
    ("bad_combination_set_name",
     doc(combinations='[combinations]\n[[combinations.custom]]\nname = "U1"\n'
                      'set = "ultimate"\nfactors = { D = 1.4 }\n'),
     "combinations.custom[1].set", "unknown combination set 'ultimate'"),
    ("custom_factor_for_undeclared_case",
     doc(combinations='[combinations]\n[[combinations.custom]]\nname = "U1"\n'
                      'set = "strength"\nfactors = { D = 1.2, W = 1.0 }\n'),
     "combinations.custom[1].factors.W", "case 'W' is not declared"),
    ("custom_factor_as_string",
     doc(combinations='[combinations]\n[[combinations.custom]]\nname = "U1"\n'
                      'set = "strength"\nfactors = { D = "1.2" }\n'),
     "combinations.custom[1].factors.D", "expected a number"),
    ("duplicate_combination_name",
     doc(combinations=COMBINATIONS + '[[combinations.custom]]\nname = "1.2D+1.6L"\n'
                                     'set = "service"\nfactors = { D = 1.0 }\n'),
     "combinations.custom[2].name", "used twice"),
    ("empty_combination_name",
     doc(combinations='[combinations]\n[[combinations.custom]]\nname = " "\n'
                      'set = "strength"\nfactors = { D = 1.4 }\n'),
     "combinations.custom[1].name", "the name is empty"),
    # -- patterning and output ----------------------------------------------
    ("segments_method_with_one_segment",
     doc(extra='[patterning]\nmethod = "segments"\nsegments = 1\n'), "patterning.segments",
     "needs segments = 2 or more"),
    ("segments_zero", doc(extra="[patterning]\nsegments = 0\n"), "patterning.segments",
     "must be from 1"),
    ("favourable_dead_out_of_range", doc(extra="[patterning]\nfavourable_dead = 3.0\n"),
     "patterning.favourable_dead", "must be from 0 to 2"),
    ("stations_per_span_one", doc(extra="[output]\nstations_per_span = 1\n"),
     "output.stations_per_span", "must be from 2 to 100001"),
    ("stations_per_span_not_whole", doc(extra="[output]\nstations_per_span = 21.5\n"),
     "output.stations_per_span", "expected a whole number"),
    ("bad_moment_plot", doc(extra='[output]\nmoment_plot = "hogging-up"\n'),
     "output.moment_plot", "unknown moment plot convention"),
    # -- design -------------------------------------------------------------
    ("design_unknown_key_with_suggestion",
     doc(extra='[design]\nmaterial = "concrete"\ncode = "aci318-19"\nb = 350\nh = 650\n'
               "cover_to_bar_centre = 65\nfck = 32\nfy = 500\n"),
     "design.fck", "did you mean 'fc'?"),
    ("design_negative_dimension",
     doc(extra='[design]\nmaterial = "concrete"\ncode = "aci318-19"\nb = -350\nh = 650\n'
               "cover_to_bar_centre = 65\nfc = 32\nfy = 500\n"),
     "design.b", "must be greater than zero"),
    ("design_steel_key_on_concrete",
     doc(extra='[design]\nmaterial = "concrete"\ncode = "aci318-19"\nb = 350\nh = 650\n'
               "cover_to_bar_centre = 65\nfc = 32\nfy = 500\nFy = 345\n"),
     "design.Fy", "does not apply to concrete design"),
]
