"""``python -m oneport`` runs the command-line tool."""

from .cli import main

raise SystemExit(main())
