"""A panel's contents as a display list drawn straight on the raster canvas (the batch
figure), instead of one matplotlib artist per line, text, patch and arrow.

Creating, adding, clipping and removing some hundred artists a beam was a third of the
envelope figure's cost in a batch worker, and drawing each through its own ``draw``
another third.  On the kept figure of :func:`envelope.plots.draw_results` the figure's
code records what it draws here instead: a :class:`Panel` per axes keeps one
:class:`DrawList` per z-order (so the panel's drawing order is matplotlib's: by z-order,
then in the order drawn), each a list of plain items:

* a text: its string, position and a kept styled text per style and transform (the
  text's layout is matplotlib's, kept per string: :mod:`envelope.glyphs`), drawn as
  ``Text.draw`` draws it, line by line through ``renderer.draw_text``;
* a label: a text placed in points from an anchor, as an annotation in ``offset
  points`` places it;
* a line, a polygon, a rectangle, an arrow, a fill between two curves: one kept
  matplotlib artist per style (a template), given each item's data and drawn, so that
  the path, the styles and the drawing calls are matplotlib's own;
* any other artist, drawn as it is.

Only the raster canvas of the kept batch figure uses this; a notebook figure, SVG and
PDF keep matplotlib's artists (editable text).  The same plotting code decides every
position and style for both, and ``tests/test_fast_figure.py`` compares the two
drawings pixel for pixel.
"""

from __future__ import annotations

from collections.abc import Callable, Hashable
from math import isfinite
from numbers import Real
from typing import Any
from weakref import WeakKeyDictionary

import matplotlib as mpl
import matplotlib.colors as mcolors
import numpy as np
from matplotlib import cbook
from matplotlib.artist import Artist
from matplotlib.backends.backend_agg import RendererAgg
from matplotlib.collections import FillBetweenPolyCollection, LineCollection
from matplotlib.lines import Line2D
from matplotlib.patches import FancyArrowPatch, Polygon, Rectangle
from matplotlib.path import Path
from matplotlib.transforms import Affine2D, Bbox, TransformNode

from envelope.glyphs import (
    _GLYPH_API,
    CachedTextRenderer,
    KeptText,
    _font_key,
    _hinting,
    kept_layout,
)

try:  # matplotlib's own affine loop (private: without it, transforms are used as they are)
    from matplotlib._path import affine_transform  # type: ignore[attr-defined]
except ImportError:  # pragma: no cover - a matplotlib that has moved it
    affine_transform = None  # type: ignore[assignment]

Item = tuple[Callable[..., None], tuple[Any, ...]]


class DrawList(Artist):
    """The items of one panel at one z-order, drawn in the order recorded."""

    def __init__(self, zorder: float) -> None:
        super().__init__()
        self.set_zorder(zorder)
        self.items: list[Item] = []

    def draw(self, renderer: Any) -> None:
        """Each item in turn."""
        if self.get_visible():
            for function, args in self.items:
                function(renderer, *args)
        self.stale = False


def _key(style: dict[str, Any]) -> Hashable:
    """The style as a key: its items in name order; a transform (which cannot be
    hashed) by its identity, any other value that cannot be hashed by its repr."""
    key = tuple(sorted(style.items()))
    try:
        hash(key)
    except TypeError:
        return tuple(sorted((k, _hashable(v)) for k, v in style.items()))
    return key


def _hashable(value: Any) -> Hashable:
    """``value``, or for one that cannot be hashed: a transform's identity (what its
    repr, the default one, spells out, without making the string; the template made
    with it keeps it, so no other object takes its id while the key is in use), else
    its repr."""
    try:
        hash(value)
    except TypeError:
        if isinstance(value, TransformNode):
            return ("transform", id(value))
        return repr(value)
    return value  # type: ignore[no-any-return]


#: At most this many templates are kept per panel (a style that varies without end,
#: such as a new transform object per item, empties the templates, never grows them).
_TEMPLATES = 256


