"""``proofkit basin`` on a rational model: exit codes, --json fields, audited certificate, picture.

The model is worked/culture_uptake.pk (saturating uptake ``s/(1 + s)``; its steady
state (1, 2) is a zero of the field, computed by hand: s/(1 + s) = 1/2 at s = 1 and
(3 - 1)/2 - 2/2 = 0). The only denominator is ``1 + s``; the domain is the box
``[1/10, 6]^2`` of area 34.81 (computed by hand).
"""

from __future__ import annotations

import contextlib
import io
import json
from fractions import Fraction
from pathlib import Path

import pytest
import sympy as sp

from proofkit.audit import audit_text
from proofkit.cli import main

CULTURE = Path(__file__).resolve().parents[2] / "worked" / "culture_uptake.pk"
BOX_AREA = 34.81  # computed by hand


@pytest.fixture(scope="module")
def basin_cli(tmp_path_factory):
    out = tmp_path_factory.mktemp("roa")
    args = ["basin", str(CULTURE), "steady", "--degree", "2", "--budget", "3", "--json"]
    stdout, stderr = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(stdout), contextlib.redirect_stderr(stderr):
        code = main([*args, "--out", str(out)])
    return code, stdout.getvalue(), stderr.getvalue(), out


def test_rational_basin_exits_0_with_the_json_fields(basin_cli) -> None:
    code, out, err, _dir = basin_cli
    assert code == 0, err
    assert "multiplying through by the denominators" in err  # progress on stderr
    data = json.loads(out)
    assert data["status"] == "proved" and data["audited"] is True and data["degree"] == 2
    s, x = sp.symbols("s x")
    v = sp.sympify(data["V"], locals={"s": s, "x": x})  # our own output, read by sympy
    assert sp.Poly(v, s, x).total_degree() == 2
    assert Fraction(data["level"]) > 0
    assert v.subs({s: 1, x: 2}) == 0  # V vanishes at the steady state (computed by hand)
    assert data["size"]["kind"] == "area" and 0 < data["size"]["value"] < BOX_AREA
    assert data["size"]["error"] >= 0


def test_the_written_certificate_audits_with_the_rational_method(basin_cli) -> None:
    _code, out, _err, folder = basin_cli
    data = json.loads(out)
    assert data["certificate"] == str(folder / "certificate.json")
    text = (folder / "certificate.json").read_text()
    verdict = audit_text(text).claims[-1]
    assert verdict.status == "proved"
    assert json.loads(text)["claims"][-1]["method"] == "sublevel-set-rational"
    for name in ("proof.md", "proof.tex", "phase.png"):
        assert (folder / name).stat().st_size > 0, name


def test_rational_basin_text_output_and_quiet(tmp_path, capsys) -> None:
    code = main(["basin", str(CULTURE), "steady", "--degree", "2", "--budget", "2", "--quiet"])
    captured = capsys.readouterr()
    assert code == 0
    assert captured.err == ""  # --quiet
    assert "certified region of attraction of steady (degree 2)" in captured.out
    assert "certificate audited" in captured.out


def test_an_elementary_function_field_exits_1_with_the_reason(tmp_path, capsys) -> None:
    model = tmp_path / "sine.pk"
    model.write_text("state x\ndx/dt = -sin(x)\nequilibrium o at x = 0\n")
    assert main(["basin", str(model), "o", "--json", "--quiet"]) == 1
    data = json.loads(capsys.readouterr().out)
    assert data["status"] == "not proved"
    assert "neither polynomial nor rational" in data["reason"]
