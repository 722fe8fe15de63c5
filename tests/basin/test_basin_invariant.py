"""``claim E globally stable`` inside a domain: the domain shown forward invariant, V on it.

STRIP (tests/basin/conftest.py, derived by hand there): ``dx/dt = -x (1 - x^2)``,
``dy/dt = -y``; every start with |x| < 1 tends to the origin, and (1, 0) is a
second equilibrium. In the box |x| <= 1/2, |y| <= 1 the field points strictly
inward on every face (computed by hand: on x = 1/2, dx/dt = -3/8; on y = 1,
dy/dt = -1; symmetric on the other faces), so the box is forward invariant and
the origin is globally stable inside it, though not globally stable.
"""

from __future__ import annotations

import copy
import json
from fractions import Fraction

import flint
import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

import proofkit
from proofkit.audit import audit_certificate, audit_text
from proofkit.proofs import basin, prove_model

from .conftest import DISC, STRIP

STRIP_ORIGIN = STRIP.replace("equilibrium right at x = 1, y = 0\n", "")  # (1, 0) is outside
STRIP_BOX = STRIP_ORIGIN + "domain x >= -1/2 and x <= 1/2 and y >= -1 and y <= 1\n"
CLAIM = "claim origin globally stable\n"


@pytest.fixture(scope="module")
def strip_run():
    return prove_model(proofkit.parse(STRIP_BOX + CLAIM, "strip_box.pk"))


def test_globally_stable_in_an_invariant_box_is_proved_and_audited(strip_run) -> None:
    outcome = strip_run.outcomes[0]
    assert outcome.status == "proved", outcome.detail
    assert outcome.method == "lyapunov-domain"
    verdict = audit_text(strip_run.text).claims[0]
    assert verdict.status == "proved"
    assert any("no trajectory leaves" in line for line in verdict.checked)


@pytest.mark.parametrize("which", ["invariant 1", "u2", "positive", "eps"])
def test_mutated_certificates_are_rejected(strip_run, which: str) -> None:
    cert = json.loads(strip_run.text)
    ev = cert["claims"][0]["evidence"]
    if which == "eps":
        ev["numbers"]["eps"] = "0"
    else:
        gram = ev["squares"][which]["gram"]
        gram[0][0] = str(Fraction(gram[0][0]) + 1)
    assert audit_certificate(cert).claims[0].status == "rejected", which


def test_the_certificate_is_tied_to_the_domain(strip_run) -> None:
    # the same evidence for a wider box (x <= 2, where the field points outward) is rejected
    cert = copy.deepcopy(json.loads(strip_run.text))
    cert["model"]["domain"][1]["g"] = [[[1, 0], "-1"], [[0, 0], "2"]]
    assert audit_certificate(cert).claims[0].status == "rejected"


def test_box_that_is_not_invariant_is_never_proved() -> None:
    # DISC rotates: on the face x = 1/2 at y = -1/2, dx/dt = -(1/2)(1/2) + 1/2 = 1/4 > 0
    # (computed by hand), so trajectories leave the box |x|, |y| <= 1/2
    text = DISC + "domain x >= -1/2 and x <= 1/2 and y >= -1/2 and y <= 1/2\n" + CLAIM
    model = proofkit.parse(text, "disc_box.pk")
    assert prove_model(model).outcomes[0].status == "not proved"
    got = basin.attempt(model, model.claims[0])
    assert "not shown forward invariant at condition" in got.detail


def test_second_equilibrium_on_the_face_is_never_proved() -> None:
    # (1, 0) is an equilibrium (derived, conftest) on the face x = 1: it never moves
    text = STRIP + "domain x >= -1/2 and x <= 1 and y >= -1 and y <= 1\n" + CLAIM
    model = proofkit.parse(text, "strip_face.pk")
    assert prove_model(model).outcomes[0].status != "proved"
    got = basin.attempt(model, model.claims[0])
    assert "not shown forward invariant at condition 2" in got.detail  # the face x = 1


@settings(max_examples=4, deadline=None)
@given(
    hi=st.fractions(min_value=1, max_value=3, max_denominator=4),
    lo=st.fractions(min_value=Fraction(1, 4), max_value=2, max_denominator=4),
)
def test_boxes_reaching_the_second_equilibrium_are_never_proved(hi, lo) -> None:
    # x <= hi with hi >= 1 holds (1, 0), which never moves (derived, conftest): a false claim
    assume(hi >= 1)
    text = STRIP_ORIGIN + f"domain x >= -({lo}) and x <= {hi} and y >= -1 and y <= 1\n" + CLAIM
    model = proofkit.parse(text, "strip_wide.pk")
    got = basin.attempt(model, model.claims[0])
    assert got is None or got.entry["status"] != "proved"


def test_joint_projection_is_exact_and_moves_least() -> None:
    """The orthogonal projection onto the identity's affine space moves the rounded Gram
    entries no farther than a known exact solution does (common practice: a projection
    is the nearest point of the affine space)."""
    from proofkit.proofs._basin_exact import gram_form
    from proofkit.proofs._basin_invariant import _project

    ctx = flint.fmpq_mpoly_ctx.get(("x", "y"), "lex")
    x, _y = ctx.gens()
    basis = np.array([[0, 0], [1, 0], [0, 1]])
    mult = np.array([[0, 0]])
    h = 1 - x  # one multiplier of h: p0 + h * s = b' G b
    true_g = [[flint.fmpq(2), flint.fmpq(1, 2), 0], [flint.fmpq(1, 2), 3, 0], [0, 0, 1]]
    true_s = [[flint.fmpq(1, 3)]]
    p0 = gram_form(ctx, basis, true_g) - h * gram_form(ctx, mult, true_s)
    blocks = [(ctx.from_dict({(0, 0): 1}), basis, None), (-h, mult, None)]
    off = flint.fmpq(1, 1000)
    x0 = [[[e + off for e in row] for row in true_g], [[true_s[0][0] - off]]]
    got = _project(p0, blocks, x0)
    assert gram_form(ctx, basis, got[0]) - h * gram_form(ctx, mult, got[1]) == p0  # exact

    def dist(a, b):
        return sum((a[k][i][j] - b[k][i][j]) ** 2 for k in range(2) for i, j in _upper(a[k]))

    assert dist(got, x0) <= dist([true_g, true_s], x0)


def _upper(m):
    return [(i, j) for i in range(len(m)) for j in range(i, len(m))]
