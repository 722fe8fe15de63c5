"""``proofkit audit CERT``: re-verify a certificate in two labelled stages.

Stage 1 is the trusted core (:mod:`proofkit.audit`, standard library only).
Stage 2, provenance, re-parses the embedded model source and compares it
with the certificate; ``--core-only`` skips it. Exit 0 when every claim
checks, 1 when one is rejected (or provenance fails), 2 when the file is
unreadable or malformed. Top-level imports stay stdlib-only: the audit must
start without the parser, sympy or any solver.
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path
from typing import Any

__all__ = ["register", "run"]

MAX_BYTES = 64 * 1024 * 1024


def register(subparsers: Any) -> None:
    p = subparsers.add_parser(
        "audit",
        help="re-verify a certificate with exact arithmetic",
        description="Re-derive every fact of a certificate with exact arithmetic (stage 1), "
        "then check that it belongs to its embedded model source (stage 2).",
    )
    p.add_argument("certificate", metavar="CERT", help="certificate JSON file")
    p.add_argument("--json", action="store_true", help="print one JSON object to stdout")
    p.add_argument(
        "--core-only",
        action="store_true",
        help="run only the trusted exact check; skip re-parsing the model source",
    )
    p.set_defaults(func=run)


def _read(path: str) -> str:
    file = Path(path)
    if not file.is_file():
        raise OSError(f"{path}: no such file")
    if file.stat().st_size > MAX_BYTES:
        raise OSError(f"{path}: larger than {MAX_BYTES} bytes")
    return file.read_text(encoding="utf-8")


def run(args: argparse.Namespace) -> int:
    from proofkit.audit import FormatError, audit_text

    try:
        text = _read(args.certificate)
        report = audit_text(text)
    except (OSError, UnicodeDecodeError) as exc:
        print(f"error: cannot read the certificate: {exc}", file=sys.stderr)
        return 2
    except FormatError as exc:
        print(f"error: {args.certificate}: malformed certificate: {exc}", file=sys.stderr)
        return 2
    prov = None
    if not args.core_only:
        from proofkit.provenance import check_provenance

        prov = check_provenance(json.loads(text))
    ok = report.accepted and (prov is None or prov.ok)
    if args.json:
        out = {
            "certificate": args.certificate,
            "accepted": ok,
            "core": {
                "accepted": report.accepted,
                "claims": [
                    {
                        "statement": c.statement,
                        "status": c.status,
                        "method": c.method,
                        "failed_step": c.failed_step,
                        "message": c.message,
                        "checked": list(c.checked),
                    }
                    for c in report.claims
                ],
            },
            "provenance": None
            if prov is None
            else {"ok": prov.ok, "checked": list(prov.checked), "problems": list(prov.problems)},
        }
        print(json.dumps(out, indent=2))
        return 0 if ok else 1
    print("stage 1: trusted core (exact re-derivation of every stated fact)")
    for c in report.claims:
        if c.status == "rejected":
            print(f"  REJECTED  {c.statement}: failed at step '{c.failed_step}': {c.message}")
        elif c.status == "not claimed":
            print(f"  not proved (nothing to check)  {c.statement}: {c.message}")
        else:
            word = "accepted" if c.status == "accepted" else "accepted refutation (claim false)"
            print(f"  {word}  {c.statement}  [{c.method}; {len(c.checked)} checks]")
    if prov is None:
        print("stage 2: provenance skipped (--core-only)")
    else:
        print("stage 2: provenance (embedded model source re-parsed and compared)")
        for line in prov.checked:
            print(f"  ok  {line}")
        for line in prov.problems:
            print(f"  FAILED  {line}")
    print("result: certificate accepted" if ok else "result: certificate REJECTED")
    return 0 if ok else 1
