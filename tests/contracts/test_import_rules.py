"""The audit is the trusted kernel: the import rules that keep it independent.

* No module outside ``proofkit/audit/`` imports ``proofkit.audit.algebra`` or
  ``proofkit.audit.numbers`` (the prover, the certificate writer and the
  documents have their own arithmetic, so one bug cannot sit in both).
* ``proofkit/audit/`` imports nothing of the package outside itself, and
  nothing outside the Python standard library.

Checked on the source text (every ``import`` statement, also inside
functions), so a lazy import cannot slip through.
"""

from __future__ import annotations

import ast
import sys
from pathlib import Path

PACKAGE = Path(__file__).resolve().parents[2] / "proofkit"
AUDIT = PACKAGE / "audit"
PRIVATE = ("proofkit.audit.algebra", "proofkit.audit.numbers")


def _module_name(path: Path) -> str:
    rel = path.relative_to(PACKAGE.parent).with_suffix("")
    parts = list(rel.parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def _imports(path: Path, here: str | None = None) -> list[tuple[int, str]]:
    """Every imported module name (absolute), with its line; `from a import b` gives a.b too."""
    tree = ast.parse(path.read_text(encoding="utf-8"), str(path))
    here = here or _module_name(path)
    package = here if path.name == "__init__.py" else here.rpartition(".")[0]
    out: list[tuple[int, str]] = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            out += [(node.lineno, a.name) for a in node.names]
        elif isinstance(node, ast.ImportFrom):
            base = node.module or ""
            if node.level:
                anchor = package.split(".")
                anchor = anchor[: len(anchor) - (node.level - 1)]
                base = ".".join([*anchor, base] if base else anchor)
            out.append((node.lineno, base))
            out += [(node.lineno, f"{base}.{a.name}") for a in node.names]
    return out


def _sources(root: Path) -> list[Path]:
    return sorted(p for p in root.rglob("*.py") if "__pycache__" not in p.parts)


def test_nothing_outside_the_audit_imports_its_arithmetic() -> None:
    offenders = [
        f"{p.relative_to(PACKAGE.parent)}:{line}: {name}"
        for p in _sources(PACKAGE)
        if AUDIT not in p.parents
        for line, name in _imports(p)
        if any(name == m or name.startswith(m + ".") for m in PRIVATE)
    ]
    assert offenders == [], offenders


def test_the_audit_imports_only_itself_and_the_standard_library() -> None:
    stdlib = set(sys.stdlib_module_names) | {"__future__"}
    offenders = []
    for p in _sources(AUDIT):
        for line, name in _imports(p):
            top = name.split(".")[0]
            inside = name == "proofkit.audit" or name.startswith("proofkit.audit.")
            if (top == "proofkit" and not inside) or (top != "proofkit" and top not in stdlib):
                offenders.append(f"{p.relative_to(PACKAGE.parent)}:{line}: {name}")
    assert offenders == [], offenders


def test_the_scanner_sees_lazy_and_relative_imports(tmp_path: Path) -> None:
    # common practice: a rule checker is itself checked on a planted violation
    planted = tmp_path / "planted.py"
    planted.write_text(
        "def f():\n    from proofkit.audit import numbers\n    from ..audit.algebra import x\n"
    )
    names = [n for _line, n in _imports(planted, here="proofkit.report.planted")]
    assert "proofkit.audit.numbers" in names
    assert "proofkit.audit.algebra.x" in names
