"""Numerical edge cases: each answer is exact (to rounding, against a closed form,
superposition or statics) or a clear refusal, and no written file holds NaN or infinity.

Tolerances are relative to the problem's own scale (its total load, its largest
moment), because a value that is tiny next to the rest of the beam (the reaction of a
spring of 1e-6 kN/m) comes out of sums of large element end forces and is exact only
to rounding at that scale.  The engine's statics check works to 1e-9 of the total load
(envelope.config.STATICS_RTOL); the checks here ask for the same.

References: Clapeyron's three-moment equation for continuous beams, the simple-beam
and cantilever formulas (deflection of a point load, a uniform load, an end couple),
and compatibility of a spring with the beam's flexibility: all common practice,
written out below.
"""

from __future__ import annotations

import json
from collections.abc import Mapping, Sequence
from fractions import Fraction
from pathlib import Path
from typing import Any

import numpy as np
import pyarrow as pa
import pyarrow.parquet as pq
import pytest
from click.testing import CliRunner

from envelope.cli import main
from envelope.errors import UnstableBeamError
from envelope.solved import Solved

from beams import (
    UNIT_EI,
    beam_text,
    case_reaction_moments,
    case_reactions,
    responses,
    solve_text,
)
from tolerances import DISPLACEMENT, MANY_LOADS, SMALL_SOLVE, SOLVE

REPO = Path(__file__).resolve().parents[1]

#: A concrete floor beam: E = 30000 MPa, I = 8e9 mm^4, so EI = 2.4e5 kN*m^2.
CONCRETE = {"E": 30000, "I": 8.0e9}
EI_CONCRETE = 30000e3 * 8.0e9 * 1e-12
RTOL = 1e-9


# ---------------------------------------------------------------------------
# Case files and the command line
# ---------------------------------------------------------------------------

def case_text(spans: Sequence[float | Mapping[str, Any]],
              supports: Sequence[str | Mapping[str, Any]],
              loads: Sequence[Mapping[str, Any]], *,
              section: Mapping[str, Any] = UNIT_EI, strength: str = "",
              stations: int = 21, beam_id: str = "edge") -> str:
    """An SI case file with one dead case D.  Combinations: the custom strength
    combination "1.0D" (or the rule set ``strength``), and the characteristic service
    set, so envelopes equal the response to D alone when ``strength`` is not given."""
    combinations: dict[str, Any] = {"service": "characteristic"}
    if strength:
        combinations["strength"] = strength
    else:
        combinations["custom"] = [{"name": "1.0D", "set": "strength", "factors": {"D": 1.0}}]
    return beam_text(spans, supports, loads, section=section,
                     cases={"D": "dead", "L": "live"}, combinations=combinations,
                     output={"stations_per_span": stations}, top={"id": beam_id})


def finite(table: pa.Table, name: str) -> None:
    for field in table.schema:
        if pa.types.is_floating(field.type):
            column = table.column(field.name)
            v = column.to_numpy(zero_copy_only=False)
            v = v[~np.isnan(v)] if column.null_count else v
            assert np.all(np.isfinite(v)), f"{name}: {field.name} holds NaN or infinity"


def run_case(text: str, tmp_path: Path, name: str = "edge",
             all_cases: bool = False) -> tuple[dict[str, dict[str, np.ndarray]], list[str]]:
    """``envelope run`` on the text: exit 0, only warnings on stderr; every Parquet file
    read back whole and checked finite.  Returns the tables as numpy columns and the
    stderr lines."""
    path = tmp_path / f"{name}.toml"
    path.write_text(text, encoding="utf-8")
    out = tmp_path / f"out-{name}"
    args = ["run", str(path), "-o", str(out), "--no-plots", "-q"]
    result = CliRunner().invoke(main, args + (["--all-cases"] if all_cases else []))
    assert result.exit_code == 0, result.output
    lines = result.stderr.splitlines()
    assert all(line.startswith(f"warning: {path}: ") for line in lines), result.stderr
    (folder,) = out.iterdir()
    tables = {}
    for file in sorted(folder.glob("*.parquet")):
        table = pq.read_table(file)
        finite(table, file.name)
        tables[file.stem] = {c: np.asarray(table.column(c).to_pylist(), dtype=object
                                           if pa.types.is_string(table.column(c).type)
                                           or pa.types.is_dictionary(table.column(c).type)
                                           else float) for c in table.column_names}
        tables[file.stem]["__meta__"] = table.schema.metadata  # type: ignore[assignment]
    assert {"envelope", "reactions", "design", "cases"} <= set(tables)
    return tables, lines


