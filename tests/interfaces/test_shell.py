"""The shell, driven through piped input (in process and as a program) and a pseudo-terminal."""

from __future__ import annotations

import io
import os
import subprocess
import sys
from pathlib import Path

import pytest

import proofkit
from proofkit.shell import run_shell
from proofkit.shell.session import Session

from .models import DUFFING

PY = sys.executable
ROOT = Path(__file__).resolve().parents[2]


def _shell(lines: str, path: str | None = None) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    code = run_shell(path, stdin=io.StringIO(lines), stdout=out, stderr=err, interactive=False)
    return code, out.getvalue(), err.getvalue()


def test_a_model_typed_line_by_line_then_questions() -> None:
    code, out, _ = _shell(
        "state x, y\n"
        "dx/dt = y\n"
        "dy/dt = -x + x^3 - y\n"
        "equilibrium origin at x = 0, y = 0\n"
        "equilibria\n"
        "linearize origin\n"
        "try origin stable\n"
    )
    assert code == 0
    # computed by hand: x in {-1, 0, 1}; J(0) = [[0, 1], [-1, -1]], s^2 + s + 1
    assert "origin  x = 0, y = 0" in out and out.count("saddle") == 2
    assert "[ 0, 1 ]" in out and "[ -1, -1 ]" in out
    assert "coefficients (highest power first): 1, 1, 1" in out
    assert "proved  origin stable [linearization]" in out


def test_errors_show_a_caret_and_the_session_goes_on() -> None:
    code, out, _ = _shell(
        "state x\n"
        "dx/dt = 2x\n"  # implicit multiplication: an error in this statement
        "dx/dt = -x^3\n"
        "frobnicate\n"
        "equilibrium o at x = 1\n"  # not an equilibrium: rejected with the residual
        "show\n"
    )
    assert code == 0
    lines = out.splitlines()
    at = lines.index("    dx/dt = 2x")
    assert lines[at - 1].startswith("<input>:1:") and set(lines[at + 1].strip()) == {"^"}
    assert "'frobnicate' is neither a statement nor a command" in out
    assert "'o' is not an equilibrium" in out
    assert "  2  dx/dt = -x^3" in out and "complete model: 1 state" in out


def test_retyping_an_equation_replaces_it_and_undo_restores_it() -> None:
    _, out, _ = _shell("state x\ndx/dt = -x\ndx/dt = -x^3\nshow\nundo\nshow\ndrop dx/dt\nshow\n")
    assert "replaced: equation x" in out
    shows = out.split("  1  state x")
    assert "dx/dt = -x^3" in shows[1] and "dx/dt = -x\n" in shows[2]
    assert "not complete yet" in shows[3] and "has no equation" in shows[3]


def test_edit_prints_the_statement_when_piped() -> None:
    _, out, _ = _shell("state x\ndx/dt = -x\nedit dx/dt\nedit dy/dt\n")
    assert "\ndx/dt = -x\n" in out and "nothing to edit named 'dy/dt'" in out


def test_quit_ends_and_later_lines_are_not_read() -> None:
    code, out, _ = _shell("state x\ndx/dt = -x\nquit\nshow\n")
    assert code == 0 and "  1  state x" not in out


def test_load_save_round_trip(tmp_path: Path) -> None:
    src = tmp_path / "in.pk"
    src.write_text("# comment\n" + DUFFING.replace("y\ndy/dt", "y\n\ndy/dt"), encoding="utf-8")
    saved = tmp_path / "out.pk"
    code, out, _ = _shell(f"save {saved}\n", path=str(src))
    assert code == 0 and "loaded 8 statements" in out
    assert proofkit.load(saved) == proofkit.load(src)


def test_interrupted_work_leaves_the_session(monkeypatch: pytest.MonkeyPatch) -> None:
    import proofkit.api

    def stop(*_args: object, **_kw: object) -> None:
        raise KeyboardInterrupt

    monkeypatch.setattr(proofkit.api, "prove", stop)
    out = io.StringIO()
    s = Session(out, io.StringIO())
    for line in DUFFING.splitlines():
        s.handle(line)
    s.handle("prove")
    s.handle("show")
    assert "interrupted" in out.getvalue() and "complete model: 2 states" in out.getvalue()


def test_questions_with_wrong_arguments_keep_the_session() -> None:
    _, out, _ = _shell(DUFFING + "basin\nbasin nowhere\nbasin origin 3\nlinearize 7\nshow\n")
    assert "basin needs an equilibrium name" in out
    assert "no declared equilibrium 'nowhere'" in out and "degree 3" in out
    assert "no equilibrium '7'" in out and "complete model: 2 states" in out
    assert "Traceback" not in out


def test_piped_program_has_no_prompt_and_exits_0(tmp_path: Path) -> None:
    f = tmp_path / "m.pk"
    f.write_text(DUFFING, encoding="utf-8")
    done = subprocess.run(
        [PY, "-m", "proofkit", "shell", str(f), "--quiet"],
        input="equilibria\nnonsense here\n",
        capture_output=True,
        text=True,
        timeout=300,
    )
    assert done.returncode == 0, done.stderr
    assert "proofkit>" not in done.stdout and "complete: " in done.stdout
    assert "neither a statement nor a command" in done.stdout and done.stderr == ""


