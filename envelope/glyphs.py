"""Text on the Agg canvas from cached glyphs: the same letters as matplotlib draws, at a
fraction of the cost when many figures are drawn in one process.

matplotlib (3.11) lays out every string with a text shaper and renders every glyph with
FreeType each time a text is drawn or measured: about 0.5 ms a string and 0.1 ms a
glyph, two thirds of the time of the envelope figure.  A batch worker draws the same
tick numbers, key, caution and label words figure after figure, so here

* a glyph is rendered once per font, size, resolution and position within a pixel
  (positions kept to :data:`envelope.config.TEXT_SUBPIXEL_STEPS` steps of a pixel),
  and a drawn line is composed from its glyphs and blended onto the canvas at once;
* a line's extent (width, height, descent) and its glyph positions are kept per string.

A new string is laid out from the glyphs' advances and pair kerning, which is what the
shaper does for the fonts and characters of :data:`_SIMPLE` (checked pair by pair
against matplotlib's own layout and extents in tests/test_glyphs.py); any other string
(another font, a character outside that set, the f-ligatures ff, fi, fl) takes
matplotlib's own layout, kept per string.  Level and upright (y label) lines are drawn
so; text at another angle, math text or text with font features as matplotlib draws it.
Only the raster canvas changes: SVG and PDF keep their text as text.  The figure's own
texts (:class:`KeptText`, :class:`KeptAnnotation`) also keep their layout per string
and style on this canvas.
"""

from __future__ import annotations

import itertools
import os
from typing import Any

import matplotlib as mpl
import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg, RendererAgg, get_hinting_flag
from matplotlib.font_manager import fontManager, get_font
from matplotlib.patches import Rectangle
from matplotlib.text import Annotation, Text

from envelope.config import TEXT_CACHE_ENTRIES, TEXT_SUBPIXEL_STEPS

try:  # the glyph API of matplotlib 3.11; older releases draw text their own way
    from matplotlib.ft2font import FT2Font, Kerning, RenderMode

    _GLYPH_API = all(hasattr(FT2Font, name) for name in
                     ("_layout", "_render_glyph", "_set_transform", "load_glyph"))
except ImportError:  # pragma: no cover - matplotlib before 3.10
    _GLYPH_API = False

#: Font files whose layout is advances plus pair kerning for the characters below
#: (matplotlib's bundled DejaVu Sans, as the figure uses it).
_SIMPLE_FONTS = frozenset({"DejaVuSans.ttf", "DejaVuSans-Bold.ttf"})
#: Characters laid out here: printable ASCII and the few signs the figure draws.
_SIMPLE = frozenset(chr(c) for c in range(32, 127)) | frozenset("−…²³°µ×·±")
#: Pairs the fonts above join into one glyph (ligatures): left to the shaper.
_LIGATURES = ("ff", "fi", "fl")

_Key = tuple[Any, ...]
#: (string, font, dpi, hinting) -> (width, height, descent) in pixels.
_EXTENTS: dict[_Key, tuple[float, float, float]] = {}
#: (string, font, dpi, hinting) -> ((font file's FT2Font, glyph index, x in 1/64 px), ...)
_LAYOUTS: dict[_Key, tuple[tuple[Any, int, int], ...] | None] = {}
#: (font file, size, dpi, hinting, glyph index, x step, y step) -> (alpha, left, top).
_GLYPHS: dict[_Key, tuple[np.ndarray, int, int]] = {}
#: (string, font, dpi, hinting, x step, y step) -> (alpha, left, top) of the whole line.
_LINES: dict[_Key, tuple[np.ndarray, int, int] | None] = {}
#: (font file, character) -> glyph index.
_CHARS: dict[_Key, int] = {}
#: (font file, size, dpi, hinting, glyph) -> (advance, bottom, top) in 1/64 px.
_METRICS: dict[_Key, tuple[int, int, int]] = {}
#: (font file, size, dpi, hinting, left glyph, right glyph) -> kerning in 1/64 px.
_KERNING: dict[_Key, int] = {}
#: (font, dpi) -> (ascent, descent, line gap) of the font in pixels.
_HEIGHTS: dict[_Key, tuple[Any, Any, Any]] = {}
#: font properties -> FT2Font (with its fallbacks), as matplotlib chooses it.
_FONTS: dict[_Key, Any] = {}

_STEP = 64 // TEXT_SUBPIXEL_STEPS  # one position step in FreeType's 1/64 pixel
_IDENTITY = np.array([[0x10000, 0], [0, 0x10000]])  # FreeType's 16.16 unit matrix


