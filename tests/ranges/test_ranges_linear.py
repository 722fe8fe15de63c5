"""Linear loops with interval parameters: proofs agree with numpy eigenvalues on a grid.

Checks are against numpy (computed: numpy.linalg.eigvals on a dense grid of the
range) and facts of the trade (common practice: a first-order loop dx/dt = -k x is
asymptotically stable exactly for k > 0; s^2 + b s + a is Hurwitz iff a, b > 0).
"""

from __future__ import annotations

import json
from fractions import Fraction

import numpy as np
import sympy as sp
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from proofkit.audit.ranges import tiles
from proofkit.model import Param

from .helpers import X, Y, build, certify, reaudit

K = sp.Symbol("k", real=True)


def _first_order(lo: Fraction, hi: Fraction):
    nominal = lo if lo > 0 or hi < 0 else Fraction(0)
    return build(
        "x",
        [-K * X],
        (Param("k", sp.Rational(nominal), sp.Rational(lo), sp.Rational(hi)),),
        {"o": {"x": 0}},
        [("stable", "o")],
    )


@given(st.fractions(-5, 0), st.fractions(0, 5))
def test_first_order_loop_with_zero_in_range_never_proved(lo: Fraction, hi: Fraction) -> None:
    # common practice: dx/dt = -k x is not asymptotically stable at k = 0 (nor for k < 0)
    lo, hi = lo.limit_denominator(50), hi.limit_denominator(50)
    _, attempts, verdicts = certify(_first_order(lo, hi))
    assert verdicts[0].status != "proved"
    if lo < 0:  # a value k < 0 in the range: refuted there, with an unstable root
        assert verdicts[0].status == "refuted"
        assert Fraction(attempts[0].entry["evidence"]["parameters"]["k"]) < 0


def test_first_order_loop_positive_range_proved() -> None:
    _, _, verdicts = certify(_first_order(Fraction(1, 10), Fraction(5)))
    assert verdicts[0].status == "proved"


def _bumpy(lo: int, hi: int):
    # dx/dt = y, dy/dt = -(k^2 - 2k + 11/10) x - y: a = (k - 1)^2 + 1/10 > 0 but its Bernstein
    # coefficients on [0, 3] are not all positive (b1 = -19/10), so the cover subdivides
    return build(
        "x y",
        [Y, -(K**2 - 2 * K + sp.Rational(11, 10)) * X - Y],
        (Param("k", sp.Integer(lo), sp.Integer(lo), sp.Integer(hi)),),
        {"o": {"x": 0, "y": 0}},
        [("stable", "o")],
    )


def test_subdivided_cover_and_dropped_sub_box() -> None:
    text, attempts, verdicts = certify(_bumpy(0, 3))
    assert verdicts[0].status == "proved"
    cover = attempts[0].entry["evidence"]["cover"]
    assert len(cover) >= 2
    cert = json.loads(text)
    del cert["claims"][0]["evidence"]["cover"][0]
    assert reaudit(cert)[0].status == "rejected"
    cert = json.loads(text)  # an overlapping duplicate in place of a neighbour
    cv = cert["claims"][0]["evidence"]["cover"]
    cv[1] = cv[0]
    assert reaudit(cert)[0].status == "rejected"


def test_tiling_check() -> None:
    f = Fraction
    full = [(f(0), f(2)), (f(0), f(2))]
    quads = [[(f(a), f(a + 1)), (f(b), f(b + 1))] for a in (0, 1) for b in (0, 1)]
    assert tiles(quads, full)
    assert not tiles(quads[:3], full)
    # right total volume, but one box overlaps another and a gap remains
    assert not tiles([*quads[:3], [(f(1, 2), f(3, 2)), (f(1, 2), f(3, 2))]], full)


def test_two_parameter_oscillator() -> None:
    # common practice: s^2 + b s + a is Hurwitz iff a > 0 and b > 0
    a, b = sp.Symbol("a", real=True), sp.Symbol("b", real=True)
    params = (
        Param("a", sp.Integer(1), sp.Rational(1, 2), sp.Integer(2)),
        Param("b", sp.Integer(1), sp.Rational(1, 4), sp.Integer(3)),
    )
    m = build(
        "x y",
        [Y, -a * X - b * Y],
        params,
        {"o": {"x": 0, "y": 0}},
        [("stable", "o"), ("unstable", "o")],
    )
    _, attempts, verdicts = certify(m)
    assert [v.status for v in verdicts] == ["proved", "refuted"]
    assert len(attempts[0].entry["evidence"]["margins"]) == 2


def _grid_max_real(a0: np.ndarray, a1: np.ndarray, lo: float, hi: float) -> float:
    return max(max(np.linalg.eigvals(a0 + k * a1).real) for k in np.linspace(lo, hi, 801))


