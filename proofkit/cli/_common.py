"""What every ``proofkit`` subcommand shares: its parser frame and its progress line.

``add_command`` makes a subcommand parser with the example epilog kept as
written, the model ``FILE`` argument, ``--json`` and ``--quiet``;
``model_file`` refuses a model path that is not a regular file before any
work; ``progress_printer`` gives the ``proofkit: ...`` progress function on stderr
(silent with ``--quiet``, control characters escaped so that model text cannot
rewrite the terminal). Standard library only: a command module must be cheap
to import, so this module never imports the package's heavy parts.
"""

from __future__ import annotations

import argparse
import os
import stat
import sys
from collections.abc import Callable
from typing import Any

__all__ = ["add_command", "clean", "model_file", "progress_printer"]


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


def model_file(path: str) -> None:
    """Refuse a model path that is missing, a directory, or not a regular file (a FIFO or
    device would block or never end), with an :class:`~proofkit.errors.InputError`."""
    from proofkit.errors import InputError

    try:
        mode = os.stat(path).st_mode
    except FileNotFoundError:
        raise InputError(f"{path}: no such file", hint="check the path") from None
    except OSError as err:
        raise InputError(f"{path}: cannot be read ({err.strerror or err})") from None
    if stat.S_ISDIR(mode):
        raise InputError(f"{path}: is a directory, not a model file")
    if not stat.S_ISREG(mode):
        raise InputError(
            f"{path}: is not a regular file (a pipe, device or socket)",
            hint="save the model to a file and give its path",
        )


def clean(text: str) -> str:
    """Printable text only: control characters could rewrite the terminal line."""
    return "".join(c if c.isprintable() else f"\\x{ord(c):02x}" for c in text)


def progress_printer(quiet: bool) -> Callable[[str], None]:
    """``proofkit: MESSAGE`` lines on stderr, or nothing when ``quiet``."""

    def say(msg: str) -> None:
        if not quiet:
            print(f"proofkit: {clean(msg)}", file=sys.stderr)

    return say
