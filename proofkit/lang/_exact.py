"""Exact decisions the model builder needs, within a budget of work.

Is a residual identically zero in the uncertain parameters? Is an expression
nonnegative (positive, nonzero) at a point or over a box of parameter values?
Each question is answered by exact rational interval arithmetic (for rational
expressions) or by ball arithmetic (python-flint ``arb``, whose results carry
rigorous error bounds), with bisection of the box, until a fixed budget of time
and steps is spent; then the answer is "undecided" (``None``). A "no" comes
with an exact witness: a rational point where the ball or the exact value
excludes the claimed sign.

This module must never call ``simplify``, evaluate text, or decide a sign
from a floating-point value.
"""

from __future__ import annotations

import time
from collections.abc import Mapping
from dataclasses import dataclass, field
from fractions import Fraction
from typing import Literal

import flint
import sympy as sp

from proofkit.model import ELEMENTARY

__all__ = ["Box", "Budget", "Decision", "ball_of", "holds_on", "qinterval", "zero_test"]

Box = Mapping[sp.Symbol, tuple[Fraction, Fraction]]
Relation = Literal[">", ">=", "!="]
_PRECISIONS = (64, 256, 1024)


class BudgetSpent(Exception):
    """Raised inside a decision when its budget of time or steps is used up."""


@dataclass
class Budget:
    """Seconds and steps one decision (or one whole model) may spend."""

    seconds: float = 2.0
    steps: int = 4000
    start: float = field(default_factory=time.monotonic)
    used: int = 0

    def tick(self, n: int = 1) -> None:
        self.used += n
        if self.used > self.steps or time.monotonic() - self.start > self.seconds:
            raise BudgetSpent


@dataclass(frozen=True)
class Decision:
    """``holds``: True (shown), False (refuted at ``witness``) or None (undecided)."""

    holds: bool | None
    witness: dict[sp.Symbol, Fraction] | None = None
    value: str | None = None  # the value at the witness, for messages
    spent: bool = False  # undecided because the budget ran out


# --- exact rational intervals ---------------------------------------------------------
QI = tuple[Fraction, Fraction]


def _q(e: sp.Rational) -> Fraction:
    return Fraction(int(e.p), int(e.q))


def _qmul(a: QI, b: QI) -> QI:
    c = (a[0] * b[0], a[0] * b[1], a[1] * b[0], a[1] * b[1])
    return min(c), max(c)


def _qpow(a: QI, n: int) -> QI | None:
    if n < 0:
        if a[0] <= 0 <= a[1]:
            return None
        inv = (1 / a[1], 1 / a[0])
        return _qpow(inv, -n)
    lo, hi = a[0] ** n, a[1] ** n
    if n % 2:
        return lo, hi
    if a[0] <= 0 <= a[1]:
        return Fraction(0), max(lo, hi)
    return min(lo, hi), max(lo, hi)


def qinterval(e: sp.Expr, box: Box) -> QI | None:
    """Exact rational bounds of a rational expression over ``box`` (None otherwise)."""
    if e.is_Rational:
        v = _q(e)
        return v, v
    if e.is_Symbol:
        return box.get(e)  # type: ignore[arg-type]
    if e.is_Add or e.is_Mul:
        parts = [qinterval(a, box) for a in e.args]
        if any(p is None for p in parts):
            return None
        out = parts[0]
        for p in parts[1:]:
            assert out is not None and p is not None
            out = (out[0] + p[0], out[1] + p[1]) if e.is_Add else _qmul(out, p)
        return out
    if e.is_Pow and e.exp.is_Integer:
        base = qinterval(e.base, box)
        return None if base is None else _qpow(base, int(e.exp))
    return None


# --- balls ------------------------------------------------------------------------------
_FUNCS = {f: name for f, name in ELEMENTARY.items() if f is not sp.Abs}  # ball methods


def _arb_q(v: Fraction) -> flint.arb:
    return flint.arb(flint.fmpq(v.numerator, v.denominator))


def _ball(e: sp.Expr, box: Box, budget: Budget) -> flint.arb | None:
    """A ball (rigorous enclosure) of ``e`` over ``box``; None when not finite."""
    budget.tick()
    if e.is_Rational:
        return _arb_q(_q(e))
    if e.is_Symbol:
        r = box.get(e)  # type: ignore[arg-type]
        return None if r is None else _arb_q(r[0]).union(_arb_q(r[1]))
    if e is sp.pi:
        return flint.arb.pi()
    if e is sp.E:
        return flint.arb(1).exp()
    args = [_ball(a, box, budget) for a in e.args]
    if any(a is None for a in args):
        return None
    out: flint.arb | None
    if e.is_Add:
        out = sum(args[1:], args[0])
    elif e.is_Mul:
        out = args[0]
        for a in args[1:]:
            out = out * a
    elif e.is_Pow:
        out = _ball_pow(args[0], e.exp)
    elif isinstance(e, sp.Abs):
        out = abs(args[0])
    elif type(e) in _FUNCS:
        arg = args[0]
        if type(e) is sp.log and not arg > 0:
            return None
        out = getattr(arg, _FUNCS[type(e)])()
    else:
        return None
    return out if out is not None and out.is_finite() else None


def _ball_pow(base: flint.arb, exp: sp.Expr) -> flint.arb | None:
    if exp.is_Integer:
        n = int(exp)
        if n < 0 and base.contains(0):
            return None
        return base**n if n >= 0 else 1 / base**-n
    if not exp.is_Rational:
        return None
    if exp == sp.S.Half:
        return base.sqrt() if base >= 0 else None
    if not base > 0:
        return None
    return (base.log() * _arb_q(_q(exp))).exp()