def refusal(text: str, tmp_path: Path, name: str = "bad") -> str:
    """``envelope run`` must exit 2 with one line on stderr and write nothing."""
    path = tmp_path / f"{name}.toml"
    path.write_text(text, encoding="utf-8")
    out = tmp_path / f"out-{name}"
    result = CliRunner().invoke(main, ["run", str(path), "-o", str(out), "--no-plots"])
    assert result.exit_code == 2, result.output
    lines = result.stderr.splitlines()
    assert len(lines) == 1 and lines[0].startswith(f"error: {path}: "), result.stderr
    assert not out.exists()
    return lines[0]


# ---------------------------------------------------------------------------
# Closed forms
# ---------------------------------------------------------------------------

def three_moment(lengths: Sequence[float], ei: Sequence[float],
                 w: Sequence[float]) -> tuple[list[Fraction], list[Fraction]]:
    """Support moments (sagging positive) and reactions of a continuous beam on knife-edge
    supports with a uniform load w_i on span i, by Clapeyron's three-moment equation
    (common practice), in exact rational arithmetic on the float inputs:

        M[j-1] a[j-1] + 2 M[j] (a[j-1] + a[j]) + M[j+1] a[j]
            = -(w[j-1] L[j-1]^3 / (4 EI[j-1]) + w[j] L[j]^3 / (4 EI[j])),  a = L / EI.
    """
    L = [Fraction(x) for x in lengths]
    E = [Fraction(x) for x in ei]
    W = [Fraction(x) for x in w]
    n = len(L)
    a = [L[i] / E[i] for i in range(n)]
    rhs = [-(W[j - 1] * L[j - 1] ** 3 / (4 * E[j - 1]) + W[j] * L[j] ** 3 / (4 * E[j]))
           for j in range(1, n)]
    # tridiagonal system for M[1..n-1] (Thomas algorithm, exact)
    diag = [2 * (a[j - 1] + a[j]) for j in range(1, n)]
    lower = [a[j - 1] for j in range(1, n)]
    upper = [a[j] for j in range(1, n)]
    m = len(diag)
    for k in range(1, m):
        f = lower[k] / diag[k - 1]
        diag[k] -= f * upper[k - 1]
        rhs[k] -= f * rhs[k - 1]
    x = [Fraction(0)] * m
    for k in range(m - 1, -1, -1):
        x[k] = (rhs[k] - (upper[k] * x[k + 1] if k + 1 < m else 0)) / diag[k]
    M = [Fraction(0), *x, Fraction(0)]
    R = [Fraction(0)] * (n + 1)
    for i in range(n):
        shift = (M[i + 1] - M[i]) / L[i]
        R[i] += W[i] * L[i] / 2 + shift
        R[i + 1] += W[i] * L[i] / 2 - shift
    return M, R


def simple_point_deflection(P: np.ndarray, a: np.ndarray, x: np.ndarray, L: float,
                            EI: float) -> np.ndarray:
    """Deflection (downward) at each x of a simple beam under point loads P at a:
    P b x (L^2 - b^2 - x^2) / (6 EI L) for x <= a, b = L - a, and its mirror image for
    x > a (simple-beam formula, common practice)."""
    X = x[:, None]
    A = a[None, :]
    left = X <= A
    xx = np.where(left, X, L - X)
    b = np.where(left, L - A, A)
    return (P[None, :] * b * xx * (L**2 - b**2 - xx**2) / (6.0 * EI * L)).sum(axis=1)


# ---------------------------------------------------------------------------
# Spans from 0.1 m to 100 m, stiffness ratios of 1e6
# ---------------------------------------------------------------------------

def test_spans_from_0_1_m_to_100_m_match_the_three_moment_equation(tmp_path: Path) -> None:
    lengths = [0.1, 1.0, 10.0, 100.0, 3.0, 0.1]
    w = 2.0
    text = case_text(lengths, ["pinned"] * 7, [{"type": "uniform", "spans": "all", "w": w}])
    M_ref, R_ref = three_moment(lengths, [1.0] * 6, [w] * 6)
    s = solve_text(text)
    M = responses(s, list(range(6)), lengths, False).moment[:, 0]  # left of each joint
    scale_m = float(max(abs(m) for m in M_ref))
    np.testing.assert_allclose(M, [float(m) for m in M_ref[1:]], rtol=0, atol=RTOL * scale_m)
    total = w * sum(lengths)
    R = case_reactions(s)[:, 0]
    np.testing.assert_allclose(R, [float(r) for r in R_ref], rtol=0, atol=RTOL * total)
    tables, _ = run_case(text, tmp_path)
    np.testing.assert_allclose(tables["reactions"]["unfactored_D"], [float(r) for r in R_ref],
                               rtol=0, atol=RTOL * total)
    # the most hogging moment at each support: 0 where the support moment sags (outputs
    # contract), as it does over the short spans here
    np.testing.assert_allclose(tables["design"]["moment_neg_right"][:5],
                               [min(float(m), 0.0) for m in M_ref[1:6]], rtol=0,
                               atol=RTOL * scale_m)


