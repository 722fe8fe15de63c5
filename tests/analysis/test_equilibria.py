"""Equilibria found exactly (or certified) on systems whose answers are known."""

from __future__ import annotations

import mpmath
import numpy as np
import pytest
import sympy as sp

from proofkit.analysis import find_equilibria, survey
from proofkit.analysis.boxsearch import box_search

from .helpers import model, sym

x, y, z = sym("x", "y", "z")


def test_irrational_equilibria_sqrt2() -> None:
    # computed by hand: dx/dt = x^2 - 2, dy/dt = -y has (+-sqrt 2, 0); J = diag(2x, -1)
    s = survey(model("x y", [x**2 - 2, -y]))
    assert s.complete and s.at_nominal
    pts = {e.point["x"]: e for e in s.equilibria}
    assert set(pts) == {sp.sqrt(2), -sp.sqrt(2)}
    assert all(e.point["y"] == 0 for e in s.equilibria)
    neg, pos = pts[-sp.sqrt(2)], pts[sp.sqrt(2)]
    assert neg.verdict == "stable" and neg.type == "stable node"
    assert neg.jacobian == sp.Matrix([[-2 * sp.sqrt(2), 0], [0, -1]])
    assert neg.charpoly == (1, 1 + 2 * sp.sqrt(2), 2 * sp.sqrt(2))
    assert neg.lyapunov is not None and neg.lyapunov.positive_definite
    assert pos.verdict == "unstable" and pos.type == "saddle" and pos.routh.rhp_count == 1
    assert pos.lyapunov is None
    assert neg.numeric["x"] == pytest.approx(-(2**0.5))


def test_cubic_root_as_crootof() -> None:
    # computed by hand: x^3 - x - 1 has one real root r ~ 1.3247; J = diag(3r^2 - 1, -1), 3r^2-1 > 0
    s = survey(model("x y", [x**3 - x - 1, -y]))
    assert s.complete and len(s.equilibria) == 1
    e = s.equilibria[0]
    assert isinstance(e.point["x"], sp.CRootOf)
    t = sp.Symbol("t")
    assert sp.minimal_polynomial(e.point["x"], t) == t**3 - t - 1
    assert e.numeric["x"] == pytest.approx(1.324717957244746)  # computed: numpy.roots, sympy
    assert e.verdict == "unstable" and e.type == "saddle"


def test_three_state_lorenz_equilibria() -> None:
    # published: Strogatz, Nonlinear Dynamics and Chaos, section 9.2; Sparrow, The Lorenz
    # Equations (1982): C+- at (+-sqrt(b(r-1)), +-sqrt(b(r-1)), r-1), and with
    # r = 28 > r_H = 470/19 all three are unstable (../shared/REFERENCES.md, convection loop)
    sigma, r, b = 10, 28, sp.Rational(8, 3)
    m = model("x y z", [sigma * (y - x), r * x - y - x * z, x * y - b * z])
    s = survey(m)
    assert s.complete and len(s.equilibria) == 3
    c = sp.sqrt(b * (r - 1))  # = 6 sqrt 2
    pts = {(e.point["x"], e.point["y"], e.point["z"]): e for e in s.equilibria}
    assert set(pts) == {(0, 0, 0), (c, c, 27), (-c, -c, 27)}
    assert pts[(0, 0, 0)].routh.rhp_count == 1  # computed by hand: eigenvalue -8/3 and two real
    assert pts[(c, c, 27)].routh.rhp_count == 2  # the complex pair has crossed (Hopf)
    assert pts[(c, c, 27)].type == "2 unstable directions"
    for e in s.equilibria:  # computed: numpy eigenvalues agree on the count
        ev = np.linalg.eigvals(np.array(e.jacobian.evalf(), dtype=float))
        assert e.routh.rhp_count == int(np.sum(ev.real > 0))


def test_lorenz_below_pitchfork_only_origin_stable() -> None:
    # published: Strogatz, Nonlinear Dynamics and Chaos, section 9.2: for r < 1 the origin is
    # the only equilibrium, and its linearization is stable; computed: numpy eigenvalues below
    # (r = 1/2: -8/3 and the roots of s^2 + 11 s + 5, all negative)
    half, b = sp.Rational(1, 2), sp.Rational(8, 3)
    m = model("x y z", [10 * (y - x), half * x - y - x * z, x * y - b * z])
    s = survey(m)
    assert s.complete and len(s.equilibria) == 1
    assert s.equilibria[0].verdict == "stable"
    assert s.equilibria[0].type == "0 unstable directions"
    ev = np.linalg.eigvals(np.array(s.equilibria[0].jacobian.evalf(), dtype=float))
    assert np.all(ev.real < 0)


def test_curve_of_equilibria_is_not_complete() -> None:
    # computed by hand: dx/dt = x y, dy/dt = -y vanishes on the whole line y = 0
    pts, complete, reason = find_equilibria(model("x y", [x * y, -y]))
    assert not complete and "a curve of equilibria" in reason and "y = 0" in reason
    assert pts == ()


