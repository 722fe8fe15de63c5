"""Stability over parameter ranges for fields with sin/cos (``range-enclosure``).

Check values: eigenvalues of the swing equation's Jacobian by numpy (computed: at
d = 0 the Jacobian is [[0, 1], [-cos(pi/3), -c]] = [[0, 1], [-1/2, -c]]; at the saddle
d = pi/3, [[0, 1], [-cos(2 pi/3), -c]] = [[0, 1], [1/2, -c]]).
"""

from __future__ import annotations

import copy
import json

import numpy as np

import proofkit
from proofkit.audit import audit_text
from proofkit.proofs import prove_model

SWING = """system swing_range
parameter damping = 1/2 in [{lo}, {hi}]
state d, w
dd/dt = w
dw/dt = -damping*w - (sin(d + pi/3) - sin(pi/3))
equilibrium operating at d = 0, w = 0
equilibrium saddle at d = pi/3, w = 0
claim operating stable
claim saddle unstable
"""


def _eigen(c: float, k: float) -> np.ndarray:
    """Computed (numpy): eigenvalues of [[0, 1], [-k, -c]]."""
    return np.linalg.eigvals(np.array([[0.0, 1.0], [-k, -c]]))


def _run(lo: str, hi: str):
    return prove_model(proofkit.parse(SWING.format(lo=lo, hi=hi), "swing_range.pk"))


def test_swing_stable_and_saddle_unstable_for_every_damping() -> None:
    run = _run("1/5", "1")
    stable, saddle = run.outcomes
    assert stable.status == "proved" and stable.method == "range-enclosure"
    assert saddle.status == "proved" and saddle.method == "range-enclosure"
    assert run.audit.accepted
    for c in np.linspace(0.2, 1.0, 9):
        assert max(_eigen(c, 0.5).real) < 0  # computed (numpy)
        assert max(_eigen(c, -0.5).real) > 0


def test_negative_damping_in_the_range_is_refuted_at_a_value() -> None:
    # computed (numpy): with damping -1/2 the operating point has eigenvalues with real
    # part +1/4, so "stable for every damping in [-1/2, 1]" is false.
    assert max(_eigen(-0.5, 0.5).real) > 0
    run = _run("-1/2", "1")
    outcome = run.outcomes[0]
    assert outcome.status == "refuted" and "damping = -1/2" in outcome.detail
    assert run.audit.claims[0].status == "refuted"
    # the same evidence moved to a value outside the ranges is rejected
    moved = _tampered(
        run.text, lambda ev: ev["pieces"][0].__setitem__("parameters", [["-1", "-1"]])
    )
    assert audit_text(moved).claims[0].status == "rejected"


def _tampered(text: str, change) -> str:
    data = json.loads(text)
    change(data["claims"][0]["evidence"])
    return json.dumps(data)


def test_tampered_pieces_are_rejected() -> None:
    text = _run("1/5", "1").text
    assert audit_text(text).claims[0].status == "proved"

    def drop_piece(ev: dict) -> None:
        ev["pieces"] = ev["pieces"][:-1] if len(ev["pieces"]) > 1 else []

    def collapse_jacobian(ev: dict) -> None:  # a point where an interval is needed
        lo, _hi = ev["pieces"][0]["jacobian"][1][1]
        ev["pieces"][0]["jacobian"][1][1] = [lo, lo]

    def widen_parameters(ev: dict) -> None:  # a piece reaching outside the declared range
        ev["pieces"][0]["parameters"][0][0] = "0"

    for change in (drop_piece, collapse_jacobian, widen_parameters):
        report = audit_text(_tampered(copy.deepcopy(text), change))
        assert report.claims[0].status == "rejected", change.__name__
