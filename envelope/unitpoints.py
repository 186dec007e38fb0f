"""Every unit case's response at a few points at a time, for searches that evaluate
the envelope at a handful of points again and again (the design search's roots, probes
and golden-section steps).

:func:`envelope.recovery.evaluate_some` pairs each point with the load items of its
element and sorts the pairs by load kind at every call; on a few points that fixed work
is most of the call.  Here the items are laid out once per beam, element by element,
padded to the most any element holds (:class:`ElementItems`), so a call gathers its
points' rows and computes every term in one pass of array operations.  Each term is
the same product as in :func:`envelope.loadterms.load_terms`, summed per point and unit
case in the same order, so the numbers are those of ``evaluate_some``'s numpy path, bit
for bit (tests/test_unit_points.py); where that function would use the numba kernel
(many unit cases or many pairs) it is called instead.

Units and signs are those of :mod:`envelope.recovery`.
"""

from __future__ import annotations

import numpy as np

from envelope import config
from envelope.contracted import item_values
from envelope.loading import DISTRIBUTED, POINT, UnitCases
from envelope.loadterms import GAUSS_W, GAUSS_X
from envelope.mesh import Mesh, locate
from envelope.recovery import Points, evaluate_some, start_responses
from envelope.solver import Solution
from envelope.values import dataclass

#: (1 + xi) of each Gauss point, as load_terms multiplies it
_GAUSS_1X = 1.0 + GAUSS_X
#: sums along an axis without the Python layer of ``ndarray.sum`` (the same reduction)
_sum = np.add.reduce


@dataclass(frozen=True, slots=True)
class ElementItems:
    """The load items of each element (rows: elements; columns: its items in order,
    padded to the most any element holds).  ``floats`` (elements x items x 5): start
    and end (element-local), intensity at the start, slope of the intensity (as
    load_terms computes it) and force or moment of a point item; ``unit``: the item's
    unit case (0 for padding); ``valid``: an item, not padding; ``dist``: a distributed
    item; ``force``: a point force (the rest of the valid items are point moments);
    ``has_dist``, ``has_point``: whether there is any distributed item, any point force
    or moment (the terms of a kind the beam lacks are not made)."""

    floats: np.ndarray
    unit: np.ndarray
    valid: np.ndarray
    dist: np.ndarray
    force: np.ndarray
    has_dist: bool
    has_point: bool

    @property
    def width(self) -> int:
        """Items in the longest element (0 without load items)."""
        return int(self.unit.shape[1])


def element_items(units: UnitCases, n_elements: int) -> ElementItems:
    """The items of ``units`` laid out element by element (:class:`ElementItems`)."""
    first = units.elem_first
    count = np.diff(first)
    width = int(count.max(initial=0))
    elem = units.item_elem
    rank = np.arange(elem.size) - first[elem]
    kind = units.item_kind
    floats = np.zeros((n_elements, width, 5))
    floats[elem, rank] = item_values(units)
    unit = np.zeros((n_elements, width), dtype=np.int64)
    unit[elem, rank] = units.item_unit
    flags = np.zeros((3, n_elements, width), dtype=bool)
    flags[:, elem, rank] = [np.ones(elem.size, dtype=bool), kind == DISTRIBUTED,
                            kind == POINT]
    is_dist = kind == DISTRIBUTED
    return ElementItems(floats, unit, flags[0], flags[1], flags[2], bool(is_dist.any()),
                        bool((~is_dist).any()))


def evaluate_points(mesh: Mesh, units: UnitCases, items: ElementItems, sol: Solution,
                    points: Points, quantities: tuple[str, ...], kernel: bool | None = None
                    ) -> dict[str, np.ndarray]:
    """:func:`envelope.recovery.evaluate_some` of ``quantities`` at ``points``, with the
    items laid out by :func:`element_items`: its numpy path's numbers; where it would
    take the numba kernel (``kernel`` True, or None and as many unit cases or pairs as
    it takes the kernel for), that function itself."""
    elem = locate(mesh, points.span, points.x_span, points.right)
    first = units.elem_first
    if kernel is None:
        kernel = units.n_units >= config.KERNEL_MIN_UNITS or int(
            (first[elem + 1] - first[elem]).sum()) > config.KERNEL_MIN_PAIRS
    if kernel:
        return evaluate_some(mesh, units, sol, points, quantities, kernel=True)
    s = np.minimum(np.maximum(points.x_span - mesh.start[elem], 0.0), mesh.length[elem])
    out = start_responses(mesh, sol, elem, s, quantities)
    if items.width:
        _subtract_terms(units, items, points, elem, s, mesh.EI[elem][:, None], out)
    for name in ("rotation", "deflection"):  # downward deflection, clockwise rotation
        if name in out:
            out[name] = -out[name]
    return out