@pytest.mark.parametrize("ratios", [[1, 1e6, 1], [1e6, 1, 1e6], [1, 1e-6, 1e6]],
                         ids=["stiff-middle", "soft-middle", "three-orders"])
def test_ei_ratios_of_1e6_between_spans_match_the_three_moment_equation(
        ratios: list[float], tmp_path: Path) -> None:
    lengths = [6.0, 7.5, 5.0]
    spans = [{"length": L, "E": f"{r!r} kN/m^2"} for L, r in zip(lengths, ratios, strict=True)]
    text = case_text(spans, ["pinned"] * 4, [{"type": "uniform", "spans": "all", "w": 4.0}])
    M_ref, R_ref = three_moment(lengths, ratios, [4.0] * 3)
    s = solve_text(text)
    M = responses(s, [0, 1], lengths[:2], False).moment[:, 0]
    scale_m = float(max(abs(m) for m in M_ref))
    np.testing.assert_allclose(M, [float(m) for m in M_ref[1:3]], rtol=0, atol=RTOL * scale_m)
    np.testing.assert_allclose(case_reactions(s)[:, 0], [float(r) for r in R_ref], rtol=0,
                               atol=RTOL * 4.0 * sum(lengths))
    run_case(text, tmp_path)


# ---------------------------------------------------------------------------
# Springs from 1e-6 to 1e12
# ---------------------------------------------------------------------------

SPRINGS = [1e-6, 1e-3, 1.0, 1e3, 1e6, 1e9, 1e12]


@pytest.mark.parametrize("k", SPRINGS)
def test_spring_under_the_middle_support_matches_compatibility(k: float,
                                                               tmp_path: Path) -> None:
    """Two 6 m spans, spring k (kN/m) under the middle joint, uniform w.  Without the
    spring the 12 m simple beam deflects d0 = 5 w (2L)^4 / (384 EI) at midspan and a unit
    force there gives f = (2L)^3 / (48 EI); compatibility gives R = d0 / (f + 1/k) and
    the spring's deflection R / k (simple-beam formulas, common practice)."""
    L, w, EI = 6.0, 10.0, EI_CONCRETE
    text = case_text([L, L], ["pinned", {"type": "spring", "k_vertical": k}, "pinned"],
                     [{"type": "uniform", "spans": "all", "w": w}], section=CONCRETE)
    d0 = 5.0 * w * (2 * L) ** 4 / (384.0 * EI)
    f = (2 * L) ** 3 / (48.0 * EI)
    R = d0 / (f + 1.0 / k)
    s = solve_text(text)
    total = 2 * w * L
    np.testing.assert_allclose(case_reactions(s)[:, 0], [(total - R) / 2, R, (total - R) / 2],
                               rtol=0, atol=RTOL * total)
    mid = responses(s, 0, L, False)
    # deflection to rounding at the problem's scale, d0 (a stiff spring barely moves)
    np.testing.assert_allclose(mid.deflection[0, 0], R / k, rtol=0, atol=RTOL * d0)
    np.testing.assert_allclose(mid.moment[0, 0], w * (2 * L) ** 2 / 8 - R * 2 * L / 4,
                               rtol=0, atol=RTOL * w * (2 * L) ** 2 / 8)
    tables, _ = run_case(text, tmp_path)
    np.testing.assert_allclose(tables["reactions"]["unfactored_D"][1], R, rtol=0,
                               atol=RTOL * total)


def solved_or_nearly_unstable(text: str) -> Solved | None:
    """Solve, or None where the engine refuses the beam as nearly unstable (a clear
    refusal: the soft restraint costs more digits than the statics tolerance allows)."""
    try:
        return solve_text(text)
    except UnstableBeamError as exc:
        assert "nearly unstable beam" in str(exc) and "supports" in exc.key
        return None


@pytest.mark.parametrize("k", [1e-6, 1e-4, 1e-3, 1e-2, 1.0, 1e3, 1e6, 1e9, 1e12])
def test_end_spring_of_a_simple_span_matches_statics_and_the_rigid_rotation(k: float) -> None:
    """A 6 m span pinned at the left, on a spring k (kN/m) at the right: the reactions
    are statically determinate (wL/2 each) whatever k; the spring end drops (wL/2)/k and
    midspan drops half that plus 5wL^4/(384EI).  A soft spring is a near-mechanism: exact,
    or refused as nearly unstable, and only for the softest springs."""
    L, w, EI = 6.0, 10.0, EI_CONCRETE
    text = case_text([L], ["pinned", {"type": "spring", "k_vertical": k}],
                     [{"type": "uniform", "spans": "all", "w": w}], section=CONCRETE)
    s = solved_or_nearly_unstable(text)
    if s is None:
        assert k < 1e-3
        return
    np.testing.assert_allclose(case_reactions(s)[:, 0], [w * L / 2] * 2, rtol=0,
                               atol=RTOL * w * L)
    end = (w * L / 2) / k
    d = responses(s, [0, 0], [L / 2, L]).deflection[:, 0]
    want = np.array([end / 2 + 5 * w * L**4 / (384 * EI), end])
    np.testing.assert_allclose(d, want, rtol=0, atol=RTOL * want.max())


