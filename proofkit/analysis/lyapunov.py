"""The Lyapunov equation A'P + PA = -Q solved exactly, and P > 0 shown exactly.

The n(n+1)/2 unknowns of the symmetric P form one linear system. Over Q it
is solved with python-flint's ``fmpq_mat``; over an algebraic field Q(alpha)
(an irrational equilibrium) by Gaussian elimination with exact field
arithmetic. Positivity of P is decided by the signs of its leading principal
minors (Sylvester's criterion), each an exact field element.

May import: python-flint, sympy, ``analysis.algebraic``; never
``proofkit.audit``.
This module must never use a floating-point solution as the answer.
"""

from __future__ import annotations

from dataclasses import dataclass

import flint
import sympy as sp

from proofkit.analysis.algebraic import AlgNum, RealAlgebraicField, field_of_exprs

__all__ = ["LyapunovSolution", "solve_lyapunov", "solve_lyapunov_in"]

Mat = list[list[AlgNum]]
_NOT_UNIQUE = "the Lyapunov equation has no unique solution (A has lambda_i = -lambda_j)"


@dataclass(frozen=True)
class LyapunovSolution:
    """The exact P with A'P + PA = -Q; ``minors`` are P's leading principal minors."""

    A: sp.Matrix
    P: sp.Matrix
    Q: sp.Matrix
    minors: tuple[sp.Expr, ...]
    positive_definite: bool


def _index(n: int) -> dict[tuple[int, int], int]:
    idx: dict[tuple[int, int], int] = {}
    for i in range(n):
        for j in range(i, n):
            idx[(i, j)] = len(idx)
    return idx


def _system(A: Mat, Q: Mat, K: RealAlgebraicField) -> tuple[Mat, list[AlgNum], dict]:
    n = len(A)
    idx = _index(n)
    N = len(idx)
    M = [[K.zero] * N for _ in range(N)]
    rhs = [K.zero] * N
    for (r, c), row in idx.items():
        # (A'P)[r][c] + (PA)[r][c] = sum_k A[k][r] P[k][c] + sum_k P[r][k] A[k][c]
        for k in range(n):
            if not A[k][r].is_zero():
                col = idx[(min(k, c), max(k, c))]
                M[row][col] = M[row][col] + A[k][r]
            if not A[k][c].is_zero():
                col = idx[(min(r, k), max(r, k))]
                M[row][col] = M[row][col] + A[k][c]
        rhs[row] = -Q[r][c]
    return M, rhs, idx


def _gauss_solve(M: Mat, rhs: list[AlgNum]) -> list[AlgNum]:
    N = len(M)
    aug = [[*row, b] for row, b in zip(M, rhs, strict=True)]
    for col in range(N):
        piv = next((r for r in range(col, N) if not aug[r][col].is_zero()), None)
        if piv is None:
            raise ValueError(_NOT_UNIQUE)
        aug[col], aug[piv] = aug[piv], aug[col]
        inv = aug[col][col].inverse()
        aug[col] = [v * inv for v in aug[col]]
        for r in range(N):
            if r != col and not aug[r][col].is_zero():
                f = aug[r][col]
                aug[r] = [v - f * w for v, w in zip(aug[r], aug[col], strict=True)]
    return [aug[r][N] for r in range(N)]


def _clear_below(m: Mat, col: int) -> None:
    """Subtract multiples of row ``col``: column ``col`` becomes zero below the nonzero pivot."""
    inv = m[col][col].inverse()
    for r in range(col + 1, len(m)):
        if not m[r][col].is_zero():
            f = m[r][col] * inv
            m[r] = [v - f * w for v, w in zip(m[r], m[col], strict=True)]


def _det(M: Mat, K: RealAlgebraicField) -> AlgNum:
    m = [list(r) for r in M]
    n = len(m)
    det = K.one
    for col in range(n):
        piv = next((r for r in range(col, n) if not m[r][col].is_zero()), None)
        if piv is None:
            return K.zero
        if piv != col:
            m[col], m[piv] = m[piv], m[col]
            det = -det
        det = det * m[col][col]
        _clear_below(m, col)
    return det


def leading_minors(P: Mat, K: RealAlgebraicField) -> list[AlgNum]:
    """Leading principal minors: products of the pivots of elimination without row swaps."""
    n = len(P)
    m = [list(r) for r in P]
    minors: list[AlgNum] = []
    prod = K.one
    for col in range(n):
        if m[col][col].is_zero():  # elimination without swaps stops; finish one by one
            return minors + [_det([row[:k] for row in P[:k]], K) for k in range(col + 1, n + 1)]
        prod = prod * m[col][col]
        minors.append(prod)
        _clear_below(m, col)
    return minors


def solve_lyapunov_in(A: Mat, Q: Mat, K: RealAlgebraicField) -> tuple[Mat, list[AlgNum]]:
    """Exact P (as field elements) and its leading principal minors."""
    n = len(A)
    M, rhs, idx = _system(A, Q, K)
    N = len(idx)
    if K.is_rational:
        fm = flint.fmpq_mat(N, N, [v.rational() for row in M for v in row])
        fb = flint.fmpq_mat(N, 1, [v.rational() for v in rhs])
        if fm.rank() < N:
            raise ValueError(_NOT_UNIQUE)
        sol = fm.solve(fb)
        values = [K(sol[i, 0]) for i in range(N)]
    else:
        values = _gauss_solve(M, rhs)
    P = [[values[idx[(min(i, j), max(i, j))]] for j in range(n)] for i in range(n)]
    return P, leading_minors(P, K)


def solve_lyapunov(A: sp.Matrix, Q: sp.Matrix | None = None) -> LyapunovSolution:
    """Solve A'P + PA = -Q exactly (Q = I by default) and decide P > 0 exactly.

    Entries of A and Q must be exact real algebraic numbers (rationals,
    radicals, real CRootOf). Raises ValueError when the solution is not unique.
    """
    A = sp.Matrix(A)
    n = A.rows
    if A.cols != n:
        raise ValueError("A must be square")
    Q = sp.eye(n) if Q is None else sp.Matrix(Q)
    if Q.shape != (n, n) or Q != Q.T:
        raise ValueError("Q must be a symmetric matrix of the size of A")
    K, elems = field_of_exprs([*A, *Q])
    Ak = [elems[i * n : (i + 1) * n] for i in range(n)]
    Qk = [elems[n * n + i * n : n * n + (i + 1) * n] for i in range(n)]
    P, minors = solve_lyapunov_in(Ak, Qk, K)
    return LyapunovSolution(
        A=A,
        P=sp.Matrix([[v.to_sympy() for v in row] for row in P]),
        Q=Q,
        minors=tuple(m.to_sympy() for m in minors),
        positive_definite=all(m.sign() > 0 for m in minors),
    )
