"""The subcommands of the command line, one module each (registered in
:data:`envelope.cli.COMMANDS`, imported only when they run), and their shared options
and error handling in :mod:`envelope.commands.common`."""
