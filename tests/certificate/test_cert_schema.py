"""Produced certificates validate against the project's JSON Schema."""

from __future__ import annotations

import json
from importlib import resources

import jsonschema
import pytest

from .conftest import companion_text, prove_text
from .test_cert_handwritten import motzkin_times_certificate, parrilo_lecture_certificate


@pytest.fixture(scope="module")
def validator() -> jsonschema.Draft202012Validator:
    schema = json.loads(resources.files("proofkit").joinpath("certificate.schema.json").read_text())
    jsonschema.Draft202012Validator.check_schema(schema)
    return jsonschema.Draft202012Validator(schema)


def test_produced_certificates_validate(validator, bistable_run, sqrt_run, reversed_run) -> None:
    shifted = prove_text(companion_text(["2", "3", "6", "5", "3"], "unstable"))
    mixed = prove_text(
        "parameter k = 1 in [1/2, 2]\nstate x\ndx/dt = -k*x\nequilibrium o at x = 0\n"
        "claim o stable\nclaim o stable at nominal\nclaim o unstable at nominal\n"
    )
    assert [o.status for o in mixed.outcomes][1:] == ["proved", "refuted"]
    assert mixed.outcomes[0].method != "linearization"  # nominal evidence: no range proof
    for run in (bistable_run, sqrt_run, reversed_run, shifted, mixed):
        validator.validate(json.loads(run.text))
    for cert in (parrilo_lecture_certificate(), motzkin_times_certificate()):
        validator.validate(cert)


def test_schema_rejects_inexact_numbers(validator, bistable_run) -> None:
    cert = json.loads(bistable_run.text)
    cert["claims"][0]["evidence"]["jacobian"][0][0] = "0.5"
    assert not validator.is_valid(cert)


def test_worked_certificates_validate(validator) -> None:
    from pathlib import Path

    worked = Path(__file__).resolve().parents[2] / "worked"
    files = sorted(worked.glob("*.certificate.json"))
    for f in files:
        validator.validate(json.loads(f.read_text()))
