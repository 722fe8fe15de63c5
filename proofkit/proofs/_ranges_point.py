"""Evidence at one parameter value: the point, det(sI - J) and a regular Routh array.

Used to refute a range claim ("it breaks at rho = 25"): at a rational value
``p*`` the equilibrium lies in Q or in one quadratic field Q(sqrt d) (its
radical ``r* = c sqrt(d)``), and a regular Routh array of ``(s+1)^k q(s + h)``
shows a root with positive real part (or, against an instability claim, all
roots in the open left half plane). Arithmetic in Q(sqrt d), the shifted
polynomial and the Routh array come from the analysis kernel
(:mod:`proofkit.analysis.linear`, exact signs); floating point only picks the
shift ``h`` (a hint). The audit recomputes everything.

This module must never import :mod:`proofkit.audit` internals and never decide
a sign from floating point.
"""

from __future__ import annotations

from collections.abc import Sequence
from fractions import Fraction
from math import isqrt
from typing import Any

import numpy as np

from proofkit.analysis.algebraic import AlgNum, RealAlgebraicField
from proofkit.analysis.linear import (
    quadratic_field,
    routh_rows,
    shift_and_multiply,
    sign_changes,
    sqrt_parts,
)
from proofkit.analysis.parametric import RangeSystem

__all__ = ["value_evidence"]


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


def _eval(p: Any, pt: Sequence[Fraction], r: AlgNum | None, K: RealAlgebraicField) -> AlgNum:
    """A polynomial over (parameters, r) with r-degree <= 1 at ``(pt, r)``, in ``K``."""
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
    return K(a) if r is None else K(a) + K(b) * r


def _json(x: AlgNum) -> str | list[str]:
    a, b = sqrt_parts(x)
    return str(a) if b == 0 else [str(a), str(b)]


def _routh_evidence(
    coeffs: list[AlgNum], K: RealAlgebraicField, kind: str
) -> dict[str, Any] | None:
    """A regular array contradicting ``kind`` ("stable": a root with Re s > h >= 0)."""
    tries: list[Fraction] = [Fraction(0)]
    if kind == "stable":
        roots = np.roots([float(c) for c in coeffs]) if len(coeffs) > 1 else np.array([])
        top = float(max(roots.real)) if len(roots) else 0.0
        if top > 1e-9:
            h = Fraction(top / 2).limit_denominator(1000)
            tries += [h / 2**k for k in range(6) if h > 0]
    for h in tries:
        for power in (0, 1, 2) if kind == "stable" else (0,):
            q = shift_and_multiply(coeffs, K(h), power, K)
            rows = routh_rows(q, K)
            if rows is None:
                continue
            changes = sign_changes([r[0] for r in rows])
            positive = all(r[0].sign() > 0 for r in rows)
            if (kind == "stable" and changes >= 1) or (kind == "unstable" and positive):
                return {
                    "shift": str(h),
                    "multiplier_power": power,
                    "polynomial": [_json(c) for c in q],
                    "rows": [[_json(c) for c in r] for r in rows],
                    "sign_changes": changes,
                }
    return None


def value_evidence(
    system: RangeSystem, kind: str, pt: Sequence[Fraction]
) -> tuple[dict[str, Any], int] | None:
    """Evidence that the claim ``kind`` fails at ``pt``, and the radicand ``d`` (0 for Q)."""
    d, r, radical = 0, None, None
    if system.radicand is not None:
        q = _eval(system.radicand, pt, None, quadratic_field(0)).rational()
        g = Fraction(int(q.p), int(q.q))
        if g < 0:
            return None
        s, sq = _square_split(g.numerator * g.denominator)
        c = Fraction(s, g.denominator)
        d = 0 if sq == 1 else sq
        r = quadratic_field(d).one * c if d == 0 else quadratic_field(d).gen * c
        radical = str(c)
    K = quadratic_field(d)
    point = [
        _eval(a, pt, None, K) + _eval(b, pt, None, K) * (K.zero if r is None else r)
        for a, b in system.point
    ]
    cp = [_eval(c, pt, r, K) for c in system.charpoly]
    if system.denominator_sign is not None:  # det(sI - B) -> det(sI - J), J = B / (sigma Q)
        scale = _eval(system.conditions[0], pt, r, K)
        if scale.sign() <= 0:
            return None
        cp = [c / scale**k for k, c in enumerate(cp)]
    routh = _routh_evidence(cp, K, kind)
    if routh is None:
        return None
    evidence = {
        "parameters": {n: str(v) for n, v in zip(system.params, pt, strict=True)},
        "radical": radical,
        "point": [_json(x) for x in point],
        "characteristic_polynomial": [_json(c) for c in cp],
        "routh": routh,
    }
    return evidence, d
