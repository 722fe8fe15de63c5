"""``proofkit basin FILE EQUILIBRIUM``: the largest certified region of attraction.

Searches a Lyapunov function of the given degree whose sublevel set
``{V <= level}`` is shown to lie in the equilibrium's region of attraction,
makes it exact, and audits the certificate before saying "proved". Progress
(degree, iteration, level, time) goes to stderr unless ``--quiet``. Exit 0
when a set was certified and audited, 1 when none was, 2 on bad input.
Rational fields ``N_i / D_i`` are searched multiplied through by their
denominators, with the denominators certified positive on the set (method
``sublevel-set-rational``); other non-polynomial fields are "not proved" with
the reason. Top-level imports are standard library only.
"""

from __future__ import annotations

import argparse
import json
import sys
import time
from pathlib import Path
from typing import Any

from proofkit.errors import InputError

__all__ = ["register", "run"]

EXAMPLE = """example:
  proofkit basin oscillator.pk origin --degree 6 --out roa/

  writes roa/certificate.json (audited), roa/proof.md, roa/proof.tex and
  roa/phase.png (the certified set over the phase portrait), and prints
  V, the level and the area of {V <= level}.

  proofkit basin culture_uptake.pk steady --json

  a rational field (s/(1 + s)): searched multiplied by its denominator 1 + s,
  which is certified positive on the set."""

DEGREES = (2, 4, 6, 8, 10)


def register(subparsers: Any) -> None:
    p = subparsers.add_parser(
        "basin",
        help="certify the largest region of attraction of an equilibrium",
        description="Search V of the given degree whose sublevel set {V <= level} lies in the "
        "region of attraction of EQUILIBRIUM (sum-of-squares certificates made exact); the set "
        "counts as certified only after the audit accepted its certificate. Polynomial and "
        "rational fields (the latter multiplied through by their denominators, certified "
        "positive on the set).",
        epilog=EXAMPLE,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("file", metavar="FILE", help="model file (.pk)")
    p.add_argument("equilibrium", metavar="EQUILIBRIUM", help="name of a declared equilibrium")
    p.add_argument(
        "--degree", type=int, default=4, metavar="D", help="degree of V: 2, 4, 6, 8 or 10 (4)"
    )
    p.add_argument(
        "--budget",
        type=float,
        default=40.0,
        metavar="SECONDS",
        help="search time per degree before the best set is made exact (40)",
    )
    p.add_argument("--json", action="store_true", help="print the result as JSON")
    p.add_argument("--out", metavar="DIR", help="write certificate, documents and picture to DIR")
    p.add_argument("--quiet", action="store_true", help="no progress on stderr")
    p.set_defaults(func=run)


def _check(args: argparse.Namespace, model: Any) -> None:
    if not 0 < args.budget <= 3600:
        raise InputError(f"--budget {args.budget}: expected seconds in (0, 3600]")
    if args.degree not in DEGREES:
        raise InputError(f"--degree {args.degree}: expected one of {', '.join(map(str, DEGREES))}")
    names = [e.name for e in model.equilibria]
    if args.equilibrium not in names:
        import difflib

        close = difflib.get_close_matches(args.equilibrium, names, n=1)
        hint = f"; did you mean {close[0]!r}?" if close else ""
        known = ", ".join(names) or "none"
        raise InputError(
            f"{args.file}: no equilibrium named {args.equilibrium!r} (declared: {known}){hint}"
        )


def _write(result: Any, out: Path, args: argparse.Namespace) -> list[Path]:
    from types import SimpleNamespace

    from proofkit.cli.prove_cmd import write_outputs

    command = f"proofkit basin {args.file} {args.equilibrium} --degree {args.degree} --out {out}"
    run_like = SimpleNamespace(text=result.text, certificate=result.certificate, audit=result.audit)
    return write_outputs(run_like, out, command)


def _print_text(result: Any) -> None:
    if result.status != "proved":
        print(f"not proved: {result.reason}")
        return
    size = result.size or {}
    print(f"certified region of attraction of {result.equilibrium} (degree {result.degree}):")
    print(f"  {{ {result.v_text} <= {result.level} }}")
    if size:
        print(f"  {size['kind']} {size['value']:.6g} +- {size['error']:.2g} ({size['method']})")
    share = 1 - result.solver_seconds / result.seconds if result.seconds else 0.0
    print(f"  {result.seconds:.1f} s ({share:.0%} outside the solver); certificate audited")
    if result.certificate_path:
        print(f"  certificate: {result.certificate_path}")


def run(args: argparse.Namespace) -> int:
    from proofkit import load
    from proofkit.proofs.basin import estimate_basin

    model = load(args.file)
    _check(args, model)
    t0 = time.perf_counter()

    def progress(msg: str) -> None:
        if not args.quiet:
            print(f"proofkit: [{time.perf_counter() - t0:6.1f} s] {msg}", file=sys.stderr)

    result = estimate_basin(
        model,
        args.equilibrium,
        degree=args.degree,
        progress=progress,
        seconds_per_degree=args.budget,
    )
    if args.out and result.status == "proved":
        try:
            written = _write(result, Path(args.out), args)
        except OSError as exc:
            print(f"error: cannot write into {args.out}: {exc}", file=sys.stderr)
            return 2
        result.certificate_path = str(written[0])
        for path in written:
            progress(f"wrote {path}")
    if args.json:
        print(json.dumps(result.as_json(), indent=2))
    else:
        _print_text(result)
    return 0 if result.status == "proved" else 1
