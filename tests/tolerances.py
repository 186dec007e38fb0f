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
