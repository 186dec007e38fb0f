"""The per-case loop the engine is measured against: one explicit case at a time.

This is the way an engineer's own script (or a general analysis package driven one
load case at a time) gets an envelope: for every combination and every arrangement
of live load, assemble the stiffness matrix, build the load vector, solve, recover
shear, moment and deflection at the stations, and keep the running max / min.  It
is written plainly with numpy and scipy (dense matrices, one solve per case) and
shares no code with the engine: it reads the case file itself (the subset of keys
that :mod:`beams` writes: one section, pinned / fixed / free supports, uniform and
point loads, custom combinations) and uses textbook formulas (Hermite shape
functions, fixed-end actions, fixed-fixed deflection of each load).

Units are consistent SI: m, kN, kN*m, E in kN/m^2, I in m^4 (the file's MPa and
mm^4 are converted on reading).  Signs follow the case format: loads downward
positive, shear = sum of upward forces left of the point, moment sagging positive,
deflection downward positive (reported in m here).
"""

from __future__ import annotations

import tomllib
from collections.abc import Iterable, Sequence
from dataclasses import dataclass

import numpy as np
import scipy.linalg

MPA = 1000.0  # kN/m^2 per MPa
MM4 = 1e-12  # m^4 per mm^4


@dataclass
class LoopBeam:
    """The beam as plain lists, read from a case file."""

    lengths: list[float]
    EI: float  # kN*m^2, one section
    restrained: list[bool]  # per degree of freedom (v, theta per joint)
    loads: list[tuple[str, str, int, float, float]]  # (case, type, span, w or P, at)
    kinds: dict[str, str]  # case -> kind
    combinations: list[tuple[str, str, dict[str, float]]]  # (name, set, factors)


def read_beam(text: str) -> LoopBeam:
    """Read the subset of the case format written by :func:`beams.beam_toml`."""
    data = tomllib.loads(text)
    E = float(data["section"]["E"]) * MPA
    I = float(data["section"]["I"]) * MM4  # noqa: E741
    lengths = [float(s["length"]) for s in data["spans"]]
    restrained: list[bool] = []
    for sup in data["supports"]:
        kind = sup["type"]
        restrained += {"pinned": [True, False], "fixed": [True, True],
                       "free": [False, False]}[kind]
    loads = []
    for item in data["loads"]:
        spans = item["spans"]
        on = range(len(lengths)) if spans == "all" else (
            [spans - 1] if isinstance(spans, int) else [s - 1 for s in spans])
        for j in on:
            if item["type"] == "uniform":
                loads.append((item["case"], "uniform", j, float(item["w"]), 0.0))
            elif item["type"] == "point":
                loads.append((item["case"], "point", j, float(item["P"]), float(item["at"])))
            else:
                raise ValueError(f"the loop reads uniform and point loads, not {item['type']}")
    kinds = {name: c["kind"] for name, c in data["cases"].items()}
    combos = [(c["name"], c["set"], {k: float(v) for k, v in c["factors"].items()})
              for c in data["combinations"]["custom"]]
    return LoopBeam(lengths, E * I, restrained, loads, kinds, combos)


def element_stiffness(L: float, EI: float) -> np.ndarray:
    """Euler-Bernoulli beam element, dofs (v1 up, theta1 ccw, v2, theta2)."""
    return EI / L**3 * np.array([[12.0, 6 * L, -12.0, 6 * L],
                                 [6 * L, 4 * L * L, -6 * L, 2 * L * L],
                                 [-12.0, -6 * L, 12.0, -6 * L],
                                 [6 * L, 2 * L * L, -6 * L, 4 * L * L]])


def fixed_end_forces(kind: str, value: float, a: float, L: float) -> np.ndarray:
    """Forces of the fixed ends on the element (up, ccw) for a downward load."""
    if kind == "uniform":
        w = value
        return np.array([w * L / 2, w * L * L / 12, w * L / 2, -w * L * L / 12])
    P, b = value, L - a
    return np.array([P * b * b * (3 * a + b) / L**3, P * a * b * b / L**2,
                     P * a * a * (a + 3 * b) / L**3, -P * a * a * b / L**2])


def fixed_fixed_deflection(kind: str, value: float, a: float, L: float, EI: float,
                           x: np.ndarray) -> np.ndarray:
    """Downward deflection of a fixed-fixed span under one load (textbook formulas)."""
    if kind == "uniform":
        return value * x**2 * (L - x) ** 2 / (24 * EI)
    P, b = value, L - a
    left = P * b * b * x**2 * (3 * a * L - (3 * a + b) * x) / (6 * EI * L**3)
    xr = L - x
    right = P * a * a * xr**2 * (3 * b * L - (3 * b + a) * xr) / (6 * EI * L**3)
    return np.where(x <= a, left, right)


