"""``python -m heatloom`` runs the command line."""

from .cli import main

raise SystemExit(main())
