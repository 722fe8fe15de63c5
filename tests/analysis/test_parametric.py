"""Stability over parameter boxes by exact Hurwitz determinants."""

from __future__ import annotations

from fractions import Fraction

import flint
import numpy as np
import sympy as sp

from proofkit.analysis.parametric import (
    bernstein,
    hurwitz_determinants,
    parametric_stability,
    range_system,
)
from proofkit.model import Param

from .helpers import model, sym

x1, x2, x3 = sym("x1", "x2", "x3")
K = sp.Symbol("K", real=True)


def _loop(low: int, high: int):  # K/(s+1)^3 in unity feedback, in companion form
    return model(
        "x1 x2 x3",
        [x2, x3, -(1 + K) * x1 - 3 * x2 - 3 * x3],
        equilibria={"o": {"x1": 0, "x2": 0, "x3": 0}},
        params=(Param("K", sp.Integer(low), sp.Integer(low), sp.Integer(high)),),
    )


def test_third_order_loop_gain_margin() -> None:
    # common practice: K/(s+1)^3 in unity feedback has gain margin 8, so s^3 + 3 s^2 + 3 s +
    # 1 + K is Hurwitz exactly for -1 < K < 8; computed by hand: Delta_2 = 9 - (1 + K)
    r = parametric_stability(_loop(0, 7), "o")
    assert r.status == "holds"
    assert r.charpoly == (1, 3, 3, K + 1)
    assert r.determinants[1] == 8 - K
    r = parametric_stability(_loop(0, 9), "o")
    assert r.status == "fails" and r.counterexample == {"K": 9}
    r = parametric_stability(_loop(0, 8), "o")  # K = 8: roots +-i sqrt 3, no verdict
    assert r.status == "unknown" and r.counterexample == {"K": 8}


def test_two_parameter_oscillator() -> None:
    # common practice: s^2 + b s + a is Hurwitz iff a > 0 and b > 0
    a, b = sp.Symbol("a", real=True), sp.Symbol("b", real=True)
    m = model(
        "x1 x2",
        [x2, -a * x1 - b * x2],
        equilibria={"o": {"x1": 0, "x2": 0}},
        params=(
            Param("a", sp.Integer(1), sp.Integer(1), sp.Integer(2)),
            Param("b", sp.Rational(3, 4), sp.Rational(1, 2), sp.Integer(1)),
        ),
    )
    assert parametric_stability(m, "o").status == "holds"


def test_wrong_point_is_not_an_equilibrium_over_the_range() -> None:
    # computed by hand: x' = K - x rests at x = K; the declared x = 1 is the equilibrium
    # only at K = 1, so no statement over the range is made
    m = model(
        "x1",
        [K - x1],
        equilibria={"e": {"x1": 1}},
        params=(Param("K", sp.Integer(1), sp.Integer(0), sp.Integer(2)),),
    )
    r = parametric_stability(m, "e")
    assert r.status == "unknown" and "not an equilibrium for every parameter value" in r.reason


def test_moving_equilibrium() -> None:
    # computed by hand: x' = K - x rests at x = K with Jacobian -1: stable for every K
    m = model(
        "x1",
        [K - x1],
        equilibria={"e": {"x1": K}},
        params=(Param("K", sp.Integer(1), sp.Integer(0), sp.Integer(2)),),
    )
    assert parametric_stability(m, "e").status == "holds"


def test_moving_equilibrium_with_a_radical() -> None:
    # computed by hand: x' = K - x^2 rests at x = sqrt(K) with Jacobian -2 sqrt(K); the
    # radical does not cancel, so r = sqrt(K) is enclosed per sub-box (K in [1/4, 4])
    m = model(
        "x1",
        [K - x1**2],
        equilibria={"e": {"x1": sp.sqrt(K)}, "f": {"x1": -sp.sqrt(K)}},
        params=(Param("K", sp.Integer(1), sp.Rational(1, 4), sp.Integer(4)),),
    )
    system = range_system(m, "e")
    assert not isinstance(system, str) and system.radicand is not None
    assert parametric_stability(m, "e").status == "holds"
    assert parametric_stability(m, "f").status == "fails"
    # with K = 0 in the range the point is a double root (Jacobian 0): never proved
    m0 = model(
        "x1",
        [K - x1**2],
        equilibria={"e": {"x1": sp.sqrt(K)}},
        params=(Param("K", sp.Integer(1), sp.Integer(0), sp.Integer(4)),),
    )
    assert parametric_stability(m0, "e").status == "unknown"


def test_bernstein_encloses_the_range() -> None:
    # computed: numpy on a dense grid; Bernstein coefficients bound the polynomial's range
    rng = np.random.default_rng(3)
    ctx = flint.fmpq_mpoly_ctx.get(("a",), "lex")
    (a,) = ctx.gens()
    for _ in range(30):
        cs = [int(v) for v in rng.integers(-5, 6, size=5)]
        p = sum((c * a**i for i, c in enumerate(cs)), ctx.constant(0))
        lo, hi = sorted(int(v) for v in rng.integers(-3, 4, size=2))
        if hi == lo:
            continue
        b = [float(x) for x in bernstein(p, [(Fraction(lo), Fraction(hi))])]
        grid = np.polyval(cs[::-1], np.linspace(lo, hi, 401))
        assert min(b) <= grid.min() + 1e-9 and grid.max() <= max(b) + 1e-9


def test_hurwitz_determinants_against_numpy_roots() -> None:
    # computed: numpy.roots; all Delta_i > 0 exactly when every root has negative real part
    rng = np.random.default_rng(7)
    for _ in range(40):
        c = [1, *(int(v) for v in rng.integers(-3, 6, size=4))]
        dets = hurwitz_determinants([sp.Integer(v) for v in c])
        roots = np.roots(c)
        if np.min(np.abs(roots.real)) < 1e-6:
            continue
        assert all(d > 0 for d in dets) == bool(np.all(roots.real < 0))
