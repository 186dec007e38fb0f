"""envelope.png: the beam and its loads, then moment, shear and service deflection.

Drawn from the result columns alone (so ``envelope plot`` redraws from the Parquet
files; the beam strip from the ``envelope:sketch`` metadata), with matplotlib's object
API on the Agg canvas: no pyplot, no window, no layout engine (fixed margins).

* the strip: spans, supports by type (pinned, fixed, vertical and rotational springs
  drawn as springs, free ends), support faces, hinges, and every load drawn to scale,
  one lane per load case, each lane with its own scale;
* moment: the envelope, the largest sagging moment of each span and the hogging moment
  at each support, at the support face where the design takes it there (concrete with
  a support width) and at the centreline otherwise, each saying which;
* shear: the envelope, both end shears of every span;
* deflection: the service envelope, the largest of each span, springs drawn where they
  settle; the deflection of the member sizing chose where sizing reports one (concrete:
  cracked, with the chosen bars), labelled;
* sizing, where sizing.parquet exists: steel area required and provided along the
  beam (concrete) or utilisation along the beam (steel), read generically from the
  columns there are;
* every label carries the governing combination and the loaded spans, is placed by a
  pass that keeps it inside its panel and clear of every other label, and is drawn
  literally (no markup);
* a key to the symbols and the caution that results are for checking by a licensed
  engineer and defer to local codes.

Text stays text in SVG (``svg.fonttype: none``) and PDF (TrueType, ``pdf.fonttype: 42``).
"""

from __future__ import annotations

from collections.abc import Iterator, Mapping, Sequence
from contextlib import contextmanager
from contextvars import ContextVar
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any
from weakref import WeakKeyDictionary

import matplotlib as mpl
import numpy as np
from matplotlib.axis import GRIDLINE_INTERPOLATION_STEPS
from matplotlib.collections import LineCollection, PolyCollection
from matplotlib.figure import Figure, _stale_figure_callback  # type: ignore[attr-defined]
from matplotlib.image import AxesImage
from matplotlib.legend import Legend
from matplotlib.lines import Line2D
from matplotlib.patches import Polygon, Rectangle
from matplotlib.path import Path as MPath
from matplotlib.table import Table
from matplotlib.text import Annotation, Text
from matplotlib.ticker import MaxNLocator
from matplotlib.transforms import Affine2D, Bbox, IdentityTransform

from envelope import drawlist
from envelope.files import write_atomic
from envelope.glyphs import CachedTextCanvas, KeptAnnotation, KeptText
from envelope.keyrow import KeyRow
from envelope.raster import figure_png
from envelope.sketch import decode
from envelope.stamp import Stamp
from envelope.ticks import TickLayer, install

if TYPE_CHECKING:
    from matplotlib.typing import RcKeyType

Columns = Mapping[str, Any]

CAUTION = ("Results are for checking by a licensed engineer and defer to local codes; "
           "they are not a design.")
#: Raster resolution: legible when printed at A4 width, and quick to encode.
DPI = 110
#: Figure width (in) and the fixed margins (in).
WIDTH = 11.0
#: The width (in) of the figure the calculation report prints at about 1:1 (its A4 page
#: gives it 18.2 cm = 7.17 in), and the smallest text size (pt) it draws: printed, no text
#: is smaller than this (the PNG's 6 and 6.5 pt texts are raised to it).
REPORT_WIDTH = 7.0
REPORT_SMALLEST = 7.0
#: The most height (in) of the report's figure: one A4 page with its heading and caption.
REPORT_HEIGHT = 9.6
#: A narrower figure's key sits higher (in from the bottom) in a taller bottom margin:
#: it takes more rows, the note below it two lines.
_NARROW_KEY_Y, _NARROW_BOTTOM = 0.62, 1.75
_LEFT, _RIGHT = 1.0, 0.2
#: The longest title, combination name and loaded text drawn (characters).
TITLE_CHARS = 100
NAME_CHARS = 22
LOADED_CHARS = 18
#: At most this many load lanes in the strip; further cases share the last.
MAX_LANES = 6
#: Curves are thinned to about this many points per pixel column of the panel.
_POINTS_PER_PIXEL = 2

# A palette of its own: ink and paper, a warm red for the maximum, a slate blue for the
# minimum, pale fills, and muted colours for the load cases.
INK = "#23262b"
SOFT = "#6b7079"
PAPER = "#fbfaf7"
MAX_COLOUR = "#c0392b"
MIN_COLOUR = "#2f5d8a"
FILL = "#ece6da"
FACE_COLOUR = "#9a7b4f"
SIZED_COLOUR = "#3f7f4f"
CASE_COLOURS = ("#7a6a58", "#b5651d", "#4f7a8a", "#8a4f7a", "#5f7a3a", "#8a7a2f")
STYLE: dict[RcKeyType, Any] = {
    "svg.fonttype": "none", "pdf.fonttype": 42, "ps.fonttype": 42,
    "svg.hashsalt": "envelope",  # the same ids on every run: reproducible files
    "font.size": 8, "axes.linewidth": 0.7, "text.usetex": False}

#: The smallest text size (pt) of the figure being drawn (0: the sizes as written).
_SMALLEST: ContextVar[float] = ContextVar("envelope_smallest_text", default=0.0)


def _pt(size: float) -> float:
    """``size`` (pt), or the smallest text size of the figure being drawn if larger."""
    return max(size, _SMALLEST.get())


_CONTROL = {c: "?" for c in range(32)} | {0x7f: "?"}


def literal(text: object, limit: int) -> str:
    """``text`` as drawn: control characters replaced, cut to ``limit`` characters (with
    an ellipsis), so a huge title costs nothing and a NUL never reaches the font code."""
    s = str(text)
    s = s[: limit + 1].translate(_CONTROL)
    return s if len(s) <= limit else s[: limit - 1] + "…"


def _num(v: float, digits: int = 1) -> str:
    return f"{round(float(v), digits) + 0.0:.{digits}f}"  # never "-0.0"


# --------------------------------------------------------------------------- symbols


def _spring_path() -> MPath:
    """A coil spring standing on a base plate, top at the origin (marker units)."""
    ys = np.linspace(0.0, -0.8, 9)
    xs = np.r_[0.0, np.tile([0.35, -0.35], 3), 0.35, 0.0][: ys.size]
    verts = [(0.0, 0.2), (0.0, 0.0), *zip(xs, ys, strict=True), (0.0, -1.0), (-0.45, -1.0),
             (0.45, -1.0)]
    codes = [MPath.MOVETO] + [MPath.LINETO] * (len(verts) - 3) + [MPath.MOVETO, MPath.LINETO]
    return MPath(verts, codes)


def _coil_path() -> MPath:
    """A rotational spring: a spiral round the joint."""
    t = np.linspace(0.0, 3.2 * np.pi, 40)
    r = 0.15 + 0.28 * t / t[-1]
    return MPath(np.c_[r * np.cos(t), r * np.sin(t)])


def _fixed_path() -> MPath:
    """A clamp: a plate under the beam with hatching below."""
    verts: list[tuple[float, float]] = [(-0.6, 0.0), (0.6, 0.0)]
    codes = [MPath.MOVETO, MPath.LINETO]
    for x in np.linspace(-0.6, 0.4, 5):
        verts += [(x + 0.2, 0.0), (x, -0.45)]
        codes += [MPath.MOVETO, MPath.LINETO]
    return MPath(verts, codes)


def _pin_path() -> MPath:
    """A pin: a triangle with its apex at the beam and a ground line."""
    verts = [(0.0, 0.0), (-0.45, -0.7), (0.45, -0.7), (0.0, 0.0), (-0.6, -0.85), (0.6, -0.85)]
    codes = [MPath.MOVETO, MPath.LINETO, MPath.LINETO, MPath.LINETO, MPath.MOVETO,
             MPath.LINETO]
    return MPath(verts, codes)


SPRING, COIL, FIXED, PIN = _spring_path(), _coil_path(), _fixed_path(), _pin_path()


def _support_marker(support: Mapping[str, Any]) -> tuple[MPath | str, str] | None:
    """(marker, key label) of one support, or None for a free end."""
    kind = support.get("type")
    kv, kr = support.get("k_vertical", None), support.get("k_rotation", 0.0)
    if kind == "free" or (kv == 0.0 and kr == 0.0):
        return None
    if kv is not None and kv > 0.0:
        return SPRING, "vertical spring"
    if kv == 0.0:
        return COIL, "rotational spring"
    if kr is None:
        return FIXED, "fixed"
    if kr and kr > 0.0:
        return COIL, "rotational spring"
    return PIN, "pinned"


# --------------------------------------------------------------------------- labels


@dataclass
class Label:
    """A value label: its anchor (data), text, the side it prefers and its rank."""

    ax: Any
    x: float
    y: float
    text: str
    above: bool
    rank: int = 0      # lower is placed first
    colour: str = INK
    #: > 0: not a label but a marker drawn at the anchor, this many points each way,
    #: that the labels keep clear of (the text is not drawn)
    clear: float = 0.0


