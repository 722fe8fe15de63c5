"""Schemas for periodic-orbit claims of planar rational fields ``f_i = N_i / D_i``.

Let ``Q = sign * (the product of the distinct denominators)`` (nominal values,
each denominator scaled to coefficient 1 at its largest exponent tuple, so
that ``4 x + 4`` and ``x + 1`` count once; ``sign`` is +1 or -1, stated by the
evidence) and ``G_i = f_i Q``, a polynomial field built here from the model's
numerators and denominators (nothing the certificate says about ``G``
or ``Q`` is read). The evidence has two parts:

- ``reparametrized``: the evidence of the polynomial cycle schema
  (:mod:`proofkit.audit.cycles`) for the field ``G``, checked by that schema's
  own function on ``G``;
- ``denominator``: ``{"sign", "numbers": {"eps"}, "multipliers", "squares"}``
  with one obligation ``denominator`` that shows ``Q >= eps > 0`` where the
  polynomial theorem works: on the claim's set (no-cycle kinds: ``Q - eps -
  sum_i t_i g_i``, multipliers ``t1..tk``) or on the annulus (``Q - eps - t1
  (W - inner) - t2 (outer - W)``, ``W`` and the levels from the reparametrized
  part).

Where ``Q > 0`` every denominator is nonzero, ``f = G / Q`` is smooth, and the
orbits of ``f`` are those of ``G`` traversed with the positive speed ``1/Q``:

- ``index-no-equilibrium-rational-field``: ``G`` has no zero on the convex set,
  so neither has ``f``; a periodic orbit of ``f`` in the set would enclose one.
- ``bendixson-dulac-rational-field``: ``div(B G) >= eps`` on the convex set and
  ``B G = (B Q) f``, so ``B Q`` is a Dulac function for ``f`` there.
- ``poincare-bendixson-rational-field``: ``lie_f(W) = lie_G(W) / Q`` has the sign
  of ``lie_G(W)`` on the annulus, so it is positively invariant for ``f`` too,
  holds no zero of ``f``, and the witness's omega-limit set is a periodic orbit.

The model's conditions where the field is defined must be exactly "a
denominator is nonzero" (else the claim is rejected), and ``Q > 0`` on the set
(or annulus) is the evidence that no pole lies there.

This module must never import anything outside the standard library and
:mod:`proofkit.audit`, and never use floating point.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import replace
from typing import Any

from proofkit.audit._rational_basin import at_nominal
from proofkit.audit.algebra import (
    Poly,
    poly_add,
    poly_constant,
    poly_mul,
    poly_scale,
)
from proofkit.audit.cycles import annulus, dulac, index_no_equilibrium
from proofkit.audit.numbers import Num
from proofkit.audit.read import Condition, FormatError, get, only_keys
from proofkit.audit.schemas import (
    Checks,
    ClaimData,
    ModelData,
    check_squares,
    read_function,
    read_multipliers,
    read_numbers,
    require,
    schema,
)

__all__ = [
    "annulus_rational",
    "dulac_rational",
    "field_times_denominator",
    "index_no_equilibrium_rational",
]

DENOMINATOR_KEYS = {"sign", "numbers", "multipliers", "squares"}
Inner = Callable[[ModelData, ClaimData, Checks], None]


def _product(ps: list[Poly], n: int) -> Poly:
    out = poly_constant(Num.of(1), n)
    for p in ps:
        out = poly_mul(out, p)
    return out


def _monic(p: Poly) -> tuple[Num, Poly]:
    """``p = c P`` with ``P``'s coefficient of its largest exponent tuple equal to 1."""
    require(bool(p), "field", "a denominator is identically zero")
    c = p[max(p)]
    return c, poly_scale(p, Num.of(1) / c)


def _positive_multiple(p: Poly, q: Poly) -> bool:
    """``p = c q`` for a rational ``c > 0``."""
    if not p or set(p) != set(q):
        return False
    ratios = {p[e].a / q[e].a for e in p}
    return len(ratios) == 1 and next(iter(ratios)) > 0


def field_times_denominator(model: ModelData, sign: int) -> tuple[ModelData, Poly]:
    """The polynomial model of ``G = f Q`` over the states, and ``Q`` (both built here).

    ``Q = sign * prod(distinct denominators)`` at the nominal parameter values, each
    denominator ``D_i = c_i P_i`` scaled to ``P_i`` (coefficient 1 at its largest
    exponent tuple, so that ``x + 1`` and ``4 x + 4`` count once); ``G_i = sign *
    N_i / c_i * prod(the other P)``. Every condition of the model must say that one of
    those denominators is nonzero.
    """
    require(model.numerators is not None, "field", "the certificate states no vector field")
    require(model.denominators is not None, "field", "the field has no denominators")
    n = len(model.states)
    nums = [at_nominal(p, model) for p in model.numerators or ()]
    dens = [_monic(at_nominal(p, model)) for p in model.denominators or ()]
    distinct: list[Poly] = []
    for _c, d in dens:
        if d not in distinct:
            distinct.append(d)
    s = Num.of(sign)
    q = poly_scale(_product(distinct, n), s)
    g = []
    for num, (c, den) in zip(nums, dens, strict=True):
        others = [d for d in distinct if d != den]
        g.append(poly_scale(poly_mul(num, _product(others, n)), s / c))
    for k, (c, strict) in enumerate(model.conditions):
        c = at_nominal(c, model)
        implied = strict and any(_positive_multiple(c, poly_mul(d, d)) for d in distinct)
        require(implied, "definedness", f"condition {k + 1} is not a nonzero denominator")
    view = ModelData(
        model.states, (), model.states, tuple(g), None, (), model.domain, model.equilibria
    )
    return view, q


