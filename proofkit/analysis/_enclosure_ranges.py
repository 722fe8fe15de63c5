"""Jacobian enclosures over parameter boxes for fields with elementary functions.

The evidence of ``range-enclosure`` (see ``proofkit/audit/_ranges_enclosure.py``):
the parameter box is bisected until, on each piece ``P``, a small state box
``X`` around the (fixed) equilibrium passes the parametric Krawczyk test
``K(X, P) inside X`` and the interval Routh first column over the Jacobian
enclosure on ``X x P`` has decided signs of the claimed kind.

The field is walked as the certificate's expression tree
(:func:`proofkit.analysis.enclosure.expression_json`) in forward mode over arb
balls (value and state partials, the chain rule as the audit applies it), so
the enclosures have the shape of the audit's own; each stated bound is then
widened by a small slack and rounded outward to the grid ``2^-precision``.

This module decides nothing about claims and never imports :mod:`proofkit.audit`.
"""

from __future__ import annotations

import itertools
import math
import time
from collections.abc import Sequence
from dataclasses import dataclass
from fractions import Fraction
from typing import Any

import flint
import sympy as sp

from proofkit.analysis._parametric_cover import simplest_between
from proofkit.analysis.enclosure import _ball, _bounds, _centre, _routh_signs, expression_json
from proofkit.analysis.intervals import int_power

__all__ = ["RangeEnclosure", "range_enclosure"]

PRECISION = 32  # grid of the stated bounds
MAX_PIECES = 256  # as the audit
SLACK = Fraction(1, 16)  # stated = own enclosure widened by this share of its width
Box = tuple[tuple[Fraction, Fraction], ...]


@dataclass(frozen=True)
class RangeEnclosure:
    """Pieces of the evidence, or why none was found (``reason``) and where."""

    pieces: tuple[dict[str, Any], ...] = ()
    reason: str = ""
    where: Box | None = None  # a parameter piece that could not be decided
    witness: dict[str, Any] | None = None  # a piece at one value where the claim fails

    def evidence(self) -> dict[str, Any]:
        return {"precision": PRECISION, "pieces": list(self.pieces)}


class _Dual:
    __slots__ = ("d", "v")

    def __init__(self, v: flint.arb, d: tuple[flint.arb, ...]) -> None:
        self.v, self.d = v, d

    def scale(self, k: flint.arb) -> tuple[flint.arb, ...]:
        return tuple(x * k for x in self.d)


def _walk(t: Any, xs: Sequence[_Dual]) -> _Dual:
    zero = tuple(flint.arb(0) for _ in xs[0].d)
    if isinstance(t, str):
        q = Fraction(t)
        return _Dual(flint.arb(flint.fmpq(q.numerator, q.denominator)), zero)
    op, args = t[0], t[1:]
    if op == "var":
        return xs[args[0]]
    if op == "pi":
        return _Dual(flint.arb.pi(), zero)
    if op == "^":
        a, k = _walk(args[0], xs), args[1]
        if k == 0:
            return _Dual(flint.arb(1), zero)
        value = int_power(a.v, k) if k > 0 else 1 / int_power(a.v, -k)
        inner = k * (int_power(a.v, k - 1) if k > 1 else flint.arb(1) if k == 1 else value / a.v)
        return _Dual(value, a.scale(inner))
    if op in ("+", "*"):
        acc = _walk(args[0], xs)
        for e in args[1:]:
            b = _walk(e, xs)
            if op == "+":
                acc = _Dual(acc.v + b.v, tuple(x + y for x, y in zip(acc.d, b.d, strict=True)))
            else:
                d = tuple(x + y for x, y in zip(acc.scale(b.v), b.scale(acc.v), strict=True))
                acc = _Dual(acc.v * b.v, d)
        return acc
    return _apply(op, _walk(args[0], xs))


def _apply(name: str, a: _Dual) -> _Dual:
    v = a.v
    if name == "sin":
        return _Dual(v.sin(), a.scale(v.cos()))
    if name == "cos":
        return _Dual(v.cos(), a.scale(-v.sin()))
    if name == "exp":
        e = v.exp()
        return _Dual(e, a.scale(e))
    if name == "log":
        return _Dual(v.log(), a.scale(1 / v))
    if name == "sqrt":
        s = v.sqrt()
        return _Dual(s, a.scale(1 / (2 * s)))
    if name == "tan":
        c = v.cos()
        return _Dual(v.sin() / c, a.scale(1 / int_power(c, 2)))
    if name == "tanh":
        t = v.tanh()
        return _Dual(t, a.scale(1 - int_power(t, 2)))
    raise ValueError(f"unknown function {name!r}")


def _grid(lo: Fraction, hi: Fraction) -> list[str]:
    s = 2**PRECISION
    pad = (hi - lo) * SLACK + Fraction(1, s)
    return [
        str(Fraction(math.floor((lo - pad) * s), s)),
        str(Fraction(math.ceil((hi + pad) * s), s)),
    ]


def _enclose(trees: list[Any], box: Box, params: Box) -> tuple[list[Any], list[list[Any]]]:
    """Balls of f and of df/dx over box x params (forward mode, the audit's chain rule)."""
    n = len(box)
    unit = [tuple(flint.arb(int(i == j)) for j in range(n)) for i in range(n)]
    xs = [_Dual(_ball(lo, hi), unit[i]) for i, (lo, hi) in enumerate(box)]
    xs += [_Dual(_ball(lo, hi), tuple(flint.arb(0) for _ in range(n))) for lo, hi in params]
    duals = [_walk(t, xs) for t in trees]
    return [d.v for d in duals], [list(d.d) for d in duals]


