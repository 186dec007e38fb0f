"""The envelope figure: it renders for every demo case, the bundled demo and a ten-span
beam; its labels stay inside their panels and clear of one another (measured from the
drawn text extents); it shows what an engineer reads at a glance (supports by type,
loads to scale, face values saying so, end shears, loaded spans, spring settlement, a
key, sizing) with the caution; its text is literal and editable."""

from __future__ import annotations

import itertools
import tracemalloc
import warnings
from importlib.resources import files
from pathlib import Path

import numpy as np
import pytest
from matplotlib.figure import Figure
from matplotlib.text import Text

import envelope
from envelope import plots, store
from envelope.sketch import MAX_LOADS

from beams import beam_text, parse_text

ROOT = Path(__file__).resolve().parents[1]
CASES = sorted((ROOT / "cases").glob("*.toml"))
DEMO = Path(str(files("envelope") / "data" / "demo.toml"))

TEN_SPANS = beam_text(
    [6.0, 5.0, 3.5, 7.0, 2.5, 6.5, 4.0, 3.0, 5.5, 4.5],
    [{"type": "pinned", "width": 0.4}, {"type": "pinned", "width": 0.4},
     {"type": "spring", "k_vertical": 80000}, {"type": "pinned", "width": 0.4},
     {"type": "pinned", "width": 0.4}, "fixed", {"type": "pinned", "width": 0.4}, "pinned",
     {"type": "pinned", "width": 0.3}, {"type": "pinned", "width": 0.4}, "pinned"],
    [{"case": "D", "type": "self_weight", "spans": "all"},
     {"case": "D", "type": "uniform", "spans": "all", "w": 20.0},
     {"case": "L", "type": "uniform", "spans": "all", "w": 15.0},
     {"case": "L", "type": "point", "spans": 4, "P": 60.0, "at": 3.0},
     {"case": "D", "type": "moment", "spans": 6, "M": 40.0, "at": 2.0}],
    section={"E": 30000, "I": 2.0e10, "A": 400000, "unit_weight": 25.0},
    cases={"D": "dead", "L": "live"},
    combinations={"strength": "asce7-lrfd", "service": "characteristic"},
    patterning={"method": "exhaustive"},
    top={"title": "Ten bays, unequal spans"})


def _analysis(path: Path) -> envelope.api.Analysis:
    return envelope.analyse(envelope.load_case(str(path)))


@pytest.fixture(scope="module")
def ten_spans(tmp_path_factory: pytest.TempPathFactory) -> Path:
    path = tmp_path_factory.mktemp("ten") / "ten-spans.toml"
    path.write_text(TEN_SPANS, encoding="utf-8")
    return path


def _columns(result: envelope.api.Analysis) -> dict:
    return store.result_columns(envelope.tables(result))


def _texts(fig: Figure) -> list[tuple[Text, object]]:
    """Every visible, non-empty text of the figure with its drawn extent (pixels)."""
    fig.canvas.draw()
    renderer = fig.canvas.get_renderer()
    out = []
    for t in fig.findobj(Text):
        if t.get_visible() and t.get_text().strip() and t.figure is not None:
            # the text itself (an annotation's own extent also covers its leader line)
            out.append((t, Text.get_window_extent(t, renderer)))
    return out


def assert_labels_clear(fig: Figure) -> int:
    """No two drawn texts overlap; every value label lies inside its own axes, clear of
    the spines.  Returns the number of value labels."""
    texts = _texts(fig)
    for (a, ba), (b, bb) in itertools.combinations(texts, 2):
        overlap_x = min(ba.x1, bb.x1) - max(ba.x0, bb.x0)
        overlap_y = min(ba.y1, bb.y1) - max(ba.y0, bb.y0)
        assert overlap_x <= 0.5 or overlap_y <= 0.5, \
            f"{a.get_text()!r} overlaps {b.get_text()!r}"
    labels = [(t, box) for t, box in texts if t.get_gid() == "value-label"]
    renderer = fig.canvas.get_renderer()
    for t, box in labels:
        frame = t.axes.get_window_extent(renderer)
        assert frame.x0 + 1 <= box.x0 and box.x1 <= frame.x1 - 1, t.get_text()
        assert frame.y0 + 1 <= box.y0 and box.y1 <= frame.y1 - 1, t.get_text()
    return len(labels)


def _figure_cases() -> list[Path]:
    return [*CASES, DEMO]


