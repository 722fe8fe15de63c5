"""Helpers for the audit tests: hand-built format-2 certificates from a model text."""

from __future__ import annotations

import copy
import json
from typing import Any

import proofkit
from proofkit.audit import FormatError, audit_certificate
from proofkit.certificate import claim_entry, dumps, model_section, new_certificate
from proofkit.provenance import check_provenance


def build(text: str, evidence: list[tuple[str, str, dict[str, Any]] | None]) -> dict[str, Any]:
    """A certificate for ``text``: per claim (method, theorem, evidence), or None (not proved)."""
    model = proofkit.parse(text, "hand.pk")
    entries = []
    for claim, item in zip(model.claims, evidence, strict=True):
        if item is None:
            entries.append(claim_entry(model, claim, "not proved", reason="not attempted"))
            continue
        method, theorem, ev = item
        entries.append(
            claim_entry(model, claim, "proved", method=method, theorem=theorem, evidence=ev)
        )
    return new_certificate(model_section(model), entries)


def verdicts(cert: dict[str, Any]) -> list[str]:
    """The core's status per claim ("malformed" when the certificate is refused as a whole)."""
    try:
        return [v.status for v in audit_certificate(copy.deepcopy(cert)).claims]
    except FormatError:
        return ["malformed"]


def full_ok(cert: dict[str, Any]) -> bool:
    """Both the core and provenance accept, and some claim is proved or refuted."""
    try:
        report = audit_certificate(json.loads(dumps(cert)))
    except FormatError:
        return False
    return report.accepted and check_provenance(dumps(cert)).ok


def squares(**items: tuple[list[list[int]], list[list[str]]]) -> dict[str, Any]:
    """``squares(positive=(basis, gram), ...)``; obligation names with spaces via a dict."""
    return {k.replace("_", " "): {"basis": b, "gram": g} for k, (b, g) in items.items()}
