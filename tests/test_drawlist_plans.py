"""What the display lists keep between items and between drawings (envelope/drawlist.py):
a style's graphics context and layouts kept with its template, a transform's matrix
kept for one drawing.  Each kept thing is checked against matplotlib drawing the same
artist afresh (its own ``draw``), pixel for pixel: a kept text drawn at a new place, a
text restyled between drawings, two styles side by side, a view changed between
drawings, an rc setting changed between drawings; and the positions worked out in
Python floats are matplotlib's transform's, bit for bit."""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path
from typing import Any

import matplotlib as mpl
import numpy as np
import pytest
from matplotlib.figure import Figure
from matplotlib.lines import Line2D
from matplotlib.text import Text

import envelope
from envelope import drawlist, glyphs, plots, store


def _figure(fast: bool) -> tuple[Figure, Any]:
    fig = Figure(figsize=(4.0, 3.0), dpi=plots.DPI, facecolor="white")
    plots.StyledCanvas(fig)
    ax = fig.add_axes((0.15, 0.15, 0.8, 0.8))
    ax.set_xlim(0.0, 10.0)
    ax.set_ylim(-3.0, 7.0)
    if fast:
        drawlist.install(ax)
    return fig, ax


def _pixels(fig: Figure) -> np.ndarray:
    fig.canvas.draw()
    return np.asarray(fig.canvas.buffer_rgba()).copy()


def _same(fast: Figure, reference: Figure) -> None:
    ours, theirs = _pixels(fast), _pixels(reference)
    assert ours.shape == theirs.shape
    assert np.array_equal(ours, theirs), np.count_nonzero((ours != theirs).any(axis=2))


TEXT_STYLE: dict[str, Any] = {"fontsize": 7, "color": plots.INK, "ha": "left",
                              "va": "bottom", "linespacing": 1.05, "parse_math": False}


def test_a_kept_text_drawn_at_a_new_place_is_a_fresh_drawing() -> None:
    """The second drawing moves the text: its layout and graphics context come from
    the template (kept at the first drawing); the pixels are those of a text drawn there
    afresh by matplotlib."""
    fig, ax = _figure(fast=True)
    panel = drawlist.panel_of(ax)
    assert panel is not None
    text = "+12.5\nULS 1, loaded 1-3"
    panel.text(2.0, 1.0, text, **TEXT_STYLE)
    panel.label((3.0, 2.0), (4.0, 6.5), text, **TEXT_STYLE)
    _pixels(fig)
    (template,) = [t for key, t in panel.templates.items() if key[:2] == ("text", True)]
    assert text in template._envelope_layouts[1]  # kept with the template
    panel.clear()
    panel.text(5.37, 4.21, text, **TEXT_STYLE)
    panel.label((6.13, -1.7), (-3.2, 8.25), text, **TEXT_STYLE)
    reference, ref_ax = _figure(fast=False)
    plots._text(ref_ax, 5.37, 4.21, text, **TEXT_STYLE)
    plots._annotate(ref_ax, text, (6.13, -1.7), (-3.2, 8.25), textcoords="offset points",
                    annotation_clip=False, **TEXT_STYLE)
    _same(fig, reference)


def test_two_styles_of_one_string_are_kept_apart() -> None:
    """The same string in two colours and two sizes in one drawing: one template each,
    each drawn in its own style."""
    fig, ax = _figure(fast=True)
    reference, ref_ax = _figure(fast=False)
    styles = [dict(TEXT_STYLE), {**TEXT_STYLE, "color": plots.MAX_COLOUR},
              {**TEXT_STYLE, "fontsize": 9}, {**TEXT_STYLE, "fontsize": 9, "rotation": 90}]
    for i, style in enumerate(styles):
        plots._text(ax, 1.0 + 2 * i, 2.0, "span 3", **style)
        plots._text(ref_ax, 1.0 + 2 * i, 2.0, "span 3", **style)
    for _ in range(2):  # drawn again from what the first drawing kept
        _same(fig, reference)


