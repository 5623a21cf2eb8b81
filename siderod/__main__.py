"""``python -m siderod`` runs the command line."""

from siderod.cli.main import main

raise SystemExit(main())