class Panel:
    """One axes' display lists and kept templates (see the module docstring)."""

    def __init__(self, ax: Any) -> None:
        self.ax = ax
        self.lists: dict[float, DrawList] = {}
        self.templates: dict[Hashable, Any] = {}

    def clear(self) -> None:
        """Empty every list (the next beam's figure)."""
        for drawn in self.lists.values():
            drawn.items.clear()
        if len(self.templates) > _TEMPLATES:
            self.templates.clear()

    def _list(self, zorder: float) -> DrawList:
        drawn = self.lists.get(zorder)
        if drawn is None:
            drawn = self.lists[zorder] = DrawList(zorder)
            self.ax.add_artist(drawn)
        return drawn

    def adopt(self, artist: Any, clip: bool = True) -> Any:
        """``artist`` set up as ``Axes.add_artist`` sets up what it adds (figure,
        transform, axes, clipped to the axes' patch), without adding it."""
        ax = self.ax
        artist.set_figure(ax.get_figure(root=False))
        if not artist.is_transform_set():
            artist.set_transform(ax.transData)
        artist.axes = ax
        if clip and artist.get_clip_path() is None:
            artist.set_clip_path(ax.patch)
        return artist

    def add(self, zorder: float, function: Callable[..., None], *args: Any) -> None:
        """Record one item."""
        self._list(zorder).items.append((function, args))

    def artist(self, artist: Artist) -> None:
        """Draw ``artist`` as it is, at its z-order."""
        self.add(artist.get_zorder(), _draw_artist, artist)

    def collection(self, kind: type, paths: Any, offsets: Any, **style: Any) -> None:
        """A :class:`~matplotlib.collections.PolyCollection` or
        :class:`~matplotlib.collections.LineCollection` of ``paths`` (polygons or lines)
        at ``offsets``, not clipped (``clip_on=False``), as ``Axes.add_collection``
        adds it: one kept per style, given each item's paths and offsets."""
        key = ("collection", kind, _key(style))
        drawn = self.templates.get(key)
        if drawn is None:
            drawn = self.templates[key] = self.adopt(kind(paths, offsets=offsets, **style),
                                                     clip=False)
        self.add(drawn.get_zorder(), _draw_collection, drawn, paths, offsets)

    def labels(self) -> list[tuple[str, tuple[float, float], tuple[float, float], Any]]:
        """Every label recorded: (text, anchor in data, offset in points, its styled
        text), for tests and tools that read the figure."""
        return [(args[4], args[2], args[3], args[1]) for drawn in self.lists.values()
                for function, args in drawn.items if function is _draw_label]

    def count(self) -> int:
        """How many items are recorded."""
        return sum(len(drawn.items) for drawn in self.lists.values())

    # ---------------------------------------------------------------- lines and patches

    def line(self, x: Any, y: Any, steps: int | None = None, **style: Any) -> None:
        """A line (or markers), as :class:`~matplotlib.lines.Line2D` draws it."""
        key = ("line", steps, _key(style))
        line = self.templates.get(key)
        if line is None:
            line = self.adopt(Line2D([0.0, 1.0], [0.0, 0.0], **style))
            if steps is not None:
                line.get_path()._interpolation_steps = steps
            self.templates[key] = line
        self.add(line.get_zorder(), draw_line, line, np.asarray(x, dtype=float),
                 np.asarray(y, dtype=float))

    def polygon(self, xy: Any, **style: Any) -> None:
        """A closed polygon, as :class:`~matplotlib.patches.Polygon` draws it."""
        key = ("polygon", _key(style))
        patch = self.templates.get(key)
        if patch is None:
            patch = self.templates[key] = self.adopt(Polygon(np.zeros((3, 2)), **style))
        self.add(patch.get_zorder(), _draw_polygon, patch, np.asarray(xy, dtype=float))

    def rectangle(self, xy: tuple[float, float], width: float, height: float,
                  **style: Any) -> None:
        """A rectangle, as :class:`~matplotlib.patches.Rectangle` draws it."""
        key = ("rectangle", _key(style))
        patch = self.templates.get(key)
        if patch is None:
            patch = self.templates[key] = self.adopt(Rectangle((0.0, 0.0), 1.0, 1.0,
                                                                **style))
        self.add(patch.get_zorder(), _draw_rectangle, patch, xy, width, height)

    def arrow(self, xy: tuple[float, float], xytext: tuple[float, float],
              arrowprops: dict[str, Any], zorder: float = 3.0) -> None:
        """An arrow from ``xytext`` to ``xy`` (data), as ``Axes.annotate("", xy,
        xytext, arrowprops=...)`` draws it (the annotation's empty text draws
        nothing)."""
        props = dict(arrowprops)
        props.pop("relpos", None)
        key = ("arrow", _key(props))
        patch = self.templates.get(key)
        if patch is None:
            patch = FancyArrowPatch((0, 0), (1, 1), **props)
            patch.set_figure(self.ax.get_figure(root=False))
            self.templates[key] = patch
        self.add(zorder, _draw_arrow, self.ax, patch, xy, xytext)

    def fill_between(self, x: np.ndarray, y1: np.ndarray, y2: np.ndarray,
                     **style: Any) -> None:
        """The area between two curves, as ``Axes.fill_between`` draws it."""
        style = cbook.normalize_kwargs(style, FillBetweenPolyCollection)
        key = ("fill", _key(style))
        fill = self.templates.get(key)
        if fill is None:
            fill = self.templates[key] = self.adopt(FillBetweenPolyCollection(
                "x", x, y1, y2, **style))
        self.add(fill.get_zorder(), _draw_fill, fill, x, y1, y2)

    # ---------------------------------------------------------------- texts

    def _text_template(self, style: dict[str, Any], clip: bool) -> Any:
        key = ("text", clip, _key(style))
        text = self.templates.get(key)
        if text is None:
            text = KeptText(0.0, 0.0, "", **style)
            if clip and text.get_clip_path() is None:
                text.set_clip_path(self.ax.patch)
            text.set_figure(self.ax.get_figure(root=False))
            text.axes = self.ax
            self.templates[key] = text
        return text

    def text(self, x: float, y: float, s: str, **style: Any) -> None:
        """A text at (x, y) in its transform (data unless given), as ``Axes.text``
        adds it and ``Text.draw`` draws it."""
        style = {"verticalalignment": "baseline", "horizontalalignment": "left",
                 "transform": self.ax.transData, "clip_on": False, **style}
        text = self._text_template(style, clip=True)
        self.add(text.get_zorder(), _draw_text, text, float(x), float(y), s)

    def label(self, xy: tuple[float, float], offset: tuple[float, float], s: str,
              **style: Any) -> None:
        """A text ``offset`` points from the anchor ``xy`` (data), as an annotation
        with ``textcoords="offset points"`` (and no arrow) places and draws it."""
        text = self._text_template(style, clip=False)
        self.add(text.get_zorder(), _draw_label, self.ax, text, xy, offset, s)


