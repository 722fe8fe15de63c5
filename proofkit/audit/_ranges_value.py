"""Schemas refuting a range claim at one parameter value (``indirect-method-*-at-a-value``).

A rational value ``p*`` inside the box, the radical's value ``r* = c sqrt(d)`` with
``c^2 d = g(p*)`` (``d`` is the claim's number field; ``r* = c`` without one) and the
claim's equilibrium there (recomputed from its ``moving`` structure); the audit
substitutes ``p*`` exactly into the field and checks the point, det(sI - J) and a
regular Routh array of ``(s+1)^k q(s + h)``: a root with real part ``> h >= 0``
refutes "stable for every value"; an array of ``q`` itself with a positive first
column refutes "unstable for every value". Registered by :mod:`proofkit.audit.ranges`.

This module must never import anything outside the standard library and
:mod:`proofkit.audit`, and never use floating point.
"""

from __future__ import annotations

from collections.abc import Sequence
from fractions import Fraction

from proofkit.audit.algebra import (
    char_poly,
    poly_derivative,
    poly_eval,
    routh_rows,
    shift_and_multiply,
    sign_changes,
)
from proofkit.audit.numbers import Num
from proofkit.audit.ranges import MAX_POWER, METHOD, Q, _System, _value
from proofkit.audit.read import get, only_keys, read_number, read_vector
from proofkit.audit.schemas import Checks, ClaimData, ModelData, require, schema

__all__ = ["range_refute_stable", "range_refute_unstable"]


def _at_value(model: ModelData, claim: ClaimData, checks: Checks) -> tuple[list[list[Num]], Num]:
    """Check the point and the Routh array at ``p*``; return the first column rows and shift."""
    ev, w, d = claim.evidence, f"{claim.where}.evidence", claim.d
    only_keys(ev, {"parameters", "radical", "point", "characteristic_polynomial", "routh"}, w)
    sys = _System(model, claim)
    vals = get(ev, "parameters", dict, w)
    require(sorted(vals) == sorted(sys.params), "value", "give a value for every parameter")
    pstar = [read_number(vals[p], 0, f"{w}.parameters.{p}").a for p in sys.params]
    for p, v, (lo, hi) in zip(sys.params, pstar, sys.box, strict=True):
        require(lo <= v <= hi, "value", f"{p} = {v} is outside [{lo}, {hi}]")
    pt = [Num.of(v, d) for v in pstar]
    if sys.g is not None:
        c = read_number(get(ev, "radical", str, w), 0, f"{w}.radical").a
        g_at = _value(sys.g, [*pt, Num.of(0)])
        require(
            c >= 0 and c * c * (d or 1) == g_at.a and g_at.b == 0,
            "radical",
            "the stated value of the radical squared is not g(p*)",
        )
        pt.append(Num(Fraction(0), c, d) if d else Num.of(c))
    else:
        require(ev.get("radical") is None, "radical", "the point has no radical")
    point = [_value(c, pt) for c in sys.coords]
    require(
        point == read_vector(get(ev, "point", list, w), d, f"{w}.point", sys.n),
        "equilibrium",
        "the stated point is not the claim's point at these values",
    )
    n = sys.n
    fields = [_at_params(f, pstar, n, d) for f in sys.field]
    for i, f in enumerate(fields):
        require(poly_eval(f, point).is_zero(), "equilibrium", f"f{i + 1} is not 0 at the point")
    scale = _defined_scales(sys, pstar, point, d)
    jac = [
        [poly_eval(poly_derivative(f, j), point) * scale[i] for j in range(n)]
        for i, f in enumerate(fields)
    ]
    cp = char_poly(jac)
    require(
        cp == read_vector(get(ev, "characteristic_polynomial", list, w), d, f"{w}.cp", n + 1),
        "characteristic polynomial",
        "differs from det(sI - J) at the value",
    )
    shown = ", ".join(f"{p} = {v}" for p, v in zip(sys.params, pstar, strict=True))
    checks.ok(
        f"at {shown} (inside the ranges) the point is an exact zero of the field; "
        "det(sI - J) recomputed there"
    )
    ro, rw = get(ev, "routh", dict, w), f"{w}.routh"
    only_keys(ro, {"shift", "multiplier_power", "polynomial", "rows", "sign_changes"}, rw)
    shift = read_number(get(ro, "shift", str, rw), 0, f"{rw}.shift")
    power = get(ro, "multiplier_power", int, rw)
    require(0 <= power <= MAX_POWER and shift.sign() >= 0, "routh", "shift >= 0, power 0..4")
    q = shift_and_multiply(cp, Num.of(shift.a, d), power)
    require(
        q == read_vector(get(ro, "polynomial", list, rw), d, f"{rw}.polynomial"),
        "routh",
        "the stated polynomial is not (s+1)^k p(s + shift)",
    )
    rows = routh_rows(q)
    require(rows is not None, "routh", "the Routh array is not regular")
    assert rows is not None
    stated = get(ro, "rows", list, rw)
    require(
        len(stated) == len(rows)
        and rows == [read_vector(r, d, f"{rw}.rows[{i}]") for i, r in enumerate(stated)],
        "routh",
        "the stated Routh array differs from the recomputed one",
    )
    changes = sign_changes([r[0] for r in rows])
    require(changes == get(ro, "sign_changes", int, rw), "routh", "wrong number of sign changes")
    return rows, shift


