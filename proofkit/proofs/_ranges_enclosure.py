"""``E stable`` / ``E unstable`` over parameter ranges for fields with elementary functions.

Method ``range-enclosure`` (audit: ``proofkit/audit/_ranges_enclosure.py``): the
parameter box is tiled by pieces; on each, a small box around the fixed
equilibrium passes the parametric Krawczyk test and the interval Routh
column over the Jacobian enclosure on ``X x P`` is decided
(:mod:`proofkit.analysis._enclosure_ranges`). Used when the field has
``sin cos tan exp log sqrt tanh`` (the model section carries expression
trees) and the equilibrium does not move with the parameters.

This module never reports "proved" itself: the audit decides.
"""

from __future__ import annotations

from collections.abc import Callable
from fractions import Fraction
from typing import Any

from proofkit.certificate import claim_entry, claim_structure, model_section, not_proved_entry
from proofkit.model import Claim, Model

__all__ = ["METHOD", "THEOREM", "attempt_enclosure"]

METHOD = "range-enclosure"
THEOREM = {
    "stable": "range-indirect-method-stability-by-enclosure",
    "unstable": "range-indirect-method-instability-by-enclosure",
}
REFUTING = {
    "stable": "indirect-method-instability-at-a-value-by-enclosure",
    "unstable": "indirect-method-stability-at-a-value-by-enclosure",
}


def _refuted(
    model: Model, claim: Claim, uncertain: list[Any], piece: dict[str, Any]
) -> tuple[dict[str, Any], str]:
    """A refutation at the one parameter value of ``piece``."""
    from proofkit.analysis._enclosure_ranges import PRECISION

    at = ", ".join(
        f"{p.name} = {lo}" for p, (lo, _hi) in zip(uncertain, piece["parameters"], strict=True)
    )
    evidence = {"precision": PRECISION, "pieces": [piece]}
    entry = claim_entry(
        model, claim, "refuted", method=METHOD, theorem=REFUTING[claim.kind], evidence=evidence
    )
    what = (
        "an eigenvalue with positive real part"
        if claim.kind == "stable"
        else "every eigenvalue in the left half plane"
    )
    return (
        entry,
        f"it breaks at {at}: the linearization has {what} there",
    )


def _point(model: Model, claim: Claim) -> list[Any] | None:
    """The claim's fixed point (rational, or exact such as pi/3), or None when it moves."""
    eq = claim_structure(model, claim)["equilibrium"] or {}
    if eq.get("point") is not None:
        raw = eq["point"]
        return None if any(isinstance(c, list) for c in raw) else [Fraction(c) for c in raw]
    if eq.get("exact") is not None:
        coords = model.at_nominal().equilibrium(claim.target or "").as_dict()
        return [coords[s] for s in model.states]
    return None


def attempt_enclosure(
    model: Model, claim: Claim, say: Callable[[str], None]
) -> tuple[dict[str, Any], str] | None:
    """(claim entry, detail) for a field with elementary functions, or None if n/a."""
    if claim.kind not in THEOREM or model_section(model).get("expressions") is None:
        return None
    point = _point(model, claim)
    if point is None:
        reason = (
            "over the parameter ranges: the equilibrium moves with the parameters; "
            "enclosures over ranges need a fixed point"
        )
        return not_proved_entry(model, claim, reason), reason
    from proofkit.analysis._enclosure_ranges import range_enclosure

    uncertain = [p for p in model.params if p.is_uncertain]
    fixed = {p.symbol: p.nominal for p in model.params if not p.is_uncertain}
    field = [f.subs(fixed) for f in model.field]
    pbox = tuple((Fraction(str(p.low)), Fraction(str(p.high))) for p in uncertain)
    say(f"{claim.text}: Jacobian enclosures over the parameter box")
    found = range_enclosure(
        field, model.state_symbols, [p.symbol for p in uncertain], point, pbox, claim.kind
    )
    if not found.pieces and found.witness is not None:
        return _refuted(model, claim, uncertain, found.witness)
    if not found.pieces:
        where = ", ".join(
            f"{p.name} in [{lo}, {hi}]"
            for p, (lo, hi) in zip(uncertain, found.where or (), strict=True)
        )
        reason = f"over the parameter ranges: {found.reason}" + (f" ({where})" if where else "")
        return not_proved_entry(model, claim, reason), reason
    entry = claim_entry(
        model,
        claim,
        "proved",
        method=METHOD,
        theorem=THEOREM[claim.kind],
        evidence=found.evidence(),
    )
    ranges = ", ".join(
        f"{p.name} in [{lo}, {hi}]" for p, (lo, hi) in zip(uncertain, pbox, strict=True)
    )
    count = len(found.pieces)
    word = "stable" if claim.kind == "stable" else "unstable"
    detail = (
        f"{word} for every {ranges}: Jacobian enclosures and decided Routh signs on "
        f"{count} piece{'s' if count != 1 else ''} (parametric Krawczyk)"
    )
    return entry, detail
