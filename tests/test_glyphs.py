"""The figure's raster text and PNG file: the cached glyph layout gives matplotlib's own
glyph positions and text extents (every pair of characters it lays out itself, at the
figure's sizes), the drawn figure matches matplotlib's own drawing, and the PNG file
decodes (Pillow, an independent PNG reader) to the canvas's exact pixels."""

from __future__ import annotations

import io
import itertools
import os
from pathlib import Path

import matplotlib as mpl
import numpy as np
import pytest
from matplotlib.backends.backend_agg import FigureCanvasAgg, RendererAgg, get_hinting_flag
from matplotlib.figure import Figure
from matplotlib.font_manager import FontProperties, fontManager, get_font
from matplotlib.text import Text
from PIL import Image

import envelope
from envelope import drawlist, glyphs, plots, raster, store

ROOT = Path(__file__).resolve().parents[1]
OFFICE = next((ROOT / "cases").glob("office*.toml"))
MEZZANINE = next((ROOT / "cases").glob("mezzanine*.toml"))

needs_glyph_api = pytest.mark.skipif(not glyphs._GLYPH_API,
                                     reason="matplotlib without the glyph API draws its own")


def _clear_caches() -> None:
    for cache in (glyphs._EXTENTS, glyphs._LAYOUTS, glyphs._GLYPHS, glyphs._LINES,
                  glyphs._CHARS, glyphs._METRICS, glyphs._KERNING, glyphs._HEIGHTS,
                  glyphs._TEXT_LAYOUTS):
        cache.clear()


def _pair_lines(chars: str, width: int = 240) -> list[str]:
    """Lines that hold every ordered pair of ``chars`` (each line starts with the last
    character of the one before, so no pair is lost at a break)."""
    walk = "".join(a + b for a, b in itertools.product(chars, repeat=2))
    return [walk[max(i - 1, 0): i + width] for i in range(0, len(walk), width)]


@needs_glyph_api
@pytest.mark.parametrize(("size", "weight"), [(7, "normal"), (6.5, "normal"),
                                              (10.5, "bold")])
def test_layout_and_extents_match_matplotlib_for_every_pair(size: float, weight: str
                                                            ) -> None:
    """Reference: matplotlib's own shaper (``FT2Font._layout``) and measurement
    (``RendererAgg.get_text_width_height_descent``, from ``FT2Font.set_text``)."""
    _clear_caches()
    prop = FontProperties(size=size, weight=weight)
    ours = glyphs.CachedTextRenderer(100, 100, plots.DPI)
    theirs = RendererAgg(100, 100, plots.DPI)
    font = get_font(fontManager._find_fonts_by_props(prop))
    assert os.path.basename(font.fname) in glyphs._SIMPLE_FONTS
    flags = get_hinting_flag()
    chars = "".join(sorted(glyphs._SIMPLE))
    # the ligatures are left to the shaper; pairs of them are checked whole below
    lines = [ln for line in _pair_lines(chars) for ln in line.split("f")]
    lines += ["office", "deflection", "buffer", "x", " ", "−12.5 at face", "…"]
    for s in lines:
        assert ours.get_text_width_height_descent(s, prop, False) == \
            theirs.get_text_width_height_descent(s, prop, False), s
        font.clear()
        font.set_size(size, plots.DPI)
        reference = [(it.glyph_index, round(it.x * 64)) for it in font._layout(s, flags=flags)]
        layout = ours._layout(s, prop, glyphs._font_key(prop), flags)
        assert layout is not None
        assert [(g, x) for _, g, x in layout] == reference, s


@needs_glyph_api
def test_strings_outside_the_simple_set_take_matplotlib_layout() -> None:
    _clear_caches()
    renderer = glyphs.CachedTextRenderer(100, 100, plots.DPI)
    prop = FontProperties(size=7)
    font = get_font(fontManager._find_fonts_by_props(prop))
    for s in ("office", "naïve ünïcode", "fl"):
        assert not renderer._simple(font, s)
        assert renderer._simple_layout(s, prop, glyphs._font_key(prop),
                                       get_hinting_flag()) is None
        assert renderer.get_text_width_height_descent(s, prop, False) == \
            RendererAgg(100, 100, plots.DPI).get_text_width_height_descent(s, prop, False)