def _restyled(draw: Callable[[Any, Text], None]) -> None:
    """One text drawn, restyled, and drawn again by ``draw`` on a fresh canvas: the
    pixels of matplotlib's drawing of the restyled text."""
    fig, _ = _figure(fast=False)
    text = Text(0.3, 0.4, "Shear [kN]\nspan 2", fontsize=7, color=plots.SOFT,
                transform=fig.transFigure, parse_math=False)
    text.set_figure(fig)
    renderer = fig.canvas.get_renderer()
    for size, colour, angle in ((7, plots.SOFT, 0), (11, plots.INK, 0), (11, plots.INK, 90),
                                (6.5, plots.MAX_COLOUR, 90)):
        text.set_fontsize(size)
        text.set_color(colour)
        text.set_rotation(angle)
        renderer.clear()
        draw(renderer, text)
        ours = np.asarray(renderer.buffer_rgba()).copy()
        renderer.clear()
        Text.draw(text, renderer)
        assert np.array_equal(ours, np.asarray(renderer.buffer_rgba())), (size, angle)


def test_a_text_restyled_between_drawings_is_drawn_in_its_new_style() -> None:
    """``draw_text`` keeps a text's style for one drawing only: its size, colour and
    angle changed before the next drawing are drawn (a layout kept by a key without
    the font or the angle would draw the old one)."""
    _restyled(lambda renderer, text: drawlist.draw_text(renderer, text))
    _restyled(lambda renderer, text: drawlist.draw_text(renderer, text, fixed=True))


def test_items_follow_a_view_changed_between_drawings() -> None:
    """Lines, markers, polygons, fills, collections and texts of a display list drawn,
    the view changed, drawn again: the transforms' matrices are worked out again for
    the new drawing (the pixels of matplotlib's drawing at the new view)."""
    def record(ax: Any) -> None:
        x = np.linspace(0.0, 10.0, 40)
        plots._line(ax, x, np.sin(x) * 3, color=plots.MAX_COLOUR, lw=1.2, zorder=3)
        plots._line(ax, [2.0, 5.0], [1.0, 1.0], marker="o", markersize=5, mfc="white",
                    color=plots.INK, ls="none", zorder=6)
        plots._polygon(ax, [(1.0, 0.0), (1.0, 1.5), (4.0, 2.5), (4.0, 0.0)],
                       fc=plots.CASE_COLOURS[1], alpha=0.28, ec=plots.CASE_COLOURS[1],
                       lw=0.7, zorder=2)
        plots._envelope(ax, x, np.cos(x) + 2, np.cos(x) - 2, 400)
        plots._text(ax, 6.0, -1.0, "support 2", fontsize=6.5, color=plots.SOFT)
        plots.place_labels(ax.get_figure(root=True),
                           [plots.Label(ax, 5.0, 3.0, "+3.0\nULS 2", True, 0)])

    fig, ax = _figure(fast=True)
    record(ax)
    _pixels(fig)
    reference, ref_ax = _figure(fast=False)
    record(ref_ax)
    for low, high in ((-6.0, 9.0), (-2.5, 4.0)):
        ax.set_ylim(low, high)
        ref_ax.set_ylim(low, high)
        _same(fig, reference)


def test_an_rc_setting_changed_between_drawings_is_followed() -> None:
    """A line's plan keeps the path simplification it read: a drawing under another
    threshold works it out again (the pixels of matplotlib drawing a line made and
    drawn under that threshold, as each beam's lines are)."""
    x = np.linspace(0.0, 10.0, 600)
    y = np.sin(7 * x) * np.exp(-x / 5) * 3
    fig, ax = _figure(fast=True)
    plots._line(ax, x, y, color=plots.MIN_COLOUR, lw=1.2, zorder=3)
    for rc in ({}, {"path.simplify_threshold": 0.9}, {"path.simplify": False}, {}):
        with mpl.rc_context(rc):
            reference, ref_ax = _figure(fast=False)
            ref_ax.add_artist(Line2D(x, y, color=plots.MIN_COLOUR, lw=1.2, zorder=3))
            _same(fig, reference)
    # (the thresholds draw differently: a plan kept across them would be seen)
    with mpl.rc_context({"path.simplify_threshold": 0.9}):
        coarse = _pixels(fig)
    assert not np.array_equal(coarse, _pixels(fig))


