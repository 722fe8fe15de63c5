"""Regions of attraction of rational fields: multiplied through by a denominator shown positive."""

from __future__ import annotations

import copy
import json
from fractions import Fraction
from pathlib import Path

import numpy as np
import pytest

import proofkit
from proofkit.audit import audit_certificate
from proofkit.errors import InputError
from proofkit.proofs import prove_model

from .conftest import CULTURE, full_audit_ok, prove_text

CULTURE_BASIN = CULTURE.replace(
    "claim coexist stable\nclaim washout unstable\n",
    "domain s >= 0 and b >= 0 and s <= 10 and b <= 10\n"
    "claim coexist attracts (s - 1)^2 + (b - 3)^2 <= 1/4\n",
)


@pytest.fixture(scope="module")
def basin_run():
    return prove_text(CULTURE_BASIN, "culture_basin.pk")


def test_culture_region_of_attraction_proved(basin_run) -> None:
    outcome = basin_run.outcomes[0]
    assert outcome.status == "proved", outcome.detail
    assert outcome.method == "sublevel-set-rational"
    assert full_audit_ok(basin_run.text)
    verdict = audit_certificate(json.loads(basin_run.text)).claims[0]
    assert any("Q > 0" in line for line in verdict.checked)


def test_denominator_evidence_is_checked(basin_run) -> None:
    cert = json.loads(basin_run.text)
    den = cert["claims"][0]["evidence"]["denominator"]
    for mutate in ("eps", "t", "gram"):
        bad = copy.deepcopy(cert)
        d = bad["claims"][0]["evidence"]["denominator"]
        if mutate == "eps":
            d["numbers"]["eps"] = "1000"
        elif mutate == "t":
            d["multipliers"]["t"] = []
        else:
            d["squares"]["denominator"]["gram"][0][0] = "1000"
        assert audit_certificate(bad).claims[0].status == "rejected", mutate
    assert den["numbers"]["eps"] != "0"


def test_claim_set_through_a_pole_never_proved() -> None:
    # the language refuses a set holding a grid point where the denominator vanishes
    text = "state x, y\ndx/dt = -x/(1 - x)\ndy/dt = -y\nequilibrium o at x = 0, y = 0\n"
    with pytest.raises(InputError, match="not defined everywhere in the claim's set"):
        proofkit.parse(text + "claim o attracts x^2 + y^2 <= 4\n", "pole.pk")
    # a pole between grid points: x' = x/(x - c), c = 1003/3000; from x > c trajectories
    # leave (computed by hand: x' > 0 there), so the claim is false and never proved
    pole = "state x, y\ndx/dt = x/(x - 1/3 - 1/1000)\ndy/dt = -y\nequilibrium o at x = 0, y = 0\n"
    run = prove_text(pole + "claim o attracts x^2 + y^2 <= 1/4\n")
    assert run.outcomes[0].status != "proved"
    assert full_audit_ok(run.text)


def test_condition_other_than_a_denominator_rejected(basin_run) -> None:
    cert = json.loads(basin_run.text)
    cert["model"]["conditions"].append({"g": [[[1, 0], "1"]], "strict": False})  # s >= 0
    verdict = audit_certificate(cert).claims[0]
    assert verdict.status == "rejected" and verdict.failed_step == "definedness"


WORKED_CULTURE = Path(__file__).resolve().parents[2] / "worked" / "culture_uptake.pk"


@pytest.fixture(scope="module")
def worked_culture_run():
    return prove_model(proofkit.load(WORKED_CULTURE))


def test_worked_culture_basin_claim_proved_and_audited(worked_culture_run) -> None:
    outcome = next(o for o in worked_culture_run.outcomes if "attracts" in o.claim)
    assert outcome.status == "proved", outcome.detail
    assert outcome.method == "sublevel-set-rational"
    assert outcome.seconds < 30  # was "not proved" after 1 min 43 s
    assert full_audit_ok(worked_culture_run.text)


