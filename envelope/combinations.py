"""Load combinations: the rule sets of ``[combinations]`` turned into factors by case.

:func:`build` reads the validated load cases and the ``[combinations]`` table and
returns every strength combination (the named rule set, then the custom ones of
set ``strength``), then every service combination (the named rule set, then the
custom ones of set ``service``).  Factors are dimensionless, so nothing here
depends on the unit system.

The rule sets are data, one table per set:

* ``asce7-lrfd``: ASCE/SEI 7-22 section 2.3.1, combinations 1 to 5 (no seismic);
* ``asce7-asd``: ASCE/SEI 7-22 section 2.4.1 (no seismic);
* ``en1990-6.10``: EN 1990:2002+A1 section 6.4.3.2, expression (6.10), with the
  recommended partial factors of Table A1.2(B) and psi_0 of Table A1.1;
* ``en1990-6.10ab``: the same clause, expressions (6.10a) and (6.10b);
* ``characteristic`` (service): every case at 1.0, and the live kinds alone at
  1.0 (the case-format contract; common practice for deflection checks).

A row refers to case *kinds*; every case of that kind takes the row's factor
("1.2D + 1.2SDL + 1.6L").  A row is generated only when every variable kind it
names has at least one case, and two rows of one set that end with identical
factors are kept once (the first).  Tags in comments follow the project's
reference list: [C] confirmed in a named source, [M] from memory, [D] derived,
[P] common practice.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import dataclass

from envelope.model import Combination, CombinationSet, CombinationSpec, LoadCase

STRENGTH_SETS: tuple[str, ...] = (
    "asce7-lrfd",
    "asce7-asd",
    "en1990-6.10",
    "en1990-6.10ab",
    "none",
)
SERVICE_SETS: tuple[str, ...] = ("characteristic", "none")

#: Kinds that are permanent actions; every other kind is a variable action.
PERMANENT_KINDS: frozenset[str] = frozenset({"dead"})
#: Kinds taken by the service set's "live alone" combination.
LIVE_KINDS: tuple[str, ...] = ("live", "roof_live")

#: Factors by case name, in case declaration order.
Factors = tuple[tuple[str, float], ...]

#: Digits kept in a generated factor, so that 1.5 * 0.7 is stored as 1.05.
_FACTOR_DIGITS = 10


# --------------------------------------------------------------------------
# ASCE/SEI 7-22
# --------------------------------------------------------------------------


@dataclass(frozen=True, slots=True)
class Row:
    """One explicit combination of a rule table: factors by kind, and the equation it is.

    ``equation`` is the equation number within the clause ``clause`` (e.g. "2"
    of "ASCE 7-22 2.3.1").  The "or" alternatives of an equation are separate
    rows, and so is each form with a companion load not acting (see below).
    """

    equation: str
    terms: tuple[tuple[str, float], ...]

    @property
    def kinds(self) -> frozenset[str]:
        return frozenset(kind for kind, _ in self.terms)


def _row(equation: str, **factors: float) -> Row:
    return Row(equation, tuple(factors.items()))


# ASCE 7-22 section 2.3.1 (strength design, LRFD), combinations 1 to 5.
# 7-22 column of the project's reference list (section 1.1):
#   1. 1.4D
#   2. 1.2D + 1.6L + (0.5Lr or 0.3S or 0.5R)
#   3. 1.2D + 1.6(Lr or R) + (L or 0.5W);  1.2D + 1.0S + (L or 0.5W)
#   4. 1.2D + 1.0W + L + (0.5Lr or 0.3S or 0.5R)
#   5. 0.9D + 1.0W
# Snow is strength-level in 7-22 with a load factor of 1.0 [C] (STRUCTURE
# magazine, "Ground Snow Loads for ASCE 7-22"); the L-principal equation with
# 0.3S is [C]; the exact layout and numbering of the 7-22 equations is [M].
# Each equation's principal load is required; its companion loads (the bracketed
# terms, and L in combination 4) may also be absent, because the effects of one
# or more loads not acting are to be investigated (stated for ASCE 7-05 in a
# masonry design text [C]; kept in 7-22 [M]).  Wind is the case as given
# (downward positive); 0.9D + 1.0W is the uplift check.  Seismic (2.3.6),
# tornado W_T, flood, ice and self-straining loads are not covered.
ASCE7_LRFD_CLAUSE = "ASCE 7-22 2.3.1"
ASCE7_LRFD: tuple[Row, ...] = (
    _row("1", dead=1.4),
    _row("2", dead=1.2, live=1.6),
    _row("2", dead=1.2, live=1.6, roof_live=0.5),
    _row("2", dead=1.2, live=1.6, snow=0.3),
    _row("2", dead=1.2, live=1.6, rain=0.5),
    _row("3", dead=1.2, roof_live=1.6),
    _row("3", dead=1.2, roof_live=1.6, live=1.0),
    _row("3", dead=1.2, roof_live=1.6, wind=0.5),
    _row("3", dead=1.2, rain=1.6),
    _row("3", dead=1.2, rain=1.6, live=1.0),
    _row("3", dead=1.2, rain=1.6, wind=0.5),
    _row("3", dead=1.2, snow=1.0),
    _row("3", dead=1.2, snow=1.0, live=1.0),
    _row("3", dead=1.2, snow=1.0, wind=0.5),
    _row("4", dead=1.2, wind=1.0),
    _row("4", dead=1.2, wind=1.0, live=1.0),
    _row("4", dead=1.2, wind=1.0, live=1.0, roof_live=0.5),
    _row("4", dead=1.2, wind=1.0, live=1.0, snow=0.3),
    _row("4", dead=1.2, wind=1.0, live=1.0, rain=0.5),
    _row("4", dead=1.2, wind=1.0, roof_live=0.5),
    _row("4", dead=1.2, wind=1.0, snow=0.3),
    _row("4", dead=1.2, wind=1.0, rain=0.5),
    _row("5", dead=0.9, wind=1.0),
)

# ASCE 7-22 2.3.1 Exception 1: the load factor on L in combinations 3 and 4 may
# be 0.5 where Lo <= 100 psf (4.79 kN/m^2) [C]; not for garages or areas of
# public assembly [M].  Whether it applies is the user's call
# (``reduced_companion_live``); the engine does not check Lo or occupancy.
ASCE7_LRFD_EXCEPTION_1_EQUATIONS: frozenset[str] = frozenset({"3", "4"})
ASCE7_LRFD_REDUCED_LIVE = 0.5

# ASCE 7-22 section 2.4.1 (allowable stress design), no seismic:
#   1. D   2. D + L   3a. D + (Lr or 0.7S or R)   4a. D + 0.75L + 0.75(Lr or 0.7S or R)
#   5. D + 0.6W   6a. D + 0.75L + 0.75(0.6W) + 0.75(Lr or 0.7S or R)   7. 0.6D + 0.6W
# The 0.7S and the labels 3a, 4a, 6a are [C] (STRUCTURE magazine, "ASCE 7-22
# Flat Roof Snow Load versus Minimum Snow Load"); the rest of the list and the
# other numbers are [M].  In 4a every term is required (with L or the roof load
# absent it is weaker than 2 or 3a); in 6a L and the roof load are companions
# that may be absent, but not both (D + 0.45W is weaker than 5 or 7).
ASCE7_ASD_CLAUSE = "ASCE 7-22 2.4.1"
ASCE7_ASD: tuple[Row, ...] = (
    _row("1", dead=1.0),
    _row("2", dead=1.0, live=1.0),
    _row("3a", dead=1.0, roof_live=1.0),
    _row("3a", dead=1.0, snow=0.7),
    _row("3a", dead=1.0, rain=1.0),
    _row("4a", dead=1.0, live=0.75, roof_live=0.75),
    _row("4a", dead=1.0, live=0.75, snow=0.75 * 0.7),
    _row("4a", dead=1.0, live=0.75, rain=0.75),
    _row("5", dead=1.0, wind=0.6),
    _row("6a", dead=1.0, live=0.75, wind=0.75 * 0.6, roof_live=0.75),
    _row("6a", dead=1.0, live=0.75, wind=0.75 * 0.6, snow=0.75 * 0.7),
    _row("6a", dead=1.0, live=0.75, wind=0.75 * 0.6, rain=0.75),
    _row("6a", dead=1.0, live=0.75, wind=0.75 * 0.6),
    _row("6a", dead=1.0, wind=0.75 * 0.6, roof_live=0.75),
    _row("6a", dead=1.0, wind=0.75 * 0.6, snow=0.75 * 0.7),
    _row("6a", dead=1.0, wind=0.75 * 0.6, rain=0.75),
    _row("7", dead=0.6, wind=0.6),
)


# --------------------------------------------------------------------------
# EN 1990
# --------------------------------------------------------------------------

#: EN 1990 Table A1.2(B), recommended values [C] (SCI "Steel Buildings in
#: Europe" Part 3, Table 3.1).  National Annexes differ (UK: xi = 0.925 [M]).
GAMMA_G_SUP = 1.35
GAMMA_Q = 1.5
XI = 0.85

#: psi_0 of EN 1990 Table A1.1 (recommended values) [C]: imposed-load
#: categories A..H of EN 1991-1-1, snow and wind.  Snow is the value for sites
#: at or below 1000 m outside FI, IS, NO and SE (0.5; above 1000 m or in those
#: states it is 0.7); the case file has no key for the site, so the lower value
#: is used.  Rain has no row in Table A1.1: ponding water on a roof is taken
#: like the roof imposed load of category H, psi_0 = 0 (this engine's choice),
#: so rain may lead but never accompanies.  National Annexes vary.
PSI_0: dict[str, float] = {
    "A": 0.7,  # domestic, residential
    "B": 0.7,  # office
    "C": 0.7,  # congregation
    "D": 0.7,  # shopping
    "E": 1.0,  # storage
    "F": 0.7,  # traffic, vehicle weight <= 30 kN
    "G": 0.7,  # traffic, 30 kN < vehicle weight <= 160 kN
    "H": 0.0,  # roofs
    "snow": 0.5,  # sites at or below 1000 m a.s.l. (see above)
    "wind": 0.6,
    "rain": 0.0,  # no row in Table A1.1: this engine's choice (see above)
}

#: The imposed-load categories of EN 1991-1-1 that Table A1.1 lists.
CATEGORIES: tuple[str, ...] = ("A", "B", "C", "D", "E", "F", "G", "H")
#: The category taken when a live or roof-live case names none.
DEFAULT_CATEGORY: dict[str, str] = {"live": "B", "roof_live": "H"}


def psi0(case: LoadCase) -> float:
    """psi_0 of a variable load case (EN 1990 Table A1.1), dimensionless.

    Live and roof-live cases use their ``category`` ("A".."H"; by default B,
    office, for live and H, roofs, for roof live); snow, wind and rain use the
    kind's value in :data:`PSI_0`, and any category they carry is not read.
    A permanent action has no psi_0: ValueError.
    """
    if case.kind in DEFAULT_CATEGORY:
        category = case.category if case.category is not None else DEFAULT_CATEGORY[case.kind]
        if category not in CATEGORIES:
            raise ValueError(
                f"load case {case.name!r}: unknown category {category!r} (expected A..H)"
            )
        return PSI_0[category]
    if case.kind in PERMANENT_KINDS:
        raise ValueError(f"load case {case.name!r}: a permanent action has no psi_0")
    if case.kind not in PSI_0:
        raise ValueError(f"load case {case.name!r}: no psi_0 for kind {case.kind!r}")
    return PSI_0[case.kind]


@dataclass(frozen=True, slots=True)
class EnRow:
    """One EN 1990 expression: gamma_G on every permanent action, and the variable terms.

    ``leading`` is gamma_Q of the leading variable action (None: permanent actions
    only); ``leading_psi0`` multiplies it by that action's psi_0, as (6.10a) does;
    ``accompanying`` is gamma_Q of every other variable action, multiplied by its
    psi_0.  Each variable case leads in turn.
    """

    equation: str
    gamma_g: float
    leading: float | None = None
    leading_psi0: bool = False
    accompanying: float = 0.0


# EN 1990 6.4.3.2: (6.10) sum gamma_G Gk + gamma_Q,1 Qk,1 + sum gamma_Q,i psi_0,i Qk,i,
# with gamma_G,sup and gamma_Q of Table A1.2(B).  The permanent-only row covers
# the case of no variable action acting.  gamma_G,inf on unloaded spans is the
# patterning's business (``favourable_dead``), not a combination of its own.
EN1990_CLAUSE = "EN 1990 6.4.3.2"
EN1990_610: tuple[EnRow, ...] = (
    EnRow("(6.10)", GAMMA_G_SUP),
    EnRow("(6.10)", GAMMA_G_SUP, leading=GAMMA_Q, accompanying=GAMMA_Q),
)
# (6.10a): (6.10) with the leading action also at psi_0 (so every variable at
# gamma_Q psi_0); (6.10b): (6.10) with the permanent term times xi.  The less
# favourable of the two governs, which the envelope finds.
EN1990_610AB: tuple[EnRow, ...] = (
    EnRow("(6.10a)", GAMMA_G_SUP),
    EnRow("(6.10a)", GAMMA_G_SUP, leading=GAMMA_Q, leading_psi0=True, accompanying=GAMMA_Q),
    EnRow("(6.10b)", XI * GAMMA_G_SUP, leading=GAMMA_Q, accompanying=GAMMA_Q),
)


# --------------------------------------------------------------------------
# Generation
# --------------------------------------------------------------------------


def _clean(factor: float) -> float:
    """The factor rounded to a fixed number of digits (1.5 * 0.7 -> 1.05)."""
    return round(factor, _FACTOR_DIGITS) + 0.0


def _format_factor(factor: float) -> str:
    return "" if factor == 1.0 else f"{factor:.10g}"


def combination_name(factors: Iterable[tuple[str, float]]) -> str:
    """Readable name from factors by case: "1.2D + 1.2SDL + 1.6L"; factor 1 is written "D"."""
    return " + ".join(f"{_format_factor(f)}{name}" for name, f in factors)


def _ordered(cases: tuple[LoadCase, ...], factors: Mapping[str, float]) -> Factors:
    """Factors in case declaration order, zero factors left out."""
    return tuple((c.name, factors[c.name]) for c in cases if factors.get(c.name, 0.0) != 0.0)


def _asce(
    cases: tuple[LoadCase, ...], table: tuple[Row, ...], clause: str, reduced_live: bool
) -> list[tuple[Factors, str]]:
    present = {c.kind for c in cases}
    out: list[tuple[Factors, str]] = []
    for row in table:
        if not (row.kinds - PERMANENT_KINDS) <= present:
            continue
        by_kind = dict(row.terms)
        source = f"{clause} ({row.equation})"
        if (
            reduced_live
            and clause == ASCE7_LRFD_CLAUSE
            and row.equation in ASCE7_LRFD_EXCEPTION_1_EQUATIONS
            and "live" in by_kind
        ):
            by_kind["live"] = ASCE7_LRFD_REDUCED_LIVE
            source += ", Exception 1"
        factors = {c.name: _clean(by_kind.get(c.kind, 0.0)) for c in cases}
        out.append((_ordered(cases, factors), source))
    return out


def _en1990(cases: tuple[LoadCase, ...], table: tuple[EnRow, ...]) -> list[tuple[Factors, str]]:
    permanent = [c for c in cases if c.kind in PERMANENT_KINDS]
    variable = [c for c in cases if c.kind not in PERMANENT_KINDS]
    out: list[tuple[Factors, str]] = []
    for row in table:
        source = f"{EN1990_CLAUSE} {row.equation}, Table A1.2(B)"
        base = {c.name: _clean(row.gamma_g) for c in permanent}
        if row.leading is None:
            out.append((_ordered(cases, base), source))
            continue
        source += ", Table A1.1"
        for lead in variable:
            factors = dict(base)
            for c in variable:
                if c is lead:
                    f = row.leading * (psi0(c) if row.leading_psi0 else 1.0)
                else:
                    f = row.accompanying * psi0(c)
                factors[c.name] = _clean(f)
            out.append((_ordered(cases, factors), source))
    return out


def _characteristic(
    cases: tuple[LoadCase, ...],
) -> list[tuple[Factors, str]]:
    everything = {c.name: 1.0 for c in cases}
    live = {c.name: 1.0 for c in cases if c.kind in LIVE_KINDS}
    return [
        (_ordered(cases, everything), "characteristic: every case at 1.0 (common practice)"),
        (_ordered(cases, live), "characteristic: live kinds alone at 1.0 (common practice)"),
    ]


def _generate(
    cases: tuple[LoadCase, ...], set_name: str, spec: CombinationSpec
) -> list[tuple[Factors, str]]:
    if set_name == "asce7-lrfd":
        return _asce(cases, ASCE7_LRFD, ASCE7_LRFD_CLAUSE, spec.reduced_companion_live)
    if set_name == "asce7-asd":
        return _asce(cases, ASCE7_ASD, ASCE7_ASD_CLAUSE, False)
    if set_name == "en1990-6.10":
        return _en1990(cases, EN1990_610)
    if set_name == "en1990-6.10ab":
        return _en1990(cases, EN1990_610AB)
    if set_name == "characteristic":
        return _characteristic(cases)
    return []  # "none"


def _unique(name: str, set_name: str, taken: set[str]) -> str:
    """``name``, or with the set and then a number appended where it is already taken."""
    if name not in taken:
        return name
    candidate = f"{name} ({set_name})"
    number = 2
    while candidate in taken:
        candidate = f"{name} ({set_name} {number})"
        number += 1
    return candidate


def build(cases: tuple[LoadCase, ...], spec: CombinationSpec) -> tuple[Combination, ...]:
    """Every combination of ``spec`` for ``cases``: strength first, then service.

    Within a set: the rule set's rows in table order, each variable case
    leading in turn for EN 1990, then the custom combinations of that set in
    the order given.  Factors are in case declaration order with zeros left
    out.  Generated rows that end with the same factors as an earlier row of
    the same set are dropped; custom combinations are kept as given.  Names
    are unique over the result: a custom name is never changed, and a
    generated name already taken gets its set appended ("D + L (service)").
    ValueError for a set name not in :data:`STRENGTH_SETS` or
    :data:`SERVICE_SETS`, a custom combination naming an unknown case, or two
    custom combinations of one name.
    """
    if spec.strength not in STRENGTH_SETS:
        raise ValueError(
            f"combinations.strength: unknown rule set {spec.strength!r} "
            f"(expected one of {', '.join(STRENGTH_SETS)})"
        )
    if spec.service not in SERVICE_SETS:
        raise ValueError(
            f"combinations.service: unknown rule set {spec.service!r} "
            f"(expected one of {', '.join(SERVICE_SETS)})"
        )
    known = {c.name for c in cases}
    custom_names: set[str] = set()
    for combo in spec.custom:
        if combo.name in custom_names:
            raise ValueError(f"combinations.custom: name {combo.name!r} used twice")
        custom_names.add(combo.name)
        unknown = [name for name, _ in combo.factors if name not in known]
        if unknown:
            raise ValueError(
                f"combinations.custom {combo.name!r}: unknown load case {unknown[0]!r}"
            )

    taken = set(custom_names)
    result: list[Combination] = []
    plan: tuple[tuple[CombinationSet, str], ...] = (
        ("strength", spec.strength),
        ("service", spec.service),
    )
    for set_kind, set_name in plan:
        seen: set[Factors] = set()
        for factors, source in _generate(cases, set_name, spec):
            if not factors or factors in seen:
                continue
            seen.add(factors)
            name = _unique(combination_name(factors), set_kind, taken)
            taken.add(name)
            result.append(Combination(name, set_kind, factors, source))
        for combo in spec.custom:
            if combo.set != set_kind:
                continue
            result.append(
                Combination(combo.name, set_kind, _ordered(cases, combo.factor_map), combo.source)
            )
    return tuple(result)
