"""Facial reduction from a numerical kernel: exact Gram matrices that must be singular.

When every Gram matrix of ``p`` is singular (e.g. ``p`` is a single square),
no interior point exists and rounding plus projection almost never lands on
a PSD matrix. Here the numerical range of the solver's ``Q`` is turned into
an exact rational basis ``W`` (reduced row echelon form, entries recovered
with bounded denominators), the problem is restated as ``p = c' G c`` with
``c = W' b``, ``G`` is rounded and moved by the exact least-norm correction
onto ``{G : c' G c = p}`` (``fmpq_mat``), and ``Q = W G W'`` is returned.

Everything returned is only a proposal: the caller must run the exact check
(:func:`proofkit.exact.check.check_gram`). This module never declares success.
"""

from __future__ import annotations

from collections.abc import Iterator, Sequence
from dataclasses import dataclass
from fractions import Fraction

import flint
import numpy as np
import scipy.linalg as sla

from proofkit.exact.rounding import round_to
from proofkit.sos.poly import PolySpace, encode_exponents

__all__ = [
    "FaceRestriction",
    "exact_least_norm",
    "face_candidates",
    "integer_relations",
    "range_candidates",
    "rational_range",
]


@dataclass(frozen=True)
class FaceRestriction:
    """A Gram identity restricted to a face: ``Q = W' G W``, ``W`` exact rational rows.

    A reduction in the manner of compiler passes: :meth:`system` is the NEW,
    smaller coefficient-matching system ``A_face vec(G) = b`` (floats, for the
    solver) and :meth:`lift` maps an exact ``G`` back to the original Gram
    matrix. Nothing is changed in place; the lift is exact.
    """

    rows: tuple[tuple[flint.fmpq, ...], ...]

    @classmethod
    def of(cls, rows: Sequence[Sequence[object]]) -> FaceRestriction:
        def q(x: object) -> flint.fmpq:
            if isinstance(x, flint.fmpq):
                return x
            f = Fraction(x)  # type: ignore[arg-type]
            return flint.fmpq(f.numerator, f.denominator)

        return cls(tuple(tuple(q(x) for x in row) for row in rows))

    @property
    def dim(self) -> int:
        return len(self.rows)

    def system(self, a: np.ndarray, b: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """``(A (W' kron W'), b)``: ``vec(W' G W) = (W' kron W') vec(G)``, column-major."""
        wf = np.array([[float(x) for x in row] for row in self.rows], dtype=float)
        return a @ np.kron(wf.T, wf.T), b

    def lift(self, g: Sequence[Sequence[flint.fmpq]]) -> list[list[flint.fmpq]]:
        """The exact original-size Gram matrix ``W' G W``."""
        wq = flint.fmpq_mat([list(r) for r in self.rows])
        qx = wq.transpose() * flint.fmpq_mat([list(r) for r in g]) * wq
        return [[qx[i, j] for j in range(qx.ncols())] for i in range(qx.nrows())]


def rational_range(
    q: np.ndarray, max_den: int, rel_tol: float = 1e-6
) -> list[list[Fraction]] | None:
    """Rows of an exact RREF basis ``W'`` of the numerical range of symmetric ``q``."""
    q = (q + q.T) / 2
    w, v = np.linalg.eigh(q)
    top = float(max(w.max(initial=0.0), 0.0))
    if top <= 0:
        return None
    rng = v[:, w > rel_tol * top]
    r = rng.shape[1]
    if r == 0 or r == q.shape[0]:
        return None
    _, _, piv = sla.qr(rng.T, pivoting=True)
    piv = np.sort(piv[:r])
    coef = np.linalg.solve(rng.T[:, piv], rng.T)  # r x n, identity on pivot columns
    pivset = {int(j): i for i, j in enumerate(piv)}
    rows: list[list[Fraction]] = []
    for i in range(r):
        row = []
        for j in range(q.shape[0]):
            if j in pivset:
                row.append(Fraction(int(pivset[j] == i)))
            else:
                row.append(Fraction(float(coef[i, j])).limit_denominator(max_den))
        rows.append(row)
    return rows


def integer_relations(
    kernel: np.ndarray, accuracy: float = 1e-7, max_entry: int = 1000
) -> np.ndarray:
    """Small integer vectors ``r`` with ``r' K ~ 0`` (LLL on ``[I | K/accuracy]``), as rows.

    Rows come most convincing first (smallest residual per length); callers try
    leading subsets, since the last ones may be chance near-relations.

    They span the range of the largest rational face inside the numerical range:
    when the kernel of the solver's Gram matrix is irrational (real zeros with
    irrational coordinates), rational Gram matrices live on this smaller face.
    """
    n = kernel.shape[0]
    scale = 1.0 / accuracy
    big = np.rint(kernel * scale).astype(object)
    rows = [[int(i == j) for j in range(n)] + [int(v) for v in big[i]] for i in range(n)]
    red = flint.fmpz_mat(rows).lll()
    found: list[tuple[float, np.ndarray]] = []
    for i in range(red.nrows()):
        r = np.array([int(red[i, j]) for j in range(n)], dtype=np.int64)
        if not r.any() or np.abs(r).max() > max_entry:
            continue
        size = float(np.linalg.norm(r))
        res = float(np.abs(r.astype(float) @ kernel).max()) / size
        if res < 10 * accuracy:
            found.append((res, r))
    found.sort(key=lambda it: it[0])  # most convincing relations first
    keep: list[np.ndarray] = []
    for _res, r in found:  # an independent subset
        if np.linalg.matrix_rank(np.array([*keep, r], dtype=float)) > len(keep):
            keep.append(r)
    return np.array(keep, dtype=np.int64).reshape(len(keep), n)


def exact_least_norm(
    a_rows: list[list[flint.fmpq]], rhs: list[flint.fmpq]
) -> list[flint.fmpq] | None:
    """The least-norm exact ``d`` with ``A d = rhs`` (``None`` when inconsistent)."""
    ncols = len(a_rows[0]) if a_rows else 0
    if all(x == 0 for x in rhs):
        return [flint.fmpq(0)] * ncols
    if ncols == 0:
        return None
    a = flint.fmpq_mat(a_rows)
    red, rank = a.transpose().rref()
    piv: list[int] = []
    for i in range(rank):
        for j in range(red.ncols()):
            if red[i, j] != 0:
                piv.append(j)
                break
    ai = flint.fmpq_mat([a_rows[j] for j in piv])
    y = (ai * ai.transpose()).solve(flint.fmpq_mat([[rhs[j]] for j in piv]))
    d = ai.transpose() * y
    check = a * d
    if any(check[i, 0] != rhs[i] for i in range(len(rhs))):
        return None
    return [d[k, 0] for k in range(ncols)]


def _scatter(keys: np.ndarray, radix: int, p: flint.fmpq_mpoly, nv: int) -> list:
    """(row, coefficient) pairs of ``p`` in the sorted monomial key list ``keys``."""
    e, c = PolySpace.arrays(p, nv)
    rows = np.searchsorted(keys, encode_exponents(e, radix)).tolist()
    return list(zip(rows, c, strict=True))


def face_candidates(
    space: PolySpace,
    basis: np.ndarray,
    target: flint.fmpq_mpoly,
    q: np.ndarray,
    ladder: Sequence[int],
    range_dens: Sequence[int] = (64, 10**3, 10**5),
) -> Iterator[tuple[list[list[flint.fmpq]] | None, str]]:
    """Candidates ``(Q, note)``: exact ``Q = W G W'`` with ``b'Qb == target``, from numerical ``q``.

    ``(None, why)`` is yielded when a range guess cannot work.
    """
    tries = [(tol, den) for tol in (1e-6, 1e-3) for den in range_dens]
    for rel_tol, max_den in tries:
        rows = rational_range(q, max_den, rel_tol)
        if rows is None:
            yield None, "numerical solution has full rank or no range"
            continue
        wt = [[flint.fmpq(x.numerator, x.denominator) for x in row] for row in rows]
        wmat = np.array([[float(x) for x in row] for row in rows])
        pinv = np.linalg.pinv(wmat.T)
        g0 = pinv @ q @ pinv.T
        yield from range_candidates(space, basis, target, wt, g0, ladder)


def range_candidates(
    space: PolySpace,
    basis: np.ndarray,
    target: flint.fmpq_mpoly,
    wt: list[list[flint.fmpq]],
    g0: np.ndarray,
    ladder: Sequence[int],
) -> Iterator[tuple[list[list[flint.fmpq]] | None, str]]:
    """Candidates ``Q = W G W'`` for an exact range basis ``W'`` (rows) and numerical ``G``."""
    nv = space.nvars
    r = len(wt)
    mono = [space.from_arrays(e.reshape(1, nv), [1]) for e in basis]
    cpoly = []
    for row in wt:
        acc = space.zero()
        for m, c in zip(mono, row, strict=True):
            if c != 0:
                acc += m * c
        cpoly.append(acc)
    pairs = [(k, m) for k in range(r) for m in range(k, r)]
    prods = [cpoly[k] * cpoly[m] * (1 if k == m else 2) for k, m in pairs]
    allexp = [PolySpace.arrays(pp, nv)[0] for pp in [*prods, target]]
    exps = np.unique(np.vstack(allexp), axis=0)
    radix = int(exps.max(initial=0)) + 1
    keys = encode_exponents(exps, radix)
    a_rows = [[flint.fmpq(0)] * len(pairs) for _ in range(len(keys))]
    for col, pp in enumerate(prods):
        for row, val in _scatter(keys, radix, pp, nv):
            a_rows[row][col] = val
    tvec = [flint.fmpq(0)] * len(keys)
    for row, val in _scatter(keys, radix, target, nv):
        tvec[row] = val
    face = FaceRestriction.of(wt)
    for den in ladder:
        g = round_to((g0 + g0.T) / 2, den)
        x0 = [g[k][m] for k, m in pairs]
        resid = []
        for i in range(len(keys)):
            acc = tvec[i]
            for j, a in enumerate(a_rows[i]):
                if a != 0:
                    acc -= a * x0[j]
            resid.append(acc)
        d = exact_least_norm(a_rows, resid)
        if d is None:
            yield None, f"range basis of rank {r} cannot match p"
            return
        gm = [[flint.fmpq(0)] * r for _ in range(r)]
        for (k, m), val, dv in zip(pairs, x0, d, strict=True):
            gm[k][m] = val + dv
            gm[m][k] = val + dv
        note = f"face of rank {r}, reduced Gram on 1/{den}"
        yield face.lift(gm), note
