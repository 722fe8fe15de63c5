"""``proofkit inspect`` shows the equilibria table and the JSON keys of the analysis."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

from proofkit import parse
from proofkit.cli.inspect_cmd import inspect_report, inspect_text

# computed by hand: dtheta/dt = omega, domega/dt = -2 theta + theta^3/6 - omega/2 rests where
# theta (theta^2/6 - 2) = 0: theta = 0, +-2 sqrt(3); J = [[0, 1], [-2 + theta^2/2, -1/2]]
TEXT = """\
system pitch
parameter k = 2 in [3/2, 3]
state theta, omega
dtheta/dt = omega
domega/dt = -k*theta + theta^3/6 - omega/2
equilibrium level at theta = 0, omega = 0
claim level stable at nominal
"""


def test_json_lists_every_equilibrium_exactly() -> None:
    rep = inspect_report(parse(TEXT, name="pitch.pk"))
    assert rep["complete"] is True and "zero-dimensional" in rep["complete_reason"]
    eqs = {e["point"]["theta"]: e for e in rep["equilibria"]}
    assert set(eqs) == {"0", "2*sqrt(3)", "-2*sqrt(3)"}
    level = eqs["0"]
    assert level["name"] == "level"
    assert level["jacobian"] == [["0", "1"], ["-2", "-1/2"]]
    assert level["verdict"] == "stable" and level["type"] == "stable focus"
    assert level["rhp_count"] == 0
    re_, im = level["eigenvalues"][0]
    assert abs(re_ + 0.25) < 1e-12 and abs(abs(im) - (2 - 1 / 16) ** 0.5) < 1e-12
    side = eqs["2*sqrt(3)"]  # J = [[0, 1], [4, -1/2]]: det -4 < 0
    assert side["name"] is None and side["type"] == "saddle" and side["rhp_count"] == 1
    assert side["jacobian"] == [["0", "1"], ["4", "-1/2"]]
    assert abs(side["numeric"]["theta"] - 2 * 3**0.5) < 1e-12


def test_text_has_the_table_and_the_completeness_line() -> None:
    text = inspect_text(parse(TEXT, name="pitch.pk"))
    assert "equilibria (at the nominal parameter values):" in text
    table = text[text.index("equilibria (at the nominal parameter values):") :]
    line = next(ln for ln in table.splitlines() if ln.strip().startswith("level "))
    assert "theta = 0, omega = 0" in line and "stable  " in line and "stable focus" in line
    assert "complete: zero-dimensional system: all 3 real equilibria" in text


def test_cli_json_has_the_keys(tmp_path: Path) -> None:
    f = tmp_path / "pitch.pk"
    f.write_text(TEXT)
    out = subprocess.run(
        [sys.executable, "-m", "proofkit", "inspect", "--json", str(f)],
        capture_output=True,
        text=True,
        check=True,
    )
    data = json.loads(out.stdout)
    assert {"equilibria", "complete", "complete_reason", "model"} <= set(data)
    keys = {"name", "point", "numeric", "jacobian", "eigenvalues", "rhp_count", "verdict", "type"}
    assert all(keys <= set(e) for e in data["equilibria"])
