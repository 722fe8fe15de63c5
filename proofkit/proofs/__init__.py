"""Proof search per claim kind, and the audited proving run.

:func:`prove_model` asks the provers (``proofkit/proofs/<name>.py``, listed in
:data:`PROVERS`, each exporting ``attempt(model, claim, progress) ->
ProofAttempt | None``) for every claim in turn and keeps the first entry the
audit accepts; then it writes the certificate JSON and audits that final text
once. A claim is reported "proved" only when the audit and the provenance
check accepted it; the :class:`ProveRun` carries the audit report so that the
documents never re-audit.

Statuses everywhere: "proved", "refuted" (with the exact evidence), "not
proved" (with the reason). Provers never mark a claim proved by themselves.
"""

from __future__ import annotations

import importlib
import time
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

from proofkit.audit import AuditReport, FormatError, audit_certificate, audit_text
from proofkit.certificate import dumps, model_section, new_certificate, not_proved_entry
from proofkit.model import Claim, Model
from proofkit.provenance import ProvenanceReport, check_provenance

__all__ = ["PROVERS", "ClaimOutcome", "ProofAttempt", "ProveRun", "prove_model"]

# Prover modules in the order they are tried; a module not present yet is skipped.
PROVERS = (
    "linearization",
    "ranges",
    "lyapunov",
    "basin",
    "cycles",
    "_nonpoly_basin",
    "_nonpoly_cycles",
    "recast",
    "taylor_model",
)
NO_METHOD = "no method for this claim kind yet"
AUDIT_SECONDS = 300.0  # prove audits its own certificate: a generous budget (audit: 8 s)


@dataclass(frozen=True)
class ProofAttempt:
    """A prover's answer: the certificate's claim entry, a detail line, an optional trace."""

    entry: dict[str, Any]
    detail: str
    trace: Any = None


@dataclass(frozen=True)
class ClaimOutcome:
    claim: str
    status: str  # "proved" | "refuted" | "not proved"
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
    audit: AuditReport  # the audit of ``text``, done once
    provenance: ProvenanceReport
    outcomes: tuple[ClaimOutcome, ...]
    traces: tuple[Any, ...] = ()

    @property
    def all_proved(self) -> bool:
        return all(o.status == "proved" for o in self.outcomes)


def _provers() -> list[Callable[..., ProofAttempt | None]]:
    found = []
    for name in PROVERS:
        try:
            module = importlib.import_module(f"proofkit.proofs.{name}")
        except ModuleNotFoundError as exc:
            if exc.name != f"proofkit.proofs.{name}":
                raise
            continue
        found.append(module.attempt)
    return found


def _accepted(section: dict[str, Any], entry: dict[str, Any]) -> tuple[bool, str]:
    """Does the audit accept this one entry on its own? (A pre-check; not the final audit.)"""
    try:
        report = audit_certificate(new_certificate(section, [entry]), AUDIT_SECONDS)
    except FormatError as exc:  # a prover wrote a malformed entry: refused, never a crash
        return False, f"malformed evidence: {exc}"
    verdict = report.claims[0]
    return verdict.status in ("proved", "refuted"), verdict.message or ""


def _refused(model: Model, claim: Claim, result: ProofAttempt, why: str) -> ProofAttempt:
    """A "not proved" entry for evidence the audit refused; a simulation stays attached."""
    cx = result.entry.get("counterexample")
    if cx is None:
        reason = f"the audit refused the evidence: {why}"
        return ProofAttempt(not_proved_entry(model, claim, reason), reason)
    reason = f"{result.detail} (found by simulation: not exact evidence, so not marked refuted)"
    entry = not_proved_entry(model, claim, reason)
    entry["counterexample"] = cx
    return ProofAttempt(entry, reason, result.trace)


def _attempt_claim(
    model: Model, claim: Claim, section: dict[str, Any], say: Callable[[str], None]
) -> ProofAttempt:
    """The first attempt the audit accepts, else the most informative "not proved"."""
    fallback: ProofAttempt | None = None
    for attempt in _provers():
        result = attempt(model, claim, say)
        if result is None:
            continue
        if result.entry["status"] == "not proved":
            fallback = fallback or result
            continue
        ok, why = _accepted(section, result.entry)
        if ok:
            return result
        fallback = fallback or _refused(model, claim, result, why)
    if fallback is not None:
        return fallback
    if not model.is_polynomial():
        reason = "the vector field is not polynomial; certificates cover polynomial fields for now"
    elif claim.kind in ("stable", "unstable"):
        reason = "the claim must hold over the parameter ranges; no range method proved it"
    else:
        reason = NO_METHOD
    return ProofAttempt(not_proved_entry(model, claim, reason), reason)


def prove_model(model: Model, progress: Callable[[str], None] | None = None) -> ProveRun:
    """Prove every claim of ``model``; the result says what the audit accepted."""
    say = progress or (lambda _msg: None)
    section = model_section(model)
    attempts, seconds = [], []
    for claim in model.claims:
        say(f"proving: {claim.text}")
        t0 = time.perf_counter()
        attempts.append(_attempt_claim(model, claim, section, say))
        seconds.append(time.perf_counter() - t0)
    entries = [a.entry for a in attempts]
    details = [a.detail for a in attempts]
    text = dumps(new_certificate(section, entries))
    say("auditing the certificate")
    report = audit_text(text, AUDIT_SECONDS)
    prov = check_provenance(text, model)
    if not report.accepted or not prov.ok:  # never keep a claim the audit refused
        for i, verdict in enumerate(report.claims):
            if verdict.status == "rejected" or (not prov.ok and "evidence" in entries[i]):
                why = verdict.message if verdict.status == "rejected" else "; ".join(prov.problems)
                details[i] = f"the audit refused it: {why}"
                entries[i] = not_proved_entry(model, model.claims[i], details[i])
        text = dumps(new_certificate(section, entries))
        report = audit_text(text, AUDIT_SECONDS)
        prov = check_provenance(text, model)
    outcomes = []
    for entry, verdict, detail, sec in zip(entries, report.claims, details, seconds, strict=True):
        status = verdict.status if verdict.status in ("proved", "refuted") else "not proved"
        if not prov.ok:
            status = "not proved"
        outcomes.append(ClaimOutcome(entry["statement"], status, entry.get("method"), detail, sec))
    cert = new_certificate(section, entries)
    return ProveRun(cert, text, report, prov, tuple(outcomes), tuple(a.trace for a in attempts))
