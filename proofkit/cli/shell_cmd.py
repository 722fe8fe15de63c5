"""``proofkit shell [FILE]``: the interactive shell (see :mod:`proofkit.shell`).

On a terminal: prompt, history, completion. With piped standard input: reads
statements and commands line by line without prompt decorations. Exit 0 at
``quit`` or end of input; errors inside the session are shown and the session
goes on. Top-level imports are stdlib only.

It must never evaluate typed text as Python.
"""

from __future__ import annotations

import argparse
from typing import Any

from proofkit.cli._common import add_command

__all__ = ["register", "run"]

EXAMPLE = """example:
  proofkit shell worked/valve_latch.pk
  printf 'state x\\ndx/dt = -x^3\\nequilibria\\nquit\\n' | proofkit shell
  printf 'equilibria\\n' | proofkit shell model.pk --json --quiet

inside the shell:
  state x, y
  dx/dt = y
  dy/dt = -x - y + x^3/3
  equilibrium origin at x = 0, y = 0
  equilibria
  linearize origin
  try origin stable
  help
"""


def register(subparsers: Any) -> None:
    add_command(
        subparsers,
        "shell",
        summary="type a model line by line and ask questions interactively",
        description="An interactive session: type model statements line by line (re-typing "
        "one with the same name replaces it) and ask questions with commands (show, "
        "equilibria, linearize, try, prove, basin, cycles, write, portrait, load, save, edit, "
        "drop, undo, help). "
        "Errors are shown with a caret and the session goes on.",
        epilog=EXAMPLE,
        func=run,
        json_help="answer each input line with one JSON object (input, ok, output lines, results)",
        file_optional=True,
    )


def run(args: argparse.Namespace) -> int:
    from proofkit.shell import run_shell

    return run_shell(args.file, quiet=args.quiet, json_lines=args.json)
