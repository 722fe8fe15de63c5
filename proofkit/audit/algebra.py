"""Exact algebra for the audit: sparse polynomials, matrices, Routh arrays, LDL'.

Everything works on :class:`~proofkit.audit.numbers.Num` (rationals or one
quadratic field) with plain Python containers so that a reviewer can check
each routine against its textbook definition.

This module must never use floating point and imports only the standard
library and :mod:`proofkit.audit.numbers`.
"""

from __future__ import annotations

import itertools
import math
import time
from collections.abc import Iterator, Sequence
from contextlib import contextmanager
from fractions import Fraction

from proofkit.audit.numbers import Num

__all__ = [
    "Matrix",
    "Poly",
    "WorkLimit",
    "char_poly",
    "deadline",
    "gram_form",
    "ldl_pivots",
    "poly_add",
    "poly_constant",
    "poly_derivative",
    "poly_eval",
    "poly_mul",
    "poly_pow",
    "poly_scale",
    "poly_str",
    "poly_substitute",
    "psd_reason",
    "routh_rows",
    "shift_and_multiply",
]

Poly = dict[tuple[int, ...], Num]  # exponent vector -> nonzero coefficient
Matrix = list[list[Num]]
MAX_RESULT_TERMS = 200_000  # terms of any intermediate polynomial
_DEADLINE = [math.inf]  # time.monotonic() value after which the work stops


class WorkLimit(Exception):
    """The audit's time or size budget for one certificate was used up."""


@contextmanager
def deadline(seconds: float) -> Iterator[None]:
    """Bound the work of everything inside: :func:`tick` raises WorkLimit after ``seconds``."""
    saved = _DEADLINE[0]
    _DEADLINE[0] = time.monotonic() + seconds
    try:
        yield
    finally:
        _DEADLINE[0] = saved


def tick() -> None:
    if time.monotonic() > _DEADLINE[0]:
        raise WorkLimit("the audit's time limit was reached before this check finished")


# --- sparse polynomials ------------------------------------------------------
def _clean(p: Poly) -> Poly:
    return {e: c for e, c in p.items() if not c.is_zero()}


def poly_add(p: Poly, q: Poly) -> Poly:
    out = dict(p)
    for e, c in q.items():
        out[e] = out[e] + c if e in out else c
    return _clean(out)


def poly_scale(p: Poly, k: Num) -> Poly:
    return _clean({e: c * k for e, c in p.items()})


def poly_mul(p: Poly, q: Poly) -> Poly:
    out: Poly = {}
    for e1, c1 in p.items():
        tick()
        if len(out) > MAX_RESULT_TERMS:
            raise WorkLimit(f"a product has more than {MAX_RESULT_TERMS} terms")
        for e2, c2 in q.items():
            e = tuple(a + b for a, b in zip(e1, e2, strict=True))
            out[e] = out[e] + c1 * c2 if e in out else c1 * c2
    return _clean(out)


def poly_derivative(p: Poly, i: int) -> Poly:
    """Partial derivative with respect to variable number ``i``."""
    out: Poly = {}
    for e, c in p.items():
        if e[i] > 0:
            e2 = (*e[:i], e[i] - 1, *e[i + 1 :])
            out[e2] = c * Num.of(e[i], c.d)
    return _clean(out)


def poly_constant(c: Num, nvars: int) -> Poly:
    return _clean({(0,) * nvars: c})


def poly_pow(p: Poly, k: int, nvars: int) -> Poly:
    out = poly_constant(Num.of(1), nvars)
    for _ in range(k):
        out = poly_mul(out, p)
    return out


def poly_substitute(p: Poly, values: Sequence[Poly], nvars: int) -> Poly:
    """``p(values[0], values[1], ...)``: each variable replaced by a polynomial in ``nvars``."""
    powers: list[list[Poly]] = [[poly_constant(Num.of(1), nvars)] for _ in values]
    out: Poly = {}
    for e, c in p.items():
        tick()
        term = poly_constant(c, nvars)
        for i, k in enumerate(e):
            while len(powers[i]) <= k:
                powers[i].append(poly_mul(powers[i][-1], values[i]))
            if k:
                term = poly_mul(term, powers[i][k])
        out = poly_add(out, term)
    return out


