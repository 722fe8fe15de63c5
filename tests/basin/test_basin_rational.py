"""``proofkit.basin`` on rational fields: the search on G = f Q, Q > 0 shown on the set.

Check values and where they come from:

* worked/culture_uptake.pk: ``ds/dt = (3 - s)/2 - s x/(1 + s)``, ``dx/dt = (s/(1 + s) - 1/2) x``
  in the box ``1/10 <= s, x <= 6`` (area 5.9^2 = 34.81, computed by hand); the
  steady state (1, 2) is a zero of the field (computed by hand: s/(1 + s) = 1/2 at
  s = 1, and (3 - 1)/2 - 2/2 = 0). The only denominator is ``1 + s`` (Q = 1 + s).
* Convergence of the certified set: every sampled start is integrated with scipy's
  ``solve_ivp`` (computed: RK45, rtol 1e-9) on the rational field itself, not on G.
* ``POLE``: ``dx/dt = -x/(1 - x)``, ``dy/dt = -y`` has its pole on the line x = 1
  (derived by hand); any certified set must stay on the side x < 1. There is no
  domain: only the natural domain (Q = 1 - x > 0) bounds the search. ``NEGATIVE``:
  ``dx/dt = x/(x - 2) + y``, ``dy/dt = -y``: the denominator is negative at the point,
  so Q = 2 - x (sign normalised), pole on x = 2 (derived by hand).
"""

from __future__ import annotations

import copy
import json
from fractions import Fraction
from pathlib import Path

import numpy as np
import pytest
import sympy as sp
from scipy.integrate import solve_ivp

import proofkit
from proofkit.audit import audit_certificate, audit_text

CULTURE_FILE = Path(__file__).resolve().parents[2] / "worked" / "culture_uptake.pk"
STEADY = (1.0, 2.0)  # computed by hand (module docstring)
BOX_AREA = 5.9**2  # computed by hand: the domain box [1/10, 6]^2
POLE = """\
system pole
state x, y
dx/dt = -x/(1 - x)
dy/dt = -y
equilibrium o at x = 0, y = 0
"""
NEGATIVE = """\
system negative_denominator
state x, y
dx/dt = x/(x - 2) + y
dy/dt = -y
equilibrium o at x = 0, y = 0
"""


@pytest.fixture(scope="module")
def culture_basin(monkeypatch_module):
    return proofkit.basin(proofkit.load(CULTURE_FILE), "steady", degree=2)


@pytest.fixture(scope="module")
def monkeypatch_module():
    mp = pytest.MonkeyPatch()
    mp.setattr("proofkit.proofs._basin_run.SECONDS_PER_DEGREE", 3.0)  # keep the run short
    yield mp
    mp.undo()


def _set_function(run) -> tuple:
    s, x = sp.symbols("s x")
    v = sp.sympify(run.v_text, locals={"s": s, "x": x})  # our own output, read by sympy
    return sp.lambdify((s, x), v, "numpy"), float(Fraction(run.level))


def test_rational_basin_is_certified_by_the_rational_method(culture_basin) -> None:
    run = culture_basin.result
    assert culture_basin.certified, run.reason
    entry = run.certificate["claims"][-1]
    assert entry["method"] == "sublevel-set-rational"
    assert set(entry["evidence"]) == {"reparametrized", "denominator"}
    verdict = audit_text(run.text).claims[-1]
    assert verdict.status == "proved"
    assert any("Q > 0" in line for line in verdict.checked)
    assert run.provenance.ok


def test_the_claim_is_the_certified_set_itself(culture_basin) -> None:
    run = culture_basin.result
    entry = run.certificate["claims"][-1]
    assert entry["claim"]["kind"] == "attracts" and len(entry["claim"]["set"]) == 1
    statement = entry["statement"]
    # the worked culture has an uncertain feed: the set is claimed at the nominal values
    assert statement.startswith("steady attracts")
    assert statement.endswith(f"<= {run.level} at nominal")
    assert entry["claim"]["scope"] == "nominal"
    data = culture_basin.to_json()
    assert data["V"] == run.v_text and data["level"] == str(run.level)
    assert data["size"]["kind"] == "area"
    assert 0.5 < data["size"]["value"] < BOX_AREA  # inside the box (computed by hand)


def test_certified_set_converges_under_the_rational_field(culture_basin) -> None:
    v, level = _set_function(culture_basin.result)
    rng = np.random.default_rng(5)
    pts = rng.uniform(0.1, 6.0, size=(20000, 2))
    inside = pts[v(pts[:, 0], pts[:, 1]) <= level]
    assert len(inside) > 200
    assert (1 + inside[:, 0] > 0).all()  # Q = 1 + s > 0 on the set
    farthest = inside[np.argsort(-np.hypot(*(inside - STEADY).T))[:12]]

    def f(_t, z):
        s, x = z
        return [(3 - s) / 2 - s * x / (1 + s), (s / (1 + s) - 0.5) * x]

    for start in farthest:  # the boundary is the hardest case
        sol = solve_ivp(f, (0, 80), start, rtol=1e-9, atol=1e-12)
        assert np.hypot(*(sol.y[:, -1] - STEADY)) < 1e-3, start


@pytest.mark.parametrize("part", ["denominator gram", "denominator eps", "level"])
def test_tampered_rational_basin_is_rejected(culture_basin, part: str) -> None:
    cert = copy.deepcopy(culture_basin.result.certificate)
    ev = cert["claims"][-1]["evidence"]
    if part == "denominator gram":
        gram = ev["denominator"]["squares"]["denominator"]["gram"]
        gram[0][0] = str(Fraction(gram[0][0]) - 1)
    elif part == "denominator eps":
        ev["denominator"]["numbers"]["eps"] = "1000"
    else:
        numbers = ev["reparametrized"]["numbers"]
        numbers["level"] = str(Fraction(numbers["level"]) * 2)
    assert audit_certificate(cert).claims[-1].status == "rejected", part


@pytest.mark.parametrize(("text", "pole"), [(POLE, 1.0), (NEGATIVE, 2.0)])
def test_a_set_near_a_pole_stays_on_its_side(text: str, pole: float) -> None:
    from proofkit.proofs.basin import estimate_basin

    run = estimate_basin(proofkit.parse(text, "pole.pk"), "o", degree=2, seconds_per_degree=3)
    assert run.status == "proved", run.reason  # the search keeps to Q >= Q(x*)/16
    assert audit_text(run.text).claims[-1].status == "proved"
    x, y = sp.symbols("x y")
    v = sp.lambdify((x, y), sp.sympify(run.v_text, locals={"x": x, "y": y}), "numpy")
    g = np.linspace(-20, 20, 801)
    xx, yy = np.meshgrid(g, g)
    inside = v(xx, yy) <= float(run.level)
    assert inside.any() and (xx[inside] < pole).all()  # never reaches the pole


def test_elementary_functions_are_refused_with_the_reason() -> None:
    from proofkit.proofs.basin import estimate_basin

    text = "state x\ndx/dt = -sin(x)\nequilibrium o at x = 0\n"
    run = estimate_basin(proofkit.parse(text, "sine.pk"), "o", degree=2, seconds_per_degree=1)
    assert run.status == "not proved"
    assert "neither polynomial nor rational" in run.reason
    assert json.loads(json.dumps(run.as_json()))["status"] == "not proved"
