"""The one exact linear-algebra kernel outside the audit: linearization,
characteristic polynomial, Routh array and Lyapunov equation.

Every function here works in one exact real field ``K`` (``Q``, ``Q(sqrt d)``
or any ``Q(alpha)`` of ``algebraic``), with elements ``AlgNum``. The survey
(``surveying``) and the linearization prover (``proofs.linearization``) both
call these functions, so there is exactly one characteristic polynomial, one
Routh array (``routh.routh_array_in``, both special cases) and one Lyapunov
solver (``lyapunov.solve_lyapunov_in``) on the search side.

May import: sympy, python-flint and ``proofkit.analysis``. Must never import
``proofkit.audit`` (the audit re-derives all of this with its own
arithmetic), and must never decide a sign or an equality from floating point.
"""

from __future__ import annotations

import itertools
from collections.abc import Sequence
from fractions import Fraction

import flint
import sympy as sp

from proofkit.analysis.algebraic import AlgNum, RealAlgebraicField
from proofkit.analysis.lyapunov import leading_minors, solve_lyapunov_in
from proofkit.analysis.routh import RouthArray, routh_array_in

__all__ = [
    "RouthArray",
    "characteristic_polynomial",
    "jacobian_at",
    "leading_minors",
    "quadratic_element",
    "quadratic_field",
    "routh_array_in",
    "routh_rows",
    "shift_and_multiply",
    "sign_changes",
    "solve_lyapunov_in",
    "sqrt_parts",
]

Mat = list[list[AlgNum]]
_QUADRATIC: dict[int, RealAlgebraicField] = {}
_RATIONALS = RealAlgebraicField()


def quadratic_field(d: int) -> RealAlgebraicField:
    """``Q(sqrt d)`` with generator the positive root of ``s^2 - d``; ``Q`` for ``d = 0``.

    ``d`` must be 0 or a positive integer that is not a perfect square.
    The same ``d`` always gives the same field object.
    """
    if d == 0:
        return _RATIONALS
    if d < 0 or flint.fmpz(d).is_square():
        raise ValueError(f"sqrt({d}) is not a real irrational number")
    K = _QUADRATIC.get(d)
    if K is None:
        K = RealAlgebraicField.real_roots_of(flint.fmpq_poly([-d, 0, 1]))[1]
        _QUADRATIC[d] = K
    return K


def _radicand(K: RealAlgebraicField) -> int:
    if K.is_rational:
        return 0
    q = K.q
    assert q is not None
    c = q.coeffs()
    if q.degree() != 2 or c[1] != 0 or K.lo < 0:
        raise ValueError(f"{K!r} is not Q(sqrt d) with generator sqrt(d)")
    return int(-c[0] / c[2])


def quadratic_element(value: sp.Expr | int | Fraction, K: RealAlgebraicField) -> AlgNum:
    """The exact number ``a + b sqrt(d)`` (a sympy expression) as an element of ``K = Q(sqrt d)``.

    Raises ValueError when the value is not of that form with rational a, b.
    """
    if isinstance(value, int | Fraction):
        return K(value)
    e = sp.expand(value)
    d = _radicand(K)
    b = e.coeff(sp.sqrt(d)) if d else sp.Integer(0)
    a = sp.expand(e - b * sp.sqrt(d)) if d else e
    if not (isinstance(a, sp.Rational) and isinstance(b, sp.Rational)):
        raise ValueError(f"{value} is not a + b*sqrt({d}) with rational a, b")
    if K.is_rational:
        return K(a)
    return K(flint.fmpq_poly([flint.fmpq(int(a.p), int(a.q)), flint.fmpq(int(b.p), int(b.q))]))


def sqrt_parts(x: AlgNum) -> tuple[Fraction, Fraction]:
    """``(a, b)`` with ``x = a + b sqrt(d)`` for ``x`` in ``Q`` or ``Q(sqrt d)``."""
    if x.K.degree > 2:
        raise ValueError("not an element of a quadratic field")
    c = [Fraction(int(v.p), int(v.q)) for v in x.p.coeffs()] + [Fraction(0), Fraction(0)]
    return c[0], c[1]


