"""Each documented audit limit: accepted at the limit, refused one past it.

The limits (proofkit.audit.LIMITS) bound the audit's work; past a limit the
certificate is malformed (exit 2) or the claim rejected (exit 1), never a crash.
"""

from __future__ import annotations

import copy
import hashlib
import json

import pytest

from proofkit.audit import LIMITS, FormatError, audit_certificate
from proofkit.audit.read import (
    MAX_CLAIMS,
    MAX_DEGREE,
    MAX_GRAM,
    MAX_SQUARES,
    MAX_TERMS,
    MAX_VARIABLES,
    read_poly,
)
from proofkit.cli import main

from .test_audit_schemas import cubic_certificate


def outcome(cert: dict) -> str:
    try:
        report = audit_certificate(copy.deepcopy(cert))
    except FormatError as exc:
        return f"malformed: {exc}"
    return ",".join(v.status for v in report.claims)


def test_the_limits_are_documented() -> None:
    assert len(LIMITS) >= 7 and all(isinstance(v, int | float) for v in LIMITS.values())


def test_number_digits() -> None:
    ok, past = "1" * 1000, "1" * 1001
    assert read_poly([[[1], ok]], 1, 0, "p")
    with pytest.raises(FormatError, match="at most 1000 digits"):
        read_poly([[[1], past]], 1, 0, "p")
    with pytest.raises(FormatError, match="at most 1000 digits"):
        read_poly([[[1], "1/" + past]], 1, 0, "p")


def test_exponents_and_degree() -> None:
    assert read_poly([[[MAX_DEGREE], "1"]], 1, 0, "p")
    with pytest.raises(FormatError, match=r"0\.\.64"):
        read_poly([[[MAX_DEGREE + 1], "1"]], 1, 0, "p")
    with pytest.raises(FormatError, match="total degree"):
        read_poly([[[40, 25], "1"]], 2, 0, "p")


def test_terms_of_a_polynomial() -> None:
    terms = [[[k % 65, k // 65], "1"] for k in range(MAX_TERMS + 1)]
    with pytest.raises(FormatError, match="at most 5000 are allowed"):
        read_poly(terms, 2, 0, "p")


def _with_states(n: int) -> dict:
    cert = cubic_certificate()
    states = [f"x{i}" for i in range(n)]
    model = cert["model"]
    model["states"] = states
    model["field"] = {
        "variables": states,
        "numerators": [[[[3 if j == i else 0 for j in range(n)], "-1"]] for i in range(n)],
        "denominators": None,
    }
    model["equilibria"] = [{"name": "o", "point": ["0"] * n, "number_field": None}]
    model["source"] = "(edited)"
    model["source_sha256"] = hashlib.sha256(b"(edited)").hexdigest()
    claim = {"kind": "stable", "equilibrium": {"name": "o", "point": ["0"] * n}}
    claim.update(set=None, scope="nominal")
    entry = {"claim": claim, "statement": "o stable", "status": "not proved", "reason": "-"}
    cert["claims"] = [entry]
    return cert


def test_number_of_states() -> None:
    assert outcome(_with_states(MAX_VARIABLES)) == "not proved"
    assert "more than 24 states" in outcome(_with_states(MAX_VARIABLES + 1))


def test_number_of_claims() -> None:
    cert = cubic_certificate()
    claim = copy.deepcopy(cert["claims"][0])
    claim.update(status="not proved", reason="x")
    for key in ("method", "theorem", "evidence", "number_field"):
        claim.pop(key)
    cert["claims"] = [claim] * MAX_CLAIMS
    assert outcome(cert) == ",".join(["not proved"] * MAX_CLAIMS)
    cert["claims"].append(claim)
    assert "at most 1000" in outcome(cert)


def test_gram_rows_and_obligations() -> None:
    cert = cubic_certificate()
    sq = cert["claims"][0]["evidence"]["squares"]
    sq["positive"] = {"basis": [[0]] * MAX_GRAM, "gram": [["0"] * MAX_GRAM] * MAX_GRAM}
    assert "repeated basis monomial" in (audit_certificate(cert).claims[0].message or "")
    sq["positive"] = {"basis": [[0]] * (MAX_GRAM + 1), "gram": []}
    assert "more than 120 basis" in (audit_certificate(cert).claims[0].message or "")
    for k in range(MAX_SQUARES):
        sq[f"extra {k}"] = {"basis": [], "gram": []}
    assert "more than 64 obligations" in (audit_certificate(cert).claims[0].message or "")


def test_model_option_shows_both_hashes(capsys, tmp_path) -> None:
    # issue: a certificate about a source that differs from the reviewer's by one sign
    import proofkit
    from proofkit.proofs import prove_model

    text = "state x\ndx/dt = -x\nequilibrium o at x = 0\nclaim o stable\n"
    (tmp_path / "m.pk").write_text(text)
    (tmp_path / "other.pk").write_text(text.replace("-x", "x"))
    (tmp_path / "c.json").write_text(prove_model(proofkit.parse(text, "m.pk")).text)
    want = hashlib.sha256(text.encode()).hexdigest()
    assert main(["audit", str(tmp_path / "c.json"), "--model", str(tmp_path / "m.pk")]) == 0
    out = capsys.readouterr().out
    assert f"byte-identical to {tmp_path / 'm.pk'} (SHA-256 {want})" in out
    assert main(["audit", str(tmp_path / "c.json"), "--model", str(tmp_path / "other.pk")]) == 1
    out = capsys.readouterr().out
    assert "FAILED  --model" in out and want in out and "REJECTED" in out
    assert main(["audit", str(tmp_path / "c.json"), "--json", "--model", str(tmp_path)]) == 2
    capsys.readouterr()
    assert main(["audit", str(tmp_path / "c.json"), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["model_source_sha256"] == want and data["model_file"] == "m.pk"
