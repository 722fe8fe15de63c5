"""Linearization over parameter ranges for rational fields (``range-linearization``).

Where ``sigma Q > 0`` (``Q`` the product of the distinct denominators) the Jacobian
of ``N / D`` at a zero of ``N`` is ``B / (sigma Q)``; the cover proves ``sigma Q``,
the field's conditions and the Hurwitz conditions of ``det(sI - B)`` on the box.
Verdicts are checked against sympy's eigenvalues of the rational field's Jacobian
(computed) and the chemostat's textbook behaviour (memory: Smith and Waltman, The
Theory of the Chemostat, Cambridge University Press 1995, ch. 1 -- the interior
equilibrium of the basic chemostat is stable whenever it exists).
"""

from __future__ import annotations

import json

import pytest
import sympy as sp

import proofkit
from proofkit.audit import audit_text
from proofkit.proofs import prove_model

CULTURE = """system culture_range
parameter dilution = 1/2
parameter feed = 3 in [{lo}, {hi}]
state s, x
let growth = s/(1 + s)
ds/dt = dilution*(feed - s) - growth*x
dx/dt = (growth - dilution)*x
domain s >= 1/10 and s <= 6 and x >= 0 and x <= 6
equilibrium steady at s = 1, x = feed - 1
claim steady stable
claim steady unstable
"""

SKEW = """system skew
parameter k = 3/2 in [1, 2]
state x, y
dx/dt = x/(x - k) + y
dy/dt = -y/(1 + y^2) - x
equilibrium e at x = 0, y = 0
claim e stable
"""


def _eigen_real_parts(feed: sp.Rational) -> list[float]:
    """Computed: sympy's exact Jacobian of the rational field at (1, feed - 1), eigenvalues."""
    s, x = sp.symbols("s x")
    growth = s / (1 + s)
    f = sp.Matrix([sp.Rational(1, 2) * (feed - s) - growth * x, (growth - sp.Rational(1, 2)) * x])
    jac = f.jacobian([s, x]).subs({s: 1, x: feed - 1})
    return [float(sp.re(ev)) for ev in jac.eigenvals()]


def test_culture_stable_over_the_feed_range_and_refuted_instability() -> None:
    run = prove_model(proofkit.parse(CULTURE.format(lo="5/2", hi=4), "culture.pk"))
    stable, unstable = run.outcomes
    assert stable.status == "proved" and stable.method == "range-linearization"
    assert unstable.status == "refuted"  # stable at a value in the range: exact evidence
    assert run.audit.accepted
    for feed in (sp.Rational(5, 2), sp.Rational(3), sp.Rational(4)):
        assert max(_eigen_real_parts(feed)) < 0  # computed (sympy): agrees with the proof
    entry = run.certificate["claims"][0]
    assert entry["evidence"]["denominator_sign"] == 1


def test_culture_washout_boundary_is_never_inside_a_proved_range() -> None:
    # feed = 1 puts the biomass at x = 0: the equilibrium meets the washout state and a
    # root of the linearization reaches 0 (computed: eigenvalue dx/dx = growth - dilution
    # = 0 there), so a range reaching feed = 1 must not be proved.
    assert max(_eigen_real_parts(sp.Rational(1))) == 0
    run = prove_model(proofkit.parse(CULTURE.format(lo=1, hi=4), "culture.pk"))
    assert run.outcomes[0].status != "proved"


def test_negative_denominator_at_the_point() -> None:
    run = prove_model(proofkit.parse(SKEW, "skew.pk"))
    (outcome,) = run.outcomes
    assert outcome.status == "proved" and run.audit.accepted
    assert run.certificate["claims"][0]["evidence"]["denominator_sign"] == -1
    # computed (sympy): J = [[-1/k, 1], [-1, -1]] has trace < 0 and det 1/k + 1 > 0 on [1, 2]
    k = sp.Symbol("k", positive=True)
    jac = sp.Matrix([[-1 / k, 1], [-1, -1]])
    for value in (1, sp.Rational(3, 2), 2):
        assert all(float(sp.re(ev)) < 0 for ev in jac.subs(k, value).eigenvals())


@pytest.mark.parametrize(
    "tamper",
    [
        lambda ev: ev.__setitem__("denominator_sign", -ev["denominator_sign"]),
        lambda ev: ev.pop("denominator_sign"),
        lambda ev: ev.__setitem__("conditions", ev["conditions"][1:]),
    ],
    ids=["sign flipped", "sign removed", "positivity of sigma Q dropped"],
)
def test_tampered_rational_range_evidence_is_rejected(tamper) -> None:
    run = prove_model(proofkit.parse(SKEW, "skew.pk"))
    data = json.loads(run.text)
    ev = data["claims"][0]["evidence"]
    tamper(ev)
    if "cover" in ev and len(ev["conditions"]) < len(ev["cover"][0]["signs"]):
        for leaf in ev["cover"]:
            leaf["signs"] = leaf["signs"][1:]
    report = audit_text(json.dumps(data))
    assert report.claims[0].status == "rejected"


MOVING = """system culture_moving
parameter dilution = 1/2 in [2/5, 3/5]
state s, x
let growth = s/(1 + s)
ds/dt = dilution*(3 - s) - growth*x
dx/dt = (growth - dilution)*x
equilibrium steady at s = {s}, x = 3 - dilution/(1 - dilution)
claim steady stable at nominal
"""


def test_a_point_rational_in_the_parameters_is_checked_identically() -> None:
    # growth(s*) = dilution at s* = dilution/(1 - dilution) (computed by hand: s/(1+s) = D
    # gives s = D/(1-D)), so f vanishes identically in dilution; the check is an identity
    # of rational functions, nothing in the model is simplified.
    model = proofkit.parse(MOVING.format(s="dilution/(1 - dilution)"), "moving.pk")
    run = prove_model(model)
    assert run.outcomes[0].status == "proved" and run.audit.accepted
    with pytest.raises(proofkit.InputError, match="not an equilibrium"):
        proofkit.parse(MOVING.format(s="dilution/(1 + dilution)"), "moving.pk")