@pytest.mark.parametrize("case", _figure_cases(), ids=[c.stem for c in _figure_cases()])
def test_every_demo_figure_renders_with_labels_clear_of_each_other_and_the_axes(
        case: Path) -> None:
    fig = envelope.plot(_analysis(case))
    assert assert_labels_clear(fig) >= 4


def _as_written(cols: dict) -> Figure:
    """The figure exactly as ``envelope run`` and batches write it: a kept figure at the
    file's resolution (text measured by the cached-glyph canvas)."""
    import matplotlib as mpl

    with mpl.rc_context(plots.STYLE):
        return plots._build(cols, None, reuse=True)


@pytest.mark.parametrize("case", _figure_cases(), ids=[c.stem for c in _figure_cases()])
def test_every_demo_figure_as_written_to_its_file_has_labels_clear(case: Path) -> None:
    fig = _as_written(_columns(_analysis(case)))
    assert fig.dpi == plots.DPI
    assert assert_labels_clear(fig) >= 4


def test_the_overlap_check_fails_on_labels_laid_over_one_another() -> None:
    """The check measures the drawn extents: a demo figure passes, and fails once one
    value label is moved onto another, or out of its panel."""
    fig = envelope.plot(_analysis(CASES[0]))
    assert_labels_clear(fig)
    first, second = [t for t in fig.axes[1].texts if t.get_gid() == "value-label"][:2]
    second.xy = first.xy
    second.xyann = first.xyann
    with pytest.raises(AssertionError, match="overlaps"):
        assert_labels_clear(fig)
    fig = envelope.plot(_analysis(CASES[0]))
    label = next(t for t in fig.axes[1].texts if t.get_gid() == "value-label")
    label.xyann = (label.xyann[0], label.xyann[1] + 2000.0)  # points: far above the panel
    with pytest.raises(AssertionError):
        assert_labels_clear(fig)


def test_the_overlap_check_fails_on_two_plain_texts_that_touch() -> None:
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    fig = Figure(figsize=(4, 3))
    FigureCanvasAgg(fig)
    ax = fig.add_axes((0.1, 0.1, 0.8, 0.8))
    ax.text(0.5, 0.5, "first label", gid="value-label")
    ax.text(0.52, 0.51, "second label", gid="value-label")
    with pytest.raises(AssertionError, match="overlaps"):
        assert_labels_clear(fig)


def test_ten_span_figure_labels_are_clear(ten_spans: Path) -> None:
    fig = envelope.plot(_analysis(ten_spans))
    assert assert_labels_clear(fig) >= 20


def assert_labels_point_at_their_values(fig: Figure) -> None:
    """Every value label either lies beside its point (within 6 points of its drawn
    extent) or draws a leader line to it, so no label reads as another peak's."""
    fig.canvas.draw()
    renderer = fig.canvas.get_renderer()
    near = 6 * fig.dpi / 72
    for ax in fig.axes:
        for t in ax.texts:
            if t.get_gid() != "value-label" or not t.get_text().strip():
                continue
            box = Text.get_window_extent(t, renderer)
            px, py = ax.transData.transform(t.xy)
            dx = max(box.x0 - px, px - box.x1, 0.0)
            dy = max(box.y0 - py, py - box.y1, 0.0)
            assert (dx <= near and dy <= near) or t.arrow_patch is not None \
                or _leader_from(ax, t, box, renderer), (t.get_text(), dx, dy)


def _leader_from(ax: object, t: Text, box: object, renderer: object) -> bool:
    """Whether the panel's leader lines (one collection, in points from the anchors)
    hold a line from the edge of ``t``'s drawn extent to its anchor."""
    px_per_pt = t.get_figure(root=True).dpi / 72
    ax_x, ax_y = ax.transData.transform(t.xy)
    for lines in ax.collections:
        if lines.get_gid() != "value-label-leaders":
            continue
        for at, seg in zip(lines.get_offsets(), lines.get_segments(), strict=True):
            if not np.allclose(at, t.xy) or not np.allclose(seg[-1], 0.0):
                continue
            sx, sy = ax_x + seg[0][0] * px_per_pt, ax_y + seg[0][1] * px_per_pt
            if (box.x0 - 1 <= sx <= box.x1 + 1
                    and min(abs(sy - box.y0), abs(sy - box.y1)) <= 1.5):
                return True
    return False


def test_a_label_away_from_its_point_draws_a_leader_to_it(ten_spans: Path) -> None:
    """Ten crowded spans push labels sideways: each still points at its own value."""
    for fig in (envelope.plot(_analysis(ten_spans)), _as_written(_columns(_analysis(
            ten_spans)))):
        assert_labels_point_at_their_values(fig)


