"""Allow `python -m crosscheck`."""

from crosscheck.cli import main

raise SystemExit(main())