def _office_columns() -> dict:
    return store.result_columns(envelope.tables(envelope.analyse(envelope.load_case(
        str(OFFICE)))))


def _pixels(cols: dict, canvas: type) -> np.ndarray:
    with mpl.rc_context(plots.STYLE):
        fig = plots._build(cols, None)
        fig.set_dpi(plots.DPI)
        canvas(fig).draw()
        return np.asarray(fig.canvas.buffer_rgba()).astype(int)


@needs_glyph_api
def test_figure_drawn_from_cached_glyphs_matches_matplotlib(monkeypatch: pytest.MonkeyPatch
                                                           ) -> None:
    """At unrounded glyph positions the level text is matplotlib's, pixel for pixel, but
    where two glyphs' edges share a pixel (taken as the darker of the two instead of
    blended twice), and the upright y labels (rendered level and turned, where
    matplotlib renders them turned) differ by a few grey levels at their edges; at
    quarter-pixel positions only faint edge pixels change."""
    cols = _office_columns()
    reference = _pixels(cols, FigureCanvasAgg)
    _clear_caches()
    monkeypatch.setattr(glyphs, "_STEP", 1)
    exact = np.abs(_pixels(cols, glyphs.CachedTextCanvas) - reference).max(axis=2)
    assert np.count_nonzero(exact > 16) < 20 and exact.max() < 128
    assert np.count_nonzero(exact) < 1000
    monkeypatch.undo()
    _clear_caches()
    rounded = np.abs(_pixels(cols, glyphs.CachedTextCanvas) - reference).max(axis=2)
    ink = np.count_nonzero(reference[..., :3].min(axis=2) < 200)
    assert np.count_nonzero(rounded > 64) < 0.002 * ink
    assert rounded.mean() < 1.0


_DEFLATES = {"zlib": raster._zlib, "isal": raster._isal_deflate if raster._isal else None}


@pytest.mark.parametrize("deflate", sorted(_DEFLATES))
@pytest.mark.parametrize("alpha", [255, 128])
def test_png_file_decodes_to_the_canvas_pixels(alpha: int, deflate: str) -> None:
    """Reference: Pillow's PNG decoder (an independent implementation of ISO/IEC 15948),
    for the file deflated by zlib and by ISA-L (the optional ``isal`` package, in the
    test extra)."""
    if _DEFLATES[deflate] is None:
        pytest.skip("isal is not installed (pip install envelope[fast])")
    rng = np.random.default_rng(5)
    rgba = rng.integers(0, 256, size=(37, 53, 4), dtype=np.uint8)
    rgba[..., 3] = alpha
    rgba[10:20] = 255  # a run of paper, as most of a figure is
    rgba[10:20, :, 3] = alpha
    image = Image.open(io.BytesIO(raster.png_bytes(rgba, 110, _DEFLATES[deflate])))
    assert image.mode == "RGBA"
    assert np.array_equal(np.asarray(image.convert("RGBA")), rgba)
    assert round(image.info["dpi"][0]) == 110


def test_png_of_a_figure_is_its_canvas(tmp_path: Path) -> None:
    fig = Figure(figsize=(2, 1), dpi=50, facecolor="white")
    glyphs.CachedTextCanvas(fig)
    fig.text(0.1, 0.5, "span 1", parse_math=False)
    data = raster.figure_png(fig)
    pixels = np.asarray(Image.open(io.BytesIO(data)).convert("RGBA"))
    assert pixels.shape == (50, 100, 4)
    assert np.array_equal(pixels, np.asarray(fig.canvas.buffer_rgba()))
    assert pixels[..., :3].min() < 128  # the text is drawn


def _labels(fig: Figure) -> list[tuple[str, tuple[float, float], tuple[float, float]]]:
    """Every value label of ``fig``: text, anchor (data) and offset (points), whether an
    annotation or an item of a display list."""
    found = [(t.get_text(), tuple(np.round(t.xy, 9)), tuple(np.round(t.xyann, 6)))
             for ax in fig.axes for t in ax.texts if t.get_gid() == "value-label"]
    for ax in fig.axes:
        panel = drawlist.panel_of(ax)
        found += [(s, tuple(np.round(xy, 9)), tuple(np.round(offset, 6)))
                  for s, xy, offset, style in (panel.labels() if panel else [])
                  if style.get_gid() == "value-label"]
    return sorted(found)


