"""Regenerate worked/<name>.certificate.json and worked/<name>.proof.md.

Run from the repository root after changing a worked model or the prover:

    .venv/bin/python tests/certificate/make_worked.py

``tests/contracts/test_worked_golden.py`` compares a fresh ``build`` with the
committed files.

Not collected by pytest (no ``test_`` prefix). The documents are rendered
only from the audited certificate, like ``proofkit prove --out``.
"""

from __future__ import annotations

import hashlib
import sys
from pathlib import Path

import proofkit
from proofkit.proofs import prove_model
from proofkit.report import DocumentMeta, render_markdown

ROOT = Path(__file__).resolve().parents[2]


def build(pk_file: Path) -> tuple[str, str, str]:
    """Fresh certificate text, proof.md text and a one-line outcome for one worked model."""
    rel = pk_file.relative_to(ROOT).as_posix()
    model = proofkit.parse(pk_file.read_text(encoding="utf-8"), rel)
    run = prove_model(model)
    cert_name = f"{pk_file.stem}.certificate.json"
    meta = DocumentMeta(
        command=f"proofkit prove {rel} --out DIR",
        certificate_sha256=hashlib.sha256(run.text.encode()).hexdigest(),
        version=proofkit.__version__,
        certificate_name=cert_name,
    )
    md = render_markdown(run.certificate, run.audit, meta)
    line = f"{rel}: " + ", ".join(f"{o.claim} -> {o.status}" for o in run.outcomes)
    return run.text, md, line


def regenerate(pk_file: Path) -> str:
    cert, md, line = build(pk_file)
    name = pk_file.stem
    (pk_file.parent / f"{name}.certificate.json").write_text(cert, encoding="utf-8")
    (pk_file.parent / f"{name}.proof.md").write_text(md, encoding="utf-8")
    return line


def main() -> int:
    files = sorted((ROOT / "worked").glob("*.pk"))
    for f in files:
        print(regenerate(f))
    return 0 if files else 1


if __name__ == "__main__":
    sys.exit(main())
