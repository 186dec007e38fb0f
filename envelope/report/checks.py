"""Every design check of sizing.parquet as one row: section, check, clause, demand,
capacity, their ratio and the result.

Read generically from the table's columns: each ``utilisation_<what>`` column is a
check (so checks added to the sizing table appear here unchanged), its demand and
capacity the pair of columns (:data:`PAIRS`) whose quotient is that utilisation (none
shown where no pair gives it).  Concrete members, which the table states as required
quantities, are checked as well: flexure (the design moment over the design strength of
the bars provided, ``phiMn_provided`` / ``MRd_provided``; of ``as_design`` in a table
without them), the maximum tension steel, the bars provided against ``as_design``,
crack control (bar spacing against its limit), shear (the design shear over the design
strength with the stirrups provided, ``phiVn`` / ``VRd``; ACI rows that need no
stirrups over ``phiVc``) and moment redistribution where it is used (the fraction used
over the fraction allowed).  A check fails when the row's ``status``
names it; a row whose status fails for a reason no check names gets a check of its own,
so a failure is never hidden; a check that cannot be done (no value, or a status saying
"not checked") says so instead of passing.
"""

from __future__ import annotations

import math
import re
from typing import Any, TypeGuard

from envelope.report.collect import Table, decimals, fmt

#: (code, check) -> the clause the check comes from.
CLAUSES: dict[str, dict[str, str]] = {
    "aci318-19": {
        "flexure": "ACI 318-19 22.2, 21.2.2, 9.5.1.1 (phiMn of the bars provided, "
                   "phiMn_provided; of as_design where no bars are tabulated); minimum "
                   "9.6.1.2",
        "maximum steel": "ACI 318-19 9.3.3.1, Table 21.2.2 (tension-controlled limit)",
        "bars provided": "ACI 318-19 9.5.1.1 (as_provided >= as_design)",
        "crack control": "ACI 318-19 24.3.2 (bar spacing)",
        "shear": "ACI 318-19 22.5.1.1 (phiVn = phi (Vc + Vs) of the stirrups provided; "
                 "phiVc where none are needed), 22.5.8.5.3 (Vs = Av fyt d / s), 22.5.1.2 "
                 "(Vs at most 8 sqrt(f'c) bw d, SI 0.66 sqrt(f'c) bw d); stirrups 9.6.3",
        "deflection": "ACI 318-19 24.2.2, limits span/N from the case file",
        "redistribution": "ACI 318-19 6.6.5: at most 1000 eps_t percent and 20 percent, "
                          "none below eps_t = 0.0075",
    },
    "en1992-1-1": {
        "flexure": "EN 1992-1-1:2004 6.1 (MRd of the bars provided, MRd_provided; of "
                   "as_design where no bars are tabulated; K' limit), 9.2.1.1",
        "maximum steel": "EN 1992-1-1 9.2.1.1(3) (0.04 Ac)",
        "bars provided": "EN 1992-1-1 6.1 (as_provided >= as_design)",
        "crack control": "EN 1992-1-1 7.3.3, Table 7.3N (bar spacing)",
        "shear": "EN 1992-1-1:2004 6.2.3 (VRd of the links provided: the lesser of "
                 "VRd,s (6.8) and VRd,max (6.9)), 6.2.2; links 9.2.2",
        "deflection": "EN 1992-1-1 7.4.1, limits span/N from the case file",
        "redistribution": "EN 1992-1-1 5.5(4): delta >= k1 + k2 xu/d and k5 (k6), "
                          "adjacent spans 0.5 to 2",
    },
    "aisc360-22": {
        "moment": "AISC 360-22 F2.1, F2.2 (yielding, lateral-torsional buckling; Cb by "
                  "F1-1), F3 (flange local buckling)",
        "shear": "AISC 360-22 G2.1",
        "bearing": "AISC 360-22 J10.2 (web local yielding), J10.3 (web crippling)",
        "deflection": "AISC 360-22 L3, limits span/N from the case file",
        "vibration": "AISC Design Guide 11, walking excitation",
    },
}
#: Words of a failing ``status`` that belong to each check.
STATUS_WORDS = {"flexure": ("singly reinforced", "section too small: ",
                             "short of the design moment"),
                "maximum steel": ("exceeds 0.04 Ac",),
                "bars provided": ("no arrangement of the bar set",),
                "crack control": ("crack control", "bar spacing"),
                "shear": ("for shear", "stirrup"), "deflection": ("deflection",),
                "bearing": ("bearing", "J10", "crippling", "web local yielding"),
                "redistribution": ("moment redistribution",)}