#: The FreeType load flags of each ``text.hinting`` setting, as matplotlib maps them.
_HINTING: dict[Any, Any] = {}


def _hinting() -> Any:
    """``get_hinting_flag()`` (the load flags of the present ``text.hinting``) without
    building matplotlib's table of them at each call (a few thousand calls a figure)."""
    value = dict.__getitem__(mpl.rcParams, "text.hinting")
    flag = _HINTING.get(value)
    if flag is None:
        flag = _HINTING[value] = get_hinting_flag()
    return flag


def _font_key(prop: Any) -> _Key:
    """The font properties as a key (what ``FontProperties.__hash__`` hashes)."""
    return tuple(prop.__dict__.values())


def _bounded(cache: dict[_Key, Any]) -> dict[_Key, Any]:
    """``cache``, emptied first when full (a long-lived worker keeps a bounded memory)."""
    if len(cache) >= TEXT_CACHE_ENTRIES:
        cache.clear()
    return cache


_SERIALS = itertools.count()


class CachedTextRenderer(RendererAgg):
    """The Agg renderer with glyphs, layouts and extents kept across figures.

    ``pass_token`` is a new object at each :meth:`clear` (each drawing of the figure on
    the canvas): what the figure's fast drawing works out once per drawing (a style's
    graphics context, a panel's transform) is kept with it (:mod:`envelope.drawlist`)."""

    pass_token: object = None

    def __init__(self, width: float, height: float, dpi: float) -> None:
        super().__init__(width, height, dpi)
        self.serial = next(_SERIALS)  # (a renderer's id may be a later renderer's)

    def clear(self) -> None:
        """Clear the canvas: a new drawing, with a new :attr:`pass_token`."""
        super().clear()
        self.pass_token = object()

    def fill(self, value: int) -> None:
        """Set every pixel to ``value`` (its RGBA bytes read as one native uint32): a
        new drawing, as :meth:`clear` starts one."""
        np.asarray(self.buffer_rgba()).view(np.uint32).fill(value)
        self.pass_token = object()

    def _font(self, prop: Any, fkey: _Key, sized: bool = True) -> Any:
        """The FT2Font matplotlib chooses for ``prop``, set to its size when ``sized``."""
        font = _FONTS.get(fkey)
        if font is None:
            font = _bounded(_FONTS).setdefault(
                fkey, get_font(fontManager._find_fonts_by_props(prop)))
        if sized:
            font.clear()
            font.set_size(prop.get_size_in_points(), self.dpi)
        return font

    def _simple(self, font: Any, s: str) -> bool:
        """Whether ``s`` is laid out here (see the module's docstring)."""
        return (os.path.basename(font.fname) in _SIMPLE_FONTS and _SIMPLE.issuperset(s)
                and not any(pair in s for pair in _LIGATURES))

    def _simple_layout(self, s: str, prop: Any, fkey: _Key, flags: Any
                       ) -> tuple[tuple[tuple[Any, int, int], ...], tuple[float, float, float]
                                  ] | None:
        """Glyphs and extents of ``s`` from each glyph's advance and box and the pair
        kerning (as the shaper and ``FT2Font.set_text`` do for these fonts): None for a
        string this cannot lay out."""
        font = self._font(prop, fkey, sized=False)
        if not self._simple(font, s):
            return None
        size, dpi, name = prop.get_size_in_points(), self.dpi, font.fname
        sized = False
        pen, prev, low, high, items = 0, None, 0, 0, []
        for i, c in enumerate(s):
            g = _CHARS.get((name, c))
            if g is None:
                g = _bounded(_CHARS).setdefault((name, c), font.get_char_index(ord(c)))
            if g == 0:
                return None
            if prev is not None:
                kern = _KERNING.get((name, size, dpi, flags, prev, g))
                if kern is None:
                    if not sized:
                        self._font(prop, fkey)
                        sized = True
                    kern = _bounded(_KERNING).setdefault(
                        (name, size, dpi, flags, prev, g),
                        font.get_kerning(prev, g, Kerning.UNFITTED))
                pen += kern
            metrics = _METRICS.get((name, size, dpi, flags, g))
            if metrics is None:
                if not sized:
                    self._font(prop, fkey)
                    sized = True
                glyph = font.load_glyph(g, flags)
                metrics = _bounded(_METRICS).setdefault(
                    (name, size, dpi, flags, g),
                    (glyph.horiAdvance, glyph.bbox[1], glyph.bbox[3]))
            advance, y0, y1 = metrics
            low, high = (y0, y1) if i == 0 else (min(low, y0), max(high, y1))
            items.append((font, g, pen))
            pen += advance
            prev = g
        return tuple(items), (pen / 64.0, (high - low) / 64.0, -low / 64.0)

    def _layout(self, s: str, prop: Any, fkey: _Key, flags: Any
                ) -> tuple[tuple[Any, int, int], ...] | None:
        """Each glyph of ``s``: (font, glyph index, x in 1/64 px); None where a glyph is
        placed off the line (matplotlib then draws the string itself)."""
        key = (s, fkey, self.dpi, flags)
        if key in _LAYOUTS:
            return _LAYOUTS[key]
        simple = self._simple_layout(s, prop, fkey, flags)
        layout: tuple[tuple[Any, int, int], ...] | None
        if simple is not None:
            layout = simple[0]
            _bounded(_EXTENTS)[key] = simple[1]
        else:
            raw = self._font(prop, fkey)._layout(s, flags=flags)
            layout = tuple((it.ft_object, it.glyph_index, round(it.x * 64)) for it in raw)
            if any(it.y != 0 for it in raw):
                layout = None
        _bounded(_LAYOUTS)[key] = layout
        return layout

    def get_text_width_height_descent(self, s: str, prop: Any, ismath: Any
                                      ) -> tuple[float, float, float]:
        """Width, height and descent of ``s`` in pixels, as matplotlib measures them."""
        if ismath or not _GLYPH_API:
            return super().get_text_width_height_descent(s, prop, ismath)
        fkey = _font_key(prop)
        flags = _hinting()
        key = (s, fkey, self.dpi, flags)
        hit = _EXTENTS.get(key)
        if hit is None:
            simple = self._simple_layout(s, prop, fkey, flags)
            if simple is not None:
                _bounded(_LAYOUTS)[key] = simple[0]
                hit = simple[1]
            else:
                hit = super().get_text_width_height_descent(s, prop, ismath)
            _bounded(_EXTENTS)[key] = hit
        return hit

    def _get_font_height_metrics(self, prop: Any) -> tuple[Any, Any, Any]:
        """Ascent, descent and line gap of the font (pixels), as ``Text`` reads them from
        the font's tables, kept per font and resolution."""
        key = (_font_key(prop), self.dpi)
        hit = _HEIGHTS.get(key)
        if hit is None:
            font = self._font(prop, key[0], sized=False)
            hit = (None, None, None)
            for table_name, gap, ascent, descent in (
                    ("OS/2", "sTypoLineGap", "sTypoAscender", "sTypoDescender"),
                    ("hhea", "lineGap", "ascent", "descent")):
                table = font.get_sfnt_table(table_name)
                if table is None:
                    continue
                scale = (prop.get_size_in_points() * self.dpi / 72
                         / font.get_sfnt_table("head")["unitsPerEm"])
                hit = (table[ascent] * scale, -table[descent] * scale, table[gap] * scale)
                break
            _bounded(_HEIGHTS)[key] = hit
        return hit

    def _glyph(self, font: Any, size: float, flags: Any, glyph: int, fx: int, fy: int
               ) -> tuple[np.ndarray, int, int]:
        """The glyph's coverage rendered at (fx, fy)/64 px from a pixel corner."""
        key = (font.fname, size, self.dpi, flags, glyph, fx, fy)
        hit = _GLYPHS.get(key)
        if hit is None:
            font.clear()
            font.set_size(size, self.dpi)
            font._set_transform(_IDENTITY, [fx, fy])
            bitmap = font._render_glyph(glyph, flags, RenderMode.NORMAL)
            hit = (np.array(bitmap.buffer, dtype=np.uint8), bitmap.left, bitmap.top)
            _bounded(_GLYPHS)[key] = hit
        return hit

    def _line(self, s: str, prop: Any, fkey: _Key, flags: Any, fx: int, fy: int
              ) -> tuple[np.ndarray, int, int] | None:
        """The coverage of the whole line with its origin at (fx, fy)/64 px from a pixel
        corner: (alpha, left, top) relative to that pixel; None where matplotlib draws."""
        key = (s, fkey, self.dpi, flags, fx, fy)
        if key in _LINES:
            return _LINES[key]
        layout = self._layout(s, prop, fkey, flags)
        line = None
        if layout is not None:
            size = prop.get_size_in_points()
            placed = []
            for font, glyph, x64 in layout:
                ix, gx = divmod(round((fx + x64) / _STEP) * _STEP, 64)
                alpha, left, top = self._glyph(font, size, flags, glyph, gx, fy)
                if alpha.size:
                    placed.append((alpha, ix + left, top))
            if placed:
                x0 = min(p[1] for p in placed)
                x1 = max(p[1] + p[0].shape[1] for p in placed)
                y1 = max(p[2] for p in placed)
                y0 = min(p[2] - p[0].shape[0] for p in placed)
                image = np.zeros((y1 - y0, x1 - x0), dtype=np.uint8)
                for alpha, left, top in placed:
                    rows, cols = alpha.shape
                    view = image[y1 - top: y1 - top + rows, left - x0: left - x0 + cols]
                    np.maximum(view, alpha, out=view)
                line = (image, x0, y1)
            else:
                line = (np.zeros((0, 0), dtype=np.uint8), 0, 0)
        _bounded(_LINES)[key] = line
        return line

    def draw_text(self, gc: Any, x: float, y: float, s: str, prop: Any, angle: float,
                  ismath: Any = False, mtext: Any = None) -> None:
        """Draw one line of text from cached glyphs (level or upright text, no math, no
        font features); anything else as matplotlib draws it."""
        turn = angle % 360
        if (ismath or turn not in (0, 90) or not _GLYPH_API or not gc.get_antialiased()
                or (mtext is not None and (mtext.get_fontfeatures() is not None
                                           or mtext.get_language() is not None))):
            super().draw_text(gc, x, y, s, prop, angle, ismath, mtext)
            return
        self.draw_glyph_line(gc, x, y, s, prop, angle, turn, _font_key(prop), _hinting(),
                             mtext)

    def draw_glyph_line(self, gc: Any, x: float, y: float, s: str, prop: Any,
                        angle: float, turn: float, fkey: _Key, flags: Any,
                        mtext: Any = None) -> None:
        """:meth:`draw_text` of a line it draws from cached glyphs (level or upright,
        not math, antialiased, no font features: the caller has checked), the font's
        key and the hinting flags given."""
        # the origin in 1/64 px along and across the line (FreeType's y upwards), kept
        # to whole position steps; an upright line is laid out level with the canvas
        # turned a quarter clockwise (along = canvas up, across = canvas left)
        along, across = (x, self.height - y) if turn == 0 else (self.height - y, -x)
        ox, fx = divmod(round(round(64 * along) / _STEP) * _STEP, 64)
        oy, fy = divmod(round(round(64 * across) / _STEP) * _STEP, 64)
        line = self._line(s, prop, fkey, flags, fx, fy)
        if line is None:
            super().draw_text(gc, x, y, s, prop, angle, False, mtext)
            return
        image, left, top = line
        if not image.size:
            return
        if turn == 0:
            # draw_text_image takes the bitmap's left and bottom edges, y downwards
            self._renderer.draw_text_image(image, ox + left,
                                           int(self.height) - (oy + top) + image.shape[0],
                                           0, gc)
        else:  # turned back a quarter anticlockwise onto the canvas
            self._renderer.draw_text_image(np.ascontiguousarray(np.rot90(image)),
                                           -(oy + top), int(self.height) - (ox + left),
                                           0, gc)


