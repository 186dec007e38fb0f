"""Engine core (solver and exact recovery) against handbook closed forms.

Sources, named again beside each check:

* Equal spans under uniform load on every span: Hicks, *Civil Engineering
  Formulas* (McGraw-Hill), Table 2.1 (printed 3-4 digit coefficients, checked to
  the digits printed) and the exact rational values of the three-moment solution
  (checked to 1e-9 relative); ../shared/references.md section 3.2.
* Single spans: the classic beam-diagram cases of the AISC Steel Construction
  Manual Table 3-23, every entry re-derived by statics and double integration
  (references.md section 3.1, tag [D]).
* Partial, linear, point-moment and self-weight loads on a simple span: closed forms
  derived here by statics (reactions, shear, moment) and by double integration of
  EI v'' = -M in Macaulay brackets (deflection), see :class:`SimpleSpan`.
* Spring supports, rotational springs, columns and stiffer stretches: closed forms
  derived here by compatibility (flexibility method) and by the unit-load method
  (virtual work, integrated exactly with SymPy), stated beside each test.

Units: consistent SI (m, kN, kN*m).  Sign conventions as the case-format contract:
loads downward positive, applied point moments clockwise positive, reactions upward
positive, shear = sum of upward forces left of the point, moment sagging positive,
deflection downward positive, rotation = d(deflection)/dx.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from fractions import Fraction as F

import numpy as np
import pytest
import sympy as sp

from beams import beam_text, case_reaction_moments, case_reactions, peak, responses, solve_text
from tolerances import SMALL_SOLVE

EXACT = 1e-9  # relative tolerance for exact (rational or closed-form) values
XTOL = 1e-6  # position of a flat extremum (value error ~ (dx)^2 fixes x only to ~sqrt(eps))


def printed(value: float, digits: str) -> bool:
    """True when ``value`` rounds to the printed ``digits`` (half a unit of the last digit)."""
    decimals = len(digits.split(".")[1]) if "." in digits else 0
    return abs(value - float(digits)) <= 0.5 * 10.0**-decimals + 1e-15


# ---------------------------------------------------------------------------
# 3.2 Equal spans, w on every span, L = 1, w = 1, EI = 1
# ---------------------------------------------------------------------------


def equal_spans(n: int):
    text = beam_text([1.0] * n, ["pinned"] * (n + 1),
                     [{"type": "uniform", "spans": "all", "w": 1.0}])
    return solve_text(text)


#: Exact values [D] (three-moment solution) in units of wL, wL^2; Hicks Table 2.1 [C]
#: prints the same to 3-4 digits.  Joints and spans listed from the left end.
EQUAL = {
    2: {"R": [F(3, 8), F(10, 8), F(3, 8)], "M": [F(-1, 8)],
        "V": [(F(-5, 8), F(5, 8))]},
    3: {"R": [F(2, 5), F(11, 10), F(11, 10), F(2, 5)], "M": [F(-1, 10), F(-1, 10)],
        "V": [(F(-3, 5), F(1, 2)), (F(-1, 2), F(3, 5))]},
    4: {"R": [F(11, 28), F(8, 7), F(13, 14), F(8, 7), F(11, 28)],
        "M": [F(-3, 28), F(-1, 14), F(-3, 28)],
        "V": [(F(-17, 28), F(15, 28)), (F(-13, 28), F(13, 28)), (F(-15, 28), F(17, 28))]},
}


@pytest.mark.parametrize("n", [2, 3, 4])
def test_equal_spans_reactions(n: int) -> None:
    """Reactions: exact [D]; Hicks Table 2.1 [C] prints 3/8, 10/8 (2 spans), 0.4, 1.1
    (3 spans), 11/28, 8/7, 13/14 (4 spans)."""
    r = case_reactions(equal_spans(n))[:, 0]
    assert r == pytest.approx([float(v) for v in EQUAL[n]["R"]], rel=EXACT)


@pytest.mark.parametrize("n", [2, 3, 4])
def test_equal_spans_support_moments(n: int) -> None:
    """Support moments, both side limits: exact [D] -1/8; -1/10; -3/28, -1/14
    (Hicks Table 2.1 [C] prints -0.125, -0.100, -3/28, -1/14); zero at the ends."""
    s = equal_spans(n)
    m_left = responses(s, range(n - 1), [1.0] * (n - 1), right=False).moment[:, 0]
    m_right = responses(s, range(1, n), [0.0] * (n - 1), right=True).moment[:, 0]
    expected = [float(v) for v in EQUAL[n]["M"]]
    assert m_left == pytest.approx(expected, rel=EXACT)
    assert m_right == pytest.approx(expected, rel=EXACT)
    ends = responses(s, [0, n - 1], [0.0, 1.0]).moment[:, 0]
    assert ends == pytest.approx([0.0, 0.0], abs=SMALL_SOLVE)  # pinned ends: statics


@pytest.mark.parametrize("n", [2, 3, 4])
def test_equal_spans_interior_support_shears(n: int) -> None:
    """Shear just left / right of each interior support: exact [D] 5/8; 0.6, 0.5;
    17/28, 15/28, 13/28 (Hicks Table 2.1 [C] prints the magnitudes)."""
    s = equal_spans(n)
    v_left = responses(s, range(n - 1), [1.0] * (n - 1), right=False).shear[:, 0]
    v_right = responses(s, range(1, n), [0.0] * (n - 1), right=True).shear[:, 0]
    assert v_left == pytest.approx([float(a) for a, _ in EQUAL[n]["V"]], rel=EXACT)
    assert v_right == pytest.approx([float(b) for _, b in EQUAL[n]["V"]], rel=EXACT)


#: Max +M per span (left half of the beam, the rest by symmetry): position, exact value
#: [D] from M(x) = V0 x + M0 - x^2/2 with the exact V0, M0 above; printed digits from
#: Hicks Table 2.1 [C] (references.md 3.2).
MAX_M = {
    2: [(F(3, 8), F(9, 128), "0.375", "0.0703")],
    3: [(F(2, 5), F(2, 25), "0.4", "0.080"), (F(1, 2), F(1, 40), "0.5", "0.025")],
    4: [(F(11, 28), F(121, 1568), "0.393", "0.0772"),
        (F(15, 28), F(15, 28) ** 2 / 2 - F(3, 28), "0.536", "0.0364")],
}


@pytest.mark.parametrize("n", [2, 3, 4])
def test_equal_spans_max_positive_moment(n: int) -> None:
    """Max sagging moment and its position in each span, found by a dense search
    (20001 points per span, then zoomed): exact [D] and Hicks Table 2.1 [C] digits."""
    s = equal_spans(n)
    for span, (x0, m0, x_printed, m_printed) in enumerate(MAX_M[n]):
        x, m = peak(s, span, "moment")
        assert m == pytest.approx(float(m0), rel=EXACT), (span, "exact [D]")
        assert x == pytest.approx(float(x0), abs=XTOL), (span, "exact [D]")
        assert printed(m, m_printed), (span, m, "Hicks Table 2.1 [C]")
        assert printed(x, x_printed), (span, x, "Hicks Table 2.1 [C]")
        mirror = n - 1 - span  # symmetric beam: the mirrored span peaks at 1 - x0
        xm, mm = peak(s, mirror, "moment")
        assert mm == pytest.approx(float(m0), rel=EXACT)
        assert xm == pytest.approx(1.0 - float(x0), abs=XTOL)


def end_span_deflection_peak(r: float) -> tuple[float, float]:
    """Exact [D] peak deflection of an end span (pin at x = 0, L = w = EI = 1) with end
    reaction r: M = r x - x^2/2, so by double integration of v'' = -M with
    v(0) = v(1) = 0, v = C x - r x^3/6 + x^4/24, C = r/6 - 1/24; the peak is at the
    root of v' = C - r x^2/2 + x^3/6 in (0, 1) with the largest v."""
    c = r / 6 - 1 / 24
    roots = [z.real for z in np.roots([1 / 6, -r / 2, 0.0, c])
             if abs(z.imag) < 1e-12 and 0.0 < z.real < 1.0]
    best = max(roots, key=lambda x: c * x - r * x**3 / 6 + x**4 / 24)
    return best, c * best - r * best**3 / 6 + best**4 / 24


