"""Engine core against SymPy's beam module on seeded random continuous beams.

SymPy (``sympy.physics.continuum_mechanics.beam.Beam``) is an independent solver:
it writes the load as singularity functions, integrates it exactly and solves the
reactions and integration constants from the support conditions, all in rational
arithmetic.  Each random beam has 2-4 spans of 2-9 m (half-metre steps), pinned
supports, sometimes a fixed end or an overhang (a last or first span whose outer
joint is free), constant EI, and several loads of mixed types: uniform on a whole
span or part of one, linear (trapezoidal), point loads and point moments.  Inputs
are on a quarter-metre grid with binary-fraction magnitudes, so the floats in the
case file and SymPy's rationals are the same numbers.

Sign conventions of the SymPy version used here (established by
:func:`test_sympy_sign_mapping` against closed forms derived by statics, so a change
in SymPy shows up there first):

* ``apply_load(value, at, order)`` with positive ``value`` is DOWNWARD for orders
  -1, 0, 1 (a reaction symbol solved as -3 is an upward 3);
* a point moment (order -2) with positive ``value`` is COUNTER-clockwise (it
  lifts the left support of a simple span);
* ``shear_force()`` is -integral(load): the sum of upward forces left of x;
  ``bending_moment()`` is sagging positive; ``deflection()`` is downward positive and
  ``slope()`` its derivative.

Mapping to the engine (case-format contract conventions):

* engine load w, P (downward positive) -> SymPy ``+w``, ``+P``;
* engine moment M (clockwise positive) -> SymPy ``-M`` at order -2;
* engine reaction (upward positive) = -(SymPy reaction load);
* engine support moment reaction (counter-clockwise positive, the solver's convention)
  = +(SymPy reaction moment);
* shear, moment, rotation, deflection: the same signs.

Tolerance: 1e-7 relative, with an absolute floor of 1e-10 times the largest value of
that quantity at the beam's check points (a point near a zero of the curve cannot
carry more significant digits than the floats along it).
"""

from __future__ import annotations

import random
from dataclasses import dataclass, field
from fractions import Fraction

import numpy as np
import pytest
import sympy as sp
from sympy.physics.continuum_mechanics.beam import Beam

from beams import beam_text, case_reaction_moments, case_reactions, responses, solve_text
from tolerances import SMALL_SOLVE

REL = 1e-7
FLOOR = 1e-10
N_BEAMS = 60
#: Check points per span as fractions of its length: never on the quarter-metre load
#: grid for half-metre span lengths (13 m / 200 = k/4 has no solution for m < 50).
FRACTIONS = (Fraction(13, 100), Fraction(41, 100), Fraction(77, 100), Fraction(97, 100))

@dataclass
class RandomBeam:
    """One random beam: spans (m), support types per joint, loads (engine conventions,
    span-local positions, span 0-based) and EI (kN*m^2)."""

    lengths: list[Fraction]
    supports: list[str]
    ei: Fraction
    loads: list[dict] = field(default_factory=list)

    @property
    def joints(self) -> list[Fraction]:
        out = [Fraction(0)]
        for length in self.lengths:
            out.append(out[-1] + length)
        return out


def quarter(rng: random.Random, lo: Fraction, hi: Fraction) -> Fraction:
    """A quarter-metre grid point in [lo, hi]."""
    return Fraction(rng.randint(int(lo * 4), int(hi * 4)), 4)


def magnitude(rng: random.Random, lo: int, hi: int) -> Fraction:
    """A value in [lo, hi] in steps of 1/4 (exact in binary floating point)."""
    return Fraction(rng.randint(lo * 4, hi * 4), 4)