@pytest.mark.parametrize("kr", SPRINGS)
def test_rotational_end_spring_matches_compatibility(kr: float) -> None:
    """A 6 m simple span with a rotational spring kr (kN*m/rad) at the left: the free end
    rotation w L^3 / (24 EI) is reduced by the end moment M (rotation M L / (3 EI)) to
    M / kr, so M = (w L^3 / (24 EI)) / (L / (3 EI) + 1 / kr) (common practice)."""
    L, w, EI = 6.0, 10.0, EI_CONCRETE
    text = case_text([L], [{"type": "spring", "k_rotation": kr}, "pinned"],
                     [{"type": "uniform", "spans": "all", "w": w}], section=CONCRETE)
    M = (w * L**3 / (24 * EI)) / (L / (3 * EI) + 1 / kr)
    s = solve_text(text)
    scale = w * L**2 / 8
    np.testing.assert_allclose(responses(s, 0, 0.0).moment[0, 0], -M, rtol=0, atol=RTOL * scale)
    np.testing.assert_allclose(case_reaction_moments(s)[0, 0], M, rtol=0, atol=RTOL * scale)
    np.testing.assert_allclose(case_reactions(s)[:, 0], [w * L / 2 + M / L, w * L / 2 - M / L],
                               rtol=0, atol=RTOL * w * L)


@pytest.mark.parametrize("kr", [1e-6, 1e-3, 1.0, 1e3, 1e6, 1e12])
def test_beam_held_by_a_pin_and_a_rotational_spring_alone_matches_statics(kr: float) -> None:
    """Left joint: k_vertical = 0, rotational spring kr; right joint pinned.  The pin
    takes the whole load wL and the spring the moment wL^2/2 (statics), for any kr."""
    L, w = 6.0, 10.0
    text = case_text([L], [{"type": "spring", "k_vertical": 0, "k_rotation": kr}, "pinned"],
                     [{"type": "uniform", "spans": "all", "w": w}], section=CONCRETE)
    s = solved_or_nearly_unstable(text)
    if s is None:
        assert kr < 1.0
        return
    np.testing.assert_allclose(case_reactions(s)[:, 0], [0.0, w * L], rtol=0, atol=RTOL * w * L)
    np.testing.assert_allclose(abs(case_reaction_moments(s)[0, 0]), w * L**2 / 2, rtol=RTOL)


# ---------------------------------------------------------------------------
# Zero-stiffness springs
# ---------------------------------------------------------------------------

@pytest.mark.parametrize("spring", [{"type": "spring", "k_vertical": 0},
                                    {"type": "spring", "k_vertical": 0, "k_rotation": 0},
                                    {"type": "spring", "k_vertical": "0 kN/m"}],
                         ids=["k_vertical", "both", "unit-string"])
def test_a_zero_stiffness_spring_is_no_support(spring: dict[str, Any], tmp_path: Path) -> None:
    """Two 5 m spans on a spring of zero stiffness in the middle: a 10 m simple beam,
    reactions wL each, midspan moment w (2L)^2 / 8 (common practice)."""
    L, w = 5.0, 3.0
    text = case_text([L, L], ["pinned", spring, "pinned"],
                     [{"type": "uniform", "spans": "all", "w": w}])
    s = solve_text(text)
    np.testing.assert_allclose(case_reactions(s)[:, 0], [w * L, 0.0, w * L], rtol=0,
                               atol=RTOL * w * L)
    np.testing.assert_allclose(responses(s, 0, L, False).moment[0, 0], w * (2 * L) ** 2 / 8,
                               rtol=RTOL)
    tables, _ = run_case(text, tmp_path)
    supports = tables["reactions"]["support"].tolist()
    assert 1.0 in supports and 3.0 in supports
    if spring.get("k_rotation", 0) == 0:
        assert 2.0 not in supports  # it restrains nothing: no row (outputs contract)


