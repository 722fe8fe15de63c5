"""Schemas for Lyapunov and region-of-attraction proofs of recast non-polynomial fields.

The field comes from the model section's expression trees
(``model.expressions``, compared with the source by provenance); the
evidence adds only ``recast = {"taylor_order", "enclosure"}``. From the trees
the audit derives the recast system ITSELF
(:mod:`proofkit.audit._recast_field`: substitutions, derivative rules, the
circle constraints and the valid Taylor inequalities), following
Papachristodoulou and Prajna (2005). Every target below is built here from
``V``, the numbers, the multipliers and that system; the certificate supplies
only those and one Gram matrix per obligation.

Obligations (``z`` the recast variables, ``y`` the deviation, ``|y|^2`` over
the states only; each obligation subtracts ``sum sigma_i g_i`` over its
inequalities ``g_i >= 0`` with sum-of-squares multipliers named
``"<obligation> * <g>"`` and ``sum lambda_k h_k`` over the equality
constraints with free multipliers named ``"<obligation> * <h>"``; an absent
multiplier is zero):

- ``positive``: V - eps|y|^2 (inequalities: the Taylor bounds);
- ``decrease`` (``decrease lo`` / ``decrease hi`` when the field has
  coefficients in Q(sqrt d): the field at each end of the stated rational
  enclosure of sqrt d; the Lie derivative is affine in sqrt d, so the true
  field's decrease is a convex combination): -lie(V) - eps|y|^2
  (inequalities: ``level`` = level - V, and the Taylor bounds);
- region of attraction only: ``inside``: level - V (inequalities: ``set i``
  = the claim's conditions at x* + y, and the Taylor bounds); ``domain j``:
  h_j(x* + y), minus eps when strict (inequalities: ``level``, Taylor).

Theorem: W(x) = V(x - x*, recast(x)) is continuous, W(x*) = 0, W >= eps|y|^2
and dW/dt <= -eps|y|^2 on {W <= level}; so {W <= level} is compact, forward
invariant, and every trajectory in it tends to x* (local asymptotic
stability; with ``inside`` and ``domain``, the claim's set lies in the region
of attraction and the sublevel set in the domain).

Reciprocal atoms (``R = 1/q - r0``, equality ``reciprocal k``; numbers add
``eps_q``). W is defined only on the open set U = {x : every q(x) != 0}, so
the schemas add, per denominator, with ``sigma = sign q(x*)``:

- ``denominator k``: sigma q(x* + y) - eps_q (inequalities ``level``,
  Taylor; every equality, the reciprocal ones included);
- region of attraction only, ``set denominator k``: sigma q(x* + y) - eps_q
  (inequalities ``set i``, Taylor; the circle equalities only, NOT the
  reciprocal ones, so R is unconstrained there).

Why this is enough. Let K = {x in U : W(x) <= level}. Every x in K gives a
point of the recast set (true atom values satisfy every equality and
inequality) with level - V >= 0, so ``denominator k`` gives sigma q(x) >=
eps_q > 0 on K. K is closed: a limit x of points of K has sigma q(x) >=
eps_q, so x lies in U, where W is continuous, and W(x) <= level. K is bounded
(W >= eps|y|^2), hence compact, and it stays eps_q away from every pole.
Forward invariance: let T be the last time up to which a trajectory from K
stays in K; x(T) lies in K (closed), inside U where the field and W are
smooth, so if x(T) != x* then dW/dt < 0 there and the trajectory stays in U
with W < level a little longer, a contradiction (x* itself is an
equilibrium). Solutions exist for all t >= 0 (K compact), W decreases
strictly away from x*, so every trajectory in K tends to x* (Lyapunov, or
LaSalle's invariance principle). ``inside`` covers only points of the
claim's set where every q != 0 (elsewhere no R exists); ``set denominator
k`` holds for every R, so it shows sigma q >= eps_q on the whole claim's set,
which therefore lies in U and, by ``inside``, in K. A claim whose set
reaches a pole is never accepted.

This module must never import anything outside the standard library and
:mod:`proofkit.audit`, and never use floating point.
"""