def _sign(den: dict[str, Any], w: str) -> int:
    sign = get(den, "sign", int, w)
    if sign not in (1, -1):
        raise FormatError(f"{w}.sign: must be 1 or -1")
    return sign


def _positive_on(
    q: Poly, conditions: list[Poly], den: dict[str, Any], n: int, checks: Checks, w: str
) -> str:
    """Check ``denominator``: ``Q - eps - sum_i t_i c_i`` and the ``t_i`` are sums of squares."""
    eps = read_numbers(den, {"eps"}, w)["eps"]
    require(eps > 0, "numbers", f"the denominator's eps = {eps} must be positive")
    names = [f"t{i + 1}" for i in range(len(conditions))]
    mult = read_multipliers(den, names, n, w)
    target = poly_add(q, poly_constant(Num.of(-eps), n))
    for name, c in zip(names, conditions, strict=True):
        target = poly_add(target, poly_scale(poly_mul(mult[name], c), Num.of(-1)))
    check_squares({"denominator": target, **mult}, den, n, checks, w)
    return str(eps)


def _parts(model: ModelData, claim: ClaimData, checks: Checks) -> tuple[Any, ...]:
    """The field G = f Q (signed as stated), Q, the two parts of the evidence."""
    ev, w = claim.evidence, f"{claim.where}.evidence"
    only_keys(ev, {"reparametrized", "denominator"}, w)
    require(len(model.states) == 2, "planar", "this theorem is about planar systems (2 states)")
    require(claim.set is not None, "set", "the claim has no set")
    den = get(ev, "denominator", dict, w)
    only_keys(den, DENOMINATOR_KEYS, f"{w}.denominator")
    view, q = field_times_denominator(model, _sign(den, f"{w}.denominator"))
    checks.ok(
        "G = f Q with Q = +-(the product of the distinct denominators) is a polynomial field "
        "(built by the audit from the model's numerators and denominators)"
    )
    inner = get(ev, "reparametrized", dict, w)
    inner_claim = replace(claim, evidence=inner, where=f"{w}.reparametrized")
    return view, q, inner_claim, den


def _no_cycle_rational(model: ModelData, claim: ClaimData, checks: Checks, fn: Inner) -> None:
    """The polynomial no-cycle schema ``fn`` on G, and Q > 0 on the claim's set."""
    view, q, inner_claim, den = _parts(model, claim, checks)
    fn(view, inner_claim, checks)
    cset: tuple[Condition, ...] = claim.set or ()
    where = f"{claim.where}.evidence.denominator"
    eps = _positive_on(q, [g for g, _s in cset], den, 2, checks, where)
    checks.ok(
        f"denominator: Q - {eps} - sum t_i g_i with every t_i a sum of squares, so Q >= {eps} "
        "on the closed set: no pole lies there, f = G/Q, and the orbits of f there are those "
        "of G traversed at the positive speed 1/Q"
    )


@schema("no cycle", "no-equilibrium-rational", "index-no-equilibrium-rational-field")
def index_no_equilibrium_rational(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """No zero of G = f Q on the convex set and Q > 0 there: f has no periodic orbit in it."""
    _no_cycle_rational(model, claim, checks, index_no_equilibrium)
    checks.ok("G = f Q has no zero on the set and Q > 0 there, so f has none either")


@schema("no cycle", "dulac-rational", "bendixson-dulac-rational-field")
def dulac_rational(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """div(B G) > 0 on the convex set and Q > 0 there: B Q is a Dulac function for f."""
    _no_cycle_rational(model, claim, checks, dulac)
    checks.ok(
        "B G = (B Q) f with B Q smooth on the set, so div((B Q) f) = div(B G) > 0 there: "
        "B Q is a Dulac function for f on the simply connected set"
    )


@schema("cycle", "annulus-rational", "poincare-bendixson-rational-field")
def annulus_rational(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """A trapping annulus for G = f Q on which Q > 0: it traps the orbits of f too."""
    view, q, inner_claim, den = _parts(model, claim, checks)
    annulus(view, inner_claim, checks)
    wr = inner_claim.where + ".evidence"
    wp = read_function(inner_claim.evidence, "W", 2, wr)
    num = read_numbers(inner_claim.evidence, {"eps", "inner", "outer", "offset"}, wr)
    above = poly_add(wp, poly_constant(Num.of(-num["inner"]), 2))
    below = poly_add(poly_constant(Num.of(num["outer"]), 2), poly_scale(wp, Num.of(-1)))
    eps = _positive_on(q, [above, below], den, 2, checks, f"{claim.where}.evidence.denominator")
    checks.ok(
        f"denominator: Q - {eps} - t1 (W - inner) - t2 (outer - W) with t1, t2 sums of squares, "
        f"so Q >= {eps} on the annulus: no pole lies there, f = G/Q, lie_f(W) = lie_G(W)/Q has "
        "the sign of lie_G(W), and f has no zero there"
    )
    checks.ok(
        "so the annulus is compact, positively invariant for f and free of its equilibria: by "
        "the Poincaré–Bendixson theorem the witness's omega-limit set under f is a periodic "
        "orbit in the annulus, which lies in the claim's set"
    )