#: Max deflection (wL^4/EI) in the end span, printed digits: references.md 3.2
#: (Hicks Table 2.1 [C] / AISC Table 3-23 [M]).
MAX_D = {2: ("0.4215", "0.005416"), 3: ("0.446", "0.006884"), 4: ("0.440", "0.00646")}


@pytest.mark.parametrize("n", [2, 3, 4])
def test_equal_spans_max_deflection(n: int) -> None:
    """Largest deflection (end span) and its position: printed digits (references.md
    3.2, Hicks Table 2.1 [C]) and the exact end-span curve [D]
    (:func:`end_span_deflection_peak`)."""
    s = equal_spans(n)
    x, d = peak(s, 0, "deflection")
    x0, d0 = end_span_deflection_peak(float(EQUAL[n]["R"][0]))
    assert d == pytest.approx(d0, rel=EXACT)
    assert x == pytest.approx(x0, abs=XTOL)
    x_printed, d_printed = MAX_D[n]
    assert printed(d, d_printed), (d, "references.md 3.2")
    assert printed(x, x_printed), (x, "references.md 3.2")
    # no other span deflects more (references.md 3.2: the end span governs)
    others = [peak(s, j, "deflection", n=2001)[1] for j in range(1, n)]
    assert max(others) <= d * (1 + 1e-12)


def test_three_spans_middle_deflection() -> None:
    """3 equal spans: middle-span midspan deflection 0.000521 wL^4/EI (references.md 3.2,
    Hicks [C]); exact [D] 5/384 - 1/80 (simple-span sag minus the end moments' -0.1
    rise M L^2/8), and the middle span's peak is at its centre (symmetry)."""
    s = equal_spans(3)
    x, d = peak(s, 1, "deflection")
    assert d == pytest.approx(5 / 384 - 0.1 / 8, rel=EXACT)
    assert x == pytest.approx(0.5, abs=XTOL)
    assert printed(d, "0.000521")


@pytest.mark.parametrize(("n", "span", "hicks", "exact"), [
    (2, 0, ["0.75"], [0.75]),  # exact: 3/8 x - x^2/2 = 0
    (3, 0, ["0.80"], [0.8]),  # exact: 0.4 x - x^2/2 = 0
    (3, 1, ["0.276", "0.724"], [0.5 - math.sqrt(0.05), 0.5 + math.sqrt(0.05)]),
    # exact: -0.1 + 0.5 x - x^2/2 = 0
])
def test_equal_spans_inflection_points(n: int, span: int, hicks: list[str],
                                       exact: list[float]) -> None:
    """Zeros of the moment inside a span: Hicks Table 2.1 [C] digits (references.md 3.2)
    and the exact roots [D] of M(x) = V0 x + M0 - x^2/2."""
    s = equal_spans(n)
    xs = (np.arange(20000) + 0.5) / 20000  # grid that misses the exact roots
    m = responses(s, span, xs).moment[:, 0]
    idx = np.nonzero(np.sign(m[:-1]) != np.sign(m[1:]))[0]
    zeros = [xs[i] - m[i] * (xs[i + 1] - xs[i]) / (m[i + 1] - m[i]) for i in idx]
    assert len(zeros) == len(hicks)
    for z, digits in zip(zeros, hicks, strict=True):
        assert printed(z, digits), (z, "Hicks Table 2.1 [C]")
    assert zeros == pytest.approx(exact, abs=1e-8)  # linear interpolation error ~ h^2


# ---------------------------------------------------------------------------
# 3.1 Single spans: AISC Table 3-23 cases, re-derived [D]
# ---------------------------------------------------------------------------

L, W, P, EI = 4.0, 3.0, 5.0, 2.0
SECTION = {"E": "2 kN/m^2", "I": "1 m^4"}  # EI = 2 kN*m^2


