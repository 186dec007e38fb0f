"""What every subcommand shares: ``-h``, ``-q``/``-v``, one-line errors and warnings.

A subcommand reads the verbosity with :func:`level` (-1 quiet, 0 normal, 1 and more
verbose) and prints through :func:`say`; it wraps its body in :func:`guard` so that a
deliberate error is one line and an exit status, never a traceback.
"""

from __future__ import annotations

import errno
import functools
import gc
import os
import sys
from collections.abc import Callable
from typing import Any, TypeVar

import click

from envelope.errors import EnvelopeError

F = TypeVar("F", bound=Callable[..., Any])

#: click context settings of the group and (inherited) of every subcommand.
CONTEXT: dict[str, Any] = {"help_option_names": ["-h", "--help"]}
_KEY = "envelope.verbosity"


def _set_quiet(ctx: click.Context, _param: click.Parameter, value: bool) -> None:
    if value:
        ctx.meta[_KEY] = -1


def _add_verbose(ctx: click.Context, _param: click.Parameter, value: int) -> None:
    if value and ctx.meta.get(_KEY, 0) >= 0:
        ctx.meta[_KEY] = ctx.meta.get(_KEY, 0) + value


def _options() -> list[click.Option]:
    return [
        click.Option(["-q", "--quiet"], is_flag=True, expose_value=False, callback=_set_quiet,
                     help="Print only what the command made (errors still go to stderr)."),
        click.Option(["-v", "--verbose"], count=True, expose_value=False,
                     callback=_add_verbose, help="Print more detail (repeat for more)."),
    ]


def verbosity_options(fn: F) -> F:
    """Decorator: ``-q``/``-v`` on a click command defined with decorators."""
    quiet, verbose = _options()
    fn = click.option(*verbose.opts, count=True, expose_value=False, callback=_add_verbose,
                      help=verbose.help)(fn)
    return click.option(*quiet.opts, is_flag=True, expose_value=False, callback=_set_quiet,
                        help=quiet.help)(fn)


def add_common_options(command: click.Command) -> None:
    """Give ``command`` (and a group's commands) ``-q``/``-v`` unless it has its own."""
    taken = {opt for p in command.params for opt in getattr(p, "opts", [])}
    if not taken & {"-q", "--quiet", "-v", "--verbose"}:
        command.params.extend(_options())
    if isinstance(command, click.Group):
        for sub in command.commands.values():
            add_common_options(sub)


def level() -> int:
    """The verbosity of the running command: -1 quiet, 0 normal, 1+ verbose."""
    ctx = click.get_current_context(silent=True)
    return 0 if ctx is None else int(ctx.meta.get(_KEY, 0))


def say(message: str, at: int = 0, err: bool = False) -> None:
    """Print ``message`` when the verbosity is at least ``at``."""
    if level() >= at:
        click.echo(message, err=err)


def fail(message: str, code: int) -> None:
    """One line on standard error, then exit with ``code``."""
    click.echo(f"error: {message}", err=True)
    sys.exit(code)


def guard(fn: F) -> F:
    """Turn deliberate errors into one line and an exit status, never a traceback.  A
    closed pipe (``envelope run | head``) is left to click, which exits quietly."""

    @functools.wraps(fn)
    def wrapper(*args: Any, **kwargs: Any) -> Any:
        try:
            return fn(*args, **kwargs)
        except EnvelopeError as exc:
            fail(str(exc), exc.exit_code)
        except OSError as exc:
            if exc.errno == errno.EPIPE:
                raise
            if os.environ.get("ENVELOPE_DEBUG"):
                raise
            fail(f"internal error ({type(exc).__name__}): {exc}", 1)
        except Exception as exc:  # an unexpected error: still one line
            if os.environ.get("ENVELOPE_DEBUG"):
                raise
            fail(f"internal error ({type(exc).__name__}): {exc}", 1)

    return wrapper  # type: ignore[return-value]


# -- cyclic garbage collection while the modules load ---------------------------------
#
# Loading numpy, pyarrow and the engine makes some 30 000 objects that live as long as
# the process (modules, classes, functions); the cyclic collector would walk them over
# and over as they are made (about 30 ms of CPU, a tenth of a small run).  So the
# command line pauses it while the modules load and, once a command has what it needs,
# sets those objects aside for good (``gc.freeze``) and collects as usual from then on.
# Run as the program, the process exits with them still aside, so the collection of
# the interpreter's exit does not walk them either.
_PAUSE: dict[str, bool] = {"paused": False, "frozen": False}


def pause_collection() -> bool:
    """Pause cyclic garbage collection while modules load (False: it was off already,
    nothing done).  :func:`end_pause` undoes it."""
    if not gc.isenabled():
        return False
    gc.disable()
    _PAUSE["paused"] = True
    return True


def resume_collection() -> None:
    """The running command has loaded its modules: set the objects made so far aside
    from collection (they live as long as the process) and collect again."""
    if _PAUSE["paused"]:
        _PAUSE["paused"] = False
        gc.freeze()
        _PAUSE["frozen"] = True
        gc.enable()


def end_pause(keep_frozen: bool = False) -> None:
    """The command is over: collection as it was before :func:`pause_collection`
    (every object back under it, for a caller that goes on in the same process; with
    ``keep_frozen``, for a process about to exit, the set-aside objects stay aside)."""
    if _PAUSE["frozen"]:
        _PAUSE["frozen"] = False
        if not keep_frozen:
            gc.unfreeze()
    if _PAUSE["paused"]:
        _PAUSE["paused"] = False
        gc.enable()
