"""Regions of attraction of rational fields: multiplied through by a denominator shown positive."""

from __future__ import annotations

import copy
import json

import pytest

import proofkit
from proofkit.audit import audit_certificate
from proofkit.errors import InputError

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
