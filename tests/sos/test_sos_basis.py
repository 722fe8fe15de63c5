"""Monomial bases: sizes, Newton-polytope pruning, diagonal-consistency pruning."""

from __future__ import annotations

from math import comb

import numpy as np
import sympy as sp

from proofkit.sos import PolySpace, full_basis, newton_basis, prune_diagonal


def test_full_basis_sizes() -> None:
    # common practice: there are C(n + d, d) monomials of degree <= d in n variables.
    for n in range(1, 6):
        for d in range(0, 4):
            b = full_basis(n, d)
            assert b.shape == (comb(n + d, d), n)
            assert len({tuple(r) for r in b}) == b.shape[0]
            assert b.sum(axis=1).max(initial=0) <= d


def _basis_of(p, xs) -> set[sp.Expr]:
    space = PolySpace(xs)
    exps, _ = PolySpace.arrays(space.coerce(p), len(xs))
    return {space.monomial(e) for e in newton_basis(exps)}


def test_motzkin_newton_basis() -> None:
    # computed by hand: half the Newton polytope of the Motzkin polynomial (Motzkin 1967,
    # published) contains the lattice points 1, xy, x^2 y, x y^2 only.
    x, y = sp.symbols("x y")
    p = x**4 * y**2 + x**2 * y**4 - 3 * x**2 * y**2 + 1
    assert _basis_of(p, [x, y]) == {sp.Integer(1), x * y, x**2 * y, x * y**2}


def test_homogeneous_target_keeps_only_top_degree() -> None:
    # common practice: a form of degree 2d needs only monomials of degree exactly d.
    x, y, z = sp.symbols("x y z")
    p = (x**2 + y**2 + z**2) ** 2
    basis = _basis_of(p, [x, y, z])
    assert basis == {x**2, y**2, z**2, x * y, x * z, y * z}


def test_newton_basis_agrees_with_linear_programming() -> None:
    # computed: membership of 2m in conv(support) by scipy linprog, independently.
    from scipy.optimize import linprog

    rng = np.random.default_rng(3)
    for _ in range(5):
        support = rng.integers(0, 5, size=(8, 3)) * 2
        support = np.vstack([support, np.zeros((1, 3), int)])
        got = {tuple(r) for r in newton_basis(support)}
        for m in full_basis(3, 5):
            a_eq = np.vstack([support.T, np.ones(len(support))])
            b_eq = np.concatenate([2 * m, [1]])
            inside = (
                linprog(np.zeros(len(support)), A_eq=a_eq, b_eq=b_eq, bounds=(0, None)).status == 0
            )
            if tuple(m) in got:
                assert inside
        # every vertex of the support (even exponents here) must be kept
        for v in support:
            assert tuple(v // 2) in got


def test_diagonal_consistency_drops_forced_zeros() -> None:
    # computed by hand: with target terms {1, x^2}, basis {1, x, y}: the square y^2 is
    # not a target term and no other product gives y^2, so y must go.
    basis = np.array([[0, 0], [1, 0], [0, 1]])
    support = np.array([[0, 0], [2, 0]])
    kept = {tuple(r) for r in prune_diagonal(basis, support)}
    assert kept == {(0, 0), (1, 0)}