@pytest.mark.parametrize("case", _figure_cases(), ids=[c.stem for c in _figure_cases()])
def test_every_demo_figure_label_points_at_its_value(case: Path) -> None:
    assert_labels_point_at_their_values(envelope.plot(_analysis(case)))


def test_tension_side_moments_keep_the_labels_clear() -> None:
    result = _analysis(CASES[0])
    cols = _columns(result)
    cols["meta"]["envelope:moment_plot"] = "tension-side"
    fig = plots.figure(cols)
    assert assert_labels_clear(fig) >= 4
    assert fig.axes[1].yaxis_inverted()


def test_every_figure_carries_the_caution_and_a_key() -> None:
    fig = envelope.plot(_analysis(CASES[0]))
    words = " ".join(t.get_text() for t, _ in _texts(fig))
    assert "checking by a licensed engineer" in words and "local codes" in words
    assert fig.legends, "a key to the symbols"


def _label_texts(fig: Figure) -> list[str]:
    return [t.get_text() for t, _ in _texts(fig) if t.get_gid() == "value-label"]


def test_hogging_is_labelled_at_the_face_with_the_console_value() -> None:
    """Concrete with support widths: the design takes hogging at the faces (ACI 318-19
    9.4.2.1), so the figure labels the face value the console prints, saying so."""
    office = next(c for c in CASES if c.stem.startswith("office"))
    result = _analysis(office)
    labels = _label_texts(envelope.plot(result))
    faces = [t for t in labels if " at face" in t]
    assert faces
    summary = envelope.summary_text(result)
    d = result.design_actions
    for t in faces:
        value = t.split(" at face")[0]
        assert value in summary, value
        assert any(f"{v:.1f}" == value for v in np.r_[d["moment_neg_left_face"],
                                                     d["moment_neg_right_face"]])


def test_steel_hogging_is_labelled_at_the_centreline() -> None:
    """Steel over its bearing: no face reduction, the centreline value, said so."""
    mezz = next(c for c in CASES if c.stem.startswith("mezz"))
    labels = _label_texts(envelope.plot(_analysis(mezz)))
    assert any(" at CL" in t for t in labels)
    assert not any(" at face" in t for t in labels)


def test_both_end_shears_of_every_span_are_labelled() -> None:
    office = next(c for c in CASES if c.stem.startswith("office"))
    result = _analysis(office)
    cols = _columns(result)
    fig = plots.figure(cols)
    shear_ax = fig.axes[2]
    values = {t.get_text().split("\n")[0] for t in shear_ax.texts if t.get_gid() == "value-label"}
    env = cols["envelope"]
    for j in range(1, result.beam.n_spans + 1):
        rows = np.flatnonzero(env["span"] == j)
        for k in (rows[0], rows[-1]):
            v = max(env["shear_max"][k], env["shear_min"][k], key=abs)
            assert f"{v:.1f}" in values, (j, v, values)


def test_labels_name_the_governing_combination_and_loaded_spans() -> None:
    office = next(c for c in CASES if c.stem.startswith("office"))
    result = _analysis(office)
    bars = set(envelope.tables(result)["sizing"].column("bars").to_pylist())
    # value labels of the envelopes (the sizing's are one line: the bar labels of a
    # concrete design, e.g. "4 #8", and the sized member's deflection, "9.98 cracked",
    # taken under the arrangement of the span's peak label beside it)
    labels = [t for t in _label_texts(envelope.plot(result))
              if t not in bars and not t.endswith(" cracked")]
    assert sum("loaded " in t for t in labels) >= 8
    assert all("\n" in t for t in labels)


def test_spring_support_is_drawn_where_it_settles() -> None:
    """The car-park spring settles about 1.8 mm: the deflection panel draws it there."""
    carpark = next(c for c in CASES if c.stem.startswith("carpark"))
    result = _analysis(carpark)
    cols = _columns(result)
    fig = plots.figure(cols)
    texts = [t for t in _label_texts(fig) if t.startswith("spring settles")]
    assert len(texts) == 1
    env = cols["envelope"]
    x_spring = result.beam.joint_x[1]
    d = float(np.nanmax(env["deflection_max"][np.isclose(env["x"], x_spring)]))
    assert texts[0] == f"spring settles {d:.2f}" and d > 1.0
    d_ax = fig.axes[3]
    assert any(line.get_marker() is plots.SPRING and np.isclose(line.get_ydata()[0], d)
               for line in d_ax.lines)