def gram_form(basis: Sequence[tuple[int, ...]], gram: Sequence[Sequence[Num]]) -> Poly:
    """``z' G z`` for the monomial vector ``z`` given by its exponent vectors."""
    form: Poly = {}
    for i, mi in enumerate(basis):
        tick()
        for j, mj in enumerate(basis):
            if gram[i][j].is_zero():
                continue
            e = tuple(a + b for a, b in zip(mi, mj, strict=True))
            form[e] = form[e] + gram[i][j] if e in form else gram[i][j]
    return _clean(form)


def poly_str(p: Poly, names: Sequence[str]) -> str:
    """``p`` written with ``names``, highest degree first, e.g. ``x^2 + 2*x*y - 1/2``."""
    if not p:
        return "0"
    parts = []
    for e in sorted(p, key=lambda e: (-sum(e), tuple(-k for k in e))):
        c = p[e]
        mono = "*".join(n if k == 1 else f"{n}^{k}" for n, k in zip(names, e, strict=True) if k)
        neg = c.sign() < 0 if c.b == 0 else False
        mag = -c if neg else c
        text = str(mag) if c.b == 0 else f"({mag})"
        if mono:
            text = mono if text == "1" else f"{text}*{mono}"
        parts.append(("- " if neg else "+ ") + text)
    first = parts[0]
    return (first[2:] if first.startswith("+") else "-" + first[2:]) + "".join(
        " " + q for q in parts[1:]
    )


def poly_eval(p: Poly, point: Sequence[Num]) -> Num:
    total = Num.of(0)
    for e, c in p.items():
        tick()
        term = c
        for x, k in zip(point, e, strict=True):
            for _ in range(k):
                term = term * x
        total = total + term
    return total


# --- matrices and the characteristic polynomial ------------------------------
def _matmul(a: Matrix, b: Matrix) -> Matrix:
    n, m, k = len(a), len(b[0]), len(b)
    zero = Num.of(0)
    out = []
    for i in range(n):
        tick()
        row = []
        for j in range(m):
            s = zero
            for t in range(k):
                s = s + a[i][t] * b[t][j]
            row.append(s)
        out.append(row)
    return out


def transpose(a: Matrix) -> Matrix:
    return [list(col) for col in zip(*a, strict=True)]


def mat_add(a: Matrix, b: Matrix) -> Matrix:
    return [[x + y for x, y in zip(r, s, strict=True)] for r, s in zip(a, b, strict=True)]


def matmul(a: Matrix, b: Matrix) -> Matrix:
    return _matmul(a, b)


def char_poly(a: Matrix) -> list[Num]:
    """``det(sI - A)`` highest degree first, by the Faddeev–LeVerrier recursion.

    M_1 = I, c_0 = 1; c_k = -tr(A M_k)/k; M_{k+1} = A M_k + c_k I.
    """
    n = len(a)
    coeffs = [Num.of(1)]
    m: Matrix = [[Num.of(int(i == j)) for j in range(n)] for i in range(n)]
    for k in range(1, n + 1):
        tick()
        am = _matmul(a, m)
        trace = Num.of(0)
        for i in range(n):
            trace = trace + am[i][i]
        coeffs.append(-(trace / Num.of(k)))
        m = am
        for i in range(n):
            m[i][i] = m[i][i] + coeffs[-1]
    return coeffs


# --- Routh array -------------------------------------------------------------
def shift_and_multiply(coeffs: Sequence[Num], shift: Num, power: int) -> list[Num]:
    """Coefficients of ``(s+1)^power * p(s + shift)``, highest degree first.

    The roots of ``p(s + shift)`` are those of ``p`` moved left by ``shift``;
    the factor ``(s+1)^power`` adds roots at -1 only.
    """
    zero = Num.of(0)

    def times_linear(up: list[Num], c0: Num) -> list[Num]:  # up (ascending) * (s + c0)
        return [
            (up[i - 1] if i > 0 else zero) + (up[i] * c0 if i < len(up) else zero)
            for i in range(len(up) + 1)
        ]

    acc: list[Num] = [zero]  # ascending powers; Horner: acc = acc*(s+shift) + c
    for c in coeffs:
        acc = times_linear(acc, shift)
        acc[0] = acc[0] + c
    acc = acc[: len(coeffs)]  # the top entry of the first step is always zero
    for _ in range(power):
        acc = times_linear(acc, Num.of(1))
    return acc[::-1]