def test_curve_plus_isolated_point() -> None:
    # computed by hand: f = (x, y) (x^2 + y^2 - 1): the unit circle and the isolated origin
    s = survey(model("x y", [x * (x**2 + y**2 - 1), y * (x**2 + y**2 - 1)]))
    assert not s.complete and "x**2 + y**2 - 1 = 0" in s.complete_reason
    assert [e.point for e in s.equilibria] == [{"x": 0, "y": 0}]
    assert s.equilibria[0].verdict == "stable"  # J(0) = -I


def test_multiple_root_is_reported_once_and_degenerate() -> None:
    # computed by hand: dx/dt = x^2, dy/dt = -y: the double root x = 0, a zero eigenvalue
    s = survey(model("x y", [x**2, -y]))
    assert s.complete and len(s.equilibria) == 1
    e = s.equilibria[0]
    assert e.type == "degenerate" and e.verdict == "inconclusive" and e.routh.imag_count == 1


def test_no_real_equilibria() -> None:
    # computed by hand: x^2 + 1 = 0 has no real solution
    s = survey(model("x y", [x**2 + 1, -y]))
    assert s.complete and s.equilibria == ()


def test_pendulum_in_a_box_certified_and_complete() -> None:
    # computed by hand: dx/dt = y, dy/dt = -sin x - y/2 vanishes at (k pi, 0); in [-10, 10]^2,
    # k = -3..3;
    # J = [[0, 1], [-cos(k pi), -1/2]]: even k stable focus (disc 1/4 - 4 < 0), odd k saddle
    s = survey(model("x y", [y, -sp.sin(x) - y / 2]))
    assert s.complete and "Krawczyk" in s.complete_reason
    assert [e.point["x"] for e in s.equilibria] == [k * sp.pi for k in range(-3, 4)]
    for k, e in zip(range(-3, 4), s.equilibria, strict=True):
        assert e.exact
        assert e.type == ("stable focus" if k % 2 == 0 else "saddle")
        assert e.verdict == ("stable" if k % 2 == 0 else "unstable")


def test_box_search_budget_reported() -> None:
    # common practice: a search cut off by its budget must not claim completeness
    res = box_search([y, -sp.sin(x) - y / 2], [x, y], [(sp.Integer(-10), sp.Integer(10))] * 2, 5)
    assert not res.complete and "budget reached" in res.reason


def test_unidentified_root_gets_a_certified_verdict() -> None:
    # computed by hand: cos x = x has one real root (~0.739085); J = diag(-sin x - 1, -1) < 0
    s = survey(model("x y", [sp.cos(x) - x, -y]))
    assert s.complete and len(s.equilibria) == 1
    e = s.equilibria[0]
    assert not e.exact and e.enclosure is not None
    lo, hi = e.enclosure[0]
    mpmath.mp.dps = 40
    root = mpmath.findroot(lambda t: mpmath.cos(t) - t, 0.7)  # computed: mpmath at 40 digits
    assert mpmath.mpf(lo.p) / lo.q <= root <= mpmath.mpf(hi.p) / hi.q
    assert hi - lo < sp.Rational(1, 10**9)
    assert e.jacobian_enclosure is not None
    assert e.verdict == "stable" and e.type == "stable node"


def test_domain_bounds_the_search_box() -> None:
    # computed by hand: in |x| <= 4 the pendulum has equilibria at -pi, 0, pi only
    from proofkit.model import Condition, Region

    m = model("x y", [y, -sp.sin(x) - y / 2])
    dom = Region((Condition(x**2, "<=", sp.Integer(16)), Condition(y**2, "<=", sp.Integer(1))))
    from dataclasses import replace

    s = survey(replace(m, domain=dom))
    assert s.complete and "[-4, 4] x [-1, 1]" in s.complete_reason
    assert [e.point["x"] for e in s.equilibria] == [-sp.pi, 0, sp.pi]


def test_six_state_product_system() -> None:
    # computed by hand: dx_i/dt = x_i (x_i - 1) (x_i + 2) for i = 1, 2 and linear coupling-free
    # decay for the rest gives 3 * 3 = 9 equilibria
    xs = sym("a", "b", "c", "d", "e", "f")
    a, b = xs[0], xs[1]
    rhs = [a * (a - 1) * (a + 2), b * (b - 1) * (b + 2), -xs[2] + a, -xs[3] + b, -xs[4], -xs[5]]
    s = survey(model("a b c d e f", rhs))
    assert s.complete and len(s.equilibria) == 9
    stable = [e for e in s.equilibria if e.verdict == "stable"]
    # computed by hand: a' has slope 3a^2 + 2a - 2: -2 at 0, 6 at -2, 3 at 1 -> only a = b = 0
    assert [e.point for e in stable] == [{"a": 0, "b": 0, "c": 0, "d": 0, "e": 0, "f": 0}]


def test_multiple_zeros_of_a_non_polynomial_field_found_but_incomplete() -> None:
    # computed by hand: dx/dt = sin(x)^2 - y, dy/dt = -y vanishes at (k pi, 0), each a double zero
    # in x, so no box around them can be certified unique; the exact zeros are still found
    s = survey(model("x y", [sp.sin(x) ** 2 - y, -y]))
    assert not s.complete and "could not be decided" in s.complete_reason
    assert [e.point["x"] for e in s.equilibria] == [k * sp.pi for k in range(-3, 4)]
    assert all(e.type == "degenerate" and e.verdict == "inconclusive" for e in s.equilibria)
