"""Section properties of doubly symmetric I-shapes, as arrays over the sections of a table.

Two kinds of table (section units: mm, mm^2, mm^3, mm^4, mm^6 / in, in^2, ..., in^6):

- full: ``name,d,bf,tf,tw,Ix,Zx,Sx,Iy,ry,J,Cw,weight`` (optional ``rts``, ``ho``, ``k``,
  ``fabrication``): every check of the steel sizing can be made;
- strength-only (the older table): ``name,Zx,Ix,Aw,weight``: plastic moment, shear on
  Aw and stiffness only; lateral-torsional buckling, flange local buckling, the web
  checks and vibration cannot be made and are reported as not checked.

Derived where not given: rts from Eq. F2-7 (rts^2 = sqrt(Iy Cw)/Sx), ho = d - tf (the
distance between flange centroids), Aw = d tw (G2.1).  The clear web height h for the
slenderness h/tw is d - 2k where the fillet distance k is given, else d - 2tf (a larger
h: on the safe side); k for J10.2 is tf where not given (no fillet: on the safe side).

``fabrication`` (``rolled`` or ``welded``; welded where not given, on the safe side)
picks the flange limits of Table B4.1b (case 10 rolled, case 11 welded) and whether
G2.1(a) may apply to the web (:mod:`envelope.sizing.ltb`, :mod:`envelope.sizing.web`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from envelope.sizing.ltb import rts as rts_f2_7

#: Columns of the full table, in the order of the contract.
FULL = ("name", "d", "bf", "tf", "tw", "Ix", "Zx", "Sx", "Iy", "ry", "J", "Cw", "weight")
#: Optional columns of the full table (derived or assumed where absent).
OPTIONAL = ("rts", "ho", "k")
#: Optional column saying how each shape is made, and its values.
FABRICATION = "fabrication"
FABRICATIONS = ("rolled", "welded")
#: Columns of the strength-only table.
STRENGTH_ONLY = ("name", "Zx", "Ix", "Aw", "weight")
#: What a strength-only table cannot check (the status says so).
NOT_CHECKED = ("lateral-torsional buckling (F2), flange local buckling (F3), web local "
               "yielding and crippling (J10.2, J10.3), floor vibration (DG11)")
#: Why a strength-only section cannot be checked further.
MISSING = "no d, bf, tf, tw, Sx, Iy, ry, J, Cw given"


@dataclass(frozen=True, slots=True)
class Shapes:
    """Properties per section (NaN where the table does not give them)."""

    name: tuple[str, ...]
    full: bool
    d: np.ndarray
    bf: np.ndarray
    tf: np.ndarray
    tw: np.ndarray
    Ix: np.ndarray
    Zx: np.ndarray
    Sx: np.ndarray
    Iy: np.ndarray
    ry: np.ndarray
    J: np.ndarray
    Cw: np.ndarray
    weight: np.ndarray
    rts: np.ndarray
    ho: np.ndarray
    k: np.ndarray
    Aw: np.ndarray
    h: np.ndarray
    rolled: np.ndarray        # bool: fabrication = "rolled" (else welded)
    k_given: bool

    @property
    def n(self) -> int:
        """Number of shapes."""
        return len(self.name)

    def take(self, i: int) -> Shapes:
        """One section as a table of one."""
        sel = slice(i, i + 1)
        vals = {f: getattr(self, f)[sel] for f in _ARRAYS}
        return Shapes(name=(self.name[i],), full=self.full, k_given=self.k_given, **vals)


_ARRAYS = ("d", "bf", "tf", "tw", "Ix", "Zx", "Sx", "Iy", "ry", "J", "Cw", "weight", "rts",
           "ho", "k", "Aw", "h", "rolled")


def from_columns(names: tuple[str, ...] | list[str], columns: dict[str, np.ndarray],
                 fabrication: tuple[str, ...] | list[str] | None = None) -> Shapes:
    """Shapes from named columns (positive numbers in section units).  A table with every
    :data:`FULL` column is full; otherwise it must have the :data:`STRENGTH_ONLY` ones.
    ``fabrication`` gives each shape's "rolled" or "welded" (None: every shape welded)."""
    names = tuple(names)
    n = len(names)
    nan = np.full(n, np.nan)
    col = {c: np.asarray(columns[c], dtype=float) if c in columns else nan
           for c in (*FULL[1:], *OPTIONAL, "Aw")}
    full = all(c in columns for c in FULL[1:])
    if full:
        if "rts" not in columns:
            col["rts"] = rts_f2_7(col["Iy"], col["Cw"], col["Sx"])
        if "ho" not in columns:
            col["ho"] = col["d"] - col["tf"]
        if "Aw" not in columns:
            col["Aw"] = col["d"] * col["tw"]
    k_given = "k" in columns
    if full and not k_given:
        col["k"] = col["tf"]
    col["h"] = col["d"] - 2.0 * col["k"]
    rolled = np.array([f == "rolled" for f in fabrication] if fabrication is not None
                      else [False] * n, dtype=bool)
    return Shapes(name=names, full=full, k_given=k_given, rolled=rolled, **col)


def check_geometry(shapes: Shapes) -> list[tuple[int, str, str]]:
    """Rows whose dimensions do not make an I-shape: (row index, column, problem)."""
    bad: list[tuple[int, str, str]] = []
    if not shapes.full:
        return bad
    for i in range(shapes.n):
        if 2.0 * shapes.tf[i] >= shapes.d[i]:
            bad.append((i, "tf", "two flanges are as deep as d or deeper"))
        elif shapes.tw[i] >= shapes.bf[i]:
            bad.append((i, "tw", "the web is as wide as the flange or wider"))
        elif shapes.h[i] <= 0.0:
            bad.append((i, "k", "d - 2k leaves no web"))
        elif shapes.ho[i] <= 0.0:
            bad.append((i, "ho", "must be greater than zero"))
        elif shapes.Sx[i] > shapes.Zx[i]:
            bad.append((i, "Sx", "is larger than Zx (an I-shape has Zx > Sx)"))
    return bad
