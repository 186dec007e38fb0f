"""Exact shear, moment, rotation and deflection of every unit case at any points.

A point is (span, x_span, side): ``right`` is the right-side limit, used at a
jump; elsewhere either side gives the same value.  Values come from the
element start state of the solution and the closed-form load terms of
:mod:`envelope.loadterms`, so they are exact, not mesh approximations.

Output arrays are (n_points, n_units) in consistent units, in the contract's
sign conventions: shear V = sum of upward forces left of the point; moment
sagging positive; deflection downward positive (consistent length unit);
rotation = d(deflection)/dx, clockwise positive (rad).
"""

from __future__ import annotations

import numpy as np

from envelope import config
from envelope.loading import DISTRIBUTED, MOMENT, POINT, UnitCases
from envelope.loadterms import load_terms
from envelope.mesh import Mesh, locate
from envelope.model import Beam
from envelope.solver import Solution
from envelope.values import dataclass


@dataclass(frozen=True, slots=True)
class Points:
    """Points along the beam, sorted by x with the left side first at a jump."""

    span: np.ndarray  # int, 0-based
    x_span: np.ndarray
    right: np.ndarray  # bool: right-side limit
    x: np.ndarray  # from the left end of span 1

    @property
    def n(self) -> int:
        """Number of points."""
        return int(self.span.size)

    def take(self, idx: np.ndarray | slice) -> Points:
        """The points at ``idx``."""
        return Points(self.span[idx], self.x_span[idx], self.right[idx], self.x[idx])


@dataclass(frozen=True, slots=True)
class Response:
    """Per point and unit case: shear, moment, rotation, deflection."""

    shear: np.ndarray
    moment: np.ndarray
    rotation: np.ndarray
    deflection: np.ndarray


def make_points(beam: Beam, span: np.ndarray, x_span: np.ndarray,
                right: np.ndarray | None = None) -> Points:
    """Points at span-local positions; ``right`` defaults to the right-side limit."""
    span = np.asarray(span, dtype=np.int64)
    x_span = np.asarray(x_span, dtype=float)
    if right is None:
        right = np.ones(span.shape, dtype=bool)
    return Points(span, x_span, np.asarray(right, dtype=bool),
                  beam.geometry.joint_x[span] + x_span)


def stations(beam: Beam, mesh: Mesh, units: UnitCases) -> Points:
    """The contract's stations: ``stations_per_span`` equally spaced points per span (ends
    included), plus point-load and point-moment positions (two rows: left side, then right
    side), ends of distributed items and support faces.  At an interior support the
    left-side row belongs to the span on the left (x_span = its length) and the
    right-side row to the next span (x_span = 0)."""
    n = beam.output.stations_per_span
    span_of_elem = mesh.span
    jumps_by_span: dict[int, set[float]] = {}
    kinks_by_span: dict[int, set[float]] = {}
    conc = (units.item_kind == POINT) | (units.item_kind == MOMENT)
    e_start = mesh.start[units.item_elem]
    for j, a in zip(span_of_elem[units.item_elem][conc], (units.item_a + e_start)[conc],
                    strict=True):
        jumps_by_span.setdefault(int(j), set()).add(float(a))
    dist = units.item_kind == DISTRIBUTED
    for j, a, b in zip(span_of_elem[units.item_elem][dist], (units.item_a + e_start)[dist],
                       (units.item_b + e_start)[dist], strict=True):
        kinks_by_span.setdefault(int(j), set()).update((float(a), float(b)))

    spans, xs, rights = [], [], []
    geometry = beam.geometry
    for j, sp in enumerate(beam.spans):
        L = float(geometry.span_length[j])
        tol = L * config.STATION_MERGE_RTOL
        pts = set(np.linspace(0.0, L, n).tolist())
        pts.update(kinks_by_span.get(j, ()))
        pts.update(h for h in sp.hinges if 0.0 < h < L)  # zero moment, a kink in deflection
        face_left, face_right = float(geometry.face_left[j]), float(geometry.face_right[j])
        if face_left > 0.0:
            pts.add(face_left)
        if face_right < L:
            pts.add(face_right)
        jumps = {a for a in jumps_by_span.get(j, ()) if 0.0 < a < L}
        merged = _merge(sorted(pts | jumps), jumps, tol)
        for x in merged:
            if x == 0.0:
                spans.append(j)
                xs.append(0.0)
                rights.append(True)
            elif x == L:
                spans.append(j)
                xs.append(L)
                rights.append(False)
            elif x in jumps:
                spans += [j, j]
                xs += [x, x]
                rights += [False, True]
            else:
                spans.append(j)
                xs.append(x)
                rights.append(True)
    return make_points(beam, np.array(spans), np.array(xs), np.array(rights))


def _merge(sorted_pts: list[float], keep: set[float], tol: float) -> list[float]:
    """Drop points within ``tol`` of a neighbour, preferring exact jump positions and ends."""
    out: list[float] = []
    for x in sorted_pts:
        if out and x - out[-1] <= tol:
            if x in keep or x == sorted_pts[-1]:
                out[-1] = x
            continue
        out.append(x)
    if out:
        out[0] = 0.0 if out[0] <= tol else out[0]
    return out


