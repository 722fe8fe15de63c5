"""Schema for a region of attraction of a rational field ``f_i = N_i / D_i``.

Theorem ``region-of-attraction-rational-field`` (method ``sublevel-set-rational``,
nominal scope). Let ``Q`` be the product of the distinct denominators and
``G_i = f_i Q = N_i Q / D_i`` (a polynomial, built here). The evidence has two
parts:

- ``reparametrized``: the evidence of the ``region-of-attraction`` schema for
  the polynomial field ``G`` (checked by :func:`proofkit.audit.lyapunov.region_of_attraction`
  on that field): ``{V <= level}`` lies in the domain, holds the claim's set,
  and ``lie_G(V) < 0`` there away from the point;
- ``denominator``: ``Q(x* + y) - eps - t (level - V)`` and ``t`` are sums of
  squares, so ``Q >= eps > 0`` on ``{V <= level}``.

On ``{V <= level}`` every denominator is then nonzero, ``f = G / Q`` and
``lie_f(V) = lie_G(V) / Q < 0`` away from the point: the trajectories of ``f``
are those of ``G`` traversed with the positive speed ``1/Q`` (bounded on the
compact set), so the set is forward invariant for ``f`` and every trajectory
in it converges to the point.

Theorem ``lyapunov-global-in-domain-rational-field`` (method
``lyapunov-domain-rational``, claim ``globally stable`` inside the domain): the
``lyapunov-global-in-domain`` evidence for ``G`` under ``reparametrized``, and
under ``denominator`` ``Q(x* + y) - eps - sum_j w_j h_j(x* + y)`` and the
``w_j`` sums of squares (``Q > 0`` on the domain).

This module must never import anything outside the standard library and
:mod:`proofkit.audit`, and never use floating point.
"""

from __future__ import annotations

from dataclasses import replace

from proofkit.audit.algebra import (
    Poly,
    poly_add,
    poly_constant,
    poly_eval,
    poly_mul,
    poly_scale,
    poly_substitute,
)
from proofkit.audit.lyapunov import lyapunov_in_domain, region_of_attraction
from proofkit.audit.numbers import Num
from proofkit.audit.read import get, only_keys
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

__all__ = ["at_nominal", "lyapunov_in_domain_rational", "region_of_attraction_rational"]


def at_nominal(p: Poly, model: ModelData) -> Poly:
    """A polynomial over (states, uncertain parameters) with the parameters at nominal."""
    n = len(model.states)
    values = [{tuple(int(i == j) for j in range(n)): Num.of(1)} for i in range(n)]
    unknown = [q.name for q in model.uncertain if q.nominal is None]
    require(not unknown, "field", f"the nominal value of {unknown} is not rational")
    values += [poly_constant(Num.of(q.nominal or 0), n) for q in model.uncertain]
    return poly_substitute(p, values, n)


def _product(ps: list[Poly], n: int) -> Poly:
    out = poly_constant(Num.of(1), n)
    for p in ps:
        out = poly_mul(out, p)
    return out


def reparametrized(model: ModelData, point: list[Num]) -> tuple[ModelData, Poly]:
    """The polynomial field ``G = f Q`` over the states, and ``Q``.

    ``Q`` is the product of the distinct denominators, negated when it is negative at
    the point (so that ``Q > 0`` there; a zero there rejects).
    """
    require(model.numerators is not None, "field", "the certificate states no vector field")
    require(model.denominators is not None, "field", "the field has no denominators")
    n = len(model.states)
    nums = [at_nominal(p, model) for p in model.numerators or ()]
    dens = [at_nominal(p, model) for p in model.denominators or ()]
    distinct: list[Poly] = []
    for d in dens:
        if d not in distinct:
            distinct.append(d)
    q = _product(distinct, n)
    q0 = poly_eval(q, point)
    require(not q0.is_zero(), "definedness", "a denominator is 0 at the point")
    sign = Num.of(1 if q0.sign() > 0 else -1)
    q = poly_scale(q, sign)
    g = []
    for num, den in zip(nums, dens, strict=True):
        others = [d for d in distinct if d != den]
        g.append(poly_scale(poly_mul(num, _product(others, n)), sign))
    for k, (c, strict) in enumerate(model.conditions):
        c = at_nominal(c, model)
        implied = strict and any(_proportional(c, poly_mul(d, d)) for d in distinct)
        require(implied, "definedness", f"condition {k + 1} is not a nonzero denominator")
    view = ModelData(
        model.states, (), model.states, tuple(g), None, (), model.domain, model.equilibria
    )
    return view, q


def _proportional(p: Poly, q: Poly) -> bool:
    """``p = c q`` for a rational ``c > 0``."""
    if not p or set(p) != set(q):
        return False
    ratios = {p[e].a / q[e].a for e in p}
    return len(ratios) == 1 and next(iter(ratios)) > 0