def jacobian_at(field: Sequence[sp.Expr], xs: Sequence[sp.Symbol], point: Sequence[AlgNum]) -> Mat:
    """The exact Jacobian of a polynomial field (rational coefficients) at a point of ``K^n``."""
    if not point:
        return []
    K = point[0].K
    out: Mat = []
    for f in field:
        row = []
        for x in xs:
            poly = sp.Poly(sp.diff(f, x), *xs, domain=sp.QQ)
            total = K.zero
            for monom, coeff in poly.terms():
                term = K(flint.fmpq(int(coeff.p), int(coeff.q)))
                for v, e in zip(point, monom, strict=True):
                    if e:
                        term = term * v**e
                total = total + term
            row.append(total)
        out.append(row)
    return out


def characteristic_polynomial(J: Mat, K: RealAlgebraicField) -> list[AlgNum]:
    """``det(sI - J)``, highest degree first, exactly over ``K``.

    Over Q by python-flint (``fmpq_mat.charpoly``); over ``Q(alpha)`` by the
    Faddeev–LeVerrier recursion ``M_k = J M_{k-1} + c_{k-1} I``,
    ``c_k = -tr(J M_k) / k`` (exact division by k).
    """
    n = len(J)
    if K.is_rational:
        M = flint.fmpq_mat(n, n, [v.rational() for row in J for v in row])
        return [K(c) for c in reversed(M.charpoly().coeffs())]
    coeffs = [K.one]
    Mk: Mat = [[K.zero] * n for _ in range(n)]
    for k in range(1, n + 1):
        c_prev = coeffs[-1]
        Mk = [
            [
                sum((J[i][t] * Mk[t][j] for t in range(n)), K.zero) + (c_prev if i == j else K.zero)
                for j in range(n)
            ]
            for i in range(n)
        ]
        tr = sum((J[i][t] * Mk[t][i] for i in range(n) for t in range(n)), K.zero)
        coeffs.append(-tr / k)
    return coeffs


def routh_rows(coeffs: Sequence[AlgNum], K: RealAlgebraicField) -> list[list[AlgNum]] | None:
    """The regular Routh array (rows of width ``n // 2 + 1``, zero-padded) or None.

    None when a special case arises (a zero in the first column or a row of
    zeros); ``routh_array_in`` handles those with epsilon and the auxiliary
    polynomial. This is the array a linearization certificate states.
    """
    ra = routh_array_in(coeffs, K)
    return None if ra.field_rows is None else [list(r) for r in ra.field_rows]


def sign_changes(values: Sequence[AlgNum]) -> int:
    """Number of sign changes along a sequence of nonzero exact numbers."""
    signs = [v.sign() for v in values]
    return sum(1 for s, t in itertools.pairwise(signs) if s != t)


def shift_and_multiply(
    coeffs: Sequence[AlgNum], shift: AlgNum, power: int, K: RealAlgebraicField
) -> list[AlgNum]:
    """Coefficients of ``(s+1)^power * p(s + shift)``, highest degree first.

    Roots of ``p(s + shift)`` are those of ``p`` moved left by ``shift``; the
    factor ``(s+1)^power`` only adds roots at -1 (it can make a special-case
    array regular).
    """

    def times_linear(up: list[AlgNum], c0: AlgNum) -> list[AlgNum]:  # ascending * (s + c0)
        return [
            (up[i - 1] if i > 0 else K.zero) + (up[i] * c0 if i < len(up) else K.zero)
            for i in range(len(up) + 1)
        ]

    acc: list[AlgNum] = [K.zero]
    for c in coeffs:  # Horner in s + shift
        acc = times_linear(acc, shift)
        acc[0] = acc[0] + c
    acc = acc[: len(coeffs)]
    for _ in range(power):
        acc = times_linear(acc, K.one)
    return list(reversed(acc))
