"""Unit load cases and the element-level load items they hold.

A *unit case* is one load case's items on one *cell*: a span, or under
``segments`` patterning one equal part of a span.  Every combination and every
pattern is a coefficient vector over unit cases, so the solver runs each unit
case once.  Load items are cut at element and cell boundaries and stored as
flat arrays in element-local coordinates (consistent units, downward and
clockwise positive):

* kind 0, distributed: intensity ``wa`` at ``a`` varying linearly to ``wb`` at ``b``;
* kind 1, point force ``p`` at ``a``;
* kind 2, clockwise point moment ``p`` at ``a``.
"""

from __future__ import annotations

import itertools

import numpy as np

from envelope.mesh import Mesh
from envelope.model import Beam, Load
from envelope.reduction import span_factors
from envelope.values import dataclass

DISTRIBUTED, POINT, MOMENT = 0, 1, 2


@dataclass(frozen=True, slots=True)
class Cells:
    """The parts of the beam that patterning loads or leaves unloaded."""

    span: np.ndarray  # int, span index of each cell
    start: np.ndarray  # span-local
    end: np.ndarray
    label: tuple[str, ...]  # "2" for a span, "2.3" for a segment (1-based)

    @property
    def n(self) -> int:
        """Number of cells."""
        return int(self.span.size)


@dataclass(frozen=True, slots=True)
class UnitCases:
    """Unit cases (one case on one cell) and their element load items, sorted by
    element."""

    case: np.ndarray  # int, n_units: index into beam.cases
    cell: np.ndarray  # int, n_units: index into cells
    item_unit: np.ndarray  # int, n_items
    item_elem: np.ndarray  # int
    item_kind: np.ndarray  # int: DISTRIBUTED, POINT, MOMENT
    item_a: np.ndarray  # element-local
    item_b: np.ndarray
    item_wa: np.ndarray
    item_wb: np.ndarray
    item_p: np.ndarray  # force or moment of a point item
    elem_first: np.ndarray  # n_elements + 1: items of element e are elem_first[e]:[e + 1]
    #: (n_joints, n_units) downward settlement of each joint's support in each unit case
    #: (consistent length); None where no case settles a support.
    settlement: np.ndarray | None = None

    @property
    def n_units(self) -> int:
        """Number of unit load cases."""
        return int(self.case.size)


def build_cells(beam: Beam) -> Cells:
    """Spans, or ``segments`` equal parts of every span for ``segments`` patterning."""
    parts = beam.patterning.segments if beam.patterning.method == "segments" else 1
    span, start, end, label = [], [], [], []
    for j, sp in enumerate(beam.spans):
        for k in range(parts):
            span.append(j)
            start.append(sp.length * k / parts)
            end.append(sp.length if k == parts - 1 else sp.length * (k + 1) / parts)
            label.append(f"{j + 1}" if parts == 1 else f"{j + 1}.{k + 1}")
    return Cells(np.asarray(span, dtype=np.int64), np.asarray(start), np.asarray(end),
                 tuple(label))


def _pieces(lo: float, hi: float, cuts: list[float]) -> list[tuple[float, float]]:
    """[lo, hi] cut at the given points, as consecutive pieces of positive length."""
    pts = [lo] + [c for c in cuts if lo < c < hi] + [hi]
    return [(a, b) for a, b in itertools.pairwise(pts) if b > a]


def _owner(at: float, bounds: list[tuple[float, float]]) -> int:
    """Index of the piece holding a point: start <= at < end, the last piece at its end."""
    for i, (a, b) in enumerate(bounds):
        if a <= at < b:
            return i
    return len(bounds) - 1