def _spawn(tmp_path: Path, *extra: str) -> object:
    pexpect = pytest.importorskip("pexpect")
    env = {
        **os.environ,
        "PROOFKIT_HISTORY": str(tmp_path / "history"),
        "TERM": "xterm",
        "PROMPT_TOOLKIT_NO_CPR": "1",
    }
    return pexpect.spawn(
        PY,
        ["-m", "proofkit", "shell", *extra],
        env=env,
        cwd=str(tmp_path),
        encoding="utf-8",
        timeout=30,
        dimensions=(40, 120),
    )


def test_terminal_session_with_completion_history_and_ctrl_keys(tmp_path: Path) -> None:
    child = _spawn(tmp_path, "--quiet")
    child.expect("'help' lists the commands")
    child.expect("proofkit>")
    child.sendline("state x, y")
    child.expect("state 'x' has no equation")
    child.send("dx")  # completion offers the equation of each state
    child.send("\t")
    child.expect("/dt =")  # the terminal shows only the inserted part
    child.sendline("y")
    child.expect("state 'y' has no equation")
    child.sendline("dy/dt = -x - y")
    child.send("equi")
    child.send("\t")
    child.expect("libria")
    child.sendcontrol("c")  # Ctrl-C at the prompt clears the line, the session goes on
    child.sendline("equilibria")
    child.expect("stable focus")  # computed by hand: s^2 + s + 1, a stable focus
    child.sendline("dy/dt = 2x")
    child.expect("error: ")
    child.expect("hint: ")
    child.sendline("edit dy/dt")  # the statement comes back on the prompt, to be changed
    child.expect("-x - y")
    child.sendline(" + x^3")
    child.expect("replaced: equation y")
    child.sendline("show")
    child.expect(r"dy/dt = -x - y \+ x\^3")
    child.expect("proofkit>")
    for _ in range(3):  # Ctrl-D on an empty line leaves; typed ahead of the prompt it may be lost
        child.sendcontrol("d")
        if child.expect([pexpect_eof(), pexpect_timeout()], timeout=5) == 0:
            break
    child.close()
    assert child.exitstatus == 0
    history = (tmp_path / "history").read_text(encoding="utf-8")
    assert "dy/dt = -x - y" in history


def pexpect_eof() -> object:
    import pexpect

    return pexpect.EOF


def pexpect_timeout() -> object:
    import pexpect

    return pexpect.TIMEOUT


def test_json_mode_answers_each_line_with_one_object() -> None:
    import json

    out, err = io.StringIO(), io.StringIO()
    lines = DUFFING + "equilibria\ntry origin stable\ndx/dt = 2x\nshow\n"
    run_shell(None, stdin=io.StringIO(lines), stdout=out, stderr=err, json_lines=True)
    records = [json.loads(line) for line in out.getvalue().splitlines()]
    assert len(records) == len(lines.splitlines())
    by_input = {r["input"]: r for r in records}
    eqs = by_input["equilibria"]["equilibria"]
    # computed by hand: x in {-1, 0, 1}, the outer two saddles
    assert sorted((e["numeric"]["x"], e["type"]) for e in eqs) == [
        (-1.0, "saddle"),
        (0.0, "stable focus"),
        (1.0, "saddle"),
    ]
    assert by_input["try origin stable"]["claims"][0]["status"] == "proved"
    bad = by_input["dx/dt = 2x"]
    assert bad["ok"] is False and any("^" in line for line in bad["output"])
    assert by_input["show"]["complete"] is True


def test_ctrl_c_stops_long_work_and_the_session_goes_on(tmp_path: Path) -> None:
    import pexpect

    child = _spawn(tmp_path)
    child.expect("proofkit>")
    for line in DUFFING.splitlines():
        child.sendline(line)
    child.sendline("basin origin 10")  # a long search: degree 10
    child.expect("proofkit: ")  # progress on stderr: the work has started
    child.sendintr()
    child.expect("interrupted")
    child.sendline("show")
    child.expect("complete model: 2 states")
    child.sendline("quit")
    child.expect(pexpect.EOF)
    child.close()
    assert child.exitstatus == 0


def test_completion_offers_statements_commands_and_names() -> None:
    from proofkit.shell.repl import candidates

    s = Session(io.StringIO(), io.StringIO())
    for line in DUFFING.splitlines():
        s.handle(line)
    assert candidates(s, "equ") == ["equilibria", "equilibrium"]
    assert candidates(s, "d") == ["domain", "drop", "dx/dt = ", "dy/dt = "]
    assert candidates(s, "claim or") == ["origin"]
    assert candidates(s, "claim origin att") == ["attracts"]
    assert candidates(s, "linearize ") == sorted(
        ["claim", "domain", "dx/dt", "dy/dt", "origin", "right", "x", "y"]
    )


def test_portrait_draws_what_was_found_for_this_model_only(tmp_path: Path) -> None:
    from .models import VAN_DER_POL

    first, second = tmp_path / "a.png", tmp_path / "b.png"
    _, out, _ = _shell(
        VAN_DER_POL + f"cycles\nportrait {first}\ndx/dt = y + 0\nportrait {second}\n"
    )
    # published (Hairer & Wanner): the van der Pol cycle for mu = 1 has period 6.6633
    assert "cycle 1: period 6.6633" in out
    before, after = out.split(f"wrote {second}")
    assert "drawn: located periodic orbit" in before and "drawn:" not in after
    assert first.stat().st_size > 10_000 and second.stat().st_size > 10_000
