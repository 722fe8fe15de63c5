"""Schemas for periodic-orbit claims of planar polynomial systems (sums of squares).

Every target polynomial is built here from the certificate's ``B`` or ``W``,
numbers, multipliers and free polynomials and the model's field over the
states (unshifted; nominal parameter values); the certificate supplies only
those and one Gram matrix per obligation (DEVELOPERS.md, "The theorem
schemas and their obligation names").

``index-no-equilibrium``: the set is convex (checked: every condition is
linear, or quadratic with a negative semidefinite quadratic part) and
``|f|^2 >= eps > 0`` on it, so it holds no equilibrium. A periodic orbit of a
planar field encloses an equilibrium (index theory); the region it encloses
lies in the convex set, so no periodic orbit lies in the set.

``bendixson-dulac``: the set is convex and ``div(B f) >= eps > 0`` on it. By
Green's theorem the integral of ``div(B f)`` over the region enclosed by a
periodic orbit in the set would be zero, so there is none.

``poincare-bendixson``: the annulus ``A = {inner <= W <= outer}`` is compact
(``W >= eps|x|^2 - offset``), the flow crosses ``W = outer`` strictly inward
and ``W = inner`` strictly outward (so ``A`` is positively invariant), ``A``
holds no equilibrium, lies in the claim's set and the domain, and contains the
stated witness point. The omega-limit set of the witness is then a periodic
orbit in ``A`` (Poincaré–Bendixson).

This module must never import anything outside the standard library and
:mod:`proofkit.audit`, and never use floating point.
"""

from __future__ import annotations

from fractions import Fraction

from proofkit.audit.algebra import (
    Poly,
    ldl_pivots,
    poly_add,
    poly_constant,
    poly_derivative,
    poly_eval,
    poly_mul,
    poly_scale,
)
from proofkit.audit.numbers import Num
from proofkit.audit.read import Condition, get, only_keys, read_poly, read_vector
from proofkit.audit.schemas import (
    Checks,
    ClaimData,
    ModelData,
    check_squares,
    nominal_field,
    read_function,
    read_multipliers,
    read_numbers,
    require,
    schema,
    sum_of_squares_norm,
)

__all__ = ["annulus", "check_convex", "divergence", "dulac", "index_no_equilibrium"]

NO_CYCLE_KEYS = {"numbers", "multipliers", "squares"}
ANNULUS_KEYS = {"W", "numbers", "multipliers", "free", "squares", "witness"}


def _neg(p: Poly) -> Poly:
    return poly_scale(p, Num.of(-1))


def _const(c: Fraction, n: int) -> Poly:
    return poly_constant(Num.of(c), n)


def divergence(p: list[Poly]) -> Poly:
    """``sum_i d p_i / d x_i``."""
    out: Poly = {}
    for i, pi in enumerate(p):
        out = poly_add(out, poly_derivative(pi, i))
    return out


def _lie(w: Poly, field: list[Poly]) -> Poly:
    out: Poly = {}
    for i, fi in enumerate(field):
        out = poly_add(out, poly_mul(poly_derivative(w, i), fi))
    return out


def check_convex(conditions: tuple[Condition, ...], n: int) -> None:
    """Each ``g >= 0`` (or ``> 0``) is convex: ``g`` linear, or quadratic and concave.

    A quadratic ``g`` is concave when its Hessian is negative semidefinite,
    checked by the exact LDL' of minus the Hessian. A set of such conditions
    is an intersection of convex sets: convex, hence simply connected.
    """
    for k, (g, _strict) in enumerate(conditions):
        degree = max((sum(e) for e in g), default=0)
        require(
            degree <= 2,
            "convex",
            f"condition {k + 1} has degree {degree}; convexity is checked for degree <= 2 only",
        )
        if degree < 2:
            continue
        hess = [[Num.of(0) for _ in range(n)] for _ in range(n)]
        for e, c in g.items():
            if sum(e) != 2:
                continue
            idx = [i for i in range(n) for _ in range(e[i])]
            i, j = idx
            if i == j:
                hess[i][i] = c * Num.of(2)
            else:
                hess[i][j] = c
                hess[j][i] = c
        res = ldl_pivots([[-x for x in row] for row in hess])
        require(
            not isinstance(res, str),
            "convex",
            f"condition {k + 1} is not concave (its quadratic part is not negative "
            "semidefinite), so convexity of the set is not shown",
        )


