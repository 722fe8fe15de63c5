"""Schema for ``no cycle in SET`` on planar sin/cos/exp/tanh fields: Dulac in recast variables.

Theorem ``bendixson-dulac-recast`` (method ``dulac-recast``, nominal scope).
The recast system (Papachristodoulou and Prajna, 2005) is derived by the audit
itself from the model's expression trees (:func:`proofkit.audit._recast_field.derive`)
around ``origin``, a rational zero of the field at which every atom's argument
vanishes (up to a tabulated multiple of pi): ``z = (y, S1, C1, ..., E1, ...,
T1, ...)`` with ``y = x - origin``, ``S = sin(delta)``, ``C = cos(delta) - 1``,
``E = exp(delta) - 1``, ``T = tanh(delta)``, and ``f_i(x) = F_i(z(x))``.

``B`` is a polynomial over ``z``; ``b(x) = B(z(x))`` is smooth on the plane.
By the chain rule (``dS/dx_i = (C + 1) d delta/dy_i``, ``dC/dx_i = -S d
delta/dy_i``, ``dE/dx_i = (E + 1) d delta/dy_i``, ``dT/dx_i = (1 - T^2) d
delta/dy_i``) the divergence ``div(b f)(x) = P(z(x))`` for the polynomial

    P = sum_i [ d(B F_i)/dz_i + sum_j d(B F_i)/dz_j * rule_j * d delta_j/dy_i ]

built here. Obligation ``divergence``: ``P - eps - sum_i s_i g_i(origin + y) -
sum_k lambda_k circle_k - sum_l tau_l taylor_l`` is a sum of squares, with
multipliers named ``"divergence * set i"``, ``"divergence * <Taylor label>"``
(sums of squares) and ``"divergence * circle k"`` (``free``, any polynomials),
absent = 0. Constants in Q(sqrt d): ``P`` is affine in sqrt d, so the
obligations ``divergence lo`` and ``divergence hi`` (the field at each end of
the enclosure stated in ``recast``) give it at the true value. At ``z(x)``
every circle constraint is 0 and every Taylor bound is nonnegative, so
``div(b f) >= eps > 0`` on the set. The set is convex (checked as for
``bendixson-dulac``), hence simply connected: by Green's theorem no periodic
orbit lies in it.

This module must never import anything outside the standard library and
:mod:`proofkit.audit`, and never use floating point.
"""

from __future__ import annotations

from fractions import Fraction
from typing import Any

from proofkit.audit._recast_field import Recast, _Walk, derive
from proofkit.audit.algebra import (
    Poly,
    poly_add,
    poly_constant,
    poly_derivative,
    poly_mul,
    poly_scale,
    poly_substitute,
)
from proofkit.audit.cycles import check_convex
from proofkit.audit.numbers import FormatError, Num
from proofkit.audit.read import get, only_keys, read_poly, read_vector
from proofkit.audit.schemas import (
    Checks,
    ClaimData,
    ModelData,
    check_squares,
    read_numbers,
    require,
    schema,
)

__all__ = ["atom_rules", "dulac_recast", "recast_divergence"]

EVIDENCE_KEYS = {"origin", "recast", "B", "numbers", "multipliers", "free", "squares"}
Rule = tuple[int, Poly, Poly]  # (index of the variable in z, rule over z, delta over y)


def _var(i: int, nz: int) -> Poly:
    return {tuple(int(j == i) for j in range(nz)): Num.of(1)}


def _embed(p: Poly, nz: int) -> Poly:
    return {x + tuple([0] * (nz - len(x))): v for x, v in p.items()}


def atom_rules(
    exprs: tuple[Any, ...], origin: list[Num], nominal: list[Fraction], rc: Recast
) -> list[Rule]:
    """Per recast variable: its derivative rule and its atom's argument ``delta``.

    The atoms are collected by the same first pass as :func:`derive`, so their
    order is the order of ``rc``'s variables.
    """
    walk = _Walk(origin, nominal)
    for e in exprs:
        walk.poly(e)
    n, nz = rc.n, rc.nz
    one = poly_constant(Num.of(1), nz)
    rules: list[Rule] = []
    for k, delta in enumerate(walk.pairs):
        s, c = n + 2 * k, n + 2 * k + 1
        rules.append((s, poly_add(_var(c, nz), one), delta))
        rules.append((c, poly_scale(_var(s, nz), Num.of(-1)), delta))
    base = n + 2 * len(walk.pairs)
    for k, delta in enumerate(walk.exps):
        rules.append((base + k, poly_add(_var(base + k, nz), one), delta))
    base += len(walk.exps)
    for k, delta in enumerate(walk.tanhs):
        t = _var(base + k, nz)
        rules.append((base + k, poly_add(one, poly_scale(poly_mul(t, t), Num.of(-1))), delta))
    require(len(rules) == nz - n, "recast", "the atoms do not match the recast variables")
    letters = "".join(rc.names[j][0] for j, _r, _d in rules)
    expected = "SC" * len(walk.pairs) + "E" * len(walk.exps) + "T" * len(walk.tanhs)
    require(letters == expected, "recast", "the atoms do not match the recast variables")
    return rules


