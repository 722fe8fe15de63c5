"""Every single-number change to a range certificate is rejected by the audit.

Proved stability covers (every sign +1) carry no slack: a changed box bound breaks the
tiling, a changed sign breaks the theorem (the enclosure of the radical, which may be
loosened soundly, is left alone), a changed coefficient breaks a recomputed
identity, a changed margin no longer matches its cover. Refutations likewise.
"""

from __future__ import annotations

import json
from fractions import Fraction
from typing import Any

from hypothesis import assume, given
from hypothesis import strategies as st

from proofkit.audit import FormatError

from .helpers import certify, convection, reaudit

_PROVED = certify(convection(2, 20))[0]
_REFUTED = certify(convection(20, 30))[0]


def _numbers(node: Any, path: tuple = ()) -> list[tuple]:
    """Paths of every exact number (a "p/q" string) or sign (an int) below ``node``."""
    out: list[tuple] = []
    if isinstance(node, dict):
        for k, v in node.items():
            out += _numbers(v, (*path, k))
    elif isinstance(node, list):
        for i, v in enumerate(node):
            out += _numbers(v, (*path, i))
    elif isinstance(node, str) and path and path[-1] not in ("name",):
        try:
            Fraction(node)
        except ValueError:
            return out
        out.append(path)
    elif isinstance(node, int) and not isinstance(node, bool):
        out.append(path)
    return out


def _set(node: Any, path: tuple, value: Any) -> None:
    for k in path[:-1]:
        node = node[k]
    node[path[-1]] = value


def _get(node: Any, path: tuple) -> Any:
    for k in path:
        node = node[k]
    return node


def _mutated_status(text: str, pick: int, how: int) -> str:
    cert = json.loads(text)
    claim = cert["claims"][0]
    # the enclosure of sqrt(g) (the last interval of a box) may be loosened soundly: skip it
    paths = [
        p
        for p in _numbers(claim)
        if p[0] in ("evidence", "claim") and not ("box" in p and p[p.index("box") + 1] == 1)
    ]
    path = paths[pick % len(paths)]
    old = _get(claim, path)
    if isinstance(old, int):
        new: Any = old + (1 if how % 2 else -2)
    else:
        value = Fraction(old) * 2 + Fraction(1, 7) if how % 2 else Fraction(old) - 1
        assume(value != 0)
        new = str(value)
    _set(claim, path, new)
    try:
        return reaudit(cert)[0].status
    except FormatError:
        return "rejected"


@given(st.integers(0, 10_000), st.integers(0, 1))
def test_mutated_proof_rejected(pick: int, how: int) -> None:
    assert _mutated_status(_PROVED, pick, how) == "rejected"


@given(st.integers(0, 10_000), st.integers(0, 1))
def test_mutated_refutation_rejected(pick: int, how: int) -> None:
    status = _mutated_status(_REFUTED, pick, how)
    assert status == "rejected"
