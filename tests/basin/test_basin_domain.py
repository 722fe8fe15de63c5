"""Regions of attraction inside a declared domain: the search knows the domain and the claim.

The model (invented for these tests) is the continuous culture of
worked/culture_uptake.pk multiplied through by its denominator 2 (1 + s):
``ds/dt = (3 - s)(1 + s) - 2 s x``, ``dx/dt = (s - 1) x``, equilibrium (1, 2)
(computed by hand: (3 - 1)(1 + 1) - 2*1*2 = 0 and (1 - 1)*2 = 0), in the box
1/10 <= s, x <= 6. The face s = 1/10 is 9/10 from the equilibrium, so a disc of
radius 1/2 fits in the box with room to spare and a disc of radius 1 does not
(computed by hand). The quadratic V of the Lyapunov equation cannot hold the
disc of radius 1/2 inside the box (its level set through the disc reaches
s = 0.07, computed with numpy from that V), so the search has to shape V.
"""

from __future__ import annotations

import json
import time
from fractions import Fraction

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

import proofkit
from proofkit.audit import audit_certificate, audit_text
from proofkit.proofs import basin, prove_model
from proofkit.proofs._basin_claim import set_leaves_domain

BOX_MODEL = """\
system culture_times_denominator
state s, x
ds/dt = (3 - s)*(1 + s) - 2*s*x
dx/dt = (s - 1)*x
domain s >= 1/10 and s <= 6 and x >= 1/10 and x <= 6
equilibrium steady at s = 1, x = 2
"""
POINT = (1.0, 2.0)  # computed by hand (module docstring)
BOX = (0.1, 6.0)  # from the model text


def _v_level(evidence: dict) -> tuple[dict, float]:
    v = {tuple(e): float(Fraction(c)) for e, c in evidence["V"]}
    return v, float(Fraction(evidence["numbers"]["level"]))


def _values(v: dict, pts: np.ndarray) -> np.ndarray:
    y = pts - np.array(POINT)  # V is written over the deviation from the equilibrium
    return sum(c * y[:, 0] ** e[0] * y[:, 1] ** e[1] for e, c in v.items())


def _box_boundary(k: int = 400) -> np.ndarray:
    t = np.linspace(*BOX, k)
    lo, hi = np.full(k, BOX[0]), np.full(k, BOX[1])
    return np.vstack([np.column_stack(p) for p in ((lo, t), (hi, t), (t, lo), (t, hi))])


@pytest.fixture(scope="module")
def disc_run():
    model = proofkit.parse(BOX_MODEL + "claim steady attracts (s - 1)^2 + (x - 2)^2 <= 1/4\n")
    t0 = time.perf_counter()
    run = prove_model(model)
    return run, time.perf_counter() - t0


def test_disc_in_the_box_is_proved_and_audited(disc_run) -> None:
    run, seconds = disc_run
    outcome = run.outcomes[0]
    assert outcome.status == "proved", outcome.detail
    assert outcome.method == "sublevel-set"
    assert audit_text(run.text).claims[0].status == "proved"
    assert seconds < 30  # was "not proved" after 100 s before the search knew the domain


def test_certified_set_lies_in_the_box_and_holds_the_disc(disc_run) -> None:
    run, _ = disc_run
    v, level = _v_level(json.loads(run.text)["claims"][0]["evidence"])
    assert (_values(v, _box_boundary()) > level).all()  # the box's faces are outside the set
    th = np.linspace(0, 2 * np.pi, 720)
    circle = np.column_stack([1 + 0.5 * np.cos(th), 2 + 0.5 * np.sin(th)])
    assert (_values(v, circle) <= level).all()  # the claim's disc is inside it


def test_domain_obligations_are_checked(disc_run) -> None:
    run, _ = disc_run
    cert = json.loads(run.text)
    squares = cert["claims"][0]["evidence"]["squares"]
    assert {"domain 1", "domain 2", "domain 3", "domain 4"} <= set(squares)
    gram = cert["claims"][0]["evidence"]["squares"]["domain 1"]["gram"]
    gram[0][0] = str(Fraction(gram[0][0]) + 1)  # h_1 - t_1 (level - V) no longer matches
    verdict = audit_certificate(cert).claims[0]
    assert verdict.status == "rejected" and "domain 1" in verdict.message


def test_basin_command_keeps_the_set_in_the_box() -> None:
    run = basin.estimate_basin(
        proofkit.parse(BOX_MODEL, "box.pk"), "steady", degree=2, seconds_per_degree=3
    )
    assert run.status == "proved", run.reason
    v, level = _v_level(run.certificate["claims"][-1]["evidence"])
    assert (_values(v, _box_boundary()) > level).all()
    assert _values(v, np.array([[0.6, 2.0], [1.0, 1.6]])).max() <= level  # not a tiny set


def test_disc_leaving_the_box_is_not_proved_and_the_point_is_exact() -> None:
    model = proofkit.parse(BOX_MODEL + "claim steady attracts (s - 1)^2 + (x - 2)^2 <= 1\n")
    run = prove_model(model)
    assert run.outcomes[0].status == "not proved"
    assert "leaves the domain" in run.outcomes[0].detail
    setup = basin.setup_basin(model, "steady", model.claims[0].region)
    why = set_leaves_domain(setup, model.states)
    s_text = why.split("s = ")[1].split(",")[0]
    x_text = why.split("x = ")[1].split(" ")[0]
    s, x = Fraction(s_text), Fraction(x_text)
    assert (s - 1) ** 2 + (x - 2) ** 2 <= 1 and not (BOX[0] <= s <= 6 and BOX[0] <= x <= 6)


@settings(max_examples=4, deadline=None)
@given(r=st.fractions(min_value=Fraction(19, 20), max_value=3, max_denominator=20))
def test_discs_reaching_out_of_the_box_are_never_proved(r: Fraction) -> None:
    assume(r > Fraction(9, 10))  # the face s = 1/10 is 9/10 away (module docstring)
    model = proofkit.parse(BOX_MODEL + f"claim steady attracts (s - 1)^2 + (x - 2)^2 <= {r**2}\n")
    assert basin.attempt(model, model.claims[0]).entry["status"] != "proved"


@pytest.mark.slow
def test_touching_disc_fails_within_the_budget_and_says_what_was_tried() -> None:
    # radius 9/10 touches the face s = 1/10: no set strictly inside the box holds it
    model = proofkit.parse(BOX_MODEL + "claim steady attracts (s - 1)^2 + (x - 2)^2 <= 81/100\n")
    t0 = time.perf_counter()
    got = basin.attempt(model, model.claims[0])
    assert time.perf_counter() - t0 < basin.CLAIM_BUDGET + 20
    assert got.entry["status"] == "not proved"
    assert "claim-directed search at degrees 2" in got.detail
