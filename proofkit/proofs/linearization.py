"""Proofs of ``claim E stable`` / ``claim E unstable`` by Lyapunov's indirect method.

Builds the exact evidence that the audit re-derives with its own arithmetic:
the Jacobian at the equilibrium, the characteristic polynomial, a regular
Routh array (of ``p(s)`` for stability; of ``(s+1)^k p(s+h)``, ``h >= 0``, for
instability, to step around the special cases), and for stability the
solution P of ``A'P + PA = -I``. Everything is computed with
:mod:`proofkit.analysis` (sympy, python-flint), never with the audit's
arithmetic: prover and checker share no code.

Floating point is used only to choose the shift ``h`` (a hint); every stated
number is exact. Nominal evidence: it proves nominal-scope claims and refutes
claims of either scope. This module never decides validity: the audit does.
"""

from __future__ import annotations

from collections.abc import Callable
from fractions import Fraction
from typing import Any

import sympy as sp

from proofkit.analysis import routh_array, solve_lyapunov
from proofkit.certificate import (
    NotRepresentable,
    claim_entry,
    claim_number_field,
    claim_scope,
    claim_structure,
    not_proved_entry,
    number_json,
)
from proofkit.model import Claim, Model
from proofkit.proofs import ProofAttempt

__all__ = ["THEOREM", "attempt"]

THEOREM = {"stable": "indirect-method-stability", "unstable": "indirect-method-instability"}
_S = sp.Symbol("s")
UNDECIDED = (
    "the linearization does not decide: no root in the open right half plane "
    "was shown and not all roots lie in the open left half plane (eigenvalues "
    "on the imaginary axis); a nonlinear proof is needed"
)


def _json_matrix(m: sp.Matrix, d: int) -> list[list[Any]]:
    return [[number_json(m[i, j], d) for j in range(m.cols)] for i in range(m.rows)]


def _routh_entry(q: list[sp.Expr], shift: Fraction, power: int, d: int) -> dict[str, Any] | None:
    """The audit's view of a regular Routh array of ``q`` (None when not regular)."""
    arr = routh_array(q)
    if not arr.regular or arr.field_rows is None:
        return None
    width = (len(q) - 1) // 2 + 1
    rows = [[x.to_sympy() for x in r] + [sp.Integer(0)] * (width - len(r)) for r in arr.field_rows]
    return {
        "shift": number_json(shift),
        "multiplier_power": power,
        "polynomial": [number_json(c, d) for c in q],
        "rows": [[number_json(x, d) for x in r] for r in rows],
        "sign_changes": arr.sign_changes,
    }


def _shifted(cp: list[sp.Expr], h: Fraction, power: int) -> list[sp.Expr]:
    """Coefficients of ``(s+1)^power * p(s + h)``, highest degree first."""
    p = sp.Poly(cp, _S)
    q = p.compose(sp.Poly(_S + sp.Rational(h.numerator, h.denominator), _S))
    q = q * sp.Poly((_S + 1) ** power, _S)
    return [sp.expand(sp.radsimp(c)) for c in q.all_coeffs()]


def _instability_routh(cp: list[sp.Expr], d: int) -> dict[str, Any] | None:
    """A regular Routh array showing a root with Re s > h >= 0, or None."""
    roots = [complex(r) for r in sp.Poly(cp, _S).nroots(n=15)] if len(cp) > 1 else []
    max_re = max((r.real for r in roots), default=0.0)
    shifts = [Fraction(0)]
    if max_re > 1e-9:
        h = Fraction(max_re / 2).limit_denominator(1000)
        shifts += [h / 2**k for k in range(6) if h > 0]
    for h in shifts:
        for power in (0, 1, 2):
            entry = _routh_entry(_shifted(cp, h, power), h, power, d)
            if entry is not None and entry["sign_changes"] >= 1:
                return entry
    return None


def _evidence(model: Model, claim: Claim, d: int) -> tuple[str | None, dict[str, Any], str]:
    """(the kind shown or None, the evidence, a detail line) at the nominal values."""
    nominal = model.at_nominal()
    xs = sp.Matrix(nominal.state_symbols)
    point = nominal.equilibrium(claim.target or "").as_dict()
    at = {x: point[str(x)] for x in nominal.state_symbols}
    jac = sp.Matrix(nominal.field).jacobian(xs).subs(at).applyfunc(lambda v: sp.radsimp(v))
    cp = [sp.expand(sp.radsimp(c)) for c in jac.charpoly(_S).all_coeffs()]
    evidence: dict[str, Any] = {
        "jacobian": _json_matrix(jac, d),
        "characteristic_polynomial": [number_json(c, d) for c in cp],
    }
    stable_routh = _routh_entry(cp, Fraction(0), 0, d)
    if stable_routh is not None and stable_routh["sign_changes"] == 0 and routh_array(cp).hurwitz:
        evidence["routh"] = stable_routh
        try:
            sol = solve_lyapunov(jac)
            evidence["lyapunov"] = {"P": _json_matrix(sol.P, d), "Q": _json_matrix(sol.Q, d)}
        except (ValueError, NotRepresentable):
            pass
        return "stable", evidence, "all roots of det(sI - J) have negative real part"
    unstable = _instability_routh(cp, d)
    if unstable is None:
        return None, evidence, UNDECIDED
    evidence["routh"] = unstable
    n = unstable["sign_changes"]
    return "unstable", evidence, f"{n} root(s) of det(sI - J) have positive real part"


def attempt(
    model: Model, claim: Claim, progress: Callable[[str], None] | None = None
) -> ProofAttempt | None:
    """Evidence for a ``stable`` / ``unstable`` claim at its equilibrium, or None if n/a.

    A claim the linearization contradicts gets a "refuted" entry carrying the
    exact evidence for the opposite statement; a range-scope claim can only be
    refuted this way (nominal evidence cannot prove it).
    """
    if claim.kind in THEOREM and not model.is_polynomial():  # rational or elementary functions
        from proofkit.proofs._nonpoly_linearization import attempt as nonpolynomial

        return nonpolynomial(model, claim, progress)
    if claim.kind not in THEOREM:
        return None
    d = claim_number_field(model, claim)
    if d is not None and (claim_structure(model, claim)["equilibrium"] or {}).get("point") is None:
        return None  # the point moves with the parameters: a range method's job
    if d is None:
        reason = (
            "the equilibrium is not in Q or a single quadratic field Q(sqrt(d)); "
            "higher-degree algebraic points are not supported by the certificate format"
        )
        return ProofAttempt(not_proved_entry(model, claim, reason), reason)
    try:
        shown, evidence, detail = _evidence(model, claim, d)
    except NotRepresentable as exc:
        return ProofAttempt(not_proved_entry(model, claim, str(exc)), str(exc))
    if shown is None:
        return ProofAttempt(not_proved_entry(model, claim, detail), detail)
    if shown == claim.kind and claim_scope(model, claim) == "range":
        return None  # nominal evidence cannot prove a claim over the ranges
    status = "proved" if shown == claim.kind else "refuted"
    entry = claim_entry(
        model,
        claim,
        status,
        method="linearization",
        theorem=THEOREM[shown],
        evidence=evidence,
    )
    if status == "refuted":
        detail = f"the claim is false: {detail}, so {claim.target} is {shown}"
        if claim_scope(model, claim) == "range":
            detail += " at the nominal parameter values (which lie in the ranges)"
    return ProofAttempt(entry, detail)