@pytest.mark.parametrize("which", ["data", "axes", "blended", "offset"])
def test_positions_in_python_floats_are_matplotlibs_transform(which: str) -> None:
    """:func:`drawlist._apply` from a transform's matrix gives ``transform.transform``
    bit for bit (the arithmetic of matplotlib's C loop), for the transforms the
    figure's texts use."""
    assert drawlist._EXACT_AFFINE  # (this machine: else the transform itself is used)
    _, ax = _figure(fast=False)
    ax.set_xlim(-0.37, 13.1)
    ax.set_ylim(171.3, -42.9)
    transform = {"data": ax.transData, "axes": ax.transAxes,
                 "blended": ax.get_xaxis_transform(),
                 "offset": ax.get_yaxis_text1_transform(3.5)[0]}[which]
    matrix = drawlist._matrix(transform)
    rng = np.random.default_rng(3)
    for x, y in rng.standard_normal((500, 2)) * [20.0, 300.0]:
        expected = transform.transform((float(x), float(y)))
        assert drawlist._apply(transform, matrix, float(x), float(y)) == \
            (expected[0], expected[1])


def test_a_plain_background_is_filled_as_drawn_and_follows_its_style() -> None:
    """The canvas of a fast figure fills a plain background once its drawing gave one
    pixel value everywhere: every drawing, the first, the filled ones, one after the
    background's colour or edge changed (another key: drawn, not filled with the old
    value) and one whose background is not one value (an edge drawn inside it), is
    the pixels of the same figure drawn with its background patch (on the same canvas
    without filling)."""

    def figure(canvas: type) -> Figure:
        fig = Figure(figsize=(3.0, 2.0), dpi=plots.DPI, facecolor="white")
        canvas(fig)
        ax = fig.add_axes((0.2, 0.2, 0.7, 0.7))
        ax.plot([0, 1, 2], [0, 2, 1], color=plots.MAX_COLOUR)
        ax.text(0.5, 1.0, "span 1", fontsize=7)
        return fig

    fast, reference = figure(plots.StyledCanvas), figure(plots.StyledCanvas)
    fast.canvas.fill_background = True  # type: ignore[attr-defined]
    drawn = []
    for face, edge, width in (("white", "white", 0.0), ("white", "white", 0.0),
                              (plots.PAPER, "white", 0.0), (plots.PAPER, "white", 0.0),
                              ("white", plots.INK, 6.0), ("white", plots.INK, 6.0),
                              ("white", "white", 0.0)):
        for fig in (fast, reference):
            fig.patch.set_facecolor(face)
            fig.patch.set_edgecolor(edge)
            fig.patch.set_linewidth(width)
        drawn.append(_pixels(fast))
        assert np.array_equal(drawn[-1], _pixels(reference)), (face, edge, width)
        assert fast.patch.get_visible()
    keys = [k for k in glyphs._BACKGROUNDS if k[:2] == (330, 220)]
    assert {glyphs._BACKGROUNDS[k] is None for k in keys} == {True, False}


def test_a_kept_figure_reuses_its_texts_for_the_next_beam(tmp_path: Path) -> None:
    """The title, the caution and the note of a beam drawn on a kept figure are the
    texts of the beam before, given the new strings and places, and the file is that
    of a figure made for the beam (drawn after the kept figures are let go): nothing of
    the beam before is left on it, the fast drawing's and matplotlib's alike."""
    cases = sorted((Path(__file__).resolve().parents[1] / "cases").glob("*.toml"))
    first_cols, cols = (store.result_columns(envelope.tables(envelope.analyse(
        envelope.load_case(str(case))))) for case in (cases[0], cases[-1]))
    first_cols["meta"]["envelope:title"] = "A first beam with a much longer title " * 2
    cols["meta"]["envelope:title"] = "Another beam"
    for fast in (True, False):
        plots._KEPT.clear()
        plots.draw_results(cols, tmp_path / "fresh.png", durable=False, fast=fast)
        plots._KEPT.clear()
        plots.draw_results(first_cols, tmp_path / "a.png", durable=False, fast=fast)
        ((fig, _),) = plots._KEPT.values()
        first = list(fig.texts)
        plots.draw_results(cols, tmp_path / "b.png", durable=False, fast=fast)
        assert len(fig.texts) == len(first) == 3
        assert {id(t) for t in fig.texts} == {id(t) for t in first}
        assert "Another beam" in [t.get_text() for t in fig.texts]
        assert (tmp_path / "b.png").read_bytes() == (tmp_path / "fresh.png").read_bytes()


