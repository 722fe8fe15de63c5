"""Claims ``E stable`` / ``E unstable`` decided from a survey (and over parameter boxes).

These are exact findings of the search side, not audited proofs: the words are
"holds", "fails" and "undecided". Only ``proofkit prove`` says "proved", and only
for a certificate the audit accepted. This module must never decide a claim
without an exact (or certified) verdict behind it.
May import: the model and ``analysis``; never ``proofkit.audit``.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

from proofkit.analysis.parametric import ParametricResult
from proofkit.analysis.surveying import EquilibriumReport, Survey
from proofkit.model import Claim, Model

__all__ = ["ClaimCheck", "check_claim"]


@dataclass(frozen=True)
class ClaimCheck:
    """What the linearization says about a ``stable`` / ``unstable`` claim."""

    claim: str
    status: Literal["holds", "undecided", "fails"]
    reason: str
    evidence: EquilibriumReport | None
    parametric: ParametricResult | None = None  # the proof over parameter ranges, if used


def _names(s: Survey) -> set[str]:
    return {e.name for e in s.equilibria if e.name}


def check_claim(model: Model, s: Survey, claim: Claim) -> ClaimCheck:
    """Decide ``claim E stable`` / ``claim E unstable`` from the linearization.

    At nominal values when the model has no uncertain parameter or the claim says
    ``at nominal``; otherwise ``stable`` is decided over the whole parameter box by
    :func:`~proofkit.analysis.parametric.parametric_stability`.
    """
    if claim.kind not in ("stable", "unstable"):
        return ClaimCheck(claim.text, "undecided", "not a linearization claim", None)
    if any(p.is_uncertain for p in model.params) and not claim.at_nominal:
        if claim.kind == "stable" and claim.target is not None:
            from proofkit.analysis.parametric import parametric_stability

            try:
                pr = parametric_stability(model, claim.target)
            except KeyError:
                pr = None
            if pr is not None and pr.status in ("holds", "fails"):
                evidence = s.by_name(claim.target) if claim.target in _names(s) else None
                return ClaimCheck(claim.text, pr.status, pr.reason, evidence, pr)
            why = pr.reason if pr is not None else f"no equilibrium named {claim.target}"
            return ClaimCheck(
                claim.text, "undecided", f"over the parameter ranges: {why}", None, pr
            )
        return ClaimCheck(
            claim.text,
            "undecided",
            "the analysis is at nominal parameter values; the claim must hold over the "
            "parameter ranges and parametric proofs of instability are not available yet",
            None,
        )
    try:
        e = s.by_name(claim.target or "")
    except KeyError:
        return ClaimCheck(claim.text, "undecided", f"no equilibrium named {claim.target}", None)
    if e.verdict == "inconclusive":
        why = "eigenvalues on the imaginary axis: the linearization does not decide"
        if not e.exact and e.routh.rhp_count < 0:
            why = "a sign could not be certified over the equilibrium's enclosure"
        return ClaimCheck(claim.text, "undecided", why, e)
    holds = e.verdict == claim.kind
    how = (
        "all eigenvalues in the open left half plane (Lyapunov's indirect method)"
        if e.verdict == "stable"
        else f"{e.routh.rhp_count} eigenvalue(s) in the open right half plane "
        "(Lyapunov's indirect method)"
    )
    return ClaimCheck(claim.text, "holds" if holds else "fails", how, e)