def _planar(model: ModelData, claim: ClaimData) -> tuple[list[Poly], tuple[Condition, ...]]:
    require(len(model.states) == 2, "planar", "this theorem is about planar systems (2 states)")
    require(claim.set is not None, "set", "the claim has no set")
    return nominal_field(model), claim.set or ()


def _no_cycle(
    model: ModelData, claim: ClaimData, checks: Checks, what: Poly, name: str, keys: set[str]
) -> None:
    """The shared part: convex set, ``what - eps - sum s_i g_i`` and the multipliers."""
    ev, w = claim.evidence, f"{claim.where}.evidence"
    only_keys(ev, keys, w)
    cset = claim.set or ()
    n = len(model.states)
    check_convex(cset, n)
    checks.ok(
        f"the set's {len(cset)} condition(s) are each linear or concave quadratic "
        "(checked exactly): the set is convex, hence simply connected"
    )
    eps = read_numbers(ev, {"eps"}, w)["eps"]
    require(eps > 0, "numbers", f"eps = {eps} must be positive")
    names = [f"s{i + 1}" for i in range(len(cset))]
    mult = read_multipliers(ev, names, n, w)
    target = poly_add(what, _const(-eps, n))
    for i, (g, _strict) in enumerate(cset):
        target = poly_add(target, _neg(poly_mul(mult[f"s{i + 1}"], g)))
    targets = {name: target, **{k: mult[k] for k in names}}
    check_squares(targets, ev, n, checks, w)


