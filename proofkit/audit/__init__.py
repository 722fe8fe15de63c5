"""The small trusted checker: exact re-verification of proofkit certificates.

Public entry points: :func:`audit_text` and :func:`audit_certificate` return an
:class:`AuditReport`; malformed input raises :class:`FormatError`;
:func:`escape` makes any certificate text safe to print; :data:`LIMITS` lists
the size limits that bound the audit's work.

Theorem schemas register in :mod:`proofkit.audit.schemas` (see its docstring
and DEVELOPERS.md). This package must never import the parser, the search
code, solvers, sympy or lark; it uses the standard library only.
"""

from proofkit.audit.core import (
    FORMAT_VERSION,
    NOT_CHECKED_WITHOUT_PROVENANCE,
    THEOREMS,
    AuditReport,
    ClaimVerdict,
    FormatError,
    audit_certificate,
    audit_text,
    certificate_digest,
)
from proofkit.audit.read import LIMITS, escape

__all__ = [
    "FORMAT_VERSION",
    "LIMITS",
    "NOT_CHECKED_WITHOUT_PROVENANCE",
    "THEOREMS",
    "AuditReport",
    "ClaimVerdict",
    "FormatError",
    "audit_certificate",
    "audit_text",
    "certificate_digest",
    "escape",
]
