"""``python -m proofkit`` runs the command line.

It must never do more than call :func:`proofkit.cli.main`.
"""

from proofkit.cli import main

raise SystemExit(main())
