"""Progress of a batch: a bar on a terminal, a plain line now and then otherwise."""

from __future__ import annotations

import math
import time
from collections.abc import Callable
from typing import TextIO

#: Seconds between progress lines when standard error is not a terminal.
PLAIN_INTERVAL = 10.0
#: Seconds between redraws of the progress bar on a terminal.
BAR_INTERVAL = 0.2


def _clock(seconds: float) -> str:
    h, rest = divmod(round(seconds), 3600)
    m, s = divmod(rest, 60)
    return f"{h}:{m:02d}:{s:02d}" if h else f"{m}:{s:02d}"


class Progress:
    """A progress bar with count, rate and time left on a terminal; a plain line every
    ``PLAIN_INTERVAL`` seconds (and at the end) otherwise."""

    def __init__(self, total: int, stream: TextIO, tty: bool | None = None,
                 clock: Callable[[], float] = time.monotonic, width: int = 28) -> None:
        self.total = total
        self.stream = stream
        self.tty = stream.isatty() if tty is None else tty
        self.clock = clock
        self.width = width
        self.start = clock()
        self.done = 0
        self.failed = 0
        self._shown = -math.inf
        self._drawn = 0  # characters on the bar line (terminal)

    def text(self) -> str:
        """The progress line: done of total, rate and time left."""
        elapsed = max(self.clock() - self.start, 1e-9)
        rate = self.done / elapsed
        left = (self.total - self.done) / rate if rate > 0 else math.nan
        parts = [f"{self.done}/{self.total} beams", f"{rate:.1f} beams/s"]
        if self.done < self.total:
            parts.append(f"{_clock(left)} left" if math.isfinite(left) else "-:-- left")
        else:
            parts.append(f"{_clock(elapsed)} elapsed")
        if self.failed:
            parts.append(f"{self.failed} failed")
        text = ", ".join(parts)
        if self.tty:
            filled = self.width * self.done // max(self.total, 1)
            text = "[" + "#" * filled + "-" * (self.width - filled) + "] " + text
        return text

    def _emit(self, force: bool = False) -> None:
        now = self.clock()
        interval = BAR_INTERVAL if self.tty else PLAIN_INTERVAL
        if not force and now - self._shown < interval:
            return
        self._shown = now
        text = self.text()
        if self.tty:
            self.stream.write("\r" + text.ljust(self._drawn))
            self._drawn = len(text)
        else:
            self.stream.write(f"batch: {text}\n")
        self.stream.flush()

    def _clear(self) -> None:
        if self.tty and self._drawn:
            self.stream.write("\r" + " " * self._drawn + "\r")
            self._drawn = 0

    def advance(self, n: int = 1, failed: int = 0) -> None:
        """Count ``n`` more files done (``failed`` of them failed) and show it."""
        self.done += n
        self.failed += failed
        self._emit()

    def note(self, line: str) -> None:
        """Print a line of its own (a failure), above the bar on a terminal."""
        self._clear()
        self.stream.write(line + "\n")
        self._shown = -math.inf
        self._emit()

    def close(self) -> None:
        """Show the final line."""
        if not self.total:
            return
        self._emit(force=True)
        if self.tty:
            self.stream.write("\n")
            self.stream.flush()


class _Silent(Progress):
    def _emit(self, force: bool = False) -> None:
        pass

    def note(self, line: str) -> None:
        pass

    def close(self) -> None:
        pass