def test_a_kept_figure_is_not_reused_under_other_rc_settings(tmp_path: Path) -> None:
    """A notebook that changes an rc setting the figure's style leaves alone (the font
    family) between two files gets the second drawn as a new figure would draw it, not
    on the figure kept from the first (whose texts and measures follow the old font)."""
    case = sorted((Path(__file__).resolve().parents[1] / "cases").glob("*.toml"))[0]
    cols = store.result_columns(envelope.tables(envelope.analyse(envelope.load_case(
        str(case)))))
    assert "font.family" not in plots.STYLE
    with mpl.rc_context():
        for fast in (True, False):
            mpl.rcParams["font.family"] = "sans-serif"
            plots._KEPT.clear()
            plots.draw_results(cols, tmp_path / "before.png", durable=False, fast=fast)
            mpl.rcParams["font.family"] = "serif"
            plots.draw_results(cols, tmp_path / "after.png", durable=False, fast=fast)
            plots._KEPT.clear()
            plots.draw_results(cols, tmp_path / "fresh.png", durable=False, fast=fast)
            after = (tmp_path / "after.png").read_bytes()
            assert after == (tmp_path / "fresh.png").read_bytes()
            assert after != (tmp_path / "before.png").read_bytes()
    plots._KEPT.clear()


def test_a_template_with_a_transform_is_kept_across_views_and_apart_from_others() -> None:
    """Items given a transform (the axes', a blended one, the data's) keep one template
    each while the view changes, and two transforms never share one (the pixels of
    matplotlib's drawing at each view)."""
    def record(ax: Any) -> None:
        style = {"fontsize": 6, "color": plots.SOFT, "parse_math": False}
        plots._text(ax, 0.2, 0.5, "lane 1", transform=ax.transAxes, **style)
        plots._text(ax, 0.2, 0.5, "lane 1", **style)
        plots._hline(ax, 0.0, color=plots.INK, lw=0.6, zorder=2)
        plots._support_lines(ax, np.array([0.0, 4.0, 10.0]))

    fig, ax = _figure(fast=True)
    panel = drawlist.panel_of(ax)
    assert panel is not None
    reference, ref_ax = _figure(fast=False)
    record(ref_ax)
    counts = []
    for low, high in ((-3.0, 7.0), (-11.0, 2.5), (0.2, 0.9)):
        panel.clear()
        record(ax)
        for a in (ax, ref_ax):
            a.set_ylim(low, high)
        _same(fig, reference)
        counts.append(len(panel.templates))
    assert counts == [4, 4, 4]


def test_a_label_extent_kept_per_string_follows_the_resolution() -> None:
    """The value labels' measuring text keeps each string's extent: the extent of a
    text laid out afresh by matplotlib (``Text._get_layout``), at each resolution the
    figure is drawn at (a key without it would give the first one's)."""
    style: dict[str, Any] = {"fontsize": 7, "ha": "left", "va": "bottom",
                             "linespacing": 1.05, "parse_math": False}
    fig = Figure(figsize=(4.0, 3.0), dpi=plots.DPI)
    plots.StyledCanvas(fig)
    probe = plots.KeptText(0.0, 0.0, "", **style)
    probe.set_figure(fig)
    for dpi in (plots.DPI, 200.0, plots.DPI):
        fig.set_dpi(dpi)
        renderer = fig.canvas.get_renderer()
        for s in ("+12.5\nULS 1, loaded 1-3", "-3.07 at CL", "+12.5\nULS 1, loaded 1-3"):
            fresh = Text(0.0, 0.0, s, **style)
            fresh.set_figure(fig)
            expected = Text._get_layout(fresh, renderer)[0].get_points().ravel().tolist()  # type: ignore[attr-defined]
            assert list(plots._probe_extent(probe, s, renderer)) == expected, (dpi, s)