def _with_prec(prec: int, e: sp.Expr, box: Box, budget: Budget) -> flint.arb | None:
    old = flint.ctx.prec
    flint.ctx.prec = prec
    try:
        return _ball(e, box, budget)
    except (ValueError, ZeroDivisionError, ArithmeticError):
        return None
    finally:
        flint.ctx.prec = old


def ball_of(e: sp.Expr, prec: int = 128) -> flint.arb | None:
    """A ball around the constant ``e`` (None when it is not a finite real number)."""
    return _with_prec(prec, e, {}, Budget(1.0, 10_000))


# --- signs ------------------------------------------------------------------------------
def _sign_ok(lo: Fraction, hi: Fraction, relation: Relation) -> bool | None:
    """True if every value in [lo, hi] satisfies ``v relation 0``; False if none does."""
    if relation == ">=":
        return True if lo >= 0 else (False if hi < 0 else None)
    if relation == ">":
        return True if lo > 0 else (False if hi <= 0 else None)
    return True if lo > 0 or hi < 0 else (False if lo == hi == 0 else None)


def _ball_ok(b: flint.arb, relation: Relation) -> bool | None:
    if relation == ">=":
        return True if b >= 0 else (False if b < 0 else None)
    if relation == ">":
        return True if b > 0 else (False if b <= 0 and b < 0 else None)
    return True if (b > 0 or b < 0) else None


def _decide_at(e: sp.Expr, box: Box, relation: Relation, budget: Budget) -> bool | None:
    """The sign question over ``box`` by exact intervals, then balls of rising precision."""
    qi = qinterval(e, box)
    if qi is not None:
        verdict = _sign_ok(qi[0], qi[1], relation)
        if verdict is not None or qi[0] != qi[1]:
            return verdict
    for prec in _PRECISIONS:
        b = _with_prec(prec, e, box, budget)
        if b is None:
            return None
        verdict = _ball_ok(b, relation)
        if verdict is not None:
            return verdict
    return None


def _point(box: Box, pick: str) -> dict[sp.Symbol, Fraction]:
    if pick == "mid":
        return {s: (lo + hi) / 2 for s, (lo, hi) in box.items()}
    return {s: (lo if pick == "lo" else hi) for s, (lo, hi) in box.items()}


def _split(box: Box) -> tuple[Box, Box]:
    s = max(box, key=lambda k: box[k][1] - box[k][0])
    lo, hi = box[s]
    mid = (lo + hi) / 2
    return {**box, s: (lo, mid)}, {**box, s: (mid, hi)}


def _show_value(e: sp.Expr, point: Mapping[sp.Symbol, Fraction]) -> str:
    qi = qinterval(e, {s: (v, v) for s, v in point.items()})
    if qi is not None:
        return str(qi[0])
    b = _with_prec(64, e, {s: (v, v) for s, v in point.items()}, Budget(1.0, 100))
    return "undefined" if b is None else b.str(10, radius=False)


def holds_on(e: sp.Expr, box: Box, relation: Relation, budget: Budget) -> Decision:
    """Does ``e relation 0`` hold at every point of ``box`` (a point when degenerate)?"""
    pending: list[Box] = [dict(box)]
    try:
        while pending:
            budget.tick()
            b = pending.pop()
            verdict = _decide_at(e, b, relation, budget)
            if verdict is True:
                continue
            for pick in ("mid", "lo", "hi"):
                p = _point(b, pick)
                if _decide_at(e, {s: (v, v) for s, v in p.items()}, relation, budget) is False:
                    return Decision(False, p, _show_value(e, p))
            if all(lo == hi for lo, hi in b.values()):
                return Decision(None)
            pending.extend(_split(b))
    except BudgetSpent:
        return Decision(None, spent=True)
    return Decision(True)


def _samples(box: Box) -> list[dict[sp.Symbol, Fraction]]:
    out = [_point(box, "mid"), _point(box, "lo"), _point(box, "hi")]
    for k in (1, 2, 3, 5):
        out.append({s: lo + (hi - lo) * k / 7 for s, (lo, hi) in box.items()})
    return out


def _rational_identity_zero(e: sp.Expr) -> bool:
    """Is ``e``, a rational function of its symbols, the zero function?

    An identity test only (numerator of the normal form is 0): the caller has
    already recorded where ``e`` is defined, and nothing is simplified in the
    model itself. Bounded: only for expressions without function atoms and of
    moderate size.
    """
    if e.atoms(sp.Function) or e.count_ops() > 400:
        return False
    if not all(a.is_Rational for a in e.atoms(sp.Number)):
        return False
    num, _den = sp.fraction(sp.together(e))
    return sp.expand(num) == 0


def zero_test(e: sp.Expr, box: Box, budget: Budget) -> Decision:
    """Is ``e`` zero at every point of ``box``? ``e`` must be bounded in size by the caller.

    Zero is shown only exactly: the expanded expression is 0. Nonzero is shown at
    a rational sample point whose ball excludes 0. Otherwise undecided.
    """
    try:
        if e == 0 or sp.expand(e) == 0:
            return Decision(True)
        if _rational_identity_zero(e):
            return Decision(True)
        for p in _samples(box) if box else [{}]:
            budget.tick()
            at = {s: (v, v) for s, v in p.items()}
            if _decide_at(e, at, "!=", budget) is True:
                return Decision(False, p, _show_value(e, p))
    except BudgetSpent:
        return Decision(None, spent=True)
    return Decision(None)
