"""The package installs and finds its grammar both as a wheel and editable.

Also keeps the README's set-up commands and `.ci/run` in agreement, and the
hand-kept package list in pyproject.toml complete. The wheel build takes tens
of seconds and runs under ``pytest -m slow``; the package-data check is its
fast member in the default run.
"""

from __future__ import annotations

import os
import re
import subprocess
import sys
import tomllib
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]

PROBE = (
    "import proofkit, proofkit.grammar as g; "
    "print(proofkit.__file__); print(len(g.grammar_text()))"
)


def _readme_commands() -> list[str]:
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    block = re.search(r"```(?:sh|bash|console)?\n(.*?)```", text, re.S)
    assert block, "README.md must open its set-up section with a shell block"
    return [line.strip() for line in block.group(1).splitlines() if line.strip()]


def test_readme_has_exactly_two_setup_commands_and_ci_runs_the_test_one() -> None:
    commands = _readme_commands()
    assert len(commands) == 2, commands
    run_cmd, test_cmd = commands
    assert "proofkit" in run_cmd and "worked/" in run_cmd
    assert "pytest" in test_cmd and ".[test]" in test_cmd
    assert test_cmd in (ROOT / ".ci" / "run").read_text(encoding="utf-8")


def test_every_subpackage_is_listed_in_pyproject() -> None:
    config = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))
    listed = set(config["tool"]["setuptools"]["packages"])
    on_disk = {
        ".".join(p.parent.relative_to(ROOT).parts)
        for p in (ROOT / "proofkit").rglob("__init__.py")
    } | {"proofkit.grammar"}
    assert on_disk == listed


def test_editable_install_finds_grammar_outside_the_source_tree(tmp_path: Path) -> None:
    out = subprocess.run(
        [sys.executable, "-c", PROBE], cwd=tmp_path, capture_output=True, text=True, check=True
    ).stdout.split()
    assert int(out[1]) > 100


def test_package_data_covers_the_files_a_wheel_must_ship() -> None:
    # the fast member of the packaging family: the configuration the wheel build reads
    import fnmatch

    config = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))
    data = config["tool"]["setuptools"]["package-data"]
    dirs = config["tool"]["setuptools"]["package-dir"]
    for package, name in (
        ("proofkit.grammar", "model.lark"),
        ("proofkit.grammar", "LANGUAGE.md"),
        ("proofkit", "py.typed"),
        ("proofkit", "certificate.schema.json"),
    ):
        assert (ROOT / dirs[package] / name).is_file(), name
        assert any(fnmatch.fnmatch(name, pat) for pat in data[package]), name


@pytest.mark.slow
def test_wheel_install_ships_grammar_and_spec(tmp_path: Path) -> None:
    wheels = tmp_path / "wheels"
    subprocess.run(
        [sys.executable, "-m", "pip", "wheel", "-q", "--no-deps", "-w", str(wheels), str(ROOT)],
        check=True,
        capture_output=True,
    )
    (wheel,) = wheels.glob("proofkit-*.whl")
    target = tmp_path / "site"
    subprocess.run(
        [sys.executable, "-m", "pip", "install", "-q", "--no-deps", "--target", str(target),
         str(wheel)],
        check=True,
        capture_output=True,
    )
    assert (target / "proofkit" / "grammar" / "model.lark").is_file()
    assert (target / "proofkit" / "grammar" / "LANGUAGE.md").is_file()
    assert (target / "proofkit" / "py.typed").is_file()
    env = {**os.environ, "PYTHONPATH": str(target)}
    out = subprocess.run(
        [sys.executable, "-c", PROBE], cwd=tmp_path, env=env, capture_output=True, text=True,
        check=True,
    ).stdout.split()
    assert out[0].startswith(str(target))
    assert int(out[1]) > 100
