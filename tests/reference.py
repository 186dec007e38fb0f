"""A slow, plain reference analysis of a continuous beam, for checking the engine.

Nothing here uses the engine's numerics: only the validated input objects of
:mod:`envelope.model` are read.  The method is chosen to be easy to trust, not fast.

* **Mesh.**  Every joint and section change is a node, and so is every load
  position, load-extent end, pattern-cell boundary and requested output point
  unless it lies within 2 % of the span of another node (very short elements make
  the stiffness matrix ill-conditioned); a gap longer than half its span is cut
  in two.  Each element is prismatic.
* **Solve.**  Euler-Bernoulli (Hermite) elements, two degrees of freedom per node
  (deflection up, rotation counter-clockwise), a dense global stiffness matrix
  assembled in plain loops, rigid restraints removed, springs added to the
  diagonal, and a dense LU solve for one load set at a time (refined with
  residuals in extended precision, see :meth:`ReferenceBeam._solve_free`).  Loads
  become consistent nodal loads: the integral of each shape function times the
  load, by a Gauss rule exact for these polynomials; a point force P at local s
  gives P N(s), a point moment C gives C N'(s).  Nodal deflections and rotations
  are then exact for prismatic elements (common practice: the Hermite functions
  are the homogeneous solutions of EI v'''' = 0, so the element's Green's
  function for a nodal value lies in the element space).
* **Recovery.**  Reactions from the solved nodal displacements (K d - F at rigid
  restraints, -k d at springs); shear and moment at any point by the free body
  left of it (reactions and loads to the left, summed in closed form); rotation
  and deflection at a node are the nodal values, and inside an element come from
  integrating EI v'' = M from the element's left node.
* **Envelopes.**  Every load arrangement of the patterning method is listed
  explicitly and every combination evaluated under each; the envelope is the
  plain max and min over that list.

Units are the beam's consistent units (m, kN or ft, kip).  Sign conventions are
the case-format contract's: loads down, applied moments clockwise, reactions up,
shear = sum of upward forces left of the point, moment sagging positive,
deflection downward, rotation clockwise (= d deflection / dx).
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field

import numpy as np
import scipy.linalg

from envelope.model import Beam, Combination

#: Node positions closer than this fraction of the span are one node.
NODE_MERGE_RTOL = 1e-10
#: Extended precision for the assembled matrix, the load vector and the solution
#: (80-bit on x86; plain float64 elsewhere, which only loses the last digits).
XF = np.longdouble
#: Solve plus refinement steps: each multiplies the error by about cond(K) * 1e-16,
#: down to the floor |K| |d| * 1e-19 of the extended-precision residual.
REFINEMENT_STEPS = 4
#: An optional node (load position, cell boundary, output point) closer than this
#: fraction of the span to another node is not made: very short elements make the
#: stiffness matrix ill-conditioned.  Loads and outputs there are handled inside
#: the element instead.
MIN_GAP_RTOL = 0.02
#: No element longer than this fraction of its span.
MAX_ELEMENT_FRACTION = 0.5


# ---------------------------------------------------------------------------
# Load items
# ---------------------------------------------------------------------------


@dataclass(frozen=True, slots=True)
class Item:
    """One load item on one span, span-local, downward force / clockwise moment positive.

    ``kind`` is "dist" (intensity ``wa`` at ``a`` varying linearly to ``wb`` at ``b``),
    "point" (force ``value`` at ``a``) or "moment" (clockwise moment ``value`` at ``a``).
    """

    kind: str
    span: int
    a: float
    b: float
    wa: float = 0.0
    wb: float = 0.0
    value: float = 0.0


@dataclass(frozen=True, slots=True)
class Cell:
    """A part of the beam that a pattern loads or leaves empty: [lo, hi] of one span."""

    span: int
    lo: float
    hi: float
    label: str
    last: bool  # the last cell of its span (owns a point load at the span end)


def cells_of(beam: Beam) -> list[Cell]:
    """Whole spans, or for ``segments`` patterning ``segments`` equal parts of each span
    (labels "2" or "2.3", counted from 1, as the case-format contract writes them)."""
    parts = beam.patterning.segments if beam.patterning.method == "segments" else 1
    out = []
    for j, span in enumerate(beam.spans):
        L = span.length
        for k in range(parts):
            lo = L * k / parts
            hi = L if k == parts - 1 else L * (k + 1) / parts
            label = f"{j + 1}" if parts == 1 else f"{j + 1}.{k + 1}"
            out.append(Cell(j, lo, hi, label, k == parts - 1))
    return out


def _line_load(load_start: float, load_end: float, w_start: float, w_end: float,
               x: float) -> float:
    """Intensity of a linearly varying line load at span-local x."""
    if load_end == load_start:
        return w_start
    return w_start + (w_end - w_start) * (x - load_start) / (load_end - load_start)


def case_items(beam: Beam, case: str, cell: Cell | None = None) -> list[Item]:
    """Load items of one case, optionally only the part on one cell.

    A point load or moment exactly on a boundary between two cells belongs to the
    cell on its right (the last cell of a span keeps one at the span's end): the
    engine's stated convention, needed so the two count the same cells.
    Self-weight is split into one uniform item per stretch of constant section."""
    items: list[Item] = []
    for load in beam.loads:
        if load.case != case:
            continue
        if cell is not None and load.span != cell.span:
            continue
        if load.type in ("point", "moment"):
            if cell is not None:
                inside = cell.lo <= load.at < cell.hi or (cell.last and load.at == cell.hi)
                if not inside:
                    continue
            kind = "point" if load.type == "point" else "moment"
            value = load.P if load.type == "point" else load.M
            items.append(Item(kind, load.span, load.at, load.at, value=value))
            continue
        lo, hi = load.start, load.end
        if cell is not None:
            lo, hi = max(lo, cell.lo), min(hi, cell.hi)
            if hi <= lo:
                continue
        if load.type == "self_weight":
            for st in beam.spans[load.span].stretches:
                a, b = max(lo, st.start), min(hi, st.end)
                if b > a:
                    w = st.section.self_weight or 0.0
                    items.append(Item("dist", load.span, a, b, w, w))
            continue
        wa = _line_load(load.start, load.end, load.w_start, load.w_end, lo)
        wb = _line_load(load.start, load.end, load.w_start, load.w_end, hi)
        items.append(Item("dist", load.span, lo, hi, wa, wb))
    return items


# ---------------------------------------------------------------------------
# Mesh, stiffness and solve
# ---------------------------------------------------------------------------


#: Five-point Gauss-Legendre rule, exact for polynomials up to degree 9; every
#: integral below is of a polynomial of degree 4 at most on each piece.
_GL_X, _GL_W = np.polynomial.legendre.leggauss(5)


def integrate(f: Callable[[float], float], a: float, b: float) -> float:
    """Integral of f over [a, b] by the five-point Gauss-Legendre rule."""
    half, mid = 0.5 * (b - a), 0.5 * (a + b)
    return half * sum(float(w) * f(mid + half * float(t)) for t, w in zip(_GL_X, _GL_W,
                                                                       strict=True))


def hermite_shapes(s: float, length: float) -> tuple[np.ndarray, np.ndarray]:
    """Cubic Hermite shape functions of an element and their s-derivatives at local s,
    dofs (v1, th1, v2, th2) (common practice)."""
    L = length
    t = s / L
    N = np.array([1 - 3 * t * t + 2 * t**3, L * (t - 2 * t * t + t**3), 3 * t * t - 2 * t**3,
                  L * (t**3 - t * t)])
    dN = np.array([(-6 * t + 6 * t * t) / L, 1 - 4 * t + 3 * t * t, (6 * t - 6 * t * t) / L,
                   3 * t * t - 2 * t])
    return N, dN


def consistent_loads(length: float, lo: float, hi: float, q_lo: float,
                     q_hi: float) -> np.ndarray:
    """Consistent nodal loads (up, ccw) of an upward line load varying linearly from q_lo
    at local lo to q_hi at local hi (0 <= lo < hi <= length): the integral of each shape
    function times the load (common practice), exact by the Gauss rule."""
    def q(s: float) -> float:
        return q_lo + (q_hi - q_lo) * (s - lo) / (hi - lo)

    return np.array([integrate(lambda s, p=p: float(hermite_shapes(s, length)[0][p]) * q(s),
                               lo, hi) for p in range(4)])


def hermite_stiffness(length: float, EI: float) -> np.ndarray:
    """4 x 4 Euler-Bernoulli element stiffness, dofs (v1, th1, v2, th2) (common practice)."""
    L = length
    k = EI / L**3
    return k * np.array([[12, 6 * L, -12, 6 * L],
                         [6 * L, 4 * L * L, -6 * L, 2 * L * L],
                         [-12, -6 * L, 12, -6 * L],
                         [6 * L, 2 * L * L, -6 * L, 4 * L * L]])


@dataclass
class Result:
    """One solved load set: nodal displacements and support reactions."""

    v: np.ndarray  # per node, upward deflection
    th: np.ndarray  # per node, counter-clockwise rotation
    reaction: np.ndarray  # per joint, upward force on the beam
    reaction_moment: np.ndarray  # per joint, counter-clockwise moment on the beam
    items: list[Item]


class ReferenceBeam:
    """The beam as a mesh of prismatic elements, ready to solve load sets."""

    def __init__(self, beam: Beam, points: Sequence[tuple[int, float]] = ()) -> None:
        self.beam = beam
        self.joint_x = [0.0]
        for span in beam.spans:
            self.joint_x.append(self.joint_x[-1] + span.length)
        required: list[list[float]] = [[0.0, s.length] for s in beam.spans]
        optional: list[list[float]] = [[] for _ in beam.spans]
        for j, span in enumerate(beam.spans):
            for st in span.stretches:
                required[j] += [st.start, st.end]
        for load in beam.loads:
            optional[load.span] += [load.at, load.start, load.end]
        for cell in cells_of(beam):
            optional[cell.span] += [cell.lo, cell.hi]
        for j, x in points:
            optional[int(j)].append(float(x))

        # per span: sorted local node positions
        self.local: list[list[float]] = []
        for j, span in enumerate(beam.spans):
            L = span.length
            nodes: list[float] = []
            for x in sorted(required[j]):
                if not nodes or x - nodes[-1] > NODE_MERGE_RTOL * L:
                    nodes.append(x)
            nodes[0], nodes[-1] = 0.0, L
            for x in sorted(optional[j]):
                if min(abs(x - y) for y in nodes) > MIN_GAP_RTOL * L:
                    nodes.append(x)
                    nodes.sort()
            fine = [nodes[0]]
            for a, b in itertools.pairwise(nodes):
                parts = max(1, math.ceil((b - a) / (MAX_ELEMENT_FRACTION * L)))
                fine += [a + (b - a) * k / parts for k in range(1, parts)] + [b]
            self.local.append(fine)

        # global node numbering: span j's first node is joint j, its last joint j + 1
        self.joint_node: list[int] = [0]
        self.elements: list[tuple[int, int, int, float, float]] = []  # n1, n2, span, x1, x2
        n_nodes = 1
        for xs in self.local:
            prev = self.joint_node[-1]
            for x1, x2 in itertools.pairwise(xs):
                self.elements.append((prev, n_nodes, len(self.joint_node) - 1, x1, x2))
                prev = n_nodes
                n_nodes += 1
            self.joint_node.append(prev)
        self.n_nodes = n_nodes

        n_dof = 2 * self.n_nodes
        K = np.zeros((n_dof, n_dof), dtype=XF)
        for n1, n2, j, x1, x2 in self.elements:
            EI = self.section_EI(j, 0.5 * (x1 + x2))
            ke = hermite_stiffness(XF(x2) - XF(x1), XF(EI))
            dofs = [2 * n1, 2 * n1 + 1, 2 * n2, 2 * n2 + 1]
            for p in range(4):
                for q in range(4):
                    K[dofs[p], dofs[q]] += ke[p, q]
        self.K = K
        self.rigid = np.zeros(n_dof, dtype=bool)
        self.spring = np.zeros(n_dof)
        for i, sup in enumerate(beam.supports):
            node = self.joint_node[i]
            for dof, k in ((2 * node, sup.k_vertical), (2 * node + 1, sup.k_rotation)):
                if math.isinf(k):
                    self.rigid[dof] = True
                else:
                    self.spring[dof] = k
        free = ~self.rigid
        self.free = np.flatnonzero(free)
        self.K_free = K[np.ix_(free, free)] + np.diag(self.spring[free]).astype(XF)
        self.lu = scipy.linalg.lu_factor(self.K_free.astype(float))

    def _solve_free(self, F: np.ndarray) -> np.ndarray:
        """K d = F on the free degrees of freedom: a dense LU solve in float64 (LAPACK
        getrf/getrs, what ``numpy.linalg.solve`` does, factorised once per beam), then
        iterative refinement with the residual and the running solution kept in extended
        precision, so that round-off in d does not reach the reactions K d - F."""
        d = np.zeros(F.shape, dtype=XF)
        for _ in range(REFINEMENT_STEPS):
            r = F - self.K_free @ d
            d += scipy.linalg.lu_solve(self.lu, r.astype(float)).astype(XF)
        return d

    def section_EI(self, span: int, x: float) -> float:
        for st in self.beam.spans[span].stretches:
            if st.start <= x <= st.end:
                return st.section.E * st.section.I
        raise AssertionError("no stretch holds the element")

    def element_at(self, span: int, x: float) -> int:
        """Index of an element of the span holding span-local x (ends included)."""
        for e, (_, _, j, x1, x2) in enumerate(self.elements):
            if j == span and x1 <= x <= x2:
                return e
        raise KeyError((span, x))

    def node_at(self, span: int, x: float) -> int | None:
        """The node at span-local x, or None where x is inside an element."""
        L = self.beam.spans[span].length
        for n1, n2, j, x1, x2 in self.elements:
            if j == span:
                if abs(x - x1) <= NODE_MERGE_RTOL * L:
                    return n1
                if abs(x - x2) <= NODE_MERGE_RTOL * L:
                    return n2
        return None

    def global_x(self, span: int, x: float) -> float:
        return self.joint_x[span] + x

    def solve(self, items: list[Item]) -> Result:
        """Deflections, rotations and reactions under one set of load items."""
        n_dof = 2 * self.n_nodes
        F = np.zeros(n_dof, dtype=XF)
        for it in items:
            if it.kind in ("point", "moment"):
                n1, n2, _, x1, x2 = self.elements[self.element_at(it.span, it.a)]
                N, dN = hermite_shapes(it.a - x1, x2 - x1)
                # downward force -P on v; clockwise moment C is -C counter-clockwise,
                # whose work-equivalent nodal loads are -C dN/ds
                fe = -it.value * (N if it.kind == "point" else dN)
                for p, dof in enumerate((2 * n1, 2 * n1 + 1, 2 * n2, 2 * n2 + 1)):
                    F[dof] += XF(fe[p])
                continue
            covered = 0.0
            for n1, n2, j, x1, x2 in self.elements:
                lo, hi = max(it.a, x1), min(it.b, x2)
                if j != it.span or hi <= lo:
                    continue
                q_lo = -_line_load(it.a, it.b, it.wa, it.wb, lo)  # upward positive
                q_hi = -_line_load(it.a, it.b, it.wa, it.wb, hi)
                fe = consistent_loads(x2 - x1, lo - x1, hi - x1, q_lo, q_hi)
                for p, dof in enumerate((2 * n1, 2 * n1 + 1, 2 * n2, 2 * n2 + 1)):
                    F[dof] += XF(fe[p])
                covered += hi - lo
            assert abs(covered - (it.b - it.a)) <= 1e-9 * self.beam.spans[it.span].length
        d = np.zeros(n_dof, dtype=XF)
        d[self.free] = self._solve_free(F[self.free])
        # force each support applies = K d - F (rigid), -k d (spring)
        support_force = (self.K @ d - F).astype(float)
        d = d.astype(float)
        n_j = len(self.joint_node)
        reaction = np.zeros(n_j)
        reaction_moment = np.zeros(n_j)
        for i, node in enumerate(self.joint_node):
            for dof, out in ((2 * node, reaction), (2 * node + 1, reaction_moment)):
                if self.rigid[dof]:
                    out[i] = support_force[dof]
                else:
                    out[i] = -self.spring[dof] * d[dof]
        return Result(d[0::2].copy(), d[1::2].copy(), reaction, reaction_moment, items)

    # -- recovery ------------------------------------------------------------

    def shear_moment(self, res: Result, span: int, x: float, right: bool) -> tuple[float, float]:
        """Shear and sagging moment at span-local x by the free body left of the point.

        A load or reaction exactly at the point counts only for the right-side limit;
        a joint's reaction counts at its own span start (right side), never at the
        end of the span before it."""
        X = self.global_x(span, x)
        V = 0.0
        M = 0.0
        for i in range(len(self.joint_node)):
            left = i < span or (i == span and (x > 0.0 or right))
            if left:
                V += res.reaction[i]
                M += res.reaction[i] * (X - self.joint_x[i]) - res.reaction_moment[i]
        for it in res.items:
            if it.span > span:
                continue
            if it.kind in ("point", "moment"):
                if it.span == span and not (it.a < x or (it.a == x and right)):
                    continue
                if it.kind == "point":
                    V -= it.value
                    M -= it.value * (X - self.global_x(it.span, it.a))
                else:
                    M += it.value
                continue
            c = it.b if it.span < span else min(it.b, x)
            if c <= it.a:
                continue
            h = c - it.a
            d = X - self.global_x(it.span, it.a)  # cut to the load's start
            slope = (it.wb - it.wa) / (it.b - it.a)
            # int_0^h (wa + slope u) du and int_0^h (wa + slope u)(d - u) du
            V -= it.wa * h + slope * h * h / 2
            M -= it.wa * (d * h - h * h / 2) + slope * (d * h * h / 2 - h**3 / 3)
        return V, M

    def slope_deflection(self, res: Result, span: int, x: float) -> tuple[float, float]:
        """Counter-clockwise rotation and upward deflection at span-local x.

        At a node these are the nodal values; inside an element, EI v'' = M is
        integrated from the element's left node, with M from :meth:`shear_moment`:
        th(x) = th1 + int M/EI, v(x) = v1 + th1 (x - x1) + int M(s) (x - s)/EI ds, cut
        at every load position so each piece is a polynomial (exact by the Gauss rule).
        """
        node = self.node_at(span, x)
        if node is not None:
            return float(res.th[node]), float(res.v[node])
        n1, _, _, x1, _ = self.elements[self.element_at(span, x)]
        EI = self.section_EI(span, x)
        cuts = {x1, x}
        for it in res.items:
            if it.span == span:
                cuts.update(c for c in (it.a, it.b) if x1 < c < x)
        th, v = float(res.th[n1]), float(res.v[n1]) + float(res.th[n1]) * (x - x1)
        for a, b in itertools.pairwise(sorted(cuts)):
            th += integrate(lambda s: self.shear_moment(res, span, s, True)[1] / EI, a, b)
            v += integrate(lambda s: self.shear_moment(res, span, s, True)[1] * (x - s) / EI,
                           a, b)
        return th, v

    def response(self, res: Result, span: int, x: float, right: bool) -> tuple[float, ...]:
        """(shear, moment, rotation clockwise, deflection downward) at span-local x."""
        V, M = self.shear_moment(res, span, x, right)
        th, v = self.slope_deflection(res, span, x)
        return V, M, -th, -v


# ---------------------------------------------------------------------------
# Unit responses: one case on one cell at a time
# ---------------------------------------------------------------------------

QUANTITIES = ("shear", "moment", "rotation", "deflection")


@dataclass
class UnitTable:
    """Responses of every unit (case on cell) that carries load: per quantity an
    (n_points, n_units) array, and reactions (n_joints, n_units)."""

    units: list[tuple[int, int]]  # (case index, cell index)
    cells: list[Cell]
    values: dict[str, np.ndarray]
    reaction: np.ndarray
    reaction_moment: np.ndarray
    cache: dict = field(default_factory=dict)  # arrangements by combination


def _points_list(points: Sequence[tuple[int, float, bool]]) -> list[tuple[int, float, bool]]:
    return [(int(j), float(x), bool(r)) for j, x, r in points]


def unit_table(beam: Beam, points: Sequence[tuple[int, float, bool]],
               cells: list[Cell] | None = None, deflection: bool = True) -> UnitTable:
    """Solve every case on every cell separately (plain loops, one solve each).
    With ``deflection=False`` points need not be nodes and only shear and moment are
    filled (rotation and deflection are NaN)."""
    pts = _points_list(points)
    cells = cells_of(beam) if cells is None else cells
    ref = ReferenceBeam(beam, [(j, x) for j, x, _ in pts] if deflection else [])
    units: list[tuple[int, int]] = []
    columns: list[list[tuple[float, ...]]] = []
    reactions, moments = [], []
    for c, case in enumerate(beam.cases):
        for g, cell in enumerate(cells):
            items = case_items(beam, case.name, cell)
            if not items:
                continue
            res = ref.solve(items)
            col = []
            for j, x, r in pts:
                if deflection:
                    col.append(ref.response(res, j, x, r))
                else:
                    col.append((*ref.shear_moment(res, j, x, r), math.nan, math.nan))
            units.append((c, g))
            columns.append(col)
            reactions.append(res.reaction)
            moments.append(res.reaction_moment)
    arr = np.array(columns, dtype=float).reshape(len(units), len(pts), 4)
    values = {q: arr[:, :, i].T.copy() for i, q in enumerate(QUANTITIES)}
    n_j = len(beam.supports)
    return UnitTable(units, cells, values,
                     np.array(reactions).reshape(len(units), n_j).T.copy(),
                     np.array(moments).reshape(len(units), n_j).T.copy())


def case_table(beam: Beam, points: Sequence[tuple[int, float, bool]]) -> dict[str, np.ndarray]:
    """Each case alone on every span: per quantity (n_points, n_cases), plus
    "reaction" and "reaction_moment" (n_joints, n_cases)."""
    pts = _points_list(points)
    ref = ReferenceBeam(beam, [(j, x) for j, x, _ in pts])
    out = {q: np.zeros((len(pts), len(beam.cases))) for q in QUANTITIES}
    out["reaction"] = np.zeros((len(beam.supports), len(beam.cases)))
    out["reaction_moment"] = np.zeros((len(beam.supports), len(beam.cases)))
    for c, case in enumerate(beam.cases):
        items = case_items(beam, case.name)
        if not items:
            continue
        res = ref.solve(items)
        for p, (j, x, r) in enumerate(pts):
            for q, value in zip(QUANTITIES, ref.response(res, j, x, r), strict=True):
                out[q][p, c] = value
        out["reaction"][:, c] = res.reaction
        out["reaction_moment"][:, c] = res.reaction_moment
    return out


# ---------------------------------------------------------------------------
# Brute-force envelope: every arrangement listed
# ---------------------------------------------------------------------------


def code_span_sets(n_spans: int) -> list[frozenset[int]]:
    """``code`` arrangements (0-based span sets): all spans; alternate spans, odd set
    (spans 1, 3, ...) then even set; each pair of adjacent spans (ACI 318-19 6.4.2,
    EN 1992-1-1 5.1.3; the case-format contract), repeats dropped, first kept."""
    sets = [frozenset(range(n_spans)),
            frozenset(j for j in range(n_spans) if j % 2 == 0),
            frozenset(j for j in range(n_spans) if j % 2 == 1)]
    sets += [frozenset({j, j + 1}) for j in range(n_spans - 1)]
    out: list[frozenset[int]] = []
    for s in sets:
        if s and s not in out:
            out.append(s)
    return out


def _mask_text(cells: list[Cell], mask: Sequence[bool]) -> str:
    if all(mask):
        return "all"
    chosen = [c.label for c, on in zip(cells, mask, strict=True) if on]
    return " ".join(chosen) if chosen else "none"


def _label(cells: list[Cell], masks: dict[str, tuple[bool, ...]],
           all_patterned: bool = True) -> str:
    """The ``_loaded`` text: "all", "1 3", "2.1 2.3", "none" where every case named is
    patterned and all share one arrangement; else each case with its own, "L: 1 3;
    Lr: 2; W: none" (cases in order of their first load item)."""
    if not masks:
        return "all"
    values = list(masks.values())
    if all_patterned and all(m == values[0] for m in values):
        return _mask_text(cells, values[0])
    return "; ".join(f"{name}: {_mask_text(cells, m)}" for name, m in masks.items())


@dataclass
class Envelope:
    """Brute-force extremes at each row, the governing combination and arrangement,
    and whether the governing choice is unique (no other choice within ``gap``)."""

    max: np.ndarray
    min: np.ndarray
    max_combo: np.ndarray
    min_combo: np.ndarray
    max_loaded: list[str]
    min_loaded: list[str]
    max_unique: np.ndarray
    min_unique: np.ndarray


def switchable_cases(beam: Beam, combo: Combination) -> list[int]:
    """Indices of the cases of a combination that may be placed or left off: its
    patterned cases and the cases it lets act only where unfavourable
    (``combo.optional``), each carrying load and a factor, in the order of their first
    load item."""
    order: list[int] = []
    names = [case.name for case in beam.cases]
    for load in beam.loads:
        c = names.index(load.case)
        case = beam.cases[c]
        if ((case.patterned or case.name in combo.optional)
                and combo.factor(load.case) != 0.0 and c not in order):
            order.append(c)
    return order


def patterned_cases(beam: Beam, combo: Combination) -> list[int]:
    """The patterned ones of :func:`switchable_cases`."""
    return [c for c in switchable_cases(beam, combo) if beam.cases[c].patterned]


def favourable_factor(beam: Beam, combo: Combination) -> float:
    """The dead-load factor on cells carrying no patterned load: ``favourable_dead`` for
    strength combinations, 1.0 for service ones (a strength-set option)."""
    return beam.patterning.favourable_dead if combo.set == "strength" else 1.0


def coefficients(beam: Beam, combo: Combination, table: UnitTable,
                 on: dict[int, Sequence[bool]], loaded: Sequence[bool]) -> np.ndarray:
    """Coefficients over the units of one arrangement: a switchable case c (patterned or
    optional) carries its load on the cells where ``on[c]`` is true; dead cases take the
    favourable factor times their factor on cells not ``loaded`` (when the combination
    has patterned load)."""
    f_dead = favourable_factor(beam, combo)
    has_pattern = any(beam.cases[c].patterned for c in on)
    col = np.zeros(len(table.units))
    for u, (c, g) in enumerate(table.units):
        case = beam.cases[c]
        factor = combo.factor(case.name)
        if case.patterned or case.name in combo.optional:
            col[u] = factor if (c in on and on[c][g]) else 0.0
        elif case.kind == "dead" and has_pattern and not loaded[g]:
            col[u] = f_dead * factor
        else:
            col[u] = factor
    return col


def parse_label(beam: Beam, combo: Combination, cells: list[Cell],
                text: str) -> dict[int, list[bool]]:
    """The arrangement a ``_loaded`` text names: switchable case -> cells it is placed
    on.  Texts: "all", "none", "1 3", "2.1 2.3", or per case "L: 1 3; Lr: all; W: none"
    (a switchable case not named is off)."""
    order = switchable_cases(beam, combo)
    names = [case.name for case in beam.cases]
    labels = [cell.label for cell in cells]

    def mask(part: str) -> list[bool]:
        part = part.strip()
        if part == "all":
            return [True] * len(cells)
        if part == "none":
            return [False] * len(cells)
        chosen = part.split()
        unknown = [x for x in chosen if x not in labels]
        if unknown:
            raise ValueError(f"unknown cells {unknown} in {text!r}")
        return [lab in chosen for lab in labels]

    if ":" not in text:
        m = mask(text)
        return {c: list(m) for c in order}
    out = {c: [False] * len(cells) for c in order}
    for part in text.split(";"):
        name, _, rest = part.partition(":")
        c = names.index(name.strip())
        if c not in out:
            raise ValueError(f"case {name.strip()!r} of {text!r} is not switchable")
        out[c] = mask(rest)
    return out


def label_value(beam: Beam, combo: Combination, table: UnitTable, R: np.ndarray,
                text: str) -> np.ndarray:
    """Value of R (rows x units) under the arrangement a ``_loaded`` text names; a cell
    is loaded when some patterned case is placed on it."""
    on = parse_label(beam, combo, table.cells, text)
    loaded = [any(m[g] for c, m in on.items() if beam.cases[c].patterned)
              for g in range(len(table.cells))]
    return R @ coefficients(beam, combo, table, on, loaded)


def arrangements(beam: Beam, combo: Combination, table: UnitTable
                 ) -> tuple[np.ndarray, list[str]]:
    """Every load arrangement of one combination as coefficients over the units
    (n_units, n_arrangements), with its ``_loaded`` text.

    Patterned cases first:

    * ``none``: every patterned case on every span;
    * ``code``: the :func:`code_span_sets`, every patterned case on the same spans;
    * for both, where the combination names every patterned case as optional, also
      none of them anywhere (no span loaded);
    * ``exhaustive`` / ``segments``: every subset of cells, for each patterned case
      independently.  Placing a case on a cell where it has no load changes nothing
      but the dead load there, so such placements are listed once, as "the cell is
      loaded" (labelled with the first patterned case that has no load there), and
      only when the favourable dead factor is not 1.

    Then each of those with every optional case that is not patterned on (over the
    whole beam) and off, in every combination.  A cell is loaded when some patterned
    case of the combination is placed on it (for ``code``: the cells of the span
    set); dead cases take the favourable factor on cells not loaded.  Results are kept
    on the table, by combination.
    """
    key = (combo.name, combo.set, combo.factors, combo.optional)
    if key in table.cache:
        return table.cache[key]
    cases = beam.cases
    cells = table.cells
    n_g = len(cells)
    order = switchable_cases(beam, combo)
    pat = [c for c in order if cases[c].patterned]
    whole = [c for c in order if not cases[c].patterned]
    all_patterned = not whole
    method = beam.patterning.method
    f_dead = favourable_factor(beam, combo)

    # (case -> cells carrying it, loaded cells, case -> cells named in the label)
    Placement = tuple[dict[int, list[bool]], list[bool], dict[int, list[bool]]]
    placements: list[Placement] = []

    def on_spans(mask: list[bool]) -> None:
        on = {c: list(mask) for c in pat}
        placements.append((on, list(mask), on))

    # with every patterned case optional, also none of them acting (no span loaded)
    nothing = bool(pat) and all(cases[c].name in combo.optional for c in pat)
    if not pat or method == "none":
        on_spans([True] * n_g)
        if nothing:
            on_spans([False] * n_g)
    elif method == "code":
        for span_set in code_span_sets(beam.n_spans):
            on_spans([cell.span in span_set for cell in cells])
        if nothing:
            on_spans([False] * n_g)
    else:
        own = {c: {g for cc, g in table.units if cc == c} for c in pat}
        bits = [(c, g) for c in pat for g in sorted(own[c])]
        phantom = ([g for g in range(n_g) if any(g not in own[c] for c in pat)]
                   if f_dead != 1.0 else [])
        for real in itertools.product((False, True), repeat=len(bits)):
            on = {c: [False] * n_g for c in pat}
            for (c, g), chosen in zip(bits, real, strict=True):
                on[c][g] = chosen
            real_loaded = [any(on[c][g] for c in pat) for g in range(n_g)]
            empty = [g for g in phantom if not real_loaded[g]]
            for extra in itertools.product((False, True), repeat=len(empty)):
                loaded = list(real_loaded)
                named = {c: list(m) for c, m in on.items()}
                for g, chosen in zip(empty, extra, strict=True):
                    if chosen:
                        loaded[g] = True
                        named[next(c for c in pat if g not in own[c])][g] = True
                placements.append((on, loaded, named))

    # every optional case that is not patterned: on over the whole beam, or off
    full: list[Placement] = []
    for on, loaded, named in placements:
        for bits in itertools.product((True, False), repeat=len(whole)):
            on2, named2 = dict(on), dict(named)
            for c, chosen in zip(whole, bits, strict=True):
                on2[c] = named2[c] = [chosen] * n_g
            full.append((on2, loaded, named2))

    coef = np.zeros((len(table.units), len(full)))
    labels = []
    for a, (on, loaded, named) in enumerate(full):
        coef[:, a] = coefficients(beam, combo, table, on, loaded)
        labels.append(_label(cells, {cases[c].name: tuple(named[c]) for c in order},
                             all_patterned))
    table.cache[key] = (coef, labels)
    return coef, labels


def envelope(beam: Beam, combos: Sequence[Combination], table: UnitTable,
             R: np.ndarray, gap: float) -> Envelope:
    """Max and min of ``R`` (rows x units, the table's units) over every combination
    and every arrangement.

    The governing choice is *unique* when no other (combination, arrangement) comes
    within ``gap`` of the extreme."""
    values, combo_of, labels = [], [], []
    for k, combo in enumerate(combos):
        coef, texts = arrangements(beam, combo, table)
        values.append(R @ coef)
        combo_of += [k] * len(texts)
        labels += texts
    V = np.concatenate(values, axis=1)
    combo_arr = np.array(combo_of)
    out: dict[str, tuple[np.ndarray, np.ndarray, list[str], np.ndarray]] = {}
    for name, sign in (("max", 1.0), ("min", -1.0)):
        S = sign * V
        best = S.max(axis=1)
        near = (best - gap)[:, None] <= S
        pick = np.argmax(S, axis=1)
        unique = near.sum(axis=1) == 1
        out[name] = (sign * best, combo_arr[pick], [labels[i] for i in pick], unique)
    return Envelope(out["max"][0], out["min"][0], out["max"][1], out["min"][1],
                    out["max"][2], out["min"][2], out["max"][3], out["min"][3])
