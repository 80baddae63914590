"""`python -m bemcheck` is the `bemcheck` command."""

from bemcheck.cli import main

raise SystemExit(main())