# -------------------------------------------------------------------- the drawing
#
# What a drawing works out per style (a graphics context, a transform's matrix, a
# marker's path) is worked out once per drawing of the figure and kept with the
# template (or text) it belongs to, known by the renderer's pass token (a new one at
# each clear of the canvas: :class:`envelope.glyphs.CachedTextRenderer`); another
# renderer has no token and works it out at each item.  Each item then makes only
# its own path (or position) and issues the same drawing calls as matplotlib.


def _exact_affine() -> bool:
    """Whether ``(a * x + c * y) + e`` in Python floats is matplotlib's affine
    transform of a point bit for bit here (its C loop computes exactly that; a compiler
    fusing the multiply and add would not); False where it cannot be checked (a
    matplotlib without that loop, or one that calls it otherwise)."""
    if affine_transform is None:
        return False
    rng = np.random.default_rng(11)
    matrix = np.vstack([rng.standard_normal((2, 3)) * [[3e2, 7e-3, 1e3]], [0.0, 0.0, 1.0]])
    points = rng.standard_normal((256, 2)) * 1e4
    points[::7] *= 1e-9
    try:
        done = affine_transform(points, matrix)
    except Exception:  # (a private function's signature is no promise)
        return False
    (a, c, e), (b, d, f) = matrix[:2].tolist()
    for (x, y), (u, v) in zip(points.tolist(), done.tolist(), strict=True):
        if (a * x + c * y) + e != u or (b * x + d * y) + f != v:
            return False
    return True


#: Positions are transformed in Python floats where that is matplotlib's arithmetic.
_EXACT_AFFINE = _exact_affine()


def _matrix(transform: Any) -> tuple[float, ...] | None:
    """An affine transform's matrix as six floats (a, c, e, b, d, f), for
    :func:`_apply`; None for a transform that is not affine (or where Python floats
    are not matplotlib's arithmetic)."""
    if not _EXACT_AFFINE or not transform.is_affine:
        return None
    (a, c, e), (b, d, f) = transform.get_affine().get_matrix()[:2].tolist()
    return a, c, e, b, d, f


def _apply(transform: Any, matrix: tuple[float, ...] | None, x: float, y: float
           ) -> tuple[float, float]:
    """``transform.transform((x, y))``, from its matrix where given (the same floats)."""
    if matrix is None:
        px, py = transform.transform((x, y))
        return float(px), float(py)
    a, c, e, b, d, f = matrix
    return (a * x + c * y) + e, (b * x + d * y) + f


def _prepared(renderer: Any, owner: Any, make: Callable[[Any, Any], Any]) -> Any:
    """``make(renderer, owner)``, kept with ``owner`` for the rest of this drawing."""
    token = getattr(renderer, "pass_token", None)
    if token is None:
        return make(renderer, owner)
    kept = owner.__dict__.get("_envelope_prepared")
    if kept is not None and kept[0] is token:
        return kept[1]
    state = make(renderer, owner)
    owner._envelope_prepared = (token, state)
    return state


def _plan_key(renderer: Any) -> Any:
    """What a template's plan depends on beyond its style: the kind of renderer, its
    resolution and the rc settings read in drawing; None for a renderer without pass
    tokens (nothing kept)."""
    token = getattr(renderer, "pass_token", None)
    if token is None:
        return None
    kept = renderer.__dict__.get("_envelope_plan_key")
    if kept is not None and kept[0] is token:
        return kept[1]
    rc = mpl.rcParams
    key = (type(renderer), renderer.dpi, rc["path.simplify"], rc["path.simplify_threshold"],
           rc["agg.path.chunksize"], rc["hatch.linewidth"], rc["text.hinting"],
           rc["text.hinting_factor"])
    renderer._envelope_plan_key = (token, key)
    return key


def _planned(renderer: Any, template: Any, make: Callable[[Any, Any], Any]) -> Any:
    """``make(renderer, template)`` for a template of the display lists (its style is
    set once, only its data change), kept with it across drawings while the renderer
    and the rc settings read in drawing stay the same."""
    key = _plan_key(renderer)
    if key is None:
        return make(renderer, template)
    kept = template.__dict__.get("_envelope_plan")
    if kept is not None and kept[0] == key:
        return kept[1]
    state = make(renderer, template)
    template._envelope_plan = (key, state)
    return state


def _affine(renderer: Any, transform: Any, kind: str) -> Any:
    """``transform.get_affine().frozen()`` ("frozen affine"), ``get_affine()``
    ("affine"), ``frozen()`` ("frozen") or its matrix for :func:`_apply` ("matrix"),
    worked out once per drawing (the view and the axes' place are set before it)."""
    token = getattr(renderer, "pass_token", None)
    kept: tuple[object, dict[str, Any]] | None = \
        transform.__dict__.get("_envelope_affines") if token is not None else None
    if kept is None or kept[0] is not token:
        kept = (token, {})
        if token is not None:
            transform._envelope_affines = kept
    hit = kept[1].get(kind)
    if hit is None:
        if kind == "frozen affine":
            hit = transform.get_affine().frozen()
        elif kind == "affine":
            hit = transform.get_affine()
        elif kind == "frozen":
            hit = transform.frozen()
        else:
            hit = (_matrix(transform),)
        kept[1][kind] = hit
    return hit