#: Value labels: font size (points) and the pale box's margin round the text (a fraction
#: of the font size).
_LABEL_SIZE = 7.0
_LABEL_PAD = 0.08

#: Where a label may go, nearest first: rises (points) above or below its anchor, the
#: preferred side first at each rise, then shifts along (label widths) at each.
_RISES = np.array([4.0, 12.0, 22.0, 34.0, 48.0, 64.0, 84.0, 108.0])
_SHIFTS = np.array([-0.5, -0.1, -0.9, 0.3, -1.3, 0.8, -1.8])


_RISE_STEPS = tuple(float(r) for r in _RISES)
_SHIFT_STEPS = tuple(float(s) for s in _SHIFTS)


def _first_free(ax_x: float, ax_y: float, w: float, h: float, up: float, px_per_pt: float,
                frame: Bbox, placed: Sequence[tuple[float, float, float, float]]
                ) -> tuple[float, float] | None:
    """The lower-left corner (pixels) of the first place, in the order of ``_RISES``
    and ``_SHIFTS`` (each rise above then below, or below then above, each at every
    shift), where a ``w`` x ``h`` label lies inside ``frame`` and overlaps no box of
    ``placed`` (x0, y0, x1, y1); None where there is none.  Plain floats, stopping at
    the first free place (most labels take one of their first few): the same
    operations, so the same corner, as testing every place at once with numpy (the
    reference in tests/test_figures.py)."""
    ax_x, ax_y, w, h = float(ax_x), float(ax_y), float(w), float(h)
    fx0, fy0, fx1, fy1 = float(frame.x0), float(frame.y0), float(frame.x1), float(frame.y1)
    lefts = [ax_x + shift * w for shift in _SHIFT_STEPS]
    for rise in _RISE_STEPS:
        for side in (up, -up):
            y0 = ax_y + side * rise * px_per_pt - (0.0 if side > 0 else h)
            y1 = y0 + h
            if not (y0 >= fy0 and y1 <= fy1):
                continue
            level = [b for b in placed if y0 < b[3] and b[1] < y1]
            for x0 in lefts:
                x1 = x0 + w
                if (x0 >= fx0 and x1 <= fx1
                        and not any(x0 < b[2] and b[0] < x1 for b in level)):
                    return x0, y0
    return None


def place_labels(fig: Figure, labels: Sequence[Label]) -> tuple[int, int]:
    """Place each label beside its anchor where it stays inside its axes and clear of
    every label placed before it (candidates near to far, preferred side first); a
    label with no free place is left out.  Offsets are in points from the anchor, so the
    layout is the same at any resolution and in every format.  Returns (placed, left
    out).

    Each label is a text (an annotation at its anchor); the pale boxes behind the texts
    and the leader lines to far anchors are one collection each per panel (drawn under
    every text, the leaders under every box), in points from the anchors as the texts
    are."""
    renderer = fig.canvas.get_renderer() if hasattr(fig.canvas, "get_renderer") else \
        fig._get_renderer()  # type: ignore[attr-defined]
    px_per_pt = fig.dpi / 72.0
    placed: list[tuple[float, float, float, float]] = []
    frames: dict[Any, Bbox] = {}
    # per axes: anchors (data), boxes and leaders (points from the anchor)
    drawn: dict[Any, tuple[list[tuple[float, float]], list[np.ndarray], list[tuple[float, float]],
                           list[np.ndarray]]] = {}
    dropped = markers = 0
    pad = _LABEL_PAD * _LABEL_SIZE  # the box beyond the text's extent (points)
    # one text, never drawn, measures every label: its extent at the anchor is the
    # label's (left and bottom aligned, so the anchor is the extent's corner)
    probe = _PROBES.get(fig)
    if probe is None:
        probe = _PROBES[fig] = KeptText(0.0, 0.0, "", fontsize=_LABEL_SIZE, ha="left",
                                        va="bottom", linespacing=1.05, parse_math=False)
        probe.set_figure(fig)
    matrices: dict[Any, Any] = {}
    for lab in sorted(labels, key=lambda lb: lb.rank):
        ax = lab.ax
        if ax not in frames:
            b = ax.get_window_extent(renderer)
            frames[ax] = Bbox.from_extents(b.x0 + 3, b.y0 + 3, b.x1 - 3, b.y1 - 3)
            matrices[ax] = drawlist._matrix(ax.transData)
        frame = frames[ax]
        # ax.transData.transform((lab.x, lab.y)), from its matrix (the same floats)
        ax_x, ax_y = drawlist._apply(ax.transData, matrices[ax], float(lab.x), float(lab.y))
        if lab.clear > 0.0:  # a marker: kept clear, never drawn here
            markers += 1
            if np.isfinite(ax_x) and np.isfinite(ax_y):
                r = lab.clear * px_per_pt
                placed.append((float(ax_x - r), float(ax_y - r), float(ax_x + r),
                               float(ax_y + r)))
            continue
        if not (np.isfinite(ax_x) and np.isfinite(ax_y)):
            dropped += 1
            continue
        # the extent as ``Text.get_window_extent`` gives it at the origin (its layout):
        # its corners (sx0, sy0), (sx1, sy1)
        sx0, sy0, sx1, sy1 = _probe_extent(probe, lab.text, renderer)
        w, h = sx1 - sx0, sy1 - sy0  # (Bbox.width, Bbox.height)
        corner = _first_free(ax_x, ax_y, w, h, 1.0 if lab.above else -1.0, px_per_pt,
                             frame, placed)
        if corner is None:
            dropped += 1
            continue
        # the label's extent there, as Bbox.from_bounds(*corner, w, h) has it
        bx0, by0 = corner
        bx1, by1 = bx0 + w, by0 + h
        placed.append((bx0 - 1, by0 - 1, bx1 + 1, by1 + 1))
        # offset by the pixels between the anchor (the measured extent's corner) and
        # where the label goes
        offset = ((bx0 - ax_x - sx0) / px_per_pt, (by0 - ax_y - sy0) / px_per_pt)
        anchors, boxes, starts, leaders = drawn.setdefault(ax, ([], [], [], []))
        x0, y0 = (bx0 - ax_x) / px_per_pt - pad, (by0 - ax_y) / px_per_pt - pad
        x1, y1 = (bx1 - ax_x) / px_per_pt + pad, (by1 - ax_y) / px_per_pt + pad
        anchors.append((lab.x, lab.y))
        boxes.append(np.array([(x0, y0), (x1, y0), (x1, y1), (x0, y1), (x0, y0)]))
        # a label more than 6 points from its value, up or sideways, draws a leader to
        # it (from the nearest side), so that it never reads as a neighbouring peak's
        dx = max(bx0 - ax_x, ax_x - bx1, 0.0)
        dy = max(by0 - ax_y, ax_y - by1, 0.0)
        if max(dx, dy) > 6 * px_per_pt:
            side = 0.5 if dx <= 6 * px_per_pt else (0.0 if ax_x < bx0 else 1.0)
            edge = by0 if by0 > ax_y else by1
            starts.append((lab.x, lab.y))
            leaders.append(np.array([((bx0 + side * w - ax_x) / px_per_pt,
                                      (edge - ax_y) / px_per_pt), (0.0, 0.0)]))
        style = {"fontsize": _LABEL_SIZE, "color": lab.colour, "ha": "left", "va": "bottom",
                 "linespacing": 1.05, "parse_math": False, "zorder": 8, "gid": "value-label"}
        panel = drawlist.panel_of(ax)
        if panel is not None:
            panel.label((lab.x, lab.y), offset, lab.text, **style)
        else:
            _annotate(ax, lab.text, (lab.x, lab.y), offset, textcoords="offset points",
                      annotation_clip=False, **style)
    points = _points(fig)
    for ax, (anchors, boxes, starts, leaders) in drawn.items():
        _collection(ax, PolyCollection, boxes, anchors, offset_transform=ax.transData,
                    transform=points, facecolors=PAPER, edgecolors="none", linewidths=0.0,
                    alpha=0.8, zorder=7.9, clip_on=False, gid="value-label-boxes")
        if leaders:
            _collection(ax, LineCollection, leaders, starts, offset_transform=ax.transData,
                        transform=points, colors=SOFT, linewidths=0.5, capstyle="butt",
                        zorder=7.8, clip_on=False, gid="value-label-leaders")
    return len(labels) - markers - dropped, dropped


#: Each figure's text measuring the value labels (its style set once).
_PROBES: WeakKeyDictionary[Any, KeptText] = WeakKeyDictionary()


