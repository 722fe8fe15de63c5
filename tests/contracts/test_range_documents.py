"""Documents of a Lyapunov proof over a parameter range show V and its derivative in k."""

from __future__ import annotations

from pathlib import Path

from proofkit.cli import main

# Invented loop; computed by hand: with V = a x^2 + b y^2,
# dV/dt = -2a x^2 + 2(a k - b) x y - 2b y^2 - 2b y^4, negative definite for small k.
MODEL = """
system range_doc
parameter k = 1 in [0, 2]
state x, y
dx/dt = -x + k*y
dy/dt = -x - y - y^3
equilibrium o at x = 0, y = 0
claim o globally stable
"""


def test_range_lyapunov_documents_are_written(tmp_path: Path) -> None:
    model = tmp_path / "range_doc.pk"
    model.write_text(MODEL)
    out = tmp_path / "out"
    assert main(["prove", str(model), "--out", str(out), "--quiet"]) == 0
    text = (out / "proof.md").read_text()
    assert "for every value of k in [0, 2]" in text or "k in [0, 2]" in text
    derivative = next(line for line in text.splitlines() if "\\dot V" in line)
    assert " k" in derivative  # the parameter stays a symbol over the range
    assert (out / "proof.tex").read_text().count("\\dot V") >= 1
