"""The shared pieces of a batch: its errors, the task tuple, entries, outcomes, the
summary, and the names of the files it writes under OUT."""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from envelope.errors import EnvelopeError

#: The manifest of a complete beam folder, written after every other file.
MANIFEST = ".complete.json"
#: The folder of the combined results under OUT; no beam may take this id.
COMBINED = "_all"

#: A task: (path the worker opens, path shown to the user, id from a quick read or None,
#: time limit in seconds or None, work limits (envelope.limits.WorkLimits) or None, and
#: optionally the file's hash and TOML document as the quick read found them, see
#: :attr:`Entry.parsed`).
Task = tuple[str, str, str | None, float | None, Any] | tuple[
    str, str, str | None, float | None, Any, tuple[str, bytes] | None]


class BatchError(EnvelopeError):
    """A batch that cannot start (bad paths, duplicate ids, an unusable cluster)."""


class DuplicateIdError(BatchError):
    """Two or more case files give the same beam id; one line per duplicate."""

    def __init__(self, lines: list[str]) -> None:
        self.lines = lines
        super().__init__(lines[0] if len(lines) == 1 else
                         f"{lines[0]} (and {len(lines) - 1} more)")


class ClusterError(EnvelopeError):
    """The cluster stopped answering in the middle of a batch (rerun to resume)."""

    exit_code = 1


@dataclass(frozen=True, slots=True)
class Entry:
    """One case file of the batch as the coordinating process sees it."""

    index: int            # discovery order
    path: str             # as shown to the user
    target: str           # as opened by a worker (absolute for a cluster)
    beam_id: str | None   # from a quick read of the file; None when it cannot be told
    sha256: str | None    # of the raw bytes; None when the file cannot be read
    #: the TOML document of those bytes, pickled (the worker's read of the file takes it
    #: when the file has not changed, instead of parsing it again); None when not parsed
    document: bytes | None = None

    def task(self, time_limit: float | None = None, work_limits: Any = None) -> Task:
        """The task this file is run as: target, path, id, the limits of its run and
        the document the quick read parsed."""
        parsed = None if self.sha256 is None or self.document is None else (
            self.sha256, self.document)
        return (self.target, self.path, self.beam_id, time_limit, work_limits, parsed)


@dataclass(frozen=True, slots=True)
class Outcome:
    """What a worker did with one case file (timings in seconds)."""

    path: str
    beam_id: str
    error: str | None = None          # None: written
    manifest: dict[str, Any] | None = None
    analyse_seconds: float = 0.0      # reading, checking and analysing the case
    write_seconds: float = 0.0        # api.write: the beam's own files
    batch_seconds: float = 0.0        # the batch's own writes: partition and manifest
    #: the beam's tables of the combined files (design, sizing, bars: those it wrote), by
    #: file stem, as Arrow IPC streams: combining reads none of them back
    tables: dict[str, bytes] | None = None


@dataclass
class Summary:
    """The result of :func:`run_batch`."""

    out: Path
    total: int = 0
    skipped: list[str] = field(default_factory=list)     # beam ids, unchanged
    not_cases: list[tuple[str, str]] = field(default_factory=list)  # (path, reason) left out
    outcomes: list[Outcome] = field(default_factory=list)
    seconds: float = 0.0                                 # wall time of the whole batch
    run_seconds: float = 0.0                             # wall time of the analysis part

    @property
    def written(self) -> list[Outcome]:
        """Files that were analysed and written."""
        return [o for o in self.outcomes if o.error is None]

    @property
    def failed(self) -> list[Outcome]:
        """Files that were refused or failed."""
        return [o for o in self.outcomes if o.error is not None]
