"""The calculation report's envelope figure: drawn narrow for the A4 page (18.2 cm between
the margins of report.typ) so that it prints at about 1:1 with no text under 7 pt, its
value labels clear of one another and inside their panels for every demo, and without
touching the PNG figure drawn in the same process (kept figures are kept per width).

The 7 pt floor is common practice for the smallest legible text on a printed drawing
sheet (no standard is cited)."""

from __future__ import annotations

import re
from pathlib import Path

import matplotlib as mpl
import pytest
from click.testing import CliRunner
from matplotlib.figure import Figure
from matplotlib.text import Text
from test_figures import DEMO, _figure_cases, assert_labels_clear

import envelope
from envelope import plots, store
from envelope.cli import main
from envelope.report import collect

ROOT = Path(__file__).resolve().parents[1]
#: The width the report's page gives the figure: A4 (21 cm) less 2 x 1.4 cm margins.
PAGE_WIDTH_PT = (21.0 - 2 * 1.4) / 2.54 * 72.0


def _svg_sizes(svg: str) -> tuple[float, list[float]]:
    """The SVG's width (pt) and the font size of every text in it (SVG units = pt)."""
    width = float(re.search(r'<svg[^>]*\swidth="([0-9.]+)pt"', svg).group(1))  # type: ignore[union-attr]
    sizes = [float(s) for s in re.findall(r"font-size: ?([0-9.]+)px", svg)]
    return width, sizes


@pytest.fixture(scope="module")
def office(tmp_path_factory: pytest.TempPathFactory) -> Path:
    out = tmp_path_factory.mktemp("office")
    run = CliRunner().invoke(main, ["run", str(ROOT / "cases" / "office-4span-si.toml"),
                                    "-o", str(out), "--no-plots", "-q"])
    assert run.exit_code == 0, run.output
    return out / "office-4span-si"


def test_the_report_figure_is_narrow_and_prints_no_text_under_7_pt(
        office: Path, tmp_path: Path) -> None:
    svg = collect.figure_svg(office)
    width, sizes = _svg_sizes(svg)
    assert width == pytest.approx(plots.REPORT_WIDTH * 72.0)
    assert len(sizes) > 50 and "<text" in svg  # editable text, every text sized
    scale = PAGE_WIDTH_PT / width  # how report.typ prints it (width: 100%)
    assert min(sizes) * scale >= 7.0, (min(sizes), scale)
    # at most a page high with its heading and caption
    height = float(re.search(r'<svg[^>]*\sheight="([0-9.]+)pt"', svg).group(1))  # type: ignore[union-attr]
    assert height <= plots.REPORT_HEIGHT * 72.0 + 0.01
    # the PNG-width figure, as the report placed it before: its smallest text printed
    # at under 4 pt
    wide = plots.draw_results(store.read_results(office), tmp_path / "wide.svg",
                              durable=False).read_text(encoding="utf-8")
    wide_width, wide_sizes = _svg_sizes(wide)
    assert wide_width == pytest.approx(plots.WIDTH * 72.0)
    assert min(wide_sizes) * PAGE_WIDTH_PT / wide_width < 4.0


def _report_figure(cols: dict) -> Figure:
    """The report's figure as :func:`envelope.report.collect.figure_svg` draws it."""
    token = plots._SMALLEST.set(plots.REPORT_SMALLEST)
    try:
        with mpl.rc_context(plots.STYLE):
            return plots._build(cols, None, reuse=True, width=plots.REPORT_WIDTH,
                                height=plots.REPORT_HEIGHT)
    finally:
        plots._SMALLEST.reset(token)


@pytest.mark.parametrize("case", _figure_cases(), ids=[c.stem for c in _figure_cases()])
def test_every_demo_report_figure_has_labels_clear_and_its_text_on_the_figure(
        case: Path) -> None:
    cols = store.result_columns(envelope.tables(envelope.analyse(envelope.load_case(
        str(case)))))
    fig = _report_figure(cols)
    assert fig.get_figwidth() == plots.REPORT_WIDTH
    assert assert_labels_clear(fig) >= 4
    renderer = fig.canvas.get_renderer()
    frame = fig.bbox
    # tick labels: only those of the ticks drawn (within the view limits; the strip
    # draws no axis)
    shown = [axis for ax in fig.axes if ax.axison for axis in (ax.xaxis, ax.yaxis)]
    ticks = {id(t.label1) for axis in shown for t in [*axis.majorTicks, *axis.minorTicks]}
    drawn = [t.label1 for axis in shown for t in axis._update_ticks()]
    texts = [t for t in fig.findobj(Text) if id(t) not in ticks] + drawn
    for t in texts:
        if t.get_visible() and t.get_text().strip() and t.figure is not None:
            box = Text.get_window_extent(t, renderer)
            assert frame.x0 <= box.x0 and box.x1 <= frame.x1 + 0.5, t.get_text()
            assert frame.y0 <= box.y0 and box.y1 <= frame.y1 + 0.5, t.get_text()
            assert t.get_fontsize() >= plots.REPORT_SMALLEST, t.get_text()


@pytest.mark.parametrize("fast", [True, False], ids=["fast", "reference"])
def test_a_png_drawn_after_a_report_figure_is_unchanged(tmp_path: Path, fast: bool) -> None:
    cols = store.result_columns(envelope.tables(envelope.analyse(envelope.load_case(
        str(DEMO)))))
    before = plots.draw_results(cols, tmp_path / "before.png", durable=False, fast=fast)
    plots.draw_results(cols, tmp_path / "report.svg", durable=False,
                       width=plots.REPORT_WIDTH, smallest=plots.REPORT_SMALLEST,
                       height=plots.REPORT_HEIGHT)
    plots.draw_results(cols, tmp_path / "report.png", durable=False, fast=fast,
                       width=plots.REPORT_WIDTH, smallest=plots.REPORT_SMALLEST,
                       height=plots.REPORT_HEIGHT)
    after = plots.draw_results(cols, tmp_path / "after.png", durable=False, fast=fast)
    assert before.read_bytes() == after.read_bytes()
    # and the report's figure drawn in between is its own width
    assert (tmp_path / "report.svg").read_text(encoding="utf-8").count(
        f'width="{plots.REPORT_WIDTH * 72.0:g}pt"') == 1
