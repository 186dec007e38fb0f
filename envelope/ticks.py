"""A panel's ticks and axis labels drawn as a few artists instead of one set per tick.

matplotlib keeps a ``Tick`` per tick value (two marks, a grid line and two labels, each
an artist) and on every draw moves each one, measures each label twice (once to place
the axis label, once inside the spine's extent) and draws each in turn: about a quarter
of the time of the envelope figure in a batch worker.  :class:`TickLayer` draws the same
things from the axis' own locator and formatter, with the tick's own styles: every mark
of a side as one line of markers, every number from one kept text, the axis label where
matplotlib puts it (``labelpad`` beyond the tick numbers and the spine).  The pixels are
matplotlib's (tests/test_ticks.py compares the two drawings).

Only the kept figures of :func:`envelope.plots.draw_results` use it; a figure drawn for
a notebook keeps matplotlib's own axes (pan and zoom move their ticks).  An axis this
layer cannot draw the same way (an offset or a scale factor beside its numbers, a
non-linear scale) is drawn by matplotlib.
"""

from __future__ import annotations

from typing import Any
from weakref import WeakKeyDictionary

import numpy as np
from matplotlib.artist import Artist
from matplotlib.lines import Line2D
from matplotlib.transforms import Bbox

from envelope.drawlist import draw_line, draw_string, draw_text
from envelope.glyphs import KeptText


class _Side:
    """One axis of a panel: its marks and numbers styled as the axis' first tick."""

    def __init__(self, axis: Any) -> None:
        tick = axis.get_major_ticks(1)[0]
        self.axis = axis
        self.level = axis.axis_name == "x"   # x: numbers under the marks
        self.marks = Line2D([], [], linestyle="none")
        self.marks.update_from(tick.tick1line)
        self.marks.set_linestyle("none")
        self.marks.set_figure(axis.get_figure(root=False))
        self.number = KeptText(0.0, 0.0, "", parse_math=False)
        self.number.update_from(tick.label1)
        self.number.set_figure(axis.get_figure(root=False))
        self.show_marks = tick.tick1line.get_visible()
        self.show_numbers = tick.label1.get_visible()
        self.size_px = tick._size * axis.get_figure(root=True).dpi / 72.0
        self.out = tick.get_tickdir() == "out"

    def values(self) -> tuple[np.ndarray, list[str]] | None:
        """The tick values inside the view and their numbers, as matplotlib's
        ``Axis._update_ticks`` chooses them; None where matplotlib must draw.  Panels
        sharing their x axis share its locator and formatter: the values found for one
        serve the others while the view and the axis length are the same."""
        axis = self.axis
        if axis.get_scale() != "linear":
            return None
        # the locator's tick space is the axis' length (and the numbers' size, the same
        # in every panel)
        box = axis.axes.bbox
        key = (tuple(axis.get_view_interval()), box.width if self.level else box.height)
        last = _LAST.get(axis.major)
        if last is not None and last[0] == key:
            return last[1]
        found = self._values(axis)
        _LAST[axis.major] = (key, found)
        return found

    @staticmethod
    def _values(axis: Any) -> tuple[np.ndarray, list[str]] | None:
        locs = np.asarray(axis.get_majorticklocs(), dtype=float)
        labels = axis.major.formatter.format_ticks(locs)
        if axis.major.formatter.get_offset():
            return None
        low, high = sorted(axis.get_view_interval())
        close = (high - low) * 1e-10
        inside = (locs >= low - close) & (locs <= high + close)
        return locs[inside], [s for s, k in zip(labels, inside, strict=True) if k]

    def draw(self, renderer: Any, locs: np.ndarray, labels: list[str]
             ) -> list[tuple[float, float, float, float]]:
        """Draw the marks and numbers; the numbers' extents (pixels: x0, y0, x1, y1)."""
        zeros = np.zeros(locs.size)
        if self.show_marks and locs.size:
            draw_line(renderer, self.marks, *((locs, zeros) if self.level else (zeros, locs)))
        boxes: list[tuple[float, float, float, float]] = []
        if not self.show_numbers:
            return boxes
        number: Any = self.number
        fixed = float(number._y if self.level else number._x)
        for loc, text in zip(locs.tolist(), labels, strict=True):
            x, y = (loc, fixed) if self.level else (fixed, loc)
            box = draw_string(renderer, number, x, y, text)
            if text:
                if box is None:  # (not drawn: its extent where it stands)
                    number.set_position((x, y))
                    number.set_text(text)
                    b = number.get_window_extent(renderer)
                    box = (b.x0, b.y0, b.x1, b.y1)
                boxes.append(box)
        return boxes


