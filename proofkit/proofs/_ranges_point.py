"""Evidence at one parameter value: the point, det(sI - J) and a regular Routh array.

Used to refute a range claim ("it breaks at rho = 25"): at a rational value
``p*`` the equilibrium lies in Q or in one quadratic field Q(sqrt d) (its
radical ``r* = c sqrt(d)``), and a regular Routh array of ``(s+1)^k q(s + h)``
shows a root with positive real part (or, against an instability claim, all
roots in the open left half plane). Arithmetic in Q(sqrt d) is done here with
``fractions`` and exact signs (comparing squares); floating point only picks
the shift ``h`` (a hint). The audit recomputes everything.

This module must never import :mod:`proofkit.audit` internals and never decide
a sign from floating point.
"""

from __future__ import annotations

import itertools
from collections.abc import Sequence
from dataclasses import dataclass
from fractions import Fraction
from math import isqrt
from typing import Any

import numpy as np

from proofkit.analysis.parametric import RangeSystem

__all__ = ["QS", "value_evidence"]


@dataclass(frozen=True)
class QS:
    """``a + b sqrt(d)`` with rational ``a, b`` (``d`` not a square, or 0 for Q)."""

    a: Fraction
    b: Fraction = Fraction(0)
    d: int = 0

    def __add__(self, o: QS) -> QS:
        return QS(self.a + o.a, self.b + o.b, self.d or o.d)

    def __sub__(self, o: QS) -> QS:
        return QS(self.a - o.a, self.b - o.b, self.d or o.d)

    def __mul__(self, o: QS) -> QS:
        d = self.d or o.d
        return QS(self.a * o.a + d * self.b * o.b, self.a * o.b + self.b * o.a, d)

    def __truediv__(self, o: QS) -> QS:
        d = self.d or o.d
        norm = o.a * o.a - d * o.b * o.b
        return self * QS(o.a / norm, -o.b / norm, d)

    def sign(self) -> int:
        sa = (self.a > 0) - (self.a < 0)
        sb = (self.b > 0) - (self.b < 0)
        if sb == 0 or sa == sb or sa == 0:
            return sa or sb
        return sa if self.a * self.a > self.b * self.b * self.d else sb

    def __float__(self) -> float:
        return float(self.a) + float(self.b) * (self.d**0.5 if self.d else 0.0)

    def json(self) -> str | list[str]:
        return str(self.a) if self.b == 0 else [str(self.a), str(self.b)]


def _square_split(n: int) -> tuple[int, int]:
    """``n = s^2 d`` with small square factors moved into ``s`` (d = 1 when n is a square)."""
    r = isqrt(n)
    if r * r == n:
        return r, 1
    s, k = 1, 2
    while k * k <= n and k < 10_000:
        while n % (k * k) == 0:
            n //= k * k
            s *= k
        k += 1
    return s, n


def _eval(p: Any, pt: Sequence[Fraction], r: QS | None) -> QS:
    """A polynomial over (parameters, r) with r-degree <= 1 at ``(pt, r)``."""
    m = len(pt)
    a = b = Fraction(0)
    for monom, c in p.to_dict().items():
        v = Fraction(int(c.p), int(c.q))
        for x, e in zip(pt, monom[:m], strict=True):
            v *= x ** int(e)
        if r is not None and monom[m]:
            b += v
        else:
            a += v
    return QS(a) + (QS(Fraction(0)) if r is None else QS(b) * r)


def _shift_multiply(cp: list[QS], h: Fraction, power: int) -> list[QS]:
    """``(s+1)^power q(s + h)`` highest first (Horner, then products with s + 1)."""
    zero = QS(Fraction(0))
    acc = [zero]
    for c in cp:  # ascending coefficients; acc = acc * (s + h) + c
        acc = [
            (acc[i - 1] if i else zero) + (acc[i] * QS(h) if i < len(acc) else zero)
            for i in range(len(acc) + 1)
        ]
        acc[0] = acc[0] + c
    acc = acc[: len(cp)]
    for _ in range(power):
        acc = [
            (acc[i - 1] if i else zero) + (acc[i] if i < len(acc) else zero)
            for i in range(len(acc) + 1)
        ]
    return acc[::-1]


def _routh(q: list[QS]) -> list[list[QS]] | None:
    n = len(q) - 1
    width = n // 2 + 1
    zero = QS(Fraction(0))
    rows = [list(q[0::2]), list(q[1::2])]
    rows = [r + [zero] * (width - len(r)) for r in rows]
    while len(rows) < n + 1:
        a, b = rows[-2], rows[-1]
        if b[0].sign() == 0:
            return None
        rows.append([(b[0] * a[i + 1] - a[0] * b[i + 1]) / b[0] for i in range(width - 1)] + [zero])
    rows = rows[: n + 1]
    return None if any(r[0].sign() == 0 for r in rows) else rows


def _changes(rows: list[list[QS]]) -> int:
    signs = [r[0].sign() for r in rows]
    return sum(1 for s, t in itertools.pairwise(signs) if s != t)


def _routh_evidence(cp: list[QS], kind: str) -> dict[str, Any] | None:
    """A regular array contradicting ``kind`` ("stable": a root with Re s > h >= 0)."""
    tries: list[Fraction] = [Fraction(0)]
    if kind == "stable":
        roots = np.roots([float(c) for c in cp]) if len(cp) > 1 else np.array([])
        top = float(max(roots.real)) if len(roots) else 0.0
        if top > 1e-9:
            h = Fraction(top / 2).limit_denominator(1000)
            tries += [h / 2**k for k in range(6) if h > 0]
    for h in tries:
        for power in (0, 1, 2) if kind == "stable" else (0,):
            q = _shift_multiply(cp, h, power)
            rows = _routh(q)
            if rows is None:
                continue
            changes = _changes(rows)
            if (kind == "stable" and changes >= 1) or (
                kind == "unstable" and changes == 0 and all(r[0].sign() > 0 for r in rows)
            ):
                return {
                    "shift": str(h),
                    "multiplier_power": power,
                    "polynomial": [c.json() for c in q],
                    "rows": [[c.json() for c in r] for r in rows],
                    "sign_changes": changes,
                }
    return None


def value_evidence(
    system: RangeSystem, kind: str, pt: Sequence[Fraction]
) -> tuple[dict[str, Any], int] | None:
    """Evidence that the claim ``kind`` fails at ``pt``, and the radicand ``d`` (0 for Q)."""
    d, r, radical = 0, None, None
    if system.radicand is not None:
        g = _eval(system.radicand, pt, None).a
        if g < 0:
            return None
        s, sq = _square_split(g.numerator * g.denominator)
        c = Fraction(s, g.denominator)
        d = 0 if sq == 1 else sq
        r = QS(c) if d == 0 else QS(Fraction(0), c, d)
        radical = str(c)
    point = [
        _eval(a, pt, None) + _eval(b, pt, None) * (r or QS(Fraction(0))) for a, b in system.point
    ]
    cp = [_eval(c, pt, r) for c in system.charpoly]
    cp = [QS(c.a, c.b, d) for c in cp]
    routh = _routh_evidence(cp, kind)
    if routh is None:
        return None
    evidence = {
        "parameters": {n: str(v) for n, v in zip(system.params, pt, strict=True)},
        "radical": radical,
        "point": [x.json() for x in point],
        "characteristic_polynomial": [c.json() for c in cp],
        "routh": routh,
    }
    return evidence, d
