"""The Routh array in exact arithmetic, with both special cases, and exact root counts.

Entries live in an exact real field (Q or Q(alpha), see ``algebraic``).
Special cases:

* a zero first-column entry in a row that is not all zero is replaced by a
  symbolic ``epsilon``; the array continues with exact rational functions of
  epsilon and every first-column sign is taken in the limit epsilon -> 0+
  (the sign of the lowest-order coefficients);
* a row of zeros is replaced by the coefficients of the derivative of the
  auxiliary polynomial formed from the row above.

The reported counts (open right half plane, imaginary axis, with
multiplicity) come from an independent exact computation: p = d * r with
d = gcd(p(s), p(-s)); r has no mirrored roots and is counted by the Cauchy
index (Sturm sequences), d = s^k e(s^2) by counting the negative real roots
of e. The array's sign changes are checked against that count.

May import: sympy, ``analysis.algebraic`` and ``analysis.kpoly``; never
``proofkit.audit``.
This module must never decide a sign from floating point.
"""

from __future__ import annotations

import itertools
from collections.abc import Sequence
from dataclasses import dataclass

import sympy as sp

from proofkit.analysis import kpoly
from proofkit.analysis.algebraic import AlgNum, RealAlgebraicField, field_of_exprs

__all__ = ["EPSILON", "RouthArray", "routh_array", "routh_array_in"]

EPSILON = sp.Symbol("epsilon", positive=True)
_S = sp.Symbol("s")


@dataclass(frozen=True)
class RouthArray:
    """An exact Routh array and what it says about the roots.

    ``rows[i]`` is the row of power s^(n-i); entries may contain ``EPSILON``
    after a zero-in-first-column event; ``field_rows`` holds the entries as
    field elements (full width, zero-padded) when the array is regular.
    ``first_column_signs`` are the exact
    signs (as epsilon -> 0+). ``rhp_count`` / ``imag_count`` count roots in the
    open right half plane / on the imaginary axis, with multiplicity.
    """

    coefficients: tuple[sp.Expr, ...]
    rows: tuple[tuple[sp.Expr, ...], ...]
    first_column: tuple[sp.Expr, ...]
    first_column_signs: tuple[int, ...]
    special: tuple[str, ...]
    auxiliary: tuple[tuple[int, sp.Expr], ...]
    sign_changes: int
    rhp_count: int
    imag_count: int
    field_rows: tuple[tuple[AlgNum, ...], ...] | None = None  # regular arrays: exact entries

    @property
    def degree(self) -> int:
        return len(self.coefficients) - 1

    @property
    def regular(self) -> bool:
        """True when no special case arose (every first-column entry a nonzero number)."""
        return not self.special

    @property
    def hurwitz(self) -> bool:
        """All roots in the open left half plane."""
        return self.rhp_count == 0 and self.imag_count == 0


class _Frac:
    """An exact rational function num(eps)/den(eps) over a real field K."""

    __slots__ = ("K", "den", "num")

    def __init__(self, K: RealAlgebraicField, num: kpoly.KPoly, den: kpoly.KPoly) -> None:
        self.K = K
        num, den = kpoly.trim(num), kpoly.trim(den)
        if not num:
            self.num, self.den = [], [K.one]
            return
        if len(den) > 1 and len(num) > 1:
            g = kpoly.gcd(num, den, K)
            if len(g) > 1:
                num = kpoly.divmod_(num, g, K)[0]
                den = kpoly.divmod_(den, g, K)[0]
        inv = den[-1].inverse()
        self.num = [c * inv for c in num]
        self.den = [c * inv for c in den]

    @classmethod
    def const(cls, a: AlgNum) -> _Frac:
        return cls(a.K, [a], [a.K.one])

    @classmethod
    def eps(cls, K: RealAlgebraicField) -> _Frac:
        return cls(K, [K.zero, K.one], [K.one])

    def is_zero(self) -> bool:
        return not self.num

    def sign(self) -> int:
        """Sign in the limit eps -> 0+."""
        if not self.num:
            return 0
        a = next(c for c in self.num if not c.is_zero())
        b = next(c for c in self.den if not c.is_zero())
        return a.sign() * b.sign()

    def __sub__(self, o: _Frac) -> _Frac:
        K = self.K
        return _Frac(
            K,
            kpoly.sub(kpoly.mul(self.num, o.den, K), kpoly.mul(o.num, self.den, K), K),
            kpoly.mul(self.den, o.den, K),
        )

    def __mul__(self, o: _Frac) -> _Frac:
        K = self.K
        return _Frac(K, kpoly.mul(self.num, o.num, K), kpoly.mul(self.den, o.den, K))

    def scale(self, k: int) -> _Frac:
        return _Frac(self.K, [c * k for c in self.num], self.den)

    def __truediv__(self, o: _Frac) -> _Frac:
        K = self.K
        return _Frac(K, kpoly.mul(self.num, o.den, K), kpoly.mul(self.den, o.num, K))

    def to_sympy(self) -> sp.Expr:
        def poly(p: kpoly.KPoly) -> sp.Expr:
            return sp.Add(*[c.to_sympy() * EPSILON**k for k, c in enumerate(p)])

        if len(self.den) == 1 and len(self.num) <= 1:
            return self.num[0].to_sympy() if self.num else sp.Integer(0)
        if len(self.den) == 1:
            return poly(self.num)
        return poly(self.num) / poly(self.den)


