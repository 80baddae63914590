"""The command line: ``main(argv)`` returns an exit code; ``command()`` is the console script."""

from bemcheck.cli.app import command, main

__all__ = ["command", "main"]
