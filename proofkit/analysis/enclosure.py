"""Enclosures for the linearization of non-polynomial fields, and their certificate form.

:func:`expression_json` writes a sympy expression of the model language as the
certificate's expression tree (``model.expressions``; format in DEVELOPERS.md):
numbers ``"p/q"``, ``["var", i]``, ``["pi"]``, ``["+", ...]``, ``["*", ...]``,
``["^", e, k]`` (integer ``k``), and ``["sin" | "cos" | "tan" | "exp" | "log" |
"sqrt" | "tanh", e]``.

:func:`linearization_enclosure` encloses ``f`` and ``df/dx`` over a small
rational box around a rational point with python-flint ball arithmetic
(rigorous error bounds, no unrounded floating point), rounds every bound
outward to the grid ``2^-precision``, and decides the Routh first-column
signs over that enclosure, raising the precision until every sign is decided
or the limit is reached. The audit re-computes all of it with its own
rational Taylor-series arithmetic (``proofkit/audit/enclosures.py``); the two
share no code.

May import: python-flint, sympy, ``analysis.intervals``. This module must
never decide a sign from a float, and never import ``proofkit.audit``.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Sequence
from dataclasses import dataclass
from fractions import Fraction
from typing import Any

import flint
import sympy as sp

from proofkit.analysis.intervals import compile_arb

__all__ = [
    "PRECISIONS",
    "LinearizationEnclosure",
    "NotExpressible",
    "expression_json",
    "linearization_enclosure",
]

PRECISIONS = (32, 64, 128, 256, 512)  # grid bits tried in turn
_FUNCTIONS = {
    sp.sin: "sin",
    sp.cos: "cos",
    sp.tan: "tan",
    sp.exp: "exp",
    sp.log: "log",
    sp.tanh: "tanh",
}


class NotExpressible(ValueError):
    """An expression the certificate's trees cannot carry (abs, fractional powers, ...)."""


def _rational(q: sp.Rational) -> str:
    return str(Fraction(int(q.p), int(q.q)))


def expression_json(expr: sp.Expr, variables: Sequence[sp.Symbol]) -> Any:
    """The expression tree of ``expr`` over ``variables`` (see the module docstring)."""
    index = {v: i for i, v in enumerate(variables)}

    def walk(e: sp.Expr) -> Any:
        if e.is_Rational:
            return _rational(e)
        if e is sp.pi:
            return ["pi"]
        if e is sp.E:
            return ["exp", "1"]
        if isinstance(e, sp.Symbol):
            if e not in index:
                raise NotExpressible(f"unknown symbol {e}")
            return ["var", index[e]]
        if isinstance(e, sp.Add):
            return ["+", *(walk(a) for a in e.args)]
        if isinstance(e, sp.Mul):
            return ["*", *(walk(a) for a in e.args)]
        if isinstance(e, sp.Pow):
            base, ex = e.args
            if ex.is_Integer and abs(int(ex)) <= 64:
                return ["^", walk(base), int(ex)]
            if ex == sp.S.Half:
                return ["sqrt", walk(base)]
            if ex.is_Rational and ex.q == 2 and abs(int(ex.p)) <= 64:
                return ["^", ["sqrt", walk(base)], int(ex.p)]
            raise NotExpressible(f"the power {e} is not an integer or half-integer power")
        for fn, name in _FUNCTIONS.items():
            if isinstance(e, fn):
                return [name, walk(e.args[0])]
        raise NotExpressible(f"{type(e).__name__} is not carried by certificates")

    return walk(expr)


@dataclass(frozen=True)
class LinearizationEnclosure:
    """The evidence of ``linearization-enclosure`` and what it shows."""

    precision: int
    box: tuple[tuple[Fraction, Fraction], ...]
    preconditioner: tuple[tuple[Fraction, ...], ...]
    jacobian: tuple[tuple[tuple[Fraction, Fraction], ...], ...]
    routh_signs: tuple[int, ...]  # 0 where undecided

    @property
    def decided(self) -> bool:
        return 0 not in self.routh_signs

    @property
    def rhp(self) -> int:
        s = self.routh_signs
        return sum(1 for a, b in itertools.pairwise(s) if a != b)

    def evidence(self) -> dict[str, Any]:
        def q(x: Fraction) -> str:
            return str(x)

        return {
            "precision": self.precision,
            "box": [[q(lo), q(hi)] for lo, hi in self.box],
            "preconditioner": [[q(v) for v in row] for row in self.preconditioner],
            "jacobian": [[[q(lo), q(hi)] for lo, hi in row] for row in self.jacobian],
            "routh_signs": list(self.routh_signs),
        }