def one_span(supports: list, loads: list[dict], spans: list | None = None):
    return solve_text(beam_text(spans or [L], supports, loads, section=SECTION))


UDL = {"type": "uniform", "spans": "all", "w": W}
MID_P = {"type": "point", "spans": 1, "P": P, "at": L / 2}


def test_simple_span_udl() -> None:
    """AISC Table 3-23, simple beam, uniform load [D]: R = wL/2, Mmax = wL^2/8 at L/2,
    V(0) = wL/2, Δmax = 5wL^4/384EI at L/2, end slopes ±wL^3/24EI."""
    s = one_span(["pinned", "pinned"], [UDL])
    assert case_reactions(s)[:, 0] == pytest.approx([W * L / 2] * 2, rel=EXACT)
    x, m = peak(s, 0, "moment")
    assert m == pytest.approx(W * L**2 / 8, rel=EXACT)
    assert x == pytest.approx(L / 2, abs=XTOL * L)
    x, d = peak(s, 0, "deflection")
    assert d == pytest.approx(5 * W * L**4 / (384 * EI), rel=EXACT)
    assert x == pytest.approx(L / 2, abs=XTOL * L)
    r = responses(s, 0, [0.0, L])
    assert r.shear[:, 0] == pytest.approx([W * L / 2, -W * L / 2], rel=EXACT)
    assert r.rotation[:, 0] == pytest.approx([W * L**3 / (24 * EI), -W * L**3 / (24 * EI)],
                                             rel=EXACT)


def test_simple_span_central_point() -> None:
    """AISC Table 3-23, simple beam, concentrated load at centre [D]: R = P/2,
    M = PL/4, Δ = PL^3/48EI at the load; shear jumps from +P/2 to -P/2 there."""
    s = one_span(["pinned", "pinned"], [MID_P])
    assert case_reactions(s)[:, 0] == pytest.approx([P / 2, P / 2], rel=EXACT)
    r = responses(s, [0, 0], [L / 2, L / 2], right=[False, True])
    assert r.shear[:, 0] == pytest.approx([P / 2, -P / 2], rel=EXACT)
    assert r.moment[:, 0] == pytest.approx([P * L / 4] * 2, rel=EXACT)
    assert r.deflection[:, 0] == pytest.approx([P * L**3 / (48 * EI)] * 2, rel=EXACT)
    x, d = peak(s, 0, "deflection")
    assert d == pytest.approx(P * L**3 / (48 * EI), rel=EXACT)
    assert x == pytest.approx(L / 2, abs=XTOL * L)


@pytest.mark.parametrize("pin_left", [True, False])
def test_propped_cantilever_udl(pin_left: bool) -> None:
    """AISC Table 3-23, beam fixed at one end, supported at the other, uniform load [D]:
    R = 3wL/8 (pin), 5wL/8 (fixed); M_fixed = -wL^2/8; +9wL^2/128 at 3L/8 from the pin;
    Δmax = wL^4/185EI (printed 0.005416) at 0.4215L from the pin, exactly
    x = (1 + sqrt(33))L/16 on v = w x (L^3 - 3L x^2 + 2x^3)/48EI (double integration)."""
    supports = ["pinned", "fixed"] if pin_left else ["fixed", "pinned"]
    s = one_span(supports, [UDL])

    def from_pin(x: float) -> float:
        return x if pin_left else L - x

    r = case_reactions(s)[:, 0]
    expected = [3 * W * L / 8, 5 * W * L / 8]
    assert r == pytest.approx(expected if pin_left else expected[::-1], rel=EXACT)
    m_fixed = responses(s, 0, L if pin_left else 0.0).moment[0, 0]
    assert m_fixed == pytest.approx(-W * L**2 / 8, rel=EXACT)
    x, m = peak(s, 0, "moment")
    assert m == pytest.approx(9 * W * L**2 / 128, rel=EXACT)
    assert from_pin(x) == pytest.approx(3 * L / 8, abs=XTOL * L)
    x, d = peak(s, 0, "deflection")
    xe = (1 + math.sqrt(33)) * L / 16
    assert from_pin(x) == pytest.approx(xe, abs=XTOL * L)
    assert d == pytest.approx(W * xe * (L**3 - 3 * L * xe**2 + 2 * xe**3) / (48 * EI), rel=EXACT)
    assert printed(d * EI / (W * L**4), "0.005416")  # references.md 3.1
    assert printed(from_pin(x) / L, "0.4215")
    assert abs(d * EI / (W * L**4) * 185 - 1) < 0.002  # "wL^4/185EI" is a rounded form


def test_propped_cantilever_central_point() -> None:
    """AISC Table 3-23, fixed one end, supported other, load at centre [D]:
    R = 5P/16 (pin), 11P/16 (fixed); M_fixed = -3PL/16; M under the load +5PL/32;
    Δmax = PL^3/(48 sqrt(5) EI) = 0.009317 PL^3/EI at L/sqrt(5) = 0.447L from the pin."""
    s = one_span(["pinned", "fixed"], [MID_P])
    assert case_reactions(s)[:, 0] == pytest.approx([5 * P / 16, 11 * P / 16], rel=EXACT)
    m = responses(s, 0, [L / 2, L]).moment[:, 0]
    assert m == pytest.approx([5 * P * L / 32, -3 * P * L / 16], rel=EXACT)
    x, d = peak(s, 0, "deflection")
    assert d == pytest.approx(P * L**3 / (48 * math.sqrt(5) * EI), rel=EXACT)
    assert x == pytest.approx(L / math.sqrt(5), abs=XTOL * L)
    assert printed(d * EI / (P * L**3), "0.009317")
    assert printed(x / L, "0.447")


