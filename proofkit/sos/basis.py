"""Monomial bases for Gram matrices: full bases and bases pruned by the Newton polytope.

A basis is an ``(n, nvars)`` int64 array of exponent rows. If ``p = b' Q b`` then
every basis monomial lies in half the Newton polytope of ``p`` (Reznick 1978),
and a monomial ``m`` whose square ``2m`` is neither a term of ``p`` nor a sum of
two other basis monomials has a forced zero diagonal, so (Q being PSD) it can be
dropped; that rule is iterated.

Pruning only removes monomials that cannot occur; the geometry uses a small
tolerance in favour of keeping a monomial. This module never decides that a
polynomial is or is not a sum of squares.
"""

from __future__ import annotations

import itertools

import numpy as np
from scipy.optimize import linprog
from scipy.spatial import ConvexHull, QhullError

from proofkit.sos.poly import encode_exponents

__all__ = ["full_basis", "newton_basis", "prune_diagonal", "support_basis"]

_TOL = 1e-7


def full_basis(nvars: int, max_degree: int, min_degree: int = 0) -> np.ndarray:
    """All monomials with ``min_degree <= degree <= max_degree`` (graded order)."""
    rows: list[tuple[int, ...]] = []
    for d in range(max(min_degree, 0), max_degree + 1):
        for combo in itertools.combinations_with_replacement(range(nvars), d):
            e = [0] * nvars
            for i in combo:
                e[i] += 1
            rows.append(tuple(e))
    return np.array(rows, dtype=np.int64).reshape(len(rows), nvars)


def _in_hull_lp(points: np.ndarray, targets: np.ndarray) -> np.ndarray:
    """For each target row: is it a convex combination of ``points``? (one LP each)"""
    k = points.shape[0]
    a_eq = np.vstack([points.T.astype(float), np.ones((1, k))])
    inside = np.zeros(len(targets), dtype=bool)
    for t, target in enumerate(targets):
        b_eq = np.concatenate([target.astype(float), [1.0]])
        res = linprog(np.zeros(k), A_eq=a_eq, b_eq=b_eq, bounds=(0, None), method="highs")
        inside[t] = res.status == 0
    return inside


def _in_hull(points: np.ndarray, targets: np.ndarray) -> np.ndarray:
    """Membership of ``targets`` in conv(``points``), keeping borderline rows."""
    pts = points.astype(float)
    tg = targets.astype(float)
    center = pts.mean(axis=0)
    centered = pts - center
    _, sing, vt = np.linalg.svd(centered, full_matrices=False)
    rank = int(np.sum(sing > 1e-9 * max(1.0, sing[0] if sing.size else 1.0)))
    if rank == 0:
        return np.all(np.abs(tg - center) < _TOL, axis=1)
    frame = vt[:rank]
    # Off the affine hull means outside.
    rel = tg - center
    off = np.linalg.norm(rel - (rel @ frame.T) @ frame, axis=1) > 1e-6
    coords_p = centered @ frame.T
    coords_t = rel @ frame.T
    if rank == 1:
        lo, hi = coords_p[:, 0].min(), coords_p[:, 0].max()
        inside = (coords_t[:, 0] >= lo - _TOL) & (coords_t[:, 0] <= hi + _TOL)
        return inside & ~off
    if rank <= 6:
        try:
            hull = ConvexHull(coords_p)
            slack = coords_t @ hull.equations[:, :-1].T + hull.equations[:, -1]
            return np.all(slack <= _TOL * (1 + np.abs(coords_t).max()), axis=1) & ~off
        except QhullError:
            pass
    result = np.zeros(len(targets), dtype=bool)
    keep = ~off
    if keep.any():
        result[keep] = _in_hull_lp(points, targets[keep])
    return result


def newton_basis(support: np.ndarray) -> np.ndarray:
    """Monomials ``m`` with ``2m`` in the Newton polytope of the given support, then pruned.

    ``support`` is the ``(terms, nvars)`` exponent array of the target (or of
    every term the target could possibly have).
    """
    support = np.unique(np.asarray(support, dtype=np.int64), axis=0)
    nvars = support.shape[1]
    if support.shape[0] == 0:
        return np.zeros((0, nvars), dtype=np.int64)
    degs = support.sum(axis=1)
    lo_d, hi_d = int(np.ceil(degs.min() / 2)), int(degs.max() // 2)
    cand = full_basis(nvars, hi_d, lo_d)
    lo_v = np.ceil(support.min(axis=0) / 2)
    hi_v = np.floor(support.max(axis=0) / 2)
    ok = np.all((cand >= lo_v) & (cand <= hi_v), axis=1)
    cand = cand[ok]
    if cand.shape[0] == 0:
        return cand
    radix = int(2 * max(support.max(), cand.max()) + 2)
    support_keys = encode_exponents(support, radix)
    doubled = 2 * cand
    direct = np.isin(encode_exponents(doubled, radix), support_keys)
    inside = direct.copy()
    rest = ~direct
    if rest.any():
        inside[rest] = _in_hull(support, doubled[rest])
    return prune_diagonal(cand[inside], support)


def prune_diagonal(basis: np.ndarray, support: np.ndarray) -> np.ndarray:
    """Drop basis monomials whose Gram diagonal is forced to zero; iterate to a fixed point."""
    basis = np.asarray(basis, dtype=np.int64)
    support = np.asarray(support, dtype=np.int64)
    if basis.shape[0] == 0:
        return basis
    radix = int(2 * max(int(basis.max(initial=0)), int(support.max(initial=0))) + 2)
    support_keys = encode_exponents(support, radix) if support.size else np.zeros(0, np.int64)
    while True:
        n = basis.shape[0]
        keys = encode_exponents(basis, radix)
        iu, ju = np.triu_indices(n, k=1)
        cross = keys[iu] + keys[ju]  # key of m_i + m_j (encoding is additive)
        square = 2 * keys
        covered = np.isin(square, support_keys) | np.isin(square, cross)
        if covered.all():
            return basis
        basis = basis[covered]
        if basis.shape[0] == 0:
            return basis


def support_basis(support: np.ndarray, nvars: int) -> np.ndarray:
    """Newton-polytope basis for a support array, or an empty basis for an empty support."""
    support = np.asarray(support, dtype=np.int64).reshape(-1, nvars)
    return newton_basis(support)
