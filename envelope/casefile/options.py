"""The options of a run: ``[cases]``, ``[combinations]``, ``[patterning]`` and ``[output]``.

Where a key is absent its value is the model's default (the dataclass fields of
:mod:`envelope.model`); the choices allowed are the model's Literal types.
"""

from __future__ import annotations

import re
from typing import Any, get_args

from envelope.casefile.reader import Reader, item, join
from envelope.model import (
    CASE_KINDS,
    LIVE_KINDS,
    PATTERNED_BY_DEFAULT,
    Category,
    Combination,
    CombinationSet,
    CombinationSpec,
    LiveReduction,
    LoadCase,
    MomentPlot,
    OutputOptions,
    Patterning,
    PatternMethod,
    ServiceRuleSet,
    StrengthRuleSet,
)
from envelope.reduction import OCCUPANCIES, standard_of

CASE_NAME_PATTERN = re.compile(r"[A-Za-z][A-Za-z0-9_]*")
CASE_KEYS = ("kind", "pattern", "category", "reduction", "psi0", "psi1", "psi2")
#: ``reduction`` of a live case: live load reduction (see :mod:`envelope.reduction`).
REDUCTION_KEYS = ("tributary_width", "kll", "floors", "occupancy", "standard")
REDUCTION_STANDARDS = ("asce7-22", "en1991-1-1")
#: ASCE 7-22 Table 4.7-1: the live load element factor is 1, 2, 3 or 4.
KLL_RANGE = (1.0, 4.0)
CATEGORIES: tuple[Category, ...] = get_args(Category)
#: Bounds on a case's own psi_0, psi_1, psi_2 (EN 1990 combination factors).
PSI_RANGE = (0.0, 1.0)

COMBINATION_KEYS = ("strength", "service", "reduced_companion_live", "custom", "factors")
#: ``[combinations].factors``: national partial factors of the EN strength sets.
FACTOR_KEYS = ("G_sup", "G_inf", "Q", "xi")
#: Bounds on each national factor (gamma_G,sup, gamma_G,inf, gamma_Q up to 3; xi to 1).
FACTOR_RANGES = {"G_sup": (0.0, 3.0), "G_inf": (0.0, 3.0), "Q": (0.0, 3.0), "xi": (0.0, 1.0)}
#: Bounds on a custom combination's factor of a case: any load factor in use, with room
#: (a factor of 1e308 overflowed the envelope to a non-finite result, the engine's error).
CUSTOM_FACTOR_RANGE = (-10.0, 10.0)
#: Strength rule sets that read ``factors``.
EN_STRENGTH_SETS = ("en1990-6.10", "en1990-6.10ab", "en1990-6.10ab-uk")
STRENGTH_SETS: tuple[StrengthRuleSet, ...] = get_args(StrengthRuleSet)
SERVICE_SETS: tuple[ServiceRuleSet, ...] = get_args(ServiceRuleSet)
CUSTOM_KEYS = ("name", "set", "factors")
COMBINATION_SETS: tuple[CombinationSet, ...] = get_args(CombinationSet)

PATTERNING_KEYS = ("method", "segments", "favourable_dead")
PATTERN_METHODS: tuple[PatternMethod, ...] = get_args(PatternMethod)
#: Upper bound on ``segments``: parts per span, each a separate unit load case.
MAX_SEGMENTS = 1000
#: Bounds on favourable_dead: a factor on dead load, 0 (removed) to 2 (doubled).
FAVOURABLE_DEAD_RANGE = (0.0, 2.0)

OUTPUT_KEYS = ("stations_per_span", "all_cases", "moment_plot")
STATIONS_RANGE = (2, 100_001)
MOMENT_PLOTS: tuple[MomentPlot, ...] = get_args(MomentPlot)


# -- [cases] ----------------------------------------------------------------


def cases(r: Reader, data: dict[str, Any]) -> tuple[LoadCase, ...]:
    """The ``[cases]`` table: every load case, in file order."""
    if "cases" not in data:
        r.fail("cases", "required: declare every load case, e.g. D = { kind = \"dead\" }")
    table = r.table(data["cases"], "cases")
    if not table:
        r.fail("cases", "no load cases declared")
    return tuple(case(r, name, value) for name, value in table.items())