def test_fixed_fixed_udl() -> None:
    """AISC Table 3-23, beam fixed at both ends, uniform load [D]: R = wL/2,
    M_ends = -wL^2/12, M_centre = +wL^2/24, Δmax = wL^4/384EI at the centre."""
    s = one_span(["fixed", "fixed"], [UDL])
    assert case_reactions(s)[:, 0] == pytest.approx([W * L / 2] * 2, rel=EXACT)
    m = responses(s, 0, [0.0, L / 2, L]).moment[:, 0]
    assert m == pytest.approx([-W * L**2 / 12, W * L**2 / 24, -W * L**2 / 12], rel=EXACT)
    x, d = peak(s, 0, "deflection")
    assert d == pytest.approx(W * L**4 / (384 * EI), rel=EXACT)
    assert x == pytest.approx(L / 2, abs=XTOL * L)
    # support moment reactions: statics of the whole beam, wall moments ±wL^2/12
    mr = case_reaction_moments(s)[:, 0]
    assert mr == pytest.approx([W * L**2 / 12, -W * L**2 / 12], rel=EXACT)


def test_fixed_fixed_central_point() -> None:
    """AISC Table 3-23, fixed both ends, load at centre [D]: R = P/2, M = ±PL/8,
    Δmax = PL^3/192EI at the centre."""
    s = one_span(["fixed", "fixed"], [MID_P])
    assert case_reactions(s)[:, 0] == pytest.approx([P / 2] * 2, rel=EXACT)
    m = responses(s, 0, [0.0, L / 2, L]).moment[:, 0]
    assert m == pytest.approx([-P * L / 8, P * L / 8, -P * L / 8], rel=EXACT)
    assert responses(s, 0, L / 2).deflection[0, 0] == pytest.approx(P * L**3 / (192 * EI),
                                                                    rel=EXACT)


@pytest.mark.parametrize("fixed_left", [True, False])
def test_cantilever_udl_and_tip_point(fixed_left: bool) -> None:
    """AISC Table 3-23, cantilever [D]: uniform load R = wL, M_fixed = -wL^2/2,
    tip Δ = wL^4/8EI; tip load R = P, M_fixed = -PL, tip Δ = PL^3/3EI."""
    supports = ["fixed", "free"] if fixed_left else ["free", "fixed"]
    tip, root = (L, 0.0) if fixed_left else (0.0, L)
    text = beam_text([L], supports, [UDL, {"case": "T", "type": "point", "spans": 1,
                                           "P": P, "at": tip}],
                     section=SECTION, cases={"D": "dead", "T": "dead"})
    s = solve_text(text)
    j_fix = 0 if fixed_left else 1
    r = case_reactions(s)
    assert r[j_fix] == pytest.approx([W * L, P], rel=EXACT)
    assert r[1 - j_fix] == pytest.approx([0.0, 0.0], abs=SMALL_SOLVE)
    m = responses(s, 0, root).moment[0]
    assert m == pytest.approx([-W * L**2 / 2, -P * L], rel=EXACT)
    d = responses(s, 0, tip).deflection[0]
    assert d == pytest.approx([W * L**4 / (8 * EI), P * L**3 / (3 * EI)], rel=EXACT)


A_OH = 1.5  # overhang length


def test_overhang_tip_point() -> None:
    """AISC Table 3-23, beam overhanging one support, load at the end [D]:
    R_far = -Pa/L, R_near = P(L+a)/L, M at the support -Pa, tip Δ = Pa^2(L+a)/3EI;
    the back span rises PaL^2/(9 sqrt(3) EI) (printed 0.0642 PaL^2/EI) at L/sqrt(3)."""
    s = one_span(["pinned", "pinned", "free"],
                 [{"type": "point", "spans": 2, "P": P, "at": A_OH}], spans=[L, A_OH])
    r = case_reactions(s)[:, 0]
    assert r[:2] == pytest.approx([-P * A_OH / L, P * (L + A_OH) / L], rel=EXACT)
    assert r[2] == pytest.approx(0.0, abs=SMALL_SOLVE)
    assert responses(s, 1, 0.0).moment[0, 0] == pytest.approx(-P * A_OH, rel=EXACT)
    tip = responses(s, 1, A_OH).deflection[0, 0]
    assert tip == pytest.approx(P * A_OH**2 * (L + A_OH) / (3 * EI), rel=EXACT)
    x, up = peak(s, 0, "deflection", sign=-1.0)
    assert -up == pytest.approx(P * A_OH * L**2 / (9 * math.sqrt(3) * EI), rel=EXACT)
    assert x == pytest.approx(L / math.sqrt(3), abs=XTOL * L)
    assert printed(-up * EI / (P * A_OH * L**2), "0.0642")


def test_overhang_udl_on_overhang() -> None:
    """AISC Table 3-23, overhang, uniform load on the overhang only [D]:
    R_far = -wa^2/2L, M at the support -wa^2/2, tip Δ = wa^3(4L + 3a)/24EI."""
    s = one_span(["pinned", "pinned", "free"],
                 [{"type": "uniform", "spans": 2, "w": W}], spans=[L, A_OH])
    r = case_reactions(s)[:, 0]
    far = -W * A_OH**2 / (2 * L)
    assert r == pytest.approx([far, W * A_OH - far, 0.0], rel=EXACT, abs=SMALL_SOLVE)
    assert responses(s, 1, 0.0).moment[0, 0] == pytest.approx(-W * A_OH**2 / 2, rel=EXACT)
    tip = responses(s, 1, A_OH).deflection[0, 0]
    assert tip == pytest.approx(W * A_OH**3 * (4 * L + 3 * A_OH) / (24 * EI), rel=EXACT)


# ---------------------------------------------------------------------------
# Other load types on a simple span: closed forms derived here
# ---------------------------------------------------------------------------


def mac(x: float, a: float, n: int) -> float:
    """Macaulay bracket <x - a>^n (right-side value at x = a for n = 0)."""
    return 0.0 if x < a else (x - a) ** n


