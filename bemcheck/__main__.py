"""`python -m bemcheck` is the `bemcheck` command."""

from bemcheck.cli import command

raise SystemExit(command())
