"""The audit names an exactly known irrational point (pi/3) in its own sentence."""

from __future__ import annotations

import proofkit
from proofkit.audit import audit_text
from proofkit.proofs import prove_model

# Damped swing equation: (pi/3, 0) is an equilibrium since sin(pi/3 + pi/3) = sin(pi/3)
# (common practice: sin(2pi/3) = sin(pi/3)), and a saddle there (computed by hand:
# the Jacobian [[0, 1], [-cos(2pi/3), -1/2]] = [[0, 1], [1/2, -1/2]] has determinant -1/2).
SWING = """
state x1, x2
dx1/dt = x2
dx2/dt = -x2/2 - (sin(x1 + pi/3) - sin(pi/3))
equilibrium saddle at x1 = pi/3, x2 = 0
claim saddle unstable
"""


def test_sentence_shows_the_exact_point() -> None:
    run = prove_model(proofkit.parse(SWING))
    assert run.outcomes[0].status == "proved"
    verdict = audit_text(run.text).claims[0]
    assert verdict.status == "proved"
    assert "pi" in verdict.sentence and "not stated" not in verdict.sentence