@dataclass
class SimpleSpan:
    """Exact response of a simply supported span (pins at 0 and ``length``), constant EI.

    Derived by statics and double integration: with R_A from moments about B,
    V(x) = R_A - Q1(x), M(x) = R_A x - Q2(x) + sum M0 <x-c>^0 and
    EI v(x) = C x - R_A x^3/6 + Q4(x) - sum M0 <x-c>^2 / 2, C from v(L) = 0, where Qk
    is the k-fold integral of the downward load from 0 (Macaulay brackets).  A linear
    load w1 at a to w2 at b, slope s = (w2 - w1)/(b - a), is
    w1<x-a>^0 + s<x-a>^1 - w2<x-b>^0 - s<x-b>^1; a uniform load has s = 0; a point
    load P at c is P<x-c>^-1; a clockwise point moment M0 at c gives
    R_B = (sum F x_F + sum M0)/L (moments about A) and a jump +M0 in M.
    """

    length: float
    ei: float
    lines: list[tuple[float, float, float, float]] = field(default_factory=list)  # w1 w2 a b
    points: list[tuple[float, float]] = field(default_factory=list)  # P, c
    moments: list[tuple[float, float]] = field(default_factory=list)  # M0 (clockwise), c

    def reactions(self) -> tuple[float, float]:
        force = sum((w1 + w2) * (b - a) / 2 for w1, w2, a, b in self.lines)
        first = sum((b - a) * (w1 * (a + b) / 2 + (w2 - w1) * (a + 2 * (b - a) / 3) / 2)
                    for w1, w2, a, b in self.lines)  # sum of F * x_F: rectangle + triangle
        force += sum(p for p, _ in self.points)
        first += sum(p * c for p, c in self.points)
        rb = (first + sum(m for m, _ in self.moments)) / self.length
        return force - rb, rb

    def _q(self, x: float, k: int) -> float:
        """k-fold integral from 0 of the downward load (k = 1 shear part, 2 moment, 4 EI v)."""
        f = math.factorial
        out = 0.0
        for w1, w2, a, b in self.lines:
            s = (w2 - w1) / (b - a)
            out += (w1 * mac(x, a, k) / f(k) + s * mac(x, a, k + 1) / f(k + 1)
                    - w2 * mac(x, b, k) / f(k) - s * mac(x, b, k + 1) / f(k + 1))
        out += sum(p * mac(x, c, k - 1) / f(k - 1) for p, c in self.points)
        return out

    def shear(self, x: float) -> float:
        return self.reactions()[0] - self._q(x, 1)

    def moment(self, x: float) -> float:
        return (self.reactions()[0] * x - self._q(x, 2)
                + sum(m * mac(x, c, 0) for m, c in self.moments))

    def _ei_v_particular(self, x: float) -> float:
        return (-self.reactions()[0] * x**3 / 6 + self._q(x, 4)
                - sum(m * mac(x, c, 2) / 2 for m, c in self.moments))

    def deflection(self, x: float) -> float:
        c = -self._ei_v_particular(self.length) / self.length
        return (c * x + self._ei_v_particular(x)) / self.ei


def check_simple_span(ref: SimpleSpan, loads: list[dict], section: dict | None = None,
                      spans: list | None = None) -> None:
    """Engine against ``ref`` at 41 points (both side limits at load positions)."""
    s = solve_text(beam_text(spans or [ref.length], ["pinned", "pinned"], loads,
                             section=section or SECTION))
    assert case_reactions(s)[:, 0] == pytest.approx(ref.reactions(), rel=EXACT)
    xs = list(np.linspace(0.0, ref.length, 41))
    jumps = [c for _, c in ref.points + ref.moments]
    r_right = responses(s, 0, xs)
    # absolute floor: EXACT times the largest value of the quantity along the span, so
    # points at or near a zero (supports, inflection points) ask for no more digits
    # than the floats carry
    floor = {q: EXACT * max(abs(getattr(ref, q)(x)) for x in xs)
             for q in ("shear", "moment", "deflection")}
    for i, x in enumerate(xs):
        for q in ("shear", "moment", "deflection"):
            assert getattr(r_right, q)[i, 0] == pytest.approx(
                getattr(ref, q)(x), rel=EXACT, abs=floor[q]), (q, x)
    for c in jumps:  # left-side limits at a jump: the bracket just before c
        left = responses(s, 0, c, right=False)
        eps = 1e-9 * ref.length
        assert left.shear[0, 0] == pytest.approx(ref.shear(c - eps), rel=1e-7)
        assert left.moment[0, 0] == pytest.approx(ref.moment(c - eps), rel=1e-7, abs=1e-7)


@pytest.mark.parametrize(("a", "b"), [(0.0, 1.5), (1.0, 3.0), (2.5, 4.0)])
def test_partial_uniform_load(a: float, b: float) -> None:
    """Uniform load on part of a simple span: derived by statics and double integration
    (:class:`SimpleSpan`), R_A = w(b-a)(L - (a+b)/2)/L."""
    ref = SimpleSpan(L, EI, lines=[(W, W, a, b)])
    assert ref.reactions()[0] == pytest.approx(W * (b - a) * (L - (a + b) / 2) / L)
    check_simple_span(ref, [{"type": "uniform", "spans": 1, "w": W, "start": a, "end": b}])


@pytest.mark.parametrize(("w1", "w2", "a", "b"), [
    (0.0, W, 0.0, L),     # triangular, whole span
    (W, 0.0, 0.0, L),     # triangular, decreasing
    (1.0, 4.0, 0.5, 3.0),  # trapezoidal, partial
    (2.0, 0.0, 1.0, 3.5),  # triangular, partial
])
def test_linear_load(w1: float, w2: float, a: float, b: float) -> None:
    """Linear (triangular, trapezoidal) load on a simple span: derived by statics and
    double integration (:class:`SimpleSpan`)."""
    ref = SimpleSpan(L, EI, lines=[(w1, w2, a, b)])
    check_simple_span(ref, [{"type": "linear", "spans": 1, "w_start": w1, "w_end": w2,
                             "start": a, "end": b}])


