"""``python -m placer`` runs the command line."""

from placer.cli import main

raise SystemExit(main())
