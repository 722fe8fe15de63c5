"""Numerical linear maps between polynomial coefficient vectors, for the basin search.

Polynomials here are floating-point coefficient vectors over a fixed list of
monomials (exponent rows). The maps are sparse matrices built with numpy
index arithmetic: Gram matrix -> polynomial, multiplication by a fixed
polynomial, Lie derivative along a fixed vector field, evaluation at points.

Everything here is a numerical hint for the solver; it never decides anything
and never feeds a certificate directly (exact data is rebuilt in
:mod:`proofkit.proofs._basin_exact`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sps

__all__ = ["MonoIndex", "NumPoly", "eval_map", "gram_map", "lie_map", "monomials", "mult_map"]


def monomials(nvars: int, max_degree: int, min_degree: int = 0) -> np.ndarray:
    """All exponent rows of total degree in [min_degree, max_degree], graded order."""
    rows: list[tuple[int, ...]] = []

    def rec(prefix: tuple[int, ...], left: int, total: int) -> None:
        if len(prefix) == nvars - 1:
            rows.append((*prefix, left))
            return
        for e in range(left, -1, -1):
            rec((*prefix, e), left - e, total)

    for d in range(min_degree, max_degree + 1):
        if nvars == 0:
            break
        rec((), d, d)
    return np.array(rows, dtype=np.int64).reshape(-1, nvars)


@dataclass(frozen=True)
class NumPoly:
    """A numerical polynomial: exponent rows and float coefficients."""

    exps: np.ndarray
    coeffs: np.ndarray

    def __call__(self, points: np.ndarray) -> np.ndarray:
        """Values at the rows of ``points``."""
        return eval_map(points, self.exps) @ self.coeffs


class MonoIndex:
    """Row numbers of the monomials of degree <= ``max_degree`` in ``nvars`` variables."""

    def __init__(self, nvars: int, max_degree: int) -> None:
        self.nvars = nvars
        self.max_degree = max_degree
        self.exps = monomials(nvars, max_degree)
        self.radix = max_degree + 1
        keys = self._keys(self.exps)
        self._order = np.argsort(keys)
        self._sorted = keys[self._order]

    def __len__(self) -> int:
        return int(self.exps.shape[0])

    def _keys(self, exps: np.ndarray) -> np.ndarray:
        weights = self.radix ** np.arange(self.nvars, dtype=np.int64)
        return np.asarray(exps, dtype=np.int64) @ weights

    def rows(self, exps: np.ndarray) -> np.ndarray:
        """Row numbers of ``exps``; raises ValueError if one is outside the index."""
        exps = np.asarray(exps, dtype=np.int64).reshape(-1, self.nvars)
        if exps.size and (exps.min() < 0 or exps.sum(axis=1).max() > self.max_degree):
            raise ValueError("monomial outside the index")
        keys = self._keys(exps)
        pos = np.searchsorted(self._sorted, keys)
        return self._order[pos]

    def vector(self, poly: NumPoly) -> np.ndarray:
        out = np.zeros(len(self))
        np.add.at(out, self.rows(poly.exps), poly.coeffs)
        return out


def gram_map(basis: np.ndarray, index: MonoIndex) -> sps.csr_matrix:
    """``vec(Q)`` (column-major) -> coefficients of ``b' Q b`` over ``index``."""
    k = basis.shape[0]
    ii, jj = np.meshgrid(np.arange(k), np.arange(k), indexing="ij")
    sums = basis[ii.ravel()] + basis[jj.ravel()]
    rows = index.rows(sums)
    cols = ii.ravel() + jj.ravel() * k
    return sps.csr_matrix((np.ones(k * k), (rows, cols)), shape=(len(index), k * k))


def mult_map(poly: NumPoly, support: np.ndarray, index: MonoIndex) -> sps.csr_matrix:
    """Coefficients over ``support`` -> coefficients of ``poly * u`` over ``index``."""
    a, s = poly.exps.shape[0], support.shape[0]
    ai, si = np.meshgrid(np.arange(a), np.arange(s), indexing="ij")
    rows = index.rows(poly.exps[ai.ravel()] + support[si.ravel()])
    vals = poly.coeffs[ai.ravel()]
    return sps.csr_matrix((vals, (rows, si.ravel())), shape=(len(index), s))


def lie_map(field: list[NumPoly], support: np.ndarray, index: MonoIndex) -> sps.csr_matrix:
    """Coefficients of ``V`` over ``support`` -> coefficients of ``grad V . field``."""
    out = sps.csr_matrix((len(index), support.shape[0]))
    for i, g in enumerate(field):
        keep = support[:, i] > 0
        if not keep.any() or g.exps.shape[0] == 0:
            continue
        dexps = support.copy()
        dexps[:, i] -= 1
        factor = np.where(keep, support[:, i], 0).astype(float)
        a, s = g.exps.shape[0], support.shape[0]
        ai, si = np.meshgrid(np.arange(a), np.flatnonzero(keep), indexing="ij")
        rows = index.rows(g.exps[ai.ravel()] + dexps[si.ravel()])
        vals = g.coeffs[ai.ravel()] * factor[si.ravel()]
        out = out + sps.csr_matrix((vals, (rows, si.ravel())), shape=(len(index), s))
    return out.tocsr()


def eval_map(points: np.ndarray, support: np.ndarray) -> np.ndarray:
    """Matrix of monomial values: rows are points, columns the monomials of ``support``."""
    pts = np.asarray(points, dtype=float).reshape(-1, support.shape[1])
    out = np.ones((pts.shape[0], support.shape[0]))
    for i in range(support.shape[1]):
        out *= pts[:, [i]] ** support[:, i][None, :]
    return out
