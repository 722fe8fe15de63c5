"""worked/: each example's committed certificate audits and re-proving reproduces it."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

import proofkit
from proofkit.proofs import prove_model

from .conftest import full_audit_ok

WORKED = Path(__file__).resolve().parents[2] / "worked"
MODELS = sorted(WORKED.glob("*.pk"))


def test_worked_examples_exist() -> None:
    assert len(MODELS) >= 3, "worked/ should hold at least three models"


@pytest.mark.parametrize("pk_file", MODELS, ids=[p.stem for p in MODELS])
def test_committed_certificate_audits_and_statuses_reproduce(pk_file: Path) -> None:
    cert_file = pk_file.with_name(f"{pk_file.stem}.certificate.json")
    doc_file = pk_file.with_name(f"{pk_file.stem}.proof.md")
    assert cert_file.is_file(), f"run tests/certificate/make_worked.py for {pk_file.name}"
    assert doc_file.is_file()
    text = cert_file.read_text(encoding="utf-8")
    assert full_audit_ok(text)
    committed = json.loads(text)
    assert committed["model"]["source"] == pk_file.read_text(encoding="utf-8"), (
        "the committed certificate is about an older model text: regenerate it"
    )
    run = prove_model(proofkit.load(str(pk_file)))
    assert [c["status"] for c in run.certificate["claims"]] == [
        c["status"] for c in committed["claims"]
    ]
    doc = doc_file.read_text(encoding="utf-8")
    for c in committed["claims"]:
        assert c["statement"] in doc


@pytest.mark.parametrize("pk_file", MODELS, ids=[p.stem for p in MODELS])
def test_certificates_agree_with_the_independent_equilibrium_survey(pk_file: Path) -> None:
    # computed: proofkit.analysis (Groebner bases, its own exact Routh array) is a separate
    # implementation; where it decides a declared equilibrium, the certificate must agree.
    from proofkit.analysis import survey

    model = proofkit.load(str(pk_file))
    verdicts = {e.name: e.verdict for e in survey(model).equilibria if e.name}
    committed = json.loads(pk_file.with_name(f"{pk_file.stem}.certificate.json").read_text())
    for claim, c in zip(model.claims, committed["claims"], strict=True):
        if c["status"] == "not proved" or claim.target not in verdicts:
            continue
        if claim.kind in ("attracts", "globally stable"):
            shown = "stable" if c["status"] == "proved" else None  # attracting: stable
        elif c["status"] == "proved":
            shown = claim.kind
        else:
            shown = {"stable": "unstable"}.get(claim.kind, "stable")
        if shown is not None:
            assert verdicts[claim.target] == shown, claim.text
