"""Proof documents: rendered only from audited certificates, complete, and compilable."""

from __future__ import annotations

import copy
import shutil
import subprocess

import pytest

from proofkit.audit import audit_certificate
from proofkit.report import DocumentMeta, render_latex, render_markdown

from .test_cert_handwritten import motzkin_times_certificate, parrilo_lecture_certificate

META = DocumentMeta(
    command="proofkit prove test.pk --out out", certificate_sha256="0" * 64, version="0.1.0"
)


def test_markdown_walks_through_every_step(reversed_run) -> None:
    md = render_markdown(reversed_run.certificate, reversed_run.audit, META)
    for needle in (
        "## The model",
        "\\dot{x_{1}} &= -x_{2}",
        "J = \\begin{pmatrix} 0 & -1 \\\\ 1 & -1 \\end{pmatrix}",
        "The Routh array",
        "P = \\begin{pmatrix} \\frac{3}{2} & -\\frac{1}{2}",
        "Lyapunov's indirect method",
        "- [x] the Jacobian equals df/dx",
        "## Cautions",
        "qualified engineering review",
        "## Reproducibility",
        reversed_run.certificate["model"]["source_sha256"],
    ):
        assert needle in md, needle


def test_documents_refuse_a_certificate_the_audit_rejected(bistable_run) -> None:
    cert = copy.deepcopy(bistable_run.certificate)
    cert["claims"][0]["evidence"]["jacobian"][0][0] = "7"
    report = audit_certificate(cert)
    assert report.claims[0].status == "rejected"
    with pytest.raises(ValueError):
        render_markdown(cert, report, META)
    with pytest.raises(ValueError):
        render_latex(cert, bistable_run.audit, META)  # the report of another certificate


def test_sum_of_squares_document_shows_basis_gram_and_squares() -> None:
    cert = parrilo_lecture_certificate()
    md = render_markdown(cert, audit_certificate(cert), META)
    assert "Gram matrix p with basis" in md and "LDL'" in md
    # published: the polynomial p = x1^2 - x1 x2^2 + x2^4 + 1 (MIT 6.972 lecture notes,
    # Parrilo); computed by hand: the LDL' form of its Gram matrix [[1, 0, 0], [0, 1, -1/2],
    # [0, -1/2, 1]] in the basis (1, x1, x2^2) is p = 1 + (x1 - x2^2/2)^2 + 3/4 (x2^2)^2
    assert "\\left(-\\frac{1}{2} x_{2}^{2} + x_{1}\\right)^2" in md
    assert "\\frac{3}{4}\\left(x_{2}^{2}\\right)^2" in md
    big = motzkin_times_certificate()
    md_big = render_markdown(big, audit_certificate(big), META)
    assert "## Appendix: large Gram matrices" in md_big


@pytest.mark.skipif(shutil.which("pdflatex") is None, reason="pdflatex is not installed")
def test_every_generated_latex_compiles(tmp_path, sqrt_run, bistable_run) -> None:
    docs = {
        "sqrt": (sqrt_run.certificate, sqrt_run.audit),
        "bistable": (bistable_run.certificate, bistable_run.audit),
    }
    for name, cert in (
        ("sos", parrilo_lecture_certificate()),
        ("motzkin", motzkin_times_certificate()),
    ):
        docs[name] = (cert, audit_certificate(cert))
    for name, (cert, report) in docs.items():
        (tmp_path / f"{name}.tex").write_text(render_latex(cert, report, META))
        r = subprocess.run(
            ["pdflatex", "-interaction=nonstopmode", "-halt-on-error", f"{name}.tex"],
            cwd=tmp_path,
            capture_output=True,
            text=True,
            timeout=120,
        )
        assert r.returncode == 0, r.stdout[-2000:]
