"""Stability over a whole parameter box: Hurwitz determinants shown positive exactly.

For an equilibrium that stays put for every parameter value (f(point, p) = 0
identically in p), the characteristic polynomial det(sI - J(p)) has
coefficients that are polynomials in the uncertain parameters p. By the
Routh–Hurwitz theorem every root lies in the open left half plane exactly
when the leading principal minors Delta_1, ..., Delta_n of the Hurwitz
matrix are all positive. Each Delta_i(p) > 0 is proven on the closed box of
parameter ranges by exact rational interval arithmetic with bisection (a
budget bounds the work); an exact rational parameter value where some
Delta_i <= 0 is a counterexample to "stable for every value". Parameters
without a range are fixed at their nominal values.

This module must never accept a floating-point evaluation as a proof.
"""

from __future__ import annotations

import itertools
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Literal

import flint
import sympy as sp

from proofkit.model import Model

__all__ = ["ParametricResult", "hurwitz_determinants", "parametric_stability"]

_S = sp.Symbol("s")
Interval = tuple[flint.fmpq, flint.fmpq]


@dataclass(frozen=True)
class ParametricResult:
    """``holds``: Delta_i(p) > 0 on the whole box; ``fails``: a value where the linearization
    has a root in the closed right half plane; ``unknown``: neither was shown (see reason)."""

    status: Literal["holds", "fails", "unknown"]
    reason: str
    params: tuple[str, ...]
    box: tuple[tuple[sp.Rational, sp.Rational], ...]
    charpoly: tuple[sp.Expr, ...]
    determinants: tuple[sp.Expr, ...]
    counterexample: dict[str, sp.Rational] | None = None
    boxes: int = 0


def hurwitz_determinants(coeffs: Sequence[sp.Expr]) -> tuple[sp.Expr, ...]:
    """Delta_1..Delta_n of a_0 s^n + ... + a_n (coefficients highest first)."""
    n = len(coeffs) - 1

    def a(k: int) -> sp.Expr:
        return coeffs[k] if 0 <= k <= n else sp.Integer(0)

    H = sp.Matrix(n, n, lambda i, j: a(2 * (j + 1) - (i + 1)))
    return tuple(sp.expand(H[:k, :k].det(method="berkowitz")) for k in range(1, n + 1))


def _q(r: sp.Rational) -> flint.fmpq:
    r = sp.Rational(r)
    return flint.fmpq(int(r.p), int(r.q))


def _ipow(lo: flint.fmpq, hi: flint.fmpq, e: int) -> Interval:
    a, b = lo**e, hi**e
    if e % 2 == 0 and lo < 0 < hi:
        return flint.fmpq(0), max(a, b)
    return (min(a, b), max(a, b))


def _range(terms: list[tuple[tuple[int, ...], flint.fmpq]], box: Sequence[Interval]) -> Interval:
    """An exact rational enclosure of the polynomial over the box (naive interval evaluation)."""
    tot_lo = tot_hi = flint.fmpq(0)
    for monom, c in terms:
        lo = hi = c
        for (blo, bhi), e in zip(box, monom, strict=True):
            if e:
                plo, phi = _ipow(blo, bhi, e)
                prods = (lo * plo, lo * phi, hi * plo, hi * phi)
                lo, hi = min(prods), max(prods)
        tot_lo += lo
        tot_hi += hi
    return tot_lo, tot_hi


def _value(
    terms: list[tuple[tuple[int, ...], flint.fmpq]], point: Sequence[flint.fmpq]
) -> flint.fmpq:
    total = flint.fmpq(0)
    for monom, c in terms:
        v = c
        for x, e in zip(point, monom, strict=True):
            if e:
                v *= x**e
        total += v
    return total


