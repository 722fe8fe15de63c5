"""Every change to an exact number, and every dropped term, makes the audit reject.

The numeric leaves of real certificates (stable with a Lyapunov matrix,
unstable, irrational in Q(sqrt 2), a shifted Routh array, a sum-of-squares
identity) are enumerated and mutated one by one.
"""

from __future__ import annotations

import copy
import json
from fractions import Fraction

import pytest
from hypothesis import assume, given
from hypothesis import strategies as st

from proofkit.certificate import dumps
from tests.models import DUFFING

from .conftest import (
    companion_text,
    full_audit_ok,
    get_in,
    numeric_leaves,
    prove_text,
    set_in,
)
from .test_cert_handwritten import motzkin_times_certificate, parrilo_lecture_certificate


def _bump(value, delta: Fraction = Fraction(1)):
    """A different exact value: integers move by one (staying >= 0), rationals by delta."""
    if isinstance(value, int):
        return value + 1 if delta > 0 or value == 0 else value - 1
    return str(Fraction(value) + delta)


# parameters with a range, constants, a domain: their numbers are checked by provenance
PARAM_TEXT = """\
constant g = 981/100
parameter k = 2 in [3/2, 3]
parameter c = 2/5
state x, y
dx/dt = y
dy/dt = -k*x + x^3/6 - c*y + 0*g
domain x^2 <= 4 and y^2 < 9
equilibrium o at x = 0, y = 0
claim o stable at nominal
claim o stable
"""


@pytest.fixture(scope="module")
def certificates():
    shifted = prove_text(companion_text(["5", "0", "-20", "-16"], "unstable"))
    from .conftest import SQRT_TEXT

    return {
        "bistable": prove_text(DUFFING).certificate,
        "sqrt": prove_text(SQRT_TEXT).certificate,
        "shifted": shifted.certificate,
        "sos": parrilo_lecture_certificate(),
        "params": prove_text(PARAM_TEXT).certificate,
    }


def test_every_certificate_starts_accepted(certificates) -> None:
    for name, cert in certificates.items():
        assert full_audit_ok(dumps(cert)), name


@pytest.mark.parametrize("name", ["bistable", "sqrt", "shifted", "sos", "params"])
def test_every_numeric_leaf_mutation_is_rejected(certificates, name) -> None:
    cert = certificates[name]
    leaves = numeric_leaves(cert)
    assert len(leaves) > 20
    for path in leaves:
        mutated = copy.deepcopy(cert)
        set_in(mutated, path, _bump(get_in(cert, path)))
        assert not full_audit_ok(dumps(mutated)), f"{name}: mutation at {path} accepted"


def _term_lists(obj, path=()):
    """Paths of lists that hold terms or entries (polynomials, rows, vectors)."""
    out = []
    if isinstance(obj, dict):
        for k, v in obj.items():
            out += _term_lists(v, (*path, k))
    elif isinstance(obj, list) and obj:
        if path and path[-1] not in ("states", "variables", "range") and len(obj) > 0:
            out.append(path)
        for i, v in enumerate(obj):
            if isinstance(v, list | dict):
                out += _term_lists(v, (*path, i))
    return out


@pytest.mark.parametrize("name", ["bistable", "sqrt", "sos", "params"])
def test_dropping_any_term_or_entry_is_rejected(certificates, name) -> None:
    cert = certificates[name]
    for path in _term_lists(cert):
        target = get_in(cert, path)
        if path[-1] == "claims":
            continue
        for i in range(len(target)):
            mutated = copy.deepcopy(cert)
            del get_in(mutated, path)[i]
            text = dumps(mutated)
            # dropping the only Gram/identity can leave nothing to check: still must not pass
            assert not full_audit_ok(text), f"{name}: dropping {path}[{i}] accepted"


def test_dropping_a_claim_is_rejected(certificates) -> None:
    mutated = copy.deepcopy(certificates["bistable"])
    del mutated["claims"][1]
    assert not full_audit_ok(dumps(mutated))


def test_editing_the_statement_or_source_is_rejected(certificates) -> None:
    cert = certificates["bistable"]
    m1 = copy.deepcopy(cert)
    m1["claims"][0]["statement"] = "right stable"
    assert not full_audit_ok(dumps(m1))
    m2 = copy.deepcopy(cert)
    m2["model"]["source"] = m2["model"]["source"].replace("x^3", "x^5")
    assert not full_audit_ok(dumps(m2))


@given(
    name=st.sampled_from(["bistable", "sqrt", "shifted", "sos"]),
    index=st.integers(min_value=0, max_value=10_000),
    delta=st.fractions(min_value=-5, max_value=5, max_denominator=7).filter(lambda f: f != 0),
)
def test_random_rational_perturbation_is_rejected(certificates, name, index, delta) -> None:
    cert = certificates[name]
    leaves = numeric_leaves(cert)
    path = leaves[index % len(leaves)]
    mutated = copy.deepcopy(cert)
    set_in(mutated, path, _bump(get_in(cert, path), delta))
    assert not full_audit_ok(json.dumps(mutated))


def test_motzkin_multiple_mutations_rejected() -> None:
    # a larger Gram matrix: sample every tenth leaf to keep the run short
    cert = motzkin_times_certificate()
    assert full_audit_ok(dumps(cert))
    for path in numeric_leaves(cert)[::10]:
        mutated = copy.deepcopy(cert)
        set_in(mutated, path, _bump(get_in(cert, path)))
        assert not full_audit_ok(dumps(mutated)), path


def test_flipping_a_strict_domain_condition_is_rejected(certificates) -> None:
    for i in range(2):
        mutated = copy.deepcopy(certificates["params"])
        cond = mutated["model"]["domain"][i]
        cond["strict"] = not cond["strict"]
        assert not full_audit_ok(dumps(mutated))


def _all_paths(obj, path=()):
    out = [path]
    if isinstance(obj, dict):
        for k, v in obj.items():
            out += _all_paths(v, (*path, k))
    elif isinstance(obj, list):
        for i, v in enumerate(obj):
            out += _all_paths(v, (*path, i))
    return out


json_values = st.recursive(
    st.none() | st.booleans() | st.integers(-3, 3) | st.sampled_from(["0", "1/2", "x", ""]),
    lambda inner: (
        st.lists(inner, max_size=3) | st.dictionaries(st.text(max_size=3), inner, max_size=2)
    ),
    max_leaves=5,
)


@given(
    name=st.sampled_from(["bistable", "sqrt", "sos", "params"]),
    index=st.integers(min_value=0, max_value=10_000),
    value=json_values,
)
def test_structural_garbage_is_malformed_or_rejected_never_a_crash(
    certificates, name, index, value
) -> None:
    from proofkit.audit import FormatError, audit_certificate
    from proofkit.provenance import check_provenance

    cert = certificates[name]
    paths = [p for p in _all_paths(cert) if p]
    path = paths[index % len(paths)]
    mutated = copy.deepcopy(cert)
    set_in(mutated, path, value)
    assume(get_in(cert, path) != value)
    try:
        report = audit_certificate(mutated)
    except FormatError:
        report = None  # refused as malformed: a correct outcome
    prov = check_provenance(mutated)  # must not raise either
    # the only harmless edits: free text no check relies on, or a certificate left
    # claiming nothing at all
    if report is not None and report.accepted and prov.ok:
        claims_something = any(c.status in ("proved", "refuted") for c in report.claims)
        free_text = ("file", "name", "reason", "field_note", "domain_note", "version", "program")
        assert path[-1] in free_text or not claims_something, path
