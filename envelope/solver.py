"""Direct stiffness solution of every unit case at once.

Euler-Bernoulli elements, two degrees of freedom per node (deflection up,
rotation counter-clockwise).  All element matrices are assembled in one
vectorised step into upper banded storage (three super-diagonals), rigid
restraints become identity rows, springs add to the diagonal, the matrix is
factorised once by banded Cholesky (:mod:`envelope.banded`) and every unit case is a column of one
multi-right-hand-side solve.  Each solve is checked: the residual at every free
degree of freedom, and statics (vertical forces and moments about the left end)
against :data:`envelope.config.STATICS_RTOL`.  A failed check raises
:class:`envelope.errors.StaticsError`; it never returns a result.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from envelope import config
from envelope.banded import NotPositiveDefinite, cholesky_upper, solve_upper
from envelope.errors import StaticsError, UnstableBeamError
from envelope.loading import UnitCases
from envelope.loadterms import load_terms
from envelope.mesh import Mesh
from envelope.model import Support
from envelope.values import dataclass


@dataclass(frozen=True, slots=True)
class Solution:
    """Element start states and support reactions of every unit case.

    Arrays are (n_elements, n_units) unless noted: ``V0`` shear and ``M0``
    sagging moment just right of each element's left end, ``theta1`` rotation
    (counter-clockwise, rad) and ``v1`` deflection (upward) there.
    ``reaction`` and ``reaction_moment`` are (n_joints, n_units): upward force
    and counter-clockwise moment on the beam from each support.  ``state``, where
    given, is (4, n_elements, n_units): V0, M0, theta1, v1 packed in one array (the
    four are views of it), as the recovery kernel reads them.
    """

    V0: np.ndarray
    M0: np.ndarray
    theta1: np.ndarray
    v1: np.ndarray
    reaction: np.ndarray
    reaction_moment: np.ndarray
    condition: float = 1.0  # estimate of the stiffness matrix's condition number
    state: np.ndarray | None = None

    @property
    def warnings(self) -> tuple[str, ...]:
        """Warnings about the solve (a badly conditioned stiffness matrix)."""
        if self.condition > config.CONDITION_WARN:
            return (f"the stiffness matrix is badly conditioned (condition estimate "
                    f"{self.condition:.2g}): a near-mechanism, or stiffnesses of very "
                    f"different orders; check soft springs and very flexible parts",)
        return ()


def element_stiffness(length: np.ndarray, EI: np.ndarray) -> np.ndarray:
    """(n, 4, 4) Euler-Bernoulli stiffness matrices, dofs (v1, th1, v2, th2)."""
    l = length[:, None, None]  # noqa: E741
    k = np.empty((length.size, 4, 4))
    base = np.array([[12, 6, -12, 6], [6, 4, -6, 2], [-12, -6, 12, -6], [6, 2, -6, 4]], float)
    powers = np.array([[0, 1, 0, 1], [1, 2, 1, 2], [0, 1, 0, 1], [1, 2, 1, 2]])
    k[:] = base
    k *= l ** powers
    k *= (EI / length**3)[:, None, None]
    return k


def element_end_forces(length: np.ndarray, EI: np.ndarray, de: np.ndarray) -> np.ndarray:
    """k_e d_e for every element, (n_e, 4, n_units), from the deformations.

    The same algebra as the stiffness matrix, ordered so that rigid-body motion cancels
    before anything is multiplied by a stiffness: the chord rotation psi = (v2 - v1)/l
    and the end rotations relative to the chord give the end moments
    M1 = EI/l (4 phi1 + 2 phi2), M2 = EI/l (2 phi1 + 4 phi2) and the shear (M1 + M2)/l.
    For a very short, stiff element this keeps the end forces accurate where the
    products k_e d_e would cancel terms many orders larger than the result."""
    l = length[:, None]  # noqa: E741
    k = (EI / length)[:, None]
    psi = (de[:, 2] - de[:, 0]) / l
    phi1 = de[:, 1] - psi
    phi2 = de[:, 3] - psi
    m1 = k * (4.0 * phi1 + 2.0 * phi2)
    m2 = k * (2.0 * phi1 + 4.0 * phi2)
    shear = (m1 + m2) / l
    return np.stack([shear, m1, -shear, m2], axis=1)


def _two_sum(a: np.ndarray, b: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Knuth's TwoSum: a + b = s + e exactly, elementwise."""
    s = a + b
    bb = s - a
    return s, (a - (s - bb)) + (b - bb)