def routh_rows(coeffs: Sequence[Num]) -> list[list[Num]] | None:
    """The regular Routh array of a polynomial (highest degree first).

    Rows 0 and 1 hold the even- and odd-indexed coefficients; each later
    entry is ``(b0*a[i+1] - a0*b[i+1]) / b0`` for the two rows above.
    Returns ``None`` when a first-column entry is zero (a special case).
    """
    n = len(coeffs) - 1
    width = n // 2 + 1
    zero = Num.of(0)

    def pad(row: list[Num]) -> list[Num]:
        return row + [zero] * (width - len(row))

    rows = [pad(list(coeffs[0::2])), pad(list(coeffs[1::2]))]
    while len(rows) < n + 1:
        tick()
        a, b = rows[-2], rows[-1]
        if b[0].is_zero():
            return None
        new = [(b[0] * a[i + 1] - a[0] * b[i + 1]) / b[0] for i in range(width - 1)]
        rows.append([*new, zero])
    rows = rows[: n + 1]
    if any(r[0].is_zero() for r in rows):
        return None
    return rows


def sign_changes(values: Sequence[Num]) -> int:
    signs = [v.sign() for v in values]
    return sum(1 for s, t in itertools.pairwise(signs) if s != t)


# --- LDL' ---------------------------------------------------------------------
def ldl_pivots(m: Matrix) -> tuple[list[Num], Matrix] | str:
    """Exact symmetric elimination ``M = L D L'`` without pivoting.

    Returns ``(d, L)`` (unit lower triangular ``L``) or the reason why ``M``
    is not positive semidefinite: a negative pivot, or a zero pivot whose
    column below is not zero (a PSD matrix with a zero diagonal entry has a
    zero row and column). ``M`` is PSD iff this returns factors; it is
    positive definite iff moreover every pivot is positive.
    """
    n = len(m)
    a = [list(r) for r in m]
    lower: Matrix = [[Num.of(1) if i == j else Num.of(0) for j in range(n)] for i in range(n)]
    pivots: list[Num] = []
    for k in range(n):
        tick()
        p = a[k][k]
        s = p.sign()
        if s < 0:
            return f"negative pivot {p} at position {k + 1}"
        if s == 0:
            if any(not a[i][k].is_zero() for i in range(k + 1, n)):
                return f"zero pivot at position {k + 1} with a nonzero entry below it"
            pivots.append(p)
            continue
        pivots.append(p)
        for i in range(k + 1, n):
            lower[i][k] = a[i][k] / p
        for i in range(k + 1, n):
            if a[i][k].is_zero():
                continue
            f = lower[i][k]
            for j in range(k + 1, n):
                a[i][j] = a[i][j] - f * a[k][j]
    return pivots, lower


def psd_reason(m: Matrix) -> str | None:
    """None when the symmetric ``m`` is positive semidefinite, else the reason.

    Rational matrices are scaled to integers and eliminated fraction-free
    (Bareiss: every division is exact, the pivots are the leading principal
    minors); a zero pivot needs a zero column below it, and its row and column
    are then skipped (a PSD matrix with a zero diagonal entry has a zero row).
    Other matrices use :func:`ldl_pivots`.
    """
    if any(x.b != 0 for row in m for x in row):
        res = ldl_pivots(m)
        return res if isinstance(res, str) else None
    den = 1
    for row in m:
        tick()
        for x in row:
            den = math.lcm(den, x.a.denominator)
        if den.bit_length() > 60_000:  # very different denominators: stay with fractions
            res = ldl_pivots(m)
            return res if isinstance(res, str) else None
    a = [[int(x.a * den) if isinstance(x.a, Fraction) else x.a for x in row] for row in m]
    n, prev = len(a), 1
    for k in range(n):
        tick()
        p, rk = a[k][k], a[k]
        if p < 0:
            return f"negative pivot at position {k + 1}"
        if p == 0:
            if any(a[i][k] for i in range(k + 1, n)):
                return f"zero pivot at position {k + 1} with a nonzero entry below it"
            continue
        for i in range(k + 1, n):
            ri, aik = a[i], a[i][k]
            for j in range(k + 1, n):
                ri[j] = (p * ri[j] - aik * rk[j]) // prev
        prev = p
    return None
