"""What every ``proofkit`` subcommand shares: its parser frame and its progress line.

``add_command`` makes a subcommand parser with the example epilog kept as
written, the model ``FILE`` argument, ``--json`` and ``--quiet``;
``progress_printer`` gives the ``proofkit: ...`` progress function on stderr
(silent with ``--quiet``, control characters escaped so that model text cannot
rewrite the terminal). Standard library only: a command module must be cheap
to import, so this module never imports the package's heavy parts.
"""

from __future__ import annotations

import argparse
import sys
from collections.abc import Callable
from typing import Any

__all__ = ["add_command", "clean", "progress_printer"]


def add_command(
    subparsers: Any,
    name: str,
    *,
    summary: str,
    description: str,
    epilog: str,
    func: Callable[[argparse.Namespace], int],
    json_help: str,
    quiet_help: str = "no progress lines on stderr",
    file_optional: bool = False,
) -> argparse.ArgumentParser:
    """A subcommand parser with ``FILE``, ``--json`` and ``--quiet``; ``func`` runs it."""
    p = subparsers.add_parser(
        name,
        help=summary,
        description=description,
        epilog=epilog,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    if file_optional:
        p.add_argument("file", metavar="FILE", nargs="?", help="model file (.pk) to start from")
    else:
        p.add_argument("file", metavar="FILE", help="model file (.pk)")
    p.add_argument("--json", action="store_true", help=json_help)
    p.add_argument("--quiet", action="store_true", help=quiet_help)
    p.set_defaults(func=func)
    return p


def clean(text: str) -> str:
    """Printable text only: control characters could rewrite the terminal line."""
    return "".join(c if c.isprintable() else f"\\x{ord(c):02x}" for c in text)


def progress_printer(quiet: bool) -> Callable[[str], None]:
    """``proofkit: MESSAGE`` lines on stderr, or nothing when ``quiet``."""

    def say(msg: str) -> None:
        if not quiet:
            print(f"proofkit: {clean(msg)}", file=sys.stderr)

    return say
