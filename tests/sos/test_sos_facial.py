"""Singular Gram matrices: facial reduction paths, each certificate re-checked independently."""

from __future__ import annotations

import numpy as np
import sympy as sp

from proofkit.exact import decompose
from proofkit.exact.rounding import compact_denominators, peyrl_parrilo_projection, round_to
from proofkit.sos import PolySpace, full_basis

from .helpers import gram_identity_holds, is_psd_exact

X, Y = sp.symbols("x y", real=True)


def test_two_squares_without_interior() -> None:
    # computed: constructed as a sum of two squares; every Gram matrix in its basis is
    # singular (p vanishes at a real point), so the certificate lies on a proper face.
    p = sp.expand((X + Y / 3 + 1) ** 2 + (X * Y - 2 * X + sp.Rational(1, 7)) ** 2)
    res = decompose(p, [X, Y])
    assert res.found, res.reason
    assert gram_identity_holds(p, res.basis, res.gram)
    assert is_psd_exact(res.gram)
    assert res.gram.rank() < len(res.basis)


def test_irrational_real_zero_forces_a_smaller_rational_face() -> None:
    # computed: found by a random search over sums of two squares; the squares share a
    # real zero with b = 2^(-1/3), so the largest face is irrational and the rational Gram
    # matrix lives on the face spanned by integer relations (LLL) of the numerical kernel.
    a, b = sp.symbols("a b", real=True)
    p = (
        sp.Rational(125, 9) * a**2 * b**4
        + sp.Rational(200, 9) * a * b**4
        - sp.Rational(100, 9) * a * b**3
        + 4 * b**6
        + sp.Rational(80, 9) * b**4
        - sp.Rational(116, 9) * b**3
        + sp.Rational(20, 9) * b**2
        + 1
    )
    res = decompose(p, [a, b])
    assert res.found, res.reason
    assert gram_identity_holds(p, res.basis, res.gram)
    assert is_psd_exact(res.gram)
    assert res.gram.rank() < len(res.basis)


def test_compact_denominators_keeps_every_coefficient() -> None:
    # computed: after the Peyrl-Parrilo projection and the compaction, b'Qb is the same
    # polynomial and all but one entry per monomial lie on the 1/64 grid.
    space = PolySpace([X, Y])
    basis = full_basis(2, 2)
    rng = np.random.default_rng(1)
    q = rng.normal(size=(6, 6))
    q = q @ q.T
    target = space.coerce(sp.expand((1 + X + Y**2) ** 2 + (X * Y - 1) ** 2))
    proj = peyrl_parrilo_projection(basis, round_to(q, 64), target)
    short = compact_denominators(basis, proj, 64)
    b = sp.Matrix([space.monomial(e) for e in basis])
    for mat in (proj, short):
        g = sp.Matrix([[sp.Rational(int(x.p), int(x.q)) for x in r] for r in mat])
        assert g == g.T
        assert sp.expand((b.T * g * b)[0, 0] - space.to_sympy(target)) == 0
    off_grid = sum(1 for r in short for x in r if 64 % int(x.q))
    monomials = np.unique((basis[:, None, :] + basis[None, :, :]).reshape(-1, 2), axis=0)
    assert off_grid <= 2 * len(monomials)
    assert sum(1 for r in proj for x in r if 64 % int(x.q)) > off_grid