def recast_divergence(
    rc: Recast, rules: list[Rule], b: Poly, field: tuple[Poly, ...] | None = None
) -> Poly:
    """``P`` over ``z`` with ``div(B(z(x)) f(x)) = P(z(x))`` (chain rule, see the module).

    ``field``: the recast field to use (one end of the enclosure of sqrt d), else ``rc.field``.
    """
    fld = rc.field if field is None else field
    out: Poly = {}
    for i in range(rc.n):
        h = poly_mul(b, fld[i])
        out = poly_add(out, poly_derivative(h, i))
        for j, rule, delta in rules:
            dd = _embed(poly_derivative(delta, i), rc.nz)
            if dd:
                out = poly_add(out, poly_mul(poly_derivative(h, j), poly_mul(rule, dd)))
    return out


def _read(ev: dict[str, Any], key: str, nz: int, w: str) -> dict[str, Poly]:
    data = ev.get(key, {})
    if not isinstance(data, dict):
        raise FormatError(f"{w}.{key}: expected an object")
    return {k: read_poly(p, nz, 0, f"{w}.{key}.{k}") for k, p in data.items()}


def _setup(model: ModelData, claim: ClaimData, checks: Checks) -> tuple[Recast, list[Num]]:
    ev, w = claim.evidence, f"{claim.where}.evidence"
    only_keys(ev, EVIDENCE_KEYS, w)
    require(len(model.states) == 2, "planar", "this theorem is about planar systems (2 states)")
    require(claim.set is not None, "set", "the claim has no set")
    require(bool(model.expressions), "field", "the certificate states no expression trees")
    require(not model.conditions, "field", "the field is defined only under conditions")
    unknown = [p.name for p in model.uncertain if p.nominal is None]
    require(not unknown, "field", f"the nominal value of {unknown} is not rational")
    nominal = [p.nominal or Fraction(0) for p in model.uncertain]
    origin = read_vector(get(ev, "origin", list, w), 0, f"{w}.origin", 2)
    rc = derive(model.expressions or (), origin, nominal, get(ev, "recast", dict, w), f"{w}.recast")
    checks.ok(
        f"recast around the zero ({origin[0].a}, {origin[1].a}) of the field: variables "
        f"{', '.join(rc.names)}, substitutions, derivative rules, circle constraints and "
        "Taylor bounds derived by the audit from the field's expression trees"
    )
    if rc.enclosure is not None:
        lo, hi = rc.enclosure
        checks.ok(f"sqrt({rc.d}) lies in [{lo}, {hi}] (squares compared exactly)")
    return rc, origin


def _targets(
    rc: Recast, divs: list[tuple[str, Poly]], sets: list[Poly], ev: dict[str, Any], w: str
) -> dict[str, Poly]:
    """Each ``divergence[ lo| hi]`` minus its multipliers times its conditions, and the
    multipliers (named ``"<obligation> * <label>"``; absent = 0)."""
    nz, minus = rc.nz, Num.of(-1)
    sos, free = _read(ev, "multipliers", nz, w), _read(ev, "free", nz, w)
    eps = read_numbers(ev, {"eps"}, w)["eps"]
    require(eps > 0, "numbers", f"eps = {eps} must be positive")
    labelled = [(f"set {i + 1}", g) for i, g in enumerate(sets)] + list(rc.inequalities)
    targets: dict[str, Poly] = {}
    used: set[str] = set()
    for name, div in divs:
        target = poly_add(div, poly_constant(Num.of(-eps), nz))
        for table, conds in ((sos, labelled), (free, list(rc.equalities))):
            for label, g in conds:
                key = f"{name} * {label}"
                if key in table:
                    used.add(key)
                    target = poly_add(target, poly_scale(poly_mul(table[key], g), minus))
        targets[name] = target
    extra = sorted((set(sos) | set(free)) - used)
    require(not extra, "multipliers", f"multiplier(s) {extra[:5]} belong to no hypothesis")
    return {**targets, **sos}


@schema("no cycle", "dulac-recast", "bendixson-dulac-recast")
def dulac_recast(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """div(b f) >= eps > 0 on the convex set for b = B(recast(x)): no periodic orbit."""
    rc, origin = _setup(model, claim, checks)
    ev, w, n, nz = claim.evidence, f"{claim.where}.evidence", rc.n, rc.nz
    cset = claim.set or ()
    check_convex(cset, n)
    checks.ok(
        f"the set's {len(cset)} condition(s) are each linear or concave quadratic "
        "(checked exactly): the set is convex, hence simply connected"
    )
    b = read_poly(get(ev, "B", list, w), nz, 0, f"{w}.B")
    require(bool(b), "B", "B is zero")
    nominal = [p.nominal or Fraction(0) for p in model.uncertain]
    rules = atom_rules(model.expressions or (), origin, nominal, rc)
    divs = [
        (f"divergence {label}".strip(), recast_divergence(rc, rules, b, fld))
        for label, fld in rc.vertex_fields()
    ]
    shift = [poly_add(_var(i, nz), poly_constant(origin[i], nz)) for i in range(n)]
    sets = [poly_substitute(g, shift, nz) for g, _strict in cset]
    check_squares(_targets(rc, divs, sets, ev, w), ev, nz, checks, w)
    ends = " at both ends of the enclosure of sqrt d (P is affine in sqrt d)" if rc.d else ""
    checks.ok(
        "divergence: P - eps - sum over the labels of multiplier * condition (set i, Taylor "
        "bounds, circle constraints) with P = div(B f) by the chain rule in the recast "
        f"variables{ends}: div(b f) >= eps > 0 on the set for the smooth function "
        "b(x) = B(x - origin, recast(x))"
    )
    checks.ok(
        "by Green's theorem a periodic orbit in the simply connected set would make the "
        "integral of div(b f) over the region it encloses zero (Bendixson–Dulac): none exists"
    )
