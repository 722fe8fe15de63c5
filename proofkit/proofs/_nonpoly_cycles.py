"""Periodic-orbit proofs for planar rational fields, by multiplying through by the denominators.

For ``f_i = N_i / D_i`` let ``Q = sign * (the product of the distinct
denominators)`` and ``G = f Q`` (a polynomial field). Where ``Q > 0`` the
orbits of ``f`` are those of ``G`` traversed at the positive speed ``1/Q``, so
the polynomial cycle prover (:mod:`proofkit.proofs.cycles`) runs on ``G``
and a sum-of-squares certificate shows ``Q >= eps > 0`` where its theorem
works:

* ``no cycle in SET`` (methods ``no-equilibrium-rational``, ``dulac-rational``):
  ``Q - eps - sum_i t_i g_i`` over the set's conditions (for Dulac, ``B Q`` is
  then a Dulac function for ``f``);
* ``cycle in SET`` (method ``annulus-rational``): ``Q - eps - t1 (W - inner) -
  t2 (outer - W)`` over the annulus found for ``G``.

``G`` and ``Q`` are built from the certificate's own field section (the
numerators and denominators the audit reads), at the nominal parameter values.
``sign`` follows the sign of ``Q`` on sample points of the set; a set on which
``Q`` takes both signs reaches a pole and is refused with that reason. The
audit schemas (``proofkit/audit/_rational_cycles.py``) build ``G`` and ``Q``
themselves and check both parts.

This module never decides validity (the audit does) and never evaluates user text.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import replace
from fractions import Fraction
from typing import Any

import sympy as sp

from proofkit.certificate import claim_entry, claim_scope, model_section, not_proved_entry
from proofkit.model import Claim, Model
from proofkit.proofs import ProofAttempt

__all__ = ["METHODS", "THEOREMS", "applies", "attempt", "field_times_denominator"]

METHODS = {
    "no-equilibrium": "no-equilibrium-rational",
    "dulac": "dulac-rational",
    "annulus": "annulus-rational",
}
THEOREMS = {
    "no-equilibrium-rational": "index-no-equilibrium-rational-field",
    "dulac-rational": "bendixson-dulac-rational-field",
    "annulus-rational": "poincare-bendixson-rational-field",
}
_EPS = (Fraction(1, 100), Fraction(1, 10**6))
_SAMPLE_BOXES = ((12.0, 97), (2.0, 41))  # half-width, points per axis
Progress = Callable[[str], None]


def _rational_field(model: Model) -> dict[str, Any] | None:
    if model.is_polynomial():
        return None
    field = model_section(model).get("field")
    if field is None or field.get("denominators") is None:
        return None
    return field


def _trees(model: Model) -> bool:
    if model.is_polynomial():
        return False
    return bool((model_section(model).get("expressions") or {}).get("components"))


def applies(model: Model) -> bool:
    """True when this module answers the model's cycle claims: a rational field that is
    not polynomial, or a field given by expression trees (sin, cos, exp, tanh)."""
    return _rational_field(model) is not None or _trees(model)


def _poly_expr(terms: list[Any], xs: list[sp.Symbol]) -> sp.Expr:
    out = sp.Integer(0)
    for exps, c in terms:
        mono = sp.Mul(*[x**e for x, e in zip(xs, exps, strict=True)])
        out += sp.Rational(Fraction(c).numerator, Fraction(c).denominator) * mono
    return out


def _monic(p: sp.Expr, xs: list[sp.Symbol]) -> tuple[sp.Expr, sp.Expr]:
    """``p = c P`` with ``P``'s coefficient at its largest exponent tuple 1 (as the audit)."""
    terms = sp.Poly(p, *xs).terms()
    c = max(terms)[1]
    return c, sp.expand(p / c)


def field_times_denominator(
    model: Model, field: dict[str, Any], sign: int
) -> tuple[Model, sp.Expr]:
    """The polynomial model of ``G = f Q`` (nominal values) and ``Q = sign * prod P``.

    ``P`` are the distinct denominators scaled to coefficient 1 at their largest
    exponent tuple. Built from the certificate's field section exactly as the audit builds it.
    """
    nominal = model.at_nominal()
    xs = list(nominal.state_symbols)
    uncertain = [p for p in model.params if p.is_uncertain]
    variables = xs + [sp.Symbol(p.name, real=True) for p in uncertain]
    values = {s: p.nominal for s, p in zip(variables[len(xs) :], uncertain, strict=True)}
    nums = [sp.expand(_poly_expr(t, variables).subs(values)) for t in field["numerators"]]
    dens = [
        _monic(sp.expand(_poly_expr(t, variables).subs(values)), xs) for t in field["denominators"]
    ]
    distinct: list[sp.Expr] = []
    for _c, d in dens:
        if d not in distinct:
            distinct.append(d)
    q = sp.expand(sign * sp.Mul(*distinct))
    eqs = []
    for num, (c, den), eq in zip(nums, dens, nominal.equations, strict=True):
        others = sp.Mul(*[d for d in distinct if d != den])
        eqs.append(replace(eq, rhs=sp.expand(sign * num * others / c)))
    return replace(nominal, equations=tuple(eqs), definedness=()), q


