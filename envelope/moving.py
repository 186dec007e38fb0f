"""Moving loads (``concentrated`` and ``train``) in the envelopes, exact by influence lines.

A moving case holds one load item: a single point load, or point loads at fixed
offsets (a train) that may run either way, placed anywhere on its spans.  Its effect
at a point is not a multiple of a unit case: at each point, for each quantity, it has
a worst largest value W+ >= 0 and a worst least value W- <= 0 (the load placed at its
worst position for that point, or absent), found in closed form on the exact
piecewise-cubic influence lines of :mod:`envelope.influence`.  For all the points of
one call the influence lines come from one multi-right-hand-side solve; nothing is
stepped along the beam.

A combination with factor f >= 0 on a moving case then adds f W+ to its largest value
and f W- to its least, point by point (the load acts only where it makes the effect
worse, as every variable action of the rule sets); a negative factor swaps them.

How a moving case combines with the distributed load of its kind (``with_uniform``):

* ``alternative`` (the default): the moving load replaces the other cases of its kind
  (ASCE 7-22 4.4.1: the concentrated load or the uniform load, whichever produces the
  greater effect; EN 1991-1-1:2002 6.3.1.2(4)/(5): Qk is not combined with qk).  Every
  combination holding it becomes one with the moving case and none of the other
  cases of its kind, and one with them and without it; a row that loses its EN
  leading action this way is dropped (the row that the moving case leads covers it).
* ``added``: it acts together with every other case.

Units are the beam's consistent units (m, kN; ft, kip), downward loads positive.
"""

from __future__ import annotations

import dataclasses
from typing import TYPE_CHECKING

import numpy as np

from envelope import config
from envelope.combinations import combination_name
from envelope.enveloper import CaseSet, moving_factors
from envelope.loading import POINT, UnitCases
from envelope.mesh import Mesh, locate
from envelope.model import Beam, Combination, Load
from envelope.recovery import Points, make_points
from envelope.solver import Solution, solve
from envelope.values import dataclass

if TYPE_CHECKING:  # the influence lines are loaded only for a beam with moving loads
    from envelope.influence import InfluenceLines


def moving_loads(beam: Beam) -> tuple[Load, ...]:
    """The moving load items of the beam, one per moving case, in case order."""
    by_case = {ld.case: ld for ld in beam.loads if ld.is_moving}
    return tuple(by_case[c.name] for c in beam.cases if c.name in by_case)


@dataclass(frozen=True, slots=True)
class MovingEffect:
    """Worst effects of each moving case (columns, ``names``) at each row.

    ``max`` >= 0 and ``min`` <= 0 are the largest and least response of the case's
    loads (unfactored); ``x_max`` and ``x_min`` the global position of the train's
    first load (offset 0) there, and ``rev_max`` / ``rev_min`` whether the train ran
    right to left (its other loads to the left of the first).  ``unit`` is the length
    unit of the positions, for the ``_loaded`` text."""

    names: tuple[str, ...]
    trains: tuple[bool, ...]
    max: np.ndarray
    min: np.ndarray
    x_max: np.ndarray
    x_min: np.ndarray
    rev_max: np.ndarray
    rev_min: np.ndarray
    unit: str = "m"

    @property
    def n(self) -> int:
        """Number of moving cases."""
        return len(self.names)

    def rows(self, idx: np.ndarray) -> MovingEffect:
        """The same effects at the rows ``idx``."""
        return dataclasses.replace(self, **{f: getattr(self, f)[idx] for f in
                                            ("max", "min", "x_max", "x_min", "rev_max",
                                             "rev_min")})

    def negated(self) -> MovingEffect:
        """The effects on the quantity's negative (largest and least swapped)."""
        return dataclasses.replace(self, max=-self.min, min=-self.max, x_max=self.x_min,
                                   x_min=self.x_max, rev_max=self.rev_min,
                                   rev_min=self.rev_max)

    def text(self, row: int, m: int, sign: float) -> str:
        """``"Lc at x=3.20 m"``: where case ``m`` governs the max (sign +1) or min (-1)
        at ``row``; a train names its first load and says when it runs reversed."""
        at = self.x_max if sign > 0 else self.x_min
        rev = self.rev_max if sign > 0 else self.rev_min
        out = f"{self.names[m]} at x={at[row, m]:.2f} {self.unit}"
        if self.trains[m]:
            out += " (first load, reversed)" if rev[row, m] else " (first load)"
        return out


