"""The moment redistribution keys of a concrete ``[design]``: ``redistribution`` (a
fraction, ``"max"``, or one of those per support) and ``steel_class`` (EN 1992-1-1).

A fraction above the code's ceiling (ACI 318-19 6.6.5: 20 %; EN 1992-1-1 5.5(4):
1 - k5 or 1 - k6) is refused here; whether the section designed allows it is checked
after sizing (:mod:`envelope.sizing.redistributed`).  A fraction given for one support
where the beam cannot redistribute moment (an end support, a cantilever's, one with a
hinge beside it; :func:`envelope.redistribution.excluded_at`) is refused once the
supports are known (:func:`check_supports`).
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

from envelope.casefile.reader import Reader, item, join
from envelope.model import Span, Support
from envelope.redistribution import (
    ACI_LARGEST,
    EN_K5,
    EN_K6,
    STEEL_CLASSES,
    excluded_at,
)

#: Concrete keys read here (documented in docs/case-format.md).
REDISTRIBUTION_KEYS = ("redistribution", "steel_class")


def read(r: Reader, table: dict[str, Any], out: dict[str, Any], n_supports: int) -> None:
    """Read :data:`REDISTRIBUTION_KEYS` from a concrete ``[design]`` into ``out`` (which
    already holds ``code``)."""
    key = "design"
    code = out["code"]
    if "steel_class" in table:
        skey = join(key, "steel_class")
        if code != "en1992-1-1":
            r.fail(skey, "steel_class applies to en1992-1-1 design (the k5 / k6 limit of "
                         "5.5(4)); ACI 318-19 6.6.5 limits redistribution by eps_t")
        out["steel_class"] = r.choice(table["steel_class"], skey, STEEL_CLASSES,
                                      "reinforcement ductility class")
    if "redistribution" not in table:
        return
    rkey = join(key, "redistribution")
    ceiling = ACI_LARGEST if code == "aci318-19" else \
        1.0 - (EN_K6 if out.get("steel_class") == "A" else EN_K5)
    why = ("ACI 318-19 6.6.5: at most 20 percent" if code == "aci318-19" else
           f"EN 1992-1-1 5.5(4): delta >= {1.0 - ceiling:g} for class "
           f"{out.get('steel_class', 'B')} steel")
    value = table["redistribution"]
    if isinstance(value, list):
        if len(value) != n_supports:
            r.fail(rkey, f"give one value per support ({n_supports}), got {len(value)}")
        out["redistribution"] = tuple(_one(r, v, item(rkey, i), ceiling, why)
                                      for i, v in enumerate(value))
    else:
        out["redistribution"] = _one(r, value, rkey, ceiling, why)


def _one(r: Reader, value: object, key: str, ceiling: float, why: str) -> float | str:
    if isinstance(value, str):
        if value != "max":
            r.fail(key, f"expected a fraction such as 0.10 or \"max\", got {value!r}")
        return value
    fraction = r.plain_number(value, key)
    if not 0.0 <= fraction <= ceiling:
        r.fail(key, f"a fraction of the elastic moment from 0 to {ceiling:g} ({why}), "
                    f"got {fraction:g}")
    return fraction


def check_supports(r: Reader, design: object, spans: Sequence[Span],
                   supports: Sequence[Support]) -> None:
    """Refuse a fraction given for one support where moment cannot be redistributed."""
    given = getattr(design, "redistribution", None)
    if not isinstance(given, tuple):
        return
    why = excluded_at(spans, supports)
    for j, v in enumerate(given):
        if why[j] and v != 0:
            r.fail(item("design.redistribution", j),
                   f"support {j + 1} cannot redistribute moment: {why[j]}; give 0 there")