from __future__ import annotations

from fractions import Fraction
from typing import Any

from proofkit.audit._recast_field import Recast, derive
from proofkit.audit.algebra import (
    Poly,
    poly_add,
    poly_constant,
    poly_derivative,
    poly_mul,
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
    read_numbers,
    require,
    schema,
)

__all__ = ["recast_local", "recast_region"]

EVIDENCE_KEYS = {"recast", "V", "numbers", "multipliers", "free", "squares"}


def _neg(p: Poly) -> Poly:
    return poly_scale(p, Num.of(-1))


def _lie(v: Poly, field: tuple[Poly, ...]) -> Poly:
    out: Poly = {}
    for i, fi in enumerate(field):
        out = poly_add(out, poly_mul(poly_derivative(v, i), fi))
    return out


def _point(model: ModelData, claim: ClaimData) -> tuple[list[Num], list[Fraction]]:
    """The claim's rational point and the uncertain parameters' nominal values."""
    require(claim.point is not None, "equilibrium", "the claim names no fixed rational point")
    require(claim.d == 0, "equilibrium", "recast proofs need a rational equilibrium point")
    require(bool(model.expressions), "field", "the certificate states no expression trees")
    unknown = [p.name for p in model.uncertain if p.nominal is None]
    require(not unknown, "field", f"the nominal value of {unknown} is not rational")
    return list(claim.point or ()), [p.nominal or Fraction(0) for p in model.uncertain]


class _Obligations:
    """Targets with their multipliers subtracted, as the schema builds them."""

    def __init__(self, rc: Recast, ev: dict[str, Any], where: str) -> None:
        self.rc, self.w = rc, where
        self.sos = self._read(ev, "multipliers")
        self.free = self._read(ev, "free")
        self.used: set[str] = set()
        self.targets: dict[str, Poly] = {}

    def _read(self, ev: dict[str, Any], key: str) -> dict[str, Poly]:
        data = ev.get(key, {})
        if not isinstance(data, dict):
            raise FormatError(f"{self.w}.{key}: expected an object")
        return {k: read_poly(p, self.rc.nz, 0, f"{self.w}.{key}.{k}") for k, p in data.items()}

    def add(
        self, name: str, base: Poly, ineqs: list[tuple[str, Poly]], recips: bool = True
    ) -> None:
        """The obligation ``name``; ``recips``: the reciprocal equalities are hypotheses."""
        target = base
        for label, g in ineqs:
            key = f"{name} * {label}"
            if key in self.sos:
                self.used.add(key)
                target = poly_add(target, _neg(poly_mul(self.sos[key], g)))
                self.targets[key] = self.sos[key]
        for label, h in self.rc.equalities:
            if not recips and label in self.rc.reciprocals:
                continue
            key = f"{name} * {label}"
            if key in self.free:
                self.used.add(key)
                target = poly_add(target, _neg(poly_mul(self.free[key], h)))
        self.targets[name] = target

    def finish(self, checks: Checks, ev: dict[str, Any]) -> None:
        extra = sorted((set(self.sos) | set(self.free)) - self.used)
        require(not extra, "multipliers", f"multiplier(s) {extra[:5]} belong to no hypothesis")
        check_squares(self.targets, ev, self.rc.nz, checks, self.w)


