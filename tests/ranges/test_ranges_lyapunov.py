"""Lyapunov functions over parameter ranges: one V for the box, box multipliers, audited.

Check values: computed by hand (each stated beside the model) and common practice
(dx/dt = k x - x^3 has an unstable origin for k > 0, the pitchfork normal form).
"""

from __future__ import annotations

import json

import sympy as sp

from proofkit.model import Param

from .helpers import X, Y, build, certify, reaudit

K = sp.Symbol("k", real=True)


def _p(lo, hi, nominal=None) -> tuple[Param, ...]:
    lo, hi = sp.Rational(lo), sp.Rational(hi)
    return (Param("k", lo if nominal is None else sp.Rational(nominal), lo, hi),)


def test_degenerate_linearization_proved_stable_over_the_range() -> None:
    # computed by hand: dx/dt = -k x^3 has Jacobian 0 (the range linearization decides
    # nothing) and V = x^2 gives lie(V) = -2 k x^4 < 0 for every k in [1/2, 2]
    m = build(
        "x", [-K * X**3], _p("1/2", 2), {"o": {"x": 0}}, [("stable", "o"), ("globally stable", "o")]
    )
    _, attempts, verdicts = certify(m)
    assert [v.status for v in verdicts] == ["proved", "proved"]
    assert all(a.entry["method"] == "lyapunov-range" for a in attempts)
    assert "for every value of k in [1/2, 2]" in verdicts[1].sentence


def test_decrease_needs_the_box_and_mutations_are_rejected() -> None:
    # computed by hand: dx/dt = -x + k y, dy/dt = -x - y - y^3 with V = x^2 + y^2:
    # lie(V) = -2x^2 + (2k - 2) x y - 2y^2 - 2y^4, negative definite iff |k - 1| < 2
    m = build(
        "x y",
        [-X + K * Y, -X - Y - Y**3],
        _p(0, 2, 1),
        {"o": {"x": 0, "y": 0}},
        [("globally stable", "o")],
    )
    text, _, verdicts = certify(m)
    assert verdicts[0].status == "proved"
    cert = json.loads(text)
    ev = cert["claims"][0]["evidence"]
    assert set(ev["multipliers"]) == {"a1", "b1"}
    cert["model"]["parameters"][0]["range"] = ["-2", "2"]  # a wider box than was proved
    assert reaudit(cert)[0].status == "rejected"
    cert = json.loads(text)
    cert["claims"][0]["evidence"]["numbers"]["eps"] = "1"
    assert reaudit(cert)[0].status == "rejected"


def test_pitchfork_never_proved_over_a_range_with_positive_k() -> None:
    # common practice: dx/dt = k x - x^3 has an unstable origin for k > 0
    m = build(
        "x",
        [K * X - X**3],
        _p(-1, 1, "-1/2"),
        {"o": {"x": 0}},
        [("stable", "o"), ("globally stable", "o")],
    )
    _, _, verdicts = certify(m)
    assert verdicts[0].status == "refuted"  # at a value k > 0 by the Routh array
    assert verdicts[1].status == "not proved"


def _attracts(rhs, states: str, bound: str, params: tuple[Param, ...]):
    from dataclasses import replace

    from proofkit.model import Claim, Condition, Region

    xs = {"x": X, "y": Y}
    names = states.split()
    m = build(states, rhs, params, {"o": dict.fromkeys(names, 0)}, [])
    norm = sum(xs[n] ** 2 for n in names)
    region = Region((Condition(norm, "<=", sp.Rational(bound)),))
    text = f"o attracts {' + '.join(n + '^2' for n in names)} <= {bound}"
    return replace(m, claims=(Claim("attracts", text, target="o", region=region),))


def test_region_of_attraction_over_the_range() -> None:
    # computed by hand: dx/dt = -k x + x^3 has equilibria 0 and +-sqrt(k); for k in [1, 2]
    # the interval x^2 < k (so x^2 < 1 for every k) is attracted to 0: x^2 <= 1/4 is
    # inside for every k, x^2 <= 2 is not (at k = 1 it contains the equilibria +-1)
    m = _attracts([-K * X + X**3], "x", "1/4", _p(1, 2))
    text, attempts, verdicts = certify(m)
    assert verdicts[0].status == "proved"
    assert attempts[0].entry["method"] == "lyapunov-range"
    cert = json.loads(text)
    level = cert["claims"][0]["evidence"]["numbers"]["level"]
    cert["claims"][0]["evidence"]["numbers"]["level"] = str(sp.Rational(level) * 4)
    assert reaudit(cert)[0].status == "rejected"
    _, attempts, verdicts = certify(_attracts([-K * X + X**3], "x", "2", _p(1, 2)))
    assert verdicts[0].status == "not proved"


def test_planar_region_of_attraction_over_the_range() -> None:
    # computed by hand: dx/dt = -x + k y, dy/dt = -k x - y + x^2 y with V = (x^2 + y^2)/2:
    # lie(V) = -x^2 - y^2 + x^2 y^2 < 0 where x^2 y^2 < x^2 + y^2, e.g. on x^2 + y^2 < 4
    m = _attracts([-X + K * Y, -K * X - Y + X**2 * Y], "x y", "1/2", _p("1/2", 2, 1))
    _, _, verdicts = certify(m)
    assert verdicts[0].status == "proved"