@pytest.mark.parametrize(("supports", "phrase"), [
    (["pinned", {"type": "spring", "k_vertical": 0}, "free"],
     "the whole beam can rotate about support 1 (x = 0 m)"),
    ([{"type": "spring", "k_vertical": 0}, {"type": "spring", "k_vertical": 0}, "pinned"],
     "the whole beam can rotate about support 3 (x = 10 m)"),
    ([{"type": "spring", "k_vertical": 0, "k_rotation": 5e4},
      {"type": "spring", "k_vertical": 0}, "free"], "the whole beam can drop"),
])
def test_zero_stiffness_springs_without_enough_other_supports_are_unstable(
        supports: list[Any], phrase: str, tmp_path: Path) -> None:
    text = case_text([5.0, 5.0], supports, [{"type": "uniform", "spans": "all", "w": 3.0}])
    line = refusal(text, tmp_path)
    assert ": supports: unstable beam: " in line and phrase in line


# ---------------------------------------------------------------------------
# Conditioning warnings
# ---------------------------------------------------------------------------

def test_no_conditioning_warning_for_ordinary_beams(tmp_path: Path) -> None:
    from bad_inputs import doc

    ordinary: list[Path] = sorted((REPO / "cases").glob("*.toml"))
    made = [doc(), case_text([6.0, 7.5, 6.0], ["fixed", "pinned", {"type": "spring",
                                                                    "k_vertical": 2e5}, "free"],
                              [{"type": "uniform", "spans": "all", "w": 5.0}],
                              section=CONCRETE)]
    for i, text in enumerate(made):
        ordinary.append(tmp_path / f"case{i}.toml")
        ordinary[-1].write_text(text, encoding="utf-8")
    assert len(ordinary) >= 4
    for i, path in enumerate(ordinary):
        result = CliRunner().invoke(main, ["run", str(path), "-o", str(tmp_path / f"o{i}"),
                                           "--no-plots", "-q"])
        assert result.exit_code == 0, result.output
        assert result.stderr == "", result.stderr
        (folder,) = (tmp_path / f"o{i}").iterdir()
        meta = pq.read_schema(folder / "envelope.parquet").metadata
        assert json.loads(meta[b"envelope:warnings"]) == []


def test_a_near_rigid_spring_is_solved_with_a_conditioning_warning(tmp_path: Path) -> None:
    """A spring of 1e18 kN/m under the middle of two 6 m spans: stiffnesses fourteen orders
    apart.  The result is the rigid-support one (3/8, 10/8, 3/8 of wL: handbook
    two-span coefficients, common practice), with a warning on stderr and in the files."""
    L, w = 6.0, 10.0
    text = case_text([L, L], ["pinned", {"type": "spring", "k_vertical": 1e18}, "pinned"],
                     [{"type": "uniform", "spans": "all", "w": w}], section=CONCRETE)
    tables, lines = run_case(text, tmp_path)
    assert len(lines) == 1 and "the stiffness matrix is badly conditioned" in lines[0]
    np.testing.assert_allclose(tables["reactions"]["unfactored_D"],
                               [3 * w * L / 8, 10 * w * L / 8, 3 * w * L / 8], rtol=SOLVE)
    for stem in ("envelope", "reactions", "design", "cases"):
        meta = tables[stem]["__meta__"]
        assert "badly conditioned" in json.loads(meta[b"envelope:warnings"])[0]


@pytest.mark.parametrize("k", [1e-6, 1e-10])
def test_a_near_mechanism_is_solved_with_a_warning_or_refused_clearly(k: float,
                                                                      tmp_path: Path) -> None:
    L, w = 6.0, 10.0
    text = case_text([L], ["pinned", {"type": "spring", "k_vertical": k}],
                     [{"type": "uniform", "spans": "all", "w": w}], section=CONCRETE)
    path = tmp_path / "near.toml"
    path.write_text(text, encoding="utf-8")
    result = CliRunner().invoke(main, ["run", str(path), "-o", str(tmp_path / "o"),
                                       "--no-plots", "-q"])
    if result.exit_code == 2:
        assert len(result.stderr.splitlines()) == 1
        assert "mechanism" in result.stderr or "unstable" in result.stderr
        return
    assert result.exit_code == 0, result.output
    tables, lines = run_case(text, tmp_path, name="again")
    np.testing.assert_allclose(tables["reactions"]["unfactored_D"], [w * L / 2] * 2, rtol=SOLVE)
    if k < 1e-8:  # condition number above 1e12
        assert any("badly conditioned" in line for line in lines)


# ---------------------------------------------------------------------------
# Loads at the very ends of spans and at supports
# ---------------------------------------------------------------------------

FRAME = {"spans": [6.0, 7.0, 5.0],
         "supports": ["fixed", "pinned", {"type": "spring", "k_rotation": 3e4}, "pinned"]}
BASE_LOADS = [{"type": "uniform", "spans": "all", "w": 10.0},
              {"case": "L", "type": "uniform", "spans": "all", "w": 5.0}]


