"""Every design check of sizing.parquet as one row: section, check, clause, value, result.

Read generically from the table's columns: each ``utilisation_<what>`` column is a
check (so checks added to the sizing table appear here unchanged); concrete flexure and
shear, which the table states as required quantities, are checks as well, failing when
the row's ``status`` names them, and so is moment redistribution where it is used (the
fraction used over the fraction allowed).  A row whose status fails for a reason no check names
gets a check of its own, so a failure is never hidden; a check that cannot be done
(no value) says so instead of passing.
"""

from __future__ import annotations

import math
import re
from typing import Any

from envelope.report.collect import Table

#: (code, check) -> the clause the check comes from.
CLAUSES: dict[str, dict[str, str]] = {
    "aci318-19": {
        "flexure": "ACI 318-19 22.2, 9.5.1.1; tension-controlled limit 9.3.3.1; "
                   "minimum 9.6.1.2",
        "shear": "ACI 318-19 22.5, 9.5.1.1; section limit 22.5.1.2; stirrups 9.6.3",
        "deflection": "ACI 318-19 24.2.2, limits span/N from the case file",
        "redistribution": "ACI 318-19 6.6.5: at most 1000 eps_t percent and 20 percent, "
                          "none below eps_t = 0.0075",
    },
    "en1992-1-1": {
        "flexure": "EN 1992-1-1 6.1 (K' limit), 9.2.1.1",
        "shear": "EN 1992-1-1 6.2.2, 6.2.3; links 9.2.2",
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
STATUS_WORDS = {"flexure": ("singly reinforced", "0.04 Ac", "tension steel"),
                "shear": ("for shear",), "deflection": ("deflection",),
                "bearing": ("bearing", "J10", "crippling", "web local yielding"),
                "redistribution": ("moment redistribution",)}
OTHER_CLAUSE = "see the note and status of sizing.parquet"
#: A clause a failing status cites in brackets, e.g. "(ACI 318-19 9.9.1.1(b))": the
#: clause of a failure no check names.
CITED = re.compile(r"\(((?:ACI 318-19|EN 1992-1-1|AISC 360-22) [^;]*?)\)(?:[:;,.]|$| )")


def _missing(v: Any) -> bool:
    return v is None or (isinstance(v, float) and math.isnan(v))


def _result(util: Any, failed_by_status: bool) -> str:
    if failed_by_status:
        return "fail"
    if _missing(util):
        return "pass"
    return "pass" if util <= 1.0 + 1e-9 else "fail"


def checks(sizing: Table | None, document: dict[str, Any] | None,
           code: str = "") -> list[dict[str, str]]:
    """One dict per check (``span``, ``section``, ``check``, ``clause``, ``value``,
    ``result`` ("pass", "fail" or "not checked") and ``detail``); empty without sizing.
    ``code`` is the design code when the document is not at hand."""
    if sizing is None:
        return []
    design = (document or {}).get("design", {})
    code = str(design.get("code", "")) or code
    clauses = CLAUSES.get(code, {})
    cols = sizing.columns
    out: list[dict[str, str]] = []
    util_cols = [c for c in cols if c.startswith("utilisation_")]
    concrete = "as_required" in cols
    for row in sizing.rows:
        r = dict(zip(cols, row, strict=True))
        status = str(r.get("status") or "ok")
        failing = [] if status == "ok" else [s.strip() for s in status.split(";")]
        named: set[int] = set()

        def add(check: str, value: Any, r: dict[str, Any] = r,
                failing: list[str] = failing, named: set[int] = named) -> None:
            words = STATUS_WORDS.get(check, (check.replace("_", " "),))
            mine = [i for i, s in enumerate(failing) if any(w in s for w in words)]
            named.update(mine)
            result = _result(value, bool(mine))
            if _missing(value) and not mine and check == "flexure" and \
                    _missing(r.get("as_required")) and r.get("moment_design"):
                result = "not checked"
            out.append({"span": str(r.get("span", "")), "section": str(r.get("section", "")),
                        "check": check.replace("_", " "),
                        "clause": clauses.get(check, OTHER_CLAUSE),
                        "value": "-" if _missing(value) else f"{value:.3f}",
                        "result": result,
                        "detail": "; ".join(failing[i] for i in mine)})

        if concrete:
            if not _missing(r.get("moment_design")) and r.get("moment_design"):
                ratio = None
                if not _missing(r.get("as_required")) and r.get("as_max"):
                    ratio = r["as_required"] / r["as_max"]
                add("flexure", ratio)
            if not _missing(r.get("shear_design")):
                add("shear", None)
            used = r.get("redistribution")
            if not _missing(used) and used:
                allowed = r.get("redistribution_allowed")
                add("redistribution", None if _missing(allowed) or not allowed
                    else used / allowed)
        for c in util_cols:
            if not _missing(r.get(c)):
                add(c.removeprefix("utilisation_"), r[c])
        for i, text in enumerate(failing):
            if i not in named:
                cited = CITED.search(text)
                out.append({"span": str(r.get("span", "")),
                            "section": str(r.get("section", "")), "check": "other",
                            "clause": cited.group(1) if cited else OTHER_CLAUSE,
                            "value": "-", "result": "fail", "detail": text})
    return out


def overall(rows: list[dict[str, str]]) -> tuple[str, float | None]:
    """The beam's status ("ok", "fails", or "not sized" without checks) and its largest
    utilisation (None when no check has a value)."""
    if not rows:
        return "not sized", None
    values = [float(r["value"]) for r in rows if r["value"] != "-"]
    worst = max(values) if values else None
    if any(r["result"] == "fail" for r in rows):
        return "fails", worst
    if any(r["result"] == "not checked" for r in rows):
        return "incomplete", worst
    return "ok", worst
