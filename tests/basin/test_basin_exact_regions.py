"""Systems whose region of attraction is known exactly (derivations in conftest.py)."""

from __future__ import annotations

import math
from fractions import Fraction

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import proofkit
from proofkit.audit import audit_text
from proofkit.certificate import dumps, model_section, new_certificate
from proofkit.proofs import basin

from .conftest import DISC, STRIP


def _v(run):
    ev = run.certificate["claims"][-1]["evidence"]
    return {tuple(e): float(Fraction(c)) for e, c in ev["V"]}, float(
        Fraction(ev["numbers"]["level"])
    )


def _inside(v, level, pts):
    vals = sum(c * pts[:, 0] ** e[0] * pts[:, 1] ** e[1] for e, c in v.items())
    return vals <= level


@pytest.fixture(scope="module")
def disc_run():
    model = proofkit.parse(DISC, "disc.pk")
    return basin.estimate_basin(model, "origin", degree=2, seconds_per_degree=4)


def test_disc_set_lies_in_the_unit_disc_and_fills_it(disc_run):
    assert disc_run.status == "proved", disc_run.reason
    assert audit_text(disc_run.text).claims[-1].status == "proved"
    v, level = _v(disc_run)
    th = np.linspace(0, 2 * np.pi, 720)
    circle = np.column_stack([np.cos(th), np.sin(th)])
    assert not _inside(v, level, circle).any()  # the unit circle is outside the set
    assert _inside(v, level, 0.97 * circle).all()  # and the set comes within 3 % of it
    assert disc_run.size["value"] <= math.pi  # common practice: the unit disc has area pi


def test_strip_set_stays_inside_the_strip():
    model = proofkit.parse(STRIP, "strip.pk")
    run = basin.estimate_basin(model, "origin", degree=2, seconds_per_degree=4)
    assert run.status == "proved", run.reason
    v, level = _v(run)
    ys = np.linspace(-20, 20, 801)
    for x in (1.0, -1.0):  # the lines |x| = 1 are outside (derived: basin is |x| < 1)
        assert not _inside(v, level, np.column_stack([np.full_like(ys, x), ys])).any()
    assert _inside(v, level, np.array([[0.9, 0.0], [-0.9, 0.0]])).all()  # close in x


def _claim_model(text: str, claim: str) -> proofkit.Model:
    return proofkit.parse(text + claim + "\n", "claim.pk")


def _audited_status(model, attempt) -> str:
    cert = new_certificate(model_section(model), [attempt.entry])
    return audit_text(dumps(cert)).claims[0].status


def test_true_claim_is_proved_and_audited():
    model = _claim_model(DISC, "claim origin attracts x^2 + y^2 <= 1/2")
    got = basin.attempt(model, model.claims[0])
    assert got.entry["status"] == "proved", got.detail
    assert _audited_status(model, got) == "proved"


def test_false_claim_is_refuted_with_an_exact_start_in_the_set():
    model = _claim_model(DISC, "claim origin attracts x^2 + y^2 <= 4")
    got = basin.attempt(model, model.claims[0])
    # "refuted" once the audit checks simulation counterexamples; until then "not proved"
    assert got.entry["status"] in ("refuted", "not proved")
    assert "the claim is false" in got.detail
    cx = got.entry["counterexample"]
    x, y = (Fraction(c) for c in cx["start"])
    assert x * x + y * y <= 4 and x * x + y * y > 1  # outside the true basin (derived)
    assert cx["kind"] == "escaped"
    assert len(cx["trajectory"]["t"]) == len(cx["trajectory"]["x"]) > 2


@settings(max_examples=6, deadline=None)
@given(
    a=st.fractions(min_value=-2, max_value=2, max_denominator=8),
    b=st.fractions(min_value=-2, max_value=2, max_denominator=8),
    r=st.fractions(min_value=Fraction(1, 8), max_value=2, max_denominator=8),
)
def test_false_attracts_claims_are_never_proved(a, b, r):
    """The disc (x-a)^2 + (y-b)^2 <= r^2 reaching the unit circle is not in the basin."""
    from hypothesis import assume

    assume(math.hypot(a, b) + r >= 1)
    claim = f"claim origin attracts (x - ({a}))^2 + (y - ({b}))^2 <= ({r})^2"
    model = _claim_model(DISC, claim)
    saved = basin.DEGREES
    basin.DEGREES = (2,)
    try:
        got = basin.attempt(model, model.claims[0])
    finally:
        basin.DEGREES = saved
    assert got.entry["status"] != "proved"


def test_domain_caps_the_certified_set():
    text = DISC + "domain x^2 <= 1/4\n"
    run = basin.estimate_basin(
        proofkit.parse(text, "d.pk"), "origin", degree=2, seconds_per_degree=2
    )
    assert run.status == "proved", run.reason
    v, level = _v(run)
    ys = np.linspace(-3, 3, 601)
    for x in (0.5, -0.5):  # the set stays inside |x| <= 1/2
        pts = np.column_stack([np.full_like(ys, x * 1.0001), ys])
        assert not _inside(v, level, pts).any()


@settings(max_examples=8, deadline=None)
@given(
    a=st.integers(-3, 3), b=st.integers(-3, 3), c=st.integers(-3, 3), d=st.integers(-3, 3),
    k=st.integers(-2, 2),
)  # fmt: skip
def test_unstable_linearization_is_never_attracting(a, b, c, d, k):
    from hypothesis import assume

    assume(a + d > 0 or a * d - b * c < 0)  # trace > 0 or det < 0: an eigenvalue with Re > 0
    text = (
        f"state x, y\ndx/dt = {a}*x + {b}*y + {k}*x^3\ndy/dt = {c}*x + {d}*y - y^3\n"
        "equilibrium origin at x = 0, y = 0\nclaim origin attracts x^2 + y^2 <= 1/100\n"
    )
    model = proofkit.parse(text, "u.pk")
    got = basin.attempt(model, model.claims[0])
    assert got.entry["status"] != "proved"