def build_unit_cases(beam: Beam, mesh: Mesh, cells: Cells) -> UnitCases:
    """Cut every load item at element and cell boundaries and group it by unit case.

    A live case with ``reduction`` has its items on each span scaled by that span's
    live load reduction factor (:func:`envelope.reduction.span_factors`), so every
    result downstream, reactions and unfactored columns included, is of the reduced
    load."""
    case_index = {c.name: i for i, c in enumerate(beam.cases)}
    scale = span_factors(beam)
    unit_of: dict[tuple[int, int], int] = {}
    rows: list[tuple[int, int, int, float, float, float, float, float]] = []

    span_cells: dict[int, list[int]] = {}
    for g in range(cells.n):
        span_cells.setdefault(int(cells.span[g]), []).append(g)

    def unit(case: int, cell: int) -> int:
        return unit_of.setdefault((case, cell), len(unit_of))

    settles: list[tuple[int, int, float]] = []
    for load in beam.loads:
        j = load.span
        c = case_index[load.case]
        if load.type == "settlement":
            settles.append((unit(c, span_cells[j][0]), load.support, load.delta))
            continue
        if load.is_moving:
            continue  # placed at its worst position by influence lines, not a unit case
        elems = list(range(mesh.span_first[j], mesh.span_first[j] + mesh.span_count[j]))
        e_bounds = [(float(mesh.start[e]), float(mesh.end[e])) for e in elems]
        g_list = span_cells[j]
        g_bounds = [(float(cells.start[g]), float(cells.end[g])) for g in g_list]
        if load.type in ("point", "moment"):
            e = elems[_owner(load.at, e_bounds)]
            g = g_list[_owner(load.at, g_bounds)]
            kind = POINT if load.type == "point" else MOMENT
            value = (load.P if load.type == "point" else load.M) * scale[c, j]
            a = load.at - float(mesh.start[e])
            rows.append((unit(c, g), e, kind, a, a, 0.0, 0.0, value))
            continue
        cuts = sorted({b for _, b in e_bounds} | {b for _, b in g_bounds})
        for lo, hi in _pieces(load.start, load.end, cuts):
            e = elems[_owner(lo, e_bounds)]
            g = g_list[_owner(lo, g_bounds)]
            wa = _intensity(load, beam, j, lo) * scale[c, j]
            wb = _intensity(load, beam, j, hi, upper=True) * scale[c, j]
            e0 = float(mesh.start[e])
            if hi - e0 <= lo - e0:
                continue  # a sliver that vanishes in element-local coordinates
            rows.append((unit(c, g), e, DISTRIBUTED, lo - e0, hi - e0, wa, wb, 0.0))

    keys = sorted(unit_of, key=unit_of.__getitem__)
    arr = np.array(rows, dtype=float).reshape(-1, 8)
    arr = arr[np.argsort(arr[:, 1], kind="stable")]  # items grouped by element
    return UnitCases(
        case=np.array([k[0] for k in keys], dtype=np.int64),
        cell=np.array([k[1] for k in keys], dtype=np.int64),
        item_unit=arr[:, 0].astype(np.int64),
        item_elem=arr[:, 1].astype(np.int64),
        item_kind=arr[:, 2].astype(np.int64),
        item_a=arr[:, 3].copy(),
        item_b=arr[:, 4].copy(),
        item_wa=arr[:, 5].copy(),
        item_wb=arr[:, 6].copy(),
        item_p=arr[:, 7].copy(),
        elem_first=np.searchsorted(arr[:, 1], np.arange(mesh.n_elements + 1)),
        settlement=_settlement_matrix(settles, beam.n_spans + 1, len(keys)),
    )


def _settlement_matrix(settles: list[tuple[int, int, float]], n_joints: int,
                       n_units: int) -> np.ndarray | None:
    """(n_joints, n_units) downward support settlements, or None when there are none."""
    if not settles:
        return None
    out = np.zeros((n_joints, n_units))
    for u, joint, delta in settles:
        out[joint, u] += delta
    return out


def _intensity(load: Load, beam: Beam, span: int, x: float, upper: bool = False) -> float:
    """Line load of a distributed item at span-local ``x`` (force/length, downward)."""
    if load.type == "self_weight":
        # constant within one stretch: the piece [lo, hi] never crosses a section change
        stretches = beam.spans[span].stretches
        for st in stretches:
            if (st.start < x <= st.end) if upper else (st.start <= x < st.end):
                return float(st.section.self_weight or 0.0)
        return float(stretches[-1].section.self_weight or 0.0)
    if load.end == load.start:
        return load.w_start
    t = (x - load.start) / (load.end - load.start)
    return load.w_start + (load.w_end - load.w_start) * t
