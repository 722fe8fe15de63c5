"""Contracts of what a user sees from the command line.

Exit codes (0 all good, 1 not proved or rejected, 2 bad input, 3 internal
error), the bare command and ``--version``, the text and JSON of ``prove``
(one status vocabulary: proved / refuted / not proved), inputs that must be
refused quickly (a FIFO, a directory, an empty ``--out``), and ``audit
--json`` on a rejected certificate, with and without ``--core-only``.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest

from proofkit import __version__
from proofkit.cli import main

# A saddle at r and a stable focus at o (computed by hand: J(o) = [[0, 1], [-1, -1]],
# det(sI - J) = s^2 + s + 1; J(r) = [[0, 1], [2, -1]], det = s^2 + s - 2 = (s + 2)(s - 1)).
MODEL = """state x, y
dx/dt = y
dy/dt = -x - y + x^3
equilibrium o at x = 0, y = 0
equilibrium r at x = 1, y = 0
claim o stable
claim r stable
claim o unstable
"""


def pk(*args: str, cwd: Path, timeout: float = 120) -> subprocess.CompletedProcess[str]:
    env = {**os.environ, "PYTHONIOENCODING": "utf-8"}
    return subprocess.run(
        [sys.executable, "-m", "proofkit", *args],
        cwd=cwd,
        capture_output=True,
        text=True,
        timeout=timeout,
        env=env,
    )


@pytest.fixture(scope="module")
def proved(tmp_path_factory: pytest.TempPathFactory) -> dict:
    """One `prove --out` run shared by the checks below: text, JSON, files."""
    d = tmp_path_factory.mktemp("contracts")
    (d / "focus_saddle.pk").write_text(MODEL)
    text = pk("prove", "focus_saddle.pk", "--out", "out", cwd=d)
    as_json = pk("prove", "focus_saddle.pk", "--json", "--quiet", cwd=d)
    return {"dir": d, "text": text, "json": as_json}


def test_internal_error_exits_3_with_a_bug_notice(tmp_path, monkeypatch, capsys) -> None:
    import proofkit.proofs

    def broken(*_args, **_kwargs):
        raise RuntimeError("planted failure")

    (tmp_path / "m.pk").write_text(MODEL)
    monkeypatch.setattr(proofkit.proofs, "prove_model", broken)
    assert main(["prove", str(tmp_path / "m.pk")]) == 3
    err = capsys.readouterr().err
    assert "planted failure" in err and "internal error" in err and "bug" in err


def test_no_command_prints_help_and_exits_2(capsys) -> None:
    assert main([]) == 2
    out = capsys.readouterr().out
    assert "usage: proofkit" in out and "prove" in out and "audit" in out


def test_version_prints_the_package_version(tmp_path) -> None:
    r = pk("--version", cwd=tmp_path)
    assert r.returncode == 0
    assert r.stdout.strip() == f"proofkit {__version__}"


def test_prove_text_summary_uses_the_three_status_words(proved) -> None:
    r = proved["text"]
    assert r.returncode == 1, r.stderr  # a claim is refuted: not everything proved
    lines = r.stdout.strip().splitlines()
    assert lines[0].split()[:3] == ["proved", "o", "stable"]
    assert lines[1].split()[:3] == ["refuted", "r", "stable"]
    assert lines[2].split()[:3] == ["refuted", "o", "unstable"]
    assert "[linearization]" in lines[0]
    assert "positive real part" in lines[1]  # the evidence, in words
    assert lines[3].startswith("1 of 3 claim(s) proved, 2 refuted, 0 not proved")
    assert "audited exactly once" in lines[3]
    for word in ("counterexample", "accepted", "holds", "fails", "undecided"):
        assert not any(line.startswith(word) for line in lines)
    assert "proofkit: proving" in r.stderr  # progress on stderr, not stdout


def test_prove_json_and_quiet(proved) -> None:
    r = proved["json"]
    assert r.returncode == 1 and r.stderr == ""  # --quiet: nothing on stderr
    data = json.loads(r.stdout)
    assert [c["status"] for c in data["claims"]] == ["proved", "refuted", "refuted"]
    assert data["summary"] == {"proved": 1, "refuted": 2, "not proved": 0}
    assert len(data["certificate_sha256"]) == 64 and data["provenance_ok"] is True


def test_refuted_claim_verdicts_agree_with_numpy(proved) -> None:
    cert = json.loads((proved["dir"] / "out" / "certificate.json").read_text())
    for claim in cert["claims"]:
        jac = claim["evidence"]["jacobian"]
        ev = np.linalg.eigvals(np.array([[float(_as_float(v)) for v in row] for row in jac]))
        unstable = bool(np.max(ev.real) > 0)  # computed: numpy eigenvalues of the stated J
        claimed_stable = claim["claim"]["kind"] == "stable"
        assert (claim["status"] == "refuted") == (claimed_stable == unstable)


def _as_float(text: str) -> float:
    from fractions import Fraction

    return float(Fraction(text))


@pytest.mark.parametrize("command", ["prove", "orbit", "portrait"])
def test_fifo_input_is_refused_quickly(tmp_path, command: str) -> None:
    if not hasattr(os, "mkfifo"):
        pytest.skip("no named pipes on this platform")
    fifo = tmp_path / "model.pk"
    os.mkfifo(fifo)
    start = time.monotonic()
    r = pk(command, str(fifo), cwd=tmp_path, timeout=30)
    assert r.returncode == 2 and "not a regular file" in r.stderr
    assert "Traceback" not in r.stderr
    assert time.monotonic() - start < 20


def test_directory_input_and_empty_out_are_input_errors(tmp_path) -> None:
    r = pk("prove", str(tmp_path), cwd=tmp_path)
    assert r.returncode == 2 and "is a directory" in r.stderr
    (tmp_path / "m.pk").write_text(MODEL)
    r = pk("prove", "m.pk", "--out", "", cwd=tmp_path)
    assert r.returncode == 2 and "--out" in r.stderr and "empty" in r.stderr
    assert sorted(p.name for p in tmp_path.iterdir()) == ["m.pk"]  # nothing written


def _tampered(proved, tmp: Path) -> Path:
    cert = json.loads((proved["dir"] / "out" / "certificate.json").read_text())
    cert["claims"][0]["evidence"]["jacobian"][1][0] = "-2"  # J(o) is [[0, 1], [-1, -1]]
    path = tmp / "tampered.json"
    path.write_text(json.dumps(cert))
    return path


def test_audit_json_on_a_rejected_certificate(proved, tmp_path) -> None:
    bad = _tampered(proved, tmp_path)
    r = pk("audit", str(bad), "--json", cwd=tmp_path)
    assert r.returncode == 1, r.stderr
    data = json.loads(r.stdout)
    assert data["accepted"] is False and data["core"]["accepted"] is False
    first = data["core"]["claims"][0]
    assert first["status"] != "proved" and first["failed_step"] == "jacobian"
    assert "Jacobian" in first["message"]
    assert data["core"]["claims"][1]["status"] == "refuted"  # untouched claims still checked


def test_audit_json_core_only_says_what_was_not_checked(proved, tmp_path) -> None:
    good = proved["dir"] / "out" / "certificate.json"
    r = pk("audit", str(good), "--json", "--core-only", cwd=tmp_path)
    assert r.returncode == 0, r.stderr
    data = json.loads(r.stdout)
    assert data["core"]["accepted"] is True
    assert not (data.get("provenance") or {}).get("checked")  # stage 2 did not run
    assert data["not_checked"], "core-only output must say what it did not check"
    r = pk("audit", str(_tampered(proved, tmp_path)), "--json", "--core-only", cwd=tmp_path)
    assert r.returncode == 1 and json.loads(r.stdout)["core"]["accepted"] is False


def test_prove_help_has_an_example_and_the_exit_codes(capsys) -> None:
    with pytest.raises(SystemExit) as info:
        main(["prove", "--help"])
    assert info.value.code == 0
    out = capsys.readouterr().out
    assert "example:" in out and "proofkit prove" in out and "--quiet" in out
    assert "0 all claims proved" in out and "3 internal error" in out
