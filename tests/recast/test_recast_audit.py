"""Recast proofs: audited certificates, mutations rejected, substitutions checked, facts.

Check values and their sources are written beside each check.
"""

from __future__ import annotations

import copy
import json
from fractions import Fraction

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

import proofkit
from proofkit.audit import audit_certificate
from proofkit.audit._recast_field import derive, exact_trig
from proofkit.audit.enclosures import read_expressions
from proofkit.audit.numbers import Num
from proofkit.certificate import model_section, new_certificate
from proofkit.proofs._recast_system import build_system
from proofkit.proofs.recast import attempt
from proofkit.provenance import check_provenance

SWING = """system swing
state x1, x2
dx1/dt = x2
dx2/dt = -x2/2 - (sin(x1 + pi/3) - sin(pi/3))
equilibrium E at x1 = 0, x2 = 0
claim E attracts x1^2 + x2^2 <= 1/4
"""


@pytest.fixture(scope="module")
def swing_cert() -> dict:
    model = proofkit.parse(SWING, "swing.pk")
    found = attempt(model, model.claims[0], lambda _m: None)
    assert found is not None and found.entry["status"] == "proved", found
    return new_certificate(model_section(model), [found.entry])


def _verdict(cert: dict) -> tuple[str, str | None]:
    v = audit_certificate(copy.deepcopy(cert), 60).claims[0]
    return v.status, v.message


def test_swing_region_certificate_audits_and_matches_its_source(swing_cert: dict) -> None:
    status, msg = _verdict(swing_cert)
    assert status == "proved", msg
    assert check_provenance(swing_cert).ok
    ev = swing_cert["claims"][0]["evidence"]
    assert {"decrease lo", "decrease hi", "inside", "positive"} <= set(ev["squares"])


@pytest.mark.parametrize(
    "mutate",
    [
        lambda ev: ev["V"][0].__setitem__(1, str(Fraction(ev["V"][0][1]) + Fraction(1, 2**40))),
        lambda ev: ev["numbers"].__setitem__("level", str(Fraction(ev["numbers"]["level"]) * 2)),
        lambda ev: ev["recast"].__setitem__("enclosure", ["7/4", "2"]),  # sqrt(3) < 7/4: excluded
        lambda ev: ev["recast"].__setitem__("taylor_order", 0),
        lambda ev: ev["squares"].pop("decrease hi"),
        lambda ev: ev["multipliers"].pop(next(iter(ev["multipliers"]))),
        lambda ev: ev["free"].__setitem__("inside * circle 1", [[[0, 0, 0, 0], "1"]]),
        lambda ev: ev["multipliers"].__setitem__("positive * level", [[[0, 0, 0, 0], "1"]]),
    ],
    ids=["V", "level", "enclosure", "order", "obligation", "multiplier", "free", "stray"],
)
def test_mutated_recast_certificates_are_rejected(swing_cert: dict, mutate) -> None:
    bad = copy.deepcopy(swing_cert)
    mutate(bad["claims"][0]["evidence"])
    status, _msg = _verdict(bad)
    assert status == "rejected"


@pytest.mark.parametrize(
    ("old", "new"),
    [
        ('["*", "1/3", ["pi"]]', '["*", "1/4", ["pi"]]'),  # a different angle offset
        ('["sin", ', '["cos", '),  # cosine for sine
        ('"-1/2", ["var", 1]', '"-1/3", ["var", 1]'),  # another damping
    ],
)
def test_a_wrong_field_statement_is_rejected_by_audit_and_provenance(
    swing_cert: dict, old: str, new: str
) -> None:
    # The substitution is derived from the model's field, so a certificate whose
    # field trees differ from the source gets other targets: the identities fail.
    text = json.dumps(swing_cert)
    assert old in text
    bad = json.loads(text.replace(old, new, 1))
    assert _verdict(bad)[0] == "rejected"
    assert not check_provenance(bad).ok


def test_valid_evidence_for_a_small_disc_does_not_prove_a_disc_holding_the_saddle(
    swing_cert: dict,
) -> None:
    # The disc x1^2 + x2^2 <= 121/100 holds the saddle (pi/3, 0) (computed:
    # sin(x1 + pi/3) = sin(pi/3) there, (pi/3)^2 < 1.1): moving the claim to it
    # must make the same evidence fail.
    bad = copy.deepcopy(swing_cert)
    bad["claims"][0]["claim"]["set"][0]["g"] = [[[0, 0], "121/100"], [[2, 0], "-1"], [[0, 2], "-1"]]
    assert _verdict(bad)[0] == "rejected"


@pytest.mark.slow
def test_false_claims_on_sine_fields_are_never_proved() -> None:
    # The disc of radius 1.1 holds the saddle (pi/3, 0) (computed: sin(x1 + pi/3) =
    # sin(pi/3) there), so it is not in the region of attraction; the inverted
    # pendulum's origin is unstable (common practice: linearization eigenvalue > 0).
    src = SWING.replace("<= 1/4", "<= 121/100")
    model = proofkit.parse(src, "swing_false.pk")
    found = attempt(model, model.claims[0], lambda _m: None)
    assert (
        found is None
        or found.entry["status"] != "proved"
        or _verdict(new_certificate(model_section(model), [found.entry]))[0] != "proved"
    )
    inverted = """state x1, x2
dx1/dt = x2
dx2/dt = sin(x1) - x2
equilibrium U at x1 = 0, x2 = 0
claim U stable
"""
    model = proofkit.parse(inverted, "inverted.pk")
    found = attempt(model, model.claims[0], lambda _m: None)
    assert found is None or found.entry["status"] != "proved"