def test_supports_are_drawn_by_type_and_keyed() -> None:
    carpark = next(c for c in CASES if c.stem.startswith("carpark"))
    fig = envelope.plot(_analysis(carpark))
    strip = fig.axes[0]
    markers = [line.get_marker() for line in strip.lines]
    assert sum(m is plots.PIN for m in markers) == 3
    assert sum(m is plots.SPRING for m in markers) == 1
    key = [t.get_text() for t in fig.legends[0].get_texts()]
    for name in ("pinned", "vertical spring", "support face", "spring settlement"):
        assert name in key


def test_loads_are_drawn_to_scale_within_their_case(ten_spans: Path) -> None:
    """Two uniform loads of one case, 20 and 10: drawn heights 2 to 1."""
    text = TEN_SPANS.replace('w = 15.0', 'w = 10.0\n[[loads]]\ncase = "L"\ntype = "uniform"\n'
                             'spans = [2]\nw = 20.0', 1)
    path = ten_spans.with_name("scale.toml")
    path.write_text(text, encoding="utf-8")
    fig = envelope.plot(_analysis(path))
    from matplotlib.patches import Polygon

    heights = sorted({round(float(np.ptp(p.get_xy()[:, 1])), 9)
                      for p in fig.axes[0].patches if isinstance(p, Polygon)})
    assert any(np.isclose(a * 2, b) for a in heights for b in heights)


def test_hinges_in_the_sketch_are_drawn_and_keyed() -> None:
    cols = _columns(_analysis(CASES[0]))
    import json

    sk = json.loads(cols["meta"]["envelope:sketch"])
    sk["hinges"] = [2.0]
    cols["meta"]["envelope:sketch"] = json.dumps(sk)
    fig = plots.figure(cols)
    assert any(line.get_marker() == "o" and line.get_xdata()[0] == 2.0
               for line in fig.axes[0].lines)
    assert "hinge" in [t.get_text() for t in fig.legends[0].get_texts()]


def test_a_figure_without_a_sketch_still_draws() -> None:
    """Result files of an earlier engine carry no sketch: supports from reactions."""
    cols = _columns(_analysis(CASES[0]))
    del cols["meta"]["envelope:sketch"]
    assert assert_labels_clear(plots.figure(cols)) >= 4


def test_concrete_sizing_draws_required_and_provided_steel() -> None:
    office = next(c for c in CASES if c.stem.startswith("office"))
    fig = envelope.plot(_analysis(office))
    assert fig.axes[-1].get_ylabel().startswith("Steel area")
    names = [line.get_label() for line in fig.axes[-1].lines]
    assert any(n.startswith("required") for n in names)
    assert any(n.startswith("provided") for n in names)


@pytest.mark.parametrize("stem", ["office", "school"])
def test_concrete_sizing_draws_the_bars_as_cut_off_covering_the_required_steel(
        stem: str, tmp_path: Path) -> None:
    """Item by item from bars.parquet: the provided steel steps at every bar's end
    (each cut-off is an edge of the step line), and at every design section it covers
    the steel the section requires (ACI 318-19 9.7.3 / EN 1992-1-1 9.2.1.3: the bars
    as cut off still carry the section's tension).  The figure redrawn from the files
    draws the same."""
    from matplotlib.patches import StepPatch

    case = next(c for c in CASES if c.stem.startswith(stem))
    result = _analysis(case)
    built = envelope.tables(result)
    bars, sizing = built["bars"].to_pydict(), built["sizing"].to_pydict()
    folder = envelope.write(result, tmp_path)
    for fig in (envelope.plot(result), plots.figure(store.read_results(folder))):
        steps = {p.get_label(): p for p in fig.axes[-1].patches if isinstance(p, StepPatch)}
        assert set(steps) == {"top bars as cut off", "bottom bars as cut off"}
        for position in ("top", "bottom"):
            values, edges = steps[f"{position} bars as cut off"].get_data()[:2]
            ends = [v for p, a, b in zip(bars["position"], bars["start"], bars["end"],
                                         strict=True) if p == position for v in (a, b)]
            assert np.allclose(np.unique(ends), edges, rtol=0, atol=1e-12)
            for sec, x, need in zip(sizing["section"], sizing["x"], sizing["as_required"],
                                    strict=True):
                if x is None or (sec == "span") != (position == "bottom"):
                    continue
                k = min(np.searchsorted(edges, x, side="right") - 1, values.size - 1)
                assert values[k] >= need * (1 - 1e-9), (position, sec, x, values[k], need)


@pytest.mark.parametrize(("stem", "column", "word"), [
    ("office", "deflection_immediate", "cracked"), ("mezz", "deflection_total", "sized")])
