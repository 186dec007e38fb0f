"""An artist drawn once and then pasted as pixels, while it stays the same.

The key to the symbols (a matplotlib legend: an offset-box layout of handles and texts)
costs about a tenth of the envelope figure each time it is built and drawn, and most
beams of a batch have one of a few dozen sets of symbols.  :class:`Stamp` draws the
artist the first time, keeps the pixels it changed (with the background it was drawn
on) and, on the raster canvas of :mod:`envelope.glyphs`, pastes them the next time the
same key is asked for over the same background: the pixels are those of drawing it.
Anywhere else (SVG, PDF, another canvas, another background) the artist is drawn.
"""

from __future__ import annotations

from collections.abc import Callable, Hashable
from typing import Any

import numpy as np
from matplotlib.artist import Artist

from envelope.config import KEY_STAMPS
from envelope.glyphs import CachedTextRenderer

#: key -> (x0, y0 from the top, background RGBA, drawn pixels, changed mask).
_STAMPS: dict[Hashable, tuple[int, int, np.ndarray, np.ndarray, np.ndarray]] = {}
_PAD = 6  # pixels beyond the artist's extent (antialiased edges, markers past their box)


class Stamp(Artist):
    """Draws the artist ``make()`` builds for the present key (see the module docstring)."""

    def __init__(self, zorder: float) -> None:
        super().__init__()
        self.set_zorder(zorder)
        self.key: Hashable = None
        self.make: Callable[[], Artist | None] | None = None
        self.artist: Artist | None = None
        self._artist_key: Hashable = None

    def show(self, key: Hashable, make: Callable[[], Artist | None]) -> None:
        """Draw what ``make()`` builds, known by ``key`` (built only when drawn
        otherwise than from kept pixels)."""
        self.key, self.make = key, make
        self.stale = True

    def _built(self) -> Artist | None:
        if self._artist_key != self.key or self.artist is None:
            self.artist = self.make() if self.make is not None else None
            self._artist_key = self.key
        return self.artist

    def draw(self, renderer: Any) -> None:
        """Paste the kept pixels, or draw the artist (and keep its pixels)."""
        if not self.get_visible() or self.make is None:
            return
        raster = type(renderer) is CachedTextRenderer
        canvas = np.asarray(renderer.buffer_rgba()) if raster else None
        kept = _STAMPS.get(self.key) if raster else None
        if kept is not None and canvas is not None:
            x0, y0, background, pixels, changed = kept
            h, w = changed.shape
            region = canvas[y0: y0 + h, x0: x0 + w]
            if region.shape == background.shape and np.array_equal(region, background):
                region[changed] = pixels[changed]
                self.stale = False
                return
        artist = self._built()
        if artist is None:
            return
        if canvas is None:
            artist.draw(renderer)
            self.stale = False
            return
        box = artist.get_window_extent(renderer)
        height = canvas.shape[0]
        x0 = max(int(np.floor(box.x0)) - _PAD, 0)
        x1 = min(int(np.ceil(box.x1)) + _PAD, canvas.shape[1])
        y0 = max(height - int(np.ceil(box.y1)) - _PAD, 0)
        y1 = min(height - int(np.floor(box.y0)) + _PAD, height)
        before = canvas[y0:y1, x0:x1].copy()
        artist.draw(renderer)
        after = canvas[y0:y1, x0:x1].copy()
        changed = (after != before).any(axis=2)
        if len(_STAMPS) >= KEY_STAMPS:
            _STAMPS.pop(next(iter(_STAMPS)))
        _STAMPS[self.key] = (x0, y0, before, after, changed)
        self.stale = False
