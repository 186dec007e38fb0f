"""Load combinations: the rule sets of ``[combinations]`` turned into factors by case.

:func:`build` reads the validated load cases and the ``[combinations]`` table and
returns every strength combination (the named rule set, then the custom ones of
set ``strength``), then every service combination (each named service set in the
order given, then the custom ones of set ``service``).  Factors are
dimensionless, so nothing here depends on the unit system.

Every variable action of a generated row acts only where it makes the effect
worse: its case is listed in :attr:`Combination.optional`, and the enveloper
takes it or leaves it out cell by cell (a patterned case) or over the whole beam
(a case that is not patterned).  That is EN 1990 Table A1.2(B) (gamma_Q = 0
where favourable) and ASCE 7-22 2.3.1 and 2.4.1 ("effects of one or more loads
not acting shall be investigated").  The leading action of an EN row always
acts (a patterned one on the cells its patterning chooses); each variable case
leads in turn, so the row with another leader, or the permanent-only row,
covers it where it helps.  Custom rows act as given.

The rule sets are data, one table per set:

* ``asce7-lrfd``: ASCE/SEI 7-22 section 2.3.1, combinations 1 to 5 (no seismic);
* ``asce7-asd``: ASCE/SEI 7-22 section 2.4.1 (no seismic);
* ``en1990-6.10``: EN 1990:2002+A1 6.4.3.2, expression (6.10), every row with the
  whole permanent load at gamma_G,sup and again at gamma_G,inf (Table A1.2(B)),
  psi_0 of Table A1.1;
* ``en1990-6.10ab``: the same clause, expressions (6.10a) and (6.10b);
* ``en1990-6.10ab-uk``: (6.10a) and (6.10b) with xi = 0.925 (the UK choice);
* service (EN 1990 6.5.3): ``characteristic`` (6.14b), ``frequent`` (6.15b, psi_1
  on the leading action, psi_2 on the others), ``quasi-permanent`` (6.16b, psi_2).

:func:`variable_alone` gives each variable kind alone at 1.0, for the deflection
checks by kind.  An ASCE row refers to case *kinds*; every case of that kind
takes the row's factor ("1.2D + 1.2SDL + 1.6L").  Two generated rows of one rule
set that end with identical factors and optional cases are kept once (the
first).  Tags in comments follow the project's reference list: [C] confirmed in
a named source, [M] from memory, [D] derived, [P] common practice.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Iterable, Mapping
from typing import get_args

from envelope.model import (
    Combination,
    CombinationSet,
    CombinationSpec,
    LoadCase,
    ServiceRuleSet,
    StrengthRuleSet,
)
from envelope.values import dataclass

STRENGTH_SETS: tuple[str, ...] = get_args(StrengthRuleSet)
SERVICE_SETS: tuple[str, ...] = get_args(ServiceRuleSet)
#: Rule sets that read the national partial factors of ``[combinations].factors``.
EN_STRENGTH_SETS: frozenset[str] = frozenset({"en1990-6.10", "en1990-6.10ab",
                                              "en1990-6.10ab-uk"})

#: Kinds that are permanent actions; every other kind is a variable action.
PERMANENT_KINDS: frozenset[str] = frozenset({"dead"})
#: Variable kinds, in the order the deflection-by-kind rows are listed.
VARIABLE_KINDS: tuple[str, ...] = ("live", "roof_live", "snow", "rain", "wind")
#: Kinds taken by the service set's "live alone" combination (kept for readers).
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

    ``equation`` is the equation number within the clause (e.g. "2" of "ASCE 7-22
    2.3.1").  The "or" alternatives of an equation are separate rows.  The row is
    generated when every kind of ``needs`` has a case and, where ``needs_one`` is
    given, one of its kinds has; every variable case of the row may then act or not.
    """

    equation: str
    terms: tuple[tuple[str, float], ...]
    needs: frozenset[str] = frozenset()
    needs_one: frozenset[str] = frozenset()

    @property
    def kinds(self) -> frozenset[str]:
        """The load kinds the row puts a factor on."""
        return frozenset(kind for kind, _ in self.terms)


