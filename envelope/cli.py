"""The command line: a group of subcommands, each imported only when it runs.

``envelope --help`` and ``envelope run --no-plots`` import nothing beyond click and
the modules of the command that runs (no matplotlib, no batch machinery).  A new
subcommand is one line in :data:`COMMANDS`: its name, where its click command lives
(``"module:attribute"``), and the one-line help that ``envelope -h`` shows without
importing it.  Every subcommand gets ``-h``, ``-q`` and ``-v`` (see
:mod:`envelope.commands.common`).

Every deliberate error is one line on standard error with exit status 2 (bad
input) or 3 (a failed statics check); nothing is written for a case that fails.
Set ENVELOPE_DEBUG=1 to see a traceback of an unexpected error.
"""

from __future__ import annotations

import importlib
from typing import Any

import click

from envelope.commands.common import (
    CONTEXT,
    add_common_options,
    end_pause,
    pause_collection,
    resume_collection,
    verbosity_options,
)

#: Subcommands: name -> ("module:attribute" of the click command, one-line help).
COMMANDS: dict[str, tuple[str, str]] = {
    "run": ("envelope.commands.run:run",
            "Analyse a case file (the bundled demo when none is given)."),
    "check": ("envelope.commands.check:check",
              "Check case files or folders without analysing them."),
    "plot": ("envelope.commands.plot:plot",
             "Redraw the figure of one result folder from its Parquet files."),
    "batch": ("envelope.batch.command:batch",
              "Analyse many case files into OUT/<id>/, combined in OUT/_all/."),
    "report": ("envelope.report.commands:report",
               "Write the calculation report of result folders OUT/<id>."),
    "export": ("envelope.report.commands:export",
               "Export the tables of a result folder or a batch to xlsx or csv."),
    "new": ("envelope.report.commands:new",
            "Write a commented template case file (or beam schedule)."),
    "schema": ("envelope.report.commands:schema",
               "Write the JSON Schema of the case file."),
    "influence": ("envelope.commands.influence:influence",
                  "Write the influence lines at one point of a beam (table and figure)."),
}


class LazyGroup(click.Group):
    """A click group whose subcommands are imported on first use from :data:`COMMANDS`.

    Cyclic garbage collection is paused while the modules load (see
    :func:`envelope.commands.common.pause_collection`): a command whose callback
    imports what it needs (``run``) resumes it itself once they are loaded (its
    ``resumes_collection`` attribute is True); any other resumes as soon as its module
    is imported."""

    def main(self, *args: Any, **kwargs: Any) -> Any:
        """Run the command line (as click does), collection paused while modules load.

        Run as the program (no ``args``: the process's own command line), the loaded
        objects stay set aside to the end: the process exits next, and its last
        collection need not walk them.  Called with ``args`` (in-process, as the tests
        do) everything is as it was before on return."""
        paused = pause_collection()
        program = (args[0] if args else kwargs.get("args")) is None
        try:
            return super().main(*args, **kwargs)
        finally:
            if paused:
                end_pause(keep_frozen=program)

    def list_commands(self, ctx: click.Context) -> list[str]:
        """Every subcommand's name, without importing any."""
        return sorted({*COMMANDS, *self.commands})

    def get_command(self, ctx: click.Context, cmd_name: str) -> click.Command | None:
        """The subcommand ``cmd_name``, imported now (None for an unknown name)."""
        if cmd_name in self.commands:
            return self.commands[cmd_name]
        if cmd_name not in COMMANDS:
            return None
        target, _ = COMMANDS[cmd_name]
        module, _, attribute = target.partition(":")
        command = getattr(importlib.import_module(module), attribute)
        if not getattr(command, "resumes_collection", False):
            resume_collection()
        add_common_options(command)
        self.commands[cmd_name] = command
        return command

    def format_commands(self, ctx: click.Context, formatter: click.HelpFormatter) -> None:
        """The Commands section of --help, from the registry's short help."""
        # the short help from the registry: listing the commands imports none of them
        rows = [(name, COMMANDS[name][1]) for name in sorted(COMMANDS)]
        rows += [(name, cmd.get_short_help_str(60)) for name, cmd in sorted(self.commands.items())
                 if name not in COMMANDS]
        if rows:
            with formatter.section("Commands"):
                formatter.write_dl(rows)


def _version(ctx: click.Context, _param: click.Parameter, value: bool) -> None:
    if not value or ctx.resilient_parsing:
        return
    from envelope import engine_version

    click.echo(f"envelope {engine_version()}")  # the version every result file carries
    ctx.exit()


@click.group(cls=LazyGroup, context_settings=CONTEXT)
@click.option("--version", is_flag=True, expose_value=False, is_eager=True, callback=_version,
              help="Show the version (as written into every result file) and exit.")
@verbosity_options
def main() -> None:
    """Load-pattern envelopes for continuous floor beams.

    Results are for checking by a licensed engineer and defer to local codes.
    """


if __name__ == "__main__":
    main(prog_name="envelope")
