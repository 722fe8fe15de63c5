"""Schemas for Lyapunov and region-of-attraction proofs by Taylor models (sin/cos/exp fields).

The field comes from the model section's expression trees
(``model.expressions``, compared with the source by provenance). The audit
derives its sin/cos atoms itself and checks the stated Taylor models
(:mod:`proofkit.audit._taylor_field`): each atom is its Taylor polynomial
plus ``r delta^(k+1) u`` with ``|u| <= 1`` for every real argument, so the
true field is, at every point, a convex combination of the *vertex fields*
(each ``u = +-1``; ``sqrt d`` at both ends of a stated enclosure when the
constants lie in Q(sqrt d)). Never a truncated Taylor polynomial in place of
the field: the remainder is carried as a bounded uncertainty.

``V`` is a polynomial in the deviation ``y = x - x*`` only. Obligations (each
must be a sum of squares; multipliers are named ``"<obligation> * <label>"``,
are obligations of their own, and an absent one is zero):

- ``positive``: V - eps|y|^2;
- ``decrease <vertex>`` for every vertex field F_v (e.g. ``decrease (+1, -1)``,
  ``decrease lo (+1, -1)``): -grad V . F_v - eps|y|^2 - m (level - V)
  (label ``level``);
- ``bound j`` per exp atom (its model holds where its argument is at most the
  stated D_j): D_j - delta_j(y) - m (level - V) (label ``level``);
- region of attraction only: ``inside``: level - V - sum_i m_i g_i(x* + y)
  (labels ``set i``); ``domain j``: h_j(x* + y) (minus eps when strict)
  - m (level - V) (label ``level``).

Theorem: dV/dt = grad V(y) . f(x) is affine in each remainder and in sqrt d,
so on {V <= level} it is at most its largest vertex value, <= -eps|y|^2. With
V >= eps|y|^2, {V <= level} is compact and forward invariant and every
trajectory in it tends to x* (local asymptotic stability; with ``inside`` and
``domain``, the claim's set lies in the region of attraction).

This module must never import anything outside the standard library and
:mod:`proofkit.audit`, and never use floating point.
"""

from __future__ import annotations

from fractions import Fraction
from typing import Any

from proofkit.audit._taylor_field import TaylorModel, derive_models
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

__all__ = ["taylor_model_local", "taylor_model_region"]

EVIDENCE_KEYS = {"taylor_model", "V", "numbers", "multipliers", "squares"}


def _neg(p: Poly) -> Poly:
    return poly_scale(p, Num.of(-1))


def _lie(v: Poly, field: tuple[Poly, ...]) -> Poly:
    out: Poly = {}
    for i, fi in enumerate(field):
        out = poly_add(out, poly_mul(poly_derivative(v, i), fi))
    return out


class _Targets:
    """Obligations with their named multipliers subtracted, as the theorem states them."""

    def __init__(self, ev: dict[str, Any], n: int, where: str) -> None:
        data = ev.get("multipliers", {})
        if not isinstance(data, dict):
            raise FormatError(f"{where}.multipliers: expected an object")
        self.mult = {k: read_poly(p, n, 0, f"{where}.multipliers.{k}") for k, p in data.items()}
        self.used: set[str] = set()
        self.targets: dict[str, Poly] = {}
        self.n, self.w = n, where

    def add(self, name: str, base: Poly, labelled: list[tuple[str, Poly]]) -> None:
        target = base
        for label, g in labelled:
            key = f"{name} * {label}"
            if key in self.mult:
                self.used.add(key)
                target = poly_add(target, _neg(poly_mul(self.mult[key], g)))
                self.targets[key] = self.mult[key]
        self.targets[name] = target

    def finish(self, checks: Checks, ev: dict[str, Any]) -> None:
        extra = sorted(set(self.mult) - self.used)
        require(not extra, "multipliers", f"multiplier(s) {extra[:5]} belong to no hypothesis")
        check_squares(self.targets, ev, self.n, checks, self.w)


def _models(model: ModelData, claim: ClaimData, block: Any, where: str) -> TaylorModel:
    require(claim.point is not None, "equilibrium", "the claim names no fixed rational point")
    require(claim.d == 0, "equilibrium", "Taylor-model proofs need a rational equilibrium point")
    require(bool(model.expressions), "field", "the certificate states no expression trees")
    unknown = [p.name for p in model.uncertain if p.nominal is None]
    require(not unknown, "field", f"the nominal value of {unknown} is not rational")
    nominal = [p.nominal or Fraction(0) for p in model.uncertain]
    return derive_models(model.expressions or (), list(claim.point or ()), nominal, block, where)


