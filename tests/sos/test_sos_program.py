"""The program layer: assembly against sympy, Lyapunov-type programs, levels, statuses."""

from __future__ import annotations

from fractions import Fraction

import numpy as np
import sympy as sp

from proofkit.exact import solve_exactly
from proofkit.sos import SearchProgram, solve_program

from .helpers import gram_identity_holds, is_psd_exact

X, Y = sp.symbols("x y", real=True)


def test_assembly_matches_sympy_expansion() -> None:
    # computed: the coefficient-matching rows of g * (b'Qb) + h * V' for symbolic Q and V
    # coefficients, by sympy expand, must equal the sparse matrices' rows.
    prog = SearchProgram([X, Y])
    s = prog.sos("s", [sp.Integer(1), X, Y])
    v = prog.free("v", [X**2, X * Y, Y**3])
    g = 1 + X * Y
    ident = prog.equate(s * g + v.diff(X) * (X - Y), 3 * X**2 + 1)
    prog.assemble()
    qs = sp.Matrix(3, 3, sp.symbols("q0:9"))
    cs = sp.symbols("c0:3")
    b = sp.Matrix([1, X, Y])
    vpoly = cs[0] * X**2 + cs[1] * X * Y + cs[2] * Y**3
    lhs = sp.expand((b.T * qs * b)[0, 0] * g + sp.diff(vpoly, X) * (X - Y) - 3 * X**2 - 1)
    poly = sp.Poly(lhs, X, Y)
    mats = {blk.unknown.name if blk.unknown else None: blk.matrix.toarray() for blk in ident.blocks}
    for row, e in enumerate(ident.monomials):
        coeff = poly.coeff_monomial(X ** int(e[0]) * Y ** int(e[1]))
        for col in range(9):  # vec(Q) is column-major: entry (i, j) at j*3 + i
            i, j = col % 3, col // 3
            assert mats["s"][row, col] == float(sp.diff(coeff, qs[i, j]))
        for k in range(3):
            assert mats["v"][row, k] == float(sp.diff(coeff, cs[k]))
        const = coeff.subs({q: 0 for q in qs} | {c: 0 for c in cs})
        assert mats[None][row, 0] == float(const)
    assert len(ident.monomials) == len(poly.terms())


def test_global_lyapunov_function_found_and_checked_independently() -> None:
    # common practice: dx/dt = -x + y, dy/dt = -x - y^3 is globally asymptotically stable
    # (V = x^2 + y^2 gives dV/dt = -2x^2 - 2y^4); the program must find some V with
    # V - |x|^2/100 and -V' - |x|^2/100 SOS, and the certificate must re-check with sympy.
    f = [-X + Y, -X - Y**3]
    prog = SearchProgram([X, Y])
    v = prog.free_of_degree("V", 4, 2)
    r = (X**2 + Y**2) / 100
    pos = prog.require_sos(v - r, "pos")
    dec = prog.require_sos(-v.lie(f) - r, "dec")
    res = solve_exactly(prog)
    assert res.found, res.reason
    ex = res.exact
    vv = ex.polynomial(v)
    vdot = sp.diff(vv, X) * f[0] + sp.diff(vv, Y) * f[1]
    for u, target in ((pos, vv - r), (dec, -vdot - r)):
        basis = [prog.space.monomial(e) for e in u.basis]
        assert gram_identity_holds(sp.expand(target), basis, ex.gram(u))
        assert is_psd_exact(ex.gram(u))


def test_level_parameter_and_resolve() -> None:
    # computed by hand: s*(c - x^2) + x^2 - 1/2 with s a nonnegative constant (SOS in basis
    # {1}): x^2 (1 - s) + s c - 1/2 is SOS iff s <= 1 and s c >= 1/2, feasible iff c >= 1/2.
    prog = SearchProgram([X])
    c = prog.level("c", Fraction(2))
    s = prog.sos("s", [sp.Integer(1)])
    prog.require_sos(s * c - s * X**2 + X**2 - sp.Rational(1, 2), "g", basis=[sp.Integer(1), X])
    assert solve_exactly(prog).found
    c.set(Fraction(1, 4))
    assert not solve_exactly(prog).found


def test_scalar_objective_and_status() -> None:
    # computed by hand: the largest t with x^4 + 1 - t x^2 SOS is t = 2 ((x^2 - 1)^2).
    prog = SearchProgram([X])
    t = prog.scalar("t")
    prog.require_sos(X**4 + 1 - t * X**2, "g", basis=[sp.Integer(1), X, X**2])
    prog.maximize({t: 1})
    for solver in ("clarabel", "scs"):
        sol = solve_program(prog, solver, margin=False)
        assert sol.status in ("solved", "inaccurate")
        assert abs(float(sol.values["t"][0]) - 2.0) < 1e-3
    assert np.isfinite(sol.solve_time)


def test_identity_without_gram_pivot_is_repaired_exactly() -> None:
    # computed by hand: V is pinned to x^2/3 + y^2 by an identity with no Gram matrix, so
    # rounding V to a dyadic grid breaks it and the exact least-norm repair must restore
    # 1/3; V - x^2/4 = x^2/12 + y^2 is then SOS.
    prog = SearchProgram([X, Y])
    v = prog.free("V", [X**2, X * Y, Y**2])
    prog.equate(v, X**2 / 3 + Y**2)
    prog.require_sos(v - X**2 / 4, "pos")
    res = solve_exactly(prog)
    assert res.found, res.reason
    assert sp.expand(res.exact.polynomial(v) - X**2 / 3 - Y**2) == 0
