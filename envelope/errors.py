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
