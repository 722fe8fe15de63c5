"""Exact real algebraic arithmetic: signs, equality, conversion back to sympy."""

from __future__ import annotations

import sympy as sp
from hypothesis import given
from hypothesis import strategies as st

from proofkit.analysis.algebraic import field_of_exprs


def test_sign_of_a_tiny_difference_is_exact() -> None:
    # computed: sqrt(2) = 1.41421356237309504880..., so the first difference is > 0 and
    # smaller than 1e-16, which a double cannot resolve
    _K, (a, b) = field_of_exprs(
        [
            sp.sqrt(2) - sp.Rational(14142135623730950, 10**16),
            sp.Rational(14142135623730951, 10**16) - sp.sqrt(2),
        ]
    )
    assert a.sign() == 1 and b.sign() == 1
    assert (a + b).is_rational() and (a + b).rational() == sp.Rational(1, 10**16)


def test_two_radicals_share_one_field() -> None:
    # computed by hand: (sqrt 2 + sqrt 3)^2 = 5 + 2 sqrt 6; sqrt 6 = sqrt 2 * sqrt 3
    K, (r2, r3) = field_of_exprs([sp.sqrt(2), sp.sqrt(3)])
    assert K.degree == 4
    s = r2 + r3
    assert ((s * s - 5) * (s * s - 5)).rational() == 24
    assert (r2 * r3).to_sympy() == sp.sqrt(6)
    assert (r2 - r3).sign() == -1


def test_crootof_coefficients() -> None:
    # computed by hand: r^3 = r + 1 for the real root r of x^3 - x - 1
    x = sp.Symbol("x")
    _K, (r,) = field_of_exprs([sp.CRootOf(x**3 - x - 1, 0)])
    assert (r**3 - r - 1).is_zero()
    assert (r - sp.Rational(1324717957, 10**9)).sign() == 1  # computed: r = 1.3247179572447...
    assert (r - sp.Rational(1324717958, 10**9)).sign() == -1


@given(st.integers(2, 50), st.integers(-20, 20), st.integers(1, 20))
def test_quadratic_elements_round_trip(d: int, a: int, b: int) -> None:
    # computed: sympy's own simplification of a + b sqrt(d) is the reference form
    value = a + b * sp.sqrt(d)
    _K, (v,) = field_of_exprs([value])
    assert sp.simplify(v.to_sympy() - value) == 0
    assert v.sign() == int(sp.sign(value))  # computed: sympy's exact sign
    assert abs(float(v) - float(value)) < 1e-9