def case(r: Reader, name: str, value: object) -> LoadCase:
    """One load case: its kind, whether it is patterned, its EN 1990 category."""
    key = join("cases", name)
    if not CASE_NAME_PATTERN.fullmatch(name):
        r.fail(key, f"case name {name!r} must start with a letter and use only "
                    "letters, digits and '_'")
    table = r.table(value, key)
    r.known_keys(table, key, CASE_KEYS)
    kind = r.choice(r.required(table, key, "kind"), join(key, "kind"), CASE_KINDS, "case kind")
    patterned = r.optional(table, key, "pattern", r.boolean, kind in PATTERNED_BY_DEFAULT)
    if patterned and kind == "settlement":
        r.fail(join(key, "pattern"), "a settlement moves a support, not a span: it is not "
                                     "patterned (it acts only where it makes things worse)")
    category = r.optional(table, key, "category",
                          lambda v, k: r.choice(v, k, CATEGORIES, "category"), None)
    if category is not None and kind not in LIVE_KINDS:
        r.fail(join(key, "category"),
               "categories A to H (EN 1990 Table A1.1) apply to imposed loads: "
               f"kind 'live' or 'roof_live', not {kind!r}")
    psis = {}
    for name_psi in ("psi0", "psi1", "psi2"):
        psis[name_psi] = r.optional(table, key, name_psi,
                                    lambda v, k: factor_in(r, v, k, PSI_RANGE), None)
        if psis[name_psi] is not None and kind == "dead":
            r.fail(join(key, name_psi), "psi factors (EN 1990 Table A1.1) apply to variable "
                                        "actions, not to a dead case")
    reduction = r.optional(table, key, "reduction",
                           lambda v, k: live_reduction(r, v, k, kind), None)
    return LoadCase(name=name, kind=kind, patterned=patterned, category=category,
                    reduction=reduction, **psis)


def live_reduction(r: Reader, value: object, key: str, kind: str) -> LiveReduction:
    """A live case's ``reduction`` table (ASCE 7-22 4.7, EN 1991-1-1 6.3.1.2(10))."""
    if kind != "live":
        r.fail(key, f"live load reduction applies to floor live load (kind 'live'), "
                    f"not {kind!r}")
    table = r.table(value, key)
    r.known_keys(table, key, REDUCTION_KEYS)
    width = r.positive(r.required(table, key, "tributary_width"),
                       join(key, "tributary_width"), "length")
    kll = None
    if "kll" in table:
        kll = r.plain_number(table["kll"], join(key, "kll"))
        if not KLL_RANGE[0] <= kll <= KLL_RANGE[1]:
            r.fail(join(key, "kll"), f"KLL is 1 to 4 (ASCE 7-22 Table 4.7-1), got {kll:g}")
    floors = r.optional(table, key, "floors", lambda v, k: r.integer(v, k, 1, 200), 1)
    occupancy = r.optional(table, key, "occupancy",
                           lambda v, k: r.choice(v, k, OCCUPANCIES, "occupancy"), "general")
    standard = r.optional(table, key, "standard",
                          lambda v, k: r.choice(v, k, REDUCTION_STANDARDS, "standard"), None)
    return LiveReduction(tributary_width=width, kll=kll, floors=floors, occupancy=occupancy,
                         standard=standard)


def check_reductions(r: Reader, cases: tuple[LoadCase, ...],
                     combinations: CombinationSpec) -> None:
    """The ASCE 7-22 rule needs KLL (Table 4.7-1): there is no safe default."""
    for c in cases:
        red = c.reduction
        if red is None or red.kll is not None:
            continue
        if (red.standard or standard_of(combinations.strength)) == "asce7-22":
            r.fail(join(join("cases", c.name), "reduction"),
                   "kll is required for the ASCE 7-22 rule (Table 4.7-1: 2 for interior "
                   "beams, 1 for edge beams with cantilever slabs and cantilevers)")


# -- [combinations] ---------------------------------------------------------


def combinations(r: Reader, data: dict[str, Any],
                 cases: tuple[LoadCase, ...]) -> CombinationSpec:
    """The ``[combinations]`` table: rule sets and custom combinations."""
    key = "combinations"
    table = r.optional_table(data, key, COMBINATION_KEYS)
    default = CombinationSpec()
    strength = r.optional(table, key, "strength",
                          lambda v, k: r.choice(v, k, STRENGTH_SETS, "strength rule set"),
                          default.strength)
    service = r.optional(table, key, "service", lambda v, k: service_sets(r, v, k),
                         default.service)
    reduced = r.optional(table, key, "reduced_companion_live", r.boolean,
                         default.reduced_companion_live)
    custom = r.optional(table, key, "custom", lambda v, k: custom_list(r, v, k, cases),
                        default.custom)
    factors = r.optional(table, key, "factors", lambda v, k: national_factors(r, v, k),
                         default.factors)
    if factors and strength not in EN_STRENGTH_SETS:
        r.fail(join(key, "factors"), "national partial factors apply to the EN 1990 strength "
                                     f"sets ({', '.join(EN_STRENGTH_SETS)}), not to "
                                     f"{strength!r}")
    spec = CombinationSpec(strength=strength, service=service,
                           reduced_companion_live=reduced, custom=custom, factors=factors)
    if strength == "none" and not spec.service_sets and not custom:
        r.fail(key, 'nothing to run: strength and service are both "none" and there '
                    "are no [[combinations.custom]]")
    return spec


def service_sets(r: Reader, value: object, key: str
                 ) -> ServiceRuleSet | tuple[ServiceRuleSet, ...]:
    """``service``: one service rule set, or a list of them (each once)."""
    if not isinstance(value, list):
        return r.choice(value, key, SERVICE_SETS, "service rule set")
    if not value:
        r.fail(key, 'the list is empty: name a service set, or "none"')
    out: list[ServiceRuleSet] = []
    for i, entry in enumerate(value):
        name = r.choice(entry, item(key, i), SERVICE_SETS, "service rule set")
        if name in out:
            r.fail(item(key, i), f"service set {name!r} is listed twice")
        out.append(name)
    return tuple(out)


