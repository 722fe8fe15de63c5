"""Structural mutations of real certificates: swap claims, swap or rename equilibria,
change kinds or scopes, replace the field.

Property: the full audit (core and provenance) rejects every mutation; the core
alone either rejects it or prints only true results: a linearization verdict is
checked against numpy eigenvalues of the stated field's Jacobian at the stated
point (computed), any other verdict must be one the original certificate earned.
(Two saddles with the same Jacobian may legitimately trade evidence.)
"""

from __future__ import annotations

import copy
import json
from collections import Counter
from fractions import Fraction
from typing import Any

import numpy as np
import pytest
from hypothesis import assume, given
from hypothesis import strategies as st

import proofkit
from proofkit.audit import FormatError, audit_certificate
from proofkit.certificate import dumps
from proofkit.proofs import prove_model
from proofkit.provenance import check_provenance

from .test_audit_schemas import basin_certificate, cubic_certificate

TEXTS = {
    "bistable": "state x, y\ndx/dt = y\ndy/dt = -x + x^3 - y\n"
    "equilibrium origin at x = 0, y = 0\nequilibrium right at x = 1, y = 0\n"
    "equilibrium left at x = -1, y = 0\n"
    "claim origin stable\nclaim right unstable\nclaim left unstable\nclaim left stable\n",
    "root_two": "state x, y\ndx/dt = x^2 - 2\ndy/dt = -y\n"
    "equilibrium plus at x = sqrt(2), y = 0\nequilibrium minus at x = -sqrt(2), y = 0\n"
    "claim plus unstable\nclaim minus stable\n",
    "gain": "parameter k = 1 in [1/2, 2]\nstate x, y\ndx/dt = -k*x + y\ndy/dt = -y - x^3\n"
    "equilibrium o at x = 0, y = 0\nclaim o stable at nominal\nclaim o unstable at nominal\n",
}
KINDS = ["stable", "unstable", "globally stable", "attracts", "no cycle", "cycle"]


@pytest.fixture(scope="module")
def certificates() -> dict[str, dict[str, Any]]:
    out = {k: json.loads(prove_model(proofkit.parse(t, "m.pk")).text) for k, t in TEXTS.items()}
    out["cubic"] = cubic_certificate()
    out["basin"] = basin_certificate()
    return out


def verdicts(cert: dict[str, Any]) -> list[Any] | None:
    """The core's verdicts, or None when it rejects the certificate or a claim."""
    try:
        report = audit_certificate(copy.deepcopy(cert))
    except FormatError:
        return None
    return list(report.claims) if report.accepted else None


def earned(cert: dict[str, Any]) -> Counter | None:
    """What the core prints as checked (sentence, status), or None when it rejects."""
    found = verdicts(cert)
    if found is None:
        return None
    return Counter((v.sentence, v.status) for v in found if v.status != "not proved")


def _value(x: Any, d: int) -> float:
    return (
        float(Fraction(x[0])) + float(Fraction(x[1])) * d**0.5
        if isinstance(x, list)
        else float(Fraction(x))
    )


def linear_truth(cert: dict[str, Any], entry: dict[str, Any]) -> bool:
    """computed: numpy eigenvalues of the stated field's Jacobian at the stated point."""
    model, claim = cert["model"], entry["claim"]
    d = int((entry.get("number_field") or {}).get("sqrt", 0))
    point = [_value(x, d) for x in claim["equilibrium"]["point"]]
    nominal = [float(Fraction(p["nominal"])) for p in model["parameters"] if p["range"]]
    at = point + nominal
    n = len(point)
    jac = np.zeros((n, n))
    for i, poly in enumerate(model["field"]["numerators"]):
        for exps, c in poly:
            for j in range(n):
                if exps[j]:
                    e = list(exps)
                    e[j] -= 1
                    jac[i, j] += (
                        exps[j] * _value(c, 0) * np.prod([v**k for v, k in zip(at, e, strict=True)])
                    )
    real = np.linalg.eigvals(jac).real
    stable = bool(real.max() < -1e-9)
    unstable = bool(real.max() > 1e-9)
    shown_stable = (claim["kind"] == "stable") == (entry["status"] == "proved")
    return stable if shown_stable else unstable


def core_prints_only_truth(mutated: dict[str, Any], original: dict[str, Any]) -> bool:
    found = verdicts(mutated)
    if found is None:
        return True
    allowed = earned(original) or Counter()
    for verdict, entry in zip(found, mutated["claims"], strict=True):
        if verdict.status == "not proved":
            continue
        if verdict.method == "linearization":
            if not linear_truth(mutated, entry):
                return False
        elif (verdict.sentence, verdict.status) not in allowed:
            return False
    return True


def full_accepts(cert: dict[str, Any]) -> bool:
    return earned(cert) is not None and check_provenance(dumps(cert)).ok


def test_the_originals_are_accepted(certificates) -> None:
    for name, cert in certificates.items():
        assert full_accepts(cert), name
        assert earned(cert), name  # each proves or refutes something


def _claims(cert: dict[str, Any]) -> list[dict[str, Any]]:
    return cert["claims"]


def mutate(cert: dict[str, Any], kind: str, i: int, j: int, pick: int, other: dict) -> dict:
    c = copy.deepcopy(cert)
    claims = _claims(c)
    i, j = i % len(claims), j % len(claims)
    ci, cj = claims[i]["claim"], claims[j]["claim"]
    if kind == "swap structures":
        claims[i]["claim"], claims[j]["claim"] = cj, ci
    elif kind == "swap entries":
        claims[i], claims[j] = claims[j], claims[i]
    elif kind == "swap equilibria":
        ci["equilibrium"], cj["equilibrium"] = cj["equilibrium"], ci["equilibrium"]
    elif kind == "rename equilibrium" and ci["equilibrium"]:
        names = [e["name"] for e in c["model"]["equilibria"]]
        ci["equilibrium"]["name"] = names[pick % len(names)]
    elif kind == "change kind":
        ci["kind"] = KINDS[pick % len(KINDS)]
    elif kind == "change scope" and claims[i]["status"] == "proved":
        # (a refutation at the nominal values also refutes the claim over the ranges,
        # so changing a refuted claim's scope keeps it true: not a mutation to reject)
        ci["scope"] = "range" if ci["scope"] == "nominal" else "nominal"
    elif kind == "replace field":
        c["model"]["field"] = copy.deepcopy(other["model"]["field"])
    elif kind == "change statement":
        claims[i]["statement"] = claims[j]["statement"]
    return c


@given(
    name=st.sampled_from([*sorted(TEXTS), "cubic", "basin"]),
    kind=st.sampled_from(
        [
            "swap structures",
            "swap entries",
            "swap equilibria",
            "rename equilibrium",
            "change kind",
            "change scope",
            "replace field",
            "change statement",
        ]
    ),
    i=st.integers(0, 7),
    j=st.integers(0, 7),
    pick=st.integers(0, 11),
    donor=st.sampled_from([*sorted(TEXTS), "cubic", "basin"]),
)
def test_structural_mutations_are_rejected(certificates, name, kind, i, j, pick, donor) -> None:
    cert = certificates[name]
    mutated = mutate(cert, kind, i, j, pick, certificates[donor])
    assume(mutated != cert)
    assert not full_accepts(mutated), (name, kind)
    assert core_prints_only_truth(mutated, cert), (name, kind, earned(mutated))
