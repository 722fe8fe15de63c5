"""Regenerate the hostile certificate corpus in tests/audit/hostile/.

Run from the repository root after a format change:

    .venv/bin/python tests/audit/make_hostile.py

Each file is a real certificate with one hostile change; ``expected.json``
gives, per file, the exit code of ``proofkit audit FILE`` and a piece of the
message it must print. Very large inputs (65,000 claims, a 400x400 Gram
matrix, 60 states) are built at test time instead of being committed.
"""

from __future__ import annotations

import copy
import json
import sys
from pathlib import Path
from typing import Any

import proofkit
from proofkit.certificate import dumps
from proofkit.proofs import prove_model

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
from tests.models import DUFFING

HERE = Path(__file__).resolve().parent / "hostile"

BISTABLE = DUFFING  # a stable origin and a saddle at x = 1 (tests/models.py)
ROOT_TWO = """\
state x, y
dx/dt = x^2 - 2
dy/dt = -y
equilibrium plus at x = sqrt(2), y = 0
claim plus unstable
"""
GAIN = """\
parameter k = 1 in [-1, 2]
state x
dx/dt = -k*x
equilibrium o at x = 0
claim o stable at nominal
"""


def base(text: str) -> dict[str, Any]:
    return json.loads(prove_model(proofkit.parse(text, "hostile.pk")).text)


def cases() -> dict[str, tuple[str, int, str]]:
    """name -> (certificate text, expected exit code, expected message piece)."""
    bi, sq, gain = base(BISTABLE), base(ROOT_TWO), base(GAIN)
    out: dict[str, tuple[str, int, str]] = {}

    def add(name: str, cert: Any, code: int, message: str) -> None:
        out[name] = (cert if isinstance(cert, str) else json.dumps(cert), code, message)

    def edit(cert: dict[str, Any], path: tuple[Any, ...], value: Any) -> dict[str, Any]:
        c = copy.deepcopy(cert)
        obj = c
        for k in path[:-1]:
            obj = obj[k]
        obj[path[-1]] = value
        return c

    huge = dumps(bi).replace('"proofkit_certificate": 2', '"proofkit_certificate": ' + "7" * 5000)
    add("json_integer_5000_digits", huge, 2, "not valid JSON")
    add(
        "number_5000_digits",
        edit(bi, ("claims", 0, "evidence", "jacobian", 0, 0), "1" + "0" * 5000),
        2,
        "at most 1000 digits",
    )
    add(
        "exponent_1000",
        edit(bi, ("model", "field", "numerators", 0, 0, 0), [1000, 0]),
        2,
        "integers in 0..64",
    )
    add(
        "unicode_digits_in_number_field",
        edit(sq, ("claims", 0, "number_field", "sqrt"), "\uff12"),
        2,
        "exact rational",
    )
    add(
        "number_field_5000_digits",
        edit(sq, ("claims", 0, "number_field", "sqrt"), "2" * 5000),
        2,
        "at most 1000 digits",
    )
    add(
        "unicode_digits_in_a_number",
        edit(bi, ("claims", 0, "evidence", "jacobian", 0, 1), "\u0661"),
        2,
        "exact rational",
    )
    add(
        "lone_surrogate_in_statement",
        edit(bi, ("claims", 0, "statement"), "origin \ud800 stable"),
        1,
        "not the source's claim",
    )
    fake = edit(bi, ("claims", 0, "status"), "not proved")
    for key in ("method", "theorem", "evidence", "number_field"):
        del fake["claims"][0][key]
    fake["claims"][0]["reason"] = "\r\x1b[2K  PROVED  origin stable \x07"
    add("control_characters_in_reason", fake, 0, "\\x1b[2K")
    add(
        "range_claim_with_nominal_evidence",
        edit(gain, ("claims", 0, "claim", "scope"), "range"),
        1,
        "nominal parameter values only",
    )
    swapped = copy.deepcopy(bi)
    a, b = (swapped["claims"][i]["claim"]["equilibrium"] for i in range(2))
    a["point"], b["point"] = b["point"], a["point"]
    add("evidence_under_the_other_equilibrium", swapped, 1, "REJECTED")
    add(
        "kind_changed_keeping_evidence",
        edit(bi, ("claims", 1, "claim", "kind"), "stable"),
        1,
        "REJECTED",
    )
    add(
        "scope_range_without_parameters",
        edit(bi, ("claims", 0, "claim", "scope"), "range"),
        2,
        "needs an uncertain parameter",
    )
    add("deep_nesting", "[" * 100_000 + "]" * 100_000, 2, "not valid JSON")
    add("not_an_object", "[1, 2, 3]", 2, "a certificate is a JSON object")
    add("format_1", edit(bi, ("proofkit_certificate",), 1), 2, "format 1 is not supported")
    add(
        "source_edited",
        edit(bi, ("model", "source"), BISTABLE.replace("x^3", "x^5")),
        2,
        "source_sha256",
    )
    add("unknown_key", edit(bi, ("claims", 0, "evidence", "margin"), "1/2"), 2, "unknown key")
    add(
        "nan_number",
        edit(bi, ("claims", 0, "evidence", "jacobian", 0, 0), float("nan")),
        2,
        "exact rational",
    )
    add(
        "boolean_as_exponent",
        edit(bi, ("model", "field", "numerators", 0, 0, 0), [True, 0]),
        2,
        "integers in 0..64",
    )
    return out


def main() -> int:
    HERE.mkdir(exist_ok=True)
    expected = {}
    for name, (text, code, message) in cases().items():
        (HERE / f"{name}.json").write_text(text, encoding="utf-8", errors="surrogatepass")
        expected[f"{name}.json"] = {"exit": code, "message": message}
    (HERE / "expected.json").write_text(json.dumps(expected, indent=1) + "\n", encoding="utf-8")
    print(f"{len(expected)} hostile certificates in {HERE}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
