"""The concrete design keys of ``[design]`` beyond the section: bar set, aggregate, the
sustained load and its duration, crack width and the deflection rows to check.

Values stay in section units (mm / in) as the rest of ``[design]``; fractions and the
creep coefficient are plain numbers.  Defaults are filled in by
:mod:`envelope.sizing.detailing`, so a file that gives none of these keys reads as
before.
"""

from __future__ import annotations

import dataclasses
from typing import Any

from envelope.casefile.reader import Reader, join
from envelope.design import DeflectionLimits, LongTerm

#: Concrete keys read here (documented in docs/case-format.md).
CONCRETE_DETAIL_KEYS = ("bars", "aggregate", "long_term", "crack_width", "member",
                        "nonstructural")
#: Keys of ``long_term``.
LONG_TERM_KEYS = ("sustained", "months", "creep", "shrinkage")
MEMBERS = ("floor", "roof")
#: Immediate live-load limit of a roof, span / this (ACI 318-19 Table 24.2.2).
ROOF_LIVE = 180.0
NONSTRUCTURAL = ("damage-likely", "damage-unlikely", "none")
#: Crack widths (mm) of EN 1992-1-1 Tables 7.2N and 7.3N.
CRACK_WIDTHS = (0.2, 0.3, 0.4)
#: Longest load duration read, months (Table 24.2.4.1.3 ends at 5 years).
MAX_MONTHS = 1200.0
#: Largest creep coefficient read (EN 1992-1-1 Figure 3.1 stays below about 6).
MAX_CREEP = 10.0
#: Largest free shrinkage strain read (EN 1992-1-1 Tables 3.2 and 3.3 stay below about
#: 0.001 in total).
MAX_SHRINKAGE = 0.003


def concrete_detailing(r: Reader, table: dict[str, Any], out: dict[str, Any],
                       cases: dict[str, Any]) -> None:
    """Read the keys of :data:`CONCRETE_DETAIL_KEYS` from ``table`` into ``out``."""
    from envelope.casefile.design import design_number
    from envelope.sizing.bars import bar_set  # here: the sizing package is large

    key = "design"
    if "bars" in table:
        value = table["bars"]
        bkey = join(key, "bars")
        if not isinstance(value, str | list):
            r.fail(bkey, "expected \"US\", \"metric\" or a list of bar sizes")
        try:
            bar_set(value, r.system.name)
        except ValueError as exc:
            r.fail(bkey, str(exc))
        out["bars"] = value if isinstance(value, str) else tuple(value)
    if "aggregate" in table:
        out["aggregate"] = design_number(r, table["aggregate"], join(key, "aggregate"),
                                         "length")
    if "member" in table:
        out["member"] = r.choice(table["member"], join(key, "member"), MEMBERS,
                                 "member kind")
        given = table.get("deflection_limits")
        if out["member"] == "roof" and not (isinstance(given, dict) and "live" in given):
            # ACI 318-19 Table 24.2.2 (and IBC Table 1604.3): a roof's live limit
            limits = out.get("deflection_limits", DeflectionLimits())
            out["deflection_limits"] = dataclasses.replace(limits, live=ROOF_LIVE)
    if "nonstructural" in table:
        out["nonstructural"] = r.choice(table["nonstructural"], join(key, "nonstructural"),
                                        NONSTRUCTURAL, "nonstructural elements choice")
    if "crack_width" in table:
        ckey = join(key, "crack_width")
        if out["code"] != "en1992-1-1":
            r.fail(ckey, "crack_width applies to en1992-1-1 design (ACI 318-19 24.3.2 "
                         "limits the spacing instead)")
        width = r.plain_number(table["crack_width"], ckey)
        if width not in CRACK_WIDTHS:
            r.fail(ckey, f"must be one of {', '.join(f'{w:g}' for w in CRACK_WIDTHS)} mm "
                         f"(EN 1992-1-1 Tables 7.2N and 7.3N), got {width:g}")
        out["crack_width"] = width
    if "long_term" in table:
        out["long_term"] = _long_term(r, table["long_term"], join(key, "long_term"), cases)


def _long_term(r: Reader, value: object, key: str, cases: dict[str, Any]) -> LongTerm:
    lt = r.table(value, key)
    r.known_keys(lt, key, LONG_TERM_KEYS)
    out: dict[str, Any] = {}
    if "sustained" in lt:
        skey = join(key, "sustained")
        given = r.table(lt["sustained"], skey)
        fractions = {}
        for name, frac in given.items():
            fkey = join(skey, name)
            if name not in cases:
                r.fail(fkey, f"no load case named {name!r} in [cases]")
            f = r.plain_number(frac, fkey)
            if not 0.0 <= f <= 1.0:
                r.fail(fkey, f"a sustained fraction is from 0 to 1, got {f:g}")
            fractions[name] = f
        out["sustained"] = tuple(fractions.items())
    if "months" in lt:
        mkey = join(key, "months")
        months = r.plain_number(lt["months"], mkey)
        if not 0.0 < months <= MAX_MONTHS:
            r.fail(mkey, f"load duration in months, greater than 0 and at most "
                         f"{MAX_MONTHS:g}, got {months:g}")
        out["months"] = months
    if "creep" in lt:
        ckey = join(key, "creep")
        creep = r.plain_number(lt["creep"], ckey)
        if not 0.0 <= creep <= MAX_CREEP:
            r.fail(ckey, f"creep coefficient from 0 to {MAX_CREEP:g}, got {creep:g}")
        out["creep"] = creep
    if "shrinkage" in lt:
        skey = join(key, "shrinkage")
        shrink = r.plain_number(lt["shrinkage"], skey)
        if not 0.0 <= shrink <= MAX_SHRINKAGE:
            r.fail(skey, f"free shrinkage strain eps_cs from 0 to {MAX_SHRINKAGE:g} (e.g. "
                         f"0.0004), got {shrink:g}")
        out["shrinkage"] = shrink
    return LongTerm(**out)