def _setup(model: ModelData, claim: ClaimData, checks: Checks) -> tuple[Any, ...]:
    ev, w = claim.evidence, f"{claim.where}.evidence"
    only_keys(ev, EVIDENCE_KEYS, w)
    tm = _models(model, claim, get(ev, "taylor_model", dict, w), f"{w}.taylor_model")
    n = tm.n
    args: list[Poly] = []  # distinct arguments, numbered in order of appearance
    for _f, delta, _k, _r in tm.atoms:
        if delta not in args:
            args.append(delta)
    shown = "; ".join(
        f"{f}(delta{args.index(delta) + 1}) = T_{k} + {r} delta{args.index(delta) + 1}^{k + 1} "
        + (f"u{i + 1}, |u{i + 1}| <= 1" if f != "exp" else f"w{i + 1}, 0 <= w{i + 1} <= 1")
        for i, (f, delta, k, r) in enumerate(tm.atoms)
    )
    checks.ok(
        f"Taylor models derived and checked by the audit from the field's trees: {shown} "
        "(Lagrange remainder; every derivative of sin and cos is at most 1)"
    )
    if tm.enclosure is not None:
        checks.ok(f"sqrt({tm.d}) lies in [{tm.enclosure[0]}, {tm.enclosure[1]}] (squares compared)")
    v = read_poly(get(ev, "V", list, w), n, 0, f"{w}.V")
    require(tuple([0] * n) not in v, "V", "V has a constant term")
    num = read_numbers(ev, {"eps", "level"}, w)
    for k, x in num.items():
        require(x > 0, "numbers", f"{k} = {x} must be positive")
    eps = Num.of(num["eps"])
    norm: Poly = {tuple(2 * int(i == j) for j in range(n)): Num.of(1) for i in range(n)}
    gap = poly_add(poly_constant(Num.of(num["level"]), n), _neg(v))
    obl = _Targets(ev, n, w)
    obl.add("positive", poly_add(v, poly_scale(norm, -eps)), [])
    for label, fld in tm.vertices:
        base = poly_add(_neg(_lie(v, fld)), poly_scale(norm, -eps))
        obl.add(f"decrease {label}", base, [("level", gap)])
    for j, (delta, bound) in enumerate(tm.bounds):  # exp models hold where delta <= D
        obl.add(
            f"bound {j + 1}",
            poly_add(poly_constant(Num.of(bound), n), _neg(delta)),
            [("level", gap)],
        )
    if tm.bounds:
        shown_b = ", ".join(f"D{j + 1} = {b}" for j, (_d, b) in enumerate(tm.bounds))
        checks.ok(f"bound j: each exp argument is at most D_j on {{V <= level}} ({shown_b})")
    checks.ok(
        f"positive: V - eps|y|^2 >= 0, eps = {num['eps']}; decrease: -grad V . F_v - eps|y|^2 "
        f">= 0 where V <= level = {num['level']}, at each of the {len(tm.vertices)} vertex "
        "field(s) F_v; dV/dt is affine in each remainder, so it is below its largest vertex"
    )
    return tm, gap, obl, num


@schema("stable", "taylor-model", "taylor-model-lyapunov-local")
def taylor_model_local(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """V(x - x*) positive definite and decreasing on {V <= level}: stable."""
    obl = _setup(model, claim, checks)[2]
    obl.finish(checks, claim.evidence)
    checks.ok("V(x - x*) is a strict Lyapunov function on {V <= level}")


@schema("attracts", "taylor-model", "taylor-model-region-of-attraction")
def taylor_model_region(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """{V <= level} is compact, forward invariant, in the domain, and contains the set."""
    require(claim.set is not None, "set", "the claim has no set")
    tm, gap, obl, num = _setup(model, claim, checks)
    n = tm.n
    point = list(claim.point or ())
    values = [
        poly_add({tuple(int(i == j) for j in range(n)): Num.of(1)}, poly_constant(point[i], n))
        for i in range(n)
    ]
    sets = [
        (f"set {i + 1}", poly_substitute(g, values, n)) for i, (g, _s) in enumerate(claim.set or ())
    ]
    obl.add("inside", gap, sets)
    eps = Num.of(num["eps"])
    for j, (h, strict) in enumerate(model.domain or ()):
        base = poly_substitute(h, values, n)
        if strict:
            base = poly_add(base, poly_constant(-eps, n))
        obl.add(f"domain {j + 1}", base, [("level", gap)])
    checks.ok(
        f"inside: the claim's set ({len(sets)} condition(s)) lies in {{V <= level}}"
        + (f"; domain: {{V <= level}} lies in the {len(model.domain or ())} domain condition(s)"
           if model.domain else "")
    )  # fmt: skip
    obl.finish(checks, claim.evidence)
    checks.ok("every multiplier is a sum of squares; so the set lies in the region of attraction")
