"""Schemas for Lyapunov functions over parameter ranges (scope ``range``), by sums of squares.

The uncertain parameters ``p`` are extra variables, constrained to their box by
the multipliers of ``box_j(p) = (p_j - lo_j)(hi_j - p_j) >= 0``. Variables of
every polynomial here: the deviation ``y = x - x*(p)`` (state names), then the
uncertain parameters. The equilibrium is the claim's fixed rational point or a
``moving`` point with polynomial coordinates (no radical); the audit checks
``g(0, p) = 0`` identically for the shifted field ``g(y, p) = f(x*(p) + y, p)``.

``lyapunov-global-over-range`` (claim ``globally stable``, no domain) and
``lyapunov-local-over-range`` (claim ``stable``): ``V(y, p)`` with no term of
degree below 2 in ``y``, and sums of squares (multipliers are obligations too)

* ``positive``: ``V - eps|y|^2 - sum_j a_j box_j``; ``a1``..``am``;
* ``decrease``: ``-lie(V) - eps (|y|^2)^m - sum_j b_j box_j`` (local: also
  ``- s0 (level - V)``, and ``s0``); ``b1``..``bm``; ``lie(V) = sum_i dV/dy_i g_i``
  (``p`` is constant along trajectories).

``region-of-attraction-over-range`` (claim ``attracts SET``): as local, and
``inside``: ``level - V - sum_i s_i g_i(x*(p) + y) - sum_j c_j box_j`` over the set's
conditions; for each domain condition ``i``: ``domain i``: ``h_i(x*(p) + y) -
t_i (level - V) - sum_j d{i}_{j} box_j`` (minus eps when strict).

For each fixed ``p`` in the box every ``box_j(p) >= 0``, so ``V(., p)`` meets the
hypotheses of the nominal theorems (``lyapunov-global`` / ``lyapunov-local``):
the claim holds for every value in the ranges.

This module must never import anything outside the standard library and
:mod:`proofkit.audit`, and never use floating point.
"""

from __future__ import annotations

from fractions import Fraction

from proofkit.audit.algebra import (
    Poly,
    poly_add,
    poly_constant,
    poly_derivative,
    poly_mul,
    poly_pow,
    poly_scale,
    poly_substitute,
)
from proofkit.audit.numbers import FormatError, Num
from proofkit.audit.read import get, only_keys, read_poly
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
    "METHOD",
    "lyapunov_global_range",
    "lyapunov_local_range",
    "region_of_attraction_range",
]

METHOD = "lyapunov-range"
EVIDENCE_KEYS = {"V", "numbers", "multipliers", "squares", "margin_power"}
MAX_MARGIN_POWER = 4


def _var(i: int, nv: int) -> Poly:
    return {tuple(int(i == j) for j in range(nv)): Num.of(1)}


def _point(model: ModelData, claim: ClaimData, nv: int) -> list[Poly]:
    """The equilibrium's coordinates as polynomials in the parameters (over ``nv`` variables)."""
    n, m = len(model.states), len(model.uncertain)
    if claim.moving is None:
        require(
            claim.point is not None and claim.d == 0,
            "equilibrium",
            "these schemas need a rational point or a polynomial moving point",
        )
        return [poly_constant(c, nv) for c in claim.point or ()]
    w = f"{claim.where}.claim.equilibrium.moving"
    only_keys(claim.moving, {"coordinates", "radicand"}, w)
    require(
        claim.moving.get("radicand") is None,
        "equilibrium",
        "a moving point with a square root is not supported by these schemas",
    )
    data = get(claim.moving, "coordinates", list, w)
    if len(data) != n:
        raise FormatError(f"{w}.coordinates: one polynomial per state")
    return [
        {(0,) * n + e: c for e, c in read_poly(c, m, 0, f"{w}.coordinates[{i}]").items()}
        for i, c in enumerate(data)
    ]


def _shifted(model: ModelData, claim: ClaimData) -> list[Poly]:
    """``g(y, p) = f(x*(p) + y, p)``, checked to vanish at ``y = 0`` for every ``p``."""
    require(model.numerators is not None, "field", "the certificate states no vector field")
    require(model.denominators is None, "field", "a rational field is not supported here")
    require(not model.conditions, "field", "the field is defined only under conditions")
    n, m = len(model.states), len(model.uncertain)
    nv = n + m
    point = _point(model, claim, nv)
    values = [poly_add(_var(i, nv), point[i]) for i in range(n)]
    values += [_var(n + j, nv) for j in range(m)]
    g = [poly_substitute(f, values, nv) for f in model.numerators or ()]
    for i, gi in enumerate(g):
        at_zero = {e: c for e, c in gi.items() if not any(e[:n])}
        require(not at_zero, "equilibrium", f"f{i + 1} does not vanish at the point for every p")
    return g


def _box(model: ModelData, j: int, n: int, nv: int) -> Poly:
    lo, hi = model.uncertain[j].range or (Fraction(0), Fraction(0))
    x = _var(n + j, nv)
    return poly_mul(
        poly_add(x, poly_constant(Num.of(-lo), nv)),
        poly_add(poly_constant(Num.of(hi), nv), poly_scale(x, Num.of(-1))),
    )


def _minus(p: Poly, q: Poly) -> Poly:
    return poly_add(p, poly_scale(q, Num.of(-1)))


