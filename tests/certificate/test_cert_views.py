"""The typed views of a certificate, and the one-audit-per-run contract."""

from __future__ import annotations

import pytest

import proofkit
import proofkit.audit.core
import proofkit.proofs
from proofkit.certificate import read
from proofkit.provenance import check_provenance
from proofkit.report import DocumentMeta, render_markdown
from tests.models import DUFFING


def test_views_give_the_structure_read_only(bistable_run) -> None:
    view = read(bistable_run.text)
    assert view.version == 2 and view.model is not None
    assert view.model.states == ("x", "y")
    origin, right = view.claims
    assert (origin.kind, origin.equilibrium, origin.scope) == ("stable", "origin", "nominal")
    assert (right.kind, right.equilibrium, right.point) == ("unstable", "right", ("1", "0"))
    assert (origin.status, origin.method, origin.theorem) == (
        "proved",
        "linearization",
        "indirect-method-stability",
    )
    assert origin.evidence["jacobian"] == (("0", "1"), ("-1", "-1"))  # computed by hand
    with pytest.raises(TypeError):
        origin.evidence["jacobian"] = ()  # type: ignore[index]


def test_prove_audits_once_and_documents_never_again(monkeypatch) -> None:
    calls = []
    real = proofkit.proofs.audit_text

    def counting(text: str, *args: object) -> object:
        calls.append(text)
        return real(text, *args)

    monkeypatch.setattr(proofkit.proofs, "audit_text", counting)
    run = proofkit.proofs.prove_model(proofkit.parse(DUFFING, "b.pk"))
    assert calls == [run.text]

    def no_audit(*_args: object) -> object:
        raise AssertionError("the documents re-audited the certificate")

    monkeypatch.setattr(proofkit.audit.core, "_audit", no_audit)
    meta = DocumentMeta(command="test", certificate_sha256="0" * 64, version="0")
    assert "origin stable" in render_markdown(run.certificate, run.audit, meta)


def test_provenance_reuses_a_model_parsed_from_the_same_text(monkeypatch, bistable_run) -> None:
    model = proofkit.parse(DUFFING, "b.pk")

    def no_parse(*_args: object) -> object:
        raise AssertionError("parsed again")

    monkeypatch.setattr(proofkit, "parse", no_parse)
    report = check_provenance(bistable_run.text, model)
    assert report.ok and any("reused" in line for line in report.checked)
    with pytest.raises(AssertionError, match="parsed again"):  # no model given: parsed
        check_provenance(bistable_run.text, None)
