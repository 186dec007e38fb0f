"""The unit of every result column, by name, and conversion between the two systems.

The Parquet files carry ``envelope:units`` (quantity -> unit) in their file metadata;
readers such as pandas, polars and spreadsheets drop that, so each numeric column also
carries its own unit in its field metadata (key ``unit``).  The unit follows from the
column's name: this module is the one place that says which quantity a column holds.
Sizing columns name their own units (``envelope:sizing_units``).

Pure Python (no pyarrow): used by the result writer, the exports and the reports.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping

# Plain string tests rather than regular expressions: compiling seven patterns cost
# about 3 ms of every run's start-up (tests/test_columns.py keeps the patterns as the
# reference).

#: Columns holding text, never a quantity (and every column ending in these).
_TEXT = frozenset(("beam", "side", "type", "set", "combination", "loaded", "factors",
                   "source", "section", "steel_section", "note", "status", "system",
                   "bars", "mark"))
_TEXT_ENDS = ("_combo", "_loaded")

#: (exact names, name prefixes, quantity key of ``UnitSystem.labels``), first match wins.
_RULES: tuple[tuple[frozenset[str], tuple[str, ...], str], ...] = (
    (frozenset(("x", "x_span", "length", "moment_pos_x", "start", "end", "lb")), (),
     "length"),
    (frozenset(("span_over_deflection", "phi", "eps_t", "beta1", "cb", "live_reduction",
                "redistribution", "redistribution_allowed")), ("utilisation_",),
     "dimensionless"),
    (frozenset(("deflection",)), ("deflection_", "service_deflection"), "deflection"),
    (frozenset(("moment",)), ("moment_", "support_moment_"), "moment"),
    (frozenset(("shear",)), ("shear_", "reaction_", "service_reaction_", "unfactored_"),
     "force"),
    (frozenset(("rotation",)), (), "rotation"),
)


def quantity(name: str) -> str | None:
    """The quantity a result column holds (a key of ``UnitSystem.labels``, or
    ``"dimensionless"``); None for text and for columns whose unit is not known here."""
    if name in _TEXT or name.endswith(_TEXT_ENDS):
        return None
    for names, prefixes, q in _RULES:
        if name in names or (prefixes and name.startswith(prefixes)):
            return q
    return None


def column_units(names: Iterable[str], labels: Mapping[str, str],
                 own: Mapping[str, str] | None = None) -> dict[str, str]:
    """Unit text of each column of ``names`` that has one: ``own`` first (the sizing
    table's units), then the column's quantity in ``labels`` (``envelope:units``).
    Dimensionless columns get ``"1"``."""
    out: dict[str, str] = {}
    own = own or {}
    for name in names:
        if name in own:
            out[name] = own[name]
            continue
        q = quantity(name)
        if q == "dimensionless":
            out[name] = "1"
        elif q is not None and q in labels:
            out[name] = labels[q]
    return out


#: SI output unit -> (US output unit, SI value of one US unit), exact by definition
#: (1 ft = 0.3048 m, 1 lbf = 4.4482216152605 N, 1 in = 25.4 mm).
_LBF = 4.4482216152605e-3  # kN
_FT = 0.3048  # m
_IN = 25.4  # mm
_PAIRS: dict[str, tuple[str, float]] = {
    "m": ("ft", _FT),
    "kN": ("kip", 1000.0 * _LBF),
    "kN*m": ("kip*ft", 1000.0 * _LBF * _FT),
    "kN/m": ("kip/ft", 1000.0 * _LBF / _FT),
    "mm": ("in", _IN),
    "mm2": ("in2", _IN ** 2),
    "mm3": ("in3", _IN ** 3),
    "mm4": ("in4", _IN ** 4),
    "mm2/mm": ("in2/in", _IN),
    "MPa": ("ksi", 1000.0 * _LBF / (_IN ** 2) * 1000.0),
    "rad": ("rad", 1.0),
    "1": ("1", 1.0),
    "Hz": ("Hz", 1.0),
}
#: unit -> (unit of the other system, multiplier from the first to the second)
SI_TO_US: dict[str, tuple[str, float]] = {si: (us, 1.0 / f) for si, (us, f) in _PAIRS.items()}
US_TO_SI: dict[str, tuple[str, float]] = {us: (si, f) for si, (us, f) in _PAIRS.items()}


def convert(unit: str, to_system: str) -> tuple[str, float]:
    """The unit of ``to_system`` ("SI" or "US") matching ``unit``, and the multiplier
    that takes a value in ``unit`` to it.  A unit already in ``to_system`` (or one of
    neither system) is returned with factor 1."""
    table, own = (US_TO_SI, SI_TO_US) if to_system == "SI" else (SI_TO_US, US_TO_SI)
    if unit in table:
        return table[unit]
    if unit in own:
        return unit, 1.0
    return unit, 1.0