def _row(equation: str, needs: Iterable[str] = (), needs_one: Iterable[str] = (),
         **factors: float) -> Row:
    """A :class:`Row` written as the clause prints it: factors by kind as keywords."""
    return Row(equation, tuple(factors.items()), frozenset(needs), frozenset(needs_one))


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
# "Effects of one or more loads not acting shall be investigated" (2.3.1 [M] for
# the wording in 7-22): every variable case of a row may act or not, so
# 0.9D + 1.0W also gives 0.9D where the wind helps.  A row needs its principal
# load (the kind outside the brackets).  Wind is the case as given (downward
# positive).  Seismic (2.3.6), tornado W_T, flood, ice and self-straining loads
# are not covered.
ASCE7_LRFD_CLAUSE = "ASCE 7-22 2.3.1"
ASCE7_LRFD: tuple[Row, ...] = (
    _row("1", dead=1.4),
    _row("2", ["live"], dead=1.2, live=1.6, roof_live=0.5),
    _row("2", ["live"], dead=1.2, live=1.6, snow=0.3),
    _row("2", ["live"], dead=1.2, live=1.6, rain=0.5),
    _row("3", ["roof_live"], dead=1.2, roof_live=1.6, live=1.0),
    _row("3", ["roof_live"], dead=1.2, roof_live=1.6, wind=0.5),
    _row("3", ["rain"], dead=1.2, rain=1.6, live=1.0),
    _row("3", ["rain"], dead=1.2, rain=1.6, wind=0.5),
    _row("3", ["snow"], dead=1.2, snow=1.0, live=1.0),
    _row("3", ["snow"], dead=1.2, snow=1.0, wind=0.5),
    _row("4", ["wind"], dead=1.2, wind=1.0, live=1.0, roof_live=0.5),
    _row("4", ["wind"], dead=1.2, wind=1.0, live=1.0, snow=0.3),
    _row("4", ["wind"], dead=1.2, wind=1.0, live=1.0, rain=0.5),
    _row("5", ["wind"], dead=0.9, wind=1.0),
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
# other numbers are [M].  Every variable case may act or not ("loads not
# acting", 2.4.1 [M]).  4a needs L and its roof load (with either absent it is
# weaker than 2 or 3a); 6a needs W and L or its roof load (D + 0.45W alone is
# weaker than 5).
ASCE7_ASD_CLAUSE = "ASCE 7-22 2.4.1"
ASCE7_ASD: tuple[Row, ...] = (
    _row("1", dead=1.0),
    _row("2", ["live"], dead=1.0, live=1.0),
    _row("3a", ["roof_live"], dead=1.0, roof_live=1.0),
    _row("3a", ["snow"], dead=1.0, snow=0.7),
    _row("3a", ["rain"], dead=1.0, rain=1.0),
    _row("4a", ["live", "roof_live"], dead=1.0, live=0.75, roof_live=0.75),
    _row("4a", ["live", "snow"], dead=1.0, live=0.75, snow=0.75 * 0.7),
    _row("4a", ["live", "rain"], dead=1.0, live=0.75, rain=0.75),
    _row("5", ["wind"], dead=1.0, wind=0.6),
    _row("6a", ["wind"], ["live", "roof_live"], dead=1.0, live=0.75, wind=0.75 * 0.6,
         roof_live=0.75),
    _row("6a", ["wind"], ["live", "snow"], dead=1.0, live=0.75, wind=0.75 * 0.6,
         snow=0.75 * 0.7),
    _row("6a", ["wind"], ["live", "rain"], dead=1.0, live=0.75, wind=0.75 * 0.6,
         rain=0.75),
    _row("7", ["wind"], dead=0.6, wind=0.6),
)


# --------------------------------------------------------------------------
# EN 1990
# --------------------------------------------------------------------------

#: EN 1990 Table A1.2(B), recommended values [C] (SCI "Steel Buildings in
#: Europe" Part 3, Table 3.1).  National Annexes differ (UK: xi = 0.925 [M]).
GAMMA_G_SUP = 1.35
GAMMA_G_INF = 1.0
GAMMA_Q = 1.5
XI = 0.85
XI_UK = 0.925

#: The keys of ``[combinations].factors`` and their recommended values.
FACTOR_KEYS: tuple[str, ...] = ("G_sup", "G_inf", "Q", "xi")
RECOMMENDED_FACTORS: dict[str, float] = {"G_sup": GAMMA_G_SUP, "G_inf": GAMMA_G_INF,
                                         "Q": GAMMA_Q, "xi": XI}

#: psi_0, psi_1, psi_2 of EN 1990 Table A1.1 (recommended values) [C]: imposed-load
#: categories A..H of EN 1991-1-1, snow and wind.  Snow is the row for sites at
#: or below 1000 m outside FI, IS, NO and SE (0.5, 0.2, 0; above 1000 m or in
#: those states 0.7, 0.5, 0.2: give psi0/psi1/psi2 on the case).  Rain has no row
#: in Table A1.1: ponding water on a roof is taken like the roof imposed load of
#: category H, all zero (this engine's choice), so rain may lead but never
#: accompanies.  National Annexes vary.
PSI: dict[str, tuple[float, float, float]] = {
    "A": (0.7, 0.5, 0.3),  # domestic, residential
    "B": (0.7, 0.5, 0.3),  # office
    "C": (0.7, 0.7, 0.6),  # congregation
    "D": (0.7, 0.7, 0.6),  # shopping
    "E": (1.0, 0.9, 0.8),  # storage
    "F": (0.7, 0.7, 0.6),  # traffic, vehicle weight <= 30 kN
    "G": (0.7, 0.5, 0.3),  # traffic, 30 kN < vehicle weight <= 160 kN
    "H": (0.0, 0.0, 0.0),  # roofs
    "snow": (0.5, 0.2, 0.0),  # sites at or below 1000 m a.s.l. (see above)
    "wind": (0.6, 0.2, 0.0),
    "rain": (0.0, 0.0, 0.0),  # no row in Table A1.1: this engine's choice (see above)
}
#: psi_0 alone, by category or kind (kept for readers of the former table).
PSI_0: dict[str, float] = {k: v[0] for k, v in PSI.items()}

#: The imposed-load categories of EN 1991-1-1 that Table A1.1 lists.
CATEGORIES: tuple[str, ...] = ("A", "B", "C", "D", "E", "F", "G", "H")
#: The category taken when a live or roof-live case names none.
DEFAULT_CATEGORY: dict[str, str] = {"live": "B", "roof_live": "H"}


def psi(case: LoadCase, which: int) -> float:
    """psi_0, psi_1 or psi_2 (``which`` = 0, 1, 2) of a variable load case, dimensionless:
    the case's own value where given (a national choice), else EN 1990 Table A1.1.

    Live and roof-live cases use their ``category`` ("A".."H"; by default B,
    office, for live and H, roofs, for roof live); snow, wind and rain use the
    kind's row.  A permanent action has no psi: ValueError.
    """
    own = (case.psi0, case.psi1, case.psi2)[which]
    if case.kind in PERMANENT_KINDS:
        raise ValueError(f"load case {case.name!r}: a permanent action has no psi_{which}")
    if own is not None:
        return own
    if case.kind in DEFAULT_CATEGORY:
        category = case.category if case.category is not None else DEFAULT_CATEGORY[case.kind]
        if category not in CATEGORIES:
            raise ValueError(
                f"load case {case.name!r}: unknown category {category!r} (expected A..H)"
            )
        return PSI[category][which]
    if case.kind not in PSI:
        raise ValueError(f"load case {case.name!r}: no psi_{which} for kind {case.kind!r}")
    return PSI[case.kind][which]


def psi0(case: LoadCase) -> float:
    """psi_0 of a variable load case (see :func:`psi`)."""
    return psi(case, 0)


def partial_factors(spec: CombinationSpec, rule: str | None = None) -> dict[str, float]:
    """gamma_G,sup, gamma_G,inf, gamma_Q and xi in force for an EN rule set: the
    recommended values of Table A1.2(B) (xi = 0.925 for ``en1990-6.10ab-uk``), each
    replaced by ``spec.factors`` where given.  ValueError for an unknown key."""
    out = dict(RECOMMENDED_FACTORS)
    if (rule or spec.strength) == "en1990-6.10ab-uk":
        out["xi"] = XI_UK
    for key, value in spec.factors:
        if key not in out:
            raise ValueError(f"combinations.factors: unknown key {key!r} "
                             f"(expected one of {', '.join(FACTOR_KEYS)})")
        out[key] = float(value)
    return out


# --------------------------------------------------------------------------
# Generation
# --------------------------------------------------------------------------


@dataclass(frozen=True, slots=True)
class _Generated:
    """One generated row before naming: factors and their derivation by case name."""

    factors: dict[str, float]
    optional: frozenset[str]
    source: str
    leading: str = ""
    why: tuple[tuple[str, str], ...] = ()


def _clean(factor: float) -> float:
    """The factor rounded to a fixed number of digits (1.5 * 0.7 -> 1.05)."""
    return round(factor, _FACTOR_DIGITS) + 0.0


def _format_factor(factor: float) -> str:
    """A factor as it leads a term of a combination name: nothing for 1."""
    return "" if factor == 1.0 else f"{factor:.10g}"


def _g(x: float) -> str:
    """A factor in a derivation text, to ten significant digits."""
    return f"{x:.10g}"


def combination_name(factors: Iterable[tuple[str, float]]) -> str:
    """Readable name from factors by case: "1.2D + 1.2SDL + 1.6L"; factor 1 is written "D"."""
    return " + ".join(f"{_format_factor(f)}{name}" for name, f in factors)


def _ordered(cases: tuple[LoadCase, ...], factors: Mapping[str, float]) -> Factors:
    """Factors in case declaration order, zero factors left out."""
    return tuple((c.name, factors[c.name]) for c in cases if factors.get(c.name, 0.0) != 0.0)


def _asce(cases: tuple[LoadCase, ...], table: tuple[Row, ...], clause: str,
          reduced_live: bool) -> list[_Generated]:
    """The rows of an ASCE 7-22 table that the cases' kinds call for, every case of a
    kind at the row's factor and every variable case optional (loads not acting);
    ``reduced_live`` takes 2.3.1 Exception 1 (0.5L in equations 3 and 4)."""
    present = {c.kind for c in cases}
    variable = frozenset(c.name for c in cases if c.kind not in PERMANENT_KINDS)
    out: list[_Generated] = []
    for row in table:
        if not row.needs <= present or (row.needs_one and not row.needs_one & present):
            continue
        by_kind = dict(row.terms)
        source = f"{clause} ({row.equation})"
        if (reduced_live and clause == ASCE7_LRFD_CLAUSE
                and row.equation in ASCE7_LRFD_EXCEPTION_1_EQUATIONS and "live" in by_kind):
            by_kind["live"] = ASCE7_LRFD_REDUCED_LIVE
            source += ", Exception 1"
        factors = {c.name: _clean(by_kind.get(c.kind, 0.0)) for c in cases}
        why = tuple((c.name, f"{_g(factors[c.name])} on {c.kind}")
                    for c in cases if factors[c.name])
        out.append(_Generated(factors, variable, source, why=why))
    return out


@dataclass(frozen=True, slots=True)
class EnRow:
    """One EN 1990 expression: the factor on the permanent actions and the variable terms.

    ``permanent`` names the factor on every permanent action: "sup" (gamma_G,sup),
    "xi sup" (xi gamma_G,sup, (6.10b)), "inf" (gamma_G,inf) or "one" (1.0, service).
    ``leading`` is the leading action's factor: "Q" (gamma_Q), "Q psi0" (gamma_Q psi_0,
    (6.10a)), "1", "psi1", or None for no leading action.  ``accompanying`` is the
    factor of every other variable action: "Q psi0", "psi0", "psi2", or "" (none: the
    permanent-only rows).
    """

    equation: str
    permanent: str
    leading: str | None
    accompanying: str


# EN 1990 6.4.3.2 (6.10): sum gamma_G Gk + gamma_Q,1 Qk,1 + sum gamma_Q,i psi_0,i Qk,i.
# Table A1.2(B): the whole permanent load at gamma_G,sup where unfavourable and at
# gamma_G,inf where favourable [C]; both are rows of their own, and the envelope
# takes the worse.  The permanent-only rows are the case of no variable action.
EN1990_CLAUSE = "EN 1990 6.4.3.2"
EN1990_610: tuple[EnRow, ...] = (
    EnRow("(6.10)", "sup", None, ""),
    EnRow("(6.10)", "inf", None, ""),
    EnRow("(6.10)", "sup", "Q", "Q psi0"),
    EnRow("(6.10)", "inf", "Q", "Q psi0"),
)
# (6.10a): (6.10) with the leading action also at psi_0; (6.10b): (6.10) with the
# unfavourable permanent term times xi (xi applies to gamma_G,sup only).  The less
# favourable of the two governs, which the envelope finds.
EN1990_610AB: tuple[EnRow, ...] = (
    EnRow("(6.10a)", "sup", None, ""),
    EnRow("(6.10a)", "inf", None, ""),
    EnRow("(6.10a)", "sup", "Q psi0", "Q psi0"),
    EnRow("(6.10a)", "inf", "Q psi0", "Q psi0"),
    EnRow("(6.10b)", "xi sup", "Q", "Q psi0"),
    EnRow("(6.10b)", "inf", "Q", "Q psi0"),
)
# EN 1990 6.5.3 (serviceability) [M for the layout, references 1.3]:
# (6.14b) characteristic G + Qk,1 + sum psi_0,i Qk,i; (6.15b) frequent
# G + psi_1,1 Qk,1 + sum psi_2,i Qk,i; (6.16b) quasi-permanent G + sum psi_2,i Qk,i.
EN1990_SLS_CLAUSE = "EN 1990 6.5.3"
EN1990_SERVICE: dict[str, tuple[EnRow, ...]] = {
    "characteristic": (EnRow("(6.14b)", "one", None, ""),
                       EnRow("(6.14b)", "one", "1", "psi0")),
    "frequent": (EnRow("(6.15b)", "one", None, ""),
                 EnRow("(6.15b)", "one", "psi1", "psi2")),
    "quasi-permanent": (EnRow("(6.16b)", "one", None, "psi2"),),
}


def _term(case: LoadCase, what: str, pf: Mapping[str, float]) -> tuple[float, str]:
    """A factor by its recipe ("Q psi0", "psi1", ...) and the text saying how it is made."""
    q = pf["Q"]
    if not what:
        return 0.0, ""
    if what == "Q":
        return q, f"gamma_Q {_g(q)}"
    if what == "1":
        return 1.0, "1.0"
    index = {"psi0": 0, "psi1": 1, "psi2": 2}
    if what == "Q psi0":
        p = psi(case, 0)
        return q * p, f"gamma_Q {_g(q)} x psi_0 {_g(p)}"
    p = psi(case, index[what])
    return p, f"psi_{index[what]} {_g(p)}"


def _permanent(what: str, pf: Mapping[str, float]) -> tuple[float, str]:
    """The factor on every permanent action of an :class:`EnRow` and how it is made."""
    if what == "sup":
        return pf["G_sup"], f"gamma_G,sup {_g(pf['G_sup'])}"
    if what == "xi sup":
        return pf["xi"] * pf["G_sup"], f"xi {_g(pf['xi'])} x gamma_G,sup {_g(pf['G_sup'])}"
    if what == "inf":
        return pf["G_inf"], f"gamma_G,inf {_g(pf['G_inf'])}"
    return 1.0, "1.0"


def _en1990(cases: tuple[LoadCase, ...], table: tuple[EnRow, ...], clause: str,
            pf: Mapping[str, float], tables: str) -> list[_Generated]:
    """The rows of an EN 1990 expression table: each row once per leading variable
    case (once with none where the row has no leading action), the permanent actions
    at the row's factor and the accompanying ones at theirs, optional (gamma_Q = 0
    where favourable, Table A1.2(B))."""
    permanent = [c for c in cases if c.kind in PERMANENT_KINDS]
    variable = [c for c in cases if c.kind not in PERMANENT_KINDS]
    out: list[_Generated] = []
    for row in table:
        source = f"{clause} {row.equation}, {tables}"
        g, g_why = _permanent(row.permanent, pf)
        leading = row.leading
        leads: list[LoadCase | None] = [None] if leading is None else list(variable)
        for lead in leads:
            factors: dict[str, float] = {}
            why: dict[str, str] = {}
            for c in permanent:
                factors[c.name], why[c.name] = _clean(g), g_why
            for c in variable:
                if c is lead and leading is not None:
                    f, text = _term(c, leading, pf)
                    text += " (leading)"
                else:
                    f, text = _term(c, row.accompanying, pf)
                factors[c.name], why[c.name] = _clean(f), text
            optional = frozenset(c.name for c in variable if c is not lead)
            out.append(_Generated(
                factors, optional, source, lead.name if lead is not None else "",
                tuple((c.name, f"{_g(factors[c.name])} = {why[c.name]}") for c in cases
                      if factors[c.name])))
    return out


def _generate(cases: tuple[LoadCase, ...], rule: str, spec: CombinationSpec
              ) -> list[_Generated]:
    """The generated rows of one rule set, before naming (none for ``"none"``).
    Settlement cases take no part here: :func:`_with_settlements` adds them to every
    row at their own factor (they are neither the rows' permanent nor their variable
    actions, and have no psi)."""
    cases = tuple(c for c in cases if c.kind != "settlement")
    if rule == "asce7-lrfd":
        return _asce(cases, ASCE7_LRFD, ASCE7_LRFD_CLAUSE, spec.reduced_companion_live)
    if rule == "asce7-asd":
        return _asce(cases, ASCE7_ASD, ASCE7_ASD_CLAUSE, False)
    if rule in EN_STRENGTH_SETS:
        table = EN1990_610 if rule == "en1990-6.10" else EN1990_610AB
        return _en1990(cases, table, EN1990_CLAUSE, partial_factors(spec, rule),
                       "Table A1.2(B), Table A1.1")
    if rule in EN1990_SERVICE:
        return _en1990(cases, EN1990_SERVICE[rule], EN1990_SLS_CLAUSE, RECOMMENDED_FACTORS,
                       "Table A1.1")
    return []  # "none"


def _unique(name: str, rule: str, taken: set[str]) -> str:
    """``name``, or with the rule set and then a number appended where it is taken."""
    if name not in taken:
        return name
    candidate = f"{name} ({rule})"
    number = 2
    while candidate in taken:
        candidate = f"{name} ({rule} {number})"
        number += 1
    return candidate


def _check(spec: CombinationSpec, cases: tuple[LoadCase, ...]) -> set[str]:
    """Validate the spec; returns the custom names."""
    if spec.strength not in STRENGTH_SETS:
        raise ValueError(
            f"combinations.strength: unknown rule set {spec.strength!r} "
            f"(expected one of {', '.join(STRENGTH_SETS)})"
        )
    for name in spec.service_sets:
        if name not in SERVICE_SETS:
            raise ValueError(
                f"combinations.service: unknown rule set {name!r} "
                f"(expected one of {', '.join(SERVICE_SETS)})"
            )
    partial_factors(spec)
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
    return custom_names


#: Factor on a support settlement (kind ``settlement``) in each generated row, by rule
#: set; it acts only where it makes the effect worse.  EN 1990:2002 Table A1.2(B)
#: NOTE 3: gamma_G,set = 1.20 for a linear elastic analysis (0 where favourable, as a
#: settlement is left out where it helps); ASCE 7-22 2.3.4 (self-straining effects):
#: a load factor of at least 1.0 (and 1.0 with the ASD set, 2.4.4, from memory); the
#: service sets at 1.0.
SETTLEMENT_FACTOR: dict[str, float] = {"asce7-lrfd": 1.0, "asce7-asd": 1.0,
                                       "en1990-6.10": 1.2, "en1990-6.10ab": 1.2,
                                       "en1990-6.10ab-uk": 1.2}
SETTLEMENT_SERVICE_FACTOR = 1.0
SETTLEMENT_WHY = {1.2: "gamma_G,set 1.20 (EN 1990 Table A1.2(B) note 3)",
                  1.0: "1.0 (ASCE 7-22 2.3.4 / 2.4.4; service 1.0)"}


def _with_settlements(gen: _Generated, cases: tuple[LoadCase, ...], rule: str,
                      set_kind: str) -> _Generated:
    """A generated row with every settlement case added at its factor, each acting
    only where unfavourable."""
    settling = [c.name for c in cases if c.kind == "settlement"]
    if not settling:
        return gen
    f = (SETTLEMENT_SERVICE_FACTOR if set_kind == "service"
         else SETTLEMENT_FACTOR.get(rule, 1.0))
    factors = dict(gen.factors)
    factors.update(dict.fromkeys(settling, f))
    why = (*gen.why, *((n, SETTLEMENT_WHY.get(f, f"{f:g}")) for n in settling))
    return dataclasses.replace(gen, factors=factors, optional=frozenset(gen.optional)
                               | frozenset(settling), why=why)


def build(cases: tuple[LoadCase, ...], spec: CombinationSpec) -> tuple[Combination, ...]:
    """Every combination of ``spec`` for ``cases``: strength first, then service.

    Within a rule set: its rows in table order, each variable case leading in turn
    for EN 1990; after the strength set, the custom strength combinations, and after
    the service sets (in the order given), the custom service ones.  Factors are in
    case declaration order with zeros left out; a generated row's ``optional`` names
    its variable cases that act only where unfavourable (those with a factor).  Rows
    of one rule set that end with the same factors and optional cases as an earlier
    one are dropped; custom combinations are kept as given.  Names are unique over
    the result: a custom name is never changed, and a generated name already taken
    gets its rule set appended ("D + L (characteristic)").  ValueError for a set
    name not in :data:`STRENGTH_SETS` or :data:`SERVICE_SETS`, an unknown partial
    factor key, a custom combination naming an unknown case, or two custom
    combinations of one name.

    Parameters
    ----------
    cases : tuple of LoadCase
        The beam's load cases, in declaration order (their kinds choose the rows).
    spec : CombinationSpec
        The ``[combinations]`` table: rule sets, partial factors, custom rows.

    Returns
    -------
    tuple of Combination
        Dimensionless factors by case name, each with the clause it comes from and
        its derivation; the enveloper turns them into coefficients over unit cases.
    """
    custom_names = _check(spec, cases)
    taken = set(custom_names)
    result: list[Combination] = []
    plan: tuple[tuple[CombinationSet, tuple[str, ...]], ...] = (
        ("strength", (spec.strength,) if spec.strength != "none" else ()),
        ("service", spec.service_sets),
    )
    for set_kind, rules in plan:
        for rule in rules:
            seen: set[tuple[Factors, frozenset[str]]] = set()
            for raw in _generate(cases, rule, spec):
                gen = _with_settlements(raw, cases, rule, set_kind)
                factors = _ordered(cases, gen.factors)
                optional = frozenset(n for n, _ in factors if n in gen.optional)
                if not factors or (factors, optional) in seen:
                    continue
                seen.add((factors, optional))
                name = _unique(combination_name(factors), rule, taken)
                taken.add(name)
                result.append(Combination(
                    name, set_kind, factors, gen.source, optional=optional, rule=rule,
                    leading=gen.leading, derivation="; ".join(f"{n}: {t}" for n, t in gen.why)))
        for combo in spec.custom:
            if combo.set != set_kind:
                continue
            result.append(Combination(combo.name, set_kind, _ordered(cases, combo.factor_map),
                                      combo.source, rule="custom"))
    return tuple(result)


#: Where the deflection-by-kind rows come from.
ALONE_SOURCE = ("one variable action alone at 1.0 (IBC Table 1604.3: L, or for roofs "
                "Lr, S or W, from memory)")


def variable_alone(cases: tuple[LoadCase, ...]) -> tuple[Combination, ...]:
    """Each variable kind alone at 1.0 (every case of that kind, each acting only where
    it deflects the beam more), in the order of :data:`VARIABLE_KINDS`: the rows of
    the deflection check by kind (``deflection_live``).  Empty with no variable case."""
    out = []
    for kind in VARIABLE_KINDS:
        names = tuple(c.name for c in cases if c.kind == kind)
        if names:
            factors = tuple((n, 1.0) for n in names)
            out.append(Combination(combination_name(factors), "service", factors,
                                   ALONE_SOURCE, optional=frozenset(names), rule="alone"))
    return tuple(out)
