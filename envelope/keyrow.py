"""The figure's key laid out and drawn from kept entries, without a legend per set of
symbols (the batch figure's raster canvas).

The key is a matplotlib legend: for each set of symbols a new ``Legend``, its handles,
texts and some twenty offset boxes are built, and its layout is found by asking every
box its extent, level by level, each time it is measured or drawn: about 10 ms a
new set (15 ms where the glyphs are new too), and a batch worker meets a new set every
beam or two.  Here each entry (a symbol's handle and its name) is built once, for every
figure of the same resolution, by a legend of that entry alone, and a set's key places
the kept entries as the legend would place them: the same packing
(``matplotlib.offsetbox``'s packers: each entry its handle and text side by side on
their baseline, entries in columns, columns side by side, the legend's border pad round
them) computed in the same order from the same extents, anchored by the legend's own
rule (a legend without entries kept per figure and size), and each entry drawn by its
own handle box and its text (as ``Text.draw`` draws it:
:func:`envelope.drawlist.draw_text`).  The layout of a set costs a few hundred
microseconds.

``tests/test_fast_figure.py`` compares the pixels with those of the legend drawn by
matplotlib, for every set of symbols in one and in two rows.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from typing import Any
from weakref import WeakKeyDictionary

import numpy as np
from matplotlib import offsetbox
from matplotlib.artist import Artist
from matplotlib.transforms import Bbox

from envelope.drawlist import draw_text

#: An entry: (its handle box, its text box, the text box's extent per pixels a point).
_Entry = tuple[Any, Any, dict[float, Bbox]]


def _hpack(bboxes: Sequence[Bbox], sep: float, pad: float
           ) -> tuple[Bbox, list[tuple[float, float]]]:
    """``HPacker._get_bbox_and_child_offsets`` (baseline, fixed; pixels)."""
    (y0, y1), yoffsets = offsetbox._get_aligned_offsets(  # type: ignore[attr-defined]
        [b.intervaly for b in bboxes], None, "baseline")
    width, xoffsets = offsetbox._get_packed_offsets([b.width for b in bboxes], None, sep,
                                                    "fixed")
    x0 = bboxes[0].x0
    xoffsets -= ([b.x0 for b in bboxes] - x0)
    return (Bbox.from_bounds(x0, y0, width, y1 - y0).padded(pad),
            [*zip(xoffsets, yoffsets, strict=True)])


def _vpack(bboxes: Sequence[Bbox], sep: float, pad: float, align: str
           ) -> tuple[Bbox, list[tuple[float, float]]]:
    """``VPacker._get_bbox_and_child_offsets`` (fixed; pixels)."""
    (x0, x1), xoffsets = offsetbox._get_aligned_offsets(  # type: ignore[attr-defined]
        [b.intervalx for b in bboxes], None, align)
    height, yoffsets = offsetbox._get_packed_offsets([b.height for b in bboxes], None, sep,
                                                     "fixed")
    yoffsets = height - (yoffsets + [b.y1 for b in bboxes])
    ydescent = yoffsets[0]
    yoffsets = yoffsets - ydescent
    return (Bbox.from_bounds(x0, -ydescent, x1 - x0, height).padded(pad),
            [*zip(xoffsets, yoffsets, strict=True)])


#: The entries by name and resolution (see the module docstring), made on the first
#: figure that shows them and drawn on any: an entry's boxes and artists depend on the
#: figure only through its resolution.
_ENTRIES: dict[tuple[str, float], _Entry] = {}
#: Each figure's legends without entries, by figure size (a kept figure takes the sizes
#: of its beams' panel heights): where the legend's anchor is.
_ANCHORS: WeakKeyDictionary[Any, dict[tuple[float, ...], Any]] = WeakKeyDictionary()


class KeyRow(Artist):
    """The key of ``names`` on ``fig``: ``legend_of(names)`` makes the legend it
    stands for on ``fig`` (given one name, the legend of that entry alone; given none,
    the legend without entries, whose anchor and spacing serve every key)."""

    def __init__(self, fig: Any, names: Sequence[str], ncols: int,
                 legend_of: Callable[[Sequence[str]], Any]) -> None:
        super().__init__()
        self.set_figure(fig)
        self.names = list(names)
        self.ncols = ncols
        self.legend_of = legend_of
        self._placed: tuple[Any, list[tuple[Any, Any, tuple[float, float],
                                            tuple[float, float]]], Bbox] | None = None

    def _entry(self, name: str, fig: Any) -> _Entry:
        entry = _ENTRIES.get((name, fig.dpi))
        if entry is None:
            legend = self.legend_of([name])
            ((handlebox, textbox),) = [item.get_children() for column in
                                       legend._legend_handle_box.get_children()
                                       for item in column.get_children()]
            entry = _ENTRIES[(name, fig.dpi)] = (handlebox, textbox, {})
        return entry

    def _anchor(self, fig: Any) -> Any:
        """The figure's legend without entries (its anchor is every key's)."""
        size = tuple(fig.bbox.bounds)
        kept = _ANCHORS.setdefault(fig, {})
        legend = kept.get(size)
        if legend is None:
            if len(kept) >= 64:  # a bounded memory: the sizes of a few dozen layouts
                kept.clear()
            legend = kept[size] = self.legend_of([])
        return legend

    def _layout(self, renderer: Any) -> tuple[list[tuple[Any, Any, tuple[float, float],
                                                         tuple[float, float]]], Bbox]:
        """Each entry's handle box and text box with their offsets (pixels), and the
        key's extent, as the legend of these names lays them out (``Legend.draw``)."""
        fig: Any = self.get_figure(root=True)
        key = (renderer.points_to_pixels(1.0), tuple(fig.bbox.bounds))
        if self._placed is not None and self._placed[0] == key:
            return self._placed[1], self._placed[2]
        dpicor = renderer.points_to_pixels(1.0)
        legend = self._anchor(fig)
        fontsize = legend._fontsize
        items = []
        for name in self.names:
            handlebox, textbox, extents = self._entry(name, fig)
            text_box = extents.get(dpicor)
            if text_box is None:  # (measuring it also sets its baseline transform)
                text_box = extents[dpicor] = textbox.get_bbox(renderer)
            bbox, offsets = _hpack([handlebox.get_bbox(renderer), text_box],
                                   legend.handletextpad * fontsize * dpicor, 0.0 * dpicor)
            items.append((bbox, offsets, handlebox, textbox))
        columns = []
        for rows in filter(len, np.array_split(np.arange(len(items)), self.ncols)):
            bbox, offsets = _vpack([items[i][0] for i in rows],
                                   legend.labelspacing * fontsize * dpicor, 0.0 * dpicor,
                                   "baseline")
            columns.append((bbox, offsets, rows))
        row_box, row_offsets = _hpack([c[0] for c in columns],
                                      legend.columnspacing * fontsize * dpicor, 0.0 * dpicor)
        box, (box_offset,) = _vpack([row_box], legend.labelspacing * fontsize * dpicor,
                                    legend.borderpad * fontsize * dpicor,
                                    legend._alignment)
        # OffsetBox.draw: each child at its parent's offset plus its own, level by level
        px, py = legend._findoffset(box.width, box.height, -box.x0, -box.y0, renderer)
        placed = []
        rx, ry = px + box_offset[0], py + box_offset[1]
        for (_, offsets, rows), (cox, coy) in zip(columns, row_offsets, strict=True):
            cx, cy = rx + cox, ry + coy
            for i, (iox, ioy) in zip(rows, offsets, strict=True):
                ix, iy = cx + iox, cy + ioy
                (hox, hoy), (tox, toy) = items[i][1]
                placed.append((items[i][2], items[i][3], (ix + hox, iy + hoy),
                               (ix + tox, iy + toy)))
        extent = box.translated(px, py)
        self._placed = (key, placed, extent)
        return placed, extent

    def get_window_extent(self, renderer: Any = None) -> Bbox:
        """The key's extent (pixels), as the legend's."""
        if renderer is None:
            fig: Any = self.get_figure(root=True)
            renderer = fig._get_renderer()
        return self._layout(renderer)[1]

    def draw(self, renderer: Any) -> None:
        """Each entry's handle, then its text, in the legend's order."""
        if not self.get_visible():
            return
        for handlebox, textbox, handle_at, text_at in self._layout(renderer)[0]:
            handlebox.set_offset(handle_at)
            handlebox.draw(renderer)
            textbox.set_offset(text_at)
            draw_text(renderer, textbox._text)
        self.stale = False