def _signs_on_set(q: sp.Expr, pl: Any) -> tuple[set[int], str]:
    """Signs of ``q`` at grid points of the set (a hint), and where it changes sign."""
    import numpy as np

    fq = sp.lambdify([pl.xs], q, "numpy")  # parsed sympy trees, never user text
    gs = [sp.lambdify([pl.xs], g, "numpy") for g, _s in pl.conditions]
    signs: set[int] = set()
    seen: dict[int, tuple[float, float]] = {}
    for half, count in _SAMPLE_BOXES:
        axis = np.linspace(-half, half, count)
        pts = np.array(np.meshgrid(axis, axis)).reshape(2, -1)
        keep = np.ones(pts.shape[1], dtype=bool)
        for g in gs:
            keep &= np.broadcast_to(np.asarray(g(pts), dtype=float), keep.shape) >= 0
        vals = np.broadcast_to(np.asarray(fq(pts), dtype=float), keep.shape)[keep]
        for s in (-1, 0, 1):
            hit = np.flatnonzero(np.sign(vals) == s)
            if hit.size:
                signs.add(s)
                seen.setdefault(s, tuple(pts[:, keep][:, hit[0]]))
    where = ""
    if len(signs - {1}) and len(signs - {-1}):
        where = " and ".join(f"({a:.4g}, {b:.4g})" for a, b in seen.values())
    return signs, where


def attempt(model: Model, claim: Claim, progress: Progress | None = None) -> ProofAttempt | None:
    """Evidence for ``no cycle in SET`` / ``cycle in SET`` on a rational field (or, for
    ``no cycle``, a sin/cos/exp/tanh field: :mod:`proofkit.proofs._cycles_recast`), or None."""
    if claim.kind not in ("no cycle", "cycle"):
        return None
    field = _rational_field(model)
    if field is None:
        return _not_rational(model, claim, progress)
    from proofkit.proofs.cycles import planar_problem

    say = progress or (lambda _m: None)
    if claim_scope(model, claim) != "nominal" or len(model.states) != 2:
        # G's model has every parameter substituted: judge scope and size on the model
        return _not_proved(model, claim, str(planar_problem(model, claim)))
    g_model, q = field_times_denominator(model, field, 1)
    pl = planar_problem(g_model, claim)
    if isinstance(pl, str):
        return _not_proved(model, claim, pl)
    signs, where = _signs_on_set(q, pl)
    if where:
        why = (
            f"the claim's set reaches a pole: the denominator product {q} changes sign or "
            f"vanishes in it (numerically, at {where}); exclude the poles from the set"
        )
        return _not_proved(model, claim, why)
    notes = []
    for sign in (-1, 1) if signs == {-1} else (1, -1):
        g_model, q = field_times_denominator(model, field, sign)
        say(f"multiplying through by the denominators: Q = {q}")
        found = _with_sign(model, claim, g_model, q, sign, say)
        if isinstance(found, ProofAttempt):
            return found
        notes.append(found)
        if signs:
            break
    return _not_proved(model, claim, notes[0])


def _not_rational(model: Model, claim: Claim, progress: Progress | None) -> ProofAttempt | None:
    """Fields given by expression trees: Dulac in recast variables (``no cycle`` only)."""
    if not _trees(model):
        return None
    if claim.kind == "cycle":
        why = (
            "cycle claims are proved for polynomial and rational fields only (the annulus "
            "search needs one); this field has sin, cos, exp or tanh terms"
        )
        return _not_proved(model, claim, why)
    from proofkit.proofs import _cycles_recast

    return _cycles_recast.attempt(model, claim, progress)


def _not_proved(model: Model, claim: Claim, reason: str) -> ProofAttempt:
    return ProofAttempt(not_proved_entry(model, claim, reason), reason)


def _denominator(
    q: sp.Expr, pl: Any, conditions: list[sp.Expr], extras: tuple[int, ...] = (0,)
) -> dict | None:
    """Evidence that ``q >= eps`` where the conditions hold (smallest multipliers first)."""
    from proofkit.proofs._cycles_search import positive_program

    for extra in extras:
        for eps in _EPS:
            found = positive_program(pl, q, eps, conditions, extra)
            if found.evidence is not None:
                return found.evidence
    return None


def _with_sign(
    model: Model, claim: Claim, g_model: Model, q: sp.Expr, sign: int, say: Progress
) -> ProofAttempt | str:
    """The whole proof with ``Q = sign * prod D``, or the reason it failed."""
    from proofkit.proofs import cycles

    pl = cycles.planar_problem(g_model, claim)
    assert not isinstance(pl, str)  # the same set and states as the first call
    den = None
    if claim.kind == "no cycle":
        say(f"no cycle: Q = {q} > 0 on the set")
        den = _denominator(q, pl, [g for g, _s in pl.conditions])
        if den is None:
            return (
                f"the denominator product Q = {q} could not be shown positive on the set "
                "(a pole on or near it?)"
            )
    inner = cycles.attempt(g_model, claim, say)
    if inner is None or inner.entry["status"] != "proved":
        why = inner.detail if inner is not None else "no cycle method applies"
        return f"on G = f Q with Q = {q} (the same orbits; times and periods are G's): {why}"
    ev = inner.entry["evidence"]
    if den is None:
        xs = pl.xs
        w = _poly_expr(ev["W"], list(xs))
        num = ev["numbers"]
        lo, hi = sp.Rational(num["inner"]), sp.Rational(num["outer"])
        say(f"cycle: Q = {q} > 0 on the annulus")
        den = _denominator(q, pl, [sp.expand(w - lo), sp.expand(hi - w)], (0, 2))
        if den is None:
            return f"the denominator product Q = {q} could not be shown positive on the annulus"
    method = METHODS[inner.entry["method"]]
    evidence = {"reparametrized": ev, "denominator": {"sign": sign, **den}}
    entry = claim_entry(
        model, claim, "proved", method=method, theorem=THEOREMS[method], evidence=evidence
    )
    said = inner.detail.replace("div(B f)", "div(B G)").replace("period ", "G's period ")
    detail = f"on G = f Q with Q = {q} > 0 there: {said}"
    return ProofAttempt(entry, detail, inner.trace)