#: Words of a status saying a check could not be done.
NOT_DONE = ("not checked", "not computed")
#: check -> candidate (demand, capacity) columns of sizing.parquet, in order: the first
#: pair whose quotient is the check's utilisation is shown beside it.
PAIRS: dict[str, tuple[tuple[str, str], ...]] = {
    "moment": (("moment_segment", "phi_mn"), ("moment_design", "phi_mn"),
               ("moment_design", "phiMn")),
    "shear": (("shear_design", "phiVn"),),
    "bearing": (("bearing_force", "phi_rn"),),
    "deflection": (("deflection_immediate_live", "deflection_immediate_live_allowed"),
                   ("deflection_long_term", "deflection_long_term_allowed"),
                   ("deflection_incremental", "deflection_incremental_allowed"),
                   ("deflection_live", "deflection_live_allowed"),
                   ("deflection_total", "deflection_total_allowed"),
                   ("deflection_immediate_live", "deflection_live_allowed"),
                   ("deflection_incremental", "deflection_total_allowed"),
                   ("deflection_long_term", "deflection_total_allowed")),
}
#: Relative tolerance within which a pair's quotient is taken as the utilisation.
PAIR_TOLERANCE = 1e-4
OTHER_CLAUSE = "see the note and status of sizing.parquet"
#: A clause a failing status cites in brackets, e.g. "(ACI 318-19 9.9.1.1(b))": the
#: clause of a failure no check names.
CITED = re.compile(r"\(((?:ACI 318-19|EN 1992-1-1|AISC 360-22) [^;]*?)\)(?:[:;,.]|$| )")


#: How a failure's own advice goes on after "; " (sizing joins failures with "; " too):
#: "...by 38.6%; widen or deepen the section", "...over its limit; needs Ix >= ...".
CONTINUES = ("deepen ", "widen ", "needs ")


def failures(status: str) -> list[str]:
    """The failures of a ``status`` (``ok``: none), each whole: a part after "; " that
    goes on with the failure before it (its advice, or inside its open bracket) is kept
    with it."""
    if status == "ok" or not status.strip():
        return []
    out: list[str] = []
    for part in (p.strip() for p in status.split("; ")):
        if out and (out[-1].count("(") > out[-1].count(")") or part.startswith(CONTINUES)):
            out[-1] += "; " + part
        elif part:
            out.append(part)
    return out


def _missing(v: Any) -> bool:
    return v is None or (isinstance(v, float) and math.isnan(v))


def _number(v: Any) -> TypeGuard[float]:
    return isinstance(v, int | float) and not isinstance(v, bool) and math.isfinite(v)


def _result(util: Any, failed_by_status: bool) -> str:
    if failed_by_status:
        return "fail"
    if _missing(util):
        return "pass"
    return "pass" if util <= 1.0 + 1e-9 else "fail"


def _pair(check: str, r: dict[str, Any], util: float) -> tuple[str, str] | None:
    """The (demand, capacity) columns of ``r`` whose quotient is ``util``."""
    for demand, capacity in PAIRS.get(check, ()):
        d, c = r.get(demand), r.get(capacity)
        if _number(d) and _number(c) and c > 0.0 and \
                math.isclose(abs(d) / c, util, rel_tol=PAIR_TOLERANCE, abs_tol=1e-9):
            return demand, capacity
    return None


