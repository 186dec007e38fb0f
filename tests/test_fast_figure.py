"""The batch figure's fast drawing against matplotlib's own (the slow reference every fast
path is compared with): for every demo case, generated beams of every kind, moments drawn
on the tension side, US units, a beam without its sketch and one whose tick numbers need
an offset, the PNG file drawn the fast way decodes (Pillow) to the pixels of the same
figure drawn entirely by matplotlib, within the tolerance stated in
:func:`assert_same_picture`."""

from __future__ import annotations

import io
import json
from importlib.resources import files
from pathlib import Path

import numpy as np
import pytest
from PIL import Image

import envelope
from envelope import drawlist, keyrow, plots, stamp, store, ticks

from beams import make_cases_module

ROOT = Path(__file__).resolve().parents[1]
CASES = [*sorted((ROOT / "cases").glob("*.toml")),
         Path(str(files("envelope") / "data" / "demo.toml"))]


def _columns(path: Path) -> dict:
    return store.result_columns(envelope.tables(envelope.analyse(envelope.load_case(str(path)))))


def _pixels(cols: dict, folder: Path, fast: bool) -> np.ndarray:
    path = plots.draw_results(cols, folder / f"{'fast' if fast else 'reference'}.png",
                              durable=False, fast=fast)
    return np.asarray(Image.open(io.BytesIO(path.read_bytes())).convert("RGBA")).astype(int)


def assert_same_picture(cols: dict, folder: Path) -> None:
    """The fast drawing is matplotlib's drawing of the same figure: same size, and no
    pixel differs at all (the fast parts issue the same drawing calls with the same
    geometry and styles, or paste the pixels such calls gave).  Drawn twice, so that
    the second time the key is pasted from kept pixels."""
    reference = _pixels(cols, folder, fast=False)
    for _ in range(2):
        fast = _pixels(cols, folder, fast=True)
        assert fast.shape == reference.shape
        differ = np.abs(fast - reference).max(axis=2)
        assert np.count_nonzero(differ) == 0, (np.count_nonzero(differ), differ.max())


@pytest.mark.parametrize("case", CASES, ids=[c.stem for c in CASES])
def test_fast_figure_of_every_demo_is_matplotlibs_drawing(case: Path, tmp_path: Path) -> None:
    assert_same_picture(_columns(case), tmp_path)


def test_fast_figure_of_generated_beams_is_matplotlibs_drawing(tmp_path: Path) -> None:
    """Generated beams (1 to 12 spans, every load type, patterning method and unit
    system), drawn one after another on the kept figures as a batch worker does."""
    paths = make_cases_module().make_cases(12, tmp_path / "cases", seed=7)
    for path in paths:
        assert_same_picture(_columns(path), tmp_path)


def test_fast_figure_with_tension_side_moments_and_no_sketch(tmp_path: Path) -> None:
    cols = _columns(CASES[0])
    cols["meta"]["envelope:moment_plot"] = "tension-side"
    assert_same_picture(cols, tmp_path)
    del cols["meta"]["envelope:sketch"]
    assert_same_picture(cols, tmp_path)


def test_tick_numbers_with_an_offset_are_drawn_as_matplotlib_draws_them(
        tmp_path: Path) -> None:
    """Moments near 1e7 with a small range: the numbers take an offset ("+1e7"), which
    the tick layer leaves to matplotlib."""
    cols = _columns(CASES[0])
    env = cols["envelope"]
    for name in ("moment_max", "moment_min"):
        env[name] = np.asarray(env[name], dtype=float) * 1e-3 + 1.0e7
    assert_same_picture(cols, tmp_path)


def test_the_fast_figure_draws_no_tick_objects(tmp_path: Path) -> None:
    """The kept figure's panels draw their ticks with one layer each: matplotlib's axis
    artists are hidden, and the y labels are still the axes' own (readable as such)."""
    plots._KEPT.clear()
    plots.draw_results(_columns(CASES[0]), tmp_path / "f.png", durable=False)
    (_, axes), = plots._KEPT.values()
    for ax in axes[1:]:
        assert not ax.xaxis.get_visible() and not ax.yaxis.get_visible()
        assert sum(isinstance(a, ticks.TickLayer) for a in ax.artists) == 1
    assert axes[1].get_ylabel().startswith("Moment")


def test_the_key_is_pasted_from_kept_pixels_only_over_the_same_background(
        tmp_path: Path) -> None:
    """A second beam with the same symbols pastes the key's pixels; the key over any
    other background (here the paper darkened under it) is drawn again, as matplotlib
    draws it, so a paste never leaves another picture's pixels behind."""
    cols = _columns(CASES[0])
    stamp._STAMPS.clear()
    first = _pixels(cols, tmp_path, fast=True)
    assert len(stamp._STAMPS) == 1
    ((_, _, background, _, changed),) = stamp._STAMPS.values()
    assert changed.any() and not changed.all()
    drawn = []
    original = keyrow.KeyRow.draw
    try:
        keyrow.KeyRow.draw = lambda self, renderer: drawn.append(self) or original(
            self, renderer)
        again = _pixels(cols, tmp_path, fast=True)
        assert not drawn and np.array_equal(first, again)
        background[...] = 0   # as if something else had been drawn under the key
        _pixels(cols, tmp_path, fast=True)
        assert drawn
    finally:
        keyrow.KeyRow.draw = original