def test_the_deflection_of_the_sized_member_is_drawn_labelled_and_inside_the_panel(
        stem: str, column: str, word: str) -> None:
    """Concrete: the cracked deflection with the chosen bars (several times the gross
    curve of the analysis); steel: the chosen section's.  Each span's value is marked,
    labelled and within the panel's limits."""
    case = next(c for c in CASES if c.stem.startswith(stem))
    result = _analysis(case)
    sizing = envelope.tables(result)["sizing"].to_pydict()
    want = sorted(round(v, 9) for v in sizing[column] if v is not None)
    fig = envelope.plot(result)
    d_ax = next(a for a in fig.axes if a.get_ylabel().startswith("Deflection"))
    (marks,) = [ln for ln in d_ax.lines if ln.get_marker() == "D"]
    assert sorted(round(float(v), 9) for v in marks.get_ydata()) == want
    lo, hi = sorted(d_ax.get_ylim())
    assert all(lo < v < hi for v in want)
    texts = [t.get_text() for t in d_ax.texts if t.get_gid() == "value-label"]
    assert sum(t.endswith(f" {word}") for t in texts) == len(want)
    assert_labels_clear(fig)


@pytest.mark.parametrize("case", _figure_cases(), ids=[c.stem for c in _figure_cases()])
def test_labels_keep_clear_of_the_marked_deflections_and_springs(case: Path) -> None:
    """No value label covers a sized member's deflection mark or a settled spring (the
    platform's 0.95 in mark sat under its span's peak label)."""
    fig = envelope.plot(_analysis(case))
    fig.canvas.draw()
    renderer = fig.canvas.get_renderer()
    for ax in fig.axes:
        points = [ax.transData.transform(xy) for line in ax.lines
                  if line.get_marker() == "D" or line.get_marker() is plots.SPRING
                  for xy in line.get_xydata()]
        for t in ax.texts:
            if t.get_gid() != "value-label":
                continue
            box = Text.get_window_extent(t, renderer)
            for px, py in points:
                assert not (box.x0 < px < box.x1 and box.y0 < py < box.y1), \
                    (t.get_text(), px, py)


def test_bar_areas_of_the_two_bar_families() -> None:
    """ASTM A615/A615M Table 1 nominal areas (#8: 0.79 in2) and pi d^2 / 4 for a
    metric diameter (16 mm: 201.06 mm2), in either system's panel unit."""
    assert plots.bar_area("3 #8", metric=False) == pytest.approx(3 * 0.79, rel=1e-12)
    assert plots.bar_area("3 #8", metric=True) == pytest.approx(3 * 0.79 * 645.16, rel=1e-12)
    assert plots.bar_area("2 H16", metric=True) == pytest.approx(2 * np.pi * 64.0, rel=1e-12)
    assert plots.bar_area("2 H16", metric=False) == pytest.approx(
        2 * np.pi * 64.0 / 645.16, rel=1e-12)
    assert np.isnan(plots.bar_area("two bars", metric=True))


def test_steel_sizing_draws_utilisation_along_the_beam() -> None:
    mezz = next(c for c in CASES if c.stem.startswith("mezz"))
    fig = envelope.plot(_analysis(mezz))
    assert fig.axes[-1].get_ylabel().startswith("Utilisation")


def test_sizing_panel_reads_columns_generically() -> None:
    """Bars as text label the provided steel; a table with neither steel areas nor
    utilisations gives no panel; an extra utilisation column is drawn too."""
    office = next(c for c in CASES if c.stem.startswith("office"))
    cols = _columns(_analysis(office))
    n = cols["sizing"]["x"].size
    cols["sizing"]["bars"] = np.array(["3 H20"] * n, dtype=object)
    fig = plots.figure(cols)
    assert "3 H20" in _label_texts(fig)
    assert_labels_clear(fig)
    cols["sizing"] = {"x": cols["sizing"]["x"], "note": cols["sizing"]["note"]}
    assert plots.figure(cols).axes[-1].get_ylabel().startswith("Deflection")
    mezz = next(c for c in CASES if c.stem.startswith("mezz"))
    cols = _columns(_analysis(mezz))
    cols["sizing"]["utilisation_ltb"] = np.full(cols["sizing"]["x"].size, 0.5)
    fig = plots.figure(cols)
    assert "ltb" in [t.get_text() for t in fig.axes[-1].get_legend().get_texts()]


