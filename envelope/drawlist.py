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
from numbers import Real
from typing import Any
from weakref import WeakKeyDictionary

import matplotlib.colors as mcolors
import numpy as np
from matplotlib import cbook
from matplotlib.artist import Artist
from matplotlib.collections import FillBetweenPolyCollection, LineCollection
from matplotlib.lines import Line2D
from matplotlib.patches import FancyArrowPatch, Polygon, Rectangle
from matplotlib.path import Path
from matplotlib.transforms import Affine2D, Bbox

from envelope.glyphs import KeptText, kept_layout

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
    """The style as a key: its items in name order, a value that cannot be hashed by
    its repr."""
    key = tuple(sorted(style.items()))
    try:
        hash(key)
    except TypeError:
        return tuple(sorted((k, repr(v) if _unhashable(v) else v) for k, v in style.items()))
    return key


def _unhashable(value: Any) -> bool:
    try:
        hash(value)
    except TypeError:
        return True
    return False


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


def _draw_artist(renderer: Any, artist: Artist) -> None:
    artist.draw(renderer)


#: Lines longer than this are drawn by their template (``Line2D`` then draws only the
#: part in view of a long sorted line: its "subslice").
_SHORT: int = Line2D._subslice_optim_min_size  # type: ignore[attr-defined]


def draw_line(renderer: Any, line: Any, x: np.ndarray, y: np.ndarray) -> None:
    """``Line2D.draw`` of ``line`` with the data (x, y): the same path, styles and calls
    (a solid or dashed line, then its markers), without the artist's bookkeeping."""
    if (x.size > _SHORT or line._drawstyle != "default" or line.get_path_effects()
            or line.get_sketch_params() is not None or line._gapcolor is not None
            or line.get_markevery() is not None):
        line.set_data(x, y)
        line.draw(renderer)
        return
    path = Path(np.column_stack((x, y)),
                _interpolation_steps=line.get_path()._interpolation_steps)
    affine = line.get_transform().get_affine().frozen()
    if line._lineStyles[line._linestyle] != "_draw_nothing" and x.size:
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
        renderer.draw_path(gc, path, affine)
        gc.restore()
    marker = line._marker
    if marker and line._markersize > 0 and x.size:
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
        renderer.draw_markers(gc, marker.get_path(), marker_trans, path, affine, fc_rgba)
        alt = marker.get_alt_path()
        if alt:
            renderer.draw_markers(gc, alt, marker.get_alt_transform().scale(w), path,
                                  affine, fcalt_rgba)
        gc.restore()


def _draw_collection(renderer: Any, drawn: Any, paths: Any, offsets: Any) -> None:
    if isinstance(drawn, LineCollection):
        drawn.set_segments(paths)
    else:
        drawn.set_verts(paths)
    drawn.set_offsets(offsets)
    drawn.draw(renderer)


def _draw_polygon(renderer: Any, patch: Any, xy: np.ndarray) -> None:
    """``Patch.draw`` of the polygon ``xy`` in ``patch``'s style (a plain patch: no
    hatch, sketch, path effects or gap colour; those are drawn by the patch)."""
    patch.set_xy(xy)
    if (patch._hatch or patch.get_sketch_params() is not None or patch.get_path_effects()
            or patch._gapcolor is not None or not patch.get_visible()):
        patch.draw(renderer)
        return
    # a polygon's own transform is the identity: its path drawn through the axes'
    affine = patch.get_transform().get_affine()
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
    renderer.draw_path(gc, patch.get_path(), affine,
                       patch._facecolor if patch._facecolor[3] else None)
    gc.restore()


def _draw_rectangle(renderer: Any, patch: Rectangle, xy: tuple[float, float],
                    width: float, height: float) -> None:
    patch.set_xy(xy)
    patch.set_width(width)
    patch.set_height(height)
    patch.draw(renderer)


def _draw_fill(renderer: Any, fill: Any, x: np.ndarray, y1: np.ndarray,
               y2: np.ndarray) -> None:
    if np.isfinite(x).all() and np.isfinite(y1).all() and np.isfinite(y2).all():
        # nothing for ``set_data`` to mask: its polygons straight from the arrays
        fill.set_verts(fill._make_verts(x, y1, y2, None))
    else:
        fill.set_data(x, y1, y2)
    fill.draw(renderer)


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


def _draw_lines_of(renderer: Any, text: Any, posx: float, posy: float) -> Bbox | None:
    """``Text.draw`` of ``text`` at (posx, posy) pixels (its layout kept); its extent
    there, as ``Text.get_window_extent`` gives it (None where nothing is drawn)."""
    if not (np.isfinite(posx) and np.isfinite(posy)):
        return None
    lines = [text._preprocess_math(line) for line in text.get_text().split("\n")]
    if (text._bbox_patch or text.get_path_effects() or text.get_usetex()
            or any(math for _, math in lines)):
        text.draw(renderer)  # a box, path effects, TeX or math: as matplotlib draws it
        return text.get_window_extent(renderer)
    bbox, info, _ = kept_layout(text, renderer)
    canvash = renderer.get_canvas_width_height()[1]
    gc = renderer.new_gc()
    gc.set_foreground(mcolors.to_rgba(text.get_color()), isRGBA=True)
    gc.set_alpha(text.get_alpha())
    gc.set_url(text._url)
    gc.set_antialiased(text._antialiased)
    gc.set_snap(text.get_snap())
    text._set_gc_clip(gc)
    angle = text.get_rotation()
    prop = text._fontproperties
    mtext = text if len(info) == 1 else None
    for (clean, _), (_, _, (x, y)) in zip(lines, info, strict=True):
        renderer.draw_text(gc, x + posx, canvash - (y + posy), clean, prop, angle,
                           ismath=False, mtext=mtext)
    gc.restore()
    return bbox.translated(posx, posy)


def draw_text(renderer: Any, text: Any) -> Bbox | None:
    """``Text.draw`` of ``text`` as it stands (position, string, style): the same
    ``draw_text`` calls, its layout kept; its extent (pixels), or None where nothing is
    drawn.  A text with a box, path effects, TeX or math is drawn by matplotlib."""
    if not text.get_visible() or not text.get_text():
        return None
    posx, posy = text.get_transform().transform((float(text._x), float(text._y)))
    return _draw_lines_of(renderer, text, posx, posy)


def _draw_text(renderer: Any, text: Any, x: float, y: float, s: str) -> None:
    if not s:
        return
    text.set_text(s)
    posx, posy = text.get_transform().transform((x, y))
    _draw_lines_of(renderer, text, posx, posy)


def _draw_label(renderer: Any, ax: Any, text: Any, xy: tuple[float, float],
                offset: tuple[float, float], s: str) -> None:
    if not s:
        return
    text.set_text(s)
    anchor = ax.transData.transform((float(xy[0]), float(xy[1])))
    dpi = ax.get_figure(root=True).dpi
    posx, posy = Affine2D().scale(dpi / 72).translate(*anchor).transform(offset)
    _draw_lines_of(renderer, text, posx, posy)


#: The display lists of each axes drawn the fast way.
_PANELS: WeakKeyDictionary[Any, Panel] = WeakKeyDictionary()


def install(ax: Any) -> Panel:
    """Draw ``ax``'s contents from display lists (set up once per kept axes)."""
    panel = _PANELS[ax] = Panel(ax)
    return panel


def panel_of(ax: Any) -> Panel | None:
    """The display lists of ``ax``, or None where it keeps matplotlib's artists."""
    return _PANELS.get(ax)
