"""Regenerate worked/<name>.certificate.json and worked/<name>.proof.md (and basin pictures).

Run from the repository root after changing a worked model or the prover:

    .venv/bin/python tests/certificate/make_worked.py

``tests/contracts/test_worked_golden.py`` compares a fresh ``build`` with the
committed files.

Not collected by pytest (no ``test_`` prefix). The documents are rendered
only from the audited certificate, like ``proofkit prove --out``. For the
models in ``BASIN_PICTURES`` it also draws ``worked/<name>.basin.png``: the
phase portrait (matplotlib Agg, deterministic) with the equilibria of the
exact survey, the claims' sets and the certified sublevel sets of the claims
the audit accepted; the document refers to the picture.
"""

from __future__ import annotations

import hashlib
import sys
from pathlib import Path
from typing import Any

import proofkit
from proofkit.proofs import prove_model
from proofkit.report import DocumentMeta, render_markdown

ROOT = Path(__file__).resolve().parents[2]
BASIN_PICTURES = ("swing_machine", "culture_uptake")  # non-polynomial fields with basin claims


def picture_name(pk_file: Path) -> str | None:
    """The basin picture a worked document refers to (None: no picture)."""
    return f"{pk_file.stem}.basin.png" if pk_file.stem in BASIN_PICTURES else None


def basin_picture(model: proofkit.Model, run: Any, path: Path) -> None:
    """The portrait with the certified basins of the claims the audit accepted (cycle
    claims' sets, which may cover the whole domain, are left to the document)."""
    from proofkit.analysis.surveying import survey
    from proofkit.report._portrait_data import model_portrait_data
    from proofkit.report.figures import save_portrait

    accepted = [c for c, v in zip(run.certificate["claims"], run.audit.claims, strict=True)
                if v.status == "proved" and c["claim"]["kind"] in ("attracts", "stable",
                                                                   "unstable")]  # fmt: skip
    data = model_portrait_data(model, survey(model), {**run.certificate, "claims": accepted})
    save_portrait(data, path)


def build(pk_file: Path, picture: Path | None = None) -> tuple[str, str, str]:
    """Fresh certificate text, proof.md text and a one-line outcome for one worked model;
    the basin picture (models in ``BASIN_PICTURES``) is drawn into ``picture`` if given."""
    rel = pk_file.relative_to(ROOT).as_posix()
    model = proofkit.parse(pk_file.read_text(encoding="utf-8"), rel)
    run = prove_model(model)
    figure = picture_name(pk_file)
    if figure is not None and picture is not None:
        basin_picture(model, run, picture)
    cert_name = f"{pk_file.stem}.certificate.json"
    meta = DocumentMeta(
        command=f"proofkit prove {rel} --out DIR",
        certificate_sha256=hashlib.sha256(run.text.encode()).hexdigest(),
        version=proofkit.__version__,
        certificate_name=cert_name,
        figure=figure,
    )
    md = render_markdown(run.certificate, run.audit, meta)
    line = f"{rel}: " + ", ".join(f"{o.claim} -> {o.status}" for o in run.outcomes)
    return run.text, md, line


def regenerate(pk_file: Path) -> str:
    name = pk_file.stem
    cert, md, line = build(pk_file, pk_file.parent / f"{name}.basin.png")
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