def _lift(model: ModelData, claim: ClaimData, h: Poly) -> Poly:
    """``h(x*(p) + y)`` for a polynomial ``h`` over the states."""
    n, nv = len(model.states), len(model.states) + len(model.uncertain)
    point = _point(model, claim, nv)
    return poly_substitute(h, [poly_add(_var(i, nv), point[i]) for i in range(n)], nv)


def _check(model: ModelData, claim: ClaimData, checks: Checks, kind: str) -> None:
    """kind: "global", "local" or "region" (the claim's set and the domain as well)."""
    ev, w = claim.evidence, f"{claim.where}.evidence"
    only_keys(ev, EVIDENCE_KEYS, w)
    n, m = len(model.states), len(model.uncertain)
    nv = n + m
    g = _shifted(model, claim)
    ranges = " and ".join(
        f"{p.name} in [{p.range[0]}, {p.range[1]}]" for p in model.uncertain if p.range is not None
    )
    checks.ok(f"the point is an exact zero of the field for every {ranges}; field shifted to it")
    v = read_function(ev, "V", nv, w)
    require(all(sum(e[:n]) >= 2 for e in v), "V", "V has a term of degree below 2 in y")
    num = read_numbers(ev, {"eps"} if kind == "global" else {"eps", "level"}, w)
    for k, x in num.items():
        require(x > 0, "numbers", f"{k} = {x} must be positive")
    mp = ev.get("margin_power", 1)
    require(
        isinstance(mp, int) and not isinstance(mp, bool) and 1 <= mp <= MAX_MARGIN_POWER,
        "margin_power",
        f"margin_power must be an integer 1..{MAX_MARGIN_POWER}",
    )
    cset = claim.set or () if kind == "region" else ()
    dom = model.domain or () if kind == "region" else ()
    boxed = {"positive": "a", "decrease": "b"}
    if kind == "region":
        boxed["inside"] = "c"
        boxed.update({f"domain {i + 1}": f"d{i + 1}_" for i in range(len(dom))})
    names = [f"{pre}{j + 1}" for pre in boxed.values() for j in range(m)]
    names += [] if kind == "global" else ["s0"]
    names += [f"s{i + 1}" for i in range(len(cset))] + [f"t{i + 1}" for i in range(len(dom))]
    mult = read_multipliers(ev, names, nv, w)
    eps = Num.of(num["eps"])
    norm: Poly = {tuple(2 * int(i == j) for j in range(nv)): Num.of(1) for i in range(n)}
    lie: Poly = {}
    for i in range(n):
        lie = poly_add(lie, poly_mul(poly_derivative(v, i), g[i]))
    t = {
        "positive": poly_add(v, poly_scale(norm, -eps)),
        "decrease": poly_add(poly_scale(lie, Num.of(-1)), poly_scale(poly_pow(norm, mp, nv), -eps)),
    }
    if kind != "global":
        gap = _minus(poly_constant(Num.of(num["level"]), nv), v)
        t["decrease"] = _minus(t["decrease"], poly_mul(mult["s0"], gap))
    if kind == "region":
        t["inside"] = gap
        for i, (gi, _strict) in enumerate(cset):
            t["inside"] = _minus(t["inside"], poly_mul(mult[f"s{i + 1}"], _lift(model, claim, gi)))
        for i, (h, strict) in enumerate(dom):
            target = _minus(_lift(model, claim, h), poly_mul(mult[f"t{i + 1}"], gap))
            t[f"domain {i + 1}"] = poly_add(target, poly_constant(-eps, nv)) if strict else target
    for name, pre in boxed.items():
        for j in range(m):
            t[name] = _minus(t[name], poly_mul(mult[f"{pre}{j + 1}"], _box(model, j, n, nv)))
    check_squares({**t, **mult}, ev, nv, checks, w)
    what = {
        "global": "V >= eps|y|^2 and lie(V) <= -eps (|y|^2)^m everywhere",
        "local": "V >= eps|y|^2 and lie(V) <= -eps (|y|^2)^m where V <= level",
        "region": "V >= eps|y|^2, lie(V) <= -eps (|y|^2)^m where V <= level, the claim's set "
        "lies in {V <= level} and {V <= level} lies in the domain",
    }[kind]
    checks.ok(f"for each parameter value in the box every box multiplier term is >= 0, so {what}")


@schema("globally stable", METHOD, "lyapunov-global-over-range", scopes=("range",))
def lyapunov_global_range(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """Lyapunov's theorem for every parameter value, one certificate over the box."""
    require(
        model.domain is None,
        "domain",
        "a global claim with a domain needs forward "
        "invariance of the domain, which is not certified",
    )
    _check(model, claim, checks, "global")
    checks.ok("so the equilibrium is globally asymptotically stable for every value in the box")


@schema("stable", METHOD, "lyapunov-local-over-range", scopes=("range",))
def lyapunov_local_range(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """Lyapunov's theorem on {V <= level} for every parameter value in the box."""
    _check(model, claim, checks, "local")
    checks.ok("so the equilibrium is locally asymptotically stable for every value in the box")


@schema("attracts", METHOD, "region-of-attraction-over-range", scopes=("range",))
def region_of_attraction_range(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """For every parameter value, {V <= level} is forward invariant, compact, inside the
    domain, contains the claim's set, and V decreases on it."""
    require(claim.set is not None, "set", "the claim has no set")
    _check(model, claim, checks, "region")
    checks.ok("so the claim's set lies in the region of attraction for every value in the box")