@pytest.mark.parametrize(("span", "at", "joint"), [(1, 0.0, 0), (1, 6.0, 1), (2, 0.0, 1),
                                                   (2, 7.0, 2), (3, 0.0, 2), (3, 5.0, 3)])
def test_a_point_load_at_a_support_changes_only_that_reaction(span: int, at: float, joint: int,
                                                              tmp_path: Path) -> None:
    """Superposition: a load P exactly at a rigid support goes straight into it, so every
    moment, shear and deflection is unchanged and only that support's reaction grows by P
    (statics).  Strength: ASCE 7 LRFD with code patterning."""
    P = 50.0
    base = case_text(FRAME["spans"], FRAME["supports"], BASE_LOADS, section=CONCRETE,
                     strength="asce7-lrfd")
    extra = case_text(FRAME["spans"], FRAME["supports"],
                      [*BASE_LOADS, {"type": "point", "spans": span, "P": P, "at": at}],
                      section=CONCRETE, strength="asce7-lrfd")
    before, _ = run_case(base, tmp_path, "before")
    after, _ = run_case(extra, tmp_path, "after")
    env0, env1 = before["envelope"], after["envelope"]
    assert env0["x"].size == env1["x"].size
    for q in ("moment", "shear", "deflection"):
        scale = float(np.abs(env0[f"{q}_max"]).max())
        for side in ("max", "min"):
            np.testing.assert_allclose(env1[f"{q}_{side}"], env0[f"{q}_{side}"], rtol=0,
                                       atol=RTOL * scale, err_msg=f"{q}_{side}")
    dr = after["reactions"]["unfactored_D"] - before["reactions"]["unfactored_D"]
    want = np.zeros(4)
    want[joint] = P
    np.testing.assert_allclose(dr, want, rtol=0, atol=RTOL * 200.0)
    others = np.arange(4) != joint
    for col in ("reaction_max", "reaction_min", "support_moment_max", "support_moment_min"):
        a, b = after["reactions"][col][others], before["reactions"][col][others]
        np.testing.assert_allclose(np.nan_to_num(a), np.nan_to_num(b), rtol=0, atol=1e-7)
    for col in ("moment_pos", "moment_neg_left", "moment_neg_right", "shear_left",
                "shear_right", "deflection_max"):
        np.testing.assert_allclose(after["design"][col], before["design"][col], rtol=0,
                                   atol=1e-7, err_msg=col)


def test_point_load_at_a_cantilever_tip_matches_the_cantilever_formulas(tmp_path: Path) -> None:
    """A 4 m span fixed at the left, free at the right, P at the tip (at = L): root moment
    -P L, tip deflection P L^3 / (3 EI), shear +P all along (common practice)."""
    L, P = 4.0, 7.0
    text = case_text([L], ["fixed", "free"], [{"type": "point", "spans": 1, "P": P, "at": L}])
    s = solve_text(text)
    r = responses(s, [0, 0, 0], [0.0, L / 2, L], [True, True, False])
    np.testing.assert_allclose(r.moment[:, 0], [-P * L, -P * L / 2, 0.0], rtol=0, atol=RTOL * P * L)
    np.testing.assert_allclose(r.shear[:, 0], [P, P, P], rtol=RTOL)
    np.testing.assert_allclose(r.deflection[2, 0], P * L**3 / 3, rtol=RTOL)
    tables, _ = run_case(text, tmp_path)
    np.testing.assert_allclose(tables["envelope"]["deflection_max"].max(), P * L**3 / 3 * 1e3,
                               rtol=RTOL)


@pytest.mark.parametrize("at", [0.0, 6.0])
def test_a_couple_at_the_end_of_a_simple_span_matches_the_end_moment_formula(at: float) -> None:
    """A clockwise couple C at one end of a simple span: reactions -C/L and +C/L, moment
    C (1 - x/L) from the left end or -C x/L from the right end (common practice)."""
    L, C = 6.0, 12.0
    text = case_text([L], ["pinned", "pinned"], [{"type": "moment", "spans": 1, "M": C, "at": at}])
    s = solve_text(text)
    x = np.linspace(0.0, L, 7)
    x_in = np.clip(x, 1e-9, L - 1e-9)
    want = C * (1 - x_in / L) if at == 0.0 else -C * x_in / L
    np.testing.assert_allclose(responses(s, 0, x_in).moment[:, 0], want, rtol=0, atol=RTOL * C)
    np.testing.assert_allclose(case_reactions(s)[:, 0], [-C / L, C / L], rtol=RTOL)