def national_factors(r: Reader, value: object, key: str) -> tuple[tuple[str, float], ...]:
    """``factors``: national gamma_G,sup, gamma_G,inf, gamma_Q and xi (EN 1990 Table
    A1.2(B)); gamma_G,inf may not exceed gamma_G,sup."""
    table = r.table(value, key, what="an inline table such as { G_sup = 1.35, xi = 0.925 }")
    r.known_keys(table, key, FACTOR_KEYS)
    read = {name: factor_in(r, table[name], join(key, name), FACTOR_RANGES[name])
            for name in FACTOR_KEYS if name in table}
    if read.get("xi") == 0.0:
        r.fail(join(key, "xi"), "must be above 0")
    sup, inf = read.get("G_sup", 1.35), read.get("G_inf", 1.0)
    if inf > sup:
        r.fail(join(key, "G_inf"), f"gamma_G,inf {inf:g} exceeds gamma_G,sup {sup:g}")
    return tuple(read.items())


def custom_list(r: Reader, value: object, key: str,
                cases: tuple[LoadCase, ...]) -> tuple[Combination, ...]:
    """``[[combinations.custom]]``: each combination, names unique."""
    out: list[Combination] = []
    for i, entry in enumerate(r.array_of_tables(value, key)):
        combo = custom(r, entry, item(key, i), cases)
        if any(c.name == combo.name for c in out):
            r.fail(join(item(key, i), "name"), f"combination name {combo.name!r} is used twice")
        out.append(combo)
    return tuple(out)


def custom(r: Reader, table: dict[str, Any], key: str,
           cases: tuple[LoadCase, ...]) -> Combination:
    """One custom combination: a name, a set and factors by declared case."""
    r.known_keys(table, key, CUSTOM_KEYS)
    name = r.string(r.required(table, key, "name"), join(key, "name"))
    if not name.strip():
        r.fail(join(key, "name"), "the name is empty")
    combo_set = r.choice(r.required(table, key, "set"), join(key, "set"), COMBINATION_SETS,
                         "combination set")
    fkey = join(key, "factors")
    factors = r.table(r.required(table, key, "factors"), fkey)
    if not factors:
        r.fail(fkey, "no factors: give at least one case = factor")
    names = tuple(c.name for c in cases)
    read: dict[str, float] = {}
    for case_name, value in factors.items():
        if case_name not in names:
            r.fail(join(fkey, case_name), f"case {case_name!r} is not declared in [cases] "
                                          f"(declared: {', '.join(names)})")
        read[case_name] = factor_in(r, value, join(fkey, case_name), CUSTOM_FACTOR_RANGE)
    ordered = tuple((c, read[c]) for c in names if c in read)
    return Combination(name=name, set=combo_set, factors=ordered, source="custom")


# -- [patterning] and [output] ----------------------------------------------


def patterning(r: Reader, data: dict[str, Any]) -> Patterning:
    """The ``[patterning]`` table."""
    key = "patterning"
    table = r.optional_table(data, key, PATTERNING_KEYS)
    default = Patterning()
    method = r.optional(table, key, "method",
                        lambda v, k: r.choice(v, k, PATTERN_METHODS, "patterning method"),
                        default.method)
    segments = r.optional(table, key, "segments",
                          lambda v, k: r.integer(v, k, 1, MAX_SEGMENTS), default.segments)
    if method == "segments" and segments < 2:
        r.fail(join(key, "segments"), 'method "segments" needs segments = 2 or more '
                                      f"(parts per span), got {segments}")
    favourable = r.optional(table, key, "favourable_dead", lambda v, k: factor_in(
        r, v, k, FAVOURABLE_DEAD_RANGE), default.favourable_dead)
    return Patterning(method=method, segments=segments, favourable_dead=favourable)


def factor_in(r: Reader, value: object, key: str, bounds: tuple[float, float]) -> float:
    """A plain number from ``bounds[0]`` to ``bounds[1]``."""
    out = r.plain_number(value, key)
    lo, hi = bounds
    if not lo <= out <= hi:
        r.fail(key, f"must be from {lo:g} to {hi:g}, got {out:g}")
    return out


def output(r: Reader, data: dict[str, Any]) -> OutputOptions:
    """The ``[output]`` table."""
    key = "output"
    table = r.optional_table(data, key, OUTPUT_KEYS)
    default = OutputOptions()
    stations = r.optional(table, key, "stations_per_span",
                          lambda v, k: r.integer(v, k, *STATIONS_RANGE),
                          default.stations_per_span)
    all_cases = r.optional(table, key, "all_cases", r.boolean, default.all_cases)
    moment_plot = r.optional(table, key, "moment_plot", lambda v, k: r.choice(
        v, k, MOMENT_PLOTS, "moment plot convention"), default.moment_plot)
    return OutputOptions(stations_per_span=stations, all_cases=all_cases,
                         moment_plot=moment_plot)
