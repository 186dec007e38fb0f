"""sizing.parquet as an Arrow table, and the console summary of the sizing.

The table carries the metadata of every result file (:func:`envelope.store._metadata`)
plus ``envelope:sizing_units`` (JSON: column -> unit) and ``envelope:sizing_code``.
"""

from __future__ import annotations

import json
import math

import numpy as np

from envelope.analysis import Analysis
from envelope.design import SteelDesign
from envelope.sizing import size_with_candidates, size_with_units
from envelope.sizing.layout import SECTION_UNITS
from envelope.sizing.redistributed import summary_line
from envelope.store import _metadata, float_column, int_column, make_table, string_column

SIZING_CAUTION = ("Sizing is a first check for a licensed engineer, not a design: the "
                  "engineer of record chooses and details the members.")

CODE_TITLES = {"aci318-19": "ACI 318-19", "en1992-1-1": "EN 1992-1-1",
               "aisc360-22": "AISC 360-22"}


def _arrow(name: str, values: np.ndarray):  # type: ignore[no-untyped-def]
    if values.dtype == object:
        return string_column(list(values))
    if name == "span":
        return int_column(values)
    v = np.asarray(values, dtype=float)
    return float_column(v, np.isnan(v))


def sizing_table(analysis: Analysis):  # type: ignore[no-untyped-def]  # a pyarrow Table
    """sizing.parquet: one row per design section (see :mod:`envelope.sizing`); NaN
    values (a quantity that does not apply to the row) are nulls."""
    return sizing_tables(analysis)["sizing"]


def sizing_tables(analysis: Analysis) -> dict:  # type: ignore[type-arg]
    """sizing.parquet, and for concrete bars.parquet (one row per bar mark, see
    :mod:`envelope.sizing.bar_marks`), as Arrow tables by file stem."""
    cols, units = size_with_units(analysis)
    design = analysis.beam.design
    assert design is not None
    table = make_table({k: _arrow(k, v) for k, v in cols.items()})
    meta = _metadata(analysis)
    meta[b"envelope:sizing_units"] = json.dumps(units).encode()
    meta[b"envelope:sizing_code"] = design.code.encode()
    out = {"sizing": table.replace_schema_metadata(meta)}
    if design.material == "concrete":
        from envelope.sizing.bar_marks import bar_marks

        marks = bar_marks(analysis, cols)
        bars = make_table({k: _arrow(k, v) for k, v in marks.items()})
        bmeta = _metadata(analysis)
        bmeta[b"envelope:sizing_code"] = design.code.encode()
        out["bars"] = bars.replace_schema_metadata(bmeta)
    return out


def _n(v: float, digits: int = 1) -> str:
    if v is None or (isinstance(v, float) and math.isnan(v)):
        return "-"
    return f"{round(float(v), digits) + 0.0:.{digits}f}"  # + 0.0: never "-0.0"


def _g(v: float) -> str:
    if v is None or (isinstance(v, float) and math.isnan(v)):
        return "-"
    return f"{float(v) + 0.0:.4g}"  # + 0.0: never "-0"


def _text(cols: dict[str, np.ndarray], name: str, i: int) -> str:
    """Row ``i`` of a text column, "-" where it is empty or missing."""
    column = cols.get(name)
    value = "" if column is None else column[i]
    return str(value) if isinstance(value, str) and value else "-"


def _ratio(demand: np.ndarray, strength: np.ndarray | None) -> np.ndarray:
    """|demand| / strength, NaN where the strength is missing, zero or not finite."""
    n = np.asarray(demand, dtype=float).size
    if strength is None:
        return np.full(n, np.nan)
    cap = np.asarray(strength, dtype=float)
    ok = np.isfinite(cap) & (cap > 0.0)
    return np.where(ok, np.abs(np.asarray(demand, dtype=float)) / np.where(ok, cap, 1.0),
                    np.nan)


def _strength_ratios(cols: dict[str, np.ndarray]) -> tuple[np.ndarray, np.ndarray]:
    """A concrete row's moment and shear over the strengths of what is provided: the
    bars (ACI ``phiMn_provided``, EN ``MRd_provided``) and the stirrups (``phiVn``,
    ``VRd``; an ACI end that needs none against ``phiVc``), as the report's checks."""
    moment = _ratio(cols["moment_design"], cols.get("phiMn_provided",
                                                    cols.get("MRd_provided")))
    shear = _ratio(cols["shear_design"], cols.get("phiVn", cols.get("VRd")))
    if "phiVc" in cols:
        shear = np.where(np.isnan(shear), _ratio(cols["shear_design"], cols["phiVc"]), shear)
    return moment, shear