def _shift(point: list[Num], n: int) -> list[Poly]:
    """The substitution ``x -> x* + y``."""
    return [
        poly_add({tuple(int(i == j) for j in range(n)): Num.of(1)}, poly_constant(c, n))
        for i, c in enumerate(point)
    ]


@schema("attracts", "sublevel-set-rational", "region-of-attraction-rational-field")
def region_of_attraction_rational(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """A region of attraction of G = f Q, and Q > 0 on it: the same for f."""
    ev, w = claim.evidence, f"{claim.where}.evidence"
    only_keys(ev, {"reparametrized", "denominator"}, w)
    require(claim.point is not None and claim.d == 0, "equilibrium", "needs a rational point")
    view, q = reparametrized(model, list(claim.point or ()))
    checks.ok(
        "G = f Q with Q = +-(the product of the distinct denominators), positive at the "
        "point, is a polynomial field (built by the audit)"
    )
    inner = get(ev, "reparametrized", dict, w)
    region_of_attraction(view, replace(claim, evidence=inner, where=f"{w}.reparametrized"), checks)
    n = len(model.states)
    wr, wd = f"{w}.reparametrized", f"{w}.denominator"
    v = read_function(inner, "V", n, wr)
    level = read_numbers(inner, {"eps", "level"}, wr)["level"]
    den = get(ev, "denominator", dict, w)
    only_keys(den, {"numbers", "multipliers", "squares"}, wd)
    eps = read_numbers(den, {"eps"}, wd)["eps"]
    require(eps > 0, "numbers", "the denominator's eps must be positive")
    t = read_multipliers(den, ["t"], n, wd)["t"]
    shift = _shift(list(claim.point or ()), n)
    gap = poly_add(poly_constant(Num.of(level), n), poly_scale(v, Num.of(-1)))
    target = poly_add(poly_substitute(q, shift, n), poly_constant(Num.of(-eps), n))
    target = poly_add(target, poly_scale(poly_mul(t, gap), Num.of(-1)))
    check_squares({"denominator": target, "t": t}, den, n, checks, wd)
    checks.ok(
        f"Q - eps - t (level - V) with eps = {eps} and t sums of squares: Q > 0 on "
        "{V <= level}, so there f = G/Q is defined, lie_f(V) = lie_G(V)/Q < 0 away from the "
        "point, and the trajectories of f are those of G at positive speed"
    )


@schema("globally stable", "lyapunov-domain-rational", "lyapunov-global-in-domain-rational-field")
def lyapunov_in_domain_rational(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """The domain invariant and V decreasing for G = f Q, and Q > 0 on the domain: the same for f.

    On the domain ``Q >= eps > 0``, so f = G/Q is defined there, ``lie_f(h_j) =
    lie_G(h_j)/Q > 0`` where ``h_j = 0`` (the domain stays forward invariant) and
    ``lie_f(V) = lie_G(V)/Q <= -eps|y|^(2m)/Q``, with Q bounded above on the bounded
    orbit ({V <= V(x0)} in the domain is bounded), so every trajectory tends to the point.
    """
    ev, w = claim.evidence, f"{claim.where}.evidence"
    only_keys(ev, {"reparametrized", "denominator"}, w)
    require(claim.point is not None and claim.d == 0, "equilibrium", "needs a rational point")
    require(model.domain is not None, "domain", "this theorem needs a declared domain")
    view, q = reparametrized(model, list(claim.point or ()))
    checks.ok(
        "G = f Q with Q = +-(the product of the distinct denominators), positive at the "
        "point, is a polynomial field (built by the audit)"
    )
    inner = get(ev, "reparametrized", dict, w)
    lyapunov_in_domain(view, replace(claim, evidence=inner, where=f"{w}.reparametrized"), checks)
    n, wd = len(model.states), f"{w}.denominator"
    den = get(ev, "denominator", dict, w)
    only_keys(den, {"numbers", "multipliers", "squares"}, wd)
    eps = read_numbers(den, {"eps"}, wd)["eps"]
    require(eps > 0, "numbers", "the denominator's eps must be positive")
    dom = model.domain or ()
    names = [f"w{j + 1}" for j in range(len(dom))]
    mult = read_multipliers(den, names, n, wd)
    shift = _shift(list(claim.point or ()), n)
    target = poly_add(poly_substitute(q, shift, n), poly_constant(Num.of(-eps), n))
    for j, (h, _strict) in enumerate(dom):
        hj = poly_substitute(h, shift, n)  # the domain is over the states only
        target = poly_add(target, poly_scale(poly_mul(mult[f"w{j + 1}"], hj), Num.of(-1)))
    check_squares({"denominator": target, **mult}, den, n, checks, wd)
    checks.ok(
        f"Q - eps - sum_j w_j h_j with eps = {eps} and w_j sums of squares: Q > 0 on the "
        "domain, so there f = G/Q is defined and its trajectories are those of G at "
        "positive speed: the domain is forward invariant for f and every trajectory "
        "starting in it tends to the point"
    )
