"""Regenerate worked/<name>.certificate.json and worked/<name>.proof.md.

Run from the repository root after changing a worked model or the prover:

    /work/venv/bin/python tests/certificate/make_worked.py

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


def regenerate(pk_file: Path) -> str:
    rel = pk_file.relative_to(ROOT).as_posix()
    model = proofkit.parse(pk_file.read_text(encoding="utf-8"), rel)
    run = prove_model(model)
    name = pk_file.stem
    cert_name = f"{name}.certificate.json"
    (pk_file.parent / cert_name).write_text(run.text, encoding="utf-8")
    meta = DocumentMeta(
        command=f"proofkit prove {rel} --out DIR",
        certificate_sha256=hashlib.sha256(run.text.encode()).hexdigest(),
        version=proofkit.__version__,
        certificate_name=cert_name,
    )
    md = render_markdown(run.certificate, run.audit, meta)
    (pk_file.parent / f"{name}.proof.md").write_text(md, encoding="utf-8")
    return f"{rel}: " + ", ".join(f"{o.claim} -> {o.status}" for o in run.outcomes)


def main() -> int:
    files = sorted((ROOT / "worked").glob("*.pk"))
    for f in files:
        print(regenerate(f))
    return 0 if files else 1


if __name__ == "__main__":
    sys.exit(main())
