"""Linearization proofs for non-polynomial fields at a rational equilibrium.

Two methods, chosen by what the certificate can carry of the field:

- a rational field ``N/D`` (``model.field.denominators``): method
  ``linearization-rational``. The Jacobian at the point is exact (sympy
  differentiates ``N/D``; the audit recomputes it as ``(dN/dx)/D(x*)`` after
  checking ``D(x*) != 0`` and ``N(x*) = 0``), then the same exact Routh and
  Lyapunov evidence as for polynomial fields.
- a field with ``sin cos tan exp log sqrt tanh`` (``model.expressions``):
  method ``linearization-enclosure``. A tiny rational box around the point,
  a Krawczyk preconditioner, and an enclosure of the Jacobian over the box on
  the grid ``2^-precision`` (raised until every Routh sign is decided,
  :mod:`proofkit.analysis.enclosure`). What is proved: the box holds exactly
  one equilibrium (the declared point lies in it) and every Jacobian in the
  enclosure has the stated number of right-half-plane roots.

Nominal evidence: it proves nominal-scope claims and refutes claims of either
scope. This module never decides validity: the audit does.
"""

from __future__ import annotations

from collections.abc import Callable
from fractions import Fraction
from typing import Any

import sympy as sp

from proofkit.certificate import (
    NotRepresentable,
    claim_entry,
    claim_scope,
    claim_structure,
    model_section,
    not_proved_entry,
)
from proofkit.model import Claim, Model
from proofkit.proofs import ProofAttempt

__all__ = ["attempt"]

ENCLOSURE_THEOREM = {
    "stable": "indirect-method-stability-by-enclosure",
    "unstable": "indirect-method-instability-by-enclosure",
}
RATIONAL_THEOREM = {
    "stable": "indirect-method-stability",
    "unstable": "indirect-method-instability",
}


def _rational_point(model: Model, claim: Claim) -> list[Fraction] | None:
    eq = claim_structure(model, claim)["equilibrium"] or {}
    point = eq.get("point")
    if point is None or any(isinstance(v, list) for v in point):
        return None
    return [Fraction(v) for v in point]


def _exact_point(model: Model, claim: Claim) -> list[sp.Expr] | None:
    """A point such as (pi/3, 0) that the claim structure states as expression trees."""
    eq = claim_structure(model, claim)["equilibrium"] or {}
    if eq.get("exact") is None:
        return None
    coords = model.at_nominal().equilibrium(claim.target or "").as_dict()
    return [coords[s] for s in model.states]


def _rational(model: Model, claim: Claim) -> tuple[str | None, dict[str, Any], str]:
    from proofkit.proofs.linearization import _evidence

    return _evidence(model, claim, 0)


def _visible(field: tuple[sp.Expr, ...]) -> list[sp.Expr]:
    """Expressions whose sign the written field itself constrains (arguments, denominators)."""
    out = []
    for f in field:
        for e in sp.preorder_traversal(f):
            if isinstance(e, sp.log):
                out.append(e.args[0])
            elif isinstance(e, sp.tan):
                out.append(sp.cos(e.args[0]))
            elif isinstance(e, sp.Pow) and e.exp.is_Rational and (e.exp < 0 or e.exp.q != 1):
                out.append(e.base)
    return out


def _hidden_condition(model: Model) -> str | None:
    """A condition where the field is defined that simplification removed from the field.

    The certificate carries the written field only (its trees constrain log and sqrt
    arguments and denominators); such a condition would go unchecked, so no proof.
    """
    nominal = model.at_nominal()
    visible = _visible(nominal.field)
    for d in nominal.definedness:
        found = False
        for v in visible:
            ratio = sp.cancel(d.expr / v)
            if not ratio.free_symbols and ratio != 0:
                found = True
                break
        if not found:
            return f"{d.expr} {d.relation} 0 ({d.origin})"
    return None


def _enclosure(model: Model, point: list[Any]) -> tuple[str | None, dict[str, Any], str]:
    from proofkit.analysis.enclosure import linearization_enclosure

    hidden = _hidden_condition(model)
    if hidden is not None:
        why = (
            f"the field is defined only where {hidden}, a condition that simplification "
            "removed from the written field; the certificate cannot carry it yet"
        )
        return None, {}, why
    nominal = model.at_nominal()
    enc = linearization_enclosure(nominal.field, nominal.state_symbols, point)
    if not enc.decided:
        why = (
            f"the Jacobian enclosure at 2^-{enc.precision} leaves a Routh sign undecided "
            f"(signs {list(enc.routh_signs)}, 0 = undecided): the linearization may have an "
            "eigenvalue on the imaginary axis; a nonlinear proof is needed"
        )
        return None, {}, why
    grid = f"Jacobian enclosed on the grid 2^-{enc.precision}"
    if enc.rhp == 0 and all(s > 0 for s in enc.routh_signs):
        return "stable", enc.evidence(), f"every eigenvalue has negative real part ({grid})"
    if enc.rhp:
        return (
            "unstable",
            enc.evidence(),
            f"{enc.rhp} eigenvalue(s) with positive real part ({grid})",
        )
    return None, {}, "the enclosure shows no verdict"


def attempt(
    model: Model, claim: Claim, progress: Callable[[str], None] | None = None
) -> ProofAttempt | None:
    """Evidence for ``stable`` / ``unstable`` on a non-polynomial field, or None if n/a."""
    if claim.kind not in RATIONAL_THEOREM or model.is_polynomial():
        return None
    rational = _rational_point(model, claim)
    point: list[Any] | None = rational or _exact_point(model, claim)
    if point is None:
        if claim_scope(model, claim) == "range":
            return None  # the point moves with the parameters: a range method's job
        reason = (
            "the equilibrium is neither a rational point nor a point the certificate can "
            "state exactly (rational numbers, pi, and the functions of the language)"
        )
        return ProofAttempt(not_proved_entry(model, claim, reason), reason)
    section = model_section(model)
    field = section.get("field")
    try:
        if field is not None and field.get("denominators") is not None and rational:
            method, theorems = "linearization-rational", RATIONAL_THEOREM
            shown, evidence, detail = _rational(model, claim)
        elif section.get("expressions") is not None:
            method, theorems = "linearization-enclosure", ENCLOSURE_THEOREM
            if progress:
                progress("enclosing the Jacobian (rational interval arithmetic)")
            shown, evidence, detail = _enclosure(model, point)
        else:
            why = section.get("field_note") or "the field cannot be written in the certificate"
            return ProofAttempt(not_proved_entry(model, claim, why), why)
    except (NotRepresentable, ValueError, ZeroDivisionError, sp.PolynomialError) as exc:
        return ProofAttempt(not_proved_entry(model, claim, str(exc)), str(exc))
    if shown is None:
        return ProofAttempt(not_proved_entry(model, claim, detail), detail)
    if shown == claim.kind and claim_scope(model, claim) == "range":
        return None  # nominal evidence cannot prove a claim over the ranges
    status = "proved" if shown == claim.kind else "refuted"
    entry = claim_entry(
        model, claim, status, method=method, theorem=theorems[shown], evidence=evidence
    )
    if status == "refuted":
        detail = f"the claim is false: {detail}, so {claim.target} is {shown}"
    return ProofAttempt(entry, detail)