def checks(sizing: Table | None, document: dict[str, Any] | None,
           code: str = "") -> list[dict[str, str]]:
    """One dict per check (``span``, ``section``, ``check``, ``clause``, ``demand``,
    ``capacity`` and their ``unit``, ``value`` (the ratio), ``result`` ("pass", "fail"
    or "not checked") and ``detail``); empty without sizing.  ``code`` is the design
    code when the document is not at hand."""
    if sizing is None:
        return []
    design = (document or {}).get("design", {})
    code = str(design.get("code", "")) or code
    clauses = CLAUSES.get(code, {})
    cols = sizing.columns
    # each column's display decimals, as the sizing table shows it
    digits = {c: decimals(sizing.column(c)) for c in cols}
    out: list[dict[str, str]] = []
    util_cols = [c for c in cols if c.startswith("utilisation_")]
    concrete = "as_required" in cols
    strength = "phiMn" if "phiMn" in cols else "MRd"
    # the strength of the bars provided where the table has it (results written before
    # it was tabulated: the strength of as_design)
    if f"{strength}_provided" in cols:
        strength = f"{strength}_provided"
    shear_strength = "phiVn" if "phiVn" in cols else "VRd" if "VRd" in cols else None
    for row in sizing.rows:
        r = dict(zip(cols, row, strict=True))
        status = str(r.get("status") or "ok")
        failing = failures(status)
        named: set[int] = set()

        def shown(name: str | None, r: dict[str, Any] = r) -> str:
            if name is None or not _number(r.get(name)):
                return "-"
            return fmt(abs(r[name]), digits[name])

        def add(check: str, value: Any, pair: tuple[str, str | None] | None = None,
                detail: str = "", r: dict[str, Any] = r, failing: list[str] = failing,
                named: set[int] = named, blank_passes: bool = False) -> None:
            words = STATUS_WORDS.get(check, (check.replace("_", " "),))
            mine = [i for i, s in enumerate(failing) if any(w in s for w in words)]
            named.update(mine)
            not_done = bool(mine) and all(any(w in failing[i] for w in NOT_DONE)
                                          for i in mine)
            result = "not checked" if not_done else _result(value, bool(mine))
            if _missing(value) and not mine and not blank_passes:
                result = "not checked"
            demand, capacity = pair if pair else (None, None)
            unit = sizing.units.get(demand, "") if demand else ""
            texts = [failing[i] for i in mine] + ([detail] if detail else [])
            out.append({"span": str(r.get("span", "")), "section": str(r.get("section", "")),
                        "check": check.replace("_", " "),
                        "clause": clauses.get(check, OTHER_CLAUSE),
                        "demand": shown(demand), "capacity": shown(capacity),
                        "unit": unit if demand and _number(r.get(demand)) else "",
                        "value": "-" if _missing(value) else f"{value:.3f}",
                        "result": result, "detail": "; ".join(texts)})

        if concrete:
            moment = r.get("moment_design")
            if not _missing(moment) and moment:
                cap = r.get(strength)
                ratio = abs(moment) / cap if _number(cap) and cap > 0.0 and \
                    not _missing(r.get("as_required")) else None
                said = ""
                if strength.endswith("_provided"):  # name what the strength is of
                    said = f"bars {r['bars']}" if r.get("bars") else \
                        "no bars provided: no strength to check"
                    if r.get("bars_compression"):
                        said += f", compression bars {r['bars_compression']}"
                add("flexure", ratio, ("moment_design", strength) if ratio is not None
                    else None, said)
                if _number(r.get("as_design")) and _number(r.get("as_max")) and \
                        r["as_max"] > 0.0:
                    add("maximum steel", r["as_design"] / r["as_max"],
                        ("as_design", "as_max"))
                if _number(r.get("as_design")) and r["as_design"] > 0.0 and \
                        "as_provided" in cols:
                    prov = r.get("as_provided")
                    add("bars provided", r["as_design"] / prov if _number(prov) and prov
                        else None, ("as_design", "as_provided"),
                        f"bars {r.get('bars')}" if r.get("bars") else "")
            spacing, limit = r.get("bar_spacing"), r.get("bar_spacing_max")
            if _number(spacing) and _number(limit) and limit > 0.0:
                add("crack control", spacing / limit, ("bar_spacing", "bar_spacing_max"))
            if not _missing(r.get("shear_design")):
                need = r.get("av_over_s_required")
                words = []
                if _number(need):
                    words.append(f"Av/s required {shown('av_over_s_required')} "
                                 f"{sizing.units.get('av_over_s_required', '')}".rstrip())
                if r.get("stirrups"):
                    words.append(f"stirrups {r['stirrups']}")
                # the strength with the stirrups provided; an ACI row that needs none
                # against phi Vc (Table 22.5.5.1, 9.6.3.1)
                cap_col = shear_strength if shear_strength and \
                    _number(r.get(shear_strength)) else None
                if cap_col is None and not r.get("stirrups") and need == 0.0 and \
                        _number(r.get("phiVc")):
                    cap_col = "phiVc"
                if cap_col is None:
                    words.append("the design shear strength with stirrups is not tabulated")
                cap_v = r.get(cap_col) if cap_col else None
                ratio_v = abs(r["shear_design"]) / cap_v if _number(cap_v) and cap_v > 0.0 \
                    and _number(r.get("shear_design")) else None
                add("shear", ratio_v, ("shear_design", cap_col), ", ".join(words),
                    blank_passes=_number(need))
            used = r.get("redistribution")
            if not _missing(used) and used:
                allowed = r.get("redistribution_allowed")
                add("redistribution", None if _missing(allowed) or not allowed
                    else used / allowed, ("redistribution", "redistribution_allowed"))
        for c in util_cols:
            if not _missing(r.get(c)):
                check = c.removeprefix("utilisation_")
                pair = _pair(check, r, float(r[c]))
                detail = f"{pair[0]} / {pair[1]}" if pair else \
                    "the demand and limit of this ratio are not tabulated"
                if pair and pair[0] == "moment_segment" and r.get("segment"):
                    detail += f" of the governing segment, {r['segment']}"
                add(check, r[c], pair, detail)
        for i, text in enumerate(failing):
            if i not in named:
                cited = CITED.search(text)
                out.append({"span": str(r.get("span", "")),
                            "section": str(r.get("section", "")), "check": "other",
                            "clause": cited.group(1) if cited else OTHER_CLAUSE,
                            "demand": "-", "capacity": "-", "unit": "", "value": "-",
                            "result": "not checked" if any(w in text for w in NOT_DONE)
                            else "fail", "detail": text})
    return out


def overall(rows: list[dict[str, str]]) -> tuple[str, float | None]:
    """The beam's status ("ok", "fails", "incomplete" where a check could not be done,
    or "not sized" without checks) and its largest utilisation (None when no check has
    a value)."""
    if not rows:
        return "not sized", None
    values = [float(r["value"]) for r in rows if r["value"] != "-"]
    worst = max(values) if values else None
    if any(r["result"] == "fail" for r in rows):
        return "fails", worst
    if any(r["result"] == "not checked" for r in rows):
        return "incomplete", worst
    return "ok", worst