def test_text_is_literal_and_editable_in_svg_and_pdf(tmp_path: Path) -> None:
    """A title with markup characters is drawn as written; SVG keeps text as text
    (svg.fonttype none), PDF embeds TrueType (pdf.fonttype 42), never Type 3."""
    cols = _columns(_analysis(CASES[0]))
    cols["meta"]["envelope:title"] = "Beam $\\sqrt{$ 50% & <b>"
    svg = plots.draw_results(cols, tmp_path / "f.svg").read_text(encoding="utf-8")
    assert "<text" in svg and "$\\sqrt{$ 50% &amp; &lt;b&gt;" in svg
    pdf = plots.draw_results(cols, tmp_path / "f.pdf").read_bytes()
    assert b"/FontFile2" in pdf and b"/Type3" not in pdf


def test_a_figure_saved_from_a_notebook_keeps_its_text_editable(tmp_path: Path) -> None:
    """``envelope.plot(result).savefig(...)`` outside any style context (as in a
    notebook, default rc settings): TrueType in PDF, text in SVG, never Type 3."""
    import matplotlib as mpl

    storage = next(c for c in CASES if c.stem.startswith("storage"))  # a mathtext key
    fig = envelope.plot(_analysis(storage))
    with mpl.rc_context({"pdf.fonttype": 3, "svg.fonttype": "path"}):
        fig.savefig(tmp_path / "f.pdf")
        fig.savefig(tmp_path / "f.svg")
        assert mpl.rcParams["pdf.fonttype"] == 3  # the user's settings are left as they were
    pdf = (tmp_path / "f.pdf").read_bytes()
    assert b"/FontFile2" in pdf and b"/Type3" not in pdf
    svg = (tmp_path / "f.svg").read_text(encoding="utf-8")
    assert "<text" in svg and "checking by a licensed engineer" in svg


def test_a_huge_title_is_cut_and_costs_little_memory() -> None:
    cols = _columns(_analysis(CASES[0]))
    cols["meta"]["envelope:title"] = "T" * 10_000_000
    tracemalloc.start()
    fig = plots.figure(cols)
    fig.canvas.draw()
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    assert peak < 200 * 2**20, peak
    (title,) = [t.get_text() for t in fig.findobj(Text) if t.get_text().startswith("TT")]
    assert len(title) <= plots.TITLE_CHARS


def test_control_characters_in_names_raise_no_warning() -> None:
    cols = _columns(_analysis(CASES[0]))
    cols["meta"]["envelope:title"] = "Beam\x00with\x07controls"
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        fig = plots.figure(cols)
        fig.canvas.draw()
    assert any(t.get_text() == "Beam?with?controls" for t in fig.findobj(Text))


