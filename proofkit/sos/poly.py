"""Sparse exact polynomials for the search: flint ``fmpq_mpoly`` plus numpy exponent arrays.

A :class:`PolySpace` fixes an ordered tuple of sympy symbols and the matching
flint context. Conversion from sympy walks the expression tree with ring
arithmetic (no ``expand``); conversion back builds a sympy ``Add`` of terms.

This module must never evaluate text, never let a float into an exact
polynomial, and never call ``sympy.expand`` on large trees.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from fractions import Fraction

import flint
import numpy as np
import sympy as sp

from proofkit.errors import ModelError

__all__ = ["PolySpace", "encode_exponents", "fmpq_to_fraction", "to_fmpq"]


def to_fmpq(value: object) -> flint.fmpq:
    """An exact rational (int, Fraction, sympy Rational, fmpq) as ``fmpq``; floats refused."""
    if isinstance(value, flint.fmpq):
        return value
    if isinstance(value, bool):
        raise ModelError(f"not a rational number: {value!r}")
    if isinstance(value, int | flint.fmpz):
        return flint.fmpq(value)
    if isinstance(value, Fraction):
        return flint.fmpq(value.numerator, value.denominator)
    if isinstance(value, sp.Rational):
        return flint.fmpq(int(value.p), int(value.q))
    raise ModelError(f"not an exact rational number: {value!r}")


def fmpq_to_fraction(value: flint.fmpq) -> Fraction:
    """``fmpq`` to ``fractions.Fraction``."""
    return Fraction(int(value.p), int(value.q))


def encode_exponents(exps: np.ndarray, radix: int) -> np.ndarray:
    """Encode exponent rows as single int64 keys (mixed radix, every entry < radix)."""
    exps = np.asarray(exps, dtype=np.int64)
    if exps.ndim != 2:
        raise ValueError("exponent array must be two-dimensional")
    nvars = exps.shape[1]
    if nvars and radix**nvars >= 2**62:
        raise ModelError("too many variables or too high a degree for exponent encoding")
    weights = radix ** np.arange(nvars - 1, -1, -1, dtype=np.int64)
    return exps @ weights


class PolySpace:
    """Polynomials over QQ in a fixed ordered tuple of sympy symbols."""

    def __init__(self, variables: Sequence[sp.Symbol]) -> None:
        variables = tuple(variables)
        if not variables:
            raise ModelError("a polynomial space needs at least one variable")
        if len(set(variables)) != len(variables):
            raise ModelError("variables must be distinct")
        self.variables: tuple[sp.Symbol, ...] = variables
        self.nvars = len(variables)
        names = tuple(f"v{i}" for i in range(self.nvars))
        self.ctx = flint.fmpq_mpoly_ctx.get(names, "deglex")
        self._gens = self.ctx.gens()
        self._index = {v: i for i, v in enumerate(variables)}

    # -- construction -------------------------------------------------
    def zero(self) -> flint.fmpq_mpoly:
        return self.ctx.from_dict({})

    def const(self, value: object) -> flint.fmpq_mpoly:
        return self.ctx.constant(to_fmpq(value))

    def gen(self, i: int) -> flint.fmpq_mpoly:
        return self._gens[i]

    def from_terms(self, terms: dict[tuple[int, ...], object]) -> flint.fmpq_mpoly:
        """Build from ``{exponent tuple: rational}``."""
        return self.ctx.from_dict({tuple(int(e) for e in k): to_fmpq(c) for k, c in terms.items()})

    def from_arrays(self, exps: np.ndarray, coeffs: Sequence[object]) -> flint.fmpq_mpoly:
        """Build from an exponent array and exact coefficients (duplicate rows summed)."""
        acc: dict[tuple[int, ...], flint.fmpq] = {}
        for row, c in zip(
            map(tuple, np.asarray(exps, dtype=np.int64).tolist()), coeffs, strict=True
        ):
            acc[row] = acc.get(row, flint.fmpq(0)) + to_fmpq(c)
        return self.ctx.from_dict({k: v for k, v in acc.items() if v != 0})

    def coerce(self, obj: object) -> flint.fmpq_mpoly:
        """sympy expression, rational or flint polynomial of this space to ``fmpq_mpoly``."""
        if isinstance(obj, flint.fmpq_mpoly):
            if obj.context() is not self.ctx:
                raise ModelError("polynomial belongs to another variable space")
            return obj
        if isinstance(obj, flint.fmpz_mpoly):
            return self.from_terms(obj.to_dict())
        if isinstance(obj, int | Fraction | flint.fmpq | flint.fmpz):
            return self.const(obj)
        if isinstance(obj, sp.Basic):
            return self._from_sympy(obj)
        raise ModelError(f"cannot use {type(obj).__name__} as an exact polynomial")

    def _from_sympy(self, expr: sp.Basic) -> flint.fmpq_mpoly:
        if isinstance(expr, sp.Symbol):
            if expr not in self._index:
                raise ModelError(f"symbol {expr} is not one of the variables {self.variables}")
            return self._gens[self._index[expr]]
        if isinstance(expr, sp.Rational):
            return self.const(expr)
        if isinstance(expr, sp.Add):
            out = self.zero()
            for a in expr.args:
                out += self._from_sympy(a)
            return out
        if isinstance(expr, sp.Mul):
            out = self.const(1)
            for a in expr.args:
                out *= self._from_sympy(a)
            return out
        if isinstance(expr, sp.Pow):
            base, ex = expr.args
            if isinstance(ex, sp.Integer) and int(ex) >= 0:
                return self._from_sympy(base) ** int(ex)
            raise ModelError(f"not a polynomial (exponent {ex}): {expr}")
        if isinstance(expr, sp.Float):
            raise ModelError(f"floating-point number {expr} in an exact polynomial")
        raise ModelError(f"not a polynomial in {self.variables}: {expr}")

    # -- export ---------------------------------------------------------
    def to_sympy(self, p: flint.fmpq_mpoly) -> sp.Expr:
        """Back to a sympy expression (a sum of rational multiples of monomials)."""
        terms = []
        for exps, c in zip(p.monoms(), p.coeffs(), strict=True):
            terms.append(sp.Rational(int(c.p), int(c.q)) * self.monomial(exps))
        return sp.Add(*terms)

    def monomial(self, exps: Iterable[int]) -> sp.Expr:
        """The sympy monomial with the given exponent vector."""
        return sp.Mul(*[v ** int(e) for v, e in zip(self.variables, exps, strict=True) if e])

    def exponents_of(self, monomial: sp.Expr) -> tuple[int, ...]:
        """Exponent vector of a sympy monomial (coefficient 1)."""
        p = self.coerce(monomial)
        if len(p) != 1 or p.coeffs()[0] != 1:
            raise ModelError(f"not a monomial: {monomial}")
        return tuple(int(e) for e in p.monoms()[0])

    @staticmethod
    def arrays(p: flint.fmpq_mpoly, nvars: int) -> tuple[np.ndarray, list[flint.fmpq]]:
        """Exponent array ``(terms, nvars)`` and the exact coefficient list."""
        monoms = p.monoms()
        exps = np.array(monoms, dtype=np.int64).reshape(len(monoms), nvars)
        return exps, list(p.coeffs())

    def diff(self, p: flint.fmpq_mpoly, i: int) -> flint.fmpq_mpoly:
        """Partial derivative by variable number ``i``."""
        return p.derivative(i)
