"""``envelope new``: a commented template case file (or beam schedule) to start from.

The template is a complete, valid case (an invented three-span floor beam) whose
comments name every key, its choices and the unit of its plain numbers; the optional
keys are written commented out.
"""

from __future__ import annotations

import re

#: Values that differ between the systems: (SI, US).
_VALUES = {
    "E": ("30000", "4000"), "I": ("8.0e9", "19000"), "A": ("227500", "350"),
    "unit_weight": ("24.0", "0.150"), "L1": ("6.0", "20.0"), "L2": ("7.5", "24.0"),
    "width": ("0.4", "1.25"), "w_dead": ("21.0", "1.4"), "w_live": ("12.0", "0.8"),
    "P": ("40.0", "9.0"), "at": ("3.0", "10.0"), "b": ("350", "14"), "h": ("650", "26"),
    "cover": ("65", "2.5"), "fc": ("32", "4"), "fy": ("500", "60"),
}
_UNITS = {
    "SI": dict(length="m", force="kN", line_load="kN/m", moment="kN*m", E_unit="MPa",
               I_unit="mm^4", A_unit="mm^2", unit_weight_unit="kN/m^3", section="mm",
               stress="MPa"),
    "US": dict(length="ft", force="kip", line_load="kip/ft", moment="kip*ft", E_unit="ksi",
               I_unit="in^4", A_unit="in^2", unit_weight_unit="kip/ft^3", section="in",
               stress="ksi"),
}

_TEMPLATE = """\
# A case file of envelope: one continuous beam.  Edit the values, then
#   envelope check {name}      (checks the file)
#   envelope run {name} --report
# Plain numbers are in the customary units of the system named by `units`
# (here {system}: lengths {length}, forces {force}, line loads {line_load}); any number
# may instead be a string with its unit, such as "7.5 m" or "24 ft".
# Editor completion: `envelope schema -o envelope.schema.json`, then make
# `#:schema envelope.schema.json` the first line of this file.
# Results are for checking by a licensed engineer and defer to local codes.

id = "{beam_id}"              # letters, digits . _ - (default: the file name)
title = "Template: three-span floor beam"
units = "{system}"                  # SI | US

[section]                      # the default section of every span
E = {E}                      # {E_unit}
I = {I}                       # {I_unit}
A = {A}                     # {A_unit}, optional (self weight)
unit_weight = {unit_weight}             # {unit_weight_unit}, optional (self weight)

[[spans]]                      # left to right; E, I, A, unit_weight may be given per span
length = {L1}                   # {length}
[[spans]]
length = {L2}
  # [[spans.sections]]         # optional: a stretch of another section inside the span
  # from = 0.0                 # {length}, from the span's left support
  # to = 1.0
  # I = 1.2e10
[[spans]]
length = {L1}

[[supports]]                   # exactly one per joint (spans + 1), left to right
type = "pinned"                # pinned | fixed | free | spring
width = {width}                  # {length}, optional: face-of-support values are reported
[[supports]]
type = "pinned"
width = {width}
[[supports]]
type = "pinned"
width = {width}
[[supports]]
type = "pinned"
width = {width}
# a spring support instead: type = "spring", k_vertical = ..., k_rotation = ...,
# or columns = {{ E = ..., I = ..., height_below = ..., height_above = ..., far_end = "fixed" }}

[cases]                        # every load case used by [[loads]]
D = {{ kind = "dead" }}          # kinds: dead, live, roof_live, snow, rain, wind
L = {{ kind = "live" }}          # live and roof_live are patterned by default
# category = "A".."H" for Eurocode psi factors (EN 1990 Table A1.1)

[[loads]]
case = "D"
type = "self_weight"           # uniform | linear | point | moment | self_weight
spans = "all"                  # "all", a span number (from 1) or a list
[[loads]]
case = "D"
type = "uniform"
spans = "all"
w = {w_dead}                      # {line_load}; start and end ({length}) for a part of the span
[[loads]]
case = "L"
type = "uniform"
spans = "all"
w = {w_live}
[[loads]]
case = "D"
type = "point"
spans = 2
P = {P}                       # {force}
at = {at}                      # {length}, from the span's left support
# type = "linear": w_start, w_end ({line_load}); type = "moment": M ({moment}), at

[combinations]
strength = "asce7-lrfd"        # asce7-lrfd | asce7-asd | en1990-6.10 | en1990-6.10ab | none
service = "characteristic"     # characteristic | none
reduced_companion_live = false
# [[combinations.custom]]
# name = "1.25D+1.5L"
# set = "strength"             # strength | service
# factors = {{ D = 1.25, L = 1.5 }}

[patterning]
method = "code"                # none | code | exhaustive | segments
# segments = 4                 # for "segments": parts per span
# favourable_dead = 1.0        # dead-load factor on spans without patterned load

[output]
stations_per_span = 21         # equally spaced, ends included
all_cases = false              # also write stations.parquet
moment_plot = "sagging-up"     # sagging-up | tension-side

[design]                       # optional: member sizing; section units {section}, {stress}
material = "concrete"          # concrete | steel
code = "aci318-19"             # concrete: aci318-19 | en1992-1-1; steel: aisc360-22
b = {b}                        # web width, {section}
h = {h}                        # overall depth, {section}
cover_to_bar_centre = {cover}       # d = h - cover_to_bar_centre, {section}
# flange_width = ...           # optional T-beam flange for sagging, {section}
# flange_depth = ...
fc = {fc}                        # {stress}
fy = {fy}                       # {stress}
deflection_limits = {{ live = 360, total = 240 }}   # span / limit
# steel instead: material = "steel", code = "aisc360-22", Fy = ..., and
# sections = "sections.csv" or section = {{ name = "...", Zx = ..., Ix = ..., Aw = ... }}
"""


def case_template(name: str = "beam.toml", system: str = "SI") -> str:
    """The text of a commented template case file in ``system`` ("SI" or "US")."""
    k = 0 if system == "SI" else 1
    u = _UNITS[system]
    values = {key: pair[k] for key, pair in _VALUES.items()}
    stem = name.rsplit("/", 1)[-1].rsplit(".", 1)[0] or "beam"
    beam_id = re.sub(r"[^A-Za-z0-9._-]", "-", stem)[:64] or "beam"
    return _TEMPLATE.format(name=name, system=system, beam_id=beam_id, **values, **u)


#: The heading row and one example row of a beam schedule template.
SCHEDULE_HEADINGS = ("id", "title", "units", "spans [m]", "supports", "support_width [m]",
                     "E", "I", "A", "unit_weight", "tributary_width [m]", "dead_area",
                     "live_area", "patterning", "material", "code", "b", "h",
                     "cover_to_bar_centre", "fc", "fy", "deflection_live",
                     "deflection_total")
SCHEDULE_EXAMPLE = ("L2-A", "Level 2, line A", "SI", "6.0 7.5 6.0", "pinned", 0.4, 30000,
                    8.0e9, 227500, 24.0, 4.2, 5.0, 3.0, "code", "concrete", "aci318-19",
                    350, 650, 65, 32, 500, 360, 240)