def _direct(renderer: Any) -> bool:
    """Whether ``renderer.draw_path`` passes a path straight to Agg's own (no chunking:
    ``agg.path.chunksize`` 100 or less), which may then be called instead."""
    return (isinstance(renderer, RendererAgg)
            and type(renderer).draw_path is RendererAgg.draw_path
            and not mpl.rcParams["agg.path.chunksize"] > 100)


def _new_path(vertices: np.ndarray, codes: np.ndarray | None, steps: int,
              simplify: tuple[float, bool]) -> Path:
    """``Path(vertices, codes, steps)`` of float (N, 2) vertices without NaN masks,
    without its checks (``simplify``: the rc settings' threshold and switch)."""
    path: Any = Path.__new__(Path)
    path._vertices = vertices
    path._codes = codes
    path._interpolation_steps = steps
    threshold, on = simplify
    path._simplify_threshold = threshold
    path._should_simplify = (threshold > 0 and on and len(vertices) >= 128
                             and (codes is None or bool(np.all(codes <= Path.LINETO))))
    path._readonly = False
    return path  # type: ignore[no-any-return]


def _simplify() -> tuple[float, bool]:
    return mpl.rcParams["path.simplify_threshold"], mpl.rcParams["path.simplify"]


def _draw_artist(renderer: Any, artist: Artist) -> None:
    artist.draw(renderer)


#: Lines longer than this are drawn by their template (``Line2D`` then draws only the
#: part in view of a long sorted line: its "subslice").
_SHORT: int = Line2D._subslice_optim_min_size  # type: ignore[attr-defined]


def _line_plan(renderer: Any, line: Any) -> Any:
    """What ``Line2D.draw`` sets up for ``line``'s style: (transform, direct, the
    line's gc or None, (gc, marker path, its transform, alt path, alt transform, face,
    alt face) or None, interpolation steps, simplification); None where the template
    draws (drawstyles, path effects, sketches, gap colours, markevery, a transform
    that is not affine)."""
    transform = line.get_transform()
    if (line._drawstyle != "default" or line.get_path_effects()
            or line.get_sketch_params() is not None or line._gapcolor is not None
            or line.get_markevery() is not None or not transform.is_affine):
        return None
    stroke = None
    if line._lineStyles[line._linestyle] != "_draw_nothing":
        gc = renderer.new_gc()
        line._set_gc_clip(gc)
        gc.set_url(line.get_url())
        gc.set_antialiased(line._antialiased)
        gc.set_linewidth(line._linewidth)
        dashed = line.is_dashed()
        gc.set_joinstyle(line._dashjoinstyle if dashed else line._solidjoinstyle)
        gc.set_capstyle(line._dashcapstyle if dashed else line._solidcapstyle)
        gc.set_snap(line.get_snap())
        gc.set_foreground(mcolors.to_rgba(line._color, line._alpha), isRGBA=True)
        if line._linewidth > 0:
            gc.set_dashes(*line._dash_pattern)
        else:
            gc.set_dashes(0, None)
        stroke = gc
    markers = None
    marker = line._marker
    if marker and line._markersize > 0:
        gc = renderer.new_gc()
        line._set_gc_clip(gc)
        gc.set_url(line.get_url())
        gc.set_linewidth(line._markeredgewidth)
        gc.set_antialiased(line._antialiased)
        ec_rgba = mcolors.to_rgba(line.get_markeredgecolor(), line._alpha)
        fc_rgba = mcolors.to_rgba(line._get_markerfacecolor(), line._alpha)
        fcalt_rgba = mcolors.to_rgba(line._get_markerfacecolor(alt=True), line._alpha)
        if (cbook._str_equal(line._markeredgecolor, "auto")
                and not cbook._str_lower_equal(line.get_markerfacecolor(), "none")):
            ec_rgba = (*ec_rgba[:3], fc_rgba[3])
        gc.set_foreground(ec_rgba, isRGBA=True)
        snap = marker.get_snap_threshold()
        if isinstance(snap, Real):
            snap = renderer.points_to_pixels(line._markersize) >= snap
        gc.set_snap(snap)
        gc.set_joinstyle(marker.get_joinstyle())
        gc.set_capstyle(marker.get_capstyle())
        marker_trans = marker.get_transform()
        w = renderer.points_to_pixels(line._markersize)
        if cbook._str_equal(marker.get_marker(), ","):
            gc.set_linewidth(0)
        else:
            marker_trans = marker_trans.scale(w)
        alt = marker.get_alt_path()
        markers = (gc, marker.get_path(), marker_trans, alt,
                   marker.get_alt_transform().scale(w) if alt else None, fc_rgba, fcalt_rgba)
    return (transform, _direct(renderer), stroke, markers,
            line.get_path()._interpolation_steps, _simplify())