def test_triangular_load_textbook() -> None:
    """Simple beam, load increasing uniformly to one end, total W = wL/2 (AISC Table 3-23
    "load increasing uniformly to one end", from memory): R1 = W/3, R2 = 2W/3,
    Mmax = 2WL/(9 sqrt 3) at L/sqrt 3, Δmax = 0.01304 WL^3/EI at 0.5193L."""
    s = solve_text(beam_text([L], ["pinned", "pinned"],
                             [{"type": "linear", "spans": 1, "w_start": 0.0, "w_end": W}],
                             section=SECTION))
    total = W * L / 2
    assert case_reactions(s)[:, 0] == pytest.approx([total / 3, 2 * total / 3], rel=EXACT)
    x, m = peak(s, 0, "moment")
    assert m == pytest.approx(2 * total * L / (9 * math.sqrt(3)), rel=EXACT)
    assert x == pytest.approx(L / math.sqrt(3), abs=XTOL * L)
    x, d = peak(s, 0, "deflection")
    assert printed(d * EI / (total * L**3), "0.01304")
    assert printed(x / L, "0.5193")
    # exact [D]: x = L sqrt(1 - sqrt(8/15)) from v' = 0 of the SimpleSpan curve
    assert x == pytest.approx(L * math.sqrt(1 - math.sqrt(8 / 15)), abs=XTOL * L)


@pytest.mark.parametrize("c", [1.0, 2.0, 3.25])
def test_point_moment_simple_span(c: float) -> None:
    """Clockwise point moment M0 on a simple span, derived by statics: R_A = -M0/L,
    R_B = +M0/L, M = -M0 x/L left of c, M0(1 - x/L) right of c; deflection by double
    integration (:class:`SimpleSpan`)."""
    m0 = 7.0
    ref = SimpleSpan(L, EI, moments=[(m0, c)])
    assert ref.reactions() == pytest.approx((-m0 / L, m0 / L))
    check_simple_span(ref, [{"type": "moment", "spans": 1, "M": m0, "at": c}])


def test_point_moment_at_span_end() -> None:
    """Clockwise moment M0 at the left end of a simple span: end rotations M0L/3EI (near)
    and -M0L/6EI (far), midspan deflection M0L^2/16EI (textbook formulas, from memory;
    also :class:`SimpleSpan` with c = 0)."""
    m0 = 7.0
    s = solve_text(beam_text([L], ["pinned", "pinned"],
                             [{"type": "moment", "spans": 1, "M": m0, "at": 0.0}],
                             section=SECTION))
    assert case_reactions(s)[:, 0] == pytest.approx([-m0 / L, m0 / L], rel=EXACT)
    r = responses(s, 0, [0.0, L / 2, L])
    assert r.rotation[[0, 2], 0] == pytest.approx([m0 * L / (3 * EI), -m0 * L / (6 * EI)],
                                                  rel=EXACT)
    assert r.deflection[1, 0] == pytest.approx(m0 * L**2 / (16 * EI), rel=EXACT)
    assert SimpleSpan(L, EI, moments=[(m0, 0.0)]).deflection(L / 2) == pytest.approx(
        m0 * L**2 / (16 * EI))


def test_mixed_loads_simple_span() -> None:
    """Superposition of every load type on one simple span (:class:`SimpleSpan`)."""
    ref = SimpleSpan(L, EI, lines=[(W, W, 0.0, L), (1.0, 2.5, 1.0, 3.0)],
                     points=[(P, 1.25)], moments=[(-4.0, 2.75)])
    check_simple_span(ref, [
        UDL,
        {"type": "linear", "spans": 1, "w_start": 1.0, "w_end": 2.5, "start": 1.0, "end": 3.0},
        {"type": "point", "spans": 1, "P": P, "at": 1.25},
        {"type": "moment", "spans": 1, "M": -4.0, "at": 2.75},
    ])


def test_self_weight() -> None:
    """Self weight = A * unit_weight as a uniform load (case-format contract): A = 0.25
    m^2, 24 kN/m^3 -> w = 6 kN/m; simple span values as AISC Table 3-23 [D]."""
    section = {**SECTION, "A": "0.25 m^2", "unit_weight": "24 kN/m^3"}
    w = 0.25 * 24.0
    ref = SimpleSpan(L, EI, lines=[(w, w, 0.0, L)])
    check_simple_span(ref, [{"type": "self_weight", "spans": "all"}], section=section)
    assert ref.deflection(L / 2) == pytest.approx(5 * w * L**4 / (384 * EI))


def test_self_weight_with_heavier_stretch() -> None:
    """Self weight follows the section of each stretch: A doubled on [1, 2.5] gives
    6 kN/m plus 6 kN/m on [1, 2.5] (derived by statics; EI unchanged)."""
    section = {**SECTION, "A": "0.25 m^2", "unit_weight": "24 kN/m^3"}
    spans = [{"length": L, "sections": [{"from": 1.0, "to": 2.5, "A": "0.5 m^2"}]}]
    ref = SimpleSpan(L, EI, lines=[(6.0, 6.0, 0.0, L), (6.0, 6.0, 1.0, 2.5)])
    check_simple_span(ref, [{"type": "self_weight", "spans": "all"}], section=section,
                      spans=spans)


# ---------------------------------------------------------------------------
# Springs, rotational restraint, columns: closed forms derived by compatibility
# ---------------------------------------------------------------------------

LS, WS, EIS = 3.0, 2.0, 5.0  # two equal spans for the central spring
SPRING_SECTION = {"E": "5 kN/m^2", "I": "1 m^4"}


def centre_spring_reaction(k: float) -> float:
    """Two equal spans L, UDL w, centre spring k (derived by compatibility): without the
    centre support the 2L beam sags 5w(2L)^4/384EI at the centre; a centre force R lifts
    it R(2L)^3/48EI; the spring shortens R/k.  So
    R (1/k + (2L)^3/48EI) = 5w(2L)^4/384EI, i.e. R = (5wL/4) / (1 + 48EI/(k (2L)^3))."""
    if k == 0.0:
        return 0.0
    return (5 * WS * LS / 4) / (1 + 48 * EIS / (k * (2 * LS) ** 3))