def test_load_ends_given_in_other_units_snap_to_the_span_end() -> None:
    """A span of "7.3152 m" and a load ending at "24 ft" (the same length; the two floats
    may differ in the last bit) is loaded over the whole span: reactions wL/2."""
    L, w = 7.3152, 2.0
    text = case_text([{"length": "7.3152 m"}], ["pinned", "pinned"],
                     [{"type": "uniform", "spans": 1, "w": w, "start": "0 ft", "end": "24 ft"},
                      {"type": "point", "spans": 1, "P": 1.0, "at": "24 ft"}])
    s = solve_text(text)
    np.testing.assert_allclose(case_reactions(s)[:, 0], [w * L / 2, w * L / 2 + 1.0],
                               rtol=SMALL_SOLVE)


def test_a_position_just_beyond_the_span_end_is_refused(tmp_path: Path) -> None:
    text = case_text([6.0], ["pinned", "pinned"],
                     [{"type": "point", "spans": 1, "P": 1.0, "at": 6.0 * (1 + 1e-9)}])
    line = refusal(text, tmp_path)
    assert ": loads[1].at: " in line and "is outside span 1 (0 to 6 m)" in line


@pytest.mark.parametrize("c", [1e-3, 1e-6, 1e-9, 1e-12])
def test_tiny_partial_loads_match_statics(c: float, tmp_path: Path) -> None:
    """w over [a, a + c] on a simple span: R_left = w c (L - a - c/2) / L, and right of the
    load M(x) = R_right (L - x) (statics), with c the length the engine is given,
    (a + c) - a in floating point."""
    L, a, w = 6.0, 2.0, 1e3
    end = a + c
    c_eff = float(Fraction(end) - Fraction(a))
    text = case_text([L], ["pinned", "pinned"],
                     [{"type": "uniform", "spans": 1, "w": w, "start": a, "end": end}])
    s = solve_text(text)
    R_left = w * c_eff * (L - a - c_eff / 2) / L
    R_right = w * c_eff - R_left
    np.testing.assert_allclose(case_reactions(s)[:, 0], [R_left, R_right], rtol=SOLVE)
    x = np.array([3.0, 4.5, 5.9])
    np.testing.assert_allclose(responses(s, 0, x).moment[:, 0], R_right * (L - x), rtol=SOLVE)
    tables, _ = run_case(text, tmp_path)
    np.testing.assert_allclose(tables["reactions"]["unfactored_D"], [R_left, R_right], rtol=SOLVE)


def test_a_tiny_partial_load_against_a_support_goes_into_it() -> None:
    L, w, c = 6.0, 1e3, 1e-9
    text = case_text([L], ["pinned", "pinned"],
                     [{"type": "uniform", "spans": 1, "w": w, "start": 0.0, "end": c}])
    s = solve_text(text)
    np.testing.assert_allclose(case_reactions(s)[:, 0], [w * c * (L - c / 2) / L,
                                                         w * c * c / 2 / L], rtol=0,
                               atol=RTOL * w * c)


# ---------------------------------------------------------------------------
# Huge numbers of load items on one span
# ---------------------------------------------------------------------------

def test_5000_point_loads_on_one_span_match_statics_and_superposition(tmp_path: Path) -> None:
    """5000 point loads (20 at each of 250 positions) on a simple span: the reactions
    sum P(L - a)/L, the moment at every station R_left x - sum P (x - a)+ (statics) and
    the deflection the sum of the simple-beam point-load formula (superposition)."""
    L = 8.0
    rng = np.random.default_rng(20240611)
    where = np.round(np.sort(rng.uniform(0.0, L, 250)), 6)
    a = np.repeat(where, 20)
    P = np.round(rng.uniform(0.1, 2.0, a.size), 3)
    loads = [{"type": "point", "spans": 1, "P": float(p), "at": float(x)}
             for p, x in zip(P, a, strict=True)]
    text = case_text([L], ["pinned", "pinned"], loads)
    tables, _ = run_case(text, tmp_path)
    R_left = float(np.sum(P * (L - a)) / L)
    np.testing.assert_allclose(tables["reactions"]["unfactored_D"], [R_left, P.sum() - R_left],
                               rtol=MANY_LOADS)
    env = tables["envelope"]
    x = env["x"]
    right = env["side"] == "right"
    M = R_left * x - (P[None, :] * np.clip(x[:, None] - a[None, :], 0.0, None)).sum(axis=1)
    scale = float(np.abs(M).max())
    np.testing.assert_allclose(env["moment_max"], M, rtol=0, atol=RTOL * scale)
    np.testing.assert_allclose(env["moment_min"], M, rtol=0, atol=RTOL * scale)
    # shear: the right-side limit counts a load at x, the left-side limit does not
    counted = np.where(right[:, None], x[:, None] >= a[None, :], x[:, None] > a[None, :])
    V = R_left - (P[None, :] * counted).sum(axis=1)
    np.testing.assert_allclose(env["shear_max"], V, rtol=0, atol=RTOL * P.sum())
    d = simple_point_deflection(P, a, x, L, 1.0) * 1e3  # mm
    np.testing.assert_allclose(env["deflection_max"], d, rtol=0, atol=RTOL * np.abs(d).max())
    assert np.unique(x).size >= 250