def draw_line(renderer: Any, line: Any, x: np.ndarray, y: np.ndarray) -> None:
    """``Line2D.draw`` of ``line`` with the data (x, y): the same path, styles and calls
    (a solid or dashed line, then its markers), without the artist's bookkeeping."""
    plan = _planned(renderer, line, _line_plan) if x.size <= _SHORT else None
    if plan is None:
        line.set_data(x, y)
        line.draw(renderer)
        return
    if not x.size:
        return
    transform, direct, stroke, markers, steps, simplify = plan
    affine = _affine(renderer, transform, "frozen affine")
    path = _new_path(np.column_stack((x, y)), None, steps, simplify)
    if stroke is not None:
        (renderer._renderer if direct else renderer).draw_path(stroke, path, affine)
    if markers is not None:
        gc, marker_path, marker_trans, alt, alt_trans, fc_rgba, fcalt_rgba = markers
        renderer.draw_markers(gc, marker_path, marker_trans, path, affine, fc_rgba)
        if alt:
            renderer.draw_markers(gc, alt, alt_trans, path, affine, fcalt_rgba)


def _collection_gc(renderer: Any, drawn: Any) -> Any:
    """A new graphics context with ``drawn``'s clip, snapping, join and cap styles, as
    ``Collection.draw`` sets them up."""
    gc = renderer.new_gc()
    drawn._set_gc_clip(gc)
    gc.set_snap(drawn.get_snap())
    if drawn._joinstyle:
        gc.set_joinstyle(drawn._joinstyle)
    if drawn._capstyle:
        gc.set_capstyle(drawn._capstyle)
    return gc


def _collection_plan(renderer: Any, drawn: Any) -> Any:
    """What ``Collection.draw`` sets up for ``drawn``'s style: (gc, transform, offset
    transform, a single path's gc or None); None where the
    template draws (hatches, sketches, path effects, gap colours, units, scalar
    mapping, transforms that are not affine)."""
    if (drawn._hatch or drawn.get_sketch_params() is not None or drawn.get_path_effects()
            or drawn._gapcolor is not None or drawn.have_units() or drawn._A is not None
            or not drawn.get_transform().is_affine
            or not drawn.get_offset_transform().is_affine or len(drawn.get_transforms())):
        return None
    gc = _collection_gc(renderer, drawn)
    facecolors, edgecolors = drawn.get_facecolor(), drawn.get_edgecolor()
    single = None
    if (len(facecolors) == 1 and len(edgecolors) == 1 and len(drawn._linewidths) == 1
            and all(ls[1] is None for ls in drawn._linestyles)
            and len(drawn._antialiaseds) == 1 and len(drawn._urls) == 1):
        single = _collection_gc(renderer, drawn)
        single.set_foreground(tuple(edgecolors[0]), isRGBA=True)
        single.set_linewidth(drawn._linewidths[0])
        single.set_dashes(*drawn._linestyles[0])
        single.set_antialiased(drawn._antialiaseds[0])
        single.set_url(drawn._urls[0])
    return gc, drawn.get_transform(), drawn.get_offset_transform(), single


def _draw_paths(renderer: Any, drawn: Any, paths: list[Path], offsets: np.ndarray) -> None:
    """``Collection.draw`` of ``drawn`` (its plan kept per drawing) with these paths and
    offsets: one path of one style pasted by ``draw_markers`` where it fits in the
    figure, else ``draw_path_collection``."""
    plan = _planned(renderer, drawn, _collection_plan)
    if plan is None or not drawn.get_visible() or np.ma.isMaskedArray(offsets):
        if paths is not drawn.get_paths():  # (made here: what set_verts would make)
            drawn._paths = list(paths)
        drawn.draw(renderer)
        return
    if not len(offsets):
        return
    gc, transform, offset_transform, single = plan
    frozen = _affine(renderer, transform, "frozen")
    offset_trf = _affine(renderer, offset_transform, "affine")
    if single is not None and len(paths) == 1:
        fig = drawn.get_figure(root=True)
        width, height = _extent(paths[0], transform, _affine(renderer, transform, "affine"))
        if width < fig.bbox.width and height < fig.bbox.height:
            renderer.draw_markers(single, paths[0], frozen, Path(offsets), offset_trf,
                                  tuple(drawn.get_facecolor()[0]))
            return
    try:
        renderer.draw_path_collection(
            gc, frozen, paths, drawn.get_transforms(), offsets, offset_trf,
            drawn.get_facecolor(), drawn.get_edgecolor(), drawn._linewidths,
            drawn._linestyles, drawn._antialiaseds, drawn._urls, "screen",
            hatchcolors=drawn.get_hatchcolor())
    except TypeError:  # a renderer without hatch colours: as the collection draws
        drawn.draw(renderer)


def _extent(path: Path, transform: Any, affine: Any) -> tuple[float, float]:
    """The width and height of ``path.get_extents(transform)`` (an affine transform):
    of its end points, transformed, but those of curves and closing codes."""
    codes = path.codes
    if codes is not None and bool(np.any((codes == Path.CURVE3) | (codes == Path.CURVE4))):
        box = path.get_extents(transform)
        return box.width, box.height
    points = affine.transform(path.vertices)
    if codes is not None:
        points = points[(codes == Path.MOVETO) | (codes == Path.LINETO)]
    if not len(points):
        return -np.inf, -np.inf
    low, high = points.min(axis=0), points.max(axis=0)
    return high[0] - low[0], high[1] - low[1]