def _defined_scales(sys: _System, pstar: Sequence[Fraction], point: list[Num], d: int) -> list[Num]:
    """``1 / D_i`` at the point (1 for a polynomial field), after checking that every
    denominator is nonzero and every condition of the field positive there, so that the
    Jacobian of ``N / D`` at a zero of ``N`` is ``diag(1 / D_i) J_N``."""
    n = sys.n
    for k, g in enumerate(sys.defined):
        value = poly_eval(_at_params(g, pstar, n, d), point)
        require(value.sign() > 0, "defined", f"condition {k + 1} of the field fails at the point")
    out = []
    for i, den in enumerate(sys.dens or [None] * n):
        if den is None:
            out.append(Num.of(1, d))
            continue
        value = poly_eval(_at_params(den, pstar, n, d), point)
        require(not value.is_zero(), "defined", f"denominator {i + 1} vanishes at the point")
        out.append(Num.of(1, d) / value)
    return out


def _at_params(f: Q, pstar: Sequence[Fraction], n: int, d: int) -> dict[tuple[int, ...], Num]:
    """A field component over (states, parameters) with the parameters set to ``pstar``."""
    out: dict[tuple[int, ...], Fraction] = {}
    for e, c in f.items():
        v = c
        for x, k in zip(pstar, e[n:], strict=True):
            v *= x**k
        out[e[:n]] = out.get(e[:n], Fraction(0)) + v
    return {e: Num.of(c, d) for e, c in out.items() if c}


@schema("stable", METHOD, "indirect-method-instability-at-a-value", scopes=("range",), refutes=True)
def range_refute_stable(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """At one value in the ranges some root of det(sI - J) has positive real part."""
    rows, shift = _at_value(model, claim, checks)
    changes = sign_changes([r[0] for r in rows])
    require(changes >= 1, "theorem", "no sign change: no root in the right half plane shown")
    checks.ok(
        f"{changes} root(s) of det(sI - J) have real part > {shift.a} >= 0 there: the "
        "equilibrium is unstable at that value, so not stable for every value"
    )


@schema("unstable", METHOD, "indirect-method-stability-at-a-value", scopes=("range",), refutes=True)
def range_refute_unstable(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """At one value in the ranges every root of det(sI - J) has negative real part."""
    rows, shift = _at_value(model, claim, checks)
    ok = shift.is_zero() and len(rows) == len(model.states) + 1
    require(
        ok and all(r[0].sign() > 0 for r in rows),
        "theorem",
        "stability needs the Routh array of det(sI - J) itself with a positive first column",
    )
    checks.ok(
        "all first-column entries are positive there: the equilibrium is asymptotically "
        "stable at that value, so not unstable for every value"
    )