def _split(a: np.ndarray | np.float64) -> tuple[Any, Any]:
    """Veltkamp's split: a = hi + lo with 26-bit halves, so products of halves are exact."""
    c = 134217729.0 * a  # 2**27 + 1
    hi = c - (c - a)
    return hi, a - hi


def _two_prod(a: np.ndarray | np.float64, b: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Dekker's TwoProduct: a * b = p + e exactly, elementwise."""
    p = a * b
    ah, al = _split(a)
    bh, bl = _split(b)
    return p, ((ah * bh - p) + ah * bl + al * bh) + al * bl


def _exact_combination(terms: list[tuple[float, np.ndarray, np.ndarray]]) -> np.ndarray:
    """Sum of c * (hi + lo) over ``terms``, rounded once: error-free products and sums
    of the leading parts, so that the result is accurate relative to itself however
    much the terms cancel (to about eps**2 of the largest term)."""
    total = np.zeros(np.broadcast_shapes(*(h.shape for _, h, _ in terms)))
    tail = np.zeros_like(total)
    for c, hi, lo in terms:
        p, q = _two_prod(np.float64(c), hi)
        total, e = _two_sum(total, p)
        tail += e + q + c * lo
    return total + tail


def element_end_forces_exact(length: np.ndarray, EI: np.ndarray,
                             de: np.ndarray) -> np.ndarray:
    """:func:`element_end_forces` with the chord algebra carried to twice the working
    precision: for the float64 deformations ``de`` as they stand, the end forces are
    accurate relative to themselves.

    Written over the chord Dv = v2 - v1 (exact as a sum of two floats) and the products
    l*theta (exact as a sum of two floats): M1 = EI/l^2 (4 l th1 + 2 l th2 - 6 Dv),
    M2 = EI/l^2 (2 l th1 + 4 l th2 - 6 Dv), V = 6 EI/l^3 (l th1 + l th2 - 2 Dv).  On a
    short, stiff element these brackets are many orders smaller than their terms (the
    rotations and the deflections of the whole beam), which in plain float64 leaves
    only the last few digits of the end forces' true value; the shear divides them by
    l once more."""
    l = np.broadcast_to(length[:, None], de[:, 0].shape)  # noqa: E741
    dv, dv_e = _two_sum(de[:, 2], -de[:, 0])
    a1, a1_e = _two_prod(l, de[:, 1])
    a2, a2_e = _two_prod(l, de[:, 3])
    b1 = _exact_combination([(4.0, a1, a1_e), (2.0, a2, a2_e), (-6.0, dv, dv_e)])
    b2 = _exact_combination([(2.0, a1, a1_e), (4.0, a2, a2_e), (-6.0, dv, dv_e)])
    bv = _exact_combination([(1.0, a1, a1_e), (1.0, a2, a2_e), (-2.0, dv, dv_e)])
    k2 = (EI / length**2)[:, None]
    m1 = k2 * b1
    m2 = k2 * b2
    shear = (6.0 * EI / length**3)[:, None] * bv
    return np.stack([shear, m1, -shear, m2], axis=1)


def condensed(k: np.ndarray) -> np.ndarray:
    """(n, 4, 4) stiffness of elements whose right-end rotation is released (a hinge):
    the right-end rotation condensed out, K - K[:, 3] K[3, :] / K[3, 3]; its row and
    column are zero, so the node's rotation takes no stiffness from the element."""
    return k - k[:, :, 3, None] * k[:, None, 3, :] / k[:, 3, 3, None, None]


def free_end_rotation(mesh: Mesh, released: np.ndarray, de: np.ndarray) -> np.ndarray:
    """``de`` with the right-end rotation of each released element replaced by the
    element's own rotation there: with end moment M2 = EI/l^2 (2 l th1 + 4 l th2 - 6 Dv)
    from the deformations, M2 = 0 gives th2 = (6 Dv / l - 2 th1) / 4."""
    out = de.copy()
    l = mesh.length[released][:, None]  # noqa: E741
    sub = de[released]
    out[released, 3] = (6.0 * (sub[:, 2] - sub[:, 0]) / l - 2.0 * sub[:, 1]) / 4.0
    return out


def fixed_end_terms(mesh: Mesh, units: UnitCases) -> tuple[np.ndarray, ...]:
    """(Q, m, m1, m2) at each element's right end, per element and unit: (n_elem, n_units)."""
    n_e, n_u = mesh.n_elements, units.n_units
    s = mesh.length[units.item_elem]
    terms = load_terms(units.item_kind, units.item_a, units.item_b, units.item_wa,
                       units.item_wb, units.item_p, s, np.ones(s.shape, dtype=bool))
    flat = units.item_elem * n_u + units.item_unit
    return tuple(np.bincount(flat, weights=t, minlength=n_e * n_u).reshape(n_e, n_u)
                 for t in terms)


def _settlements(mesh: Mesh, units: UnitCases, rigid: np.ndarray,
                 spring: np.ndarray) -> tuple[np.ndarray | None, np.ndarray]:
    """(n_dof, n_units) prescribed displacements of rigid supports and base displacements
    of springs (upward, as the solver's degrees of freedom), from the unit cases'
    downward settlements; (None, zeros) without settlement."""
    n_dof = 2 * mesh.n_nodes
    if units.settlement is None:
        return None, np.zeros((1, 1))
    moved = np.zeros((n_dof, units.n_units))
    moved[2 * mesh.joint_node] = -units.settlement
    return np.where(rigid[:, None], moved, 0.0), np.where(spring[:, None] > 0.0, moved, 0.0)


def _restraints(mesh: Mesh, supports: tuple[Support, ...]) -> tuple[np.ndarray, np.ndarray]:
    """Per degree of freedom: rigid mask and finite spring stiffness."""
    n_dof = 2 * mesh.n_nodes
    rigid = np.zeros(n_dof, dtype=bool)
    spring = np.zeros(n_dof)
    for node, sup in zip(mesh.joint_node, supports, strict=True):
        for dof, k in ((2 * node, sup.k_vertical), (2 * node + 1, sup.k_rotation)):
            if math.isinf(k):
                rigid[dof] = True
            else:
                spring[dof] = k
    return rigid, spring


def solve(mesh: Mesh, supports: tuple[Support, ...], units: UnitCases,
          source: str = "") -> Solution:
    """Assemble, factorise, solve every unit case, recover element start states.

    The unit cases are solved in blocks of columns (at most
    :data:`envelope.config.SOLVE_CHUNK_VALUES` elements x unit cases each, at least
    :data:`envelope.config.SOLVE_CHUNK_UNITS` unit cases), so that the
    (elements x 4 x unit cases) working arrays stay bounded as the beam grows; every
    step is column by column, so a block's columns are the same, bit for bit, as when
    all unit cases are solved at once."""
    n_u = units.n_units
    step = max(1, config.SOLVE_CHUNK_UNITS,
               config.SOLVE_CHUNK_VALUES // max(mesh.n_elements, 1))
    n_e, n_j = mesh.n_elements, mesh.joint_node.size
    # the element states packed in one array (see Solution.state); copies, so that no
    # view keeps a block's (elements x 4 x unit cases) working arrays alive
    state = np.empty((4, n_e, n_u))
    out = dict(zip(_STATES, state, strict=True))
    out |= {name: np.empty((n_j, n_u)) for name in ("reaction", "reaction_moment")}
    condition = 1.0
    factor: dict[str, np.ndarray] = {}
    for lo in range(0, n_u, step):
        hi = min(n_u, lo + step)
        block = _solve_block(mesh, supports, unit_block(units, lo, hi), source, lo, factor)
        for name, arr in out.items():
            arr[:, lo:hi] = getattr(block, name)
        condition = block.condition  # the same factor for every block
    return Solution(**out, condition=condition, state=state)


#: The element start states in the order of ``Solution.state``.
_STATES = ("V0", "M0", "theta1", "v1")


def unit_block(units: UnitCases, lo: int, hi: int) -> UnitCases:
    """The unit cases ``lo:hi`` alone, renumbered from 0, with their load items in the
    same order (still sorted by element)."""
    keep = (units.item_unit >= lo) & (units.item_unit < hi)
    elem = units.item_elem[keep]
    n_e = units.elem_first.size - 1
    return UnitCases(
        case=units.case[lo:hi], cell=units.cell[lo:hi],
        item_unit=units.item_unit[keep] - lo, item_elem=elem,
        item_kind=units.item_kind[keep], item_a=units.item_a[keep],
        item_b=units.item_b[keep], item_wa=units.item_wa[keep],
        item_wb=units.item_wb[keep], item_p=units.item_p[keep],
        elem_first=np.searchsorted(elem, np.arange(n_e + 1), side="left"),
        settlement=None if units.settlement is None else units.settlement[:, lo:hi])


def _solve_block(mesh: Mesh, supports: tuple[Support, ...], units: UnitCases,
                 source: str = "", first_unit: int = 0,
                 factor: dict[str, np.ndarray] | None = None) -> Solution:
    """:func:`solve` of the unit cases ``units`` in one block (``first_unit``: the number
    of the block's first unit case, for messages; ``factor``: shared by the blocks of
    one solve, holds the stiffness matrix's factor once made)."""
    factor = {} if factor is None else factor
    n_e = mesh.n_elements
    n_dof = 2 * mesh.n_nodes
    ke = element_stiffness(mesh.length, mesh.EI)
    released = mesh.released
    if released is not None:
        ke[released] = condensed(ke[released])

    # upper banded storage: ab[3 + i - j, j] = K[i, j]
    ab = np.zeros((4, n_dof))
    base = 2 * np.arange(n_e)
    for pi, qi in _UPPER_4:
        # one band entry per element for each (p, q): no repeated index within a step,
        # and at most two terms meet in an entry (so the order does not matter)
        ab[3 + pi - qi, base + qi] += ke[:, pi, qi]
    rigid, spring = _restraints(mesh, supports)
    ab[3] += spring
    scale = float(ab[3].max())
    for dof in np.flatnonzero(rigid).tolist():
        for off in range(4):
            if dof + off < n_dof:
                ab[3 - off, dof + off] = 0.0  # row dof, columns dof+off
            if off and dof - off >= 0:
                ab[3 - off, dof] = 0.0  # column dof, rows dof-off
        ab[3, dof] = scale

    # fixed-end forces on each element from its nodes (up, ccw)
    Ql, ml, m1l, m2l = fixed_end_terms(mesh, units)
    l = mesh.length[:, None]  # noqa: E741
    V0F = 6.0 * m1l / l**2 - 12.0 * m2l / l**3
    M0F = -2.0 * m1l / l + 6.0 * m2l / l**2
    fF = np.stack([V0F, -M0F, Ql - V0F, M0F + V0F * l - ml], axis=1)  # (n_e, 4, n_u)
    if released is not None:
        # a hinge at the right end: the end moment is zero, carried by the other forces
        # (the fixed-end forces of a propped cantilever)
        k = element_stiffness(mesh.length[released], mesh.EI[released])
        fF[released] -= k[:, :, 3, None] / k[:, 3, 3, None, None] * fF[released][:, 3:4, :]

    def gather(x: np.ndarray) -> np.ndarray:
        return x[base[:, None] + np.arange(4)]  # (n_e, 4, n_u)

    def own(de: np.ndarray) -> np.ndarray:
        """The element's own end rotations: at a hinge, the one that makes the end moment
        of the deformation zero (the condensed fixed-end forces carry none)."""
        return de if released is None else free_end_rotation(mesh, released, de)

    # support settlement: a rigid support's displacement is prescribed (dp), a spring's
    # base moves (base); both enter as loads on the free degrees of freedom
    dp, spring_base = _settlements(mesh, units, rigid, spring)
    F = _node_sums(-fF, n_dof)
    if dp is not None:
        F -= _node_sums(element_end_forces(mesh.length, mesh.EI, own(gather(dp))), n_dof)
        F += spring[:, None] * spring_base
    F[rigid] = 0.0

    try:
        chol = factor.get("chol")  # the same matrix for every block: factorised once
        if chol is None:
            chol = factor["chol"] = cholesky_upper(ab)
    except NotPositiveDefinite:
        raise UnstableBeamError(source, "supports",
                                "unstable beam: the stiffness matrix is singular "
                                "(a part of the beam can move freely)") from None
    d = solve_upper(chol, F)
    pivots = chol[3]
    condition = float((pivots.max() / pivots.min()) ** 2)  # a lower bound, cheap
    d[rigid] = 0.0
    if dp is not None:
        d += dp

    # Iterative refinement with the same factor, the solution kept as d + dd: the end
    # forces of d (fixed after the first solve) are computed once to twice the working
    # precision, those of the small correction dd in plain float64, so the residual
    # stays accurate where a very short, stiff element would otherwise leave only the
    # last digits of its shear (the chord of two nearly equal deflections over l^3).
    f_d = element_end_forces_exact(mesh.length, mesh.EI, own(gather(d))) + fF
    dd = np.zeros_like(d)
    f = f_d
    node_f = _node_sums(f, n_dof)
    for _ in range(config.REFINE_STEPS):
        r = -(node_f + spring[:, None] * d + spring[:, None] * dd)
        if dp is not None:
            r += spring[:, None] * spring_base
        r[rigid] = 0.0
        if not np.any(np.abs(r) > 0.0):
            break
        dd += solve_upper(chol, r)
        dd[rigid] = 0.0
        f = f_d + element_end_forces(mesh.length, mesh.EI, own(gather(dd)))
        node_f = _node_sums(f, n_dof)
    d = d + dd
    de = gather(d)
    support_dof = np.zeros(n_dof, dtype=bool)
    support_dof[rigid] = True
    support_dof[spring > 0.0] = True
    # the scale of the forces meeting at each dof: |k_e| |d_e| + |fixed-end forces|
    bound = _node_sums(np.einsum("epq,equ->epu", np.abs(ke), np.abs(de)) + np.abs(fF), n_dof)
    try:
        _check(mesh, node_f, bound, support_dof, Ql, ml, fF, source, first_unit)
    except StaticsError:
        if condition <= config.CONDITION_BLAME:
            raise
        soft = [j + 1 for j, s in enumerate(supports) if s.kind == "spring"]
        where = f" (springs at support {', '.join(map(str, soft))})" if soft else ""
        raise UnstableBeamError(
            source, "supports",
            f"nearly unstable beam: the stiffness matrix is too badly conditioned "
            f"(condition estimate {condition:.2g}) to meet the statics check; stiffen the "
            f"softest restraint{where} or add a support") from None

    joints = mesh.joint_node
    restrained_v = support_dof[2 * joints]
    restrained_r = support_dof[2 * joints + 1]
    reaction = np.where(restrained_v[:, None], node_f[2 * joints], 0.0)
    reaction_moment = np.where(restrained_r[:, None], node_f[2 * joints + 1], 0.0)
    return Solution(
        V0=f[:, 0, :],
        M0=-f[:, 1, :],
        theta1=de[:, 1, :],
        v1=de[:, 0, :],
        reaction=reaction,
        reaction_moment=reaction_moment,
        condition=condition,
    )


#: The (row, column) pairs of a 4 x 4 matrix's upper triangle, row by row
#: (``numpy.triu_indices(4)``, made once).
_UPPER_4 = tuple((p, q) for p in range(4) for q in range(p, 4))


def _node_sums(f: np.ndarray, n_dof: int) -> np.ndarray:
    """(n_dof, n_u) sums of the element end forces ``f`` (n_e, 4, n_u) at each degree
    of freedom: element e's (v1, th1) act at dofs 2e, 2e+1 and its (v2, th2) at 2e+2,
    2e+3 (two terms a dof, so the order of the sum does not change the result)."""
    n_u = f.shape[2]
    out = np.zeros((n_dof // 2, 2, n_u))
    out[:-1] += f[:, 0:2]
    out[1:] += f[:, 2:4]
    return out.reshape(n_dof, n_u)


def _check(mesh: Mesh, node_f: np.ndarray, bound: np.ndarray, support_dof: np.ndarray,
           Ql: np.ndarray, ml: np.ndarray, fF: np.ndarray, source: str,
           first_unit: int = 0) -> None:
    """Residual at free dofs (relative to ``bound``, the sum of the magnitudes of the
    forces meeting there: the backward error of the solve) and global statics of every
    unit case, or StaticsError.  The statics are measured against the loads' own
    magnitudes: their totals per element (``Ql``, ``ml``), their fixed-end forces
    (``fF``: couples that cancel within an element still load it) and the reactions."""
    x = mesh.node_x
    xe = (mesh.x0 + mesh.length)[:, None]
    load_force = Ql.sum(axis=0)
    load_moment = (xe * Ql - ml).sum(axis=0)
    end_f = np.abs(fF[:, 0]).sum(axis=0) + np.abs(fF[:, 2]).sum(axis=0)
    end_m = np.abs(fF[:, 1]).sum(axis=0) + np.abs(fF[:, 3]).sum(axis=0)
    scale_f = np.abs(Ql).sum(axis=0) + end_f + np.abs(node_f[support_dof]).sum(axis=0)
    lever = float(x[-1]) if x[-1] > 0 else 1.0
    scale_m = scale_f * lever + np.abs(ml).sum(axis=0) + end_m
    tiny = np.finfo(float).tiny

    free = ~support_dof
    ratio = np.abs(node_f[free]) / (bound[free] + tiny)
    residual = ratio.max(axis=0, initial=0.0) if free.any() else np.zeros(1)
    if not np.all(residual <= config.RESIDUAL_RTOL):  # NaN fails too
        raise StaticsError(f"{source}: solve residual too large (relative "
                           f"{float(np.max(residual)):.3g}); result withheld")
    react_v = node_f[0::2][support_dof[0::2]]
    xv = x[support_dof[0::2]][:, None]
    react_m = node_f[1::2][support_dof[1::2]]
    sum_f = react_v.sum(axis=0)
    sum_m = (react_v * xv).sum(axis=0) + react_m.sum(axis=0)
    # written so that NaN fails
    bad_f = ~(np.abs(sum_f - load_force) <= config.STATICS_RTOL * (scale_f + tiny))
    bad_m = ~(np.abs(sum_m - load_moment) <= config.STATICS_RTOL * (scale_m + tiny))
    if np.any(bad_f | bad_m):
        u = int(np.flatnonzero(bad_f | bad_m)[0])
        what = ("reactions", sum_f[u], load_force[u]) if bad_f[u] else \
            ("reaction moments", sum_m[u], load_moment[u])
        raise StaticsError(
            f"{source}: statics check failed for unit case {u + first_unit}: {what[0]} "
            f"{what[1]:.12g} against loads {what[2]:.12g}; result withheld")