def simple_2l(x: float, r: float) -> float:
    """Deflection of the 2L simple beam at x <= L under w and an upward centre force r
    (textbook formulas, from memory: w x (l^3 - 2 l x^2 + x^3)/24EI and
    P x (3 l^2 - 4 x^2)/48EI for x <= l/2, l = 2L)."""
    span = 2 * LS
    return (WS * x * (span**3 - 2 * span * x**2 + x**3) / 24
            - r * x * (3 * span**2 - 4 * x**2) / 48) / EIS


@pytest.mark.parametrize("k", [0.0, 1.0, 12.5, 80.0, 1.0e3, 1.0e7])
def test_central_spring_support(k: float) -> None:
    """Reactions, centre deflection R/k (or the free 2L beam's 5w(2L)^4/384EI at k = 0)
    and the quarter-point deflection, against :func:`centre_spring_reaction` [derived]."""
    centre = {"type": "spring", "k_vertical": f"{k!r} kN/m"}
    s = solve_text(beam_text([LS, LS], ["pinned", centre, "pinned"],
                             [{"type": "uniform", "spans": "all", "w": WS}],
                             section=SPRING_SECTION))
    rc = centre_spring_reaction(k)
    re = (2 * WS * LS - rc) / 2
    assert case_reactions(s)[:, 0] == pytest.approx([re, rc, re], rel=EXACT, abs=SMALL_SOLVE)
    r = responses(s, [0, 0], [LS, LS / 2], right=[False, True])
    expected_centre = rc / k if k else 5 * WS * (2 * LS) ** 4 / (384 * EIS)
    assert r.deflection[0, 0] == pytest.approx(expected_centre, rel=EXACT)
    assert r.deflection[0, 0] == pytest.approx(simple_2l(LS, rc), rel=EXACT)
    assert r.deflection[1, 0] == pytest.approx(simple_2l(LS / 2, rc), rel=EXACT)


def test_central_spring_limits() -> None:
    """k -> rigid: the spring reaction tends to 10wL/8 (references.md 3.2, Hicks [C]);
    a spring with no k_vertical is rigid (case-format contract) and gives it exactly,
    as does a pinned support; k = 0 carries nothing (simple 2L beam)."""
    load = [{"type": "uniform", "spans": "all", "w": WS}]
    rigid = [solve_text(beam_text([LS, LS], ["pinned", c, "pinned"], load,
                                  section=SPRING_SECTION))
             for c in ("pinned", {"type": "spring"})]
    for s in rigid:
        assert case_reactions(s)[1, 0] == pytest.approx(10 * WS * LS / 8, rel=EXACT)
    stiff = solve_text(beam_text([LS, LS], ["pinned", {"type": "spring", "k_vertical": 1e9},
                                            "pinned"], load, section=SPRING_SECTION))
    assert case_reactions(stiff)[1, 0] == pytest.approx(10 * WS * LS / 8, rel=1e-6)
    assert centre_spring_reaction(0.0) == 0.0


def propped_spring_end_moment(k: float, length: float, ei: float, w: float) -> float:
    """Pin at A, vertical support with rotational spring k at B, UDL w (derived by
    compatibility): the end rotation of the simple span is
    θ_B = -wL^3/24EI - M_B L/3EI (M_B sagging-positive end moment) and the spring
    gives M_B = k θ_B, so M_B = -(wL^2/8) / (1 + 3EI/(kL)).  Fixed end: -wL^2/8
    (AISC Table 3-23 [D]); k = 0: simple span, 0."""
    return -(w * length**2 / 8) / (1 + 3 * ei / (k * length))


@pytest.mark.parametrize("k", [0.5, 10.0, 250.0, 1.0e4])
def test_rotational_spring_propped(k: float) -> None:
    """End moment, reactions (statics: R_A = wL/2 + M_B/L), spring rotation θ_B = M_B/k
    and the support's moment reaction (= M_B, counter-clockwise positive, statics)."""
    spring = {"type": "spring", "k_rotation": f"{k!r} kN*m/rad"}
    s = solve_text(beam_text([L], ["pinned", spring], [UDL], section=SECTION))
    mb = propped_spring_end_moment(k, L, EI, W)
    r = responses(s, 0, L)
    assert r.moment[0, 0] == pytest.approx(mb, rel=EXACT)
    assert r.rotation[0, 0] == pytest.approx(mb / k, rel=EXACT)
    ra = W * L / 2 + mb / L
    assert case_reactions(s)[:, 0] == pytest.approx([ra, W * L - ra], rel=EXACT)
    assert case_reaction_moments(s)[1, 0] == pytest.approx(mb, rel=EXACT)


@pytest.mark.parametrize("k", [1.0, 40.0, 3000.0])
def test_rotational_springs_both_ends(k: float) -> None:
    """Single span, equal rotational springs k at both ends, UDL (derived by compatibility
    and symmetry): θ_A = wL^3/24EI + M_e L/2EI and M_e = -k θ_A, so
    M_e = -(wL^2/12) / (1 + 2EI/(kL)); midspan M = wL^2/8 + M_e (statics)."""
    spring = {"type": "spring", "k_rotation": k}
    s = solve_text(beam_text([L], [spring, spring], [UDL], section=SECTION))
    me = -(W * L**2 / 12) / (1 + 2 * EI / (k * L))
    m = responses(s, 0, [0.0, L / 2, L]).moment[:, 0]
    assert m == pytest.approx([me, W * L**2 / 8 + me, me], rel=EXACT)
    assert case_reactions(s)[:, 0] == pytest.approx([W * L / 2] * 2, rel=EXACT)


@pytest.mark.parametrize(("far_end", "c"), [("fixed", 4.0), ("pinned", 3.0)])
def test_columns_as_rotational_spring(far_end: str, c: float) -> None:
    """Columns framing in at B restrain rotation by k = sum c E_c I_c / h (c = 4 far end
    fixed, 3 far end pinned: common practice); the end moment then follows
    :func:`propped_spring_end_moment` (derived)."""
    ec, ic, hb, ha = 3.0, 2.0, 3.5, 3.0
    cols = {"E": f"{ec!r} kN/m^2", "I": f"{ic!r} m^4", "height_below": hb,
            "height_above": ha, "far_end": far_end}
    s = solve_text(beam_text([L], ["pinned", {"type": "spring", "columns": cols}], [UDL],
                             section=SECTION))
    k = c * ec * ic / hb + c * ec * ic / ha
    mb = propped_spring_end_moment(k, L, EI, W)
    assert responses(s, 0, L).moment[0, 0] == pytest.approx(mb, rel=EXACT)


