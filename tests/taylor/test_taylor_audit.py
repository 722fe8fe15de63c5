"""Taylor-model proofs: audited certificates, weakened models rejected, false claims, facts.

Check values and their sources are written beside each check.
"""

from __future__ import annotations

import copy
import functools
import json
from fractions import Fraction
from math import factorial

import mpmath
import numpy as np
import pytest
from hypothesis import assume, given
from hypothesis import strategies as st

import proofkit
from proofkit.audit import FormatError, audit_certificate
from proofkit.audit._taylor_field import derive_models, taylor_coefficient
from proofkit.audit.enclosures import read_expressions
from proofkit.audit.numbers import Num
from proofkit.audit.schemas import Rejected
from proofkit.certificate import model_section, new_certificate
from proofkit.proofs._taylor_system import taylor_system
from proofkit.proofs.taylor_model import attempt
from proofkit.provenance import check_provenance

# The damped swing equation of the non-polynomial issue; the saddle is at
# x1 = pi/3 (computed: sin(x1 + pi/3) = sin(pi/3) there, x2 = 0).
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
    assert found.entry["method"] == "taylor-model"
    return new_certificate(model_section(model), [found.entry])


def _verdict(cert: dict) -> tuple[str, str | None]:
    v = audit_certificate(copy.deepcopy(cert), 60).claims[0]
    return v.status, v.message


def test_swing_disc_is_proved_by_taylor_models_and_audited(swing_cert: dict) -> None:
    status, msg = _verdict(swing_cert)
    assert status == "proved", msg
    assert check_provenance(swing_cert).ok
    ev = swing_cert["claims"][0]["evidence"]
    # sqrt(3)/2 = sin(pi/3) puts the constants in Q(sqrt 3): both ends of the
    # enclosure, four sign patterns of the two remainders (sin and cos of x1).
    names = {k for k in ev["squares"] if k.startswith("decrease") and "*" not in k}
    assert len(names) == 8 and "decrease lo (+1, -1)" in names
    assert [a["function"] for a in ev["taylor_model"]["atoms"]] == ["sin", "cos"]


def _atom(ev: dict, i: int) -> dict:
    return ev["taylor_model"]["atoms"][i]


def _ulp(ev: dict) -> None:
    # One unit in the last place of the sine's x^3 coefficient -1/6 (53-bit scale).
    poly = _atom(ev, 0)["polynomial"]
    poly[3] = str(Fraction(poly[3]) + Fraction(1, 2**55))


def _order_up(ev: dict) -> None:
    # A remainder bound one order too high: 1/(k+2)! in place of 1/(k+1)!.
    k = _atom(ev, 0)["order"]
    _atom(ev, 0)["remainder"] = str(Fraction(1, factorial(k + 2)))


@pytest.mark.parametrize(
    "mutate",
    [
        _ulp,
        _order_up,
        lambda ev: _atom(ev, 1).__setitem__("remainder", "0"),
        lambda ev: _atom(ev, 0).__setitem__("order", _atom(ev, 0)["order"] + 1),
        lambda ev: _atom(ev, 0).__setitem__("function", "cos"),
        lambda ev: _atom(ev, 0).__setitem__("argument", [[[1, 0], "2"]]),
        lambda ev: ev["taylor_model"]["atoms"].pop(),
        lambda ev: ev["taylor_model"].__setitem__("enclosure", ["7/4", "2"]),  # sqrt 3 < 7/4
        lambda ev: ev["V"][0].__setitem__(1, str(Fraction(ev["V"][0][1]) + Fraction(1, 2**40))),
        lambda ev: ev["numbers"].__setitem__("level", str(Fraction(ev["numbers"]["level"]) * 2)),
        lambda ev: ev["squares"].pop("decrease hi (-1, -1)"),
        lambda ev: ev["multipliers"].pop(next(iter(ev["multipliers"]))),
        lambda ev: ev["multipliers"].__setitem__("positive * level", [[[0, 0], "1"]]),
    ],
    ids=[
        "ulp",
        "order-too-high",
        "no-remainder",
        "order",
        "function",
        "argument",
        "atom",
        "enclosure",
        "V",
        "level",
        "vertex",
        "multiplier",
        "stray",
    ],
)
def test_mutated_taylor_certificates_are_rejected(swing_cert: dict, mutate) -> None:
    bad = copy.deepcopy(swing_cert)
    mutate(bad["claims"][0]["evidence"])
    assert _verdict(bad)[0] == "rejected"