def _pairs(pt_elem: np.ndarray, elem_first: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """All (point, item) index pairs with the point and the item on the same element
    (items are grouped by element: element e holds items elem_first[e]:elem_first[e+1])."""
    lo = elem_first[pt_elem]
    count = elem_first[pt_elem + 1] - lo
    total = int(count.sum())
    pt_idx = np.repeat(np.arange(pt_elem.size), count)
    offsets = np.arange(total) - np.repeat(np.cumsum(count) - count, count)
    return pt_idx, np.repeat(lo, count) + offsets


def pair_count(mesh: Mesh, units: UnitCases, points: Points) -> int:
    """Number of (point, load item) pairs with the point and the item on the same
    element: the work of the load terms at ``points``."""
    elem = locate(mesh, points.span, points.x_span, points.right)
    first = units.elem_first
    return int((first[elem + 1] - first[elem]).sum())


QUANTITIES = ("shear", "moment", "rotation", "deflection")


def evaluate(mesh: Mesh, units: UnitCases, sol: Solution, points: Points) -> Response:
    """Response of every unit case at ``points``: (n_points, n_units) arrays."""
    return Response(**evaluate_some(mesh, units, sol, points, QUANTITIES))


def evaluate_some(mesh: Mesh, units: UnitCases, sol: Solution, points: Points,
                  quantities: tuple[str, ...], kernel: bool | None = None
                  ) -> dict[str, np.ndarray]:
    """Only the named quantities of :func:`evaluate` (the rest is not computed).

    The load terms are summed by numpy over (point, item) pairs, or, where there are
    more than :data:`envelope.config.KERNEL_MIN_PAIRS` pairs or at least
    :data:`envelope.config.KERNEL_MIN_UNITS` unit cases (or ``kernel=True``), by
    a numba kernel of :mod:`envelope._kernels`, which needs no pair arrays: with the
    solution's packed states (``Solution.state``) the whole response in one pass
    (``responses``), else the load terms alone."""
    elem = locate(mesh, points.span, points.x_span, points.right)
    s = points.x_span - mesh.start[elem]
    s = np.clip(s, 0.0, mesh.length[elem])
    first = units.elem_first
    n_pairs = int((first[elem + 1] - first[elem]).sum())
    if kernel is None:
        kernel = n_pairs > config.KERNEL_MIN_PAIRS or units.n_units >= config.KERNEL_MIN_UNITS
    state = sol.state
    if kernel and state is not None and all(
            getattr(sol, name).base is state for name in ("V0", "M0", "theta1", "v1")):
        # (a solution whose states were replaced, e.g. redistributed, has its own arrays)
        return _kernel_responses(mesh, units, state, points, elem, s, quantities)
    # upward slope and deflection here; turned to the contract's signs at the end
    out = start_responses(mesh, sol, elem, s, quantities)

    if n_pairs and kernel:
        _kernel_terms(mesh, units, points, elem, s, out)
    elif n_pairs:
        pt, it = _pairs(elem, first)
        Q, m, m1, m2 = load_terms(units.item_kind[it], units.item_a[it], units.item_b[it],
                                  units.item_wa[it], units.item_wb[it], units.item_p[it],
                                  s[pt], points.right[pt])
        n_u = units.n_units
        flat = pt * n_u + units.item_unit[it]
        size = points.n * n_u
        ei_pt = mesh.EI[elem[pt]]
        for name, term in (("shear", Q), ("moment", m), ("rotation", m1 / ei_pt),
                           ("deflection", m2 / ei_pt)):
            if name in out:
                out[name] -= np.bincount(flat, term, size).reshape(points.n, n_u)
    for name in ("rotation", "deflection"):  # downward deflection, clockwise rotation
        if name in out:
            out[name] = -out[name]
    return out


def start_responses(mesh: Mesh, sol: Solution, elem: np.ndarray, s: np.ndarray,
                    quantities: tuple[str, ...]) -> dict[str, np.ndarray]:
    """Each unit case's response at distance ``s`` (m or ft) into element ``elem`` from
    the element's start state alone (shear, moment; rotation and deflection upward, the
    solver's signs), one row a point: the part before the element's own load terms."""
    return state_responses(sol.V0[elem], sol.M0[elem], sol.theta1[elem], sol.v1[elem],
                           s[:, None], mesh.EI[elem][:, None], quantities)


def state_responses(V0: np.ndarray, M0: np.ndarray, theta1: np.ndarray, v1: np.ndarray,
                    s: np.ndarray, EI: np.ndarray, quantities: tuple[str, ...]
                    ) -> dict[str, np.ndarray]:
    """Shear, moment and (upward) rotation and deflection at distance ``s`` from an
    element's start state (V0, M0, theta1, v1) with flexural rigidity ``EI``, the arrays
    broadcast together: the element's own load terms not included."""
    out: dict[str, np.ndarray] = {}
    if "shear" in quantities:
        out["shear"] = V0.copy()
    if "moment" in quantities:
        out["moment"] = M0 + V0 * s
    if "rotation" in quantities:
        out["rotation"] = theta1 + (M0 * s + V0 * s**2 / 2.0) / EI
    if "deflection" in quantities:
        out["deflection"] = v1 + theta1 * s + (M0 * s**2 / 2.0 + V0 * s**3 / 6.0) / EI
    return out


def _kernel_responses(mesh: Mesh, units: UnitCases, state: np.ndarray, points: Points,
                      elem: np.ndarray, s: np.ndarray, quantities: tuple[str, ...]
                      ) -> dict[str, np.ndarray]:
    """The wanted quantities by the fused numba kernel (one pass: start state, load
    terms, signs) from the packed element states ``state`` (``Solution.state``)."""
    from envelope import _kernels  # numba is imported only here

    wanted = [q for q in QUANTITIES if q in quantities]
    slot = np.array([wanted.index(q) if q in wanted else -1 for q in QUANTITIES],
                    dtype=np.int64)
    block = np.empty((len(wanted), points.n, units.n_units))
    item_int, item = _packed_items(units)
    _kernels.responses(elem.astype(np.int64),
                       _kernels.pack_points(s, mesh.EI[elem], points.right),
                       units.elem_first.astype(np.int64), item_int, item,
                       _kernels.gauss_rule(), state, slot, block)
    return {q: block[i] for i, q in enumerate(wanted)}


def _packed_items(units: UnitCases) -> tuple[np.ndarray, np.ndarray]:
    """The unit cases' load items packed for the kernels (integer and float parts)."""
    from envelope import _kernels  # numba is imported only here

    return _kernels.pack_items(units.item_unit, units.item_kind, units.item_a, units.item_b,
                               units.item_wa, units.item_wb, units.item_p)


def _kernel_terms(mesh: Mesh, units: UnitCases, points: Points, elem: np.ndarray,
                  s: np.ndarray, out: dict[str, np.ndarray]) -> None:
    """The load terms by the numba kernel, subtracted in place from ``out``."""
    from envelope import _kernels  # numba is imported only here

    block = np.zeros((4, points.n, units.n_units))
    item_int, item = _packed_items(units)
    _kernels.particular_terms(elem.astype(np.int64),
                              _kernels.pack_points(s, mesh.EI[elem], points.right),
                              units.elem_first.astype(np.int64), item_int, item,
                              _kernels.gauss_rule(), block)
    for i, name in enumerate(QUANTITIES):
        if name in out:
            out[name] += block[i]


@dataclass(frozen=True, slots=True)
class Combined:
    """Unit cases combined into one load case per *owner* (a row of coefficients over
    the unit cases), contracted once: each element's start state of each owner's case,
    and each load item's factor in it.  Arrays are (n_owners, n_elements) and
    (n_owners, n_items)."""

    V0: np.ndarray
    M0: np.ndarray
    theta1: np.ndarray
    v1: np.ndarray
    item_factor: np.ndarray


def combine(units: UnitCases, sol: Solution, coef: np.ndarray) -> Combined:
    """The cases ``coef`` (owners x unit cases) contracted with the solution: one
    matrix product per state, after which a response of one owner's case at a point
    costs the load items of the point's element (see :func:`evaluate_combined`)."""
    return Combined(coef @ sol.V0.T, coef @ sol.M0.T, coef @ sol.theta1.T, coef @ sol.v1.T,
                    coef[:, units.item_unit])


def evaluate_combined(mesh: Mesh, units: UnitCases, comb: Combined, points: Points,
                      owner: np.ndarray, quantities: tuple[str, ...]
                      ) -> dict[str, np.ndarray]:
    """Response of each point's own combined case (``owner``: its row of ``comb``): the
    named quantities as (n_points,) arrays, the same as :func:`evaluate_some` times the
    owner's coefficients (to round-off), in the same units and signs."""
    elem = locate(mesh, points.span, points.x_span, points.right)
    s = np.clip(points.x_span - mesh.start[elem], 0.0, mesh.length[elem])
    EI = mesh.EI[elem]
    out = state_responses(comb.V0[owner, elem], comb.M0[owner, elem],
                          comb.theta1[owner, elem], comb.v1[owner, elem], s, EI, quantities)
    pt, it = _pairs(elem, units.elem_first)
    if pt.size:
        Q, m, m1, m2 = load_terms(units.item_kind[it], units.item_a[it], units.item_b[it],
                                  units.item_wa[it], units.item_wb[it], units.item_p[it],
                                  s[pt], points.right[pt])
        w = comb.item_factor[owner[pt], it]
        ei_pt = EI[pt]
        for name, term in (("shear", Q), ("moment", m), ("rotation", m1 / ei_pt),
                           ("deflection", m2 / ei_pt)):
            if name in out:
                out[name] -= np.bincount(pt, w * term, points.n)
    for name in ("rotation", "deflection"):  # downward deflection, clockwise rotation
        if name in out:
            out[name] = -out[name]
    return out
