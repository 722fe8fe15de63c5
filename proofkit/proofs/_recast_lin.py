"""Affine polynomial expressions in unknown coefficient vectors, assembled for cvxpy.

A small private engine for the recast search (:mod:`proofkit.proofs.recast`):
an unknown polynomial is a list of *atoms* ``(exponent, column)`` meaning
``sum_col x[col] * z^exponent`` (a free polynomial has one atom per
monomial; a Gram matrix ``Q`` in a basis ``b`` has the atoms
``(b_i + b_j, i + j m)`` over ``vec(Q)``). An :class:`Affine` is a constant
polynomial plus products of fixed polynomials with unknowns and Lie
derivatives of unknowns; :meth:`Affine.constraint` turns ``expr == 0`` into
ONE sparse cvxpy equality (coefficient matching, triplets assembled with
numpy). Floating point throughout: it only searches and never decides.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Protocol

import cvxpy as cp
import numpy as np
import scipy.sparse as sps

__all__ = ["Affine", "NumPoly", "Reducer", "Unknown", "free_unknown", "gram_unknown", "poly_mul"]

NumPoly = dict[tuple[int, ...], float]


class Reducer(Protocol):
    """A linear normal-form map: ``matrix(keys) -> (normal-form keys, sparse map)``."""

    def matrix(self, keys: np.ndarray) -> tuple[np.ndarray, sps.csr_matrix]: ...


def poly_mul(p: NumPoly, q: NumPoly) -> NumPoly:
    out: NumPoly = {}
    for e1, c1 in p.items():
        for e2, c2 in q.items():
            k = tuple(a + b for a, b in zip(e1, e2, strict=True))
            out[k] = out.get(k, 0.0) + c1 * c2
    return out


@dataclass
class Unknown:
    """An unknown polynomial: cvxpy variable ``var`` and its atoms."""

    name: str
    var: cp.Variable
    vec: cp.Expression  # the column vector the atoms index
    exps: np.ndarray  # (k, nvars) exponent of each atom
    cols: np.ndarray  # (k,) column of each atom
    basis: np.ndarray | None = None  # Gram unknowns: the basis


def free_unknown(name: str, support: np.ndarray) -> Unknown:
    support = np.asarray(support, np.int64)
    var = cp.Variable(len(support), name=name)
    return Unknown(name, var, var, support, np.arange(len(support)))


def gram_unknown(name: str, basis: np.ndarray) -> Unknown:
    basis = np.asarray(basis, np.int64)
    m = len(basis)
    var = cp.Variable((m, m), PSD=True, name=name)
    i, j = np.meshgrid(np.arange(m), np.arange(m), indexing="ij")
    exps = (basis[i.ravel()] + basis[j.ravel()]).reshape(m * m, -1)
    cols = i.ravel() + j.ravel() * m
    return Unknown(name, var, cp.vec(var, order="F"), exps, cols, basis)


@dataclass
class Affine:
    """``const + sum (fixed poly) * unknown + sum lie(unknown)`` over ``nvars`` variables."""

    nvars: int
    const: NumPoly = field(default_factory=dict)
    parts: list[tuple[Unknown, np.ndarray, np.ndarray, np.ndarray, object]] = field(
        default_factory=list
    )

    def add_const(self, p: NumPoly, scale: float = 1.0) -> Affine:
        for e, c in p.items():
            self.const[e] = self.const.get(e, 0.0) + scale * c
        return self

    def add_product(
        self, u: Unknown, p: NumPoly, scale: float = 1.0, param: cp.Parameter | None = None
    ) -> Affine:
        """``+ scale * p * u`` (times ``param`` when given: a cvxpy Parameter)."""
        if not p:
            return self
        pe = np.array(list(p.keys()), np.int64).reshape(-1, self.nvars)
        pc = np.array(list(p.values())) * scale
        k, t = len(u.exps), len(pe)
        exps = (u.exps[:, None, :] + pe[None, :, :]).reshape(k * t, self.nvars)
        cols = np.repeat(u.cols, t)
        vals = np.tile(pc, k)
        self.parts.append((u, exps, cols, vals, param))
        return self

    def add_lie(self, u: Unknown, field_: Sequence[NumPoly], scale: float = 1.0) -> Affine:
        """``+ scale * sum_i d(u)/dz_i * F_i``."""
        for i, fi in enumerate(field_):
            mask = u.exps[:, i] > 0
            if not mask.any() or not fi:
                continue
            de = u.exps[mask].copy()
            coef = de[:, i].astype(float)
            de[:, i] -= 1
            sub = Unknown(u.name, u.var, u.vec, de, u.cols[mask])
            pe = np.array(list(fi.keys()), np.int64).reshape(-1, self.nvars)
            pc = np.array(list(fi.values())) * scale
            k, t = len(de), len(pe)
            exps = (de[:, None, :] + pe[None, :, :]).reshape(k * t, self.nvars)
            vals = np.outer(coef, pc).ravel()
            self.parts.append((sub, exps, np.repeat(sub.cols, t), vals, None))
        return self

    def constraint(self, reducer: Reducer | None = None) -> cp.Constraint:
        """``self == 0`` coefficient by coefficient, as one sparse equality.

        With ``reducer`` (``keys -> (normal-form keys, sparse map)``, e.g.
        :class:`proofkit.proofs._recast_nf.CircleReduction`), the coefficients of
        the normal forms are matched instead (an identity modulo an ideal).
        """
        rows_all = [np.array(list(self.const.keys()), np.int64).reshape(-1, self.nvars)]
        rows_all += [p[1] for p in self.parts]
        allrows = np.vstack(rows_all)
        keys, inverse = np.unique(allrows, axis=0, return_inverse=True)
        inverse = inverse.ravel()
        nrow = len(keys)
        b = np.zeros(nrow)
        start = len(self.const)
        b_idx = inverse[:start]
        np.add.at(b, b_idx, np.array(list(self.const.values()), float))
        red = None if reducer is None else reducer.matrix(keys)[1]
        if red is not None:
            b = red @ b
        expr = None
        by_var: dict[tuple[str, int], tuple[Unknown, list, list, list, object]] = {}
        for u, exps, cols, vals, param in self.parts:
            idx = inverse[start : start + len(exps)]
            start += len(exps)
            entry = by_var.setdefault((u.name, id(param)), (u, [], [], [], param))
            entry[1].append(idx)
            entry[2].append(cols)
            entry[3].append(vals)
        for u, rws, cls, vls, param in by_var.values():
            size = u.vec.shape[0]
            mat = sps.csr_matrix(
                (np.concatenate(vls), (np.concatenate(rws), np.concatenate(cls))),
                shape=(nrow, size),
            )
            if red is not None:
                mat = red @ mat
            term = mat @ u.vec
            if param is not None:
                term = param * term
            expr = term if expr is None else expr + term
        if expr is None:
            return cp.Constant(b) == 0
        return expr + b == 0
