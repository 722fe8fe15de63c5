"""The whole prove run on model text: range claims proved, refuted at a value, provenance ok.

Reference (published): Sparrow, The Lorenz Equations (1982); Strogatz, Nonlinear
Dynamics and Chaos, section 9.2: with sigma = 10, beta = 8/3 the convecting equilibria
are stable exactly for 1 < rho < 470/19; at rho = 25 they are unstable and (computed by
hand) sit at x = y = sqrt(8/3 * 24) = 8, z = 24.
"""

from __future__ import annotations

from proofkit import parse
from proofkit.proofs import prove_model

CONVECTION = """\
system convection
parameter sigma = 10
parameter beta = 8/3
parameter rho = {nominal} in [{lo}, {hi}]
state x, y, z
dx/dt = sigma*(y - x)
dy/dt = x*(rho - z) - y
dz/dt = x*y - beta*z
equilibrium convecting at x = sqrt(beta*(rho - 1)), y = sqrt(beta*(rho - 1)), z = rho - 1
equilibrium rest at x = 0, y = 0, z = 0
claim convecting stable
claim rest unstable
"""


def _run(nominal: int, lo: int, hi: int):
    model = parse(CONVECTION.format(nominal=nominal, lo=lo, hi=hi), "convection.pk")
    return prove_model(model)


def test_convection_proved_below_the_hopf_value() -> None:
    run = _run(10, 2, 20)
    assert run.provenance.ok
    assert [o.status for o in run.outcomes] == ["proved", "proved"]
    assert "rho in [1.00" in run.outcomes[0].detail  # the margin reaches down to rho = 1 ...
    assert "24.73" in run.outcomes[0].detail  # ... and up to 470/19 = 24.7368...


def test_convection_refuted_at_twenty_five() -> None:
    run = _run(22, 20, 30)
    assert run.provenance.ok
    first = run.outcomes[0]
    assert first.status == "refuted" and "it breaks at rho = 25" in first.detail
    evidence = run.certificate["claims"][0]["evidence"]
    assert evidence["point"] == ["8", "8", "24"]
    assert run.outcomes[1].status == "proved"
