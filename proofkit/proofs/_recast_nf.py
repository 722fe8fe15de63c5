"""Normal forms modulo the circle relations of a recast system (search and exact sides).

Every pair ``(S, C)`` of the recast (:mod:`proofkit.proofs._recast_system`)
satisfies ``S^2 + C^2 + 2 C = 0``. Each relation is monic of degree 2 in
its own ``S``, and the leading monomials ``S_k^2`` are pairwise coprime, so
they form a Groebner basis and every polynomial has a unique normal form with
every ``S_k`` of degree at most 1: ``S^2 -> -(C^2 + 2 C)``. A sum of squares
modulo the relations can therefore use Gram bases with ``S_k`` of degree at
most 1 (the square of a polynomial and the square of its normal form agree
modulo the ideal), and the search matches coefficients of normal forms
instead of carrying a free multiplier per relation and obligation.

:class:`CircleReduction` gives the linear map from coefficient vectors to
normal-form coefficients (floating point, for the search);
:func:`divide_circles` divides an exact polynomial by the relations and
returns the exact quotients (the certificate's free multipliers) and the
remainder. Nothing here decides anything: the audit re-expands every
identity with the multipliers it is given.
"""

from __future__ import annotations

from math import comb
from typing import Any

import flint
import numpy as np
import scipy.sparse as sps

__all__ = ["CircleReduction", "divide_circles", "normal_mask"]


def normal_mask(basis: np.ndarray, pairs: list[tuple[int, int]]) -> np.ndarray:
    """Rows of ``basis`` with every ``S`` (first index of each pair) of degree at most 1."""
    mask = np.ones(len(basis), bool)
    for s, _c in pairs:
        mask &= basis[:, s] <= 1
    return mask


class CircleReduction:
    """The normal-form map for the relations ``S_k^2 + C_k^2 + 2 C_k`` over ``nz`` variables."""

    def __init__(self, nz: int, pairs: list[tuple[int, int]]) -> None:
        self.nz = nz
        self.pairs = list(pairs)

    def _expand(self, e: tuple[int, ...]) -> list[tuple[tuple[int, ...], float]]:
        terms = [(list(e), 1.0)]
        for s, c in self.pairs:
            m = e[s] // 2
            if m == 0:
                continue
            out = []
            for ex, coef in terms:
                for i in range(m + 1):  # (-(C^2 + 2C))^m = (-1)^m sum C(m,i) 2^(m-i) C^(m+i)
                    nx = list(ex)
                    nx[s] = e[s] % 2
                    nx[c] = ex[c] + m + i
                    out.append((nx, coef * (-1) ** m * comb(m, i) * 2.0 ** (m - i)))
            terms = out
        return [(tuple(ex), coef) for ex, coef in terms]

    def matrix(self, keys: np.ndarray) -> tuple[np.ndarray, sps.csr_matrix]:
        """Normal-form monomials and the sparse map from coefficients over ``keys`` to them."""
        keys = np.asarray(keys, np.int64).reshape(-1, self.nz)
        if not self.pairs or len(keys) == 0:
            return keys, sps.identity(len(keys), format="csr")
        cols: list[int] = []
        rows_e: list[tuple[int, ...]] = []
        vals: list[float] = []
        reducible = np.zeros(len(keys), bool)
        for s, _c in self.pairs:
            reducible |= keys[:, s] >= 2
        for j in np.flatnonzero(~reducible).tolist():
            cols.append(j)
            rows_e.append(tuple(int(v) for v in keys[j]))
            vals.append(1.0)
        for j in np.flatnonzero(reducible).tolist():
            for ex, coef in self._expand(tuple(int(v) for v in keys[j])):
                cols.append(j)
                rows_e.append(ex)
                vals.append(coef)
        exps = np.array(rows_e, np.int64).reshape(-1, self.nz)
        nf, inv = np.unique(exps, axis=0, return_inverse=True)
        mat = sps.csr_matrix(
            (np.array(vals), (inv.ravel(), np.array(cols))), shape=(len(nf), len(keys))
        )
        return nf, mat


def divide_circles(
    p: flint.fmpq_mpoly, circles: list[tuple[str, flint.fmpq_mpoly]]
) -> tuple[dict[str, flint.fmpq_mpoly], flint.fmpq_mpoly]:
    """``p = sum q_k h_k + r`` exactly, ``r`` the normal form; ``({label: q_k}, r)``.

    The polynomial context must order each ``S_k`` before its ``C_k`` (lex), so
    that the leading monomial of ``h_k`` is ``S_k^2``.
    """
    quotients: dict[str, Any] = {}
    rest = p
    for label, h in circles:
        q, rest = divmod(rest, h)
        if not q.is_zero():
            quotients[label] = q
    return quotients, rest