def _settle(rows: list[list[_Frac]], i: int, n: int, K: RealAlgebraicField, notes: dict) -> None:
    """Apply the special-case rules to row i (power s^(n-i)), recording what was done."""
    row = rows[i]
    power = n - i
    zero = _Frac.const(K.zero)
    if all(e.is_zero() for e in row):
        above = rows[i - 1]
        m = power + 1
        a_expr = sp.Add(*[above[j].to_sympy() * _S ** (m - 2 * j) for j in range(m // 2 + 1)])
        notes["aux"].append((m, a_expr))
        notes["special"].append(
            f"row of zeros at row s^{power}: auxiliary polynomial A(s) = {a_expr}; "
            "the row is replaced by the coefficients of A'(s)"
        )
        rows[i] = [above[j].scale(m - 2 * j) if m - 2 * j > 0 else zero for j in range(len(row))]
    elif row[0].is_zero():
        notes["special"].append(
            f"zero in first column at row s^{power}: replaced by epsilon, "
            "signs taken as epsilon -> 0+"
        )
        rows[i] = [_Frac.eps(K), *row[1:]]


def _frac_rows(cs: list[AlgNum], K: RealAlgebraicField, notes: dict) -> list[list[_Frac]]:
    """The rows of the array as rational functions of epsilon, special cases applied."""
    n = len(cs) - 1
    width = n // 2 + 1
    zero = _Frac.const(K.zero)

    def row_of(values: Sequence[AlgNum]) -> list[_Frac]:
        out = [_Frac.const(v) for v in values]
        return out + [zero] * (width - len(out))

    rows: list[list[_Frac]] = [row_of(cs[0::2])]
    if n >= 1:
        rows.append(row_of(cs[1::2]))
        _settle(rows, 1, n, K, notes)
    for i in range(2, n + 1):
        a, b = rows[i - 2], rows[i - 1]
        rows.append(
            [
                (b[0] * a[j + 1] - a[0] * b[j + 1]) / b[0] if j + 1 < width else zero
                for j in range(width)
            ]
        )
        _settle(rows, i, n, K, notes)
    return rows


def routh_array_in(coeffs: Sequence[AlgNum], K: RealAlgebraicField) -> RouthArray:
    """The Routh array of sum coeffs[i] s^(n-i) (highest degree first) over the field K."""
    cs = list(coeffs)
    if not cs or cs[0].is_zero():
        raise ValueError("the leading coefficient must be nonzero")
    n = len(cs) - 1
    notes: dict[str, list] = {"special": [], "aux": []}
    rows = _frac_rows(cs, K, notes)
    special: list[str] = notes["special"]
    signs = tuple(r[0].sign() for r in rows)
    regular = not special and all(s != 0 for s in signs)
    field_rows = (
        tuple(tuple(e.num[0] if e.num else K.zero for e in r) for r in rows) if regular else None
    )
    changes = sum(1 for x, y in itertools.pairwise(signs) if x != y)
    rhp, imag, _d = kpoly.rhp_imag_counts(list(reversed(cs)), K)
    if changes != rhp:
        special.append(
            f"the first column changes sign {changes} times but the exact count of "
            f"right-half-plane roots is {rhp} (imaginary-axis roots present); the exact "
            "count from gcd(p(s), p(-s)) and the Cauchy index is the one reported"
        )
    exact_rows = tuple(
        tuple(e.to_sympy() for e in r[: max(1, (n - i) // 2 + 1)]) for i, r in enumerate(rows)
    )
    return RouthArray(
        coefficients=tuple(c.to_sympy() for c in cs),
        rows=exact_rows,
        first_column=tuple(r[0] for r in exact_rows),
        first_column_signs=signs,
        special=tuple(special),
        auxiliary=tuple(notes["aux"]),
        sign_changes=changes,
        rhp_count=rhp,
        imag_count=imag,
        field_rows=field_rows,
    )


def routh_array(coeffs: Sequence[sp.Expr | int]) -> RouthArray:
    """The exact Routh array of a real polynomial given by its coefficients, highest first.

    Coefficients must be exact real algebraic numbers (integers, rationals,
    radicals, real ``CRootOf``); a float or a symbol is refused.
    """
    values = [sp.Integer(c) if isinstance(c, int) else c for c in coeffs]
    for v in values:
        if isinstance(v, sp.Float) or v.has(sp.Float):
            raise ValueError(f"a floating-point coefficient is not exact: {v}")
    K, elems = field_of_exprs(values)
    return routh_array_in(elems, K)