@dataclass
class Stations:
    span: np.ndarray  # 0-based
    x_span: np.ndarray
    right: np.ndarray  # right-side limit (matters only at a point load)


def solve_case(beam: LoopBeam, factors: dict[str, float], loaded: set[int],
               st: Stations) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """One explicit case: assemble, solve, recover.  Patterned (live) cases act on the
    ``loaded`` spans only; the others on every span.  Returns shear, moment and
    deflection at the stations."""
    n = len(beam.lengths)
    n_dof = 2 * (n + 1)
    K = np.zeros((n_dof, n_dof))
    F = np.zeros(n_dof)
    fef = np.zeros((n, 4))
    span_loads: list[list[tuple[str, float, float]]] = [[] for _ in range(n)]
    for j, L in enumerate(beam.lengths):
        K[2 * j:2 * j + 4, 2 * j:2 * j + 4] += element_stiffness(L, beam.EI)
    for case, kind, j, value, a in beam.loads:
        f = factors.get(case, 0.0)
        if f == 0.0 or (beam.kinds[case] == "live" and j not in loaded):
            continue
        fe = fixed_end_forces(kind, f * value, a, beam.lengths[j])
        fef[j] += fe
        F[2 * j:2 * j + 4] -= fe
        span_loads[j].append((kind, f * value, a))
    free = np.flatnonzero(~np.array(beam.restrained))
    d = np.zeros(n_dof)
    d[free] = scipy.linalg.solve(K[np.ix_(free, free)], F[free], assume_a="pos")

    shear = np.empty(st.span.size)
    moment = np.empty(st.span.size)
    defl = np.empty(st.span.size)
    for j, L in enumerate(beam.lengths):
        rows = np.flatnonzero(st.span == j)
        x = st.x_span[rows]
        de = d[2 * j:2 * j + 4]
        f = element_stiffness(L, beam.EI) @ de + fef[j]
        V = np.full(x.shape, f[0])
        M = -f[1] + f[0] * x
        xi = x / L
        v_up = ((1 - 3 * xi**2 + 2 * xi**3) * de[0] + L * (xi - 2 * xi**2 + xi**3) * de[1]
                + (3 * xi**2 - 2 * xi**3) * de[2] + L * (xi**3 - xi**2) * de[3])
        down = -v_up
        for kind, value, a in span_loads[j]:
            if kind == "uniform":
                V -= value * x
                M -= value * x**2 / 2
            else:
                past = (x > a) | ((x == a) & st.right[rows])
                V -= np.where(past, value, 0.0)
                M -= np.where(x > a, value * (x - a), 0.0)
            down += fixed_fixed_deflection(kind, value, a, L, beam.EI, x)
        shear[rows], moment[rows], defl[rows] = V, M, down
    return shear, moment, defl


@dataclass
class LoopEnvelope:
    """Running max / min over the cases run, per station (strength: shear and moment;
    service: deflection)."""

    moment_max: np.ndarray
    moment_min: np.ndarray
    shear_max: np.ndarray
    shear_min: np.ndarray
    deflection_max: np.ndarray
    deflection_min: np.ndarray
    n_cases: int


def run_cases(beam: LoopBeam, st: Stations,
              cases: Iterable[tuple[int, Sequence[int]]]) -> LoopEnvelope:
    """Run each (combination index, loaded spans) case one at a time, keeping the
    envelope."""
    n = st.span.size
    env = LoopEnvelope(*(np.full(n, s * np.inf) for s in (-1, 1, -1, 1, -1, 1)), n_cases=0)
    for k, loaded in cases:
        _, cset, factors = beam.combinations[k]
        shear, moment, defl = solve_case(beam, factors, set(loaded), st)
        if cset == "strength":
            np.maximum(env.moment_max, moment, out=env.moment_max)
            np.minimum(env.moment_min, moment, out=env.moment_min)
            np.maximum(env.shear_max, shear, out=env.shear_max)
            np.minimum(env.shear_min, shear, out=env.shear_min)
        else:
            np.maximum(env.deflection_max, defl, out=env.deflection_max)
            np.minimum(env.deflection_min, defl, out=env.deflection_min)
        env.n_cases += 1
    return env


def every_case(beam: LoopBeam) -> list[tuple[int, list[int]]]:
    """Every combination times every subset of spans (exhaustive patterning)."""
    n = len(beam.lengths)
    return [(k, [j for j in range(n) if mask >> j & 1])
            for k in range(len(beam.combinations)) for mask in range(2**n)]
