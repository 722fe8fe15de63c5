"""The Python API: one front door, doctested examples, light import, agreement with the CLI."""

from __future__ import annotations

import doctest
import json
import subprocess
import sys
from pathlib import Path

import pytest
import sympy as sp

import proofkit
import proofkit.api
from proofkit.errors import InputError

from .models import DUFFING

ROOT = Path(__file__).resolve().parents[2]
PY = sys.executable


def test_api_docstring_examples_run() -> None:
    result = doctest.testmod(proofkit.api, optionflags=doctest.ELLIPSIS)
    assert result.attempted >= 7
    assert result.failed == 0


def test_every_public_name_is_documented_and_exported() -> None:
    for name in ("load", "parse", "inspect", "prove", "basin", "orbit", "audit", "portrait"):
        assert name in proofkit.__all__
        fn = getattr(proofkit.api, name)
        assert fn.__doc__ and len(fn.__doc__) > 40, name
    assert (ROOT / "proofkit" / "py.typed").is_file()


def test_load_and_parse_are_one_door(tmp_path: Path) -> None:
    f = tmp_path / "m.pk"
    f.write_text(DUFFING, encoding="utf-8")
    assert proofkit.load(f) == proofkit.parse(DUFFING)
    with pytest.raises(InputError) as err:
        proofkit.parse("state x\ndx/dt = 2x\n", name="typed.pk")
    assert "typed.pk:2" in str(err.value) and "^" in str(err.value)


def test_import_proofkit_stays_light() -> None:
    code = (
        "import sys, proofkit; heavy = [m for m in ('sympy', 'numpy', 'cvxpy', 'matplotlib', "
        "'lark', 'prompt_toolkit') if m in sys.modules]; print(heavy)"
    )
    out = subprocess.run([PY, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[]"


def test_audit_is_both_the_package_and_the_function() -> None:
    import proofkit.audit as package

    assert package is sys.modules["proofkit.audit"]
    assert callable(proofkit.audit) and proofkit.audit.audit_text is package.audit_text
    run = proofkit.prove(proofkit.parse(DUFFING))
    result = proofkit.audit(run.certificate)
    assert result.accepted
    assert [c.status for c in result.report.claims] == [
        c.status for c in proofkit.audit(run, core_only=True).report.claims
    ]


def test_inspect_matches_sympy_and_the_command_line(tmp_path: Path) -> None:
    model = proofkit.parse(DUFFING)
    found = proofkit.inspect(model)
    x, y = sp.symbols("x y", real=True)
    # computed: sympy.solve of the field y = 0, -x + x^3 - y = 0 -> x in {-1, 0, 1}
    expected = {(float(s[x]), float(s[y])) for s in sp.solve([y, -x + x**3 - y], [x, y], dict=True)}
    got = {(e.numeric["x"], e.numeric["y"]) for e in found.equilibria}
    assert got == expected
    f = tmp_path / "m.pk"
    f.write_text(DUFFING, encoding="utf-8")
    cli = subprocess.run(
        [PY, "-m", "proofkit", "inspect", str(f), "--json"], capture_output=True, text=True
    )
    assert cli.returncode == 0, cli.stderr
    ours = json.loads(json.dumps(proofkit.inspect(f).to_json()))
    assert ours["equilibria"] == json.loads(cli.stdout)["equilibria"]


def test_prove_statuses_come_from_the_audit() -> None:
    result = proofkit.prove(proofkit.parse(DUFFING))
    assert [(o.claim, o.status) for o in result.outcomes] == [
        ("origin stable", "proved"),
        ("right unstable", "proved"),
    ]
    assert result.all_proved
    data = result.to_json()
    json.dumps(data)
    assert data["certificate"] == result.certificate


def test_a_wrong_argument_type_is_a_clear_error() -> None:
    with pytest.raises(TypeError, match="Model or the path"):
        proofkit.inspect(42)  # type: ignore[arg-type]
    with pytest.raises(InputError, match="no such file"):
        proofkit.inspect("does/not/exist.pk")


def test_audit_core_only_starts_without_heavy_libraries(tmp_path: Path) -> None:
    cert = tmp_path / "c.json"
    cert.write_text(proofkit.prove(proofkit.parse(DUFFING)).run.text, encoding="utf-8")
    code = (
        "import sys, contextlib, io\nfrom proofkit.cli import main\n"
        "with contextlib.redirect_stdout(io.StringIO()):\n"
        f"    rc = main(['audit', '--core-only', {str(cert)!r}])\n"
        "print(rc, [m for m in ('sympy', 'numpy', 'cvxpy', 'lark', 'matplotlib') "
        "if m in sys.modules])\n"
    )
    out = subprocess.run([PY, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "0 []"


def test_readme_tour_python_runs(tmp_path: Path) -> None:
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    tour = text[text.index("## Three ways in") :]
    code = tour[tour.index("```python") + len("```python") : tour.rindex("```")]
    (tmp_path / "worked").symlink_to(ROOT / "worked")
    done = subprocess.run([PY, "-c", code], capture_output=True, text=True, cwd=tmp_path)
    assert done.returncode == 0, done.stderr
    assert (tmp_path / "latch.svg").stat().st_size > 10_000
    assert (tmp_path / "out" / "valve_latch" / "certificate.json").is_file()
