"""Proof documents (Markdown, LaTeX) and figures, rendered only from audited certificates.

:func:`render_markdown` and :func:`render_latex` take the certificate, the
audit report of exactly that certificate, and a :class:`DocumentMeta`; they
raise ``ValueError`` when the report does not match. Nothing here reads
solver output or decides validity, re-audits, or imports
``proofkit.audit.algebra`` / ``numbers``.

Importing this package is light: the document builder (sympy) is loaded on
first use of a document name, so drawing a portrait alone never loads sympy.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from proofkit.report.figures import phase_portrait

if TYPE_CHECKING:
    from proofkit.audit import AuditReport
    from proofkit.report.document import DocumentMeta, build_document

__all__ = ["DocumentMeta", "build_document", "phase_portrait", "render_latex", "render_markdown"]


def render_markdown(cert: dict[str, Any], audit: AuditReport, meta: DocumentMeta) -> str:
    """The proof document as Markdown with $...$ math."""
    from proofkit.report.document import build_document
    from proofkit.report.writers import to_markdown

    return to_markdown(build_document(cert, audit, meta))


def render_latex(cert: dict[str, Any], audit: AuditReport, meta: DocumentMeta) -> str:
    """The proof document as a standalone LaTeX file."""
    from proofkit.report.document import build_document
    from proofkit.report.writers import to_latex

    return to_latex(build_document(cert, audit, meta))


def __getattr__(name: str) -> object:
    if name in ("DocumentMeta", "build_document"):
        from proofkit.report import document

        return getattr(document, name)
    raise AttributeError(f"module 'proofkit.report' has no attribute {name!r}")