def test_a_larger_remainder_coefficient_stays_sound_but_changes_the_targets(
    swing_cert: dict,
) -> None:
    # r >= 1/(k+1)! is accepted as a model, but the vertex fields move with it, so
    # the stated Gram matrices no longer match: rejected in the squares step.
    bad = copy.deepcopy(swing_cert)
    atom = _atom(bad["claims"][0]["evidence"], 0)
    atom["remainder"] = str(Fraction(atom["remainder"]) * 2)
    status, msg = _verdict(bad)
    assert status == "rejected"
    assert "differs from z'Gz" in (msg or ""), msg


def test_a_changed_field_is_rejected_by_audit_and_provenance(swing_cert: dict) -> None:
    text = json.dumps(swing_cert)
    old = '["*", "1/3", ["pi"]]'
    assert old in text
    bad = json.loads(text.replace(old, '["*", "1/4", ["pi"]]', 1))
    assert _verdict(bad)[0] == "rejected"
    assert not check_provenance(bad).ok


def test_the_evidence_does_not_prove_a_disc_holding_the_saddle(swing_cert: dict) -> None:
    # x1^2 + x2^2 <= 121/100 holds the saddle (pi/3, 0) ((pi/3)^2 = 1.0966 < 1.21,
    # computed): not in the region of attraction.
    bad = copy.deepcopy(swing_cert)
    bad["claims"][0]["claim"]["set"][0]["g"] = [[[0, 0], "121/100"], [[2, 0], "-1"], [[0, 2], "-1"]]
    assert _verdict(bad)[0] == "rejected"


def test_a_disc_holding_the_saddle_is_never_proved() -> None:
    model = proofkit.parse(SWING.replace("<= 1/4", "<= 121/100"), "swing_false.pk")
    found = attempt(model, model.claims[0], lambda _m: None)
    assert found is not None and found.entry["status"] != "proved"


def test_inverted_pendulum_is_never_proved_stable() -> None:
    # Origin of x2' = sin(x1) - x2 is a saddle (common practice: eigenvalue
    # (-1 + sqrt 5)/2 > 0 of the linearization).
    src = "state x1, x2\ndx1/dt = x2\ndx2/dt = sin(x1) - x2\nequilibrium U at x1 = 0, x2 = 0\n"
    model = proofkit.parse(src + "claim U stable\n", "inverted.pk")
    found = attempt(model, model.claims[0], lambda _m: None)
    assert found is not None and found.entry["status"] != "proved"


def test_damped_pendulum_is_stable_by_taylor_models() -> None:
    # x1' = x2, x2' = -sin x1 - x2/5: the origin is asymptotically stable
    # (published: Khalil, Nonlinear Systems, 3rd ed., section 4.1, the pendulum).
    src = (
        "state x1, x2\ndx1/dt = x2\ndx2/dt = -sin(x1) - x2/5\n"
        "equilibrium O at x1 = 0, x2 = 0\nclaim O stable\n"
    )
    model = proofkit.parse(src, "pendulum.pk")
    found = attempt(model, model.claims[0], lambda _m: None)
    assert found is not None and found.entry["status"] == "proved", found.detail
    cert = new_certificate(model_section(model), [found.entry])
    assert _verdict(cert)[0] == "proved"
    assert found.entry["theorem"] == "taylor-model-lyapunov-local"


@pytest.mark.parametrize(
    ("rhs", "words"),
    [("-x2 - sin(x1) - sin(x1)^2", "affine"), ("-x2 - tanh(x1)", "not covered")],
)
def test_fields_outside_the_method_get_a_reason(rhs: str, words: str) -> None:
    # sin^2 is not affine in the sine's remainder; tanh has no model here.
    src = f"state x1, x2\ndx1/dt = x2\ndx2/dt = {rhs}\nequilibrium O at x1 = 0, x2 = 0\n"
    model = proofkit.parse(src + "claim O stable\n", "m.pk")
    found = attempt(model, model.claims[0], lambda _m: None)
    assert found is not None and found.entry["status"] == "not proved"
    assert words in found.entry["reason"]


