"""Certified ball arithmetic (python-flint arb) for sympy expression trees.

:func:`compile_arb` turns a sympy expression in given symbols into a function
of arb balls that returns a ball guaranteed to contain every value of the
expression over the input balls (rigorous interval extension). It supports
rationals, ``pi``, ``E``, + * and powers, and the functions of the model
language (sin cos tan exp log sqrt tanh abs), plus real ``CRootOf``.

This module must never turn a ball into a yes/no answer except through the
ball's certified comparisons (``>`` / ``<`` / ``contains``), and never
evaluates user text (it only walks sympy trees built by the parser).
May import: python-flint, sympy; never ``proofkit.audit``.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence

import flint
import sympy as sp

from proofkit.errors import ModelError
from proofkit.model import ELEMENTARY

__all__ = ["ArbFunction", "arb_value", "compile_arb", "from_rational_interval"]

ArbFunction = Callable[[Sequence[flint.arb]], flint.arb]


def from_rational_interval(lo: object, hi: object) -> flint.arb:
    """A ball containing the rational interval [lo, hi]."""
    a = flint.arb(flint.fmpq(int(sp.Rational(lo).p), int(sp.Rational(lo).q)))
    b = flint.arb(flint.fmpq(int(sp.Rational(hi).p), int(sp.Rational(hi).q)))
    return a.union(b)


def _crootof_ball(r: sp.CRootOf, prec: int) -> flint.arb:
    if not r.is_real:
        raise ModelError(f"a non-real root in a real expression: {r}")
    poly = sp.Poly(r.expr, r.poly.gen)
    ivs = sorted(
        (iv for iv, _m in poly.intervals(eps=sp.Rational(1, 2 ** max(8, prec // 2)))),
        key=lambda t: t[0],
    )
    lo, hi = ivs[r.index]
    return from_rational_interval(lo, hi)


_UNARY = {f: name for f, name in ELEMENTARY.items() if f is not sp.Abs}  # arb methods


def _fold(parts: list[ArbFunction], add: bool) -> ArbFunction:
    def run(xs: Sequence[flint.arb]) -> flint.arb:
        acc = parts[0](xs)
        for p in parts[1:]:
            acc = acc + p(xs) if add else acc * p(xs)
        return acc

    return run


def _constant(e: sp.Expr) -> ArbFunction | None:
    if isinstance(e, sp.Rational):
        v = flint.fmpq(int(e.p), int(e.q))
        return lambda xs: flint.arb(v)
    if e is sp.pi:
        return lambda xs: flint.arb.pi()
    if e is sp.E:
        return lambda xs: flint.arb(1).exp()
    if isinstance(e, sp.Float):
        raise ModelError(f"a floating-point number in an exact expression: {e}")
    if isinstance(e, sp.CRootOf):
        return lambda xs: _crootof_ball(e, flint.ctx.prec)
    return None


def int_power(x: flint.arb, k: int) -> flint.arb:
    """``x**k`` for an integer ``k >= 0``, also for a ball centred at 0.

    python-flint's ``**`` gives nan for a ball whose midpoint is exactly 0; such a
    ball lies in ``[-m, m]`` with ``m = |x|`` bounded above, so ``x**k`` lies in
    ``[0, m**k]`` (even ``k``) or ``[-m**k, m**k]`` (odd ``k``).
    """
    if k == 0:
        return flint.arb(1)
    if not x.mid().is_zero():
        return x**k
    top = x.abs_upper() ** k
    return flint.arb(0).union(top) if k % 2 == 0 else (-top).union(top)


def _power(base: ArbFunction, ex: sp.Expr, build: Callable[[sp.Expr], ArbFunction]) -> ArbFunction:
    if isinstance(ex, sp.Integer):
        k = int(ex)
        if k >= 0:
            return lambda xs: int_power(base(xs), k)
        return lambda xs: 1 / int_power(base(xs), -k)
    if isinstance(ex, sp.Rational) and ex.q == 2:
        k = int(ex.p)

        def halfpow(xs: Sequence[flint.arb]) -> flint.arb:
            r = base(xs).sqrt()
            return int_power(r, k) if k >= 0 else 1 / int_power(r, -k)

        return halfpow
    exf = build(ex)
    return lambda xs: base(xs) ** exf(xs)


def compile_arb(expr: sp.Expr, symbols: Sequence[sp.Symbol]) -> ArbFunction:
    """A rigorous ball-valued version of ``expr`` as a function of the symbols' balls."""
    index = {s: i for i, s in enumerate(symbols)}

    def build(e: sp.Expr) -> ArbFunction:
        if e in index:
            i = index[e]
            return lambda xs: xs[i]
        const = _constant(e)
        if const is not None:
            return const
        if isinstance(e, sp.Add | sp.Mul):
            return _fold([build(a) for a in e.args], isinstance(e, sp.Add))
        if isinstance(e, sp.Pow):
            return _power(build(e.base), e.exp, build)
        for fn, meth in _UNARY.items():
            if isinstance(e, fn):
                arg = build(e.args[0])
                return lambda xs, m=meth: getattr(arg(xs), m)()
        if isinstance(e, sp.Abs):
            arg = build(e.args[0])
            return lambda xs: abs(arg(xs))
        raise ModelError(f"no interval extension for {type(e).__name__}: {e}")

    return build(expr if isinstance(expr, sp.Basic) else sp.Integer(expr))


def arb_value(expr: sp.Expr, prec: int = 64) -> flint.arb:
    """A certified ball for a constant sympy expression at ``prec`` bits."""
    old = flint.ctx.prec
    flint.ctx.prec = prec
    try:
        return compile_arb(expr, ())(())
    finally:
        flint.ctx.prec = old
