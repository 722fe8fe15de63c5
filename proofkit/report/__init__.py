"""Proof documents (Markdown, LaTeX) and figures, rendered only from audited certificates.

:func:`render_markdown` and :func:`render_latex` take the certificate, the
audit report of exactly that certificate, and a :class:`DocumentMeta`; they
raise ``ValueError`` when the report does not match. Nothing here reads
solver output or decides validity.
"""

from typing import Any

from proofkit.audit import AuditReport
from proofkit.report.document import DocumentMeta, build_document
from proofkit.report.figures import phase_portrait
from proofkit.report.writers import to_latex, to_markdown

__all__ = ["DocumentMeta", "build_document", "phase_portrait", "render_latex", "render_markdown"]


def render_markdown(cert: dict[str, Any], audit: AuditReport, meta: DocumentMeta) -> str:
    """The proof document as Markdown with $...$ math."""
    return to_markdown(build_document(cert, audit, meta))


def render_latex(cert: dict[str, Any], audit: AuditReport, meta: DocumentMeta) -> str:
    """The proof document as a standalone LaTeX file."""
    return to_latex(build_document(cert, audit, meta))