def test_1000_point_loads_at_distinct_positions_match_statics(tmp_path: Path) -> None:
    L = 5.0
    rng = np.random.default_rng(7)
    a = np.unique(np.round(rng.uniform(0.0, L, 1000), 9))
    P = rng.uniform(-1.0, 3.0, a.size)
    loads = [{"type": "point", "spans": 1, "P": float(p), "at": float(x)}
             for p, x in zip(P, a, strict=True)]
    s = solve_text(case_text([L], ["pinned", "pinned"], loads))
    R_left = float(np.sum(P * (L - a)) / L)
    np.testing.assert_allclose(case_reactions(s)[:, 0], [R_left, P.sum() - R_left], rtol=0,
                               atol=RTOL * np.abs(P).sum())
    x = np.linspace(0.0, L, 101)
    M = R_left * x - (P[None, :] * np.clip(x[:, None] - a[None, :], 0.0, None)).sum(axis=1)
    np.testing.assert_allclose(responses(s, 0, x).moment[:, 0], M, rtol=0,
                               atol=RTOL * np.abs(M).max())


def test_500_partial_loads_tiling_a_span_equal_one_uniform_load(tmp_path: Path) -> None:
    """Superposition: 500 abutting partial loads of w are one uniform load w: reactions
    wL/2, midspan moment wL^2/8 and deflection 5wL^4/(384EI) (common practice)."""
    L, w, n = 6.0, 3.0, 500
    loads = [{"type": "uniform", "spans": 1, "w": w, "start": L * i / n,
              "end": L * (i + 1) / n} for i in range(n)]
    text = case_text([L], ["pinned", "pinned"], loads, stations=3)
    tables, _ = run_case(text, tmp_path)
    np.testing.assert_allclose(tables["reactions"]["unfactored_D"], [w * L / 2] * 2,
                               rtol=MANY_LOADS)
    d = tables["design"]
    np.testing.assert_allclose(d["moment_pos"], [w * L**2 / 8], rtol=MANY_LOADS)
    np.testing.assert_allclose(d["moment_pos_x"], [L / 2], rtol=1e-6)
    np.testing.assert_allclose(d["deflection_max"], [5 * w * L**4 / 384 * 1e3],
                               rtol=DISPLACEMENT)


# ---------------------------------------------------------------------------
# Magnitudes at the ends of floating point: a clear refusal, not exit 3
# ---------------------------------------------------------------------------

def test_a_stiffness_that_overflows_is_refused_naming_the_section(tmp_path: Path) -> None:
    text = case_text([6.0], ["pinned", "pinned"], [{"type": "uniform", "spans": 1, "w": 1.0}],
                     section={"E": 1e300, "I": 1e300})
    line = refusal(text, tmp_path)
    assert ": section" in line


def test_a_stiffness_that_underflows_is_refused_naming_the_section(tmp_path: Path) -> None:
    text = case_text([6.0], ["pinned", "pinned"], [{"type": "uniform", "spans": 1, "w": 1.0}],
                     section={"E": 1e-300, "I": 1e-300})
    line = refusal(text, tmp_path)
    assert ": section" in line


def test_loads_beyond_the_carried_range_are_refused_naming_the_key(tmp_path: Path) -> None:
    """Magnitudes outside 1e-30 .. 1e30 (consistent units) are refused at the key, exit 2."""
    for w in (1e100, 1e-100):
        text = case_text([6.0, 6.0], ["pinned"] * 3, [{"type": "uniform", "spans": "all",
                                                       "w": w}], section=CONCRETE)
        line = refusal(text, tmp_path)
        assert "loads[1].w" in line and "outside the range the analysis can carry" in line


def test_very_large_and_very_small_loads_scale_exactly(tmp_path: Path) -> None:
    """Linearity over 50 orders of magnitude: w = 1e25 and w = 1e-25 give the results of
    w = 1 scaled (two 6 m spans: 3/8, 10/8, 3/8 of wL, handbook coefficients)."""
    for w in (1e25, 1e-25):
        text = case_text([6.0, 6.0], ["pinned"] * 3, [{"type": "uniform", "spans": "all",
                                                       "w": w}], section=CONCRETE)
        tables, _ = run_case(text, tmp_path, name=f"w{w:g}".replace("+", ""))
        np.testing.assert_allclose(tables["reactions"]["unfactored_D"],
                                   np.array([3, 10, 3]) / 8 * w * 6.0, rtol=SMALL_SOLVE)
