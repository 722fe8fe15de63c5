"""``proofkit prove FILE``: prove the claims of a model, audited before reporting.

A claim is "proved" only when the audit accepted the final certificate text.
``--out DIR`` writes certificate.json, proof.md, proof.tex (and phase.png for
planar models) even when some claims are not proved. Exit 0 when all claims
are proved, 1 otherwise, 2 on input errors. Top-level imports are stdlib only.
"""

from __future__ import annotations

import argparse
import hashlib
import json
import sys
from pathlib import Path
from typing import Any

__all__ = ["register", "run", "write_outputs"]


def register(subparsers: Any) -> None:
    p = subparsers.add_parser(
        "prove",
        help="prove the claims of a model and write an audited certificate",
        description="Prove each claim of a model with the methods available (linearization "
        "for 'stable'/'unstable'); a claim counts as proved only after the audit accepted it.",
    )
    p.add_argument("file", metavar="FILE", help="model file (.pk)")
    p.add_argument("--json", action="store_true", help="print the claim results as JSON")
    p.add_argument(
        "--out",
        metavar="DIR",
        help="write certificate.json, proof.md, proof.tex (and figures) into DIR",
    )
    p.set_defaults(func=run)


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


def run(args: argparse.Namespace) -> int:
    from proofkit import load
    from proofkit.proofs import prove_model

    model = load(args.file)

    def progress(msg: str) -> None:
        print(f"proofkit: {msg}", file=sys.stderr)

    result = prove_model(model, progress)
    if args.out:
        command = f"proofkit prove {args.file} --out {args.out}"
        try:
            for path in write_outputs(result, Path(args.out), command):
                progress(f"wrote {path}")
        except OSError as exc:
            print(f"error: cannot write into {args.out}: {exc}", file=sys.stderr)
            return 2
    if args.json:
        print(json.dumps({"claims": [o.as_json() for o in result.outcomes]}, indent=2))
    else:
        for o in result.outcomes:
            method = f" [{o.method}]" if o.method else ""
            print(f"{o.status:>14}  {o.claim}{method}: {o.detail}")
        proved = sum(o.status == "proved" for o in result.outcomes)
        print(f"{proved} of {len(result.outcomes)} claim(s) proved; certificate audited exactly")
        if not result.provenance.ok:
            print("provenance problems: " + "; ".join(result.provenance.problems))
    return 0 if result.all_proved else 1
