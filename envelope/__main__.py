"""``python -m envelope``: the command line."""

from envelope.cli import main

main(prog_name="envelope")