def test_the_sketch_keeps_at_most_its_limit_of_load_items() -> None:
    from envelope.sketch import sketch

    beam = envelope.load_case(str(CASES[0]))
    many = beam.loads * (MAX_LOADS // len(beam.loads) + 2)
    import dataclasses

    sk = sketch(dataclasses.replace(beam, loads=many))
    assert len(sk["loads"]) <= MAX_LOADS + len(beam.spans) * 4
    assert sk["loads_omitted"] > 0


HINGED = beam_text(
    [{"length": 6.0, "hinges": [{"at": 4.5}]}, 6.0], ["fixed", "pinned", "pinned"],
    [{"case": "D", "type": "uniform", "spans": "all", "w": 10.0}],
    section={"E": 30000, "I": 1.0e10},
    cases={"D": "dead", "S": "dead"},
    combinations={"strength": "asce7-lrfd", "service": "characteristic"},
    top={"title": "Two spans, a hinge in the first, the middle support settling"})


def test_hinges_and_settlement_of_a_case_are_drawn(tmp_path: Path) -> None:
    import dataclasses

    from envelope.model import Load

    path = tmp_path / "hinged.toml"
    path.write_text(HINGED, encoding="utf-8")
    beam = envelope.load_case(str(path))
    settle = Load(case="S", type="settlement", span=0, support=1, delta=0.01)
    beam = dataclasses.replace(beam, loads=(*beam.loads, settle))
    fig = envelope.plot(envelope.analyse(beam))
    strip = fig.axes[0]
    assert any(line.get_marker() == "o" and np.isclose(line.get_xdata()[0], 4.5)
               for line in strip.lines)
    key = [t.get_text() for t in fig.legends[0].get_texts()]
    assert "hinge" in key and "settlement" in key and "fixed" in key
    arrows = [a for a in strip.texts if getattr(a, "xy", None) is not None
              and np.isclose(a.xy[0], 6.0) and a.xy[1] < 0]
    assert arrows, "the settlement arrow under support 2"
    assert "support settles 10.00" in _label_texts(fig)  # 0.01 m, drawn in mm
    assert_labels_clear(fig)


def test_curves_are_thinned_to_what_the_pixels_show_keeping_the_peaks() -> None:
    x = np.linspace(0.0, 10.0, 100_001)
    hi = np.sin(x)
    hi[54_321] = 5.0  # a one-station spike must survive
    lo = -hi
    xt, ht, lt = plots._thin(x, hi, lo, pixels=800)
    assert xt.size <= 2 * 800 + 1
    assert ht.max() == 5.0 and lt.min() == -5.0
    assert np.all(np.diff(xt) > 0)


def test_a_reused_figure_draws_the_same_file_as_a_new_one(tmp_path: Path) -> None:
    """Batch workers reuse one figure across beams: nothing of the last beam remains."""
    office, carpark = (next(c for c in CASES if c.stem.startswith(s))
                       for s in ("office", "carpark"))
    plots._KEPT.clear()
    a = _columns(_analysis(office))
    b = _columns(_analysis(carpark))
    plots.draw_results(a, tmp_path / "first.svg")
    plots.draw_results(b, tmp_path / "other.svg")
    plots.draw_results(a, tmp_path / "again.svg")
    first = (tmp_path / "first.svg").read_text(encoding="utf-8")
    assert first == (tmp_path / "again.svg").read_text(encoding="utf-8")
    assert len(plots._KEPT) >= 1


def test_moving_loads_are_drawn_over_their_spans_with_their_axles() -> None:
    """A concentrated load and a two-axle train: a double-headed line over the spans
    each moves along (either way) and an arrow per axle at its start, at the axle's
    offset; the key names the symbol and no lane says "other"."""
    text = beam_text(
        [5.0, 5.0, 4.0], ["pinned", "pinned", "pinned", "pinned"],
        [{"case": "D", "type": "uniform", "spans": "all", "w": 5.0},
         {"case": "Lc", "type": "concentrated", "spans": [2, 3], "P": 9.0},
         {"case": "T", "type": "train", "spans": "all",
          "axles": [{"P": 30.0, "offset": 0.0}, {"P": 20.0, "offset": 1.8}]}],
        section={"E": 30000, "I": 2.0e9},
        cases={"D": "dead", "Lc": "live", "T": "live"},
        combinations={"strength": "asce7-lrfd", "service": "characteristic"})
    fig = envelope.plot(envelope.analyse(parse_text(text)))
    strip = fig.axes[0]
    spans = [a for a in strip.texts if getattr(a, "arrow_patch", None) is not None
             and a.arrowprops.get("arrowstyle") == "<->"]
    extents = sorted((round(min(a.xy[0], a.xyann[0]), 9), round(max(a.xy[0], a.xyann[0]), 9))
                     for a in spans)
    assert extents == [(0.0, 14.0), (5.0, 14.0)]
    downs = sorted(round(a.xy[0], 9) for a in strip.texts
                   if getattr(a, "arrow_patch", None) is not None
                   and a.arrowprops.get("arrowstyle") == "-|>")
    assert downs == [0.0, 1.8, 5.0]   # the train's two axles, the concentrated load
    key = [t.get_text() for t in fig.legends[0].get_texts()]
    assert "moving load" in key
    assert not any("other" in t.get_text() for t in strip.texts)


SPRINGS = beam_text(
    [6.0, 6.0, 4.5],
    [{"type": "pinned", "width": 0.4}, {"type": "spring", "k_vertical": 4.0e4, "width": 0.4},
     {"type": "spring", "k_vertical": 9.0e4, "width": 0.4}, {"type": "pinned", "width": 0.4}],
    [{"case": "D", "type": "uniform", "spans": "all", "w": 22.0},
     {"case": "L", "type": "uniform", "spans": "all", "w": 14.0},
     {"case": "D", "type": "moment", "spans": 2, "M": -60.0, "at": 2.0},
     {"case": "T", "type": "settlement", "support": 3, "delta": 0.006}],
    section={"E": 30000, "I": 9.0e9},
    cases={"D": "dead", "L": "live", "T": "settlement"},
    combinations={"strength": "en1990-6.10", "service": "characteristic"},
    patterning={"method": "exhaustive"}, output={"moment_plot": "tension-side"},
    top={"title": "Two springs, one settling 6 mm, a point moment, tension side"})


def test_springs_with_a_settlement_case_and_a_point_moment_on_the_tension_side() -> None:
    """Both springs drawn where they settle, the settlement case's lane named in full,
    the point moment drawn and keyed, every label clear and pointing at its value."""
    fig = envelope.plot(envelope.analyse(parse_text(SPRINGS)))
    strip = fig.axes[0]
    lanes = [t.get_text() for t in strip.texts]
    assert any(t.startswith("T settlement") for t in lanes), lanes
    key = [t.get_text() for t in fig.legends[0].get_texts()]
    for name in ("vertical spring", "applied moment", "settlement", "spring settlement"):
        assert name in key
    assert sum(t.startswith("spring settles") for t in _label_texts(fig)) == 2
    assert fig.axes[1].yaxis_inverted()
    assert assert_labels_clear(fig) >= 10
    assert_labels_point_at_their_values(fig)


def test_the_readme_figure_is_the_bundled_demo_as_drawn_now(tmp_path: Path) -> None:
    """README shows docs/demo-envelope.png: it must be the figure `envelope run` draws
    for the bundled demo with this code, pixel for pixel."""
    import matplotlib.image as mpimg

    folder = envelope.write(envelope.analyse(envelope.load_case(str(DEMO))), tmp_path,
                            plots=True)
    drawn = mpimg.imread(folder / "envelope.png")
    shown = mpimg.imread(ROOT / "docs" / "demo-envelope.png")
    assert "docs/demo-envelope.png" in (ROOT / "README.md").read_text(encoding="utf-8")
    assert drawn.shape == shown.shape and np.array_equal(drawn, shown), (
        "docs/demo-envelope.png is out of date: python -m envelope run -o OUT -q, then copy "
        "OUT/demo-office-4span/envelope.png to docs/demo-envelope.png")



def _first_free_reference(ax_x: float, ax_y: float, w: float, h: float, up: float,
                          px_per_pt: float, frame: object,
                          placed: list[tuple[float, float, float, float]]
                          ) -> tuple[float, float] | None:
    """Every place of a label tested at once with numpy (the slow reference of
    :func:`envelope.plots._first_free`): the first free in the order rise, side,
    shift."""
    placed_array = np.array(placed)
    sides = np.array([up, -up])
    y0 = (ax_y + sides[None, :] * plots._RISES[:, None] * px_per_pt
          - np.where(sides > 0, 0.0, h)[None, :])[:, :, None]
    x0 = (ax_x + plots._SHIFTS * w)[None, None, :]
    x0, y0 = np.broadcast_arrays(x0, y0)
    x1, y1 = x0 + w, y0 + h
    free = ((x0 >= frame.x0) & (x1 <= frame.x1) & (y0 >= frame.y0)  # type: ignore[attr-defined]
            & (y1 <= frame.y1))  # type: ignore[attr-defined]
    if placed_array.size:
        b = placed_array.T[:, None, None, None, :]
        free &= ~((x0[..., None] < b[2]) & (b[0] < x1[..., None]) & (y0[..., None] < b[3])
                  & (b[1] < y1[..., None])).any(axis=-1)
    first = np.flatnonzero(free)
    if not first.size:
        return None
    return float(x0.flat[first[0]]), float(y0.flat[first[0]])


def test_label_places_are_those_of_testing_every_place_at_once() -> None:
    """The first free place of a label (plain floats, stopping at the first) is the
    corner the numpy reference finds testing every place at once, bit for bit: random
    frames crowded with random boxes, labels of random sizes on both sides, with and
    without any free place."""
    from matplotlib.transforms import Bbox

    rng = np.random.default_rng(3)
    found = missing = 0
    for _ in range(400):
        left, bottom = rng.uniform(0, 300, 2)
        frame = Bbox.from_extents(left, bottom, left + rng.uniform(50, 500),
                                  bottom + rng.uniform(20, 300))
        placed: list[tuple[float, float, float, float]] = []
        for _ in range(int(rng.integers(0, 40))):
            x, y = rng.uniform(frame.x0 - 20, frame.x1), rng.uniform(frame.y0 - 20, frame.y1)
            placed.append((x, y, x + rng.uniform(5, 80), y + rng.uniform(5, 30)))
        for _ in range(5):
            args = (rng.uniform(frame.x0, frame.x1), rng.uniform(frame.y0, frame.y1),
                    rng.uniform(5, 120), rng.uniform(6, 40), float(rng.choice([1.0, -1.0])),
                    110 / 72, frame)
            expected = _first_free_reference(*args, placed)
            assert plots._first_free(*args, placed) == expected
            found += expected is not None
            missing += expected is None
    assert found > 100 and missing > 100