def _worst(lines: InfluenceLines, quantity: str, loads: tuple[Load, ...],
           take: np.ndarray | None, unit: str) -> MovingEffect:
    """Worst effects of every moving load on ``quantity`` of ``lines`` (rows ``take``)."""
    from envelope.influence import train_worst

    parts = []
    for ld in loads:
        p = np.array([a[0] for a in ld.axles])
        off = np.array([a[1] for a in ld.axles])
        w = train_worst(lines, quantity, p, off, np.array(ld.moving_spans))
        parts.append(w)

    def stack(field: str) -> np.ndarray:
        out = np.stack([getattr(w, field) for w in parts], axis=1)
        return out if take is None else out[take]

    return MovingEffect(tuple(ld.case for ld in loads),
                        tuple(ld.type == "train" for ld in loads),
                        stack("max"), stack("min"), stack("x_max"), stack("x_min"),
                        stack("reversed_max"), stack("reversed_min"), unit)


def point_effects(beam: Beam, points: Points, quantities: tuple[str, ...]
                  ) -> dict[str, MovingEffect]:
    """Worst effects of every moving case on each of ``quantities`` (shear, moment,
    rotation, deflection) at ``points``: one influence-line solve for all of them per
    :data:`envelope.config.MOVING_CHUNK_ROWS` points."""
    from envelope.influence import influence_lines

    loads = moving_loads(beam)
    unit = beam.units.consistent("length")
    step = config.MOVING_CHUNK_ROWS
    parts: dict[str, list[MovingEffect]] = {q: [] for q in quantities}
    for lo in range(0, max(points.n, 1), step):
        lines = influence_lines(beam, points.take(slice(lo, lo + step)), quantities)
        for q in quantities:
            parts[q].append(_worst(lines, q, loads, None, unit))
    return {q: _concat(parts[q]) for q in quantities}


def _concat(parts: list[MovingEffect]) -> MovingEffect:
    """The effects of consecutive blocks of rows as one."""
    if len(parts) == 1:
        return parts[0]
    def cat(field: str) -> np.ndarray:
        return np.concatenate([getattr(p, field) for p in parts])

    first = parts[0]
    return MovingEffect(first.names, first.trains, cat("max"), cat("min"), cat("x_max"),
                        cat("x_min"), cat("rev_max"), cat("rev_min"), first.unit)


def reaction_effects(beam: Beam, joints: np.ndarray) -> tuple[MovingEffect, MovingEffect]:
    """Worst effects of every moving case on the upward reaction and on the support
    moment (:func:`envelope.analysis.support_moments` sign: the beam's end moment at an
    end support, M(right) - M(left) at an interior one) of each joint in ``joints``."""
    from envelope.influence import InfluenceLines, influence_lines

    loads = moving_loads(beam)
    n_j = len(beam.supports)
    n_s = beam.n_spans
    lengths = beam.geometry.span_length
    # the moment just left and just right of every joint (none outside the beam)
    span = np.r_[np.arange(n_s), np.arange(n_s)]
    x_span = np.r_[np.zeros(n_s), np.asarray(lengths, dtype=float)]
    right = np.r_[np.ones(n_s, bool), np.zeros(n_s, bool)]
    order = np.lexsort((right, beam.geometry.joint_x[span] + x_span))
    pts = make_points(beam, span[order], x_span[order], right[order])
    lines = influence_lines(beam, pts, ("moment",))
    unit = beam.units.consistent("length")
    reaction = _worst(lines, "reaction", loads, np.asarray(joints), unit)
    # rows of pts: joint j right side is span j at 0; left side is span j-1 at its end
    row = np.empty(2 * n_s, dtype=np.int64)
    row[order] = np.arange(2 * n_s)
    right_of = {j: row[j] for j in range(n_s)}
    left_of = {j + 1: row[n_s + j] for j in range(n_s)}
    m = lines.coef["moment"]
    diff = np.zeros((n_j, *m.shape[1:]))
    for j in range(n_j):
        if j in right_of:
            diff[j] += m[right_of[j]]
        if j in left_of:
            diff[j] -= m[left_of[j]]
    # at the right end the end moment is M(L-) itself
    diff[n_j - 1] = m[left_of[n_j - 1]]
    moment_lines = InfluenceLines(lines.bounds, lines.span, {"moment": diff}, lines.reaction)
    support_moment = _worst(moment_lines, "moment", loads, np.asarray(joints), unit)
    return reaction, support_moment


def moment_and_reaction_effect(beam: Beam, points: Points, joint: int, weight: float
                               ) -> MovingEffect:
    """Worst effects of every moving case on the moment at ``points`` plus ``weight``
    times the reaction of ``joint`` (a bearing support's reduced moment)."""
    from envelope.influence import InfluenceLines, influence_lines

    lines = influence_lines(beam, points, ("moment",))
    both = lines.coef["moment"] + weight * lines.reaction[joint][None, :, :]
    own = InfluenceLines(lines.bounds, lines.span, {"moment": both}, lines.reaction)
    return _worst(own, "moment", moving_loads(beam), None, beam.units.consistent("length"))


