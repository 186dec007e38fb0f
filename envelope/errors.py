"""The errors the engine raises on purpose.

Each carries a one-line message naming the file, the key path and the problem,
which the command line prints as is (exit status 2) with no traceback.
"""

from __future__ import annotations


class EnvelopeError(Exception):
    """Base of every deliberate error; ``str()`` is the one-line message."""

    exit_code = 2


class CaseError(EnvelopeError):
    """Bad input: names the file, the key path (``spans[2].length``) and the problem."""

    def __init__(self, source: str, key: str, problem: str) -> None:
        self.source = source
        self.key = key
        self.problem = problem
        where = f"{source}: {key}: " if key else f"{source}: "
        super().__init__(where + problem)


class UnstableBeamError(CaseError):
    """The beam is a mechanism; the message names the part that can move."""


class StaticsError(EnvelopeError):
    """A solve failed its equilibrium or residual check: a result that must not be used."""

    exit_code = 3


class EnvelopeWarning(UserWarning):
    """Something the engineer should know that does not stop the analysis (a nearly
    singular beam, a check that could not be made); raised through :mod:`warnings`, so
    a notebook shows it once and ``warnings.simplefilter("error", EnvelopeWarning)``
    turns it into an error."""


class OutputError(EnvelopeError):
    """The results cannot be written safely or at all: a symbolic link where the output
    folder holds its own files (exit 2), or a write that failed, such as a full disk
    (exit 1).  Nothing is left half-written."""

    def __init__(self, message: str, exit_code: int = 2) -> None:
        self.exit_code = exit_code
        super().__init__(message)