def _draw_collection(renderer: Any, drawn: Any, paths: Any, offsets: Any) -> None:
    drawn.set_offsets(offsets)
    if (not isinstance(drawn, LineCollection) and type(paths) is list
            and all(type(v) is np.ndarray and v.ndim == 2 and v.shape[1] == 2 and len(v)
                    and v.dtype == float for v in paths)
            and _planned(renderer, drawn, _collection_plan) is not None):
        # PolyCollection.set_verts(paths): each polygon closed by a copy of its first
        # vertex (Path._create_closed)
        simplify = _simplify()
        _draw_paths(renderer, drawn,
                    [_new_path(np.concatenate([v, v[:1]]), _closed_codes(len(v) + 1), 1,
                               simplify) for v in paths], drawn.get_offsets())
        return
    if isinstance(drawn, LineCollection):
        drawn.set_segments(paths)
    else:
        drawn.set_verts(paths)
    _draw_paths(renderer, drawn, drawn.get_paths(), drawn.get_offsets())


def _polygon_plan(renderer: Any, patch: Any) -> Any:
    """What ``Patch.draw`` sets up for a plain polygon in ``patch``'s style: (gc, transform,
    face, direct, simplification); None where the patch draws (hatches, sketches,
    path effects, gap colours, a transform that is not affine)."""
    transform = patch.get_transform()
    if (patch._hatch or patch.get_sketch_params() is not None or patch.get_path_effects()
            or patch._gapcolor is not None or not patch.get_visible()
            or not transform.is_affine):
        return None
    gc = renderer.new_gc()
    lw = patch._linewidth
    if patch._edgecolor[3] == 0 or patch._linestyle == "None":
        lw = 0
    gc.set_linewidth(lw)
    gc.set_capstyle(patch._capstyle)
    gc.set_joinstyle(patch._joinstyle)
    gc.set_antialiased(patch._antialiased)
    patch._set_gc_clip(gc)
    gc.set_url(patch._url)
    gc.set_snap(patch.get_snap())
    gc.set_alpha(patch._alpha)
    gc.set_foreground(patch._edgecolor, isRGBA=True)
    if lw > 0:
        gc.set_dashes(*patch._dash_pattern)
    else:
        gc.set_dashes(0, None)
    face = patch._facecolor if patch._facecolor[3] else None
    return gc, transform, face, _direct(renderer), _simplify()


#: Path codes of a closed polygon of n vertices (the last closing it), by n.
_CLOSED_CODES: dict[int, np.ndarray] = {}


def _closed_codes(n: int) -> np.ndarray:
    codes = _CLOSED_CODES.get(n)
    if codes is None:
        codes = np.full(n, Path.LINETO, dtype=Path.code_type)
        codes[0] = Path.MOVETO
        codes[-1] = Path.CLOSEPOLY
        codes.flags.writeable = False
        if len(_CLOSED_CODES) < 64:
            _CLOSED_CODES[n] = codes
    return codes


def _draw_polygon(renderer: Any, patch: Any, xy: np.ndarray) -> None:
    """``Patch.draw`` of the polygon ``xy`` in ``patch``'s style (a plain patch: no
    hatch, sketch, path effects or gap colour; those are drawn by the patch)."""
    plan = _planned(renderer, patch, _polygon_plan) if patch._closed else None
    if plan is None or len(xy) < 2:
        patch.set_xy(xy)
        patch.draw(renderer)
        return
    gc, transform, face, direct, simplify = plan
    affine = _affine(renderer, transform, "affine")
    # Polygon.set_xy: closed by a copy of the first vertex unless the last is one
    if (xy[0] != xy[-1]).any():
        xy = np.concatenate([xy, xy[:1]])
    # a polygon's own transform is the identity: its path drawn through the axes'
    (renderer._renderer if direct else renderer).draw_path(
        gc, _new_path(xy, _closed_codes(len(xy)), 1, simplify), affine, face)


def _draw_rectangle(renderer: Any, patch: Rectangle, xy: tuple[float, float],
                    width: float, height: float) -> None:
    patch.set_xy(xy)
    patch.set_width(width)
    patch.set_height(height)
    patch.draw(renderer)


def _fill_path(fill: Any, x: np.ndarray, y1: np.ndarray, y2: np.ndarray) -> Path | None:
    """The one polygon ``fill._make_verts(x, y1, y2, None)`` makes and ``set_verts``
    closes (the area between two finite curves along x, no steps, no interpolation):
    the start on the second curve, along the first, the end on the second, back along
    it, the start again; None for anything else."""
    n = x.size
    if (fill._step is not None or fill._interpolate or fill.t_direction != "x" or not n
            or x.ndim != 1 or x.shape != y1.shape or x.shape != y2.shape
            or any(np.ma.isMA(a) for a in (x, y1, y2))):
        return None
    vertices = np.empty((2 * n + 3, 2))
    vertices[0] = x[0], y2[0]
    vertices[1: n + 1, 0], vertices[1: n + 1, 1] = x, y1
    vertices[n + 1] = x[-1], y2[-1]
    vertices[n + 2: 2 * n + 2, 0], vertices[n + 2: 2 * n + 2, 1] = x[::-1], y2[::-1]
    vertices[-1] = vertices[0]
    return _new_path(vertices, _closed_codes(2 * n + 3), 1, _simplify())


