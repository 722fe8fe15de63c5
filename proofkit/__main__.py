"""``python -m proofkit`` runs the command line."""

from proofkit.cli import main

raise SystemExit(main())
