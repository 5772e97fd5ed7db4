"""``python -m symcluster``: the command line (see symcluster.cli)."""

from symcluster.cli import main

raise SystemExit(main())
