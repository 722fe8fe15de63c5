"""``proofkit prove FILE``: prove the claims of a model, audited before reporting.

A claim is "proved" only when the audit accepted the final certificate text;
"refuted" when the audit accepted exact evidence (or a counterexample) that it
is false; otherwise "not proved", with the reason. ``--out DIR`` writes
certificate.json, proof.md, proof.tex (and phase.png for planar models) even
when some claims are not proved; the documents are rendered from the audit
report of this run (never re-audited). Exit 0 when all claims are proved, 1
otherwise, 2 on input errors (a missing file, a directory, a pipe or device,
an empty ``--out``), 3 on an internal error.

May import: the standard library at top level; ``proofkit`` (loading, the
proving run, the report) inside ``run``. Must never mark a claim proved
itself, import ``proofkit.audit.algebra`` or ``proofkit.audit.numbers``, or
open a path that is not a regular file (a FIFO would block).
"""

from __future__ import annotations

import argparse
import hashlib
import json
import sys
from pathlib import Path
from typing import Any

from proofkit.cli._common import add_command, clean, model_file, progress_printer

__all__ = ["STATUS_WORDS", "register", "run", "status_word", "write_outputs"]

STATUS_WORDS = ("proved", "refuted", "not proved")
_EXAMPLE = """example:
  proofkit prove pendulum.pk --out proof/
      proves each claim, audits the certificate once, and writes
      proof/certificate.json, proof/proof.md, proof/proof.tex (and proof/phase.png)
  proofkit prove pendulum.pk --json --quiet
      prints {"claims": [...], "summary": {...}} and nothing on stderr

exit codes: 0 all claims proved, 1 some claim refuted or not proved,
            2 bad input, 3 internal error (a bug)"""


def register(subparsers: Any) -> None:
    p = add_command(
        subparsers,
        "prove",
        summary="prove the claims of a model and write an audited certificate",
        description="Prove each claim of a model with the methods available; a claim counts "
        "as proved only after the audit accepted the certificate. Each claim ends as "
        "'proved', 'refuted' (with the evidence or counterexample) or 'not proved' (with "
        "the reason).",
        epilog=_EXAMPLE,
        func=run,
        json_help="print the claim results as JSON",
        quiet_help="no progress messages on stderr",
    )
    p.add_argument(
        "--out",
        metavar="DIR",
        help="write certificate.json, proof.md, proof.tex (and figures) into DIR",
    )


def status_word(status: str) -> str:
    """The one status vocabulary: proved / refuted / not proved."""
    if status in STATUS_WORDS:
        return status
    return "refuted" if "counterexample" in status else "not proved"


def _check_paths(file: str, out: str | None) -> None:
    """Refuse inputs that would block or silently do nothing, before any work."""
    from proofkit.errors import InputError

    model_file(file)
    if out is not None:
        if not out.strip():
            raise InputError("--out: the directory name is empty", hint="--out proof/")
        if Path(out).exists() and not Path(out).is_dir():
            raise InputError(f"--out {out}: cannot write there: it exists and is not a directory")


def write_outputs(run_result: Any, out: Path, command: str) -> list[Path]:
    """Write the certificate and the proof documents of an audited run into ``out``."""
    from proofkit import __version__
    from proofkit.report import DocumentMeta, phase_portrait, render_latex, render_markdown

    out.mkdir(parents=True, exist_ok=True)
    cert_path = out / "certificate.json"
    cert_path.write_text(run_result.text, encoding="utf-8")
    written = [cert_path]
    figure = None
    if phase_portrait(run_result.certificate, out / "phase.png"):
        figure = "phase.png"
        written.append(out / "phase.png")
    meta = DocumentMeta(
        command=command,
        certificate_sha256=hashlib.sha256(run_result.text.encode()).hexdigest(),
        version=__version__,
        figure=figure,
    )
    for name, render in (("proof.md", render_markdown), ("proof.tex", render_latex)):
        path = out / name
        path.write_text(render(run_result.certificate, run_result.audit, meta), encoding="utf-8")
        written.append(path)
    return written


def _summary(outcomes: Any) -> dict[str, int]:
    counts = dict.fromkeys(STATUS_WORDS, 0)
    for o in outcomes:
        counts[status_word(o.status)] += 1
    return counts


def summary_text(result: Any, sha256: str) -> str:
    """The text report of a run: one line per claim, then the counts and the audit."""
    lines = []
    for o in result.outcomes:
        word = status_word(o.status)
        method = f" [{o.method}]" if o.method and word != "not proved" else ""
        lines.append(f"{word:<10}  {clean(o.claim)}{method}: {clean(o.detail)}")
    c = _summary(result.outcomes)
    lines.append(
        f"{c['proved']} of {len(result.outcomes)} claim(s) proved, {c['refuted']} refuted, "
        f"{c['not proved']} not proved; certificate audited exactly once (sha256 {sha256[:16]})"
    )
    if not result.provenance.ok:
        lines.append("provenance problems: " + clean("; ".join(result.provenance.problems)))
    return "\n".join(lines)


def _json(result: Any, sha256: str) -> str:
    claims = []
    for o in result.outcomes:
        item = o.as_json()
        item["status"] = status_word(o.status)
        claims.append(item)
    data = {
        "claims": claims,
        "summary": _summary(result.outcomes),
        "certificate_sha256": sha256,
        "provenance_ok": bool(result.provenance.ok),
    }
    return json.dumps(data, indent=2)


def run(args: argparse.Namespace) -> int:
    _check_paths(args.file, args.out)
    from proofkit import load
    from proofkit.proofs import prove_model

    progress = progress_printer(getattr(args, "quiet", False))

    model = load(args.file)
    result = prove_model(model, progress)
    sha256 = hashlib.sha256(result.text.encode()).hexdigest()
    if args.out is not None:
        command = f"proofkit prove {args.file} --out {args.out}"
        try:
            for path in write_outputs(result, Path(args.out), command):
                progress(f"wrote {path}")
        except OSError as exc:
            print(f"error: cannot write into {args.out}: {exc}", file=sys.stderr)
            return 2
    print(_json(result, sha256) if args.json else summary_text(result, sha256))
    return 0 if result.all_proved and result.provenance.ok else 1
