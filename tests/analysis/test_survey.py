"""Survey verdicts and types on planar examples, declared names, claims at nominal values."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest
import sympy as sp

from proofkit.analysis import check_claim, survey
from proofkit.model import Claim, Param

from .helpers import model, sym

x, y = sym("x", "y")

# computed by hand from trace/determinant/discriminant; numpy cross-checks each below
PLANAR = [
    ([-x, -2 * y], "stable node", "stable"),
    ([x, 2 * y], "unstable node", "unstable"),
    ([y, -x - y], "stable focus", "stable"),
    ([y, -x + y], "unstable focus", "unstable"),
    ([x, -y], "saddle", "unstable"),
    ([y, -x], "centre-type (linear part)", "inconclusive"),
    ([-x, y**2], "degenerate", "inconclusive"),
    ([-x + y, -y], "stable node", "stable"),  # repeated eigenvalue -1 (a Jordan block)
]


@pytest.mark.parametrize(("rhs", "kind", "verdict"), PLANAR)
def test_planar_types(rhs: list, kind: str, verdict: str) -> None:
    s = survey(model("x y", rhs))
    assert s.complete and len(s.equilibria) == 1
    e = s.equilibria[0]
    assert (e.type, e.verdict) == (kind, verdict)
    ev = np.linalg.eigvals(np.array(e.jacobian, dtype=float))  # computed: numpy eigenvalues
    assert np.allclose(
        sorted(ev, key=lambda c: (c.real, c.imag)),
        sorted(e.eigenvalues, key=lambda c: (c.real, c.imag)),
    )
    if verdict == "stable":
        assert all(v.real < 0 for v in ev)
        lyap = e.lyapunov
        assert lyap is not None and lyap.positive_definite
        A = e.jacobian
        assert -sp.eye(2) == A.T * lyap.P + lyap.P * A  # exact identity
    if verdict == "unstable":
        assert any(v.real > 0 for v in ev) and e.lyapunov is None


def test_reversed_time_oscillator_survey() -> None:
    # published: Khalil, Nonlinear Systems, 3rd ed., section 8.2: A = [[0,-1],[1,-1]] at the
    # origin and P = [[3/2,-1/2],[-1/2,1]] for Q = I
    m = model(
        "x1 x2",
        [-sym("x2")[0], sym("x1")[0] + (sym("x1")[0] ** 2 - 1) * sym("x2")[0]],
        equilibria={"origin": {"x1": 0, "x2": 0}},
    )
    s = survey(m)
    e = s.by_name("origin")
    assert e.jacobian == sp.Matrix([[0, -1], [1, -1]])
    assert e.lyapunov is not None
    assert (
        sp.Matrix([[sp.Rational(3, 2), sp.Rational(-1, 2)], [sp.Rational(-1, 2), 1]])
        == e.lyapunov.P
    )
    assert e.routh.first_column == (1, 1, 1) and e.verdict == "stable"


def test_declared_names_match_exact_points() -> None:
    # computed by hand: equilibria of dx/dt = x^2 - 2, dy/dt = -y are (+-sqrt 2, 0)
    m = model(
        "x y",
        [x**2 - 2, -y],
        equilibria={"right": {"x": sp.sqrt(2), "y": 0}, "left": {"x": -sp.sqrt(2), "y": 0}},
    )
    s = survey(m)
    assert s.by_name("right").point["x"] == sp.sqrt(2)
    assert s.by_name("left").verdict == "stable"


def test_declared_point_missing_from_complete_list_is_a_bug() -> None:
    # common practice: a complete list that lacks a true equilibrium must never pass silently
    m = model("x y", [x**2 - 2, -y], equilibria={"wrong": {"x": 1, "y": 0}})
    with pytest.raises(RuntimeError):
        survey(m)


def test_declared_point_on_a_curve_is_analysed() -> None:
    # computed by hand: dx/dt = x y, dy/dt = -y: every (a, 0) rests; at (2, 0) J = [[0, 2], [0, -1]]
    m = model("x y", [x * y, -y], equilibria={"p": {"x": 2, "y": 0}})
    s = survey(m)
    assert not s.complete
    e = s.by_name("p")
    assert e.jacobian == sp.Matrix([[0, 2], [0, -1]]) and e.verdict == "inconclusive"


def test_claims_from_linearization_and_parameter_ranges() -> None:
    # computed by hand: dx/dt = -k x + y, dy/dt = -y with k = 2 nominal: stable node at the origin
    k = sp.Symbol("k", real=True)
    m = model(
        "x y",
        [-k * x + y, -y],
        equilibria={"o": {"x": 0, "y": 0}},
        params=(Param("k", sp.Integer(2)),),
    )
    s = survey(m)
    assert s.at_nominal
    c = check_claim(m, s, Claim("stable", "o stable", target="o"))
    assert c.status == "holds" and "indirect method" in c.reason
    c = check_claim(m, s, Claim("unstable", "o unstable", target="o"))
    assert c.status == "fails"
    # computed by hand: eigenvalues -k and -1, so stable for every k in [1, 3] ...
    ranged = replace(m, params=(Param("k", sp.Integer(2), sp.Integer(1), sp.Integer(3)),))
    c = check_claim(ranged, survey(ranged), Claim("stable", "o stable", target="o"))
    assert c.status == "holds" and "Hurwitz determinant" in c.reason
    # ... not for k in [-1, 3]: at k = -1 an eigenvalue is +1
    wide = replace(m, params=(Param("k", sp.Integer(2), sp.Integer(-1), sp.Integer(3)),))
    c = check_claim(wide, survey(wide), Claim("stable", "o stable", target="o"))
    assert c.status == "fails" and c.parametric is not None
    assert c.parametric.counterexample == {"k": -1}
    # ... and at k = 0 (range [0, 3]) an eigenvalue is 0: neither proved nor refuted
    edge = replace(m, params=(Param("k", sp.Integer(2), sp.Integer(0), sp.Integer(3)),))
    c = check_claim(edge, survey(edge), Claim("stable", "o stable", target="o"))
    assert c.status == "undecided" and "imaginary axis" in c.reason
    c = check_claim(edge, survey(edge), Claim("unstable", "o unstable", target="o"))
    assert c.status == "undecided" and "parameter" in c.reason
    c = check_claim(
        ranged, survey(ranged), Claim("stable", "o stable at nominal", target="o", at_nominal=True)
    )
    assert c.status == "holds"


def test_centre_claim_not_proved() -> None:
    # common practice: eigenvalues +-i leave Lyapunov's indirect method undecided
    m = model("x y", [y, -x], equilibria={"o": {"x": 0, "y": 0}})
    c = check_claim(m, survey(m), Claim("stable", "o stable", target="o"))
    assert c.status == "undecided" and "imaginary axis" in c.reason


def test_declared_point_outside_the_search_box_is_still_analysed() -> None:
    # computed by hand: the pendulum rests at (4 pi, 0), outside the default box [-10, 10]^2;
    # there J = [[0, 1], [-1, -1/2]] (cos 4 pi = 1): a stable focus
    m = model("x y", [y, -sp.sin(x) - y / 2], equilibria={"far": {"x": 4 * sp.pi, "y": 0}})
    s = survey(m)
    assert s.complete and len(s.equilibria) == 8
    e = s.by_name("far")
    assert e.point["x"] == 4 * sp.pi and e.type == "stable focus" and "outside" in e.note


def test_exact_zero_with_transcendental_jacobian_gets_an_enclosure_verdict() -> None:
    # computed by hand: dx/dt = (x - 1)^2 - y e^x, dy/dt = -y has the double zero (1, 0), which the
    # box search cannot certify; J(1, 0) = [[0, -e], [0, -1]] is not algebraic, so the verdict
    # comes from ball arithmetic: det J = 0 cannot be signed, no verdict (a zero eigenvalue)
    s = survey(model("x y", [(x - 1) ** 2 - y * sp.exp(x), -y]))
    assert not s.complete
    e = next(e for e in s.equilibria if e.point == {"x": 1, "y": 0})
    assert e.exact and e.jacobian_enclosure is not None and "not algebraic" in e.note
    assert e.verdict == "inconclusive" and e.lyapunov is None


def test_domain_membership_decided_exactly_on_the_boundary() -> None:
    # computed by hand: (+-sqrt 2, 0) lies on x^2 = 2 exactly: inside x^2 <= 2, outside x^2 < 2,
    # and +sqrt 2 is outside x <= 1414213562/10^9 (sqrt 2 = 1.41421356237...)
    from proofkit.model import Condition, Region

    base = model("x y", [x**2 - 2, -y])
    two = sp.Integer(2)
    closed = replace(base, domain=Region((Condition(x**2, "<=", two),)))
    assert all(e.in_domain is True for e in survey(closed).equilibria)
    open_ = replace(base, domain=Region((Condition(x**2, "<", two),)))
    assert all(e.in_domain is False for e in survey(open_).equilibria)
    cut = replace(base, domain=Region((Condition(x, "<=", sp.Rational(1414213562, 10**9)),)))
    inside = {e.point["x"]: e.in_domain for e in survey(cut).equilibria}
    assert inside == {sp.sqrt(2): False, -sp.sqrt(2): True}
