"""Reference polynomials from the literature (see /work/shared/REFERENCES.md)."""

from __future__ import annotations

from fractions import Fraction

import pytest
import sympy as sp

from proofkit.exact import decompose, solve_exactly
from proofkit.sos import SearchProgram

from .helpers import gram_identity_holds, is_psd_exact

X, Y = sp.symbols("x y", real=True)
MOTZKIN = X**4 * Y**2 + X**2 * Y**4 - 3 * X**2 * Y**2 + 1


def test_motzkin_gets_no_certificate() -> None:
    # published: Motzkin (1967): nonnegative, not a sum of squares. The samples show the
    # search fails for the right reason (not SOS), not because the polynomial is negative.
    for a in range(-6, 7):
        for b in range(-6, 7):
            assert MOTZKIN.subs({X: sp.Rational(a, 3), Y: sp.Rational(b, 3)}) >= 0
    res = decompose(MOTZKIN, [X, Y])
    assert not res.found
    assert res.gram is None
    assert "margin" in res.reason
    with pytest.raises(ValueError):
        res.squares()


def test_motzkin_times_sum_of_squares_is_certified_exactly() -> None:
    # memory: attributed to Parrilo's thesis (2000), not confirmed from the text; computed:
    # the decomposition listed in REFERENCES.md is checked by sympy expansion below.
    p = sp.expand((X**2 + Y**2 + 1) * MOTZKIN)
    listed = (
        (X**2 * Y - Y) ** 2
        + (X * Y**2 - X) ** 2
        + (X**2 * Y**2 - 1) ** 2
        + sp.Rational(1, 4) * (X * Y**3 - X**3 * Y) ** 2
        + sp.Rational(3, 4) * (X * Y**3 + X**3 * Y - 2 * X * Y) ** 2
    )
    assert sp.expand(listed - p) == 0
    res = decompose(p, [X, Y])
    assert res.found, res.reason
    assert all(isinstance(v, sp.Rational) for v in res.gram)
    assert gram_identity_holds(p, res.basis, res.gram)
    assert is_psd_exact(res.gram)
    squares = res.squares()
    assert all(w > 0 for w, _ in squares)
    assert sp.expand(sum(w * q**2 for w, q in squares) - p) == 0


def test_lecture_note_identity() -> None:
    # published: MIT 6.972 lecture notes (Parrilo):
    # x1^2 - x1 x2^2 + x2^4 + 1 = 3/4 (x1 - x2^2)^2 + 1/4 (x1 + x2^2)^2 + 1.
    p = X**2 - X * Y**2 + Y**4 + 1
    listed = sp.Rational(3, 4) * (X - Y**2) ** 2 + sp.Rational(1, 4) * (X + Y**2) ** 2 + 1
    assert sp.expand(listed - p) == 0
    res = decompose(p, [X, Y])
    assert res.found, res.reason
    # Newton polytope of p: half of it holds exactly 1, x, y, y^2 (computed by hand).
    assert set(res.basis) == {sp.Integer(1), X, Y, Y**2}
    assert gram_identity_holds(p, res.basis, res.gram)
    assert is_psd_exact(res.gram)
    assert sp.expand(sum(w * q**2 for w, q in res.squares()) - p) == 0


def _roa_program(level: Fraction) -> tuple[SearchProgram, object]:
    x1, x2 = sp.symbols("x1 x2", real=True)
    f = [-x2, x1 + (x1**2 - 1) * x2]
    v = sp.Rational(3, 2) * x1**2 - x1 * x2 + x2**2
    prog = SearchProgram([x1, x2])
    c = prog.level("c", level)
    s = prog.sos_of_degree("s", 2)
    vdot = prog.poly(v).lie(f)
    prog.require_sos(-vdot - (s * c - s * v) - sp.Rational(1, 1000) * (x1**2 + x2**2), "lie")
    return prog, s


def test_region_of_attraction_level_program() -> None:
    # published: Khalil, Nonlinear Systems 3rd ed. sec. 8.2: reversed-time oscillator with
    # P = [[3/2, -1/2], [-1/2, 1]]; computed (REFERENCES.md): best level c* = 2.3044776.
    # The S-procedure program with a quadratic SOS multiplier certifies c = 2.3 (within 1 %
    # of c*) and can never certify c = 2.4 > c*.
    prog, s = _roa_program(Fraction(23, 10))
    res = solve_exactly(prog)
    assert res.found, res.reason
    mult = res.exact.polynomial(s)
    x1, x2 = prog.space.variables
    assert all(mult.subs({x1: a, x2: b}) >= 0 for a in (-2, 0, 1) for b in (-1, 0, 3))
    prog, _ = _roa_program(Fraction(24, 10))
    assert not solve_exactly(prog).found