#: A figure background's drawing by its key (:func:`_background_key`) -> the one pixel
#: value it gave everywhere (RGBA as a native uint32), or None where it gave several.
_BACKGROUNDS: dict[_Key, int | None] = {}


def _background_key(fig: Any, width: int, height: int) -> _Key | None:
    """All that the drawing of ``fig``'s background patch on a cleared canvas of
    ``width`` x ``height`` pixels depends on, or None for a patch other than a plain
    rectangle in figure coordinates (hatched, clipped, with path effects, a sketch or
    a gap colour), or one whose state is not where this matplotlib is known to keep it
    (its private attributes: drawn as it is)."""
    patch: Any = fig.patch
    try:
        own = vars(patch)
        if (type(patch) is not Rectangle or not patch.get_visible() or patch.get_hatch()
                or patch.get_path_effects() or patch.get_sketch_params() is not None
                or patch.get_clip_path() is not None or patch.get_clip_box() is not None
                or own["_transform"] is not fig.transSubfigure
                or own.get("_gapcolor") is not None):
            return None
        offset, dashes = own["_dash_pattern"]
        # (the line style too: "None" draws no edge with the dash pattern of "-")
        return (width, height, fig.dpi, own["_x0"], own["_y0"], own["_width"],
                own["_height"], patch.get_angle(), patch.rotation_point,
                tuple(patch.get_facecolor()), tuple(patch.get_edgecolor()),
                patch.get_linewidth(), repr(patch.get_linestyle()), offset,
                dashes if dashes is None else tuple(dashes), patch.get_alpha(),
                patch.get_antialiased(), patch.get_snap(), patch.get_capstyle(),
                patch.get_joinstyle(), patch.get_fill())
    except (AttributeError, KeyError, TypeError, ValueError):
        return None


