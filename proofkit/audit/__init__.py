"""The small trusted checker: exact re-verification of proofkit certificates.

Public entry points: :func:`audit_text` and :func:`audit_certificate` return an
:class:`AuditReport`; malformed input raises :class:`FormatError`.

This package must never import the parser, the search code, solvers, sympy
or lark; it uses the standard library only (see the module docstrings).
"""

from proofkit.audit.core import (
    FORMAT_VERSION,
    THEOREMS,
    AuditReport,
    ClaimVerdict,
    FormatError,
    audit_certificate,
    audit_text,
)

__all__ = [
    "FORMAT_VERSION",
    "THEOREMS",
    "AuditReport",
    "ClaimVerdict",
    "FormatError",
    "audit_certificate",
    "audit_text",
]