#: The last values found per ticker (locator and formatter), with what they depend on.
_LAST: WeakKeyDictionary[Any, tuple[Any, tuple[np.ndarray, list[str]] | None]] = \
    WeakKeyDictionary()
#: The spines' drawn extents (pixels) per spine and axes position: with the axis hidden
#: a spine's extent is its line along the whole side of the axes, whatever the view.
_FRAMES: WeakKeyDictionary[Any, tuple[Any, Bbox]] = WeakKeyDictionary()


class TickLayer(Artist):
    """The ticks, tick numbers and axis labels of one panel (see the module docstring).

    Added to the panel's axes by :func:`install`, which hides the axes' own axis
    artists; drawn where the axes draw their axes (below the curves)."""

    zorder = 1.5  # matplotlib's place for the axes' axis artists (axisbelow "line")

    def __init__(self, ax: Any) -> None:
        super().__init__()
        self.ax = ax
        self.sides = [_Side(ax.xaxis), _Side(ax.yaxis)]
        self.set_figure(ax.get_figure(root=False))

    def draw(self, renderer: Any) -> None:
        """Each axis' marks and numbers, then its label (matplotlib's order)."""
        if not self.get_visible():
            return
        renderer.open_group("ticks", gid=self.get_gid())
        for side in self.sides:
            axis = side.axis
            found = side.values()
            if found is None:  # as matplotlib draws it
                axis.set_visible(True)
                axis.draw(renderer)
                axis.set_visible(False)
                continue
            locs, labels = found
            boxes = side.draw(renderer, locs, labels)
            label = axis.label
            if not label.get_visible() or not label.get_text():
                continue
            if axis._autolabelpos:
                self._place_label(axis, side, boxes, bool(locs.size))
            draw_text(renderer, label)
        renderer.close_group("ticks")
        self.stale = False

    def _place_label(self, axis: Any, side: _Side,
                     boxes: list[tuple[float, float, float, float]], ticks: bool) -> None:
        """The axis label ``labelpad`` beyond the numbers and the spine with its marks,
        as ``Axis._update_label_position`` places it (left and bottom axes)."""
        spine = self.ax.spines["bottom" if side.level else "left"]
        key = tuple(self.ax.bbox.bounds)
        kept = _FRAMES.get(spine)
        if kept is None or kept[0] != key:
            kept = _FRAMES[spine] = (key, spine.get_window_extent().frozen())
        frame = kept[1].frozen()
        if ticks and side.show_marks:
            reach = side.size_px if side.out else 0.0
            if side.level:
                frame.y0 -= reach
            else:
                frame.x0 -= reach
        # the lower (left) edge of the union of the numbers and the frame, as
        # ``Bbox.union`` finds it (each box's lower corner: Bbox.ymin, Bbox.xmin)
        pad = axis.labelpad * self.ax.get_figure(root=True).dpi / 72.0
        x, y = axis.label.get_position()
        if side.level:
            low = min([min(b[1], b[3]) for b in boxes] + [frame.ymin])
            axis.label.set_position((x, low - pad))
        else:
            low = min([min(b[0], b[2]) for b in boxes] + [frame.xmin])
            axis.label.set_position((low - pad, y))


def install(ax: Any) -> TickLayer:
    """Draw ``ax``'s ticks and axis labels with a :class:`TickLayer` (set up once per
    axes, after its tick styles)."""
    layer = TickLayer(ax)
    ax.add_artist(layer)
    ax.xaxis.set_visible(False)
    ax.yaxis.set_visible(False)
    return layer
