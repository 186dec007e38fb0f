"""The design sections of a beam and their demands, and the unit bookkeeping of sizing.

Three rows per span, in order: ``left`` (the left support face), ``span`` (the largest
sagging moment) and ``right`` (the right support face).  Moments are the strength
envelope (consistent units, sagging positive): hogging at the support faces for concrete
built with its supports (ACI 318-19 9.4.2.1, EN 1992-1-1 5.3.2.2(3)) and at the support
centrelines for steel (a steel beam runs over its bearing, no face reduction).  Shears
are the largest magnitudes of the strength envelope at the ends; for concrete they are
taken at d from the face where the code allows it (see :func:`design_rows`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from envelope import config
from envelope.analysis import Analysis
from envelope.model import Beam
from envelope.recovery import make_points
from envelope.solved import envelope_at

SECTIONS = ("left", "span", "right")

#: Why the concrete shear is taken at the face instead of d from it.
FACE_REASONS = {
    "free": "no support at this end",
    "tension": "the reaction may pull on the beam under some combination",
    "point": "a point load lies within d of the face",
}


@dataclass(frozen=True, slots=True)
class Rows:
    """Design sections, 3 per span (consistent units)."""

    span: np.ndarray       # 0-based
    section: np.ndarray    # object: "left" | "span" | "right"
    x_span: np.ndarray     # where the moment is taken (NaN: a span that never sags)
    moment: np.ndarray     # signed, sagging positive; 0 where none of that sign
    shear: np.ndarray      # magnitude at the ends; NaN on span rows
    shear_x_span: np.ndarray
    face_reason: np.ndarray  # object: "" (shear at d, or steel) or a FACE_REASONS key

    @property
    def n(self) -> int:
        """Number of design rows."""
        return int(self.span.size)

    @property
    def is_span(self) -> np.ndarray:
        """True on the mid-span rows."""
        return self.section == "span"

    @property
    def is_end(self) -> np.ndarray:
        """True on the rows at span ends."""
        return self.section != "span"


@dataclass(frozen=True, slots=True)
class Sized:
    """One material's sizing of the rows: columns in output units, their units, and per
    row what governs (``notes``) and what fails and by how much (``failures``)."""

    rows: Rows
    columns: dict[str, np.ndarray]
    units: dict[str, str]
    notes: list[list[str]]
    failures: list[list[str]]
    candidates: tuple[str, ...] = ()  # steel: what rejects each section of the table


@dataclass(frozen=True, slots=True)
class Scales:
    """Multipliers from engine values to a design module's base units.

    ``moment`` and ``force`` take consistent units (kN*m, kN / kip*ft, kip) to the base;
    ``length`` and ``stress`` take section units (mm, MPa / in, ksi) to the base;
    ``area`` takes base areas back to section units (mm^2 / in^2)."""

    moment: float
    force: float
    length: float
    stress: float
    area: float = 1.0


KIP_N = 4448.2216152605
IN_MM = 25.4
KSI_MPA = 6.894757293168361

#: ACI 318-19 in its own unit systems: SI N, mm, MPa; US lb, in, psi.
ACI_SCALES = {"SI": Scales(moment=1e6, force=1e3, length=1.0, stress=1.0),
              "US": Scales(moment=12_000.0, force=1_000.0, length=1.0, stress=1_000.0)}
#: EN 1992-1-1 always in N, mm, MPa.
EN_SCALES = {"SI": Scales(moment=1e6, force=1e3, length=1.0, stress=1.0),
             "US": Scales(moment=KIP_N * 12 * IN_MM, force=KIP_N, length=IN_MM,
                          stress=KSI_MPA, area=1.0 / IN_MM**2)}
#: AISC 360-22 in the section units: SI N, mm, MPa; US kip, in, ksi.
AISC_SCALES = {"SI": Scales(moment=1e6, force=1e3, length=1.0, stress=1.0),
               "US": Scales(moment=12.0, force=1.0, length=1.0, stress=1.0)}

SECTION_UNITS = {
    "SI": {"length": "mm", "area": "mm2", "modulus": "mm3", "inertia": "mm4",
           "stress": "MPa", "area_per_length": "mm2/mm"},
    "US": {"length": "in", "area": "in2", "modulus": "in3", "inertia": "in4",
           "stress": "ksi", "area_per_length": "in2/in"},
}


def section_to_consistent(beam: Beam) -> float:
    """Multiplier from section length units (mm, in) to consistent length (m, ft)."""
    return beam.units.to_consistent("deflection")


def _point_loads(beam: Beam, span: int) -> np.ndarray:
    return np.array([ld.at for ld in beam.loads if ld.type == "point" and ld.span == span],
                    dtype=float)


def design_rows(analysis: Analysis, at_faces: bool,
                shear_shift: float | np.ndarray | None) -> Rows:
    """The design sections and their demands.

    ``at_faces``: hogging moments at the support faces (else the centrelines).
    ``shear_shift``: for concrete, d in consistent length: the shear is taken at d from
    the face (ACI 318-19 9.4.3.2, EN 1992-1-1 6.2.1(8)) where the support pushes up on the
    beam under every strength combination and no point load lies between the face and d;
    otherwise at the face (the section is never moved past mid-span); one d per row
    (3 per span) where the depth varies.  ``None`` (steel): the shear at the support
    centreline.
    """
    beam = analysis.beam
    d = analysis.design_actions
    n = beam.n_spans
    lengths = beam.geometry.span_length
    face_l, face_r = beam.geometry.face_left, beam.geometry.face_right

    span = np.repeat(np.arange(n), 3)
    section = np.tile(np.array(SECTIONS, dtype=object), n)
    x_span = np.empty(3 * n)
    moment = np.empty(3 * n)
    shear = np.full(3 * n, np.nan)
    shear_x = np.full(3 * n, np.nan)
    reason = np.full(3 * n, "", dtype=object)
    left, mid, right = np.arange(n) * 3, np.arange(n) * 3 + 1, np.arange(n) * 3 + 2

    x_span[mid] = d["moment_pos_x"]
    moment[mid] = d["moment_pos"]
    if at_faces:
        x_span[left], x_span[right] = face_l, face_r
        moment[left], moment[right] = d["moment_neg_left_face"], d["moment_neg_right_face"]
    else:
        x_span[left], x_span[right] = 0.0, lengths
        moment[left], moment[right] = d["moment_neg_left"], d["moment_neg_right"]
    # round-off at a pinned end or a free tip is no moment (and no "-0" in the tables)
    scale = max(float(np.max(np.abs(moment), initial=0.0)), np.finfo(float).tiny)
    moment = np.where(np.abs(moment) <= config.ZERO_RTOL * scale, 0.0, moment)

    if shear_shift is None:
        shear[left], shear[right] = d["shear_left"], d["shear_right"]
        shear_x[left], shear_x[right] = 0.0, lengths
    else:
        pulls = np.zeros(n + 1, dtype=bool)
        env = analysis.reaction_envelopes["reaction"]
        if env is not None:
            pulls[analysis.support_joints] = env.min < 0.0
        xs, rights = [], []
        for j in range(n):
            loads = _point_loads(beam, j)
            for end, joint in (("left", j), ("right", j + 1)):
                sup = beam.supports[joint]
                if end == "left":
                    face, toward = face_l[j], 1.0
                else:
                    face, toward = face_r[j], -1.0
                row = 3 * j + (0 if end == "left" else 2)
                shift = float(np.asarray(shear_shift)[row]) if np.ndim(shear_shift) \
                    else float(shear_shift)
                shifted = face + toward * shift
                shifted = min(shifted, lengths[j] / 2) if end == "left" else \
                    max(shifted, lengths[j] / 2)
                lo, hi = sorted((face, shifted))
                why = ""
                if not sup.restrains_vertical:
                    why = "free"
                elif pulls[joint]:
                    why = "tension"
                elif np.any((loads >= lo) & (loads <= hi)):
                    why = "point"
                reason[row] = why
                xs.append(face if why else shifted)
                rights.append(end == "left")
        ends = np.sort(np.r_[left, right])
        pts = make_points(beam, span[ends], np.array(xs), np.array(rights))
        ext = envelope_at(analysis.solved, pts, "shear", labels=False)
        if ext is not None:
            shear[ends] = np.maximum(np.abs(ext.max), np.abs(ext.min))
        shear_x[ends] = xs
    return Rows(span, section, x_span, moment, shear, shear_x, reason)