def _probe_extent(probe: Any, text: str, renderer: Any) -> tuple[float, float, float, float]:
    """The corners (x0, y0, x1, y1) of ``probe``'s extent at the origin showing ``text``
    (its layout's extent; ``get_window_extent`` for an empty text), kept per string
    with the probe (its style is set once) while the resolution and hinting stay."""
    key = (text, type(renderer), renderer.dpi, probe.get_figure(root=True).dpi,
           dict.__getitem__(mpl.rcParams, "text.hinting"))
    sizes = probe.__dict__.setdefault("_envelope_sizes", {})
    hit = sizes.get(key)
    if hit is None:
        probe.set_text(text)
        box = probe._get_layout(renderer)[0] if text else probe.get_window_extent(renderer)
        (x0, y0), (x1, y1) = box.get_points().tolist()
        if len(sizes) >= 1024:
            sizes.clear()
        hit = sizes[key] = (x0, y0, x1, y1)
    return hit  # type: ignore[no-any-return]
#: Each figure's points-to-pixels transform (one object per figure, so that a display
#: list keeps one template per style).
_POINTS: WeakKeyDictionary[Any, Any] = WeakKeyDictionary()


def _points(fig: Figure) -> Any:
    """The transform from points to pixels of ``fig`` (kept per figure)."""
    points = _POINTS.get(fig)
    if points is None:
        points = _POINTS[fig] = Affine2D().scale(1.0 / 72.0) + fig.dpi_scale_trans
    return points


# --------------------------------------------------------------------------- helpers


