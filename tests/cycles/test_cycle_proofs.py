"""Proofs for and against periodic orbits: audited certificates, false claims, mutations.

Sources of the facts checked here:
- duct whistle (worked/duct_whistle.pk, an invented demo): by hand, W = p^2 + 2 v^2
  has lie(W) = 2 g (p^2 + v^2) with g = 1 - W, and div f = 3/2 - 7/2 p^2 - 5 v^2;
- the system dx/dt = y, dy/dt = -x - y + x^2 + y^2 has the Dulac function exp(-2x) with
  div(B f) = -exp(-2x) (published: Strogatz, Nonlinear Dynamics and Chaos, section 7.2; the
  exercise number: memory). Computed by hand here: its truncation
  B = -(1 - 2x + 2x^2) gives div(B f) = 1 - 2x + 2x^2 - 4x^2 y (checked with sympy
  below), positive on the disc x^2 + y^2 <= 9/25, while div f = -1 + 2y changes sign
  there, so Bendixson's criterion (B constant) cannot work;
- van der Pol (mu = 1): its cycle has amplitude 2.0086 (published, Hairer & Wanner),
  so the disc x^2 + y^2 <= 1/4 holds none and x^2 + y^2 <= 16 holds one.
"""

from __future__ import annotations

import copy
import json
import math
from fractions import Fraction
from pathlib import Path

import pytest
import sympy as sp
from hypothesis import given, settings
from hypothesis import strategies as st

from proofkit import load, parse
from proofkit.audit import FormatError, audit_text
from proofkit.proofs import prove_model
from proofkit.proofs._cycles_search import Planar, dulac_program

WORKED = Path(__file__).resolve().parents[2] / "worked" / "duct_whistle.pk"

STROGATZ = """system dulac_example
state x, y
dx/dt = y
dy/dt = -x - y + x^2 + y^2
claim no cycle in x^2 + y^2 <= 9/25
"""

VDP = """system van_der_pol
state x, y
dx/dt = y
dy/dt = (1 - x^2)*y - x
equilibrium rest at x = 0, y = 0
claim no cycle in (x - 4)^2 + y^2 <= 1
claim cycle in x^2 + y^2 <= 1/4
claim no cycle in x^2 + y^2 <= 16
"""


@pytest.fixture(scope="module")
def duct() -> object:
    return prove_model(load(WORKED))


@pytest.fixture(scope="module")
def vdp() -> object:
    return prove_model(parse(VDP, "vdp.pk"))


def _status(text: str, k: int) -> str:
    try:
        return audit_text(text).claims[k].status
    except FormatError:
        return "format error"


def test_duct_whistle_claims_all_proved_and_audited(duct) -> None:
    statuses = {o.claim: (o.status, o.method) for o in duct.outcomes}
    assert statuses["cycle in p^2 + 2*v^2 >= 1/4 and p^2 + 2*v^2 <= 4"] == ("proved", "annulus")
    assert statuses["no cycle in p^2 + v^2 <= 1/4"] == ("proved", "dulac")
    assert statuses["no cycle in p >= 3/2"] == ("proved", "no-equilibrium")
    assert duct.audit.accepted and duct.provenance.ok
    assert {v.status for v in duct.audit.claims} == {"proved"}


def test_van_der_pol_true_and_false_claims(vdp) -> None:
    status = [(o.status, o.method) for o in vdp.outcomes]
    assert status[0] == ("proved", "no-equilibrium")  # index argument: no equilibrium there
    assert status[1][0] == "not proved"  # no cycle lies in the small disc
    assert status[2][0] == "not proved"  # the disc holds the cycle
    assert "numerically, a periodic orbit" in vdp.outcomes[2].detail
    assert vdp.audit.accepted


@pytest.mark.slow
@pytest.mark.parametrize(("mu", "disc"), [("1", "16"), ("2", "25")])
def test_van_der_pol_annulus_proof(mu: str, disc: str) -> None:
    head = VDP.split("claim")[0].replace("(1 - x^2)*y", f"{mu}*(1 - x^2)*y")
    model = parse(head + f"claim cycle in x^2 + y^2 <= {disc}\n", "vdp.pk")
    run = prove_model(model)
    assert run.outcomes[0].status == "proved" and run.outcomes[0].method == "annulus"
    assert run.audit.claims[0].status == "proved"


def test_dulac_function_derived_by_hand() -> None:
    x, y = sp.symbols("x y", real=True)
    f = (y, -x - y + x**2 + y**2)
    b = -(1 - 2 * x + 2 * x**2)
    div = sp.expand(sp.diff(b * f[0], x) + sp.diff(b * f[1], y))
    assert div == sp.expand(1 - 2 * x + 2 * x**2 - 4 * x**2 * y)  # by hand (module docstring)
    disc = ((sp.Rational(9, 25) - x**2 - y**2, False),)
    pl = Planar((x, y), f, disc)
    found = dulac_program(pl, 2, Fraction(1, 10), fixed=b)
    assert found.evidence is not None, found.reason
    for const in (1, -1):  # Bendixson's criterion: div f changes sign on the disc
        assert dulac_program(pl, 0, Fraction(1, 10**6), fixed=sp.Integer(const)).evidence is None
    # The hand-made B in a certificate: the audit accepts it.
    run = prove_model(parse(STROGATZ, "strogatz.pk"))
    entry = copy.deepcopy(run.certificate["claims"][0])
    assert run.outcomes[0].status == "proved"  # the search finds a Dulac function too
    entry.update(method="dulac", theorem="bendixson-dulac", status="proved")
    entry["evidence"] = found.evidence
    entry["evidence"]["B"] = [[[2, 0], "-2"], [[1, 0], "2"], [[0, 0], "-1"]]
    cert = dict(run.certificate, claims=[entry])
    assert _status(json.dumps(cert), 0) == "proved"