def _piece(trees: list[Any], centre: list[Fraction], params: Box, kind: str) -> dict | str:
    """Evidence for one parameter piece, or why it fails there."""
    for k in (24, 16, 10):
        half = Fraction(1, 2**k)
        box = tuple((c - half, c + 2 * half) for c in centre)  # off-centre (see enclosure.py)
        mid = [(lo + hi) / 2 for lo, hi in box]
        fm, _ = _enclose(trees, tuple((m, m) for m in mid), params)
        _, jx = _enclose(trees, box, params)
        if any(not x.is_finite() for row in jx for x in row) or any(not x.is_finite() for x in fm):
            return "the field is not defined (or not finite) on the piece"
        jac = [[_bounds(x) for x in row] for row in jx]
        stated = [[_grid(lo, hi) for lo, hi in row] for row in jac]
        signs = _routh_signs([[(Fraction(a), Fraction(b)) for a, b in row] for row in stated])
        if 0 in signs:
            return "a Routh sign is not decided over the piece"
        changes = sum(1 for a, b in itertools.pairwise(signs) if a != b)
        if (kind == "stable") != (changes == 0):
            return f"the linearization is {'un' if changes else ''}stable on the piece"
        y = _inverse_mid(jac)
        if y is None or not _krawczyk(fm, jx, box, mid, y):
            continue
        return {
            "parameters": [[str(lo), str(hi)] for lo, hi in params],
            "box": [[str(lo), str(hi)] for lo, hi in box],
            "preconditioner": [[str(v) for v in row] for row in y],
            "jacobian": stated,
            "routh_signs": list(signs),
        }
    return "the Krawczyk test fails on the piece (the parameters move the Jacobian too much)"


def _other(kind: str) -> str:
    return "unstable" if kind == "stable" else "stable"


def _inverse_mid(jac: list[list[tuple[Fraction, Fraction]]]) -> list[list[Fraction]] | None:
    mids = sp.Matrix([[sp.Rational((lo + hi) / 2) for lo, hi in row] for row in jac])
    if mids.det() == 0:
        return None
    s = 2**PRECISION
    return [[Fraction(round(Fraction(int(v.p), int(v.q)) * s), s) for v in row]
            for row in mids.inv().tolist()]  # fmt: skip


def _krawczyk(fm, jx, box: Box, mid: list[Fraction], y: list[list[Fraction]]) -> bool:
    """K(X, P) strictly inside X (ball arithmetic; the audit re-checks exactly)."""
    n = len(box)
    yb = [[flint.arb(flint.fmpq(v.numerator, v.denominator)) for v in row] for row in y]
    for i in range(n):
        k = flint.arb(flint.fmpq(mid[i].numerator, mid[i].denominator))
        for j in range(n):
            k -= yb[i][j] * fm[j]
            c = flint.arb(int(i == j)) - sum((yb[i][m] * jx[m][j] for m in range(n)), flint.arb(0))
            k += c * _ball(box[j][0] - mid[j], box[j][1] - mid[j])
        lo, hi = _bounds(k)
        if not (box[i][0] < lo and hi < box[i][1]):
            return False
    return True


def range_enclosure(
    field: Sequence[sp.Expr],
    states: Sequence[sp.Symbol],
    params: Sequence[sp.Symbol],
    point: Sequence[Fraction | sp.Expr],
    pbox: Box,
    kind: str,
    seconds: float = 20.0,
) -> RangeEnclosure:
    """Pieces tiling ``pbox`` on which the claim ``kind`` holds, by bisection."""
    trees = [expression_json(f, [*states, *params]) for f in field]
    old = flint.ctx.prec
    flint.ctx.prec = PRECISION + 96
    try:
        centre = [_centre(p, PRECISION) for p in point]
        widths = [hi - lo for lo, hi in pbox]
        stack, pieces = [pbox], []
        deadline = time.monotonic() + seconds
        while stack:
            if len(pieces) + len(stack) > MAX_PIECES or time.monotonic() > deadline:
                return RangeEnclosure(reason="the bisection budget ran out", where=stack[-1])
            p = stack.pop(0)  # breadth first: a wrong sign on a wide piece is seen early
            found = _piece(trees, centre, p, kind)
            if isinstance(found, dict):
                pieces.append(found)
                continue
            if "stable on the piece" in found:  # decided against the claim on all of p
                value = tuple(simplest_between(lo, hi) for lo, hi in p)
                witness = _piece(trees, centre, tuple((v, v) for v in value), _other(kind))
                return RangeEnclosure(
                    reason=found,
                    where=p,
                    witness=witness if isinstance(witness, dict) else None,
                )
            j = max(range(len(p)), key=lambda i: (p[i][1] - p[i][0]) / (widths[i] or 1))
            if p[j][1] - p[j][0] <= widths[j] / 2**12:
                return RangeEnclosure(reason=found, where=p)
            m = (p[j][0] + p[j][1]) / 2
            stack += [(*p[:j], (p[j][0], m), *p[j + 1 :]), (*p[:j], (m, p[j][1]), *p[j + 1 :])]
        return RangeEnclosure(tuple(pieces))
    finally:
        flint.ctx.prec = old