def _thin(x: np.ndarray, hi: np.ndarray, lo: np.ndarray, pixels: int
          ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Draw only what is seen: beyond a few points per pixel column, keep the highest
    and lowest value of each column (the envelope's peaks survive)."""
    n = x.size
    limit = max(64, _POINTS_PER_PIXEL * pixels)
    if n <= 2 * limit:
        return x, hi, lo
    edges = np.linspace(0, n, limit + 1).astype(int)
    starts = edges[:-1]
    with np.errstate(invalid="ignore"):
        h = np.fmax.reduceat(np.nan_to_num(hi, nan=-np.inf), starts)
        low = np.fmin.reduceat(np.nan_to_num(lo, nan=np.inf), starts)
    xm = x[starts]
    h[~np.isfinite(h)] = np.nan
    low[~np.isfinite(low)] = np.nan
    return xm, h, low


def _short_loaded(text: object) -> str:
    s = str(text) if text is not None else ""
    if not s or s == "None":
        return ""
    return "loaded " + literal(s, LOADED_CHARS)


def _tag(combo: object, loaded: object) -> str:
    name = literal(combo, NAME_CHARS) if combo not in (None, "") else ""
    parts = [p for p in (name, _short_loaded(loaded)) if p]
    return "\n" + ", ".join(parts) if parts else ""


def _rows_of(span: np.ndarray, j: int) -> np.ndarray:
    return np.flatnonzero(span == j)


def _finite(a: Any) -> np.ndarray:
    return np.asarray(a, dtype=float)


# --------------------------------------------------------------------------- panels


def _panel_rects(size: tuple[float, float], heights: Sequence[float], top: float,
                 bottom: float, region: tuple[float, float, float, float] | None = None
                 ) -> list[tuple[float, float, float, float]]:
    """The panels' rectangles (figure fraction) on a figure of ``size`` (in), stacked
    top to bottom with the given heights (in), fixed margins."""
    fw, fh = size
    x0, y0, w, h = region or (0.0, 0.0, 1.0, 1.0)
    gap = 0.12
    usable = h * fh - top - bottom - gap * (len(heights) - 1)
    scale = usable / sum(heights)
    rects = []
    y = y0 * fh + h * fh - top
    for height in heights:
        hh = height * scale
        y -= hh
        rects.append((x0 + _LEFT / fw * w, y / fh, w - (_LEFT + _RIGHT) / fw * w, hh / fh))
        y -= gap
    return rects


def _panel_axes(fig: Figure, heights: Sequence[float], top: float, bottom: float,
                region: tuple[float, float, float, float] | None = None,
                fast: bool = False) -> list[Any]:
    """Axes stacked top to bottom with the given heights (in), fixed margins; with
    ``fast``, ticks drawn by :mod:`envelope.ticks`."""
    fw, fh = fig.get_size_inches()
    axes: list[Any] = []
    for rect in _panel_rects((fw, fh), heights, top, bottom, region):
        ax = fig.add_axes(rect, sharex=axes[0] if axes else None)
        ax.set_facecolor(PAPER)
        axes.append(ax)
    _prepare(axes, fast)
    return axes


def _prepare(axes: Sequence[Any], fast: bool = False) -> None:
    """What every beam's panels share, set once (a kept figure keeps it): the strip
    without axes, the panels' ticks and spines, x tick labels on the bottom panel only."""
    axes[0].set_facecolor("none")
    axes[0].axis("off")
    for ax in axes[1:]:
        ax.tick_params(labelsize=7, colors=SOFT, length=2.5)
        # no tick label at the very top or bottom, where it would meet the next panel's
        ax.yaxis.set_major_locator(MaxNLocator(nbins=5, prune="both"))
        ax.spines[["top", "right"]].set_visible(False)
        for side in ("left", "bottom"):
            ax.spines[side].set_color(SOFT)
        ax.tick_params(labelbottom=ax is axes[-1])
        if ax is not axes[-1]:
            # no x label above the bottom panel: a fixed place spares matplotlib
            # measuring the tick labels to put one there at every draw
            ax.xaxis.set_label_coords(0.5, 0.0)
        if fast:
            install(ax)
    if fast:
        for ax in axes:
            drawlist.install(ax)


#: Figures kept for reuse by :func:`draw_results`, by number of panels: creating the
#: axes is a third of the cost of a figure, and a batch worker draws many beams with
#: the same panels (a kept figure takes another beam's panel heights by its size and
#: its axes' positions: the same figure as one made with them, tested).
_KEPT: dict[tuple[Any, ...], tuple[Figure, list[Any]]] = {}
_KEEP_AT_MOST = 4
#: The panel heights (in) each kept figure has now.
_HEIGHTS: WeakKeyDictionary[Any, tuple[float, ...]] = WeakKeyDictionary()
#: The rc settings each kept figure was made under (within the figure's style): a kept
#: figure is reused only under the same settings, so that a notebook that changed one
#: (the font, say) gets the figure a new one would be (a comparison of some 3 us).
_RC_OF: WeakKeyDictionary[Any, dict[str, Any]] = WeakKeyDictionary()


#: Children of a kept axes that stay from one beam to the next (the layers of the fast
#: drawing) or that the figure never adds (images, tables).
_KEPT_CHILDREN = (TickLayer, drawlist.DrawList, AxesImage, Table)


class StyledCanvas(CachedTextCanvas):
    """The figure's canvas: it saves with the figure's style whatever the rc settings
    are when ``savefig`` is called (a notebook's ``fig.savefig("f.pdf")`` keeps the
    text editable: TrueType in PDF, text in SVG)."""

    def print_figure(self, *args: Any, **kwargs: Any) -> Any:
        """:meth:`FigureCanvasBase.print_figure` within the figure's style."""
        with mpl.rc_context(STYLE):
            return super().print_figure(*args, **kwargs)


def _new_or_reused(heights: Sequence[float], top: float, bottom: float,
                   reuse: bool, fast: bool = True, width: float = WIDTH
                   ) -> tuple[Figure, list[Any]]:
    """A figure ``width`` in wide with its panel axes: a kept one emptied of the last
    beam's artists when ``reuse`` (the caller saves it and lets it go; ``fast``: drawn by
    the fast paths, see :func:`draw_results`), else a new one.  Kept figures are kept
    per width and smallest text size: a report's narrow figure is never the PNG's."""
    fast = fast and reuse
    key = (len(heights), fast, width, _SMALLEST.get())
    size = (width, sum(heights) + top + bottom + 0.12 * len(heights))
    kept = _KEPT.get(key) if reuse else None
    if kept is not None:
        made_under = _RC_OF.get(kept[0])
        if made_under is None or not dict.__eq__(mpl.rcParams, made_under):
            del _KEPT[key]  # made under other rc settings: a new one instead
            kept = None
    if kept is not None:
        fig, axes = kept
        if _HEIGHTS.get(fig) != tuple(heights):  # another beam's panel heights
            fig.set_size_inches(size)
            for ax, rect in zip(axes, _panel_rects(size, heights, top, bottom), strict=True):
                ax.set_position(rect)
            _HEIGHTS[fig] = tuple(heights)
        spare = _SPARE_TEXTS.setdefault(fig, {})
        for text in list(fig.texts):
            style = text.__dict__.get("_envelope_style")
            if style is not None and len(spare.setdefault(style, [])) < 4:
                fig.texts.remove(text)  # (kept for the next beam's text of its style)
                spare[style].append(text)
            else:
                text.remove()
        # the key stays: :func:`_key` keeps it where the next beam's is the same
        for a in axes:
            # the lines, patches, texts, collections and other artists (Axes.lines ...
            # Axes.artists: every child but images and tables), the layers kept
            for artist in [c for c in a._children if not isinstance(c, _KEPT_CHILDREN)]:
                artist.remove()
            panel = drawlist.panel_of(a)
            if panel is not None:
                panel.clear()
            if a.get_legend() is not None:
                a.get_legend().remove()
            a.set_ylabel("")
            a.set_xlabel("")
        return fig, axes
    # a kept figure is drawn at the file's resolution, so that its renderer (and the
    # text extents measured for placing the labels) serve every beam's file
    fig = Figure(figsize=size, facecolor="white", dpi=DPI if reuse else None)
    StyledCanvas(fig).fill_background = fast  # (a plain background filled at once)
    axes = _panel_axes(fig, heights, top, bottom, fast=fast)
    if fast:
        stamp = Stamp(zorder=Legend.zorder)
        fig.add_artist(stamp)
        _KEY_STAMPS[fig] = stamp
    if reuse:
        if len(_KEPT) >= _KEEP_AT_MOST:
            _KEPT.pop(next(iter(_KEPT)))
        _KEPT[key] = (fig, axes)
        _HEIGHTS[fig] = tuple(heights)
        _RC_OF[fig] = dict(dict.items(mpl.rcParams))  # type: ignore[arg-type]
    return fig, axes


def _style_panel(ax: Any, ylabel: str) -> None:
    """The panel's y label (its ticks and spines are set once, by :func:`_prepare`)."""
    ax.set_ylabel(ylabel, fontsize=7.5, color=INK, labelpad=3)


def _text(ax: Any, x: float, y: float, s: str, **style: Any) -> Text | None:
    """A text added to ``ax`` as ``Axes.text`` adds it (its layout kept on the raster
    canvas: :class:`envelope.glyphs.KeptText`); on a display list, recorded there."""
    panel = drawlist.panel_of(ax)
    if panel is not None:
        panel.text(x, y, s, **style)
        return None
    text = KeptText(x, y, s, **{"verticalalignment": "baseline",
                                "horizontalalignment": "left", "transform": ax.transData,
                                "clip_on": False, **style})
    if text.get_clip_path() is None:
        text.set_clip_path(ax.patch)
    ax._add_text(text)
    return text


#: The figure texts a kept figure took off for the next beam, by style (a text made
#: anew is a tenth of the figure's own code): each is given the next beam's string and
#: place, the same text as one made with them.
_SPARE_TEXTS: WeakKeyDictionary[Any, dict[Any, list[Text]]] = WeakKeyDictionary()


def _fig_text(fig: Figure, x: float, y: float, s: str, **style: Any) -> Text:
    """A text added to ``fig`` as ``Figure.text`` adds it (its layout kept on the raster
    canvas: :class:`envelope.glyphs.KeptText`); a kept figure's text of the same style
    taken off for this beam where there is one."""
    key = None if "transform" in style else drawlist._key(style)
    spare = _SPARE_TEXTS.get(fig, {}).get(key) if key is not None else None
    if spare:
        text = spare.pop()
        text.set_position((x, y))
        text.set_text(s)
        fig.texts.append(text)
        fig.stale = True
        return text
    text = KeptText(x, y, s, **{"transform": fig.transSubfigure, **style})
    text._envelope_style = key  # type: ignore[attr-defined]
    text.set_figure(fig)
    text.stale_callback = _stale_figure_callback
    fig.texts.append(text)
    text._remove_method = fig.texts.remove  # type: ignore[attr-defined]
    fig.stale = True
    return text


def _annotate(ax: Any, s: str, xy: tuple[float, float], xytext: tuple[float, float],
              **style: Any) -> Annotation:
    """An annotation added to ``ax`` as ``Axes.annotate`` adds it (its layout kept on
    the raster canvas: :class:`envelope.glyphs.KeptAnnotation`)."""
    note = KeptAnnotation(s, xy, xytext=xytext, **style)
    note.set_transform(IdentityTransform())
    if style.get("clip_on", False) and note.get_clip_path() is None:
        note.set_clip_path(ax.patch)
    ax._add_text(note)
    return note


def _line(ax: Any, x: Any, y: Any, steps: int | None = None, **style: Any) -> None:
    """A line (or markers) added to ``ax`` as ``Axes.plot`` adds it, without updating the
    data limits: every panel's limits are set explicitly, and the update is most of the
    cost of a small line (``steps``: its path's interpolation steps); on a display list,
    recorded there."""
    panel = drawlist.panel_of(ax)
    if panel is not None:
        panel.line(x, y, steps, **style)
        return
    line = Line2D(np.asarray(x, dtype=float), np.asarray(y, dtype=float), **style)
    if steps is not None:
        line.get_path()._interpolation_steps = steps  # type: ignore[attr-defined]
    ax.add_artist(line)


def _hline(ax: Any, y: float, **style: Any) -> None:
    """A line across the axes at ``y`` (data), as ``Axes.axhline`` draws it."""
    _line(ax, [0.0, 1.0], [y, y], GRIDLINE_INTERPOLATION_STEPS,
          transform=ax.get_yaxis_transform(which="grid"), **style)


def _collection(ax: Any, kind: type, paths: Any, offsets: Any, **style: Any) -> None:
    """A collection (``kind``) of ``paths`` at ``offsets``, unclipped, added to ``ax``
    without updating the data limits; on a display list, recorded there."""
    panel = drawlist.panel_of(ax)
    if panel is not None:
        panel.collection(kind, paths, offsets, **style)
    else:
        ax.add_collection(kind(paths, offsets=offsets, **style), autolim=False)


def _polygon(ax: Any, xy: Any, **style: Any) -> None:
    """A closed polygon added to ``ax`` (or to its display list)."""
    panel = drawlist.panel_of(ax)
    if panel is not None:
        panel.polygon(xy, **style)
    else:
        ax.add_artist(Polygon(xy, closed=True, **style))


def _rectangle(ax: Any, xy: tuple[float, float], width: float, height: float,
               **style: Any) -> None:
    """A rectangle added to ``ax`` (or to its display list)."""
    panel = drawlist.panel_of(ax)
    if panel is not None:
        panel.rectangle(xy, width, height, **style)
    else:
        ax.add_artist(Rectangle(xy, width, height, **style))


def _arrow(ax: Any, xy: tuple[float, float], xytext: tuple[float, float],
           **arrowprops: Any) -> None:
    """An arrow from ``xytext`` to ``xy`` (data), as ``Axes.annotate`` with an empty
    text draws it (or recorded on the display list)."""
    panel = drawlist.panel_of(ax)
    if panel is not None:
        panel.arrow(xy, xytext, arrowprops)
    else:
        ax.annotate("", xy, xytext, arrowprops=arrowprops, annotation_clip=False)


def _envelope(ax: Any, x: np.ndarray, hi: np.ndarray, lo: np.ndarray, pixels: int) -> None:
    xt, ht, lt = _thin(x, hi, lo, pixels)
    panel = drawlist.panel_of(ax)
    if panel is not None:
        panel.fill_between(xt, lt, ht, color=FILL, lw=0, zorder=1)
    else:
        ax.fill_between(xt, lt, ht, color=FILL, lw=0, zorder=1)
    _line(ax, xt, ht, color=MAX_COLOUR, lw=1.2, zorder=3)
    _line(ax, xt, lt, color=MIN_COLOUR, lw=1.2, zorder=3)
    _hline(ax, 0.0, color=INK, lw=0.6, zorder=2)


def _limits(ax: Any, values: Sequence[np.ndarray], flip: bool = False,
            room: float = 0.45) -> None:
    """The y limits, with room for labels above and below the curves."""
    finite = np.concatenate([v[np.isfinite(v)] for v in values] + [np.zeros(1)])
    lo, hi = float(finite.min()), float(finite.max())
    span = hi - lo or max(abs(hi), 1.0)
    bottom, top = lo - room * span, hi + room * span
    ax.set_ylim((top, bottom) if flip else (bottom, top))  # flipped: positive down


def _support_lines(ax: Any, joint_x: np.ndarray) -> None:
    """Dotted lines at the supports, all in one artist (x in data, y across the axes)."""
    n = joint_x.size
    _line(ax, np.repeat(joint_x, 3), np.tile([0.0, 1.0, np.nan], n), color="#d8d2c6", lw=0.6,
          ls=(0, (2, 2)), zorder=0, transform=ax.get_xaxis_transform())


def _strip(ax: Any, sk: Mapping[str, Any] | None, joint_x: np.ndarray, kinds: Sequence[str],
           units: Mapping[str, str], n_lanes: int) -> list[str]:
    """The beam strip; returns the symbols it used (for the key)."""
    used: list[str] = []
    total = float(joint_x[-1]) if joint_x.size else 1.0
    _line(ax, [0.0, total], [0.0, 0.0], color=INK, lw=2.6, solid_capstyle="butt", zorder=4)
    ax.set_ylim(-1.3, 0.45 + max(n_lanes, 1) * 1.0)
    supports = (sk or {}).get("supports") or [{"type": k, "width": 0.0} for k in kinds]
    for j, (xj, sup) in enumerate(zip(joint_x, supports, strict=False)):
        width = float(sup.get("width") or 0.0)
        if width > 0.0:
            _rectangle(ax, (xj - width / 2, -0.22), width, 0.44, fc="#e9dfcc",
                       ec=FACE_COLOUR, lw=0.6, zorder=3)
            if "support face" not in used:
                used.append("support face")
        marker = _support_marker(sup)
        if marker is not None:
            path, name = marker
            _line(ax, [xj], [-0.16], marker=path, markersize=20, color=INK, mew=1.1,
                    mfc="white", ls="none", zorder=5, clip_on=False)
            if name not in used:
                used.append(name)
        elif "free end" not in used:
            used.append("free end")
        _text(ax, xj, -1.25, str(j + 1), ha="center", va="bottom", fontsize=_pt(6.5),
                color=SOFT, parse_math=False)
    for j in range(len(joint_x) - 1):
        _text(ax, 0.5 * (joint_x[j] + joint_x[j + 1]), -0.55, f"span {j + 1}", ha="center",
                va="center", fontsize=7, color=SOFT, parse_math=False)
    for xh in (sk or {}).get("hinges", []) or []:
        _line(ax, [xh], [0.0], marker="o", markersize=5, mfc="white", mec=INK, mew=1.0,
                ls="none", zorder=6)
        if "hinge" not in used:
            used.append("hinge")
    if sk:
        used += _loads(ax, sk, joint_x, units, n_lanes)
    return used


def _lanes(sk: Mapping[str, Any]) -> list[str]:
    cases: list[str] = []
    for item in sk.get("loads", []):
        if item.get("case") not in cases:
            cases.append(str(item.get("case")))
    return cases


def _moving(ax: Any, it: Mapping[str, Any], joint_x: np.ndarray, base: float,
            colour: str) -> None:
    """A load placed at its worst position: a dashed double-headed line over each run
    of the spans it moves over (either way), its axles drawn at the run's start."""
    spans = sorted(int(j) - 1 for j in it["spans"] if 0 < int(j) < joint_x.size)
    if not spans:
        return
    runs: list[list[int]] = []
    for j in spans:
        if runs and runs[-1][-1] == j - 1:
            runs[-1].append(j)
        else:
            runs.append([j])
    axles = it.get("axles") or [[it.get("P", 0.0), 0.0]]
    top = max(abs(p) for p, _ in axles) or 1.0
    for run in runs:
        a, b = float(joint_x[run[0]]), float(joint_x[run[-1] + 1])
        _arrow(ax, (a, base + 0.85), (b, base + 0.85), arrowstyle="<->", color=colour,
               lw=0.8, ls="--", shrinkA=0, shrinkB=0, mutation_scale=6)
        for p, offset in axles:
            at = min(a + float(offset), b)
            length = 0.7 * abs(p) / top
            _arrow(ax, (at, base), (at, base + length), arrowstyle="-|>", color=colour,
                   lw=1.0, shrinkA=0, shrinkB=0, mutation_scale=7)


def _loads(ax: Any, sk: Mapping[str, Any], joint_x: np.ndarray, units: Mapping[str, str],
           n_lanes: int) -> list[str]:
    """Every load, one lane per case, each lane to its own scale."""
    used: list[str] = []
    cases = _lanes(sk)
    lane_of = {c: min(i, n_lanes - 1) for i, c in enumerate(cases)}
    kinds = sk.get("cases", {})
    low, high = ax.get_ylim()
    for c in cases:
        items = [it for it in sk["loads"] if it.get("case") == c]
        lane = lane_of[c]
        base = 0.45 + lane * 1.0
        colour = CASE_COLOURS[lane % len(CASE_COLOURS)]
        w_max = max([abs(it.get(k, 0.0)) for it in items if it["type"] in ("uniform", "linear")
                     for k in ("w_start", "w_end")] + [0.0])
        p_max = max([abs(it.get("P", 0.0)) for it in items if it["type"] == "point"] + [0.0])
        other = 0
        for it in items:
            span = int(it.get("span", 0)) - 1
            x0 = float(joint_x[span]) if 0 <= span < joint_x.size - 1 else None
            kind = it["type"]
            if kind in ("uniform", "linear") and x0 is not None and w_max > 0:
                a, b = x0 + it.get("start", 0.0), x0 + it.get("end", 0.0)
                h0 = 0.75 * it.get("w_start", 0.0) / w_max
                h1 = 0.75 * it.get("w_end", 0.0) / w_max
                _polygon(ax, [(a, base), (a, base + h0), (b, base + h1), (b, base)],
                         fc=colour, alpha=0.28, ec=colour, lw=0.7, zorder=2)
            elif kind == "point" and x0 is not None and p_max > 0:
                at = x0 + it.get("at", 0.0)
                length = 0.8 * abs(it.get("P", 0.0)) / p_max
                down = it.get("P", 0.0) >= 0
                tip, tail = (base, base + length) if down else (base + length, base)
                _arrow(ax, (at, tip), (at, tail), arrowstyle="-|>", color=colour, lw=1.0,
                       shrinkA=0, shrinkB=0, mutation_scale=7)
            elif kind == "moment" and x0 is not None:
                at = x0 + it.get("at", 0.0)
                _line(ax, [at], [base + 0.35], marker=COIL, markersize=11, color=colour,
                        mew=1.0, mfc="none", ls="none", zorder=5)
                if "applied moment" not in used:
                    used.append("applied moment")
            elif kind == "settlement":
                sup = int(it.get("support", 0)) - 1
                if 0 <= sup < joint_x.size:
                    xs = float(joint_x[sup])
                    _arrow(ax, (xs, -1.0), (xs, -0.45), arrowstyle="-|>", color=colour,
                           lw=1.0, ls="--", mutation_scale=7)
                    if "settlement" not in used:
                        used.append("settlement")
            elif kind in ("concentrated", "train") and it.get("spans"):
                _moving(ax, it, joint_x, base, colour)
                p_max = max([p_max] + [abs(p) for p, _ in it.get("axles", [])])
                if "moving load" not in used:
                    used.append("moving load")
            else:
                other += 1
        name = literal(c, 10)
        scale = []
        if w_max > 0:
            scale.append(f"{w_max:.3g} {units.get('line_load', '')}")
        if p_max > 0:
            scale.append(f"{p_max:.3g} {units.get('force', '')}")
        if other:
            scale.append(f"+{other} other")
        if cases.index(c) < n_lanes:
            label = f"{name} {literal(kinds.get(c, ''), 10)}".strip()
            if scale:
                label += "\n" + "\n".join(scale[:2])
            _text(ax, -0.012, (base + 0.35 - low) / (high - low), label, ha="right",
                  va="center", fontsize=_pt(6), color=colour, parse_math=False, clip_on=False,
                  transform=ax.transAxes, linespacing=1.0)
    if sk.get("loads_omitted"):
        _text(ax, 0.0, 0.45 + n_lanes, f"{sk['loads_omitted']} more load items not drawn",
              fontsize=_pt(6), color=SOFT, parse_math=False, va="bottom")
    return used


# --------------------------------------------------------------------------- the figure


@contextmanager
def _styled() -> Iterator[None]:
    """The figure's style (:data:`STYLE`) for drawing a file, as ``mpl.rc_context(STYLE)``
    sets it, the settings it changed restored after (the drawing changes no other rc
    setting, so this is what rc_context restores, without copying every setting twice
    a beam)."""
    rc = mpl.rcParams
    saved = {key: dict.__getitem__(rc, key) for key in STYLE}
    changed = {key: value for key, value in STYLE.items() if saved[key] != value}
    rc.update(changed)
    try:
        yield
    finally:
        dict.update(rc, {key: saved[key] for key in changed})


def figure(results: Mapping[str, Mapping], ax: Any = None) -> Figure:
    """The figure of :func:`envelope.store.result_columns` output: a new Figure, or the
    panels in the place of ``ax`` in its figure."""
    with mpl.rc_context(STYLE):
        return _build(results, ax)


def draw_results(results: Mapping[str, Mapping], path: str | Path, durable: bool = True,
                 fast: bool = True, width: float = WIDTH, smallest: float = 0.0,
                 height: float | None = None) -> Path:
    """Draw from :func:`envelope.store.read_results` output to ``path`` (.png, .svg or
    .pdf by its suffix, with editable text), on a figure kept for the next beam.

    ``fast`` draws the parts matplotlib draws slowly its own way (ticks: see
    :mod:`envelope.ticks`); ``fast=False`` is matplotlib's own drawing, the reference
    the fast one is compared with in the tests.

    ``width`` (in), ``smallest`` (pt, the least text size) and ``height`` (in, the
    most) draw a figure for a page that prints it at another scale: the calculation
    report's is :data:`REPORT_WIDTH` wide with no text under :data:`REPORT_SMALLEST`
    and at most :data:`REPORT_HEIGHT` high, printed at about 1:1 (drawn the plain way:
    ``fast`` is for the PNG's width only)."""
    path = Path(path)
    fmt = path.suffix.lstrip(".").lower() or "png"
    # SVG and PDF keep matplotlib's artists (editable text)
    fast = fast and fmt == "png" and width == WIDTH and smallest == 0.0
    token = _SMALLEST.set(smallest)
    try:
        with _styled():
            fig = _build(results, None, reuse=True, fast=fast, width=width, height=height)
            _save(fig, path, fmt, durable)
    finally:
        _SMALLEST.reset(token)
    return path


def _save(fig: Figure, path: Path, fmt: str, durable: bool) -> None:
    """Write ``fig`` to ``path`` as ``fmt`` (within the figure's style)."""
    if fmt == "png" and fig.dpi == DPI:  # the canvas as it is, encoded directly
        write_atomic(path, lambda fh: fh.write(figure_png(fig)), durable)
        return
    kwargs: dict[str, Any] = {"format": fmt, "dpi": DPI, "facecolor": "white"}
    if fmt == "png":  # fast deflate: a quarter of the encoding time, a larger file
        kwargs["pil_kwargs"] = {"compress_level": 1}
    elif fmt == "svg":  # no date: the same results give the same file
        kwargs["metadata"] = {"Date": None}
    elif fmt == "pdf":
        kwargs["metadata"] = {"CreationDate": None}
    write_atomic(path, lambda fh: fig.savefig(fh, **kwargs), durable)


def _build(results: Mapping[str, Mapping], ax: Any = None, reuse: bool = False,
           fast: bool = False, width: float = WIDTH, height: float | None = None
           ) -> Figure:
    env, design, reac = results["envelope"], results["design"], results["reactions"]
    sizing = results.get("sizing")
    meta = results["meta"]
    units: Mapping[str, str] = meta["units"]  # type: ignore[assignment]
    sk = decode(meta.get("envelope:sketch"))  # type: ignore[arg-type]
    flip = str(meta.get("envelope:moment_plot", "sagging-up")) == "tension-side"
    title = str(meta.get("envelope:title", "")) or str(meta.get("envelope:beam", ""))
    code = str(meta.get("envelope:sizing_code", ""))

    x = _finite(env["x"])
    span = np.asarray(env["span"], dtype=int)
    n_spans = int(span.max()) if span.size else 0
    if sk:
        joint_x = np.r_[0.0, np.cumsum(sk["spans"])]
    else:
        joint_x = np.array(sorted({float(x[_rows_of(span, j)].min()) for j in
                                   range(1, n_spans + 1)} | {float(x.max())}))
    kinds = list(reac.get("type", [])) if not sk else [s["type"] for s in sk["supports"]]
    dmax, dmin = _finite(env["deflection_max"]), _finite(env["deflection_min"])
    has_defl = bool(np.any(np.isfinite(dmax)))
    size_panel = _sizing_kind(sizing)
    n_lanes = min(len(_lanes(sk)) if sk else 0, MAX_LANES)

    heights = [0.55 + 0.3 * max(n_lanes, 1), 2.5, 1.8]
    if has_defl:
        heights.append(1.6)
    if size_panel:
        heights.append(1.6)
    top, bottom = 0.6, 1.3
    if width != WIDTH:
        # a narrower figure: the panels lower, less than in proportion (the labels
        # keep their size) and within ``height``; the strip as much taller as its lanes'
        # text is larger; a taller bottom margin for the key
        bottom = _NARROW_BOTTOM
        strip = heights[0] * max(1.0, _pt(6.0) / 6.0)
        panels = (width / WIDTH) ** 0.5
        if height is not None:
            room = height - strip - top - bottom - 0.12 * len(heights)
            panels = min(panels, room / sum(heights[1:]))
        heights = [strip] + [h * panels for h in heights[1:]]
    if ax is None:
        fig, axes = _new_or_reused(heights, top, bottom, reuse, fast, width)
    else:
        fig = ax.figure
        region = ax.get_position().bounds
        ax.remove()
        axes = _panel_axes(fig, heights, 0.45, 0.75, region)
    strip, m_ax, v_ax = axes[0], axes[1], axes[2]
    d_ax = axes[3] if has_defl else None
    s_ax = axes[-1] if size_panel else None
    total = float(joint_x[-1]) if joint_x.size > 1 else float(x.max() or 1.0)
    pad = 0.02 * total
    m_ax.set_xlim(-pad, total + pad)
    pixels = int(m_ax.get_position().width * fig.get_figwidth() * fig.dpi)

    # the title, the caution, the key
    fx0 = axes[1].get_position().x0
    _fig_text(fig, fx0, axes[0].get_position().y1 + 0.28 / fig.get_figheight(),
              literal(title or "Envelopes", TITLE_CHARS), fontsize=10.5, color=INK,
              weight="bold", ha="left", va="bottom", parse_math=False)
    _fig_text(fig, fx0, 0.1 / fig.get_figheight(), CAUTION, fontsize=7, color=MAX_COLOUR,
              ha="left", va="bottom", parse_math=False)

    # (the strip shares the panels' x axis: m_ax.set_xlim has set its limits)
    used = _strip(strip, sk, joint_x, kinds, units, n_lanes)

    labels: list[Label] = []
    # moment
    mmax, mmin = _finite(env["moment_max"]), _finite(env["moment_min"])
    _envelope(m_ax, x, mmax, mmin, pixels)
    _style_panel(m_ax, f"Moment [{units.get('moment', '')}]" +
                 ("\ndrawn on tension side" if flip else "\nsagging up"))
    faces_used = _moment_labels(m_ax, labels, env, design, sk, joint_x, code, flip)
    _limits(m_ax, [mmax, mmin], flip)
    if faces_used:
        used.append("value at support face")
    # shear
    vmax, vmin = _finite(env["shear_max"]), _finite(env["shear_min"])
    _envelope(v_ax, x, vmax, vmin, pixels)
    _style_panel(v_ax, f"Shear [{units.get('force', '')}]")
    _shear_labels(v_ax, labels, env, n_spans)
    _limits(v_ax, [vmax, vmin])
    # deflection
    if d_ax is not None:
        _envelope(d_ax, x, dmax, dmin, pixels)
        _style_panel(d_ax, f"Deflection [{units.get('deflection', '')}]\ndown, service")
        springs = _deflection_labels(d_ax, labels, env, design, sizing, sk, joint_x, n_spans)
        _limits(d_ax, [dmax, dmin, sized_deflection(sizing)[1]], flip=True)
        used += springs
    if s_ax is not None:
        _sizing_panel(s_ax, labels, sizing, size_panel, units,  # type: ignore[arg-type]
                      results.get("bars"))
        used.append("sized")
    for a in axes[1:]:
        _support_lines(a, joint_x)
    axes[-1].set_xlabel(f"x [{units.get('length', '')}]", fontsize=7.5, color=INK)

    _, dropped = place_labels(fig, labels)
    _key(fig, used, dropped, units)
    return fig


# --------------------------------------------------------------------------- labels per panel


def _face_values(sk: Mapping[str, Any] | None, code: str) -> bool:
    """Whether the design takes hogging at the support faces: concrete built with its
    supports (ACI 318-19 9.4.2.1, EN 1992-1-1 5.3.2.2(3)), not steel over its bearing."""
    if code.startswith("aisc") or code.startswith("en1993"):
        return False
    if not sk:
        return False
    return any(float(s.get("width") or 0.0) > 0.0 for s in sk["supports"])


def _moment_labels(ax: Any, labels: list[Label], env: Columns, design: Columns,
                   sk: Mapping[str, Any] | None, joint_x: np.ndarray, code: str,
                   flip: bool) -> bool:
    x = _finite(env["x"])
    span = np.asarray(env["span"], dtype=int)
    mmax, mmin = _finite(env["moment_max"]), _finite(env["moment_min"])
    cmax, cmin = env["moment_max_combo"], env["moment_min_combo"]
    lmax, lmin = env["moment_max_loaded"], env["moment_min_loaded"]
    pos, pos_x = _finite(design["moment_pos"]), _finite(design["moment_pos_x"])
    faces = _face_values(sk, code)
    n = pos.size
    scale = float(np.nanmax(np.abs(np.r_[mmax, mmin, 0.0])))
    faces_drawn = False
    for j in range(n):
        rows = _rows_of(span, j + 1)
        if not rows.size:
            continue
        if pos[j] > 0 and np.isfinite(pos_x[j]):
            xp = joint_x[j] + pos_x[j]
            k = rows[np.argmin(np.abs(x[rows] - xp))]
            labels.append(Label(ax, xp, pos[j], f"+{_num(pos[j])}" + _tag(cmax[k], lmax[k]),
                                not flip, rank=0, colour=MAX_COLOUR))
    for end in ("left", "right"):
        col = f"moment_neg_{end}"
        values = _finite(design[col]) if col in design else np.full(n, np.nan)
        face_values = _finite(design.get(f"{col}_face", values))
        for j in range(n):
            rows = _rows_of(span, j + 1)
            if not rows.size:
                continue
            k = rows[0] if end == "left" else rows[-1]
            if end == "left" and j > 0:
                continue  # the support between two spans is labelled once, from the right
            xj = joint_x[j] if end == "left" else joint_x[j + 1]
            # every station at the support, on both sides (a fixed support's moment jumps)
            here = np.flatnonzero(np.isclose(x, xj, atol=1e-9 * max(total_of(joint_x), 1.0)))
            if here.size:
                k = here[np.argmin(mmin[here])]
            m_cl = float(np.nanmin(mmin[here])) if here.size else values[j]
            # the hogging side of an interior support: the worse of its two spans' faces
            if end == "right" and j + 1 < n:
                candidates = [(face_values[j], -1), (_finite(design.get(
                    "moment_neg_left_face", values))[j + 1], 1)]
            else:
                candidates = [(face_values[j], -1 if end == "right" else 1)]
            if not np.isfinite(m_cl) or m_cl >= -1e-9 * max(scale, 1.0):
                continue
            width = float(sk["supports"][j + (end == "right")].get("width") or 0.0) if sk \
                else 0.0
            if faces and width > 0.0:
                value, direction = min(candidates, key=lambda c: c[0])
                xf = xj + direction * width / 2
                _line(ax, [xf], [value], marker="|", markersize=7, color=FACE_COLOUR, mew=1.2,
                        ls="none", zorder=6)
                faces_drawn = True
                labels.append(Label(ax, xf, value, f"{_num(value)} at face" +
                                    _tag(cmin[k], lmin[k]), flip, rank=1,
                                    colour=MIN_COLOUR))
            else:
                labels.append(Label(ax, xj, m_cl, f"{_num(m_cl)} at CL" +
                                    _tag(cmin[k], lmin[k]), flip, rank=1, colour=MIN_COLOUR))
    return faces_drawn


def total_of(joint_x: np.ndarray) -> float:
    """Length of the beam from its joint positions (1 for an empty beam)."""
    return float(joint_x[-1]) if joint_x.size else 1.0


def _shear_labels(ax: Any, labels: list[Label], env: Columns, n_spans: int) -> None:
    """Both end shears of every span, signed, with the governing combination."""
    x = _finite(env["x"])
    span = np.asarray(env["span"], dtype=int)
    vmax, vmin = _finite(env["shear_max"]), _finite(env["shear_min"])
    scale = float(np.nanmax(np.abs(np.r_[vmax, vmin, 0.0])))
    for j in range(1, n_spans + 1):
        rows = _rows_of(span, j)
        if not rows.size:
            continue
        for k, rank in ((rows[0], 2), (rows[-1], 2)):
            hi, lo = vmax[k], vmin[k]
            if not (np.isfinite(hi) and np.isfinite(lo)):
                continue
            v, combo, loaded = (hi, env["shear_max_combo"][k], env["shear_max_loaded"][k]) \
                if abs(hi) >= abs(lo) else (lo, env["shear_min_combo"][k],
                                            env["shear_min_loaded"][k])
            if abs(v) <= 1e-9 * max(scale, 1.0):
                continue
            labels.append(Label(ax, x[k], v, _num(v) + _tag(combo, loaded), v >= 0, rank,
                                MAX_COLOUR if v >= 0 else MIN_COLOUR))


def _deflection_labels(ax: Any, labels: list[Label], env: Columns, design: Columns,
                       sizing: Columns | None, sk: Mapping[str, Any] | None,
                       joint_x: np.ndarray, n_spans: int) -> list[str]:
    used: list[str] = []
    x = _finite(env["x"])
    span = np.asarray(env["span"], dtype=int)
    dmax = _finite(env["deflection_max"])
    d_scale = float(np.nanmax(np.r_[np.abs(dmax), 0.0]))
    for j in range(1, n_spans + 1):
        rows = _rows_of(span, j)
        if not rows.size or not np.any(np.isfinite(dmax[rows])):
            continue
        k = rows[np.nanargmax(dmax[rows])]
        if dmax[k] > 0.02 * d_scale:
            labels.append(Label(ax, x[k], dmax[k], _num(dmax[k], 2) +
                                _tag(env["deflection_max_combo"][k],
                                     env["deflection_max_loaded"][k]), False, rank=3,
                                colour=MAX_COLOUR))
    # springs where they settle: the support drawn at its largest deflection
    settling = {int(it.get("support", 0)) - 1 for it in (sk or {}).get("loads", [])
                if it.get("type") == "settlement"}
    for j, sup in enumerate((sk or {}).get("supports", [])):
        kv = sup.get("k_vertical", None)
        spring = kv is not None and kv > 0.0
        if not (spring or j in settling) or j >= joint_x.size:
            continue
        marker = _support_marker(sup)
        symbol = SPRING if spring or marker is None else marker[0]
        near = np.flatnonzero(np.isclose(x, joint_x[j], atol=1e-9 * max(total_of(joint_x), 1)))
        if not near.size:
            continue
        d = float(np.nanmax(dmax[near]))
        if not np.isfinite(d):
            continue
        _line(ax, [joint_x[j], joint_x[j]], [0.0, d], color=INK, lw=0.7, ls=":", zorder=5)
        _line(ax, [joint_x[j]], [d], marker=symbol, markersize=18 if spring else 12, color=INK,
                mew=1.0, mfc="white", ls="none", zorder=6)
        what = "spring settles" if spring else "support settles"
        labels.append(Label(ax, joint_x[j], d, "", False, rank=-1, clear=6.0 if spring
                            else 4.0))
        labels.append(Label(ax, joint_x[j], d, f"{what} {_num(d, 2)}", False, rank=3))
        if "spring settlement" not in used and spring:
            used.append("spring settlement")
    # the deflection of the member sizing chose, where it reports one, labelled
    sx, sd, what = sized_deflection(sizing)
    if sx.size:
        _line(ax, sx, sd, marker="D", markersize=4, color=SIZED_COLOUR, ls="none", zorder=6)
        for xs, ds in zip(sx, sd, strict=True):
            labels.append(Label(ax, float(xs), float(ds), "", False, rank=-1, clear=3.0))
            labels.append(Label(ax, float(xs), float(ds), f"{_num(ds, 2)} {what}", False,
                                rank=3, colour=SIZED_COLOUR))
        used.append("deflection, sized section")
    return used


def sized_deflection(sizing: Columns | None) -> tuple[np.ndarray, np.ndarray, str]:
    """(x, deflection, what) of the member sizing chose, at its span sections: for
    concrete the cracked immediate deflection with the chosen bars
    (``deflection_immediate``, under the arrangement of the span's largest analysed
    deflection: comparable with the curve's peak), for steel the chosen section's
    (``deflection_total``); empty where sizing reports neither."""
    empty = np.zeros(0)
    if not sizing or "x" not in sizing:
        return empty, empty, ""
    column, what = (("deflection_immediate", "cracked") if "deflection_immediate" in sizing
                    else ("deflection_total", "sized"))
    if column not in sizing:
        return empty, empty, ""
    sx, sd = _finite(sizing["x"]), _finite(sizing[column])
    ok = np.isfinite(sx) & np.isfinite(sd)
    return sx[ok], sd[ok], what


# --------------------------------------------------------------------------- sizing


def _sizing_kind(sizing: Columns | None) -> str:
    """"steel area" (required and provided steel), "utilisation", or "" (no panel)."""
    if not sizing or "x" not in sizing:
        return ""
    if "as_required" in sizing:
        return "steel area"
    if any(str(k).startswith("utilisation_") for k in sizing):
        return "utilisation"
    return ""


def bar_area(text: object, metric: bool) -> float:
    """The area of a bar mark's ``bars`` text, ``"3 #8"`` (ASTM A615 areas) or
    ``"2 H16"`` (pi d^2 / 4, d in mm), in mm2 when ``metric`` else in2; NaN for any
    other text."""
    from envelope.sizing.bars import IN_MM, US_BARS

    parts = str(text).split()
    if len(parts) != 2 or not parts[0].isdigit():
        return float("nan")
    count, size = int(parts[0]), parts[1]
    if size in US_BARS:
        one = US_BARS[size][1] * (IN_MM * IN_MM if metric else 1.0)
    else:
        try:
            d = float(size.lstrip("HhTt"))
        except ValueError:
            return float("nan")
        one = np.pi * d * d / 4.0 / (1.0 if metric else IN_MM * IN_MM)
    return count * one


def provided_along(bars: Columns, position: str, metric: bool
                   ) -> tuple[np.ndarray, np.ndarray] | None:
    """Steel area provided along the beam by the bar marks at ``position`` (``"top"``
    or ``"bottom"``): (edges, values) of a step line, each step between two bar ends,
    so every cut-off shows as a step.  None when no mark is there."""
    pos = np.asarray(bars.get("position", []), dtype=object)
    rows = np.flatnonzero(pos == position)
    if not rows.size:
        return None
    start, end = _finite(bars["start"])[rows], _finite(bars["end"])[rows]
    area = np.array([bar_area(bars["bars"][i], metric) for i in rows])
    ok = np.isfinite(start) & np.isfinite(end) & np.isfinite(area) & (end > start)
    if not np.any(ok):
        return None
    start, end, area = start[ok], end[ok], area[ok]
    edges = np.unique(np.r_[start, end])
    mid = 0.5 * (edges[:-1] + edges[1:])
    covered = (start[None, :] <= mid[:, None]) & (mid[:, None] < end[None, :])
    return edges, covered.astype(float) @ area


def _sizing_panel(ax: Any, labels: list[Label], sizing: Columns, kind: str,
                  units: Mapping[str, str], bars: Columns | None = None) -> None:
    x = _finite(sizing["x"])
    section = np.asarray(sizing.get("section", np.array([""] * x.size)), dtype=object)
    order = np.argsort(x, kind="stable")
    if kind == "steel area":
        req = _finite(sizing["as_required"])
        provided_col = "as_provided" if "as_provided" in sizing else "as_design"
        prov = _finite(sizing.get(provided_col, req))
        top = section != "span"
        metric = units.get("length") == "m"
        peaks: list[float] = []
        for mask, name, colour, position in (
                (top, "top (hogging)", MIN_COLOUR, "top"),
                (~top, "bottom (sagging)", MAX_COLOUR, "bottom")):
            idx = order[mask[order]]
            # with the bars drawn along the beam, the required steel is shown where it
            # is known, at the design sections (a line between them would read as a
            # requirement where the bars stop)
            ax.plot(x[idx], req[idx], marker="o", mfc="white", color=colour, lw=0.9,
                    markersize=4, ls="none" if bars else "-", zorder=4,
                    label=f"required, {name}")
            ax.plot(x[idx], prov[idx], marker="s", color=colour, lw=0, markersize=4,
                    zorder=5, label=f"provided, {name}")
            steps = provided_along(bars, position, metric) if bars else None
            if steps is not None:  # every bar mark as cut off, along the beam
                ax.stairs(steps[1], steps[0], color=colour, lw=0.9, alpha=0.6, zorder=3,
                          baseline=None, label=f"{position} bars as cut off")
                peaks.append(float(steps[1].max()))
        if "bars" in sizing:
            bars = sizing["bars"]
            for i in order:
                if bars[i] and np.isfinite(prov[i]):
                    labels.append(Label(ax, x[i], prov[i], literal(bars[i], 14), True, 4))
        area = "mm2" if units.get("length") == "m" else "in2"
        _style_panel(ax, f"Steel area\n[{area}]")
        top_value = float(np.nanmax(np.r_[req, prov, peaks, 0.0]))
        ax.set_ylim(0.0, 1.45 * top_value if top_value > 0 else 1.0)
        narrow = ax.figure.get_figwidth() < WIDTH  # the key in two rows
        if narrow:
            ax.set_ylim(0.0, 1.9 * top_value if top_value > 0 else 1.0)
        ax.legend(fontsize=_pt(6), frameon=False, loc="upper right",
                  ncol=(6 if peaks else 4) // (2 if narrow else 1),
                  columnspacing=1.0, handlelength=1.6)
    else:
        names = [k for k in sizing if str(k).startswith("utilisation_")]
        colours = (MAX_COLOUR, MIN_COLOUR, SIZED_COLOUR, FACE_COLOUR, SOFT)
        for i, name in enumerate(names):
            u = _finite(sizing[name])
            ok = order[np.isfinite(u[order])]
            ax.plot(x[ok], u[ok], marker="o", markersize=3.5, lw=0.8,
                    color=colours[i % len(colours)], label=literal(name[12:], 16), zorder=4)
        ax.axhline(1.0, color=MAX_COLOUR, lw=0.8, ls="--", zorder=3)
        values = np.concatenate([_finite(sizing[n]) for n in names] + [np.zeros(1)])
        ax.set_ylim(0.0, max(1.3, float(values[np.isfinite(values)].max()) * 1.3))
        _style_panel(ax, "Utilisation\n(1.0 = capacity)")
        ax.legend(fontsize=_pt(6), frameon=False, loc="upper right", ncol=len(names))


# --------------------------------------------------------------------------- the key


#: The names in each key drawn (a kept figure keeps its key while they stay the same).
#: (With the figure's size: a legend is anchored for the size it was made at.)
_KEY_NAMES: WeakKeyDictionary[Any, tuple[list[str], tuple[float, ...]]] = \
    WeakKeyDictionary()
#: The key of each kept figure drawn the fast way: kept as pixels per set of symbols.
_KEY_STAMPS: WeakKeyDictionary[Any, Stamp] = WeakKeyDictionary()

#: The symbols a key can show, in the order it shows them (line styles of the handles).
_SYMBOLS: dict[str, dict[str, Any]] = {
    "pinned": {"marker": PIN, "mfc": "white"},
    "fixed": {"marker": FIXED},
    "vertical spring": {"marker": SPRING, "mfc": "white"},
    "rotational spring": {"marker": COIL, "mfc": "none"},
    "hinge": {"marker": "o", "mfc": "white", "markersize": 5},
    "support face": {"marker": "s", "mfc": "#e9dfcc", "mec": FACE_COLOUR},
    "value at support face": {"marker": "|", "color": FACE_COLOUR},
    "applied moment": {"marker": COIL, "mfc": "none", "color": CASE_COLOURS[0]},
    "settlement": {"marker": "v", "color": CASE_COLOURS[0]},
    "moving load": {"marker": "$\\leftrightarrow$", "color": CASE_COLOURS[0]},
    "spring settlement": {"marker": SPRING, "mfc": "white"},
    "deflection, sized section": {"marker": "D", "color": SIZED_COLOUR, "markersize": 4},
}


def _key_names(used: Sequence[str]) -> list[str]:
    """The key's entries: the envelope's two lines, then the symbols used in the order
    of :data:`_SYMBOLS` (the same symbols always give the same key), then free ends."""
    names = ["envelope maximum", "envelope minimum"]
    names += [name for name in _SYMBOLS if name in used]
    if "free end" in used:
        names.append("free end: no symbol")
    return names


def _key_handle(name: str) -> Line2D:
    """The key's symbol for ``name``: the envelope's lines, a symbol of
    :data:`_SYMBOLS`, or none (a text alone, such as the free end's)."""
    if name in ("envelope maximum", "envelope minimum"):
        return Line2D([], [], color=MAX_COLOUR if name == "envelope maximum" else MIN_COLOUR,
                      lw=1.4)
    if name in _SYMBOLS:
        style: dict[str, Any] = {"color": INK, "markersize": 9, "ls": "none",
                                 "mew": 1.0, **_SYMBOLS[name]}
        return Line2D([], [], **style)
    return Line2D([], [], ls="none")


def _key_columns(names: Sequence[str], narrow: bool = False) -> int:
    """The key's columns: rows of up to seven entries (four on a narrower figure than
    the PNG's; one column without any)."""
    return max(min(len(names), 4 if narrow else 7), 1)


def _key_legend(fig: Figure, names: Sequence[str], add: bool) -> Any:
    """The key as a legend in one row under the panels (added to ``fig`` when ``add``)."""
    handles = [_key_handle(name) for name in names]
    options: dict[str, Any] = {
        "loc": "lower left", "ncol": _key_columns(names, fig.get_figwidth() < WIDTH),
        "fontsize": _pt(6.5), "frameon": False,
        "bbox_to_anchor": (_LEFT / fig.get_figwidth() - 0.01,
                           (0.45 if fig.get_figwidth() >= WIDTH else _NARROW_KEY_Y)
                           / fig.get_figheight()),
        "handlelength": 1.6, "columnspacing": 1.2, "borderaxespad": 0.0}
    if add:
        return fig.legend(handles, names, **options)
    return Legend(fig, handles, list(names), **options)


def _key(fig: Figure, used: Sequence[str], dropped: int, units: Mapping[str, str]) -> None:
    """A key to the symbols drawn, in one row under the panels, and a note on units."""
    names = _key_names(used)
    stamp = _KEY_STAMPS.get(fig)
    if stamp is not None:
        # the fast way: laid out from entries kept per figure and drawn once per set
        # of symbols, then pasted
        stamp.show((tuple(names), tuple(fig.get_size_inches()), fig.dpi),
                   lambda: KeyRow(fig, names, _key_columns(names),
                                  lambda some: _key_legend(fig, some, add=False)))
    elif [_KEY_NAMES.get(legend) for legend in fig.legends] != \
            [(names, tuple(fig.get_size_inches()))]:
        # a kept figure keeps its key while the symbols are the same
        for legend in list(fig.legends):
            legend.remove()
        _KEY_NAMES[_key_legend(fig, names, add=True)] = (list(names),
                                                         tuple(fig.get_size_inches()))
    note = (f"Units {units.get('length', '')}, {units.get('force', '')}, "
            f"{units.get('moment', '')}, deflection {units.get('deflection', '')}.  "
            "Labels: value, governing combination, loaded spans; CL at the centreline.")
    if dropped:
        note += "\n" if fig.get_figwidth() < WIDTH else " "
        note += f"{dropped} labels left out for want of room (see design.parquet)."
    _fig_text(fig, _LEFT / fig.get_figwidth(), 0.27 / fig.get_figheight(), note,
              fontsize=_pt(6.5), color=SOFT, ha="left", va="bottom", parse_math=False)
