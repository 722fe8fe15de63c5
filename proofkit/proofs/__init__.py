"""Proof search per claim kind, and the audited proving run.

:func:`prove_model` turns every claim of a model into a certificate entry
(proved, refuted, or not proved with the reason), writes the certificate
JSON, and runs the trusted audit and the provenance check on that final
text. A claim is reported "proved" only when both accepted it.

Methods available: linearization (``claim E stable`` / ``claim E unstable``).
Every other claim kind is "not proved: no method for this claim kind yet".
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

from proofkit.audit import AuditReport, audit_text
from proofkit.certificate import (
    NotRepresentable,
    dumps,
    loads,
    model_section,
    new_certificate,
    not_proved_entry,
)
from proofkit.model import Claim, Model
from proofkit.provenance import ProvenanceReport, check_provenance

__all__ = ["ClaimOutcome", "ProveRun", "prove_model"]

NO_METHOD = "no method for this claim kind yet"
PARAMETRIC = "the claim must hold over the parameter range; parametric proofs are not available yet"


@dataclass(frozen=True)
class ClaimOutcome:
    claim: str
    status: str  # "proved" | "not proved" | "counterexample"
    method: str | None
    detail: str
    seconds: float

    def as_json(self) -> dict[str, Any]:
        return {
            "claim": self.claim,
            "status": self.status,
            "method": self.method,
            "detail": self.detail,
            "seconds": round(self.seconds, 4),
        }


@dataclass(frozen=True)
class ProveRun:
    certificate: dict[str, Any]
    text: str  # the exact JSON text that was audited
    audit: AuditReport
    provenance: ProvenanceReport
    outcomes: tuple[ClaimOutcome, ...]

    @property
    def all_proved(self) -> bool:
        return all(o.status == "proved" for o in self.outcomes)


def _entry_for(model: Model, claim: Claim, field: list[Any] | None) -> tuple[dict[str, Any], str]:
    from proofkit.proofs.linearization import prove_by_linearization

    if claim.kind not in ("stable", "unstable"):
        return not_proved_entry(claim, NO_METHOD), NO_METHOD
    if claim.target not in {e.name for e in model.equilibria}:
        reason = f"no declared equilibrium named {claim.target!r}"
        return not_proved_entry(claim, reason), reason
    if any(p.is_uncertain for p in model.params) and not claim.at_nominal:
        return not_proved_entry(claim, PARAMETRIC), PARAMETRIC
    if field is None:
        reason = "the vector field is not polynomial with rational coefficients; " + (
            "certificates cover polynomial vector fields only for now"
        )
        return not_proved_entry(claim, reason), reason
    result = prove_by_linearization(model.at_nominal(), field, claim)
    return result.entry, result.detail


def prove_model(model: Model, progress: Callable[[str], None] | None = None) -> ProveRun:
    """Prove every claim of ``model``; the result says what the audit accepted."""
    from proofkit.proofs.linearization import field_polys

    say = progress or (lambda _msg: None)
    try:
        field = field_polys(model.at_nominal()) if model.at_nominal().is_polynomial() else None
    except NotRepresentable:
        field = None
    entries, details, seconds = [], [], []
    for claim in model.claims:
        say(f"proving: {claim.text}")
        t0 = time.perf_counter()
        entry, detail = _entry_for(model, claim, field)
        entries.append(entry)
        details.append(detail)
        seconds.append(time.perf_counter() - t0)
    cert = new_certificate(model_section(model), entries)
    text = dumps(cert)
    say("auditing the certificate")
    report = audit_text(text)
    prov = check_provenance(loads(text))
    if not report.accepted or not prov.ok:  # never keep a claim the audit refused
        for i, verdict in enumerate(report.claims):
            if verdict.status == "rejected" or (not prov.ok and "evidence" in entries[i]):
                why = verdict.message if verdict.status == "rejected" else "; ".join(prov.problems)
                entries[i] = not_proved_entry(model.claims[i], f"the audit refused it: {why}")
                details[i] = entries[i]["reason"]
        cert = new_certificate(model_section(model), entries)
        text = dumps(cert)
        report = audit_text(text)
        prov = check_provenance(loads(text))
    outcomes = []
    for entry, verdict, detail, sec in zip(entries, report.claims, details, seconds, strict=True):
        status = {"accepted": "proved", "refuted": "counterexample"}.get(verdict.status)
        if status is None or not prov.ok:
            status = "not proved"
        outcomes.append(ClaimOutcome(entry["statement"], status, entry.get("method"), detail, sec))
    return ProveRun(cert, text, report, prov, tuple(outcomes))
