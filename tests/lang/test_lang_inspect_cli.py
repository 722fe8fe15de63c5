"""``proofkit inspect`` as a user runs it: a subprocess of ``python -m proofkit``.

The expected text and JSON come from the model files themselves (the values
written there) and the exit-code contract of proofkit/cli (0 ok, 2 bad input).
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

from proofkit import load, parse
from proofkit.cli.inspect_cmd import inspect_report, inspect_text
from proofkit.lang import format_expr

WORKED = Path(__file__).resolve().parents[2] / "worked"
WORKED_FILES = sorted(WORKED.glob("*.pk"))


def run(*args: str, stdin: bytes | None = None) -> subprocess.CompletedProcess[str]:
    proc = subprocess.run(
        [sys.executable, "-m", "proofkit", "inspect", *args],
        input=stdin.decode() if stdin is not None else None,
        capture_output=True,
        text=True,
        timeout=120,
    )
    assert "Traceback" not in proc.stderr, proc.stderr
    return proc


def test_there_are_worked_models() -> None:
    assert len(WORKED_FILES) >= 3


@pytest.mark.parametrize("path", WORKED_FILES, ids=lambda p: p.name)
def test_inspect_text_and_json_of_worked_models(path: Path) -> None:
    model = load(path)
    text = run(str(path))
    assert text.returncode == 0, text.stderr
    out = text.stdout
    assert f"model {model.name}" in out
    assert "states (2): " + ", ".join(model.states) in out
    for eq in model.equations:
        assert f"= {format_expr(eq.rhs)}" in out
    for claim in model.claims:
        assert claim.text in out
    for q in model.equilibria:
        assert q.name in out

    js = run(str(path), "--json")
    assert js.returncode == 0, js.stderr
    report = json.loads(js.stdout)
    assert report == json.loads(json.dumps(inspect_report(model)))
    m = report["model"]
    assert m["name"] == model.name and m["states"] == list(model.states)
    assert set(m["equations"]) == set(model.states)
    assert m["claims"] == [c.text for c in model.claims]
    assert set(m["equilibria"]) == {q.name for q in model.equilibria}
    # as written in the files: sin (swing_machine) and s/(1 + s) (culture_uptake) are the
    # only non-polynomial right-hand sides; the others are of degree 2 or 3
    if path.stem in ("swing_machine", "culture_uptake"):
        assert m["polynomial"] is False
    else:
        assert m["polynomial"] is True and m["degree"] in (2, 3)


def test_json_exact_numbers_and_ranges() -> None:
    # the values as written in worked/trailer_sway.pk and worked/valve_latch.pk
    report = inspect_report(load(WORKED / "trailer_sway.pk"))["model"]
    assert report["parameters"] == [{"name": "k", "nominal": "1", "range": ["1/2", "2"]}]
    assert report["domain"] == ["s^2 <= 4", "w^2 <= 4"]
    assert report["equilibria"]["jackknife"] == {"s": "k", "w": "0"}
    assert report["equations"] == {"s": "w", "w": "s^2 - k*s - w"}
    latch = inspect_report(load(WORKED / "valve_latch.pk"))["model"]
    assert latch["equilibria"]["open"] == {"x": "1", "y": "1/2"}
    assert latch["domain"] is None and latch["parameters"] == []


def test_inspect_text_shows_ranges_and_the_domain() -> None:
    out = inspect_text(load(WORKED / "trailer_sway.pk"))
    assert "k = 1  uncertain, in [1/2, 2]" in out
    assert "s^2 <= 4" in out
    assert "(for every parameter value in the ranges)" in out


def test_bad_files_exit_2_without_traceback(tmp_path: Path) -> None:
    bad = tmp_path / "bad.pk"
    bad.write_text("state x\ndx/dt = 2x\n")
    proc = run(str(bad))
    assert proc.returncode == 2
    assert f"{bad}:2:10: error:" in proc.stderr and "hint: write 2*x" in proc.stderr
    assert proc.stdout == ""

    latin = tmp_path / "latin.pk"
    latin.write_bytes(b"state x\ndx/dt = -x  # \xe9\n")
    proc = run(str(latin), "--json")
    assert proc.returncode == 2 and "not UTF-8" in proc.stderr

    proc = run(str(tmp_path / "missing.pk"))
    assert proc.returncode == 2 and "no such file" in proc.stderr


def test_standard_input_in_process(monkeypatch: pytest.MonkeyPatch, capsys) -> None:
    import io

    from proofkit.cli import main

    data = b"state x\ndx/dt = -x\nequilibrium E at x = 1\n"
    monkeypatch.setattr(sys, "stdin", io.TextIOWrapper(io.BytesIO(data)))
    assert main(["inspect", "-"]) == 2
    err = capsys.readouterr().err
    assert "<stdin>:3:1" in err and "residual dx/dt = -1" in err
    monkeypatch.setattr(sys, "stdin", io.TextIOWrapper(io.BytesIO(b"state x\ndx/dt = -x\n")))
    assert main(["inspect", "-", "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["model"]["equations"] == {"x": "-x"}


def test_help() -> None:
    proc = run("--help")
    assert proc.returncode == 0
    assert "--json" in proc.stdout and "FILE" in proc.stdout


def test_inspect_shows_moving_points_and_where_the_field_is_defined() -> None:
    text = (
        "parameter k = 1 in [1/2, 2]\nstate x\nlet r = x^2/(x - 3)\n"
        "dx/dt = k - x + 0*log(x + 3) + 0*r\nequilibrium e at x = k\n"
    )
    model = parse(text, name="m.pk")
    report = inspect_report(model)["model"]
    assert report["moving_equilibria"] == ["e"]
    assert report["conditions"] == [
        {"expression": "x + 3", "relation": ">", "why": "the argument of log"},
        {"expression": "x - 3", "relation": "!=", "why": "a denominator"},
    ]
    out = inspect_text(model)
    assert "e  at x = k  (moves with k; checked over the ranges)" in out
    assert "x + 3 > 0   (the argument of log)" in out and "x - 3 != 0  (a denominator)" in out