def _draw_fill(renderer: Any, fill: Any, x: np.ndarray, y1: np.ndarray,
               y2: np.ndarray) -> None:
    finite = np.isfinite(x).all() and np.isfinite(y1).all() and np.isfinite(y2).all()
    if finite and _planned(renderer, fill, _collection_plan) is not None:
        path = _fill_path(fill, x, y1, y2)
        if path is not None:
            _draw_paths(renderer, fill, [path], fill.get_offsets())
            return
    if finite:
        # nothing for ``set_data`` to mask: its polygons straight from the arrays
        fill.set_verts(fill._make_verts(x, y1, y2, None))
    else:
        fill.set_data(x, y1, y2)
    _draw_paths(renderer, fill, fill.get_paths(), fill.get_offsets())


def _draw_arrow(renderer: Any, ax: Any, patch: FancyArrowPatch, xy: tuple[float, float],
                xytext: tuple[float, float]) -> None:
    # Annotation.update_positions: the arrow from the (empty) text's extent, a point at
    # the text's position (whatever its relative position), to the annotated point,
    # both in pixels
    begin = ax.transData.transform((float(xytext[0]), float(xytext[1])))
    end = ax.transData.transform((float(xy[0]), float(xy[1])))
    patch.set_positions(begin, end)
    patch.set_patchA(None)  # type: ignore[arg-type]
    patch.draw(renderer)


class _TextPlan:
    """What ``Text.draw`` sets up for a text's style (see :func:`_text_plan`)."""

    __slots__ = ("angle", "fkey", "flags", "gc", "glyphs", "layouts", "plain", "prop",
                 "transform", "turn")

    angle: float              # the text's rotation (degrees)
    fkey: tuple[Any, ...]     # its font as a key (envelope.glyphs)
    flags: Any                # the hinting flags of the rc settings
    gc: Any                   # its graphics context, as Text.draw sets it up
    glyphs: bool              # its lines drawn from cached glyphs straight
    layouts: dict[str, Any]   # string -> (extent, lines), while the style stays
    plain: bool               # no box, path effects or TeX
    prop: Any                 # its font properties
    transform: Any            # its transform
    turn: float               # its rotation in [0, 360)


#: The layouts kept per text (string -> extent and lines), at most this many strings.
_TEXT_STRINGS = 512


def _text_plan(renderer: Any, text: Any) -> _TextPlan:
    """The graphics context, font, angle and transform matrix of ``text``'s style, and
    its layouts per string (kept with the text while its style and the resolution
    stay the same: what :func:`envelope.glyphs.kept_layout` keys them by)."""
    plan = _TextPlan()
    plan.plain = not (text._bbox_patch or text.get_path_effects() or text.get_usetex())
    gc = renderer.new_gc()
    gc.set_foreground(mcolors.to_rgba(text.get_color()), isRGBA=True)
    gc.set_alpha(text.get_alpha())
    gc.set_url(text._url)
    gc.set_antialiased(text._antialiased)
    gc.set_snap(text.get_snap())
    text._set_gc_clip(gc)
    plan.gc = gc
    plan.angle = text.get_rotation()
    plan.prop = text._fontproperties
    plan.transform = text.get_transform()
    plan.turn = plan.angle % 360
    plan.fkey = _font_key(plan.prop)
    plan.flags = _hinting()
    # the glyph lines drawn straight where CachedTextRenderer.draw_text would
    plan.glyphs = (type(renderer) is CachedTextRenderer and _GLYPH_API
                   and plan.turn in (0, 90) and bool(gc.get_antialiased())
                   and text.get_fontfeatures() is None and text.get_language() is None)
    style = (type(renderer), plan.fkey, text._horizontalalignment,
             text._verticalalignment, text._multialignment, plan.angle,
             text.get_rotation_mode(), text._linespacing, text.get_usetex(),
             text._parse_math, text.get_wrap(), renderer.dpi,
             text.get_figure(root=True).dpi, plan.flags)
    kept = text.__dict__.get("_envelope_layouts")
    if kept is None or kept[0] != style:
        kept = text._envelope_layouts = (style, {})
    plan.layouts = kept[1]
    return plan


def _lines_of(renderer: Any, text: Any, plan: _TextPlan, s: str) -> Any:
    """(extent at the origin, ((line, x, y), ...), the extent's corners as floats) of
    ``text`` showing ``s`` (its text, set), kept per string; None where a line is math
    (``Text.draw`` draws)."""
    layouts = plan.layouts
    hit = layouts.get(s, False)
    if hit is not False:
        return hit
    lines = [text._preprocess_math(line) for line in s.split("\n")]
    if any(math for _, math in lines):
        hit = None
    else:
        bbox, info, _ = kept_layout(text, renderer)
        (x0, y0), (x1, y1) = bbox.get_points().tolist()
        hit = (bbox, tuple((clean, x, y) for (clean, _), (_, _, (x, y))
                           in zip(lines, info, strict=True)), (x0, y0, x1, y1))
    if len(layouts) >= _TEXT_STRINGS:
        layouts.clear()
    layouts[s] = hit
    return hit


def _draw_lines_of(renderer: Any, text: Any, posx: float, posy: float,
                   plan: _TextPlan | None = None) -> Bbox | None:
    """``Text.draw`` of ``text`` at (posx, posy) pixels (its layout kept); its extent
    there, as ``Text.get_window_extent`` gives it (None where nothing is drawn)."""
    if not (isfinite(posx) and isfinite(posy)):
        return None
    if plan is None:
        plan = _planned(renderer, text, _text_plan)
    layout = _lines_of(renderer, text, plan, text.get_text()) if plan.plain else None
    if layout is None:
        text.draw(renderer)  # a box, path effects, TeX or math: as matplotlib draws it
        return text.get_window_extent(renderer)
    _draw_layout(renderer, text, plan, layout[1], posx, posy)
    return layout[0].translated(posx, posy)