def random_beam(seed: int) -> RandomBeam:
    rng = random.Random(seed)
    n = rng.randint(2, 4)
    lengths = [Fraction(rng.randint(4, 18), 2) for _ in range(n)]
    supports = ["pinned"] * (n + 1)
    variant = rng.choice(["pinned", "pinned", "fixed_left", "fixed_right",
                          "overhang_right", "overhang_left"])
    if variant == "fixed_left":
        supports[0] = "fixed"
    elif variant == "fixed_right":
        supports[-1] = "fixed"
    elif variant == "overhang_right":
        supports[-1] = "free"
        lengths[-1] = Fraction(rng.randint(4, 8), 2)  # 2-4 m overhang
    elif variant == "overhang_left":
        supports[0] = "free"
        lengths[0] = Fraction(rng.randint(4, 8), 2)
    beam = RandomBeam(lengths, supports, ei=Fraction(rng.randint(1, 40) * 25, 4))
    kinds = ["uniform", "partial", "linear", "point", "moment"]
    chosen = kinds + [rng.choice(kinds) for _ in range(rng.randint(0, 3))]
    for kind in chosen:
        j = rng.randrange(n)
        length = lengths[j]
        if kind == "uniform":
            beam.loads.append({"type": "uniform", "span": j, "w": magnitude(rng, 1, 12),
                               "start": Fraction(0), "end": length})
        elif kind in ("partial", "linear"):
            a = quarter(rng, Fraction(0), length - Fraction(1, 2))
            b = quarter(rng, a + Fraction(1, 4), length)
            if kind == "partial":
                beam.loads.append({"type": "uniform", "span": j, "w": magnitude(rng, 1, 12),
                                   "start": a, "end": b})
            else:
                beam.loads.append({"type": "linear", "span": j, "w_start": magnitude(rng, 0, 10),
                                   "w_end": magnitude(rng, 0, 10), "start": a, "end": b})
        elif kind == "point":
            beam.loads.append({"type": "point", "span": j, "P": magnitude(rng, 2, 40),
                               "at": quarter(rng, Fraction(1, 4), length - Fraction(1, 4))})
        else:
            beam.loads.append({"type": "moment", "span": j,
                               "M": magnitude(rng, -30, 30) or Fraction(5),
                               "at": quarter(rng, Fraction(1, 4), length - Fraction(1, 4))})
    return beam


# ---------------------------------------------------------------------------
# The two solvers
# ---------------------------------------------------------------------------


def q(v: Fraction) -> sp.Rational:
    return sp.Rational(v.numerator, v.denominator)


def engine_text(beam: RandomBeam) -> str:
    loads = []
    for ld in beam.loads:
        item = {k: float(v) for k, v in ld.items() if k not in ("type", "span")}
        loads.append({"type": ld["type"], "spans": ld["span"] + 1, **item})
    section = {"E": "1 kN/m^2", "I": f"{float(beam.ei)!r} m^4"}
    return beam_text([float(v) for v in beam.lengths], beam.supports, loads, section=section)


@dataclass
class SympySolution:
    reactions: dict[int, sp.Rational]  # joint -> upward force (engine sign)
    moments: dict[int, sp.Rational]  # fixed joint -> counter-clockwise moment on the beam
    curves: dict[str, sp.Expr]  # shear, moment, rotation, deflection in x (engine signs)
    x: sp.Symbol


def sympy_solve(beam: RandomBeam) -> SympySolution:
    """Solve ``beam`` with SymPy's Beam (mapping in the module docstring)."""
    joints = beam.joints
    b = Beam(q(joints[-1]), 1, q(beam.ei))
    forces: dict[int, sp.Symbol] = {}
    moments: dict[int, sp.Symbol] = {}
    for j, kind in enumerate(beam.supports):
        if kind == "pinned":
            forces[j] = b.apply_support(q(joints[j]), "pin")
        elif kind == "fixed":
            forces[j], moments[j] = b.apply_support(q(joints[j]), "fixed")
    for ld in beam.loads:
        x0 = joints[ld["span"]]
        if ld["type"] == "point":
            b.apply_load(q(ld["P"]), q(x0 + ld["at"]), -1)
        elif ld["type"] == "moment":
            b.apply_load(-q(ld["M"]), q(x0 + ld["at"]), -2)  # clockwise -> SymPy sign
        else:
            a, e = q(x0 + ld["start"]), q(x0 + ld["end"])
            w1 = q(ld.get("w", ld.get("w_start")))
            w2 = q(ld.get("w", ld.get("w_end")))
            if w1:
                b.apply_load(w1, a, 0, end=e)
            if w2 != w1:
                b.apply_load((w2 - w1) / (e - a), a, 1, end=e)
    b.solve_for_reaction_loads(*forces.values(), *moments.values())
    sol = b.reaction_loads
    curves = {"shear": b.shear_force(), "moment": b.bending_moment(),
              "rotation": b.slope(), "deflection": b.deflection()}
    return SympySolution({j: -sol[s] for j, s in forces.items()},
                         {j: sol[s] for j, s in moments.items()}, curves, b.variable)