def test_without_matplotlibs_affine_loop_positions_come_from_the_transforms(
        monkeypatch: pytest.MonkeyPatch) -> None:
    """The private ``matplotlib._path.affine_transform`` the import-time check calls may
    be missing or called otherwise in another matplotlib: the check then says no (it
    does not fail the import), and texts, labels and value labels placed through the
    transforms themselves are matplotlib's drawing."""
    monkeypatch.setattr(drawlist, "affine_transform", None)
    assert drawlist._exact_affine() is False

    def moved(points: Any) -> Any:  # (one argument: another signature)
        return points

    monkeypatch.setattr(drawlist, "affine_transform", moved)
    assert drawlist._exact_affine() is False
    monkeypatch.setattr(drawlist, "_EXACT_AFFINE", False)
    _, ax = _figure(fast=False)
    assert drawlist._matrix(ax.transData) is None
    text = "+12.5\nULS 1, loaded 1-3"
    fig, ax = _figure(fast=True)
    panel = drawlist.panel_of(ax)
    assert panel is not None
    panel.text(5.37, 4.21, text, **TEXT_STYLE)
    panel.label((6.13, -1.7), (-3.2, 8.25), text, **TEXT_STYLE)
    plots.place_labels(fig, [plots.Label(ax, 2.5, 1.0, "-3.07 at CL", False, 0)])
    reference, ref_ax = _figure(fast=False)
    plots._text(ref_ax, 5.37, 4.21, text, **TEXT_STYLE)
    plots._annotate(ref_ax, text, (6.13, -1.7), (-3.2, 8.25), textcoords="offset points",
                    annotation_clip=False, **TEXT_STYLE)
    plots.place_labels(reference, [plots.Label(ref_ax, 2.5, 1.0, "-3.07 at CL", False, 0)])
    for _ in range(2):
        _same(fig, reference)


def test_a_background_edge_switched_on_by_its_line_style_is_drawn() -> None:
    """Two backgrounds alike but for the edge's line style: ``"None"`` draws no edge (one
    pixel value, kept), ``"-"`` draws it; the second is drawn, not filled with the
    first's value (a key without the line style: their dash patterns are the same)."""
    def figure(fill: bool) -> Figure:
        fig = Figure(figsize=(3.1, 2.0), dpi=plots.DPI, facecolor="white")
        plots.StyledCanvas(fig).fill_background = fill
        fig.patch.set_edgecolor(plots.INK)
        fig.patch.set_linewidth(6.0)
        return fig

    fast, reference = figure(True), figure(False)
    for style in ("None", "-", "None", "--"):
        for fig in (fast, reference):
            fig.patch.set_linestyle(style)
        assert np.array_equal(_pixels(fast), _pixels(reference)), style


def test_a_background_whose_patch_keeps_its_state_elsewhere_is_drawn(
        monkeypatch: pytest.MonkeyPatch) -> None:
    """The background's key reads the patch's private state (its place, transform and
    dash pattern); a matplotlib that keeps one of them elsewhere (here the dash pattern
    on the class, not the patch) draws the background as it is, without failing."""
    from matplotlib.patches import Rectangle

    fast = Figure(figsize=(3.2, 2.0), dpi=plots.DPI, facecolor=plots.PAPER)
    plots.StyledCanvas(fast).fill_background = True
    reference = Figure(figsize=(3.2, 2.0), dpi=plots.DPI, facecolor=plots.PAPER)
    plots.StyledCanvas(reference)
    pattern = vars(fast.patch).pop("_dash_pattern")
    monkeypatch.setattr(Rectangle, "_dash_pattern", pattern, raising=False)
    assert glyphs._background_key(fast, 352, 220) is None
    assert np.array_equal(_pixels(fast), _pixels(reference))