def _key_pixels(fig: plots.Figure, artist: object) -> np.ndarray:
    renderer = fig.canvas.get_renderer()
    renderer.clear()
    artist.draw(renderer)  # type: ignore[attr-defined]
    return np.asarray(renderer.buffer_rgba()).copy()


def test_every_key_is_drawn_as_matplotlibs_legend() -> None:
    """The key laid out from kept entries (:mod:`envelope.keyrow`) against matplotlib's
    legend of the same names: every symbol alone, sets of every size in one row, and
    sets of eight to all fifteen entries in two rows (columns of two and one), on
    figures of two heights; the same pixels, and the same extent."""
    everything = plots._key_names([*plots._SYMBOLS, "free end"])
    rng = np.random.default_rng(5)
    sets = [[*everything[:2], name] for name in everything[2:]]
    sets += [everything[:2] + sorted(rng.choice(everything[2:], k, replace=False),
                                     key=everything.index) for k in range(1, 14)
             for _ in range(2)]
    sets.append(everything)
    with plots.mpl.rc_context(plots.STYLE):
        for height in (7.0, 9.3):
            fig = plots.Figure(figsize=(plots.WIDTH, height), dpi=plots.DPI)
            plots.StyledCanvas(fig)
            for names in sets:
                legend = plots._key_legend(fig, names, add=False)
                key = keyrow.KeyRow(fig, names, plots._key_columns(names),
                                    lambda some, fig=fig: plots._key_legend(fig, some,
                                                                            add=False))
                reference = _key_pixels(fig, legend)
                assert reference.any()
                assert np.array_equal(_key_pixels(fig, key), reference), names
                renderer = fig.canvas.get_renderer()
                assert key.get_window_extent(renderer).bounds == \
                    legend.get_window_extent(renderer).bounds


def test_the_display_lists_keep_one_template_per_style(tmp_path: Path) -> None:
    """Beams drawn one after another on the kept figure record their items on the same
    display lists and reuse the templates of the styles seen before: drawing a beam
    again adds no template (a style rebuilt per item, such as a new transform object
    each time, would add one per item and beam)."""
    plots._KEPT.clear()
    cols = _columns(CASES[0])
    plots.draw_results(cols, tmp_path / "a.png", durable=False)
    (_, axes), = plots._KEPT.values()
    panels = [drawlist.panel_of(ax) for ax in axes]
    assert all(panels)
    counts = [(len(p.templates), p.count()) for p in panels]
    assert sum(c for _, c in counts) > 50  # the panels' contents are on the lists
    plots.draw_results(cols, tmp_path / "b.png", durable=False)
    assert [(len(p.templates), p.count()) for p in panels] == counts


def test_a_kept_figure_given_other_panel_heights_draws_as_a_new_figure(
        tmp_path: Path) -> None:
    """A kept figure takes the next beam's panel heights (a strip with more load lanes,
    another layout of the same panels) by its size and its axes' positions: each beam
    drawn on the figure kept from the beam before is the same file, byte for byte, as
    the beam drawn on a figure made for it, drawn the fast way and by matplotlib."""
    paths = make_cases_module().make_cases(12, tmp_path / "cases", seed=7)
    beams = [_columns(path) for path in paths]
    # the first demo again with two more load cases: more lanes, the same symbols
    more = _columns(CASES[0])
    sketch = json.loads(more["meta"]["envelope:sketch"])
    for name in ("extra 1", "extra 2"):
        sketch["cases"][name] = "live"
        sketch["loads"].append({"case": name, "type": "uniform", "span": 1,
                                "start": 0.0, "end": 1.0, "w_start": 1.0, "w_end": 1.0})
    more["meta"]["envelope:sketch"] = json.dumps(sketch)
    beams += [_columns(CASES[0]), more]
    resized = 0
    for fast in (True, False):
        previous = None
        for cols in beams:
            if previous is not None:
                plots._KEPT.clear()
                plots.draw_results(previous, tmp_path / "before.png", durable=False,
                                   fast=fast)
                (fig, _), = plots._KEPT.values()
                before = plots._HEIGHTS[fig]
                kept = plots.draw_results(cols, tmp_path / "kept.png", durable=False,
                                          fast=fast).read_bytes()
                if len(plots._KEPT) == 1 and plots._HEIGHTS[fig] != before:
                    resized += 1
                plots._KEPT.clear()
                new = plots.draw_results(cols, tmp_path / "new.png", durable=False,
                                         fast=fast).read_bytes()
                assert kept == new
            previous = cols
    assert resized >= 4  # beams whose panels have other heights than the beam before