def close(got: np.ndarray, expected: np.ndarray, what: str) -> None:
    expected = np.asarray(expected, dtype=float)
    floor = FLOOR * float(np.max(np.abs(expected))) if expected.size else 0.0
    assert got == pytest.approx(expected, rel=REL, abs=floor), what


# ---------------------------------------------------------------------------
# Tests
# ---------------------------------------------------------------------------


def test_sympy_sign_mapping() -> None:
    """SymPy's conventions as the module docstring states, on a simple span L = 4,
    EI = 1 (closed forms derived by statics and AISC Table 3-23 [D]): P = 6 down at the
    centre gives upward reactions 3 (SymPy -3), V = +3 left of the load, M = PL/4 = 6,
    deflection PL^3/48EI = 8 downward, slope +PL^2/16EI = 4.5 at x = 1 (rising
    deflection curve).  A SymPy moment +8 at x = 1 gives SymPy reactions -2 at A and +2
    at B, i.e. 2 up at A and 2 down at B: by statics that is a counter-clockwise couple
    (a clockwise couple M gives R_A = -M/L), so the engine's clockwise M = -8 must give
    the same reactions."""
    x = sp.Symbol("x")
    b = Beam(4, 1, 1, variable=x)
    r0, r4 = b.apply_support(0, "pin"), b.apply_support(4, "pin")
    b.apply_load(6, 2, -1)
    b.solve_for_reaction_loads(r0, r4)
    assert b.reaction_loads == {r0: -3, r4: -3}
    assert b.shear_force().subs(x, 1) == 3
    assert b.bending_moment().subs(x, 2) == 6
    assert b.deflection().subs(x, 2) == 8
    assert b.slope().subs(x, 1) == sp.Rational(9, 2)
    b = Beam(4, 1, 1, variable=x)
    r0, r4 = b.apply_support(0, "pin"), b.apply_support(4, "pin")
    b.apply_load(8, 1, -2)
    b.solve_for_reaction_loads(r0, r4)
    assert b.reaction_loads == {r0: -2, r4: 2}  # upward 2 at A, downward 2 at B
    # The engine, clockwise M = -8 at x = 1: R_A = -M/L = +2 (statics)
    text = beam_text([4.0], ["pinned", "pinned"],
                     [{"type": "moment", "spans": 1, "M": -8.0, "at": 1.0}])
    assert case_reactions(solve_text(text))[:, 0] == pytest.approx([2.0, -2.0], rel=SMALL_SOLVE)


@pytest.mark.slow  # about half a second of SymPy per beam
@pytest.mark.parametrize("seed", range(N_BEAMS))
def test_random_beam_against_sympy(seed: int) -> None:
    """Reactions (and fixed-end moments), and shear, moment, rotation and deflection at
    four points per span: engine against SymPy's Beam (independent exact solver)."""
    beam = random_beam(seed)
    ref = sympy_solve(beam)
    solved = solve_text(engine_text(beam))

    restrained = [j for j, kind in enumerate(beam.supports) if kind != "free"]
    got_r = case_reactions(solved)[:, 0]
    close(got_r[restrained], [float(ref.reactions[j]) for j in restrained], "reactions")
    free = [j for j, kind in enumerate(beam.supports) if kind == "free"]
    assert np.all(got_r[free] == 0.0)  # a free joint carries nothing (statics)
    if ref.moments:
        fixed = list(ref.moments)
        close(case_reaction_moments(solved)[fixed, 0], [float(ref.moments[j]) for j in fixed],
              "fixed-end moments")

    span_idx, x_local, x_global = [], [], []
    for j, length in enumerate(beam.lengths):
        for f in FRACTIONS:
            span_idx.append(j)
            x_local.append(float(f * length))
            x_global.append(q(beam.joints[j] + f * length))
    got = responses(solved, span_idx, x_local)
    for name, curve in ref.curves.items():
        expected = [float(curve.subs(ref.x, xg)) for xg in x_global]
        close(getattr(got, name)[:, 0], expected, f"{name} (seed {seed})")