@settings(max_examples=20)  # each example proves, refutes and audits a 3-state loop
@given(
    st.lists(st.integers(-2, 2), min_size=9, max_size=9),
    st.lists(st.integers(-2, 2), min_size=9, max_size=9),
    st.integers(-3, 2),
    st.integers(1, 3),
)
def test_random_linear_systems_agree_with_numpy(c0, c1, lo, width) -> None:
    # computed: numpy eigenvalues of A0 + k A1 on a dense grid of [lo, lo + width]
    a0 = np.array(c0, dtype=float).reshape(3, 3) - 3 * np.eye(3)
    a1 = np.array(c1, dtype=float).reshape(3, 3)
    hi = lo + width
    xs = sp.symbols("x y z", real=True)
    rhs = [sum((int(a0[i, j]) + int(a1[i, j]) * K) * xs[j] for j in range(3)) for i in range(3)]
    m = build(
        "x y z",
        rhs,
        (Param("k", sp.Integer(lo), sp.Integer(lo), sp.Integer(hi)),),
        {"o": {"x": 0, "y": 0, "z": 0}},
        [("stable", "o")],
    )
    _, attempts, verdicts = certify(m)
    status = verdicts[0].status
    assert status != "rejected"
    top = _grid_max_real(a0, a1, lo, hi)
    if status == "proved":
        assert top < 0
    elif status == "refuted":
        k = float(Fraction(attempts[0].entry["evidence"]["parameters"]["k"]))
        assert max(np.linalg.eigvals(a0 + k * a1).real) > 0
    else:
        assume(False)  # not proved: nothing to compare (e.g. a root touching the axis)


def test_radical_that_does_not_cancel_audits() -> None:
    # computed by hand: dx/dt = K - x^2 rests at x = +-sqrt(K), Jacobian -+2 sqrt(K): the radical
    # stays in det(sI - J) = s + 2 sqrt(K), so each sub-box encloses sqrt(K) rationally
    m = build(
        "x",
        [K - X**2],
        (Param("k", sp.Integer(1), sp.Rational(1, 4), sp.Integer(4)),),
        {"e": {"x": sp.sqrt(K)}, "f": {"x": -sp.sqrt(K)}},
        [("stable", "e"), ("stable", "f"), ("unstable", "f")],
    )
    text, attempts, verdicts = certify(m)
    assert [v.status for v in verdicts] == ["proved", "refuted", "proved"]
    box = attempts[0].entry["evidence"]["cover"][0]["box"]
    assert len(box) == 2  # k, then the enclosure of sqrt(k)
    cert = json.loads(text)  # an enclosure that misses sqrt(k) is rejected
    cert["claims"][0]["evidence"]["cover"][0]["box"][1] = ["3", "4"]
    assert reaudit(cert)[0].status == "rejected"


def test_parameter_limit_at_and_past() -> None:
    # common practice: dx/dt = -(p1 + ... + pm) x is stable when every p_j >= 1
    from proofkit.analysis.parametric import MAX_PARAMS

    for count, expected in ((MAX_PARAMS, "proved"), (MAX_PARAMS + 1, "not proved")):
        ps = [sp.Symbol(f"p{j}", real=True) for j in range(count)]
        params = tuple(
            Param(f"p{j}", sp.Integer(1), sp.Integer(1), sp.Integer(2)) for j in range(count)
        )
        m = build("x", [-sum(ps) * X], params, {"o": {"x": 0}}, [("stable", "o")])
        _, attempts, verdicts = certify(m)
        assert verdicts[0].status == expected
        if expected == "not proved":
            assert "uncertain parameters" in attempts[0].entry["reason"]


def test_routh_sign_changes_from_hurwitz_signs_against_numpy() -> None:
    # computed: numpy.roots; with every Hurwitz determinant nonzero the Routh first column
    # is 1, D1, D2/D1, ..., a_n and its sign changes count the right-half-plane roots
    from proofkit.analysis.parametric import hurwitz_determinants
    from proofkit.audit.ranges import _first_column_changes

    rng = np.random.default_rng(5)
    checked = 0
    for _ in range(300):
        n = int(rng.integers(1, 6))
        c = [1, *(int(v) for v in rng.integers(-6, 7, size=n))]
        d = hurwitz_determinants([sp.Integer(v) for v in c])
        roots = np.roots(c)
        if any(x == 0 for x in d) or np.min(np.abs(roots.real)) < 1e-7:
            continue
        signs = [int(sp.sign(x)) for x in d[:-1]] + [int(np.sign(c[-1]))]
        assert _first_column_changes(signs) == int(np.sum(roots.real > 0)), c
        checked += 1
    assert checked > 200
