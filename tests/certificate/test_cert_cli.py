"""The prove and audit commands, run as a user runs them (subprocess)."""

from __future__ import annotations

import json
import re
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from tests.models import DUFFING

FORBIDDEN = (
    "lark",
    "cvxpy",
    "scs",
    "clarabel",
    "proofkit.lang",
    "proofkit.sos",
    "proofkit.proofs",
    "proofkit.analysis",
)


def pk(*args: str, cwd: Path) -> subprocess.CompletedProcess[str]:
    return subprocess.run(
        [sys.executable, "-m", "proofkit", *args],
        cwd=cwd,
        capture_output=True,
        text=True,
        timeout=300,
    )


@pytest.fixture(scope="module")
def workdir(tmp_path_factory) -> Path:
    d = tmp_path_factory.mktemp("cli")
    (d / "bistable.pk").write_text(DUFFING)
    # false (the saddles are equilibria too), so no method can prove it
    (d / "mixed.pk").write_text(DUFFING + "claim origin globally stable\n")
    (d / "broken.pk").write_text("state x\ndx/dt = 2x\n")
    r = pk("prove", "bistable.pk", "--out", "out_bistable", cwd=d)
    assert r.returncode == 0, r.stderr  # every claim proved: exit 0
    r = pk("prove", "mixed.pk", "--json", "--out", "out_mixed", cwd=d)
    assert r.returncode == 1, r.stderr  # a claim not proved: exit 1
    (d / "mixed.json").write_text(r.stdout)
    return d


def test_prove_input_errors_exit_2_without_traceback(workdir) -> None:
    broken = pk("prove", "broken.pk", cwd=workdir)
    assert broken.returncode == 2 and "Traceback" not in broken.stderr
    assert "2*x" in broken.stderr  # the parser's hint reaches the user
    missing = pk("prove", "nope.pk", cwd=workdir)
    assert missing.returncode == 2 and "Traceback" not in missing.stderr
    (workdir / "a_file").write_text("")
    unwritable = pk("prove", "bistable.pk", "--out", "a_file", cwd=workdir)
    assert unwritable.returncode == 2 and "cannot write" in unwritable.stderr


def test_prove_json_shape(workdir) -> None:
    data = json.loads((workdir / "mixed.json").read_text())  # stdout is clean JSON
    claims = data["claims"]
    assert [c["claim"] for c in claims] == [
        "origin stable",
        "right unstable",
        "origin globally stable",
    ]
    assert [c["status"] for c in claims] == ["proved", "proved", "not proved"]
    assert claims[2]["detail"]  # the reason is given
    for c in claims:
        assert set(c) == {"claim", "status", "method", "detail", "seconds"}
        assert c["seconds"] >= 0


def test_prove_out_writes_documents_even_when_not_all_proved(workdir) -> None:
    out = workdir / "out_mixed"
    for name in ("certificate.json", "proof.md", "proof.tex", "phase.png"):
        assert (out / name).is_file(), name
    md = (out / "proof.md").read_text()
    assert "Not proved: " in md
    assert "Cautions" in md and "Reproducibility" in md


def test_audit_accepts_and_labels_both_stages(workdir) -> None:
    r = pk("audit", "out_bistable/certificate.json", cwd=workdir)
    assert r.returncode == 0, r.stdout + r.stderr
    assert "stage 1: trusted core" in r.stdout and "stage 2: provenance" in r.stdout
    j = pk("audit", "out_bistable/certificate.json", "--json", cwd=workdir)
    data = json.loads(j.stdout)
    assert data["accepted"] is True and data["provenance"]["ok"] is True
    assert [c["status"] for c in data["core"]["claims"]] == ["proved", "proved"]
    assert len(data["model_source_sha256"]) == 64 and data["model_file"] == "bistable.pk"


def test_audit_rejects_a_tampered_certificate_naming_claim_and_step(workdir) -> None:
    cert = json.loads((workdir / "out_bistable/certificate.json").read_text())
    cert["claims"][0]["evidence"]["jacobian"][1][1] = "-2"
    (workdir / "tampered.json").write_text(json.dumps(cert))
    r = pk("audit", "tampered.json", cwd=workdir)
    assert r.returncode == 1
    assert "REJECTED  the equilibrium origin (x = 0, y = 0)" in r.stdout and "jacobian" in r.stdout


def test_audit_detects_a_field_change_only_in_the_provenance_stage(workdir) -> None:
    cert = json.loads((workdir / "out_bistable/certificate.json").read_text())
    for term in cert["model"]["field"]["numerators"][1]:
        if term[0] == [3, 0]:
            term[1] = "2"  # the cubic term does not change J at the origin or at x = 1 ...
    cert["claims"] = cert["claims"][:1]  # ... keep only the origin claim
    (workdir / "field.json").write_text(json.dumps(cert))
    core = pk("audit", "field.json", "--core-only", cwd=workdir)
    assert core.returncode == 0  # the mathematics of the stated field still holds
    full = pk("audit", "field.json", cwd=workdir)
    assert full.returncode == 1 and "FAILED" in full.stdout


def test_audit_malformed_input_exit_2_without_traceback(workdir) -> None:
    (workdir / "garbage.json").write_text("{not json")
    (workdir / "wrong.json").write_text(json.dumps({"proofkit_certificate": 1, "claims": 3}))
    for name in ("garbage.json", "wrong.json", "absent.json"):
        r = pk("audit", name, cwd=workdir)
        assert r.returncode == 2, name
        assert "Traceback" not in r.stderr and r.stderr.startswith("error:")


def test_help_texts(workdir) -> None:
    for cmd in ("prove", "audit"):
        r = pk(cmd, "--help", cwd=workdir)
        assert r.returncode == 0 and "usage:" in r.stdout
    assert "--core-only" in pk("audit", "--help", cwd=workdir).stdout
    assert "--out" in pk("prove", "--help", cwd=workdir).stdout


def test_core_audit_imports_no_parser_search_or_solver(workdir) -> None:
    r = subprocess.run(
        [
            sys.executable,
            "-X",
            "importtime",
            "-m",
            "proofkit",
            "audit",
            "out_bistable/certificate.json",
            "--core-only",
        ],
        cwd=workdir,
        capture_output=True,
        text=True,
        timeout=120,
    )
    assert r.returncode == 0, r.stdout + r.stderr
    modules = {m.group(1).strip() for m in re.finditer(r"\|\s*([\w.]+)\s*$", r.stderr, re.M)}
    assert "proofkit.audit.core" in modules  # the parse of the timing output works
    for name in FORBIDDEN:
        hits = [m for m in modules if m == name or m.startswith(name + ".")]
        assert not hits, f"the core audit imported {hits}"


@pytest.mark.skipif(shutil.which("pdflatex") is None, reason="pdflatex is not installed")
def test_generated_latex_compiles(workdir) -> None:
    for out in ("out_bistable", "out_mixed"):
        r = subprocess.run(
            ["pdflatex", "-interaction=nonstopmode", "-halt-on-error", "proof.tex"],
            cwd=workdir / out,
            capture_output=True,
            text=True,
            timeout=120,
        )
        assert r.returncode == 0, r.stdout[-2000:]
        assert (workdir / out / "proof.pdf").stat().st_size > 1000