# ---------------------------------------------------------------------------
# Varying sections: unit-load method (virtual work), integrated exactly with SymPy
# ---------------------------------------------------------------------------

XS = sp.Symbol("x", real=True)


def virtual_work(m_real: sp.Expr, m_virtual: sp.Expr, pieces: list[tuple]) -> sp.Expr:
    """Exact integral of M m / EI over the pieces (a, b, EI) (unit-load method)."""
    return sum(sp.integrate(m_real * m_virtual / ei, (XS, a, b)) for a, b, ei in pieces)


def stretch_pieces(length: sp.Expr, breaks: list, eis: list) -> list[tuple]:
    edges = [sp.Integer(0), *breaks, length]
    return [(edges[i], edges[i + 1], eis[i]) for i in range(len(eis))]


@pytest.mark.parametrize("ratio", [2, 4, 10])
def test_stiffer_middle_third(ratio: int) -> None:
    """Simple span, I x ``ratio`` on the middle third, UDL: midspan deflection and end
    rotation by the unit-load method, delta = integral M m / EI(x) dx, with
    M = w x (L - x)/2, m = x/2 (x <= L/2, symmetric) for a unit load at midspan and
    m = 1 - x/L for a unit clockwise couple at A (derived; SymPy exact integration).
    Reactions stay wL/2 (statics)."""
    length, w, ei = sp.Integer(6), sp.Integer(3), sp.Integer(2)
    spans = [{"length": float(length),
              "sections": [{"from": 2.0, "to": 4.0, "I": f"{ratio} m^4"}]}]
    s = solve_text(beam_text(spans, ["pinned", "pinned"],
                             [{"type": "uniform", "spans": 1, "w": float(w)}], section=SECTION))
    m_real = w * XS * (length - XS) / 2
    half = stretch_pieces(length / 2, [length / 3], [ei, ratio * ei])
    delta = 2 * virtual_work(m_real, XS / 2, half)
    theta = virtual_work(m_real, 1 - XS / length,
                         stretch_pieces(length, [length / 3, 2 * length / 3],
                                        [ei, ratio * ei, ei]))
    r = responses(s, 0, [float(length) / 2, 0.0])
    assert r.deflection[0, 0] == pytest.approx(float(delta), rel=EXACT)
    assert r.rotation[1, 0] == pytest.approx(float(theta), rel=EXACT)
    assert case_reactions(s)[:, 0] == pytest.approx([9.0, 9.0], rel=EXACT)
    uniform = 5 * float(w) * float(length) ** 4 / (384 * float(ei))  # AISC 3-23 [D]
    assert r.deflection[0, 0] < uniform  # stiffer stretch, smaller sag


def test_stiffer_end_stretch_point_load() -> None:
    """Simple span 6 m, I x 3 on [0, 1.5], point load P at 4: deflection at 2.5 by the
    unit-load method (derived; SymPy exact), M and m the simple-span triangles."""
    length, ei, p, c, x0 = sp.Integer(6), sp.Integer(2), sp.Integer(5), sp.Integer(4), \
        sp.Rational(5, 2)
    spans = [{"length": 6.0, "sections": [{"from": 0.0, "to": 1.5, "I": "3 m^4"}]}]
    s = solve_text(beam_text(spans, ["pinned", "pinned"],
                             [{"type": "point", "spans": 1, "P": 5.0, "at": 4.0}],
                             section=SECTION))

    def triangle(force: sp.Expr, at: sp.Expr) -> sp.Expr:
        return sp.Piecewise((force * (length - at) / length * XS, at >= XS),
                            (force * at / length * (length - XS), True))

    breaks = sorted({sp.Rational(3, 2), x0, c})
    edges = [sp.Integer(0), *breaks, length]
    pieces = [(edges[i], edges[i + 1], 3 * ei if edges[i + 1] <= sp.Rational(3, 2) else ei)
              for i in range(len(edges) - 1)]
    delta = virtual_work(triangle(p, c), triangle(sp.Integer(1), x0), pieces)
    assert responses(s, 0, 2.5).deflection[0, 0] == pytest.approx(float(delta), rel=EXACT)


def test_propped_cantilever_stiffer_stretch() -> None:
    """Propped cantilever (pin at x = 0, fixed at L = 5), I x 3 on [3, 5], UDL w:
    redundant R_A by virtual work on the cantilever released at A (derived):
    M0 = -w x^2/2, m = x, R_A = -integral M0 m/EI / integral m^2/EI; fixed-end moment
    R_A L - wL^2/2 (statics).  Constant EI would give 3wL/8 (AISC Table 3-23 [D])."""
    length, w, ei = sp.Integer(5), sp.Integer(3), sp.Integer(2)
    spans = [{"length": 5.0, "sections": [{"from": 3.0, "to": 5.0, "I": "3 m^4"}]}]
    s = solve_text(beam_text(spans, ["pinned", "fixed"],
                             [{"type": "uniform", "spans": 1, "w": 3.0}], section=SECTION))
    pieces = stretch_pieces(length, [sp.Integer(3)], [ei, 3 * ei])
    ra = -virtual_work(-w * XS**2 / 2, XS, pieces) / virtual_work(XS, XS, pieces)
    assert ra != 3 * w * length / 8
    r = case_reactions(s)[:, 0]
    assert r == pytest.approx([float(ra), float(w * length - ra)], rel=EXACT)
    m_fixed = float(ra * length - w * length**2 / 2)
    assert responses(s, 0, 5.0).moment[0, 0] == pytest.approx(m_fixed, rel=EXACT)
