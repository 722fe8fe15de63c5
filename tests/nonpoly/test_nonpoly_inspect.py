"""``inspect`` on non-polynomial fields: one listing per root, no search across a pole, a budget."""

from __future__ import annotations

import json
import math
import subprocess
import sys
from pathlib import Path

import sympy as sp

from proofkit.analysis.boxsearch import box_search, search_settings
from proofkit.cli import main

from .conftest import CULTURE

SWING_BOX = """state x1, x2
dx1/dt = x2
dx2/dt = -x2/2 - (sin(x1 + pi/3) - sin(pi/3))
domain x1 >= -2 and x1 <= 2 and x2 >= -2 and x2 <= 2
"""


def _inspect(tmp_path: Path, text: str, *args: str) -> subprocess.CompletedProcess[str]:
    path = tmp_path / "model.pk"
    path.write_text(text)
    return subprocess.run(
        [sys.executable, "-m", "proofkit", "inspect", str(path), *args],
        capture_output=True,
        text=True,
        timeout=120,
    )


def test_swing_saddle_on_a_box_face_listed_once(tmp_path: Path) -> None:
    proc = _inspect(tmp_path, SWING_BOX, "--json", "--quiet")
    assert proc.returncode == 0, proc.stderr
    assert proc.stderr == ""
    report = json.loads(proc.stdout)
    points = [e["point"] for e in report["equilibria"]]
    # computed (sympy): sin(x + pi/3) = sin(pi/3) on [-2, 2] holds at x = 0 and x = pi/3
    # only (the next solution, -5 pi/3, lies outside); x2 = 0 at every equilibrium
    assert sorted(p["x1"] for p in points) == ["0", "pi/3"]
    assert report["complete"] is True


def test_boundary_of_two_boxes_root_merged() -> None:
    # the sub-boxes of [0, 2] x [-1, 1] meet at the root's coordinates; one root each
    x1, x2 = sp.symbols("x1 x2", real=True)
    fs = [x2, -x2 / 2 - (sp.sin(x1 + sp.pi / 3) - sp.sin(sp.pi / 3))]
    for box in ([(0, 2), (-1, 1)], [(0, 3), (0, 1)], [(-2, 2), (-2, 2)]):
        res = box_search(fs, [x1, x2], [(sp.Integer(a), sp.Integer(b)) for a, b in box])
        assert res.complete, res.reason
        assert sorted(r.exact for r in res.roots) == [(0, 0), (sp.pi / 3, 0)]


def test_culture_search_never_straddles_the_pole(tmp_path: Path) -> None:
    # s/(ks + s) has a pole at s = -1 inside the default box; the search runs on the
    # numerators, so it completes quickly, and the numerators' zero on the pole is named
    proc = _inspect(tmp_path, CULTURE, "--json", "--quiet", "--budget", "10")
    assert proc.returncode == 0, proc.stderr
    report = json.loads(proc.stdout)
    assert report["complete"] is True
    assert sorted((e["point"]["s"], e["point"]["b"]) for e in report["equilibria"]) == [
        ("1", "3"),
        ("4", "0"),
    ]  # computed by hand: s* = ks D/(m - D) = 1, b* = s0 - s* = 3; washout (s0, 0)
    assert "exactly on a pole" in report["complete_reason"]


def test_log_field_outside_its_natural_domain_excluded() -> None:
    x, y = sp.symbols("x y", real=True)
    fs = [sp.log(x) - y, x - 2 * sp.exp(y)]  # computed: log x = y, x = 2 e^y has no solution
    res = box_search(
        fs, [x, y], [(sp.Rational(1, 10), sp.Integer(10)), (sp.Integer(-10), sp.Integer(10))]
    )
    assert res.complete and res.roots == (), res.reason
    # across x = 0 the boxes where log is undefined are excluded, but boxes that straddle
    # the natural domain's boundary cannot be decided: never reported complete
    res = box_search(fs, [x, y], [(sp.Integer(-10), sp.Integer(10))] * 2, max_seconds=1)
    assert not res.complete and res.roots == ()
    assert "where the field is undefined" in res.reason


def test_budget_is_kept_and_progress_reported() -> None:
    x, y = sp.symbols("x y", real=True)
    fs = [sp.sin(23 * x) - y, sp.cos(19 * y) + x * sp.sin(13 * x * y) - sp.Rational(1, 3)]
    notes: list[str] = []
    with search_settings(seconds=1.2, progress=notes.append):
        import time

        t0 = time.monotonic()
        res = box_search(fs, [x, y], [(sp.Integer(-10), sp.Integer(10))] * 2)
        spent = time.monotonic() - t0
    assert not res.complete and "budget reached" in res.reason and "1.2 s" in res.reason
    assert notes and all("box search" in n for n in notes)
    assert spent < 1.2 + 10  # the search stops at its budget; naming roots follows


def test_budget_option_checked(capsys) -> None:
    for bad in ("0", "-1", "nan", "1e9"):
        assert main(["inspect", "x.pk", "--budget", bad]) == 2
    assert "--budget" in capsys.readouterr().err
    assert not math.isnan(20.0)