def moment_functional_effect(beam: Beam, points: Points, weights: np.ndarray
                             ) -> MovingEffect:
    """Worst effects of every moving case on ``weights @ M`` (rows of a linear
    functional of the moments at ``points``, e.g. a fixed-end moment), from the same
    functional of the moment influence lines."""
    from envelope.influence import InfluenceLines, influence_lines

    lines = influence_lines(beam, points, ("moment",))
    table = np.tensordot(np.asarray(weights, dtype=float), lines.coef["moment"], axes=(1, 0))
    own = InfluenceLines(lines.bounds, lines.span, {"moment": table}, lines.reaction)
    return _worst(own, "moment", moving_loads(beam), None, beam.units.consistent("length"))


def _kinds(beam: Beam) -> dict[str, str]:
    return {c.name: c.kind for c in beam.cases}


def alternatives(beam: Beam, combos: tuple[Combination, ...]) -> tuple[Combination, ...]:
    """``combos`` with every moving case of ``with_uniform = "alternative"`` made an
    alternative to the other cases of its kind (see the module docstring).

    A combination holding such a case becomes: one without any of them (the
    distributed loads), and one per such case with it and without the other cases of
    its kind; variants that lose their leading action, that have no factor left, or
    that repeat an earlier combination of the same rule set are dropped.  Custom
    combinations are kept as given.  Names stay unique (a taken name gets its rule set
    appended)."""
    alt = [ld for ld in moving_loads(beam) if ld.with_uniform == "alternative"]
    if not alt:
        return combos
    kinds = _kinds(beam)
    moving_names = {ld.case for ld in moving_loads(beam)}
    out: list[Combination] = []
    seen: set[tuple[str, str, tuple[tuple[str, float], ...]]] = set()
    taken: set[str] = set()
    for combo in combos:
        names = {n for n, _ in combo.factors}
        present = [ld.case for ld in alt if ld.case in names]
        variants: list[Combination | None] = []
        if not present or combo.rule == "custom":
            variants.append(combo)
        else:
            drop_all = set(present)
            variants.append(_without(combo, drop_all))
            for name in present:
                same_kind = {n for n in names if kinds[n] == kinds[name] and n != name
                             and (n not in moving_names or n in drop_all)}
                variants.append(_without(combo, same_kind))
        for variant in variants:
            if variant is None:
                continue
            key = (variant.set, variant.rule, variant.factors)
            if key in seen and variant.rule != "custom":
                continue
            seen.add(key)
            name, number = variant.name, 2
            if name in taken:
                name = f"{variant.name} ({combo.rule})"
            while name in taken:
                name = f"{variant.name} ({combo.rule} {number})"
                number += 1
            taken.add(name)
            out.append(dataclasses.replace(variant, name=name))
    return tuple(out)


def _without(combo: Combination, drop: set[str]) -> Combination | None:
    """``combo`` with the cases ``drop`` left out; None when nothing is left or its
    leading action is dropped."""
    if not drop & {n for n, _ in combo.factors}:
        return combo
    if combo.leading and combo.leading in drop:
        return None
    factors = tuple((n, f) for n, f in combo.factors if n not in drop)
    if not factors:
        return None
    derivation = "; ".join(p for p in combo.derivation.split("; ")
                           if p.split(":", 1)[0] not in drop) if combo.derivation else ""
    name = combination_name(factors) if combo.rule != "custom" else combo.name
    return dataclasses.replace(combo, name=name, factors=factors,
                               optional=frozenset(combo.optional) - drop,
                               derivation=derivation)


# --------------------------------------------------------------------------
# The moving loads placed where they govern, as ordinary unit cases
# --------------------------------------------------------------------------

#: One moving case placed: its index in ``beam.cases`` and its loads (P unfactored,
#: global x) where they stand.
Placed = tuple[int, tuple[tuple[float, float], ...]]


