"""The audit's side of the non-polynomial schemas: its own enclosures, and mutations rejected."""

from __future__ import annotations

import copy
import itertools
import json
from fractions import Fraction

import mpmath
import pytest
import sympy as sp
from hypothesis import assume, given
from hypothesis import strategies as st

from proofkit.analysis.enclosure import expression_json
from proofkit.audit import FormatError, audit_certificate
from proofkit.audit._intervals import (
    Dual,
    d_add,
    d_mul,
    exp_point,
    iv_sin,
    iv_tanh,
    log_point,
    pi_interval,
    point,
    sin_point,
    sqrt_point,
)
from proofkit.audit.enclosures import _read_expr, evaluate

from .conftest import full_audit_ok


def _status(cert: dict) -> str:
    try:
        return audit_certificate(cert).claims[0].status
    except FormatError:
        return "format error"


def _contains(iv: tuple[Fraction, Fraction], value: mpmath.mpf) -> bool:
    lo = mpmath.mpf(iv[0].numerator) / iv[0].denominator
    hi = mpmath.mpf(iv[1].numerator) / iv[1].denominator
    return lo <= value <= hi


rationals = st.fractions(min_value=-50, max_value=50, max_denominator=10**6)


@given(rationals)
def test_elementary_enclosures_contain_mpmath_values(x: Fraction) -> None:
    # computed (mpmath at 600 bits): every enclosure holds the value and is narrow
    mpmath.mp.prec = 600
    xm = mpmath.mpf(x.numerator) / x.denominator
    pairs = [
        (sin_point(x, 80), mpmath.sin(xm)),
        (sin_point(x, 80, True), mpmath.cos(xm)),
        (exp_point(x, 80), mpmath.exp(xm)),
        (iv_tanh((x, x), 80), mpmath.tanh(xm)),
    ]
    if x > 0:
        pairs += [(log_point(x, 80), mpmath.log(xm)), (sqrt_point(x, 80), mpmath.sqrt(xm))]
    for iv, value in pairs:
        assert _contains(iv, value)
        assert iv[1] - iv[0] <= max(Fraction(1, 2**70), abs(Fraction(str(value))) / 2**70)


@given(rationals, st.fractions(min_value=0, max_value=8, max_denominator=1000))
def test_sine_over_an_interval_contains_every_value(a: Fraction, w: Fraction) -> None:
    # computed (mpmath, 200 samples): sin and cos over [a, a + w] lie in the enclosure
    assume(w > 0)
    mpmath.mp.prec = 200
    s, c = iv_sin((a, a + w), 60), iv_sin((a, a + w), 60, cosine=True)
    for k in range(201):
        t = (
            mpmath.mpf(a.numerator) / a.denominator
            + mpmath.mpf(w.numerator) / w.denominator * k / 200
        )
        assert _contains(s, mpmath.sin(t)) and _contains(c, mpmath.cos(t))


def test_pi_enclosure() -> None:
    mpmath.mp.prec = 600
    lo, hi = pi_interval(300)
    assert _contains((lo, hi), mpmath.pi) and hi - lo < Fraction(1, 2**295)


@given(
    st.fractions(min_value=-3, max_value=3, max_denominator=1000),
    st.fractions(min_value=-3, max_value=3, max_denominator=1000),
)
def test_pendulum_energy_decreases_along_the_field(x1: Fraction, x2: Fraction) -> None:
    # published (Khalil, Nonlinear Systems, 3rd ed.; example number 4.3: memory): for x1' = x2,
    # x2' = -(g/l) sin x1 - (k/m) x2 the energy V = (g/l)(1 - cos x1) + x2^2/2 has
    # dV/dt = -(k/m) x2^2; here g/l = 10, k/m = 1. The audit's own derivative enclosures
    # of V and its enclosure of f give dV/dt = grad V . f, which must contain -x2^2.
    a, b = sp.symbols("x1 x2", real=True)
    field = [b, -10 * sp.sin(a) - b]
    energy = 10 * (1 - sp.cos(a)) + b**2 / 2
    trees = [_read_expr(expression_json(e, [a, b]), 2, "t", [0], 0) for e in (*field, energy)]
    xs = [
        Dual(point(x1), (point(Fraction(1)), point(Fraction(0)))),
        Dual(point(x2), (point(Fraction(0)), point(Fraction(1)))),
    ]
    f1, f2, v = (evaluate(t, xs, 90) for t in trees)
    lie = d_add(d_mul(Dual(v.d[0], ()), Dual(f1.v, ())), d_mul(Dual(v.d[1], ()), Dual(f2.v, ())))
    lo, hi = lie.v
    assert lo <= -(x2**2) <= hi
    assert hi - lo < Fraction(1, 2**60)


def test_enclosure_one_unit_too_tight_is_rejected(swing_run) -> None:
    cert = json.loads(swing_run.text)
    ev = cert["claims"][0]["evidence"]
    ulp = Fraction(1, 2 ** ev["precision"])
    assert _status(cert) == "proved"
    tried = 0
    for i, row in enumerate(ev["jacobian"]):
        for j, (lo, hi) in enumerate(row):
            if Fraction(lo) == Fraction(hi):
                continue  # an exact entry has no room to tighten
            for side, new in ((0, Fraction(lo) + ulp), (1, Fraction(hi) - ulp)):
                bad = copy.deepcopy(cert)
                bad["claims"][0]["evidence"]["jacobian"][i][j][side] = str(new)
                verdict = audit_certificate(bad).claims[0]
                assert verdict.status == "rejected" and verdict.failed_step == "jacobian"
                tried += 1
    assert tried >= 2  # -cos(x1 + pi/3) is the one entry that is not exact