def _entry(run: object, method: str) -> tuple[dict, int]:
    for k, e in enumerate(run.certificate["claims"]):
        if e.get("method") == method:
            return e, k
    raise AssertionError(f"no {method} claim")


def _mutated(run: object, k: int, change) -> str:
    cert = copy.deepcopy(run.certificate)
    change(cert["claims"][k]["evidence"])
    return json.dumps(cert)


ANNULUS_MUTATIONS = {
    "inner equals outer": lambda ev: ev["numbers"].update(inner=ev["numbers"]["outer"]),
    "eps zero": lambda ev: ev["numbers"].update(eps="0"),
    "witness outside": lambda ev: ev.update(witness=["100", "0"]),
    "obligation dropped": lambda ev: ev["squares"].pop("apart"),
    "multiplier dropped": lambda ev: ev["multipliers"].pop("a2"),
    "extra obligation": lambda ev: ev["squares"].update(extra=ev["squares"]["a1"]),
    "W changed": lambda ev: ev["W"].append([[0, 0], "1/7"]),
}


@pytest.mark.parametrize("name", sorted(ANNULUS_MUTATIONS))
def test_mutated_annulus_rejected(duct, name) -> None:
    _e, k = _entry(duct, "annulus")
    assert _status(json.dumps(duct.certificate), k) == "proved"
    assert _status(_mutated(duct, k, ANNULUS_MUTATIONS[name]), k) in ("rejected", "format error")


def test_mutated_no_cycle_rejected(duct, vdp) -> None:
    _e, k = _entry(duct, "dulac")

    def flip(ev: dict) -> None:
        ev["B"] = [[e, c[1:] if c.startswith("-") else "-" + c] for e, c in ev["B"]]

    assert _status(_mutated(duct, k, flip), k) == "rejected"
    cert = copy.deepcopy(duct.certificate)  # the complement of a disc is not convex
    cert["claims"][k]["claim"]["set"][0]["g"] = [
        [e, c[1:] if c.startswith("-") else "-" + c]
        for e, c in cert["claims"][k]["claim"]["set"][0]["g"]
    ]
    assert _status(json.dumps(cert), k) == "rejected"
    _e, k = _entry(vdp, "no-equilibrium")
    assert _status(_mutated(vdp, k, lambda ev: ev["numbers"].update(eps="1000")), k) == "rejected"


def _paths(ev: dict) -> list[tuple]:
    """Every exact number of an evidence entry that the audit must tie to the rest."""
    out: list[tuple] = [("W", i) for i in range(len(ev["W"]))]
    for group in ("multipliers", "free"):
        out += [(group, k, i) for k, p in ev[group].items() for i in range(len(p))]
    for name, sq in ev["squares"].items():
        n = len(sq["gram"])
        out += [("squares", name, i, j) for i in range(n) for j in range(i, n)]
    return out + [("numbers", k) for k in ("inner", "outer", "offset", "eps")]


@given(st.data())
def test_random_number_changes_rejected(duct, data) -> None:
    entry, k = _entry(duct, "annulus")
    path = data.draw(st.sampled_from(_paths(entry["evidence"])))
    delta = data.draw(st.fractions(min_value=-3, max_value=3, max_denominator=64))
    from hypothesis import assume

    assume(delta != 0)

    def bump(ev: dict) -> None:
        if path[0] == "numbers":
            ev["numbers"][path[1]] = str(Fraction(ev["numbers"][path[1]]) + delta)
        elif path[0] == "W":
            term = ev["W"][path[1]]
            term[1] = str(Fraction(term[1]) + delta)
        elif path[0] == "squares":
            gram = ev["squares"][path[1]]["gram"]
            i, j = path[2], path[3]
            gram[i][j] = str(Fraction(gram[i][j]) + delta)
            gram[j][i] = gram[i][j]
        else:
            term = ev[path[0]][path[1]][path[2]]
            term[1] = str(Fraction(term[1]) + delta)

    assert _status(_mutated(duct, k, bump), k) in ("rejected", "format error")


RINGS = """system two_rings
state x, y
let r2 = x^2 + y^2
dx/dt = -y + x*(r2 - 1)*(4 - r2)/4
dy/dt = x + y*(r2 - 1)*(4 - r2)/4
claim no cycle in (x - {a})^2 + (y - {b})^2 <= {r}
"""


@pytest.mark.slow
@settings(max_examples=12)
@given(
    st.fractions(min_value=-3, max_value=3, max_denominator=4),
    st.fractions(min_value=-3, max_value=3, max_denominator=4),
    st.fractions(min_value=Fraction(1, 4), max_value=4, max_denominator=4),
)
def test_no_cycle_never_proved_for_a_disc_holding_a_ring(a, b, r) -> None:
    """Invented two-ring demo: the periodic orbits are the circles of radius 1 and 2
    about the origin (computed by hand in polar form); a disc holds one of them iff
    |centre| + radius_of_ring <= r."""
    model = parse(RINGS.format(a=a, b=b, r=r * r), "rings.pk")
    run = prove_model(model)
    centre = math.hypot(float(a), float(b))
    holds_ring = centre + 1 <= float(r) or centre + 2 <= float(r)
    if run.outcomes[0].status == "proved":
        assert not holds_ring
        assert run.audit.claims[0].status == "proved"