def _q(x: flint.fmpq) -> Fraction:
    return Fraction(int(x.p), int(x.q))


def _bounds(a: flint.arb) -> tuple[Fraction, Fraction]:
    m, e = a.mid().man_exp()
    r, f = a.rad().man_exp()
    mid = Fraction(int(m)) * Fraction(2) ** int(e)
    rad = Fraction(int(r)) * Fraction(2) ** int(f)
    return mid - rad, mid + rad


def _grid(lo: Fraction, hi: Fraction, bits: int) -> tuple[Fraction, Fraction]:
    s = 2**bits
    return Fraction(math.floor(lo * s), s), Fraction(math.ceil(hi * s), s)


def _ball(lo: Fraction, hi: Fraction) -> flint.arb:
    a = flint.arb(flint.fmpq(lo.numerator, lo.denominator))
    return a.union(flint.arb(flint.fmpq(hi.numerator, hi.denominator)))


def _routh_signs(jac: list[list[tuple[Fraction, Fraction]]]) -> tuple[int, ...]:
    """Routh first-column signs over the interval matrix (ball arithmetic); 0: undecided."""
    from proofkit.analysis.surveying import _arb_charpoly, _arb_routh

    balls = [[_ball(lo, hi) for lo, hi in row] for row in jac]
    rows, _uncertain = _arb_routh(_arb_charpoly(balls))
    signs = [1 if r[0] > 0 else -1 if r[0] < 0 else 0 for r in rows]
    return tuple(signs + [0] * (len(jac) + 1 - len(signs)))


def _preconditioner(jac: list[list[tuple[Fraction, Fraction]]], bits: int) -> list[list[Fraction]]:
    mids = sp.Matrix([[sp.Rational((lo + hi) / 2) for lo, hi in row] for row in jac])
    try:
        inv = mids.inv()
    except (ValueError, ZeroDivisionError):
        return [[Fraction(int(i == j)) for j in range(len(jac))] for i in range(len(jac))]
    s = 2**bits
    return [[Fraction(round(Fraction(int(v.p), int(v.q)) * s), s) for v in row]
            for row in inv.tolist()]  # fmt: skip


def _centre(value: Fraction | sp.Expr, bits: int) -> Fraction:
    """A rational within 2^-(bits + 64) of an exact value such as pi/3."""
    if isinstance(value, Fraction):
        return value
    if isinstance(value, sp.Rational):
        return Fraction(int(value.p), int(value.q))
    from proofkit.analysis.intervals import arb_value

    lo, hi = _bounds(arb_value(value, bits + 128))
    if hi - lo > Fraction(1, 2 ** (bits + 64)):
        raise ValueError(f"{value} could not be enclosed tightly enough")
    return (lo + hi) / 2


def linearization_enclosure(
    field: Sequence[sp.Expr], xs: Sequence[sp.Symbol], point: Sequence[Fraction | sp.Expr]
) -> LinearizationEnclosure:
    """The enclosure evidence at ``point`` (rational, or exact such as pi/3).

    The finest grid tried is returned when no precision decides every sign.
    """
    jexprs = [[compile_arb(sp.diff(f, x), xs) for x in xs] for f in field]
    old = flint.ctx.prec
    result = None
    try:
        for bits in PRECISIONS:
            flint.ctx.prec = bits + 96
            half = Fraction(1, 2 ** (bits + 16))
            # off-centre: python-flint 0.9 gives nan for ``ball ** k`` when the ball's
            # midpoint is exactly 0, so no ball here is centred on a rational point
            box = tuple((c - half, c + 2 * half) for c in (_centre(p, bits) for p in point))
            balls = [_ball(lo, hi) for lo, hi in box]
            jac = [[_grid(*_bounds(j(balls)), bits) for j in row] for row in jexprs]
            y = _preconditioner(jac, bits)
            signs = _routh_signs(jac)
            result = LinearizationEnclosure(
                bits, box, tuple(map(tuple, y)), tuple(map(tuple, jac)), signs
            )
            if result.decided:
                break
    finally:
        flint.ctx.prec = old
    assert result is not None
    return result
