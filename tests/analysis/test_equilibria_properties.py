"""Property tests: systems with known solution sets, disguised by a change of variables."""

from __future__ import annotations

import itertools

import sympy as sp
from hypothesis import assume, given
from hypothesis import strategies as st

from proofkit.analysis import find_equilibria

from .helpers import model, sym

x, y = sym("x", "y")


@given(
    st.lists(st.integers(-3, 3), min_size=1, max_size=3, unique=True),
    st.lists(st.integers(-3, 3), min_size=1, max_size=2, unique=True),
    st.integers(-2, 2),
    st.integers(-2, 2),
)
def test_product_systems_under_a_shear(xs_: list[int], ys_: list[int], k: int, c: int) -> None:
    # computed by hand: prod (u - a) = 0, prod (v - b) = 0 has the grid of points (a, b);
    # with u = x + k y and v = y + c (u - a0) ... here simply v = y - c x, u = x + k y the
    # points are the preimages of the grid under an invertible integer map (det 1 + k c)
    det = 1 + k * c
    assume(det != 0)
    u, v = x + k * y, y - c * x
    f1 = sp.expand(sp.Mul(*[u - a for a in xs_]))
    f2 = sp.expand(sp.Mul(*[v - b for b in ys_]))
    pts, complete, _reason = find_equilibria(model("x y", [f1, f2]))
    assert complete
    expected = set()
    for a, b in itertools.product(xs_, ys_):
        sol = sp.solve([u - a, v - b], [x, y], dict=True)[0]  # computed: sympy linear solve
        expected.add((sol[x], sol[y]))
    assert {(p.point["x"], p.point["y"]) for p in pts} == expected


@given(st.integers(2, 30), st.integers(-3, 3), st.integers(1, 3))
def test_quadratic_irrational_points_satisfy_the_system_exactly(d: int, a: int, b: int) -> None:
    # computed by hand: x^2 = d and y = a x + b: two points (+-sqrt d, a (+-sqrt d) + b),
    # a single rational one when d is a square
    f1 = x**2 - d
    f2 = y - a * x - b
    pts, complete, _ = find_equilibria(model("x y", [sp.expand(f1 + (y - a * x - b) * x), f2]))
    assert complete
    r = sp.sqrt(d)
    assert {(p.point["x"], p.point["y"]) for p in pts} == {(r, a * r + b), (-r, -a * r + b)}
    for p in pts:  # the exact point makes the field vanish identically
        assert sp.expand(f1.subs(x, p.point["x"])) == 0