class CachedTextCanvas(FigureCanvasAgg):
    """The Agg canvas drawing its text through :class:`CachedTextRenderer`.

    With :attr:`fill_background` set, a figure whose background (its patch, drawn
    first on the cleared canvas) once gave one pixel value everywhere starts each
    later drawing of the same size and style with every pixel set to that value
    instead of clearing the canvas and drawing the patch (a fifth of the time the
    raster figure's drawing spends in Agg): the same pixels."""

    _lastKey: Any = None  # the (width, height, dpi) of the renderer kept
    fill_background = False

    def draw(self) -> None:
        """Draw the figure (see the class docstring for its background)."""
        if not self.fill_background:
            super().draw()
            return
        renderer = self.renderer = self.get_renderer()
        fig = self.figure
        key = _background_key(fig, int(renderer.width), int(renderer.height))
        if key is None:
            super().draw()
            return
        value = _BACKGROUNDS.get(key, False)
        if value is None:  # drawn, and not one pixel value
            super().draw()
            return
        if value is False:  # drawn, and kept where it is one value
            renderer.clear()
            fig.patch.draw(renderer)
            pixels = np.asarray(renderer.buffer_rgba()).view(np.uint32).ravel()
            first = int(pixels[0]) if pixels.size else 0
            _bounded(_BACKGROUNDS)[key] = first if (pixels == first).all() else None
        else:
            renderer.fill(value)
        patch: Any = fig.patch
        patch._visible = False  # (drawn already: Figure.draw draws it before all else)
        try:
            fig.draw(renderer)
        finally:
            patch._visible = True

    def get_renderer(self) -> CachedTextRenderer:
        """The renderer for the figure's present size and resolution (kept while they
        stay the same, as matplotlib's own canvas does)."""
        w, h = self.get_width_height(physical=True)
        key = w, h, self.figure.dpi
        if self._lastKey != key or not isinstance(getattr(self, "renderer", None),
                                                   CachedTextRenderer):
            self.renderer = CachedTextRenderer(w, h, self.figure.dpi)
            self._lastKey = key
        return self.renderer


