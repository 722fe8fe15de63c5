"""A false ``attracts`` claim is refuted with exact evidence that the audit re-checks."""

from __future__ import annotations

import proofkit
from proofkit.audit import audit_text
from proofkit.proofs import prove_model

# Computed by hand: x - x^3 = x (1 - x)(1 + x), so dx/dt = x - x^3, dy/dt = -y has
# equilibria at x = -1, 0, 1 (y = 0); the disc of radius 2 about (1, 0) holds (0, 0).
BISTABLE = """
state x, y
dx/dt = x - x^3
dy/dt = -y
equilibrium right at x = 1, y = 0
equilibrium middle at x = 0, y = 0
claim right attracts (x - 1)^2 + y^2 <= 4
"""


def test_second_equilibrium_in_the_set_refutes_the_claim() -> None:
    run = prove_model(proofkit.parse(BISTABLE))
    (outcome,) = run.outcomes
    assert outcome.status == "refuted"
    assert outcome.method == "equilibrium-in-set"
    assert "x = 0, y = 0" in outcome.detail
    # The final certificate text says refuted, and the audit checked the evidence itself.
    verdict = audit_text(run.text).claims[0]
    assert verdict.status == "refuted"


def test_refutation_at_a_point_that_is_not_an_equilibrium_is_rejected() -> None:
    run = prove_model(proofkit.parse(BISTABLE))
    head, sep, tail = run.text.rpartition('"point": ["0", "0"]')  # the evidence's point
    assert sep
    not_an_equilibrium = head + '"point": ["1/2", "0"]' + tail  # f1 = 3/8 there
    assert audit_text(not_an_equilibrium).claims[0].status == "rejected"
    outside = head + '"point": ["-1", "1"]' + tail  # not a zero of f2 = -y either
    assert audit_text(outside).claims[0].status == "rejected"
