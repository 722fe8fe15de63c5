"""``globally stable`` inside a domain when the equilibrium is not exponentially stable.

Check values and where they come from:

* ``CUBIC``: ``dx/dt = -x^3`` in ``x^2 <= 4``. The linearization is 0 (no exponential
  stability), yet V = x^2 gives lie(V) = -2 x^4 < 0 away from 0, and the field points
  inward on both faces (-8 at x = 2, +8 at x = -2): computed by hand. So the claim is
  true but needs the decrease margin eps (x^2)^2 rather than eps x^2.
* ``MIXED``: ``dx/dt = -x^3 + x y``, ``dy/dt = -y - x^2`` in the unit disc. V = x^2 + y^2
  gives lie(V) = -2 x^4 - 2 y^2 (computed by hand: the x^2 y terms cancel), and on the
  circle lie(V) < 0 as well, so the disc is forward invariant; the Jacobian at 0 is
  diag(0, -1) (computed by hand).
* ``CENTRE``: ``dx/dt = y``, ``dy/dt = -x`` in the unit disc: every circle is an orbit
  (common practice), so nothing tends to the point and the claim is false.
* ``CUBIC_RATIONAL``: ``dx/dt = -x^3 / (1 + x^2)`` in ``x^2 <= 4``: the same orbits as
  CUBIC at the positive speed 1/(1 + x^2) (computed by hand).
"""

from __future__ import annotations

import copy
import json

import pytest

import proofkit
from proofkit.audit import audit_certificate, audit_text
from proofkit.proofs import prove_model

CUBIC = "state x\ndx/dt = -x^3\ndomain x^2 <= 4\nequilibrium o at x = 0\nclaim o globally stable\n"
MIXED = """\
state x, y
dx/dt = -x^3 + x*y
dy/dt = -y - x^2
domain x^2 + y^2 <= 1
equilibrium o at x = 0, y = 0
claim o globally stable
"""
CENTRE = """\
state x, y
dx/dt = y
dy/dt = -x
domain x^2 + y^2 <= 1
equilibrium o at x = 0, y = 0
claim o globally stable
"""
CUBIC_RATIONAL = CUBIC.replace("-x^3", "-x^3/(1 + x^2)")


@pytest.fixture(scope="module")
def cubic_run():
    return prove_model(proofkit.parse(CUBIC, "cubic.pk"))


def _entry(run) -> dict:
    return json.loads(run.text)["claims"][0]


def test_cubic_decay_in_a_box_is_proved_with_a_margin_power(cubic_run) -> None:
    outcome = cubic_run.outcomes[0]
    assert outcome.status == "proved", outcome.detail
    assert outcome.method == "lyapunov-domain"
    entry = _entry(cubic_run)
    assert entry["evidence"]["margin_power"] >= 2  # eps x^2 cannot hold: lie(V) = O(x^4)
    verdict = audit_text(cubic_run.text).claims[0]
    assert verdict.status == "proved"
    assert any("no trajectory leaves" in line for line in verdict.checked)


@pytest.mark.parametrize("power", [1, 5, 0, "2", True, None])
def test_a_tampered_margin_power_is_rejected(cubic_run, power) -> None:
    cert = json.loads(cubic_run.text)
    ev = cert["claims"][0]["evidence"]
    if power is None:
        del ev["margin_power"]  # absent means 1: eps x^2 is not covered by the Gram matrix
    else:
        ev["margin_power"] = power
    assert audit_certificate(cert).claims[0].status == "rejected", power


def test_certificates_without_a_margin_power_keep_their_meaning() -> None:
    # a Hurwitz example (dx/dt = -x - x^3, common practice: the field at x = +-2 is -+10)
    # is proved with margin power 1; the same certificate without the key audits too
    run = prove_model(proofkit.parse(CUBIC.replace("-x^3", "-x - x^3"), "linear.pk"))
    cert = json.loads(run.text)
    assert cert["claims"][0]["evidence"]["margin_power"] == 1
    del cert["claims"][0]["evidence"]["margin_power"]
    assert audit_certificate(cert).claims[0].status == "proved"
    bad = copy.deepcopy(cert)
    bad["claims"][0]["evidence"]["margin_power"] = 3  # -lie(V) has a nonzero x^2 term
    assert audit_certificate(bad).claims[0].status == "rejected"


def test_zero_eigenvalue_beside_a_stable_one_is_proved() -> None:
    run = prove_model(proofkit.parse(MIXED, "mixed.pk"))
    assert run.outcomes[0].status == "proved", run.outcomes[0].detail
    assert _entry(run)["evidence"]["margin_power"] >= 2
    assert audit_text(run.text).claims[0].status == "proved"


def test_a_centre_is_never_proved() -> None:
    run = prove_model(proofkit.parse(CENTRE, "centre.pk"))
    assert run.outcomes[0].status == "not proved"


def test_rational_cubic_decay_in_a_box_is_proved() -> None:
    run = prove_model(proofkit.parse(CUBIC_RATIONAL, "cubic_rational.pk"))
    outcome = run.outcomes[0]
    assert outcome.status == "proved", outcome.detail
    assert outcome.method == "lyapunov-domain-rational"
    entry = _entry(run)
    assert entry["evidence"]["reparametrized"]["margin_power"] >= 2
    assert audit_text(run.text).claims[0].status == "proved"