@schema("no cycle", "no-equilibrium", "index-no-equilibrium")
def index_no_equilibrium(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """Convex set with |f|^2 >= eps > 0 on it: no equilibrium, hence no periodic orbit."""
    field, _cset = _planar(model, claim)
    norm: Poly = {}
    for fi in field:
        norm = poly_add(norm, poly_mul(fi, fi))
    _no_cycle(model, claim, checks, norm, "apart", NO_CYCLE_KEYS)
    checks.ok(
        "apart: |f|^2 - eps - sum s_i g_i with every s_i a sum of squares, so |f|^2 >= eps > 0 "
        "on the set: it holds no equilibrium"
    )
    checks.ok(
        "a periodic orbit of a planar field encloses an equilibrium (index theory), and the "
        "region it encloses lies in the convex set: no periodic orbit lies in the set"
    )


@schema("no cycle", "dulac", "bendixson-dulac")
def dulac(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """Convex set with div(B f) >= eps > 0 on it: no periodic orbit (Bendixson–Dulac)."""
    field, _cset = _planar(model, claim)
    w = f"{claim.where}.evidence"
    b = read_function(claim.evidence, "B", 2, w)
    div = divergence([poly_mul(b, fi) for fi in field])
    _no_cycle(model, claim, checks, div, "divergence", NO_CYCLE_KEYS | {"B"})
    checks.ok(
        "divergence: div(B f) - eps - sum s_i g_i with every s_i a sum of squares, so "
        "div(B f) >= eps > 0 on the set (B a polynomial, recomputed from the field)"
    )
    checks.ok(
        "by Green's theorem a periodic orbit in the simply connected set would make the "
        "integral of div(B f) over the region it encloses zero (Bendixson–Dulac): none exists"
    )


def _annulus_numbers(claim: ClaimData, w: str, n: int, wpoly: Poly) -> dict[str, Fraction]:
    num = read_numbers(claim.evidence, {"eps", "inner", "outer", "offset"}, w)
    require(num["eps"] > 0, "numbers", f"eps = {num['eps']} must be positive")
    require(num["inner"] < num["outer"], "numbers", "inner must be less than outer")
    witness = read_vector(get(claim.evidence, "witness", list, w), 0, f"{w}.witness", n)
    value = poly_eval(wpoly, witness).a
    require(
        num["inner"] <= value <= num["outer"],
        "witness",
        f"W = {value} at the witness point, outside [inner, outer]",
    )
    return num


@schema("cycle", "annulus", "poincare-bendixson")
def annulus(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """A compact, positively invariant annulus without equilibria inside the set."""
    field, cset = _planar(model, claim)
    ev, w, n = claim.evidence, f"{claim.where}.evidence", 2
    only_keys(ev, ANNULUS_KEYS, w)
    wp = read_function(ev, "W", n, w)
    num = _annulus_numbers(claim, w, n, wp)
    eps = Num.of(num["eps"])
    free = get(ev, "free", dict, w)
    only_keys(free, {"p_o", "p_i"}, f"{w}.free")
    p_o = read_poly(get(free, "p_o", list, f"{w}.free"), n, 0, f"{w}.free.p_o")
    p_i = read_poly(get(free, "p_i", list, f"{w}.free"), n, 0, f"{w}.free.p_i")
    dom = model.domain or ()
    names = ["a1", "a2"]
    names += [f"b{i + 1}_{k}" for i in range(len(cset)) for k in (1, 2)]
    names += [f"c{j + 1}_{k}" for j in range(len(dom)) for k in (1, 2)]
    mult = read_multipliers(ev, names, n, w)
    above = poly_add(wp, _const(-num["inner"], n))  # W - inner
    below = poly_add(_const(num["outer"], n), _neg(wp))  # outer - W
    lie = _lie(wp, field)
    norm: Poly = {}
    for fi in field:
        norm = poly_add(norm, poly_mul(fi, fi))
    minus_eps = poly_constant(-eps, n)
    targets: dict[str, Poly] = {
        "bounded": poly_add(
            poly_add(wp, poly_scale(sum_of_squares_norm(n), -eps)), _const(num["offset"], n)
        ),
        "outer": poly_add(poly_add(_neg(lie), minus_eps), _neg(poly_mul(p_o, below))),
        "inner": poly_add(poly_add(lie, minus_eps), poly_mul(p_i, above)),
        "apart": poly_add(
            poly_add(norm, minus_eps),
            _neg(poly_add(poly_mul(mult["a1"], above), poly_mul(mult["a2"], below))),
        ),
    }
    for label, conds, letter in (("within", cset, "b"), ("domain", dom, "c")):
        for i, (g, strict) in enumerate(conds):
            t = poly_add(g, minus_eps) if strict else g
            t = poly_add(t, _neg(poly_mul(mult[f"{letter}{i + 1}_1"], above)))
            targets[f"{label} {i + 1}"] = poly_add(
                t, _neg(poly_mul(mult[f"{letter}{i + 1}_2"], below))
            )
    targets.update({k: mult[k] for k in names})
    _annulus_words(checks, num, len(cset), len(dom))
    check_squares(targets, ev, n, checks, w)
    checks.ok(
        "A is compact, positively invariant and free of equilibria, and holds the witness: by "
        "the Poincaré–Bendixson theorem the witness's omega-limit set is a periodic orbit in A, "
        "which lies in the claim's set"
    )


def _annulus_words(checks: Checks, num: dict[str, Fraction], nset: int, ndom: int) -> None:
    checks.ok(
        f"A = {{{num['inner']} <= W <= {num['outer']}}}; W at the witness point lies in "
        "[inner, outer] (recomputed), so A is not empty"
    )
    checks.ok(
        "bounded: W - eps|x|^2 + offset, so W >= eps|x|^2 - offset and A is closed and bounded"
    )
    checks.ok(
        "outer: -lie(W) - eps + p_o (W - outer) and inner: lie(W) - eps + p_i (W - inner) with "
        "p_o, p_i any polynomials: lie(W) <= -eps on W = outer and >= eps on W = inner, so the "
        "flow enters A across both boundary curves and A is positively invariant"
    )
    checks.ok(
        "apart: |f|^2 - eps - a1 (W - inner) - a2 (outer - W) with a1, a2 sums of squares: "
        "|f|^2 >= eps on A, so A holds no equilibrium"
    )
    if nset or ndom:
        checks.ok(
            f"within i / domain j: g - b1 (W - inner) - b2 (outer - W) (minus eps when strict) "
            f"for the set's {nset} and the domain's {ndom} condition(s): A lies in both"
        )


# The same theorems for rational fields (multiplied through by a positive denominator),
# and Bendixson–Dulac for sin/cos/exp/tanh fields in recast variables.
from proofkit.audit import _rational_cycles, _recast_cycles  # noqa: E402, F401
