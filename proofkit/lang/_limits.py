"""Size limits of a model, enforced by counting before any large value is built.

Every exact number anywhere in a model (constants, coefficients, exponents,
equilibrium coordinates) is kept below :data:`MAX_NUMBER_DIGITS` decimal
digits in numerator and denominator. The bound is computed from the operands
before sympy combines them: a product of rationals has at most the sum of
their sizes, a power ``b^p`` at most ``|p|`` times the size of ``b``, and a
sum combines only the coefficients of like terms. So repeated squaring of a
constant, or ``(10^64)^64``, is refused at once instead of hanging.

This module must never build the values it measures.
"""

from __future__ import annotations

import math
from collections.abc import Iterable

import sympy as sp

__all__ = [
    "MAX_CLAIMS",
    "MAX_EQUILIBRIA",
    "MAX_EXP_ARGUMENT",
    "MAX_EXP_NESTING",
    "MAX_LINES",
    "MAX_NUMBER_DIGITS",
    "MAX_STATES",
    "MAX_TOKENS",
    "NumberSizes",
    "digits_of_bits",
]

MAX_LINES = 10_000  # lines (statements, comments and blank lines) of one model file
MAX_TOKENS = 50_000  # words, numbers and operators of one model file
MAX_STATES = 50  # state variables of one model
MAX_EQUILIBRIA = 100  # declared equilibria
MAX_CLAIMS = 100  # claims of one model
MAX_NUMBER_DIGITS = 1000  # digits of every exact number (numerator and denominator)
MAX_NUMBER_BITS = math.ceil(MAX_NUMBER_DIGITS * math.log2(10))
MAX_EXP_NESTING = 2  # exp(exp(x)) is allowed, exp(exp(exp(x))) is not
MAX_EXP_ARGUMENT = 1000  # |a| for a constant argument a of exp (exp(1000) has 435 digits)


def digits_of_bits(bits: int) -> int:
    """Decimal digits of a number of ``bits`` bits (rounded up)."""
    return math.ceil(bits * math.log10(2))


def _rational_bits(r: sp.Rational) -> int:
    return max(int(r.p).bit_length(), int(r.q).bit_length())


class NumberSizes:
    """Memoised size (in bits) of the largest exact rational inside an expression."""

    def __init__(self) -> None:
        self._memo: dict[sp.Basic, int] = {}
        self._exp: dict[sp.Basic, int] = {}

    def bits(self, e: sp.Basic) -> int:
        """A bound on the bits of every number in the expansion of ``e``.

        Rationals count their numerator and denominator; products add, a power
        ``b^n`` multiplies by ``|n|`` (the exponent itself is not a coefficient),
        sums add the few bits that adding terms can carry; function arguments
        count as they are.
        """
        stack = [e]
        while stack:
            node = stack[-1]
            if node in self._memo:
                stack.pop()
                continue
            pending = [a for a in node.args if a not in self._memo]
            if pending and not node.is_Rational:
                stack.extend(pending)
                continue
            self._memo[node] = self._combine(node)
            stack.pop()
        return self._memo[e]

    def _combine(self, node: sp.Basic) -> int:
        if node.is_Rational:
            return _rational_bits(node)  # type: ignore[arg-type]
        sizes = [self._memo[a] for a in node.args]
        if node.is_Mul:
            return sum(sizes)
        if node.is_Add:
            return max(sizes) + len(sizes).bit_length()
        if node.is_Pow and node.exp.is_Integer:  # type: ignore[attr-defined]
            return sizes[0] * abs(int(node.exp))  # type: ignore[attr-defined]
        return max(sizes, default=0)

    def product_bits(self, factors: Iterable[sp.Expr]) -> int:
        """A bound on the numbers of a product (sizes add when rationals multiply)."""
        return sum(self.bits(f) for f in factors)

    def power_bits(self, base: sp.Expr, p: int) -> int:
        return self.bits(base) * max(1, abs(p))

    def sum_bits(self, terms: Iterable[sp.Expr]) -> int:
        """A bound on the numbers of a sum: sympy combines only coefficients of like terms.

        Adding ``n`` rationals ``p_i/q_i``: the denominator divides the product of
        the ``q_i`` and the numerator is at most ``n max|p_i| prod q_i``.
        """
        groups: dict[sp.Expr, list[int]] = {}  # rest -> [denominator bits, max numerator, n]
        most = 0
        for t in terms:
            for part in sp.Add.make_args(t):
                coeff, rest = part.as_coeff_Mul()
                g = groups.setdefault(rest, [0, 0, 0])
                if coeff.is_Rational:
                    g[0] += int(coeff.q).bit_length() - 1
                    g[1] = max(g[1], int(coeff.p).bit_length())
                else:  # pragma: no cover - as_coeff_Mul gives a Rational or a Float
                    g[1] = max(g[1], self.bits(coeff))
                g[2] += 1
                most = max(most, self.bits(rest))
        sizes = [num + den + (n - 1).bit_length() for den, num, n in groups.values()]
        return max([most, *sizes])

    def exp_nesting(self, e: sp.Basic) -> int:
        """How many ``exp`` calls are nested inside ``e`` (0 when none)."""
        if e in self._exp:
            return self._exp[e]
        inner = max((self.exp_nesting(a) for a in e.args), default=0)
        depth = inner + 1 if isinstance(e, sp.exp) or (e.is_Pow and e.base is sp.E) else inner
        self._exp[e] = depth
        return depth
