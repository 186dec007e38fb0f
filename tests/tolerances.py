"""Named tolerances of the test suite, each with the reason it is what it is.

Use these names instead of bare literals in new tests; add a name with its reason when
none fits.  Engine tolerances (statics, searches, merging) live in envelope/config.py.
"""

from __future__ import annotations

#: Float64 round-off of a short computation (a few dozen operations on values of order
#: one) compared with exact arithmetic: a few hundred ulps, 2.2e-16 each.
ROUND_OFF = 1e-13

#: One banded solve of a small beam against a closed form: round-off grows with the
#: stiffness contrast and the number of elements; 1e-9 is the statics tolerance of
#: config.STATICS_RTOL, so anything looser than this would hide a failed check.
SOLVE = 1e-9

#: A sum of many load pieces (a load cut at every element and cell boundary): each
#: piece is exact to round-off, the sum loses at most n * eps of its largest term.
LONG_SUM = 1e-12

#: Unit conversions against the exact definitions (NIST SP 811): one or two
#: multiplications by exact constants, so a few ulps.
CONVERSION = 1e-14

#: A value one or two correctly rounded operations from an exact one (30000 MPa as
#: 3.0e7 kN/m^2, 1 in^4 as 1/20736 ft^4, one triangular solve against the same solve
#: of a matrix of right-hand sides): a few ulps.
ULPS = 1e-15

#: Two implementations of one algorithm in nearly the same order of operations (the
#: engine's banded Cholesky against LAPACK's on a diagonally dominant matrix): only
#: reordered or fused operations differ, a few dozen ulps of the largest entry.
SAME_ALGORITHM = 1e-14

#: A value read through the case file's units (a unit string parsed, its factor
#: composed from the definitions, times the reader's own scale) against the same value
#: from exact factors by hand: a few dozen ulps; far below any slip of a factor.
UNIT_READING = 1e-12

#: One quantity by two algebraically equal formulas over inputs of widely different
#: size (element end forces from the exact and the fast expressions, EI from 1e3 to
#: 1e6): cancellation between terms costs up to a few thousand ulps of the largest.
REARRANGED = 1e-12

#: One banded solve of a small, well-conditioned beam (one to three prismatic spans,
#: no stiffness contrast, values of order one) against a closed form: round-off stays
#: near 1e-14; a thousand times tighter than SOLVE, which allows for stiff contrasts.
SMALL_SOLVE = 1e-12

#: An absolute floor for result-table values that cancel to zero (output units:
#: kN*m, kN, mm, values up to about 1e3): round-off of 1e3 at LONG_SUM.
NEAR_ZERO = 1e-9

#: A value integrated along elements by another route (a composite quadrature exact
#: for the integrand's degree, over a few thousand points; a response recovered inside
#: an element against the same point made a node): round-off of the longer sums, an
#: order above LONG_SUM.
INTEGRATED = 1e-11

#: Deflections and rotations of one solve against a closed form: displacements carry
#: the round-off of the solve times the stiffness matrix's condition (about 1e3 to 1e4
#: for a few elements of EI = 1), so a digit or two less than forces (SMALL_SOLVE).
DISPLACEMENT = 1e-10

#: Hundreds to thousands of load items summed into one result (500 abutting partial
#: loads, 5000 point loads on a span): each item exact to round-off, the sum losing up
#: to n * eps of its largest term for n in the thousands, a hundred times LONG_SUM.
MANY_LOADS = 1e-10
#: A peak read at the output stations without refinement between them (the DG11 dead-load
#: deflection of a span with 25 to 41 stations): the value near a smooth maximum is off
#: by about (h/L)^2 of its curvature, under 1e-3 for those station counts.
STATION_PEAK = 1e-3
#: A cracked concrete deflection integrated on the engine's grid (400 intervals a span,
#: cut finer where the curvature jumps, the peak read at grid points) against adaptive
#: quadrature with the jumps as breakpoints: about (1/400)^2 of the peak, 1e-5; an
#: interval left holding a jump would be off by about 1e-3.
CRACKED_GRID = 5e-5
