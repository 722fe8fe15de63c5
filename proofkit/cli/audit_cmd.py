"""``proofkit audit CERT``: re-verify a certificate in two labelled stages.

Stage 1 is the trusted core (:mod:`proofkit.audit`, standard library only): it
checks every claim's theorem schema and prints, per claim, the sentence it
rendered itself from the claim's structure. Stage 2, provenance, parses the
embedded model source and compares it with the certificate; ``--core-only``
skips it and says what was therefore not checked. ``--model FILE`` also
requires the embedded source to be byte-identical to FILE (SHA-256 shown).
Every result names the certificate file and the SHA-256 of the model source;
all certificate text is escaped before printing.

Exit 0 when every claim checks, 1 when one is rejected (or provenance or
``--model`` fails), 2 when a file is unreadable or malformed. Top-level
imports stay stdlib-only: the audit must start without the parser or sympy.
"""

from __future__ import annotations

import argparse
import hashlib
import json
import os
import stat
import sys
from typing import Any

__all__ = ["register", "run"]

MAX_BYTES = 16 * 1024 * 1024
EXAMPLE = """example:
  proofkit audit worked/valve_latch.certificate.json --model worked/valve_latch.pk
  proofkit audit certificate.json --core-only --json"""


def register(subparsers: Any) -> None:
    p = subparsers.add_parser(
        "audit",
        help="re-verify a certificate with exact arithmetic",
        description="Re-derive every fact of a certificate with exact arithmetic (stage 1), "
        "then check that it belongs to its embedded model source (stage 2).",
        epilog=EXAMPLE,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("certificate", metavar="CERT", help="certificate JSON file")
    p.add_argument("--json", action="store_true", help="print one JSON object to stdout")
    p.add_argument(
        "--core-only",
        action="store_true",
        help="run only the trusted exact check; skip re-parsing the model source",
    )
    p.add_argument(
        "--model",
        metavar="FILE",
        help="require the embedded model source to be byte-identical to FILE",
    )
    p.add_argument(
        "--time-limit",
        type=float,
        default=8.0,
        metavar="SECONDS",
        help="checking time for the whole certificate (default 8); claims not checked "
        "in time are rejected, never accepted",
    )
    p.add_argument("--verbose", action="store_true", help="list every hypothesis checked, in words")
    p.add_argument("--quiet", action="store_true", help="print only the result line")
    p.set_defaults(func=run)


def read_bytes(path: str, what: str) -> bytes:
    """A regular file's bytes (bounded); OSError with a plain message otherwise."""
    try:
        info = os.stat(path)
    except FileNotFoundError:
        raise OSError(f"{path}: no such file") from None
    if stat.S_ISDIR(info.st_mode):
        raise OSError(f"{path}: is a directory, not a {what} file")
    if not stat.S_ISREG(info.st_mode):
        raise OSError(f"{path}: not a regular file (a pipe or device?); give a {what} file")
    if info.st_size > MAX_BYTES:
        raise OSError(f"{path}: larger than {MAX_BYTES} bytes")
    with open(path, "rb") as fh:
        return fh.read(MAX_BYTES + 1)


def _model_check(text: str, model_path: str) -> tuple[bool, str]:
    from proofkit.audit import escape

    try:
        wanted = read_bytes(model_path, "model")
    except OSError as exc:
        raise OSError(escape(exc)) from None
    try:
        source = json.loads(text)["model"]["source"]
        embedded = source.encode("utf-8", "surrogatepass")
    except (KeyError, TypeError, AttributeError):
        return False, "the certificate embeds no model source"
    mine, theirs = hashlib.sha256(wanted).hexdigest(), hashlib.sha256(embedded).hexdigest()
    name = escape(model_path)
    if mine == theirs:
        return True, f"the embedded source is byte-identical to {name} (SHA-256 {mine})"
    return False, f"the embedded source (SHA-256 {theirs}) is not {name} (SHA-256 {mine})"


def run(args: argparse.Namespace) -> int:
    from proofkit.audit import FormatError, audit_text, escape

    name = escape(args.certificate)
    try:
        raw = read_bytes(args.certificate, "certificate")
        text = raw.decode("utf-8")
        report = audit_text(text, max(0.1, min(args.time_limit, 3600.0)))
        model_ok = None if args.model is None else _model_check(text, args.model)
    except (OSError, UnicodeDecodeError) as exc:
        print(f"error: cannot read: {escape(exc)}", file=sys.stderr)
        return 2
    except FormatError as exc:
        print(f"error: {name}: malformed certificate: {escape(exc)}", file=sys.stderr)
        return 2
    prov = None
    if not args.core_only:
        from proofkit.provenance import check_provenance

        prov = check_provenance(text)
    ok = report.accepted and (prov is None or prov.ok) and (model_ok is None or model_ok[0])
    cert_sha = hashlib.sha256(raw).hexdigest()
    if args.json:
        print(json.dumps(_as_json(args, report, prov, model_ok, ok, cert_sha), indent=2))
    else:
        _print(args, report, prov, model_ok, ok, cert_sha)
    return 0 if ok else 1


def _as_json(args: Any, report: Any, prov: Any, model_ok: Any, ok: bool, sha: str) -> dict:
    from proofkit.audit import NOT_CHECKED_WITHOUT_PROVENANCE

    return {
        "certificate": args.certificate,
        "certificate_sha256": sha,
        "model_file": report.model_file,
        "model_source_sha256": report.source_sha256,
        "accepted": ok,
        "core": {
            "accepted": report.accepted,
            "claims": [
                {
                    "sentence": c.sentence,
                    "statement": c.statement,
                    "status": c.status,
                    "kind": c.kind,
                    "scope": c.scope,
                    "method": c.method,
                    "theorem": c.theorem,
                    "failed_step": c.failed_step,
                    "message": c.message,
                    "checked": list(c.checked),
                    "hint": c.hint,
                }
                for c in report.claims
            ],
        },
        "provenance": None
        if prov is None
        else {"ok": prov.ok, "checked": list(prov.checked), "problems": list(prov.problems)},
        "not_checked": [NOT_CHECKED_WITHOUT_PROVENANCE] if prov is None else [],
        "model_match": None if model_ok is None else {"ok": model_ok[0], "detail": model_ok[1]},
    }


WORDS = {"proved": "PROVED", "refuted": "REFUTED (the claim is false)", "rejected": "REJECTED"}


def _print(args: Any, report: Any, prov: Any, model_ok: Any, ok: bool, sha: str) -> None:
    from proofkit.audit import NOT_CHECKED_WITHOUT_PROVENANCE, escape

    say = print if not args.quiet else (lambda *_a, **_k: None)
    say(f"certificate: {escape(args.certificate)} (SHA-256 {sha})")
    say(f"model: {escape(report.model_file)} (source SHA-256 {report.source_sha256})")
    say("stage 1: trusted core (exact re-derivation of every stated fact)")
    for c in report.claims:
        if c.status == "rejected":
            say(f"  REJECTED  {c.sentence}")
            say(f"            failed at step '{escape(c.failed_step)}': {escape(c.message)}")
        elif c.status == "not proved":
            say(f"  not proved (nothing to check)  {c.sentence}: {escape(c.message)}")
        else:
            checks = f"[{escape(c.theorem)}; {len(c.checked)} checks]"
            say(f"  {WORDS[c.status]}  {c.sentence}  {checks}")
        if c.hint:
            say(f"            note: {escape(c.hint)}")
        if args.verbose:
            for line in c.checked:
                say(f"            checked: {escape(line)}")
    if prov is None:
        say("stage 2: provenance skipped (--core-only)")
        say(f"  {NOT_CHECKED_WITHOUT_PROVENANCE}")
    else:
        say("stage 2: provenance (embedded model source parsed and compared)")
        for line in prov.checked:
            say(f"  ok  {escape(line)}")
        for line in prov.problems:
            say(f"  FAILED  {escape(line)}")
    if model_ok is not None:
        say(f"  {'ok' if model_ok[0] else 'FAILED'}  --model: {model_ok[1]}")
    verdict = "certificate accepted" if ok else "certificate REJECTED"
    print(f"result: {verdict} ({escape(args.certificate)}; model source SHA-256 "
          f"{report.source_sha256})")  # fmt: skip
