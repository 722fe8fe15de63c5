"""Region-of-attraction proofs for rational fields, by multiplying through by the denominators.

For ``f_i = N_i / D_i`` let ``Q`` be the product of the distinct denominators
and ``G = f Q`` (a polynomial field). Where ``Q > 0`` the trajectories of ``f``
are those of ``G`` at the positive speed ``1/Q``. The polynomial basin prover
(:mod:`proofkit.proofs.basin`) runs on ``G``; then a sum-of-squares
certificate ``Q(x* + y) - eps - t (level - V) = SOS`` with ``t >= 0`` shows
``Q > 0`` on the sublevel set. The audit schema
``region-of-attraction-rational-field`` (``proofkit/audit/_rational_basin.py``)
builds ``G`` and ``Q`` itself and checks both parts.

This module never decides validity (the audit does) and never evaluates user text.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import replace
from fractions import Fraction
from typing import Any

import sympy as sp

from proofkit.certificate import (
    claim_entry,
    claim_scope,
    claim_structure,
    model_section,
    not_proved_entry,
    number_json,
)
from proofkit.model import Claim, Model
from proofkit.proofs import ProofAttempt

__all__ = [
    "IN_DOMAIN_METHOD",
    "IN_DOMAIN_THEOREM",
    "METHOD",
    "THEOREM",
    "attempt",
    "reparametrized_model",
]

METHOD = "sublevel-set-rational"
THEOREM = "region-of-attraction-rational-field"
IN_DOMAIN_METHOD = "lyapunov-domain-rational"
IN_DOMAIN_THEOREM = "lyapunov-global-in-domain-rational-field"
_T_SHARES = (0, Fraction(1, 2), Fraction(3, 4), Fraction(1, 4), Fraction(7, 8))  # t level / Q(x*)


def reparametrized_model(model: Model, point: list[Fraction]) -> tuple[Model, sp.Expr]:
    """The polynomial model ``G = f Q`` (nominal values) and ``Q`` (positive at ``point``)."""
    nominal = model.at_nominal()
    parts = [sp.fraction(sp.together(e.rhs)) for e in nominal.equations]
    dens = [sp.expand(d) for _n, d in parts]
    distinct: list[sp.Expr] = []
    for d in dens:
        if d not in distinct:
            distinct.append(d)
    q = sp.expand(sp.Mul(*distinct))
    at = {
        x: sp.Rational(p.numerator, p.denominator)
        for x, p in zip(nominal.state_symbols, point, strict=True)
    }
    sign = -1 if q.subs(at) < 0 else 1
    q = sp.expand(sign * q)
    eqs = []
    for (num, _d), den, eq in zip(parts, dens, nominal.equations, strict=True):
        others = sp.Mul(*[d for d in distinct if d != den])
        eqs.append(replace(eq, rhs=sp.expand(sign * num * others)))
    return replace(nominal, equations=tuple(eqs), definedness=()), q


def _poly_expr(terms: list[Any], xs: tuple[sp.Symbol, ...]) -> sp.Expr:
    out = sp.Integer(0)
    for exps, c in terms:
        mono = sp.Mul(*[x**e for x, e in zip(xs, exps, strict=True)])
        out += sp.Rational(Fraction(c).numerator, Fraction(c).denominator) * mono
    return out


def _denominator_evidence(
    q: sp.Expr, model: Model, point: list[Fraction], evidence: dict[str, Any]
) -> dict[str, Any] | None:
    """SOS evidence that Q(x* + y) - eps - t (level - V) >= 0 with constant t >= 0."""
    from proofkit.exact.decomposition import decompose

    xs = model.state_symbols
    shift = {x: x + sp.Rational(p.numerator, p.denominator) for x, p in zip(xs, point, strict=True)}
    qy = sp.expand(q.subs(shift, simultaneous=True))
    v = _poly_expr(evidence["V"], xs)
    level = sp.Rational(Fraction(evidence["numbers"]["level"]))
    q0 = qy.subs({x: 0 for x in xs})
    if not q0 > 0:
        return None
    eps = q0 / 16
    zero = [[0] * len(xs)]
    for share in _T_SHARES:  # t = share Q(x*) / level: t (level - V) <= share Q(x*)
        t = sp.Rational(share.numerator, share.denominator) * q0 / level
        target = sp.expand(qy - eps - t * (level - v))
        result = decompose(target, list(xs))
        if not result.found or result.gram is None:
            continue
        monos = [list(sp.Poly(m, *xs).monoms()[0]) for m in result.basis]
        gram = result.gram
        return {
            "numbers": {"eps": number_json(eps)},
            "multipliers": {"t": [] if t == 0 else [[[0] * len(xs), str(t)]]},
            "squares": {
                "denominator": {
                    "basis": monos,
                    "gram": [
                        [number_json(gram[i, j]) for j in range(gram.cols)]
                        for i in range(gram.rows)
                    ],
                },
                "t": {"basis": zero, "gram": [[str(t)]]},
            },
        }
    return None


def attempt(
    model: Model, claim: Claim, progress: Callable[[str], None] | None = None
) -> ProofAttempt | None:
    """Evidence for ``attracts`` or ``globally stable`` (domain) on a rational field, or None."""
    if claim.kind not in ("attracts", "globally stable") or model.is_polynomial():
        return None
    if claim.kind == "globally stable" and model.domain is None:
        return None
    field = model_section(model).get("field")
    if field is None or field.get("denominators") is None or claim_scope(model, claim) != "nominal":
        return None
    eq = claim_structure(model, claim)["equilibrium"] or {}
    raw = eq.get("point")
    if raw is None or any(isinstance(c, list) for c in raw):
        return None
    from proofkit.proofs import basin

    point = [Fraction(c) for c in raw]
    g_model, q = reparametrized_model(model, point)
    if progress:
        progress(f"multiplying through by the denominators: Q = {q}")
    if claim.kind == "globally stable":
        return _in_domain(model, claim, g_model, q, point, progress)
    inner = basin.attempt(g_model, claim, progress)
    if inner is None or inner.entry["status"] != "proved":
        why = inner.detail if inner is not None else "no basin method applies"
        reason = f"on the field multiplied by its denominators: {why}"
        return ProofAttempt(not_proved_entry(model, claim, reason), reason)
    den = _denominator_evidence(q, model, point, inner.entry["evidence"])
    if den is None:
        reason = "the denominators could not be shown positive on the sublevel set found"
        return ProofAttempt(not_proved_entry(model, claim, reason), reason)
    evidence = {"reparametrized": inner.entry["evidence"], "denominator": den}
    entry = claim_entry(model, claim, "proved", method=METHOD, theorem=THEOREM, evidence=evidence)
    return ProofAttempt(entry, f"{inner.detail}, for f Q with Q = {q} > 0 on it", inner.trace)


def _in_domain(
    model: Model,
    claim: Claim,
    g_model: Model,
    q: sp.Expr,
    point: list[Fraction],
    progress: Callable[[str], None] | None,
) -> ProofAttempt:
    """``globally stable`` inside the domain for ``G = f Q``, and ``Q > 0`` on the domain."""
    from proofkit.proofs import _basin_invariant

    say = progress or (lambda _m: None)
    inner = _basin_invariant.attempt(g_model, claim, say)
    if inner is None or inner.entry["status"] != "proved":
        why = inner.detail if inner is not None else "no method applies"
        reason = f"on the field multiplied by its denominators: {why}"
        return ProofAttempt(not_proved_entry(model, claim, reason), reason)
    setup = inner.trace
    xs = model.state_symbols
    shift = {x: x + sp.Rational(p.numerator, p.denominator) for x, p in zip(xs, point, strict=True)}
    q_y = setup.setting.space.coerce(sp.expand(q.subs(shift, simultaneous=True)))
    den = _basin_invariant.positive_on_domain(setup, q_y)
    if isinstance(den, str):
        reason = f"the denominators could not be shown positive on the domain: {den}"
        return ProofAttempt(not_proved_entry(model, claim, reason), reason)
    evidence = {"reparametrized": inner.entry["evidence"], "denominator": den}
    entry = claim_entry(
        model, claim, "proved", method=IN_DOMAIN_METHOD, theorem=IN_DOMAIN_THEOREM,
        evidence=evidence,
    )  # fmt: skip
    return ProofAttempt(entry, f"{inner.detail}, for f Q with Q = {q} > 0 on the domain")