@pytest.mark.parametrize("atom", ["tanh(x1)"])
def test_the_audit_refuses_atoms_other_than_sin_cos_exp(atom: str) -> None:
    # A certificate cannot make the audit drop an atom it has no model for.
    src = f"state x1, x2\ndx1/dt = x2\ndx2/dt = -x2 - sin(x1) - {atom}\n"
    trees = model_section(proofkit.parse(src, "m.pk"))["expressions"]["components"]
    exprs = read_expressions({"variables": ["x1", "x2"], "components": trees}, ["x1", "x2"], [])
    with pytest.raises(Rejected, match="not covered"):
        derive_models(exprs, [Num.of(0), Num.of(0)], [], {"atoms": [], "enclosure": None}, "t")


def _models(src: str, orders: tuple[int, int]) -> tuple:
    model = proofkit.parse(src, "m.pk")
    trees = model_section(model)["expressions"]["components"]
    prover = taylor_system(trees, [Fraction(0), Fraction(0)], [], orders)
    exprs = read_expressions({"variables": ["x1", "x2"], "components": trees}, ["x1", "x2"], [])
    block = prover.evidence_block()
    audit = derive_models(exprs, [Num.of(0), Num.of(0)], [], block, "t")
    return prover, audit


def test_audit_and_prover_derive_the_same_vertex_fields() -> None:
    # Two independent implementations (stdlib fractions vs python-flint).
    src = "state x1, x2\ndx1/dt = x2 + sin(x1 - x2)\ndx2/dt = -x2 - cos(x1 + pi/6) + cos(pi/6)\n"
    prover, audit = _models(src, (4, 5))
    assert [lbl for lbl, _f in prover.vertices] == [lbl for lbl, _f in audit.vertices]
    for (_l, fp), (_m, fa) in zip(prover.vertices, audit.vertices, strict=True):
        for p, a in zip(fp, fa, strict=True):
            mine = {tuple(map(int, e)): Fraction(int(c.p), int(c.q)) for e, c in p.terms()}
            assert mine == {e: c.a for e, c in a.items()}


@given(st.floats(min_value=-8, max_value=8, allow_nan=False), st.integers(1, 12))
def test_the_remainder_bound_holds_against_mpmath(t: float, k: int) -> None:
    # |f(t) - T_k(t)| <= |t|^(k+1)/(k+1)! for f = sin, cos (computed: mpmath at
    # 160 digits, enough below the bound for |t| >= 1e-6; the Lagrange
    # remainder, every derivative bounded by 1).
    assume(abs(t) >= 1e-6)
    mpmath.mp.dps = 160
    x = mpmath.mpf(t)
    for name, f in (("sin", mpmath.sin), ("cos", mpmath.cos)):
        poly = sum(
            mpmath.mpf(taylor_coefficient(name, j).numerator)
            / taylor_coefficient(name, j).denominator
            * x**j
            for j in range(k + 1)
        )
        bound = abs(x) ** (k + 1) / mpmath.factorial(k + 1)
        assert abs(f(x) - poly) <= bound


@functools.cache
def _swing_vertices() -> list[list[tuple[tuple[int, ...], float]]]:
    prover, _audit = _models(SWING, (4, 5))
    return [
        [(tuple(map(int, e)), float(c)) for e, c in fld[1].terms()] for _l, fld in prover.vertices
    ]


@given(st.floats(min_value=-3, max_value=3), st.floats(min_value=-3, max_value=3))
def test_the_true_swing_field_lies_between_the_vertex_fields(a: float, b: float) -> None:
    # At every point the field is a convex combination of the vertex fields, so
    # each component lies between their smallest and largest value (computed:
    # numpy sin at the point, vertex fields evaluated in floating point).
    true = -b / 2 - (np.sin(a + np.pi / 3) - np.sin(np.pi / 3))
    vals = []
    for fld in _swing_vertices():
        vals.append(sum(c * a ** e[0] * b ** e[1] for e, c in fld))
    assert min(vals) - 1e-9 <= true <= max(vals) + 1e-9


