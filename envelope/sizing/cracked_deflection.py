"""Cracked, long-term and incremental deflection of each span of a concrete beam, from
the service moment diagrams of the analysis (ACI 318-19 24.2; EN 1992-1-1 7.4.3).

For each span the service arrangement that gives the span's largest analysed deflection
is taken (its coefficients over the unit cases, as the envelope found it), and from it
three moment diagrams along the span: the whole arrangement (``total``), its permanent
part (``permanent``) and its sustained part (``sustained``: permanent cases at their
factor, each variable case at its sustained fraction, ``[design] long_term.sustained``;
for EN 1992-1-1 the default fraction is psi_2 of EN 1990 Table A1.1, so the sustained
diagram is the quasi-permanent combination; for ACI 318-19 the default is 0).  Each
diagram's curvature, M / (E I) with the cracked stiffness of the steel provided, is
integrated along the span (:mod:`envelope.sizing.curvature`) between the analysed
support deflections; a cantilever starts from the slope of its neighbouring span (0 at
a support fixed against rotation).  The moments are those of the elastic analysis
(common practice: the redistribution of moments by cracking is not followed).

ACI 318-19: each diagram has its own Ie (Table 24.2.3.5) per region: the sagging part
of the span with Ma its largest sagging moment and the bottom steel, each hogging end
with Ma its largest hogging moment and the top steel at that face (Mcr = fr Ig / yt,
19.2.3.1; Ig of the gross section; Icr of the cracked transformed section, n = Es/Ec).
Immediate live = total - permanent; long-term = total + lambda_Delta x sustained
(24.2.4.1.1, rho' of the compression steel required at mid-span, at the support of a
cantilever).  The compression bars of a doubly reinforced section (``bars_compression``)
count in its cracked transformed section at (n - 1) As' (common practice; n As' where
they fall below the neutral axis), for both codes;
incremental = lambda_Delta x sustained + immediate live (the deflection after the
nonstructural elements are attached, Table 24.2.2 note, common practice).

EN 1992-1-1: at every point the curvature interpolates between the uncracked and the
cracked section with zeta of eq. 7.19 (Mcr = fctm Ig / yt): immediate = the total
diagram at Ecm with beta = 1; long-term = the sustained (quasi-permanent) diagram at
Ec,eff = Ecm / (1 + phi) with beta = 0.5 (7.4.3(5)); incremental = long-term - the
permanent diagram at Ecm with beta = 1 (the part after construction, 7.4.1(5)).
With ``long_term.shrinkage`` (eps_cs) the shrinkage curvature of 7.4.3(6), eq. 7.21,
is added to the long-term stage, uncracked and cracked interpolated with zeta of the
sustained moment (:func:`_shrinkage_en`); without it a note says it is left out.  The
uncracked section is the gross concrete section.

Everything here is in the design base units of :mod:`envelope.sizing.layout` (N, mm,
MPa; lb, in, psi for ACI in US units); results come back in section units (mm / in).
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np

from envelope import config
from envelope.combinations import PERMANENT_KINDS
from envelope.enveloper import governing_coefficients, governing_columns, reduce
from envelope.moving import moving_loads, placements, point_effects, with_placed
from envelope.recovery import Points, evaluate_some, make_points
from envelope.sizing import cracked, curvature
from envelope.solved import Solved

#: psi_2 of EN 1990 Table A1.1 (recommended values, from memory): the quasi-permanent
#: share of each variable action (by imposed-load category, snow below 1000 m, wind).
PSI_2: dict[str, float] = {"A": 0.3, "B": 0.3, "C": 0.6, "D": 0.6, "E": 0.8, "F": 0.6,
                           "G": 0.3, "H": 0.0, "snow": 0.0, "wind": 0.0, "rain": 0.0}
DEFAULT_CATEGORY = {"live": "B", "roof_live": "H"}


@dataclass(frozen=True, slots=True)
class Inputs:
    """What the deflection needs from ``[design]`` and the sizing, in base units.

    Steel per span (arrays of n_spans): tension steel provided and its depth at the
    sagging section (bottom) and at each face (top); 0 where none is provided."""

    code: str
    system: str           # unit system of the ACI base units ("SI" or "US")
    bw: float
    h: float
    bf: float             # flange width (= bw for a rectangle)
    hf: float             # flange depth (0 for a rectangle)
    fc: float             # f'c or fck
    as_bottom: np.ndarray
    d_bottom: np.ndarray
    as_top_left: np.ndarray
    d_top_left: np.ndarray
    as_top_right: np.ndarray
    d_top_right: np.ndarray
    sustained: dict[str, float]  # case name -> sustained fraction (given ones)
    months: float
    creep: float
    to_base_length: float     # consistent length (m, ft) -> base length (mm, in)
    to_base_moment: float     # consistent moment -> base moment (N*mm, lb*in)
    to_section: float         # base length -> section length (mm / in) for the results
    #: EN 1992-1-1 free shrinkage strain for the curvature of 7.4.3(6); None: left out
    shrinkage: float | None = None
    #: ACI 318-19 24.2.4.1.1 rho' of the compression steel at each design section, per
    #: span (left face, mid-span, right face); None: 0
    rho_prime: tuple[np.ndarray, np.ndarray, np.ndarray] | None = None
    #: depth at each design section (base length, arrays of n_spans) where the bars'
    #: depth d was taken; d elsewhere keeps the same distance from the far face
    h_bottom: np.ndarray | None = None
    h_top_left: np.ndarray | None = None
    h_top_right: np.ndarray | None = None
    #: per span: stretch starts, stretch ends (base length, span-local) and depths
    #: (base length); None: ``h`` all along
    profiles: tuple[tuple[np.ndarray, np.ndarray, np.ndarray], ...] | None = None
    #: compression steel provided per span (arrays of n_spans, base area; None: none) and
    #: the depth of its centroid from the compression face (base length): top bars of
    #: the sagging section, bottom bars of each hogging face (doubly reinforced rows)
    as2_bottom: np.ndarray | None = None
    d2_bottom: np.ndarray | None = None
    as2_top_left: np.ndarray | None = None
    d2_top_left: np.ndarray | None = None
    as2_top_right: np.ndarray | None = None
    d2_top_right: np.ndarray | None = None


def sustained_fractions(solved: Solved, code: str, sustained: dict[str, float]
                        ) -> np.ndarray:
    """Per load case of the beam: 1 for permanent kinds, else the given fraction or the
    code default (psi_2 for EN 1992-1-1, 0 for ACI 318-19)."""
    out = []
    for case in solved.beam.cases:
        if case.kind in PERMANENT_KINDS:
            out.append(1.0)
        elif case.name in sustained:
            out.append(float(sustained[case.name]))
        elif code == "en1992-1-1":
            key = case.category or DEFAULT_CATEGORY.get(case.kind, case.kind)
            out.append(PSI_2.get(key, PSI_2.get(case.kind, 0.0)))
        else:
            out.append(0.0)
    return np.array(out)


def _grid(solved: Solved, span: int) -> np.ndarray:
    """Integration points of span ``span``: an even grid, point loads, and stretch ends
    with a point just each side (where the depth, and so the stiffness, may step)."""
    beam = solved.beam
    length = beam.spans[span].length
    xs = [np.linspace(0.0, length, config.DEFLECTION_GRID + 1)]
    xs.append(np.array([ld.at for ld in beam.loads
                        if getattr(ld, "type", "") == "point" and ld.span == span
                        and ld.at is not None], dtype=float))
    # each side of a stretch end, so that the trapezoidal rule takes each stretch's own
    # stiffness up to the step (the end itself takes the shallower, :func:`_depth`)
    ends = np.array([st.end for st in beam.spans[span].stretches[:-1]], dtype=float)
    step = config.STRETCH_SIDE * length
    xs.append(np.r_[ends, ends - step, ends + step])
    x = np.unique(np.clip(np.concatenate(xs), 0.0, length))
    return x


def _diagrams(solved: Solved, span: int, x: np.ndarray, coef: np.ndarray
              ) -> tuple[np.ndarray, np.ndarray]:
    """Moments at ``x`` (n_x, n_diagrams) and deflections at the two span ends (2,
    n_diagrams), consistent units, for unit-case coefficients ``coef`` (units, diag)."""
    beam = solved.beam
    n = x.size
    pts = make_points(beam, np.full(n + 2, span),
                      np.r_[x, 0.0, beam.spans[span].length],
                      np.r_[np.ones(n, bool), True, False])
    r = evaluate_some(solved.mesh, solved.unit_cases, solved.solution, pts,
                      ("moment", "deflection"))
    return r["moment"][:n] @ coef, r["deflection"][n:] @ coef


def _cracking_points(inputs: Inputs, j: int, x: np.ndarray, m: np.ndarray, fctm: float
                     ) -> np.ndarray:
    """Points (the units of ``x``) that cut each interval of the grid ``x`` in which |M|
    of any diagram ``m`` (base units) crosses Mcr = fctm Ig / yt (EN 1992-1-1 7.4.3:
    zeta, and with it the curvature, jumps there when beta < 1) or changes sign (the
    shrinkage curvature of 7.4.3(6) jumps there) into :data:`config.CRACKING_SPLIT`
    parts."""
    g = cracked.gross(inputs.bw, _depth(inputs, j, x * inputs.to_base_length), inputs.bf,
                      inputs.hf)
    mcr = np.where(m >= 0.0, (fctm * g["ig"] / g["yt"])[:, None],
                   (fctm * g["ig"] / g["y_comp"])[:, None])
    above = np.abs(m) > mcr
    sags = m >= 0.0   # the shrinkage curvature changes sign with the region's steel
    idx = np.flatnonzero(np.any((above[:-1] != above[1:]) | (sags[:-1] != sags[1:]),
                                axis=1))
    t = np.linspace(0.0, 1.0, config.CRACKING_SPLIT + 1)[1:-1]
    return (x[idx, None] + (x[idx + 1] - x[idx])[:, None] * t[None, :]).ravel()


def _depth(inputs: Inputs, j: int, x: np.ndarray) -> np.ndarray:
    """The depth h at the points ``x`` (base length) of span ``j``: the stretch's, the
    shallower one at the common end of two stretches."""
    if inputs.profiles is None:
        return np.full(x.shape, inputs.h)
    start, end, h = inputs.profiles[j]
    inside = (start[None, :] <= x[:, None]) & (x[:, None] <= end[None, :])
    return np.asarray(np.min(np.where(inside, h[None, :], np.inf), axis=1))


def _section(inputs: Inputs, n_modular: float, j: int, x: np.ndarray
             ) -> dict[str, np.ndarray]:
    """Gross and cracked properties at the points ``x`` of span ``j``: sagging (bottom
    steel, flange in compression) and hogging at each end (top steel, web in
    compression).  The steel of each region is that of its design section, at the same
    distance from the tension face as there (h(x) - (h - d) of the design section)."""
    h = _depth(inputs, j, x)

    def d_at(d: np.ndarray, h_row: np.ndarray | None) -> np.ndarray:
        return h - (inputs.h - d[j] if h_row is None else h_row[j] - d[j])

    def comp(area: np.ndarray | None, depth: np.ndarray | None) -> tuple[float, float]:
        if area is None or depth is None:
            return 0.0, 0.0
        return float(area[j]), float(depth[j])

    g = cracked.gross(inputs.bw, h, inputs.bf, inputs.hf)
    d_sag = d_at(inputs.d_bottom, inputs.h_bottom)
    d_left = d_at(inputs.d_top_left, inputs.h_top_left)
    d_right = d_at(inputs.d_top_right, inputs.h_top_right)
    c_sag = comp(inputs.as2_bottom, inputs.d2_bottom)
    c_left = comp(inputs.as2_top_left, inputs.d2_top_left)
    c_right = comp(inputs.as2_top_right, inputs.d2_top_right)
    sag = cracked.cracked(inputs.bw, inputs.bf, inputs.hf, inputs.as_bottom[j], d_sag,
                          n_modular, *c_sag)
    left = cracked.cracked(inputs.bw, inputs.bw, 0.0, inputs.as_top_left[j], d_left,
                           n_modular, *c_left)
    right = cracked.cracked(inputs.bw, inputs.bw, 0.0, inputs.as_top_right[j], d_right,
                            n_modular, *c_right)
    return {"ig": g["ig"], "yt_sag": g["yt"], "yt_hog": g["y_comp"],
            "as2": np.array([c_sag[0], c_left[0], c_right[0]]),
            "d2": np.array([c_sag[1], c_left[1], c_right[1]]),
            "icr_sag": sag["icr"], "icr_left": left["icr"], "icr_right": right["icr"],
            "c_sag": sag["c"], "c_left": left["c"], "c_right": right["c"],
            "d_sag": d_sag, "d_left": d_left, "d_right": d_right, "y_comp": g["y_comp"],
            "h": h}


def _shrinkage_en(inputs: Inputs, j: int, x: np.ndarray, length: float, m: np.ndarray,
                  e: float, beta: float, fctm: float, root: str | None = None
                  ) -> np.ndarray:
    """Shrinkage curvature (n_x, 1) of EN 1992-1-1 7.4.3(6), eq. 7.21: 1/r_cs = eps_cs
    alpha_e S / I, alpha_e = Es / Ec,eff, for the uncracked state (S of the region's
    tension steel about the gross centroid, I = Ig) and the cracked state (S about the
    cracked neutral axis, I = Icr), interpolated with zeta of the moment ``m`` (eq.
    7.18).  Sagging where the span sags (bottom steel), hogging at the ends (top steel)."""
    eps = float(inputs.shrinkage or 0.0)
    alpha = cracked.ES["SI"] / e
    props = _section(inputs, alpha, j, x)
    ig = props["ig"]
    out = np.zeros(m.shape)
    steel = (inputs.as_bottom[j], inputs.as_top_left[j], inputs.as_top_right[j])
    for mask, sign, yt, icr, c, d, area, yc, area2, d2 in zip(
            _regions(x, length, m, root), (1.0, -1.0, -1.0),
            (props["yt_sag"], props["yt_hog"], props["yt_hog"]),
            (props["icr_sag"], props["icr_left"], props["icr_right"]),
            (props["c_sag"], props["c_left"], props["c_right"]),
            (props["d_sag"], props["d_left"], props["d_right"]), steel,
            (props["y_comp"], props["h"] - props["y_comp"], props["h"] - props["y_comp"]),
            props["as2"], props["d2"], strict=True):
        if not area > 0:
            continue
        zeta = cracked.zeta_en(m, (fctm * ig / yt)[:, None], beta)
        # S of all the reinforcement about each section's centroid (compression steel
        # on the other side of it counts negative)
        s1 = area * (d - yc) - area2 * (yc - d2)
        s2 = area * (d - c) - area2 * (c - d2)
        with np.errstate(invalid="ignore", divide="ignore"):
            k = (zeta * (s2 / icr)[:, None] + (1.0 - zeta) * (s1 / ig)[:, None])
        out = np.where(mask, sign * eps * alpha * k, out)
    return out


def _regions(x: np.ndarray, length: float, m: np.ndarray, root: str | None
             ) -> tuple[np.ndarray, ...]:
    """Masks (n_x, n_diag): sagging, hogging nearer the left end, nearer the right.  On
    a cantilever (``root`` "left" or "right") all hogging belongs to the root, whose top
    bars run to the tip (Ie at the support, ACI 318-19 24.2.3.7)."""
    sag = m >= 0.0
    if root is None:
        near_left = (x < length / 2.0)[:, None]
    else:
        near_left = np.full((x.size, 1), root == "left")
    return sag, ~sag & near_left, ~sag & ~near_left


def _flex_aci(inputs: Inputs, j: int, x: np.ndarray, length: float, m: np.ndarray,
              ec: float, fr: float, root: str | None = None
              ) -> tuple[np.ndarray, np.ndarray]:
    """1/(Ec Ie) at every point of every diagram (Table 24.2.3.5 per region, Ma the
    region's largest moment; Ig, Icr and Mcr those of the section at each point, which
    for a region of one depth is the table as written), and whether a cracked region
    has no steel to compute Icr with."""
    props = _section(inputs, cracked.ES[inputs.system] / ec, j, x)
    ig = props["ig"][:, None]
    out = np.broadcast_to(1.0 / (ec * ig), m.shape).copy()
    missing = np.zeros(m.shape[1], dtype=bool)
    masks = _regions(x, length, m, root)
    for mask, yt, icr in zip(masks, (props["yt_sag"], props["yt_hog"], props["yt_hog"]),
                             (props["icr_sag"], props["icr_left"], props["icr_right"]),
                             strict=True):
        ma = np.max(np.where(mask, np.abs(m), 0.0), axis=0)[None, :]
        mcr = (fr * ig[:, 0] / yt)[:, None]
        cracks = ma > 2.0 / 3.0 * mcr
        no_steel = ~np.isfinite(icr)[:, None]
        missing |= np.any(mask & cracks & no_steel, axis=0)
        ie = np.where(no_steel & ~cracks, ig,
                      cracked.ie_aci(ma, mcr, ig, np.nan_to_num(icr, nan=1.0)[:, None]))
        ie = np.where(no_steel & cracks, np.nan, ie)
        out = np.where(mask, 1.0 / (ec * ie), out)
    return out, missing


def _flex_en(inputs: Inputs, j: int, x: np.ndarray, length: float, m: np.ndarray,
             e: float, beta: float, fctm: float, root: str | None = None
             ) -> tuple[np.ndarray, np.ndarray]:
    """Curvature per unit moment by eq. 7.18/7.19 at every point (modular ratio
    Es / E), and whether a cracked point has no steel."""
    props = _section(inputs, cracked.ES["SI"] / e, j, x)
    ig = props["ig"][:, None]
    out = np.empty(m.shape)
    missing = np.zeros(m.shape[1], dtype=bool)
    for mask, yt, icr in zip(_regions(x, length, m, root),
                             (props["yt_sag"], props["yt_hog"], props["yt_hog"]),
                             (props["icr_sag"], props["icr_left"], props["icr_right"]),
                             strict=True):
        mcr = (fctm * ig[:, 0] / yt)[:, None]
        zeta = cracked.zeta_en(m, mcr, beta)
        no_steel = ~np.isfinite(icr)[:, None]
        missing |= np.any(mask & (zeta > 0) & no_steel, axis=0)
        flex = cracked.flexibility_en(zeta, e, ig, np.nan_to_num(icr, nan=1.0)[:, None])
        flex = np.where(no_steel & (zeta > 0), np.nan, flex)
        out = np.where(mask, flex, out)
    return out, missing


def _kind(solved: Solved, j: int) -> str:
    """"span" (supported at both ends), "cantilever-left" / "cantilever-right" (free at
    that end), or "other" (not handled: a hinge inside, or no support at either end)."""
    beam = solved.beam
    if getattr(beam.spans[j], "hinges", ()):
        return "other"
    left = beam.supports[j].restrains_vertical
    right = beam.supports[j + 1].restrains_vertical
    if left and right:
        return "span"
    if right and not left and j == 0:
        return "cantilever-left"
    if left and not right and j == beam.n_spans - 1:
        return "cantilever-right"
    return "other"


class _Spans:
    """Deflections of the diagrams of one arrangement on any span of the beam."""

    def __init__(self, solved: Solved, inputs: Inputs, coef: np.ndarray) -> None:
        self.solved, self.inputs, self.coef = solved, inputs, coef
        code = inputs.code
        if code == "aci318-19":
            self.ec = float(cracked.ec_aci(inputs.fc, inputs.system))
            self.fr = float(cracked.fr_aci(inputs.fc, inputs.system))
        else:
            from envelope.sizing.concrete_en import fctm
            self.ecm = float(cracked.ecm_en(inputs.fc))
            self.fctm = float(fctm(inputs.fc))

    def _shrinkage(self, j: int, x: np.ndarray, length: float, m: np.ndarray,
                   stages: list[tuple[int, float, float]], root: str | None = None
                   ) -> np.ndarray:
        """EN 1992-1-1 shrinkage curvature of each stage: on the long-term stage (the
        sustained diagram, column 2) where ``shrinkage`` is given, else 0."""
        out = np.zeros(m.shape)
        if self.inputs.code == "aci318-19" or not self.inputs.shrinkage:
            return out
        for k, (col, phi, beta) in enumerate(stages):
            if col == 2:
                out[:, k:k + 1] = _shrinkage_en(
                    self.inputs, j, x, length, m[:, k:k + 1],
                    float(cracked.e_eff_en(self.ecm, phi)), beta, self.fctm, root)
        return out

    def _moments(self, j: int, cols: list[int]
                 ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """The grid of span ``j`` (consistent units), the moments of the diagrams
        ``cols`` on it (base units) and their end deflections (consistent); for EN
        1992-1-1 the grid is cut finer where |M| crosses Mcr (:func:`_cracking_points`)."""
        solved, inputs = self.solved, self.inputs
        x_c = _grid(solved, j)
        m_c, w_ends = _diagrams(solved, j, x_c, self.coef[:, cols])
        m = m_c * inputs.to_base_moment
        if inputs.code != "aci318-19":
            for _ in range(config.CRACKING_PASSES):
                extra = _cracking_points(inputs, j, x_c, m, self.fctm)
                if extra.size == 0:
                    break
                x_c = np.unique(np.r_[x_c, extra])
                m_c, w_ends = _diagrams(solved, j, x_c, self.coef[:, cols])
                m = m_c * inputs.to_base_moment
        return x_c, m, w_ends

    def deflect(self, j: int, stages: list[tuple[int, float, float]],
                slope_end: str | None = None
                ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """Deflections (base units) on span ``j`` of the diagrams ``stages`` (diagram
        column, E factor (EN: creep coefficient; ACI unused), beta), the grid, the end
        slopes (2, n_stages) and a mask of stages that could not be computed."""
        solved, inputs = self.solved, self.inputs
        length_c = solved.beam.spans[j].length
        x_c, m, w_ends = self._moments(j, [s[0] for s in stages])
        x = x_c * inputs.to_base_length
        length = length_c * inputs.to_base_length
        if inputs.code == "aci318-19":
            flex, missing = _flex_aci(inputs, j, x, length, m, self.ec, self.fr)
        else:
            flex = np.empty(m.shape)
            missing = np.zeros(len(stages), dtype=bool)
            for k, (_, phi, beta) in enumerate(stages):
                f, miss = _flex_en(inputs, j, x, length, m[:, k:k + 1],
                                   float(cracked.e_eff_en(self.ecm, phi)), beta, self.fctm)
                flex[:, k:k + 1], missing[k] = f, miss[0]
        kappa = m * flex + self._shrinkage(j, x, length, m, stages)
        w_ends = w_ends * inputs.to_base_length
        out = curvature.simple_span(x, kappa, w_ends[0], w_ends[1])
        slopes = np.vstack([out["slope_left"], out["slope_right"]])
        return out["w"], x, slopes, missing

    def cantilever(self, j: int, stages: list[tuple[int, float, float]], root_left: bool
                   ) -> tuple[np.ndarray, np.ndarray | None]:
        """Cantilever ``j`` with its root at the left (``root_left``) or right end."""
        solved, inputs = self.solved, self.inputs
        beam = solved.beam
        x_c, m, w_ends = self._moments(j, [s[0] for s in stages])
        x = x_c * inputs.to_base_length
        length = beam.spans[j].length * inputs.to_base_length
        root_end = "left" if root_left else "right"
        if inputs.code == "aci318-19":
            flex, missing = _flex_aci(inputs, j, x, length, m, self.ec, self.fr, root_end)
        else:
            flex = np.empty(m.shape)
            missing = np.zeros(len(stages), dtype=bool)
            for k, (_, phi, beta) in enumerate(stages):
                f, miss = _flex_en(inputs, j, x, length, m[:, k:k + 1],
                                   float(cracked.e_eff_en(self.ecm, phi)), beta, self.fctm,
                                   root_end)
                flex[:, k:k + 1], missing[k] = f, miss[0]
        shrink = self._shrinkage(j, x, length, m, stages, root_end)
        root = beam.supports[j if root_left else j + 1]
        # the neighbour shares the root: its right end when the root is the
        # cantilever's left end, and the reverse
        neighbour = j - 1 if root_left else j + 1
        if np.isinf(root.k_rotation):
            slope = np.zeros(len(stages))
        elif 0 <= neighbour < beam.n_spans and _kind(solved, neighbour) == "span":
            _, _, slopes, miss = self.deflect(neighbour, stages)
            missing |= miss
            slope = slopes[1] if root_left else slopes[0]
        else:
            return np.full((x.size, len(stages)), np.nan), None
        w_root = w_ends[0 if root_left else 1] * inputs.to_base_length
        w = curvature.cantilever(x, m * flex + shrink, root_left, w_root, slope)
        return np.where(missing[None, :], np.nan, w), missing


def _shrinkage_note(inputs: Inputs) -> list[str]:
    """Say so where EN 1992-1-1 shrinkage curvature is left out (no strain given)."""
    if inputs.code == "aci318-19" or inputs.shrinkage:
        return []
    return ["shrinkage curvature (EN 1992-1-1 7.4.3(6)) not included: give "
            "long_term.shrinkage"]


def _lambda_delta(inputs: Inputs, kind: str, j: int) -> float:
    """ACI 318-19 24.2.4.1.1 lambda_Delta = xi / (1 + 50 rho') of span ``j``, rho' of the
    compression steel at mid-span, at the support for a cantilever."""
    where = {"cantilever-left": 2, "cantilever-right": 0}.get(kind, 1)
    rho = 0.0 if inputs.rho_prime is None else float(inputs.rho_prime[where][j])
    return float(cracked.lambda_delta(inputs.months, rho))


def _governing_case(solved: Solved, pts: Points, r_def: np.ndarray
                    ) -> tuple[Solved, np.ndarray]:
    """The case governing the largest service deflection among ``pts`` (responses
    ``r_def``): coefficients over the unit cases, and the solved beam they refer to.
    With moving loads, each moving case placed where it governs becomes one more unit
    case (of its load case, so it keeps its own sustained fraction) at its factor."""
    beam, cs = solved.beam, solved.service
    if not moving_loads(beam):
        env = reduce(r_def, cs, labels=False)
        k = int(np.argmax(env.max))
        return solved, governing_coefficients(r_def[k:k + 1], cs)[0]
    effect = point_effects(beam, pts, ("deflection",))["deflection"]
    env = reduce(r_def, cs, labels=False, moving=effect)
    k = int(np.argmax(env.max))
    row = effect.rows(np.array([k]))
    coef = governing_coefficients(r_def[k:k + 1], cs, row)[0]
    placed = placements(beam, cs, governing_columns(r_def[k:k + 1], cs, row), row)[0]
    units, sol, _ = with_placed(beam, solved.mesh, solved.unit_cases, solved.solution,
                                [p for _, p in placed])
    coef = np.r_[coef, [f for f, _ in placed]]
    return dataclasses.replace(solved, unit_cases=units, solution=sol), coef


def span_deflections(solved: Solved, inputs: Inputs) -> dict[str, object]:
    """Per span (arrays of n_spans, section units): ``immediate``, ``immediate_live``
    (ACI; NaN for EN), ``long_term``, ``incremental``, ``lambda_delta`` (ACI), and per
    span lists of ``notes`` and ``failures``."""
    beam = solved.beam
    n = beam.n_spans
    nan = np.full(n, np.nan)
    res = {k: nan.copy() for k in ("immediate", "immediate_live", "long_term",
                                   "incremental", "lambda_delta")}
    notes: list[list[str]] = [[] for _ in range(n)]
    failures: list[list[str]] = [[] for _ in range(n)]
    cs = solved.service
    if cs.is_empty:
        for j in range(n):
            failures[j].append("cracked deflection not checked: no service combinations")
        return {**res, "notes": notes, "failures": failures}
    frac = sustained_fractions(solved, inputs.code, inputs.sustained)
    aci = inputs.code == "aci318-19"
    for j in range(n):
        kind = _kind(solved, j)
        lam = _lambda_delta(inputs, kind, j) if aci else np.nan
        notes[j].extend(_shrinkage_note(inputs))
        if kind == "other":
            failures[j].append("cracked deflection not computed for this span (an internal "
                               "hinge, or no support at an end that is not a cantilever "
                               "tip): check it by other means")
            continue
        x_c = _grid(solved, j)
        pts = make_points(beam, np.full(x_c.size, j), x_c)
        r_def = evaluate_some(solved.mesh, solved.unit_cases, solved.solution, pts,
                              ("deflection",))["deflection"]
        solved_j, coef_t = _governing_case(solved, pts, r_def)
        unit_case = solved_j.unit_cases.case
        permanent = np.array([c.kind in PERMANENT_KINDS for c in beam.cases])[unit_case]
        loaded = coef_t != 0.0
        coef_p = np.where(permanent, coef_t, 0.0)
        coef_s = np.where(permanent, coef_t, np.where(loaded, frac[unit_case], 0.0))
        coef = np.c_[coef_t, coef_p, coef_s]
        spans = _Spans(solved_j, inputs, coef)
        if aci:
            stages = [(0, 0.0, 1.0), (1, 0.0, 1.0), (2, 0.0, 1.0)]
        else:
            stages = [(0, 0.0, cracked.BETA_SHORT), (1, 0.0, cracked.BETA_SHORT),
                      (2, inputs.creep, cracked.BETA_SUSTAINED)]
        if kind == "span":
            w, _, _, missing = spans.deflect(j, stages)
        else:
            w, cant_missing = spans.cantilever(j, stages,
                                               root_left=(kind == "cantilever-right"))
            if cant_missing is None:
                failures[j].append("cracked deflection not computed for this cantilever: "
                                   "its root slope is unknown (no neighbouring span "
                                   "supported at both ends)")
                continue
            missing = cant_missing
        if missing.any():
            failures[j].append("cracked deflection not computed: the service moment cracks "
                               "a section where no tension steel is provided")
            continue
        w = w * inputs.to_section
        if aci:
            t, p, s = w[:, 0], w[:, 1], w[:, 2]
            res["immediate"][j] = np.max(t)
            res["immediate_live"][j] = np.max(t - p)
            res["long_term"][j] = np.max(t + lam * s)
            res["incremental"][j] = np.max(lam * s + t - p)
            res["lambda_delta"][j] = lam
        else:
            t, p, s = w[:, 0], w[:, 1], w[:, 2]
            res["immediate"][j] = np.max(t)
            res["long_term"][j] = np.max(s)
            res["incremental"][j] = np.max(s - p)
    return {**res, "notes": notes, "failures": failures}