def test_worked_culture_set_lies_in_the_box_and_holds_the_disc(worked_culture_run) -> None:
    cert = json.loads(worked_culture_run.text)
    entry = next(c for c in cert["claims"] if c.get("method") == "sublevel-set-rational")
    inner = entry["evidence"]["reparametrized"]
    v = {tuple(e): float(Fraction(c)) for e, c in inner["V"]}
    level = float(Fraction(inner["numbers"]["level"]))

    def values(pts: np.ndarray) -> np.ndarray:
        y = pts - np.array([1.0, 2.0])  # the equilibrium steady (worked file)
        return sum(c * y[:, 0] ** e[0] * y[:, 1] ** e[1] for e, c in v.items())

    t = np.linspace(0.1, 6, 300)  # the box 1/10 <= s, x <= 6 of the worked file
    lo, hi = np.full_like(t, 0.1), np.full_like(t, 6.0)
    faces = np.vstack([np.column_stack(p) for p in ((lo, t), (hi, t), (t, lo), (t, hi))])
    assert (values(faces) > level).all()
    th = np.linspace(0, 2 * np.pi, 360)
    disc = np.column_stack([1 + 0.5 * np.cos(th), 2 + 0.5 * np.sin(th)])
    assert (values(disc) <= level).all()


def test_rational_reason_is_the_rational_provers() -> None:
    # the disc of radius 1 reaches s = 0 < 1/10: outside the domain (worked file's box)
    text = WORKED_CULTURE.read_text().replace("<= 1/4", "<= 1")
    run = prove_text(text, "culture_wide.pk")
    outcome = next(o for o in run.outcomes if "attracts" in o.claim)
    assert outcome.status == "not proved"
    assert outcome.detail.startswith("on the field multiplied by its denominators")
    assert "leaves the domain" in outcome.detail
    assert "not polynomial" not in outcome.detail


# Invented for this test: Q = 2 - x >= 1 on the box; the field points strictly inward on every
# face (computed by hand: on x = 1, dx/dt = -1; on x = -1, 1/3; on y = 2, dy/dt <= -2 + 1;
# on y = -2, dy/dt >= 2), so the box is forward invariant.
RATIONAL_BOX = """state x, y
dx/dt = -x/(2 - x)
dy/dt = -y + x^2/(2 - x)
domain x >= -1 and x <= 1 and y >= -2 and y <= 2
equilibrium o at x = 0, y = 0
claim o globally stable
"""


def test_rational_globally_stable_in_an_invariant_box() -> None:
    run = prove_text(RATIONAL_BOX, "rational_box.pk")
    outcome = run.outcomes[0]
    assert outcome.status == "proved", outcome.detail
    assert outcome.method == "lyapunov-domain-rational"
    assert full_audit_ok(run.text)
    cert = json.loads(run.text)
    for mutate in ("eps", "w1", "invariant"):
        bad = copy.deepcopy(cert)
        ev = bad["claims"][0]["evidence"]
        if mutate == "eps":
            ev["denominator"]["numbers"]["eps"] = "100"  # Q = 2 - x is 1 at x = 1
        elif mutate == "w1":
            ev["denominator"]["multipliers"]["w1"] = []
        else:
            gram = ev["reparametrized"]["squares"]["invariant 1"]["gram"]
            gram[0][0] = str(Fraction(gram[0][0]) + 1)
        assert audit_certificate(bad).claims[0].status == "rejected", mutate


def test_rational_domain_through_a_pole_never_proved() -> None:
    # the pole x = 1003/3000 lies inside the box between grid points; for x past it
    # dx/dt > 0 (computed by hand), so the box is not invariant and the claim is false
    text = RATIONAL_BOX.replace("-x/(2 - x)", "x/(x - 1/3 - 1/1000)").replace("x^2/(2 - x)", "0")
    text = text.replace("x >= -1 and x <= 1", "x >= -1/2 and x <= 1/2")
    run = prove_text(text, "rational_pole_box.pk")
    assert run.outcomes[0].status != "proved"
    assert full_audit_ok(run.text)
