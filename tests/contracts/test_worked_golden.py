"""Golden files: the committed worked certificates and documents equal a fresh regeneration.

A change to the prover, the certificate format or the documents that is not
followed by ``python tests/certificate/make_worked.py`` (and a review of the
diff) fails here. The default run regenerates the quickest model; ``pytest -m
slow`` regenerates all of them.
"""

from __future__ import annotations

import difflib
import importlib.util
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
WORKED = sorted((ROOT / "worked").glob("*.pk"))
FAST = "duct_whistle"  # linearization and one small sum-of-squares program: about 3 s


def _make_worked():
    spec = importlib.util.spec_from_file_location(
        "make_worked", ROOT / "tests" / "certificate" / "make_worked.py"
    )
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def _diff(committed: str, fresh: str, name: str) -> str:
    lines = difflib.unified_diff(
        committed.splitlines(), fresh.splitlines(), f"committed {name}", f"fresh {name}", n=1
    )
    return "\n".join(list(lines)[:40])


def _check(pk_file: Path) -> None:
    cert, md, _line = _make_worked().build(pk_file)
    for suffix, fresh in ((".certificate.json", cert), (".proof.md", md)):
        path = pk_file.with_name(pk_file.stem + suffix)
        committed = path.read_text(encoding="utf-8")
        assert committed == fresh, (
            f"{path.name} differs from a fresh regeneration; run "
            f"`python tests/certificate/make_worked.py` and review the diff:\n"
            + _diff(committed, fresh, path.name)
        )


def test_worked_models_exist() -> None:
    assert FAST in {p.stem for p in WORKED} and len(WORKED) >= 3


def test_fast_worked_model_regenerates_identically() -> None:
    _check(ROOT / "worked" / f"{FAST}.pk")


@pytest.mark.slow
@pytest.mark.parametrize("pk_file", [p for p in WORKED if p.stem != FAST], ids=lambda p: p.stem)
def test_every_worked_model_regenerates_identically(pk_file: Path) -> None:
    _check(pk_file)
