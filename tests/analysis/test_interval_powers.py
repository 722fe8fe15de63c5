"""Integer powers of balls centred at 0 stay finite and enclose the true range."""

from __future__ import annotations

import flint
import sympy as sp

from proofkit.analysis.intervals import compile_arb, int_power


def test_even_and_odd_powers_of_a_ball_around_zero() -> None:
    ball = flint.arb(0, 1)  # the interval [-1, 1]
    # common practice: x^2 maps [-1, 1] onto [0, 1], x^3 onto [-1, 1]
    square, cube = int_power(ball, 2), int_power(ball, 3)
    assert square.is_finite() and cube.is_finite()
    for v in (0, flint.fmpq(1, 2), 1):
        assert square.contains(flint.arb(v) ** 2)
        assert cube.contains(flint.arb(v) ** 3) and cube.contains(-(flint.arb(v) ** 3))
    assert not square.contains(flint.arb(-1, 0)) and square.rad() < 1


def test_compiled_field_at_a_box_around_the_origin_is_finite() -> None:
    x, y = sp.symbols("x y", real=True)
    f = compile_arb(x**2 * y - y**3 + 1, (x, y))
    value = f((flint.arb(0, flint.fmpq(1, 4)), flint.arb(0, flint.fmpq(1, 4))))
    assert value.is_finite() and value.contains(flint.arb(1))