def _draw_layout(renderer: Any, text: Any, plan: _TextPlan, lines: Any, posx: float,
                 posy: float) -> None:
    """The ``draw_text`` calls of ``Text.draw`` for these lines (line, x, y) of
    ``text`` at (posx, posy) pixels."""
    gc, canvash = plan.gc, renderer.get_canvas_width_height()[1]
    mtext = text if len(lines) == 1 else None
    if plan.glyphs:
        draw_line = renderer.draw_glyph_line
        for clean, x, y in lines:
            draw_line(gc, x + posx, canvash - (y + posy), clean, plan.prop, plan.angle,
                      plan.turn, plan.fkey, plan.flags, mtext)
    else:
        for clean, x, y in lines:
            renderer.draw_text(gc, x + posx, canvash - (y + posy), clean, plan.prop,
                               plan.angle, ismath=False, mtext=mtext)


def draw_string(renderer: Any, text: Any, x: float, y: float, s: str
                ) -> tuple[float, float, float, float] | None:
    """``Text.draw`` of ``text`` showing ``s`` at (x, y) in its transform, which stays
    the same for the rest of the drawing (a tick number: its matrix is kept); its
    extent (x0, y0, x1, y1 in pixels: ``Text.get_window_extent``'s corners), or None
    where nothing is drawn.  The text is set to ``s`` and (x, y) only where its layout
    is new or matplotlib draws it (a box, path effects, TeX or math)."""
    if not s or not text.get_visible():
        return None
    plan = _prepared(renderer, text, _text_plan)
    posx, posy = _apply(plan.transform, _affine(renderer, plan.transform, "matrix")[0],
                        x, y)
    if not (isfinite(posx) and isfinite(posy)):
        return None
    layout = plan.layouts.get(s, False) if plan.plain else None
    if layout is False:
        text.set_text(s)
        layout = _lines_of(renderer, text, plan, s)
    if layout is None:
        text.set_text(s)
        text.set_position((x, y))
        text.draw(renderer)
        box = text.get_window_extent(renderer)
        return box.x0, box.y0, box.x1, box.y1
    _draw_layout(renderer, text, plan, layout[1], posx, posy)
    # Bbox.translated: each corner moved
    x0, y0, x1, y1 = layout[2]
    return x0 + posx, y0 + posy, x1 + posx, y1 + posy


def draw_text(renderer: Any, text: Any, fixed: bool = False) -> Bbox | None:
    """``Text.draw`` of ``text`` as it stands (position, string, style): the same
    ``draw_text`` calls, its layout kept; its extent (pixels), or None where nothing is
    drawn.  A text with a box, path effects, TeX or math is drawn by matplotlib.
    ``fixed``: the text's transform stays the same for the rest of the drawing (its
    matrix is kept with the text's style)."""
    if not text.get_visible() or not text.get_text():
        return None
    plan = _prepared(renderer, text, _text_plan)
    x, y = float(text._x), float(text._y)
    transform = text.get_transform()
    if fixed:
        posx, posy = _apply(transform, _affine(renderer, transform, "matrix")[0], x, y)
    else:
        posx, posy = _apply(transform, None, x, y)
    return _draw_lines_of(renderer, text, posx, posy, plan)


def _draw_text(renderer: Any, text: Any, x: float, y: float, s: str) -> None:
    if not s:
        return
    text.set_text(s)
    plan = _planned(renderer, text, _text_plan)
    transform = plan.transform
    posx, posy = _apply(transform, _affine(renderer, transform, "matrix")[0], x, y)
    _draw_lines_of(renderer, text, posx, posy, plan)


def _draw_label(renderer: Any, ax: Any, text: Any, xy: tuple[float, float],
                offset: tuple[float, float], s: str) -> None:
    if not s:
        return
    text.set_text(s)
    (matrix,) = _affine(renderer, ax.transData, "matrix")
    scale = ax.get_figure(root=True).dpi / 72
    ax_, ay_ = _apply(ax.transData, matrix, float(xy[0]), float(xy[1]))
    ox, oy = float(offset[0]), float(offset[1])
    if matrix is None or not _EXACT_AFFINE:
        posx, posy = Affine2D().scale(scale).translate(ax_, ay_).transform((ox, oy))
    else:
        # Affine2D().scale(scale).translate(*anchor).transform(offset): the same floats
        # (the matrix's zeros scaled, the translation added to them)
        posx = (scale * ox + 0.0 * oy) + (0.0 + ax_)
        posy = (0.0 * ox + scale * oy) + (0.0 + ay_)
    _draw_lines_of(renderer, text, float(posx), float(posy))


#: The display lists of each axes drawn the fast way.
_PANELS: WeakKeyDictionary[Any, Panel] = WeakKeyDictionary()


def install(ax: Any) -> Panel:
    """Draw ``ax``'s contents from display lists (set up once per kept axes)."""
    panel = _PANELS[ax] = Panel(ax)
    return panel


def panel_of(ax: Any) -> Panel | None:
    """The display lists of ``ax``, or None where it keeps matplotlib's artists."""
    return _PANELS.get(ax)