def _setup(model: ModelData, claim: ClaimData, checks: Checks) -> tuple[Any, ...]:
    ev, w = claim.evidence, f"{claim.where}.evidence"
    only_keys(ev, EVIDENCE_KEYS, w)
    n = len(model.states)
    point, nominal = _point(model, claim)
    block = get(ev, "recast", dict, w)
    rc = derive(model.expressions or (), point, nominal, block, f"{w}.recast", reciprocal=True)
    checks.ok(
        f"recast: {rc.nz - n} new variable(s) {', '.join(rc.names[n:])} with substitutions, "
        "derivative rules, circle"
        + (" and reciprocal" if rc.poles else "")
        + " constraints and Taylor bounds of order "
        f"{block.get('taylor_order')}, all derived by the audit from the field's expression trees"
    )
    v = read_poly(get(ev, "V", list, w), rc.nz, 0, f"{w}.V")
    require(tuple([0] * rc.nz) not in v, "V", "V has a constant term")
    num = read_numbers(ev, {"eps", "level"} | ({"eps_q"} if rc.poles else set()), w)
    for k, x in num.items():
        require(x > 0, "numbers", f"{k} = {x} must be positive")
    if rc.enclosure is not None:
        lo, hi = rc.enclosure
        checks.ok(f"sqrt({rc.d}) lies in [{lo}, {hi}] (squares compared exactly)")
    norm: Poly = {tuple(2 * int(i == j) for j in range(rc.nz)): Num.of(1) for i in range(n)}
    eps = Num.of(num["eps"])
    gap = poly_add(poly_constant(Num.of(num["level"]), rc.nz), _neg(v))
    obl = _Obligations(rc, ev, w)
    taylor = list(rc.inequalities)
    obl.add("positive", poly_add(v, poly_scale(norm, -eps)), taylor)
    for label, fld in rc.vertex_fields():
        name = f"decrease {label}".strip()
        base = poly_add(_neg(_lie(v, fld)), poly_scale(norm, -eps))
        obl.add(name, base, [("level", gap), *taylor])
    for label, q in rc.poles:
        base = poly_add(q, poly_constant(Num.of(-num["eps_q"]), rc.nz))
        obl.add(label, base, [("level", gap), *taylor])
    if rc.poles:
        checks.ok(
            f"denominator: sign(q(x*)) q >= eps_q = {num['eps_q']} where V <= level, for each "
            f"of the {len(rc.poles)} denominator(s): the sublevel set keeps away from the poles"
        )
    checks.ok(
        f"positive: V - eps|y|^2 >= 0 on the recast set, eps = {num['eps']}; decrease: "
        f"-lie(V) - eps|y|^2 >= 0 where V <= level = {num['level']}"
        + (" at both ends of the enclosure" if rc.enclosure else "")
    )
    return rc, point, gap, taylor, obl, num


@schema("stable", "recast", "recast-lyapunov-local")
def recast_local(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """W = V(y, recast) positive definite and decreasing on {W <= level}: stable."""
    obl = _setup(model, claim, checks)[4]
    obl.finish(checks, claim.evidence)
    checks.ok("W(x) = V(x - x*, recast(x)) is a strict Lyapunov function near the point")


@schema("attracts", "recast", "recast-region-of-attraction")
def recast_region(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """{W <= level} is compact, forward invariant, in the domain, and contains the set."""
    require(claim.set is not None, "set", "the claim has no set")
    rc, point, gap, taylor, obl, num = _setup(model, claim, checks)
    n, nz = rc.n, rc.nz
    values = [
        poly_add({tuple(int(i == j) for j in range(nz)): Num.of(1)}, poly_constant(point[i], nz))
        for i in range(n)
    ]
    sets = [
        (f"set {i + 1}", poly_substitute(g, values, nz))
        for i, (g, _s) in enumerate(claim.set or ())
    ]
    obl.add("inside", gap, [*sets, *taylor])
    for label, q in rc.poles:
        base = poly_add(q, poly_constant(Num.of(-num["eps_q"]), nz))
        obl.add(f"set {label}", base, [*sets, *taylor], recips=False)
    eps = Num.of(num["eps"])
    for j, (h, strict) in enumerate(model.domain or ()):
        base = poly_substitute(h, values, nz)
        if strict:
            base = poly_add(base, poly_constant(-eps, nz))
        obl.add(f"domain {j + 1}", base, [("level", gap), *taylor])
    checks.ok(
        f"inside: the claim's set ({len(sets)} condition(s)) lies in {{W <= level}}"
        + (f"; domain: {{W <= level}} lies in the {len(model.domain or ())} domain condition(s)"
           if model.domain else "")
    )  # fmt: skip
    obl.finish(checks, claim.evidence)
    checks.ok("every multiplier is a sum of squares; so the set lies in the region of attraction")
