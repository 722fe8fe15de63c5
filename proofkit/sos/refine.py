"""Numerical refinement of a singular Gram matrix by Gauss–Newton on a low-rank factor.

Interior-point solutions of programs without a strictly feasible point are
accurate only to about the square root of the tolerance, too coarse to read
off the exact face. Writing ``Q = V V'`` with ``V`` of (over-estimated) rank
and driving ``A vec(V V') = b`` to machine precision by Gauss–Newton steps
(minimal-norm least squares) gives a Gram matrix whose range can then be
recovered exactly (as in Kaltofen, Li, Yang & Zhi, "Exact certification of
global optimality of approximate factorizations via rationalizing
sums-of-squares with floating point scalars", ISSAC 2008).

Floats only: the result is a hint for :mod:`proofkit.exact.facial`, never evidence.
"""

from __future__ import annotations

import numpy as np

from proofkit.sos.program import SearchProgram, SosPoly

__all__ = ["gram_system", "numerical_kernel", "refine_low_rank", "solve_on_range"]


def gram_system(program: SearchProgram, u: SosPoly) -> tuple[np.ndarray, np.ndarray] | None:
    """Dense ``(A, b)`` with ``A vec(Q) = b`` for a program whose one identity is ``u == p``."""
    program.assemble()
    if len(program.identities) != 1:
        return None
    ident = program.identities[0]
    rows = ident.monomials.shape[0]
    a = np.zeros((rows, u.ncols))
    b = np.zeros(rows)
    for blk in ident.blocks:
        if blk.level is not None:
            return None
        if blk.unknown is u:
            a += blk.matrix.toarray()
        elif blk.unknown is None:
            b -= blk.matrix.toarray().ravel()
        else:
            return None
    return a, b


def refine_low_rank(
    a: np.ndarray, b: np.ndarray, q: np.ndarray, rel_rank_tol: float = 1e-8, iters: int = 40
) -> np.ndarray | None:
    """Gauss–Newton on ``V`` with ``A vec(V V') = b`` from the numerical Gram ``q``."""
    n = q.shape[0]
    w, vecs = np.linalg.eigh((q + q.T) / 2)
    top = float(w.max(initial=0.0))
    if top <= 0:
        return None
    keep = w > rel_rank_tol * top
    v = vecs[:, keep] * np.sqrt(w[keep])
    r = v.shape[1]
    if r == 0:
        return None
    scale = max(1.0, float(np.abs(b).max(initial=0.0)))
    idx = np.arange(n)
    for _ in range(iters):
        qv = v @ v.T
        res = a @ qv.reshape(-1, order="F") - b
        if np.abs(res).max(initial=0.0) < 1e-14 * scale:
            break
        # d vec(VV') / dV[c, k]: entries (c, j) += V[j, k] and (i, c) += V[i, k].
        m = np.zeros((n * n, n * r))
        for c in range(n):
            for k in range(r):
                col = c * r + k
                m[idx * n + c, col] += v[:, k]  # entry (c, j) sits at j*n + c
                m[c * n + idx, col] += v[:, k]  # entry (i, c) sits at c*n + i
        jac = a @ m
        step, *_ = np.linalg.lstsq(jac, -res, rcond=None)
        v = v + step.reshape(n, r)
    qv = v @ v.T
    res = a @ qv.reshape(-1, order="F") - b
    if not np.all(np.isfinite(qv)) or np.abs(res).max(initial=0.0) > 1e-10 * scale:
        return None
    return qv


def numerical_kernel(q: np.ndarray, rel_tol: float = 1e-8) -> np.ndarray:
    """Orthonormal basis (columns) of the eigenvectors with eigenvalue below ``rel_tol * max``."""
    w, vecs = np.linalg.eigh((q + q.T) / 2)
    top = max(float(np.abs(w).max(initial=0.0)), 1e-300)
    return vecs[:, w < rel_tol * top]


def solve_on_range(a: np.ndarray, b: np.ndarray, w_rows: np.ndarray) -> np.ndarray | None:
    """Numerical ``G`` (PSD, margin maximised) with ``A vec(W G W') = b``, ``W' = w_rows``."""
    import cvxpy as cp

    w = np.asarray(w_rows, dtype=float).T  # n x m
    m = w.shape[1]
    a_face = a @ np.kron(w, w)  # vec(W G W') = (W kron W) vec(G), column-major
    g = cp.Variable((m, m), symmetric=True)
    t = cp.Variable()
    cons = [a_face @ cp.vec(g, order="F") == b, g - t * np.eye(m) >> 0, t <= 1]
    prob = cp.Problem(cp.Maximize(t), cons)
    try:
        prob.solve(solver=cp.CLARABEL)
    except cp.error.SolverError:
        return None
    if g.value is None or prob.status not in (cp.OPTIMAL, cp.OPTIMAL_INACCURATE):
        return None
    return np.array(g.value)