def sizing_summary(analysis: Analysis) -> str:
    """A fixed-width table, one line per design section, then the extents per span and the
    closing line that sizing is a first check for a licensed engineer."""
    beam = analysis.beam
    design = beam.design
    assert design is not None
    cols, _, candidates = size_with_candidates(analysis)
    u = beam.units.labels
    su = SECTION_UNITS[beam.units.name]
    code = CODE_TITLES[design.code]
    steel = isinstance(design, SteelDesign)
    if isinstance(design, SteelDesign):
        name = cols["steel_section"][0]
        lines = [f"Sizing, {code} steel, Fy = {design.Fy:g} {su['stress']}: {name}"]
        head = (f"{'span':>4} {'section':<7} {'x':>7} {'M':>9} {'Lb':>7} {'Cb':>5} "
                f"{'phiMn':>9} {'util M':>6} {'V':>8} {'util V':>6} {'util J10':>8} "
                f"{'util d':>6} {'fn':>5}  status")
        units = (f"{'':>4} {'':<7} {u['length']:>7} {u['moment']:>9} {u['length']:>7} "
                 f"{'':>5} {u['moment']:>9} {'':>6} {u['force']:>8} {'':>6} {'':>8} "
                 f"{'':>6} {'Hz':>5}")
    else:
        fc_name, fy_name = ("f'c", "fy") if design.code == "aci318-19" else ("fck", "fyk")
        shape = (f"T {design.flange_width:g}x{design.flange_depth:g} on "
                 if design.is_tee else "")
        lines = [f"Sizing, {code} concrete: {shape}{design.b:g} x {design.h:g} "
                 f"{su['length']}, d = {design.d:g} "
                 f"{su['length']}, {fc_name} = {design.fc:g}, {fy_name} = "
                 f"{design.fy:g} {su['stress']}"]
        other = sorted({float(v) for v in cols["h"]} - {float(design.h)})
        if other:
            lines[0] += (f"; h = {', '.join(f'{v:g}' for v in other)} {su['length']} at "
                         f"the sections in stretches that give their own depth")
        head = (f"{'span':>4} {'section':<7} {'x':>7} {'M':>9} {'As req':>8} {'As':>8} "
                f"{'bars':<8} {'util M':>6} {'V':>8} {'Av/s':>7} {'s max':>6} "
                f"{'stirrups':<16} {'util V':>6} {'util d':>6}  status")
        units = (f"{'':>4} {'':<7} {u['length']:>7} {u['moment']:>9} {su['area']:>8} "
                 f"{su['area']:>8} {'':<8} {'':>6} {u['force']:>8} "
                 f"{su['area_per_length']:>7} {su['length']:>6}")
        util_m, util_v = _strength_ratios(cols)
    lines += [head, units]
    for i in range(cols["span"].size):
        start = (f"{cols['span'][i]:>4} {cols['section'][i]:<7} {_n(cols['x_span'][i], 2):>7} "
                 f"{_n(cols['moment_design'][i]):>9} ")
        if steel:
            body = (f"{_n(cols['lb'][i], 2):>7} {_n(cols['cb'][i], 2):>5} "
                    f"{_n(cols['phi_mn'][i]):>9} "
                    f"{_n(cols['utilisation_moment'][i], 2):>6} "
                    f"{_n(cols['shear_design'][i]):>8} "
                    f"{_n(cols['utilisation_shear'][i], 2):>6} "
                    f"{_n(cols['utilisation_bearing'][i], 2):>8} "
                    f"{_n(cols['utilisation_deflection'][i], 2):>6} "
                    f"{_n(cols['frequency'][i], 1):>5}")
        else:
            body = (f"{_n(cols['as_required'][i], 0 if su['area'] == 'mm2' else 2):>8} "
                    f"{_n(cols['as_design'][i], 0 if su['area'] == 'mm2' else 2):>8} "
                    f"{_text(cols, 'bars', i):<8} {_n(util_m[i], 2):>6} "
                    f"{_n(cols['shear_design'][i]):>8} "
                    f"{_n(cols['av_over_s_required'][i], 3):>7} "
                    f"{_n(cols['s_max'][i], 0 if su['length'] == 'mm' else 1):>6} "
                    f"{_text(cols, 'stirrups', i):<16} {_n(util_v[i], 2):>6} "
                    f"{_n(cols['utilisation_deflection'][i], 2):>6}")
        lines.append(start + body + f"  {cols['status'][i]}")
    lines.append(f"Zero-moment extents ({u['length']}): hogging measured from each support, "
                 f"sagging as x_span from the left support.")
    mid = np.flatnonzero(cols["section"] == "span")
    for i in mid.tolist():
        lines.append(f"  span {cols['span'][i]}: hogging {_n(cols['hogging_left_extent'][i], 2)}"
                     f" from the left, {_n(cols['hogging_right_extent'][i], 2)} from the right;"
                     f" sagging {_n(cols['sagging_start'][i], 2)} to "
                     f"{_n(cols['sagging_end'][i], 2)}")
    if not steel and (line := summary_line(design.code, cols)) is not None:
        lines.append(line)
    if candidates:
        lines.append("Sections of the table, lightest first (what rejects each):")
        lines += [f"  {c}" for c in candidates]
    if steel:
        lines.append("Lb, Cb, phiMn: the governing unbraced segment of the compression flange "
                     "(AISC 360-22 F2, Cb by F1-1; Lb 0: braced); util J10: web yielding and "
                     "crippling at the support or under a point load; fn: DG11 beam frequency.")
    if not steel:
        lines.append("As: the steel to provide (the larger of required and minimum); util M: "
                     "M over the strength of the bars (phiMn_provided / MRd_provided); util V: "
                     "V over the strength with the stirrups (phiVn / VRd; ACI ends without "
                     "stirrups: phiVc).")
    lines.append("M: moment at the section (sagging positive); V: shear at the end section; "
                 "util d: deflection over its limit.  Notes on what governs are in "
                 "sizing.parquet.")
    lines.append(SIZING_CAUTION)
    return "\n".join(lines)
