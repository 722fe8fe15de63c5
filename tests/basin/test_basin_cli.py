"""``proofkit basin``: JSON keys, audited certificate on disk, input errors, exit codes."""

from __future__ import annotations

import json
from fractions import Fraction

import sympy as sp

from proofkit.audit import audit_text
from proofkit.cli import main

from .conftest import OSCILLATOR


def test_json_out_and_progress(tmp_path, capsys):
    model = tmp_path / "osc.pk"
    model.write_text(OSCILLATOR)
    out = tmp_path / "roa"
    args = ["--degree", "2", "--budget", "3", "--json", "--out", str(out)]
    code = main(["basin", str(model), "origin", *args])
    captured = capsys.readouterr()
    assert code == 0, captured.err
    assert "degree 2, iteration" in captured.err and "level" in captured.err
    data = json.loads(captured.out)
    assert data["degree"] == 2 and data["audited"] is True
    x1, x2 = sp.symbols("x1 x2")
    v = sp.sympify(data["V"], locals={"x1": x1, "x2": x2})  # our own output, read by sympy
    assert sp.Poly(v, x1, x2).total_degree() == 2
    level = Fraction(data["level"])
    assert level > 0
    assert data["size"]["kind"] == "area" and data["size"]["error"] >= 0
    cert = (out / "certificate.json").read_text()
    assert data["certificate"] == str(out / "certificate.json")
    assert audit_text(cert).claims[-1].status == "proved"
    assert (out / "proof.md").exists() and (out / "proof.tex").exists()


def test_bad_input_exits_2(tmp_path, capsys):
    model = tmp_path / "osc.pk"
    model.write_text(OSCILLATOR)
    assert main(["basin", str(model), "orign"]) == 2
    assert "did you mean 'origin'" in capsys.readouterr().err
    assert main(["basin", str(model), "origin", "--degree", "3"]) == 2
    assert main(["basin", str(tmp_path / "missing.pk"), "origin"]) == 2


def test_unstable_point_exits_1(tmp_path, capsys):
    model = tmp_path / "saddle.pk"
    model.write_text("state x, y\ndx/dt = x\ndy/dt = -y\nequilibrium o at x = 0, y = 0\n")
    assert main(["basin", str(model), "o", "--json", "--quiet"]) == 1
    captured = capsys.readouterr()
    assert json.loads(captured.out)["status"] == "not proved"
    assert captured.err == ""  # --quiet


def test_help_has_an_example(capsys):
    try:
        main(["basin", "--help"])
    except SystemExit as exc:
        assert exc.code == 0
    assert "example:" in capsys.readouterr().out
