"""The command line: ``proofkit <command> ...``; a thin layer over the library.

Exit codes: 0 success, 1 a claim or check did not hold, 2 bad input,
3 an internal error (a bug: please report it).

It must never import heavy modules at top level, nor show a traceback
without the exit-code-3 message that names it a bug.
"""

from __future__ import annotations

import argparse
import os
import sys
import traceback
from collections.abc import Sequence

from proofkit import __version__
from proofkit.errors import InputError

EXIT_OK, EXIT_FAILED, EXIT_INPUT, EXIT_INTERNAL = 0, 1, 2, 3

# Each command module exposes ``register(subparsers)`` that adds its parser and
# sets ``func`` (args -> exit code) as the parser's default.
_COMMANDS = ("inspect", "prove", "audit", "basin", "orbit", "portrait", "shell")


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="proofkit",
        description="Exact, independently audited stability proofs for nonlinear systems.",
    )
    parser.add_argument("--version", action="version", version=f"proofkit {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    import importlib

    for name in _COMMANDS:
        try:
            module = importlib.import_module(f"proofkit.cli.{name}_cmd")
        except ModuleNotFoundError as exc:  # a command not built yet
            if exc.name != f"proofkit.cli.{name}_cmd":
                raise
            continue
        module.register(sub)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "func", None):
        parser.print_help()
        return EXIT_INPUT
    try:
        return int(args.func(args))
    except InputError as err:
        print(str(err), file=sys.stderr)
        return EXIT_INPUT
    except KeyboardInterrupt:
        print("interrupted", file=sys.stderr)
        return EXIT_FAILED
    except BrokenPipeError:  # the reader went away (e.g. `| head`): stop quietly
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        return EXIT_FAILED
    except Exception:
        traceback.print_exc()
        print(
            "internal error: this is a bug in proofkit; please report it with the model file "
            "and the command above.",
            file=sys.stderr,
        )
        return EXIT_INTERNAL