def _trees(src: str) -> tuple:
    model = proofkit.parse(src, "m.pk")
    sec = model_section(model)
    return sec["expressions"]["components"], model


def test_pendulum_energy_decreases_by_the_recast_rules() -> None:
    # Damped pendulum x1' = x2, x2' = -sin x1 - b x2 with energy
    # E = x2^2/2 + 1 - cos x1 and dE/dt = -b x2^2 (published: Khalil, Nonlinear
    # Systems, 3rd ed., section 4.1, the pendulum's energy; example number: memory).
    # In recast variables 1 - cos x1 = -C, so V = y2^2/2 - C.
    src = "state x1, x2\ndx1/dt = x2\ndx2/dt = -sin(x1) - x2/5\n"
    trees, _model = _trees(src)
    point = [Num.of(0), Num.of(0)]
    exprs = read_expressions({"variables": ["x1", "x2"], "components": trees}, ["x1", "x2"], [])
    rc = derive(exprs, point, [], {"taylor_order": 1}, "test")
    assert rc.names == ("y1", "y2", "S1", "C1")
    v = {(0, 2, 0, 0): Num.of(Fraction(1, 2)), (0, 0, 0, 1): Num.of(-1)}
    lie: dict = {}
    for i, fi in enumerate(rc.field):
        for e, c in v.items():
            if e[i] == 0:
                continue
            de = list(e)
            de[i] -= 1
            for e2, c2 in fi.items():
                k = tuple(a + b for a, b in zip(de, e2, strict=True))
                lie[k] = lie.get(k, Num.of(0)) + c * c2 * Num.of(e[i])
    lie = {k: c for k, c in lie.items() if not c.is_zero()}
    assert lie == {(0, 2, 0, 0): Num.of(Fraction(-1, 5))}


def test_audit_and_prover_derive_the_same_recast_field() -> None:
    # Two independent implementations (stdlib fractions vs python-flint) of the
    # substitution and derivative rules must agree term by term.
    src = (
        "state x1, x2\ndx1/dt = x2 + exp(x1 - x2) - 1\n"
        "dx2/dt = -x2/2 - cos(x1 + pi/6) + cos(pi/6) + x1^2*sin(x2)\n"
    )
    trees, _model = _trees(src)
    exprs = read_expressions({"variables": ["x1", "x2"], "components": trees}, ["x1", "x2"], [])
    rc = derive(
        exprs, [Num.of(0), Num.of(0)], [], {"taylor_order": 2, "enclosure": ["1", "2"]}, "t"
    )
    sysm = build_system(trees, [Fraction(0), Fraction(0)], [], 2)
    assert rc.names == sysm.names and rc.d == sysm.d == 3
    for audit_f, (a, b) in zip(rc.field, sysm.field, strict=True):
        mine = {}
        for p, slot in ((a, 0), (b, 1)):
            for e, c in zip(p.monoms(), p.coeffs(), strict=True):
                key = tuple(int(x) for x in e)
                pair = mine.setdefault(key, [Fraction(0), Fraction(0)])
                pair[slot] = Fraction(int(c.p), int(c.q))
        theirs = {e: [c.a, c.b] for e, c in audit_f.items()}
        assert theirs == {k: v for k, v in mine.items() if v != [0, 0]}
    assert [lbl for lbl, _g in rc.inequalities] == [lbl for lbl, _g in sysm.inequalities]


@given(st.floats(min_value=-30, max_value=30, allow_nan=False))
def test_taylor_inequalities_hold_for_every_real_argument(t: float) -> None:
    # The bounds the audit trusts (computed: numpy sin/cos/exp at t, with a
    # relative slack for rounding): each inequality polynomial is >= 0.
    src = "state x1, x2\ndx1/dt = x2\ndx2/dt = -sin(x1) - x2 + exp(x1) - 1\n"
    trees, _model = _trees(src)
    exprs = read_expressions({"variables": ["x1", "x2"], "components": trees}, ["x1", "x2"], [])
    rc = derive(exprs, [Num.of(0), Num.of(0)], [], {"taylor_order": 3}, "t")
    z = np.array([t, 0.0, np.sin(t), np.cos(t) - 1, np.expm1(t)])
    for label, g in rc.inequalities:
        val = sum(float(c.a) * np.prod(z ** np.array(e)) for e, c in g.items())
        scale = sum(abs(float(c.a) * np.prod(z ** np.array(e))) for e, c in g.items())
        assert val >= -1e-9 * max(scale, 1.0), (label, t, val)


def test_exact_trig_table_against_numpy() -> None:
    # computed: numpy sin/cos at q pi for every tabulated q.
    for k in range(-24, 25):
        q = Fraction(k, 12)
        if k % 2 and k % 3:
            continue
        s, c = exact_trig(q)
        for val, ref in ((s, np.sin(float(q) * np.pi)), (c, np.cos(float(q) * np.pi))):
            assert abs(float(val.a) + float(val.b) * np.sqrt(val.d or 0) - ref) < 1e-12