@pytest.mark.parametrize(
    ("path", "value", "step"),
    [
        (("preconditioner",), [["0", "0"], ["0", "0"]], "krawczyk"),
        (("box",), [["1", "2"], ["-1", "1"]], "box"),
        (("routh_signs",), [1, -1, 1], "routh"),
    ],
)
def test_mutated_enclosure_evidence_rejected(swing_run, path, value, step) -> None:
    cert = json.loads(swing_run.text)
    cert["claims"][0]["evidence"][path[0]] = value
    verdict = audit_certificate(cert).claims[0]
    assert verdict.status == "rejected" and verdict.failed_step == step


def test_changed_expression_rejected(swing_run) -> None:
    cert = json.loads(swing_run.text)
    text = json.dumps(cert).replace('"sin"', '"cos"', 1)
    assert not full_audit_ok(text)
    assert _status(json.loads(text)) == "rejected"  # the point is no zero of the new field


def test_rational_point_at_a_pole_rejected(culture_run) -> None:
    # the denominator ks + s vanishes at s = -1: the audit refuses the linearization there
    cert = json.loads(culture_run.text)
    cert["model"]["equilibria"][1]["point"] = ["-1", "0"]
    cert["claims"][0]["claim"]["equilibrium"]["point"] = ["-1", "0"]
    verdict = audit_certificate(cert).claims[0]
    assert verdict.status == "rejected" and verdict.failed_step == "definedness"


def test_rational_jacobian_mutation_rejected(culture_run) -> None:
    cert = json.loads(culture_run.text)
    cert["claims"][0]["evidence"]["jacobian"][0][0] = "-1"
    assert _status(cert) == "rejected"


def test_exact_point_moved_is_rejected(swing_run) -> None:
    # the claim's exact point pi/3 changed to pi/4: not in the certified box any more
    cert = json.loads(swing_run.text)
    cert["claims"][1]["claim"]["equilibrium"]["exact"][0] = ["*", "1/4", ["pi"]]
    verdict = audit_certificate(cert).claims[1]
    assert verdict.status == "rejected" and verdict.failed_step == "box"
    assert not full_audit_ok(json.dumps(cert))


def test_certificates_validate_against_the_json_schema(culture_run, swing_run) -> None:
    from importlib import resources

    import jsonschema

    text = resources.files("proofkit").joinpath("certificate.schema.json").read_text()
    validator = jsonschema.Draft202012Validator(json.loads(text))
    for run in (culture_run, swing_run):
        validator.validate(json.loads(run.text))


@given(
    st.integers(1, 5).flatmap(
        lambda n: st.lists(
            st.lists(st.fractions(-9, 9, max_denominator=4), min_size=n, max_size=n),
            min_size=n,
            max_size=n,
        )
    )
)
def test_interval_routh_counts_match_numpy(a: list[list[Fraction]]) -> None:
    # computed (numpy): on point intervals the audit's characteristic polynomial equals
    # numpy.poly and a decided Routh column counts the eigenvalues with positive real part
    import numpy as np

    from proofkit.audit.enclosures import _interval_char_poly, _interval_routh

    cp = _interval_char_poly([[(v, v) for v in row] for row in a])
    m = np.array(a, dtype=float)
    assert np.allclose([float(lo) for lo, _ in cp], np.poly(m))
    signs = _interval_routh(cp)
    assume(0 not in signs)
    eig = np.linalg.eigvals(m)
    assume(min(abs(z.real) for z in eig) > 1e-9)
    changes = sum(1 for x, y in itertools.pairwise(signs) if x != y)
    assert changes == sum(1 for z in eig if z.real > 0)


def test_hostile_expression_trees_end_quickly(swing_run) -> None:
    # nested 64th powers would grow to millions of digits: refused past 2^4096, fast
    import time

    cert = json.loads(swing_run.text)
    tree: list = ["var", 0]
    for _ in range(6):
        tree = ["^", ["+", tree, "123456789/7"], 64]
    cert["model"]["expressions"]["components"][0] = tree
    t0 = time.monotonic()
    verdicts = audit_certificate(cert).claims
    assert all(v.status == "rejected" for v in verdicts)
    assert time.monotonic() - t0 < 5
    for bad in (["sin"], ["var", 7], ["^", ["var", 0], 65], ["frobnicate", "1"], 3):
        cert["model"]["expressions"]["components"][0] = bad
        assert _status(cert) == "format error"


def test_conditions_where_the_field_is_defined_are_checked(culture_run, swing_run) -> None:
    # a condition that fails at the point (culture: -s > 0 at s = 1) or somewhere in the
    # Krawczyk box (swing: x1 - 1 > 0 near 0) rejects the linearization, core only
    cert = json.loads(culture_run.text)
    cert["model"]["conditions"].append({"g": [[[1, 0], "-1"]], "strict": True})
    assert audit_certificate(cert).claims[0].status == "rejected"
    # a field without polynomial form states its conditions over no variables: constants
    cert = json.loads(swing_run.text)
    cert["model"]["conditions"].append({"g": [[[], "-1"]], "strict": True})
    verdict = audit_certificate(cert).claims[0]
    assert verdict.status == "rejected" and verdict.failed_step == "definedness"