def placements(beam: Beam, cs: CaseSet, col: np.ndarray, effect: MovingEffect
               ) -> list[list[tuple[float, Placed]]]:
    """Per row: each moving case that acts in the row's column ``col[row]``, with its
    factor there, placed where it gives that column's largest value (``effect`` of the
    quantity maximised).  A train's loads that fall off its spans are left out, as the
    influence lines leave them (they act on nothing)."""
    by_name = {ld.case: ld for ld in moving_loads(beam)}
    case_index = {c.name: i for i, c in enumerate(beam.cases)}
    joint_x = np.asarray(beam.joint_x)
    F = moving_factors(cs, effect.names)[:, col].T  # rows x moving cases
    out: list[list[tuple[float, Placed]]] = []
    for row in range(col.size):
        items: list[tuple[float, Placed]] = []
        for m, name in enumerate(effect.names):
            f = float(F[row, m])
            use_max = f > 0.0
            value = effect.max[row, m] if use_max else effect.min[row, m]
            if f == 0.0 or value == 0.0:
                continue
            x = float((effect.x_max if use_max else effect.x_min)[row, m])
            rev = bool((effect.rev_max if use_max else effect.rev_min)[row, m])
            ld = by_name[name]
            loads = []
            for p, off in ld.axles:
                at = x - off if rev else x + off
                if any(joint_x[j] <= at <= joint_x[j + 1] for j in ld.moving_spans):
                    loads.append((p, at))
            if loads:
                items.append((f, (case_index[name], tuple(loads))))
        out.append(items)
    return out


def with_placed(beam: Beam, mesh: Mesh, units: UnitCases, sol: Solution,
                placed: list[Placed]) -> tuple[UnitCases, Solution, np.ndarray]:
    """``units`` and ``sol`` with one more unit case per distinct placed moving case (its
    point loads at their positions, of its load case; one solve for all of them), and
    the index of the unit case of each of ``placed``."""
    distinct: dict[Placed, int] = {}
    index = np.zeros(len(placed), dtype=np.int64)
    for i, p in enumerate(placed):
        index[i] = units.n_units + distinct.setdefault(p, len(distinct))
    if not distinct:
        return units, sol, index
    joint_x = np.asarray(beam.joint_x)
    unit, p_val, x_val = [], [], []
    first_case = np.array([p[0] for p in distinct], dtype=np.int64)
    for k, p in enumerate(distinct):
        for force, at in p[1]:
            unit.append(k)
            p_val.append(force)
            x_val.append(at)
    xs = np.asarray(x_val)
    span = np.clip(np.searchsorted(joint_x, xs, side="right") - 1, 0, beam.n_spans - 1)
    x_span = np.clip(xs - joint_x[span], 0.0, np.asarray(beam.geometry.span_length)[span])
    elem = locate(mesh, span, x_span, np.ones(span.shape, dtype=bool))
    a = x_span - mesh.start[elem]
    n_new = len(distinct)
    extra = UnitCases(
        case=first_case, cell=np.zeros(n_new, dtype=np.int64),
        item_unit=np.asarray(unit, dtype=np.int64), item_elem=elem,
        item_kind=np.full(elem.size, POINT, dtype=np.int64), item_a=a, item_b=a.copy(),
        item_wa=np.zeros(elem.size), item_wb=np.zeros(elem.size),
        item_p=np.asarray(p_val), elem_first=np.zeros(0, dtype=np.int64))
    order = np.argsort(np.r_[units.item_elem, extra.item_elem], kind="stable")

    def cat(field: str, shift: int = 0) -> np.ndarray:
        return np.r_[getattr(units, field), getattr(extra, field) + shift][order]

    item_elem = cat("item_elem")
    settlement = (None if units.settlement is None else
                  np.c_[units.settlement, np.zeros((units.settlement.shape[0], n_new))])
    merged = UnitCases(
        case=np.r_[units.case, extra.case], cell=np.r_[units.cell, extra.cell],
        item_unit=cat("item_unit", units.n_units), item_elem=item_elem,
        item_kind=cat("item_kind"), item_a=cat("item_a"), item_b=cat("item_b"),
        item_wa=cat("item_wa"), item_wb=cat("item_wb"), item_p=cat("item_p"),
        elem_first=np.searchsorted(item_elem, np.arange(mesh.n_elements + 1)),
        settlement=settlement)
    srt = np.argsort(elem, kind="stable")
    own = UnitCases(
        case=extra.case, cell=extra.cell, item_unit=extra.item_unit[srt],
        item_elem=elem[srt], item_kind=extra.item_kind, item_a=a[srt], item_b=a[srt],
        item_wa=extra.item_wa, item_wb=extra.item_wb, item_p=extra.item_p[srt],
        elem_first=np.searchsorted(elem[srt], np.arange(mesh.n_elements + 1)))
    new = solve(mesh, beam.supports, own, beam.source)
    def joined(field: str) -> np.ndarray:
        return np.c_[getattr(sol, field), getattr(new, field)]

    both = Solution(joined("V0"), joined("M0"), joined("theta1"), joined("v1"),
                    joined("reaction"), joined("reaction_moment"), sol.condition)
    return merged, both, index