#: (string, font, alignment, rotation, line spacing, dpi, ...) -> ``Text._get_layout``.
_TEXT_LAYOUTS: dict[_Key, Any] = {}


def kept_layout(text: Any, renderer: Any) -> Any:
    """``Text._get_layout`` of ``text``, kept per string and style on the raster canvas
    (see :class:`_KeptLayout`); elsewhere matplotlib's, computed."""
    if type(renderer) is not CachedTextRenderer or text.get_wrap():
        return Text._get_layout(text, renderer)  # type: ignore[attr-defined]
    key = (text.get_text(), _font_key(text._fontproperties), text._horizontalalignment,
           text._verticalalignment, text._multialignment, text.get_rotation(),
           text.get_rotation_mode(), text._linespacing, text.get_usetex(),
           text._parse_math, renderer.dpi, text.get_figure(root=True).dpi,
           _hinting())
    hit = _TEXT_LAYOUTS.get(key)
    if hit is None:
        hit = _bounded(_TEXT_LAYOUTS).setdefault(
            key, Text._get_layout(text, renderer))  # type: ignore[attr-defined]
    return hit


class _KeptLayout:
    """A text whose layout (extent, lines and their offsets from its position) is kept
    per string and style on the raster canvas: matplotlib lays a text out again at each
    draw and each measurement (a third of the time of drawing a small text)."""

    def _get_layout(self, renderer: Any) -> Any:
        return kept_layout(self, renderer)


class KeptText(_KeptLayout, Text):
    """:class:`matplotlib.text.Text` with its layout kept (see :class:`_KeptLayout`)."""


class KeptAnnotation(_KeptLayout, Annotation):
    """:class:`matplotlib.text.Annotation` with its layout kept."""