def _subtract_terms(units: UnitCases, items: ElementItems, points: Points,
                    elem: np.ndarray, s: np.ndarray, ei: np.ndarray,
                    out: dict[str, np.ndarray]) -> None:
    """The load terms of every item of each point's element (at ``s`` on it, ``ei``
    its EI as a column), subtracted from ``out`` in place (per point and unit case,
    summed in the items' order)."""
    f = items.floats[elem]  # points x items x 5
    a, b, wa, slope, p = (f[..., k] for k in range(5))
    sd = s[:, None]
    wanted: list[str] = [q for q in ("shear", "moment", "rotation", "deflection") if q in out]
    # per kind of item, its terms (none where the beam has no item of that kind)
    dist_terms = _distributed_terms(sd, a, b, wa, slope, wanted) if items.has_dist else {}
    conc_terms = _point_terms(sd, a, p, points.right, items.force[elem], wanted) if (
        items.has_point) else {}
    is_dist = items.dist[elem] if dist_terms and conc_terms else None
    terms: dict[str, np.ndarray] = {}
    for name in wanted:
        if is_dist is not None:
            term = np.where(is_dist, dist_terms[name], conc_terms[name])
        else:
            term = (dist_terms or conc_terms)[name]
        terms[name] = term / ei if name in ("rotation", "deflection") else term
    keep = items.valid[elem]
    n_u = units.n_units
    flat = (np.arange(points.n)[:, None] * n_u + items.unit[elem])[keep]
    size = points.n * n_u
    for name, term in terms.items():
        out[name] -= np.bincount(flat, term[keep], size).reshape(points.n, n_u)


def _distributed_terms(sd: np.ndarray, a: np.ndarray, b: np.ndarray, wa: np.ndarray,
                       slope: np.ndarray, wanted: list[str]) -> dict[str, np.ndarray]:
    """The terms of distributed items (points x items; meaningless where an item is
    not distributed) of the ``wanted`` quantities, the rotation and deflection not yet
    divided by EI: the three Gauss points of each item (the products of load_terms; the
    clip as a maximum and a minimum, the same numbers)."""
    half = 0.5 * (np.minimum(np.maximum(sd, a), b) - a)
    a3 = a[..., None]
    t = a3 + half[..., None] * _GAUSS_1X
    wq = GAUSS_W * half[..., None] * (wa[..., None] + slope[..., None] * (t - a3))
    r = sd[..., None] - t
    wr = wq * r
    out: dict[str, np.ndarray] = {}
    if "shear" in wanted:
        out["shear"] = _sum(wq, axis=2)
    if "moment" in wanted:
        out["moment"] = _sum(wr, axis=2)
    if "rotation" in wanted or "deflection" in wanted:
        wrr = wr * r
        if "rotation" in wanted:
            out["rotation"] = _sum(wrr / 2.0, axis=2)
        if "deflection" in wanted:
            out["deflection"] = _sum(wrr * r / 6.0, axis=2)
    return out


def _point_terms(sd: np.ndarray, a: np.ndarray, p: np.ndarray, right: np.ndarray,
                 force: np.ndarray, wanted: list[str]) -> dict[str, np.ndarray]:
    """The terms of point forces and moments (points x items; meaningless where an
    item is distributed) of the ``wanted`` quantities, the rotation and deflection not
    yet divided by EI: the Heaviside step with the side of the limit."""
    d = sd - a
    h = ((d > 0.0) | ((d == 0.0) & right[:, None])).astype(float)
    d = np.where(h > 0.0, d, 0.0)
    pc = p * h
    out: dict[str, np.ndarray] = {}
    if "shear" in wanted:
        out["shear"] = np.where(force, pc, 0.0)
    if "moment" in wanted:
        out["moment"] = np.where(force, pc * d, -pc)
    if "rotation" in wanted:
        out["rotation"] = np.where(force, pc * d * d / 2.0, -pc * d)
    if "deflection" in wanted:
        out["deflection"] = np.where(force, pc * d**3 / 6.0, -pc * d * d / 2.0)
    return out
