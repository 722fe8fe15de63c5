"""Shared helpers for the certificate, audit, prove and report tests."""

from __future__ import annotations

import json
from typing import Any

import pytest

import proofkit
from proofkit.audit import FormatError, audit_text
from proofkit.proofs import ProveRun, prove_model
from proofkit.provenance import check_provenance
from tests.models import DUFFING

# dx/dt = x^2 - 2, dy/dt = -y: equilibria (+-sqrt 2, 0) (computed by hand):
# J = diag(+-2 sqrt 2, -1).
SQRT_TEXT = """\
system root_two
state x, y
dx/dt = x^2 - 2
dy/dt = -y
equilibrium plus at x = sqrt(2), y = 0
equilibrium minus at x = -sqrt(2), y = 0
claim plus unstable
claim minus stable
"""

# The reversed-time oscillator (published: Khalil, Nonlinear Systems, sec. 8.2; REFERENCES.md).
REVERSED_TEXT = """\
system reversed_oscillator
state x1, x2
dx1/dt = -x2
dx2/dt = x1 + (x1^2 - 1)*x2
equilibrium origin at x1 = 0, x2 = 0
claim origin stable
"""


def companion_text(coeffs: list[str], claim: str) -> str:
    """A linear model whose Jacobian has det(sI - A) = s^n + c1 s^(n-1) + ... + cn."""
    n = len(coeffs)
    xs = [f"x{i + 1}" for i in range(n)]
    lines = ["system companion", "state " + ", ".join(xs)]
    lines += [f"d{xs[i]}/dt = {xs[i + 1]}" for i in range(n - 1)]
    last = " ".join(f"- ({c})*{xs[n - 1 - k]}" for k, c in enumerate(coeffs))
    lines.append(f"d{xs[-1]}/dt = 0 {last}")
    lines.append("equilibrium o at " + ", ".join(f"{x} = 0" for x in xs))
    lines.append(f"claim o {claim}")
    return "\n".join(lines) + "\n"


def prove_text(text: str, name: str = "test.pk") -> ProveRun:
    return prove_model(proofkit.parse(text, name))


def full_audit_ok(text: str) -> bool:
    """Core audit and provenance both accept (no claim rejected)."""
    try:
        report = audit_text(text)
    except FormatError:
        return False
    if not report.accepted:
        return False
    return check_provenance(json.loads(text)).ok


@pytest.fixture(scope="session")
def bistable_run() -> ProveRun:
    return prove_text(DUFFING)


@pytest.fixture(scope="session")
def sqrt_run() -> ProveRun:
    return prove_text(SQRT_TEXT)


@pytest.fixture(scope="session")
def reversed_run() -> ProveRun:
    return prove_text(REVERSED_TEXT)


def numeric_leaves(obj: Any, path: tuple[Any, ...] = ()) -> list[tuple[Any, ...]]:
    """Paths of every exact number in a certificate: ints and rational strings."""
    import re

    out: list[tuple[Any, ...]] = []
    if isinstance(obj, dict):
        for k, v in obj.items():
            if k in ("source", "source_sha256", "file", "name", "version", "reason", "statement"):
                continue
            out += numeric_leaves(v, (*path, k))
    elif isinstance(obj, list):
        for i, v in enumerate(obj):
            out += numeric_leaves(v, (*path, i))
    elif isinstance(obj, bool):
        pass
    elif isinstance(obj, int) or (
        isinstance(obj, str) and re.fullmatch(r"-?[0-9]+(/[0-9]+)?", obj)
    ):
        out.append(path)
    return out


def get_in(obj: Any, path: tuple[Any, ...]) -> Any:
    for k in path:
        obj = obj[k]
    return obj


def set_in(obj: Any, path: tuple[Any, ...], value: Any) -> None:
    for k in path[:-1]:
        obj = obj[k]
    obj[path[-1]] = value
