"""Independent exact re-checks of SOS certificates (sympy + fractions only, no proofkit code)."""

from __future__ import annotations

from fractions import Fraction

import sympy as sp


def gram_identity_holds(p: sp.Expr, basis: list[sp.Expr], gram: sp.Matrix) -> bool:
    """``p == b' G b`` by sympy's own expansion (independent of proofkit's FLINT arithmetic)."""
    b = sp.Matrix(basis)
    return sp.expand((b.T * gram * b)[0, 0] - p) == 0


def is_psd_exact(gram: sp.Matrix) -> bool:
    """PSD by a textbook symmetric elimination with Python Fractions (zero pivot => zero row)."""
    n = gram.shape[0]
    a = [
        [Fraction(int(sp.Rational(gram[i, j]).p), int(sp.Rational(gram[i, j]).q)) for j in range(n)]
        for i in range(n)
    ]
    if any(a[i][j] != a[j][i] for i in range(n) for j in range(n)):
        return False
    for k in range(n):
        piv = a[k][k]
        if piv < 0:
            return False
        if piv == 0:
            if any(a[i][k] != 0 for i in range(k + 1, n)):
                return False
            continue
        for i in range(k + 1, n):
            f = a[i][k] / piv
            if f:
                for j in range(k + 1, n):
                    a[i][j] -= f * a[k][j]
    return True