def test_prove_with_taylor_models_alone_is_audited_once_and_documented(monkeypatch) -> None:
    # The whole run (certificate writer, final audit, provenance, documents) with
    # only this method, as prove would use it when the recast finds nothing.
    import proofkit.proofs as proofs
    from proofkit.report import DocumentMeta, render_markdown

    monkeypatch.setattr(proofs, "PROVERS", ("taylor_model",))
    src = SWING.replace("claim E attracts", "claim E stable\nclaim E attracts")
    run = proofs.prove_model(proofkit.parse(src, "swing.pk"))
    assert [o.status for o in run.outcomes] == ["proved", "proved"]
    assert {o.method for o in run.outcomes} == {"taylor-model"}
    assert run.provenance.ok
    meta = DocumentMeta(command="prove swing.pk", certificate_sha256="0" * 64, version="test")
    assert "Taylor" in render_markdown(run.certificate, run.audit, meta)


# exp(x1) - 1 restoring force: x1' = x2, x2' = -x2 - (exp(x1) - 1); the energy
# x2^2/2 + exp(x1) - 1 - x1 decreases (dE/dt = -x2^2), so the origin attracts
# a disc (computed by hand); with + (exp(x1) - 1) the origin is a saddle
# (eigenvalue (-1 + sqrt 5)/2 > 0, computed by hand).
WELL = """state x1, x2
dx1/dt = x2
dx2/dt = -x2 - (exp(x1) - 1)
equilibrium O at x1 = 0, x2 = 0
claim O attracts x1^2 + x2^2 <= 1/4
"""


@pytest.fixture(scope="module")
def well_cert() -> dict:
    model = proofkit.parse(WELL, "well.pk")
    found = attempt(model, model.claims[0], lambda _m: None)
    assert found is not None and found.entry["status"] == "proved", found.detail
    return new_certificate(model_section(model), [found.entry])


def test_exp_field_is_proved_with_a_certified_bound_of_its_argument(well_cert: dict) -> None:
    assert _verdict(well_cert)[0] == "proved"
    ev = well_cert["claims"][0]["evidence"]
    assert "bound 1" in ev["squares"]
    atom = ev["taylor_model"]["atoms"][0]
    # e^xi <= e^D: the remainder coefficient is at least e^D/(k+1)! (computed: math.exp).
    k, bound = atom["order"], float(Fraction(atom["bound"]))
    assert float(Fraction(atom["remainder"])) >= np.exp(bound) / factorial(k + 1)


def _exp_unit(ev: dict) -> None:
    # The remainder of the sine's and cosine's kind (e^xi <= 1) is too small for exp.
    atom = _atom(ev, 0)
    atom["remainder"] = str(Fraction(1, factorial(atom["order"] + 1)))


@pytest.mark.parametrize(
    "mutate",
    [
        _exp_unit,
        lambda ev: _atom(ev, 0).__setitem__("bound", str(Fraction(_atom(ev, 0)["bound"]) / 2)),
        lambda ev: _atom(ev, 0).pop("bound"),
        lambda ev: ev["squares"].pop("bound 1"),
    ],
    ids=["unit-remainder", "bound-halved", "no-bound", "no-bound-obligation"],
)
def test_mutated_exp_certificates_are_rejected(well_cert: dict, mutate) -> None:
    bad = copy.deepcopy(well_cert)
    mutate(bad["claims"][0]["evidence"])
    try:
        status = _verdict(bad)[0]
    except FormatError:  # a missing key is malformed evidence: refused as well
        status = "malformed"
    assert status in ("rejected", "malformed")


def test_exp_saddle_is_never_proved_stable() -> None:
    src = WELL.replace("-x2 - (exp(x1) - 1)", "-x2 + (exp(x1) - 1)")
    model = proofkit.parse(src, "saddle.pk")
    found = attempt(model, model.claims[0], lambda _m: None)
    assert found is not None and found.entry["status"] != "proved"


def test_claims_under_a_domain_are_proved_with_the_schema_obligations() -> None:
    # attracts needs {V <= level} inside the domain ("domain 1"); stable does not.
    src = SWING.replace("<= 1/4", "<= 1/9")
    src = src.replace("equilibrium", "domain x1^2 + x2^2 < 1\nequilibrium") + "claim E stable\n"
    model = proofkit.parse(src, "swing_domain.pk")
    entries = [attempt(model, c, lambda _m: None).entry for c in model.claims]
    assert "domain 1" in entries[0]["evidence"]["squares"]
    report = audit_certificate(new_certificate(model_section(model), entries), 60)
    assert [v.status for v in report.claims] == ["proved", "proved"]