def _draw(cols: dict, path: Path) -> tuple[bytes, list, int]:
    """The PNG file, the value labels and the artists of the kept figure, once drawn
    (the items of its display lists counted as artists, their lists not)."""
    data = plots.draw_results(cols, path).read_bytes()
    (fig, axes), = plots._KEPT.values()
    artists = sum(len([c for c in a.get_children() if not isinstance(c, drawlist.DrawList)])
                  + (drawlist.panel_of(a).count() if drawlist.panel_of(a) else 0)
                  for a in axes) + len(fig.texts) + len(fig.legends)
    return data, _labels(fig), artists


def test_a_reused_figure_places_the_same_labels_and_pixels_as_a_fresh_one(
        tmp_path: Path) -> None:
    """Two beams of one layout drawn in sequence on the kept figure give what each gives
    on a fresh figure: the same value labels at the same places, the same PNG file, the
    same number of artists (nothing of the beam before is left)."""
    office = _office_columns()
    mezzanine = store.result_columns(envelope.tables(envelope.analyse(envelope.load_case(
        str(MEZZANINE)))))
    fresh = {}
    for name, cols in (("office", office), ("mezzanine", mezzanine)):
        plots._KEPT.clear()
        fresh[name] = _draw(cols, tmp_path / f"{name}-fresh.png")
    assert fresh["office"][1] != fresh["mezzanine"][1]
    # now in sequence on the kept mezzanine figure: office twice (its key kept), then
    # mezzanine and office again
    kept = next(iter(plots._KEPT.values()))[0]
    for name, cols in (("office", office), ("office", office), ("mezzanine", mezzanine),
                       ("office", office)):
        assert _draw(cols, tmp_path / f"{name}.png") == fresh[name], name
        assert next(iter(plots._KEPT.values()))[0] is kept  # one figure, reused


def test_text_caches_stay_bounded(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(glyphs, "TEXT_CACHE_ENTRIES", 50)
    _clear_caches()
    renderer = glyphs.CachedTextRenderer(100, 100, plots.DPI)
    prop = FontProperties(size=7)
    for i in range(400):
        renderer.get_text_width_height_descent(f"{i * 1.7:.1f}", prop, False)
    assert 0 < len(glyphs._EXTENTS) <= 50


def _layout_values(layout: tuple) -> tuple:
    bbox, lines, ((x, y), (w, h)) = layout
    return (tuple(np.round(bbox.bounds, 9)),
            tuple((s, tuple(np.round(wad, 9)), tuple(np.round(xy, 9))) for s, wad, xy in lines),
            tuple(np.round((x, y, w, h), 9)))


def test_kept_text_layout_is_matplotlibs_for_every_style_and_follows_changes() -> None:
    """The layout a kept text reuses is the one matplotlib computes for the same string
    and style (alignments, rotation, line spacing, size, weight, one or more lines), and
    a changed string or style is laid out afresh."""
    fig = Figure(dpi=plots.DPI)
    canvas = glyphs.CachedTextCanvas(fig)
    renderer = canvas.get_renderer()
    glyphs._TEXT_LAYOUTS.clear()
    styles = [dict(ha="left", va="bottom"), dict(ha="right", va="center_baseline"),
              dict(ha="center", va="top", rotation=90), dict(ha="center", va="center",
                                                             linespacing=1.05),
              dict(ha="left", va="baseline", fontsize=10.5, weight="bold")]
    strings = ["-1250", "span 3", "+12.4\nD + L, loaded 1 3", "Moment [kN*m]\nsagging up"]
    kept = glyphs.KeptText(0.0, 0.0, "", parse_math=False)
    kept.set_figure(fig)
    for style in styles:
        full = {"ha": "left", "va": "baseline", "rotation": 0, "linespacing": 1.2,
                "fontsize": 7, "weight": "normal", **style}
        kept.update(full)
        plain = Text(0.0, 0.0, "", parse_math=False, **full)
        plain.set_figure(fig)
        for s in strings:
            kept.set_text(s)
            plain.set_text(s)
            for _ in range(2):  # laid out, then reused
                assert _layout_values(kept._get_layout(renderer)) == \
                    _layout_values(Text._get_layout(plain, renderer)), (style, s)
    assert len(glyphs._TEXT_LAYOUTS) == len(styles) * len(strings)