def _prove_positive(
    poly: sp.Expr, syms: Sequence[sp.Symbol], box: Sequence[Interval], budget: int
) -> tuple[str, list[flint.fmpq] | None, int]:
    """('positive' | 'counterexample' | 'budget', point, boxes used) for poly > 0 on the box."""
    P = sp.Poly(poly, *syms, domain=sp.QQ)
    terms = [(m, _q(c)) for m, c in P.terms()]
    for corner in itertools.product(*box):
        if _value(terms, corner) <= 0:
            return "counterexample", list(corner), 0
    stack = [list(box)]
    used = 0
    while stack:
        if used >= budget:
            return "budget", None, used
        b = stack.pop()
        used += 1
        lo, _hi = _range(terms, b)
        if lo > 0:
            continue
        mid = [(a + c) / 2 for a, c in b]
        if _value(terms, mid) <= 0:
            return "counterexample", mid, used
        k = max(range(len(b)), key=lambda i: b[i][1] - b[i][0])
        a, c = b[k]
        m = (a + c) / 2
        left, right = list(b), list(b)
        left[k], right[k] = (a, m), (m, c)
        stack.extend([left, right])
    return "positive", None, used


def parametric_stability(model: Model, name: str, budget: int = 4000) -> ParametricResult:
    """Is the declared equilibrium ``name`` stable for every value in the parameter ranges?"""
    uncertain = [p for p in model.params if p.is_uncertain]
    fixed = {p.symbol: p.nominal for p in model.params if not p.is_uncertain}
    syms = [p.symbol for p in uncertain]
    box_q = tuple((sp.Rational(p.low), sp.Rational(p.high)) for p in uncertain)
    xs = model.state_symbols
    decl = model.equilibrium(name)
    point = {sp.Symbol(s, real=True): v.subs(fixed) for s, v in decl.point}
    fs = [sp.expand(f.subs(fixed)) for f in model.field]

    def unknown(why: str, cp: tuple = (), dets: tuple = ()) -> ParametricResult:
        return ParametricResult("unknown", why, tuple(p.name for p in uncertain), box_q, cp, dets)

    if not all(isinstance(v, sp.Rational) for lh in box_q for v in lh):
        return unknown("a parameter range has irrational end points")
    if any(sp.expand(f.subs(point)) != 0 for f in fs):
        return unknown(f"{name} moves with the parameters (f does not vanish there identically)")
    J = sp.Matrix(fs).jacobian(list(xs)).subs(point)
    J = J.applyfunc(sp.expand)
    if not all(e.is_polynomial(*syms) for e in J):
        return unknown("the Jacobian is not polynomial in the uncertain parameters")
    cp = tuple(sp.expand(c) for c in J.charpoly(_S).all_coeffs())
    dets = hurwitz_determinants(cp)
    box = [(_q(a), _q(b)) for a, b in box_q]
    used_total = 0
    for i, d in enumerate(dets, 1):
        if not all(isinstance(c, sp.Rational) for c in sp.Poly(d, *syms).coeffs()):
            return unknown("coefficients are not rational", cp, dets)
        status, where, used = _prove_positive(d, syms, box, budget)
        used_total += used
        if status == "budget":
            return unknown(f"budget reached proving Delta_{i} > 0 ({budget} boxes)", cp, dets)
        if status == "counterexample":
            assert where is not None
            at = {
                p.name: sp.Rational(int(v.p), int(v.q))
                for p, v in zip(uncertain, where, strict=True)
            }
            from proofkit.analysis.routh import routh_array

            coeffs_at = [sp.expand(c.subs({p.symbol: at[p.name] for p in uncertain})) for c in cp]
            ra = routh_array(coeffs_at)
            text = ", ".join(f"{k} = {v}" for k, v in at.items())
            if ra.rhp_count > 0:
                return ParametricResult(
                    "fails",
                    f"at {text} the linearization has {ra.rhp_count} root(s) in the open right "
                    f"half plane (Delta_{i} = {d.subs({s: at[str(s)] for s in syms})})",
                    tuple(at),
                    box_q,
                    cp,
                    dets,
                    at,
                    used_total,
                )
            return ParametricResult(
                "unknown",
                f"at {text} Delta_{i} <= 0: roots on the imaginary axis, stability not shown there",
                tuple(at),
                box_q,
                cp,
                dets,
                at,
                used_total,
            )
    ranges = ", ".join(f"{p.name} in [{p.low}, {p.high}]" for p in uncertain)
    return ParametricResult(
        "holds",
        f"every Hurwitz determinant is positive for {ranges} (exact interval bisection, "
        f"{used_total} boxes): Lyapunov's indirect method at every parameter value",
        tuple(p.name for p in uncertain),
        box_q,
        cp,
        dets,
        None,
        used_total,
    )
