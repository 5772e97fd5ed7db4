"""``python -m symcluster``: the command line (see symcluster.cli)."""

from .cli import main

raise SystemExit(main())
