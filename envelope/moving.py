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
from dataclasses import dataclass

import numpy as np

from envelope.combinations import combination_name
from envelope.influence import InfluenceLines, influence_lines, train_worst
from envelope.model import Beam, Combination, Load
from envelope.recovery import Points, make_points


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
    rotation, deflection) at ``points``: one influence-line solve for all of them."""
    loads = moving_loads(beam)
    lines = influence_lines(beam, points)
    unit = beam.units.consistent("length")
    return {q: _worst(lines, q, loads, None, unit) for q in quantities}


def reaction_effects(beam: Beam, joints: np.ndarray) -> tuple[MovingEffect, MovingEffect]:
    """Worst effects of every moving case on the upward reaction and on the support
    moment (:func:`envelope.analysis.support_moments` sign: the beam's end moment at an
    end support, M(right) - M(left) at an interior one) of each joint in ``joints``."""
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
    lines = influence_lines(beam, pts)
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


def _kinds(beam: Beam) -> dict[str, str]:
    return {c.name: c.kind for c in beam.cases}


def alternatives(beam: Beam, combos: tuple[Combination, ...]) -> tuple[Combination, ...]:
    """``combos`` with every moving case of ``with_uniform = "alternative"`` made an
    alternative to the other cases of its kind (see the module docstring).

    A combination holding such a case becomes: one without any of them (the
    distributed loads), and one per such case with it and without the other cases of
    its kind; variants that lose their leading action, that have no factor left, or
    that repeat an earlier combination of the same rule set are dropped.  Names stay
    unique (a taken name gets the moving case appended)."""
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
        variants: list[tuple[Combination | None, str]] = []
        if not present or combo.rule == "custom":
            variants.append((combo, ""))
        else:
            drop_all = set(present)
            variants.append((_without(combo, drop_all), ""))
            for name in present:
                same_kind = {n for n in names if kinds[n] == kinds[name] and n != name
                             and (n not in moving_names or n in drop_all)}
                variants.append((_without(combo, same_kind), name))
        for variant, moving in variants:
            if variant is None:
                continue
            key = (variant.set, variant.rule, variant.factors)
            if key in seen:
                continue
            seen.add(key)
            name = variant.name
            if name in taken:
                name = f"{name} ({moving or 'distributed'})"
            while name in taken:
                name += "'"
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
