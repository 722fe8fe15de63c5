"""Lyapunov proofs (proofkit.proofs.lyapunov): proved where true, never where false.

Every proved entry is (1) audited by the trusted audit, (2) re-checked here with
sympy and Fractions only (tests/sos/helpers.py), and (3) its claim re-derived
from the outside: V > 0 and dV/dt < 0 at sample points (numpy), and the
linearization's eigenvalues (numpy) where they decide.
"""

from __future__ import annotations

from fractions import Fraction

import numpy as np
import pytest
import sympy as sp

from proofkit import parse
from proofkit.audit import audit_certificate
from proofkit.certificate import model_section, new_certificate
from proofkit.proofs import prove_model
from proofkit.proofs.lyapunov import attempt, check_evidence
from tests.sos.helpers import gram_identity_holds, is_psd_exact


def _model(body: str, claims: str):
    return parse(body + claims)


def _prove(model, k: int = 0):
    claim = model.claims[k]
    res = attempt(model, claim)
    assert res is not None
    return claim, res


def _audited(model, entry) -> bool:
    report = audit_certificate(new_certificate(model_section(model), [entry]))
    return report.claims[0].status == "proved"


def _sympy_targets(model, claim, ev):
    """The schema's targets rebuilt with sympy alone (DEVELOPERS.md table)."""
    xs = model.state_symbols
    point = dict(model.equilibrium(claim.target).as_dict())
    shift = {x: x + point[str(x)] for x in xs}
    g = [sp.expand(f.subs(shift, simultaneous=True)) for f in model.field]

    def poly(data):
        return sum(
            sp.Rational(c) * sp.Mul(*[x**e for x, e in zip(xs, ex, strict=True)]) for ex, c in data
        )

    v = poly(ev["V"])
    eps = sp.Rational(ev["numbers"]["eps"])
    m = ev.get("margin_power", 1)
    norm = sum(x**2 for x in xs)
    lie = sp.expand(sum(sp.diff(v, x) * gi for x, gi in zip(xs, g, strict=True)))
    targets = {"positive": v - eps * norm, "decrease": -lie - eps * norm**m}
    if "level" in ev["numbers"]:
        s0 = poly(ev["multipliers"]["s0"])
        targets["decrease"] -= s0 * (sp.Rational(ev["numbers"]["level"]) - v)
        targets["s0"] = s0
    return v, lie, targets


def _rechecked(model, claim, entry):
    """Independent exact re-check (sympy expansion, Fraction elimination) of every obligation."""
    ev = entry["evidence"]
    v, lie, targets = _sympy_targets(model, claim, ev)
    assert set(targets) == set(ev["squares"])
    xs = model.state_symbols
    for name, target in targets.items():
        item = ev["squares"][name]
        basis = [sp.Mul(*[x**e for x, e in zip(xs, ex, strict=True)]) for ex in item["basis"]]
        gram = sp.Matrix([[sp.Rational(x) for x in row] for row in item["gram"]])
        assert gram_identity_holds(sp.expand(target), basis, gram), name
        assert is_psd_exact(gram), name
    return v, lie


def _sampled(model, v, lie, radius: float, level: float | None = None) -> None:
    """common practice: V > 0 and dV/dt < 0 at sample points (of {V <= level} when local)."""
    xs = model.state_symbols
    fv, fl = sp.lambdify([xs], v, "numpy"), sp.lambdify([xs], lie, "numpy")
    pts = np.random.default_rng(5).uniform(-radius, radius, size=(3000, len(xs)))
    pts = pts[np.linalg.norm(pts, axis=1) > 1e-3]
    vals, lies = np.broadcast_to(fv(pts.T), len(pts)), np.broadcast_to(fl(pts.T), len(pts))
    assert (vals > 0).all()
    inside = vals <= level if level is not None else np.ones(len(pts), bool)
    assert inside.sum() > 10
    assert (lies[inside] < 0).all()


def _proved(model, k: int = 0):
    claim, res = _prove(model, k)
    entry = res.entry
    assert entry["status"] == "proved", entry.get("reason")
    assert entry["method"] == "lyapunov"
    assert _audited(model, entry)
    point = [Fraction(str(c)) for c in entry["claim"]["equilibrium"]["point"]]
    local = claim.kind == "stable"
    assert check_evidence(model, point, entry["evidence"], local)[0]
    v, lie = _rechecked(model, claim, entry)
    return entry, v, lie


def test_cube_decay_is_stable_and_globally_stable() -> None:
    # common practice: dx/dt = -x^3 has linearization 0 (inconclusive) and is globally
    # asymptotically stable (V = x^2, dV/dt = -2x^4).
    model = _model(
        "state x\ndx/dt = -x^3\nequilibrium O at x = 0\n",
        "claim O stable\nclaim O globally stable\n",
    )
    entry, v, lie = _proved(model, 0)
    assert entry["theorem"] == "lyapunov-local"
    assert entry["evidence"]["margin_power"] >= 2  # |y|^2 alone cannot bound x^4 from below
    _sampled(model, v, lie, 1.0, float(Fraction(entry["evidence"]["numbers"]["level"])))
    entry, v, lie = _proved(model, 1)
    assert entry["theorem"] == "lyapunov-global"
    _sampled(model, v, lie, 50.0)


CUBIC_DAMPED = "state x, y\ndx/dt = y\ndy/dt = -x - y^3\nequilibrium O at x = 0, y = 0\n"


def test_cubic_damped_oscillator() -> None:
    # common practice: x'' + x'^3 + x = 0 has eigenvalues +-i (inconclusive) and is globally
    # asymptotically stable (LaSalle with the energy); a strict polynomial V must be found.
    model = _model(CUBIC_DAMPED, "claim O stable\nclaim O globally stable\n")
    entry, v, lie = _proved(model, 0)
    _sampled(model, v, lie, 0.5, float(Fraction(entry["evidence"]["numbers"]["level"])))
    entry, v, lie = _proved(model, 1)
    assert entry["evidence"]["squares"]["decrease"]["basis"]
    _sampled(model, v, lie, 5.0)


def test_zero_eigenvalue_with_cubic_term() -> None:
    # computed by hand: dx/dt = -x, dy/dt = -y^3 + x y has eigenvalues -1, 0; with
    # V = x^2 + y^2, dV/dt = -2x^2 + 2x y^2 - 2y^4 <= -(x^2 + y^4) (2|x y^2| <= x^2 + y^4).
    model = _model(
        "state x, y\ndx/dt = -x\ndy/dt = -y^3 + x*y\nequilibrium O at x = 0, y = 0\n",
        "claim O stable\n",
    )
    entry, v, lie = _proved(model, 0)
    _sampled(model, v, lie, 0.5, float(Fraction(entry["evidence"]["numbers"]["level"])))


def test_shifted_planar_system_globally_stable() -> None:
    # computed by hand: in u = x - 1, w = y - 2 the field is du/dt = -u + w^2 - u^3,
    # dw/dt = -w - u w; V = u^2 + w^2 gives dV/dt = -2u^2 - 2w^2 - 2u^4 (the 2 u w^2 cancel).
    body = (
        "state x, y\ndx/dt = -(x - 1) + (y - 2)^2 - (x - 1)^3\n"
        "dy/dt = -(y - 2) - (x - 1)*(y - 2)\nequilibrium P at x = 1, y = 2\n"
    )
    model = _model(body, "claim P globally stable\n")
    entry, v, lie = _proved(model)
    assert entry["claim"]["equilibrium"]["point"] == ["1", "2"]
    _sampled(model, v, lie, 20.0)


def test_shifted_three_state_system_globally_stable() -> None:
    # computed by hand: with u, w, z the deviations from (1, -1, 2), du/dt = -u + w z,
    # dw/dt = -w - u z, dz/dt = -z; V = u^2 + w^2 + z^2 gives dV/dt = -2(u^2 + w^2 + z^2).
    body = (
        "state x, y, z\ndx/dt = -(x - 1) + (y + 1)*(z - 2)\n"
        "dy/dt = -(y + 1) - (x - 1)*(z - 2)\ndz/dt = -(z - 2)\n"
        "equilibrium P at x = 1, y = -1, z = 2\n"
    )
    model = _model(body, "claim P globally stable\n")
    _entry, v, lie = _proved(model)
    _sampled(model, v, lie, 10.0)


@pytest.mark.parametrize(
    "body",
    [
        # common practice: a linear centre, every orbit a circle: stable, never asymptotically.
        "state x, y\ndx/dt = y\ndy/dt = -x\nequilibrium O at x = 0, y = 0\n",
        # common practice: a nonlinear centre (conservative, energy x^2/2 + x^4/4 + y^2/2).
        "state x, y\ndx/dt = y\ndy/dt = -x - x^3\nequilibrium O at x = 0, y = 0\n",
    ],
)
def test_centres_are_never_proved_asymptotically_stable(body: str) -> None:
    model = _model(body, "claim O stable\nclaim O globally stable\n")
    for k in range(2):
        _claim, res = _prove(model, k)
        assert res.entry["status"] == "not proved"
        assert "no sum-of-squares Lyapunov function" in res.entry["reason"]


def test_unstable_equilibria_are_never_proved() -> None:
    # common practice: eigenvalues 1 and -1 (a saddle); and dx/dt = x^3 (inconclusive
    # linearization, unstable: x grows away from 0).
    saddle = _model(
        "state x, y\ndx/dt = x + y\ndy/dt = -y\nequilibrium O at x = 0, y = 0\n",
        "claim O stable\nclaim O globally stable\n",
    )
    for k in range(2):
        _claim, res = _prove(saddle, k)
        assert res.entry["status"] == "not proved"
        assert "positive real part" in res.entry["reason"]
    cube = _model("state x\ndx/dt = x^3\nequilibrium O at x = 0\n", "claim O stable\n")
    _claim, res = _prove(cube)
    assert res.entry["status"] == "not proved"


def test_irrational_point_is_not_proved_with_the_reason() -> None:
    # common practice: dx/dt = 2 - x^2 has the stable equilibrium sqrt(2) (f' = -2 sqrt 2).
    model = _model("state x\ndx/dt = 2 - x^2\nequilibrium E at x = sqrt(2)\n", "claim E stable\n")
    _claim, res = _prove(model)
    assert res.entry["status"] == "not proved"
    assert "Q(sqrt(2))" in res.entry["reason"]


def test_global_claim_with_a_domain_goes_to_the_in_domain_method() -> None:
    # dx/dt = -x - x^3 points inward on both faces of x^2 <= 4 (common practice: the
    # field at x = +-2 is -+10), so the domain is forward invariant and the claim holds.
    model = _model(
        "state x\ndx/dt = -x - x^3\ndomain x^2 <= 4\nequilibrium O at x = 0\n",
        "claim O globally stable\n",
    )
    assert attempt(model, model.claims[0]) is None  # not this method's claim
    run = prove_model(model)
    assert run.outcomes[0].status == "proved"
    assert run.outcomes[0].method == "lyapunov-domain"


def test_other_claim_kinds_are_not_this_method() -> None:
    model = _model(CUBIC_DAMPED, "claim no cycle in x^2 + y^2 <= 1\n")
    assert attempt(model, model.claims[0]) is None


def test_a_tampered_certificate_fails_the_exact_recheck() -> None:
    model = _model("state x\ndx/dt = -x^3\nequilibrium O at x = 0\n", "claim O globally stable\n")
    _claim, res = _prove(model)
    ev = res.entry["evidence"]
    gram = ev["squares"]["decrease"]["gram"]
    gram[-1][-1] = str(Fraction(gram[-1][-1]) + 1)
    assert not check_evidence(model, [Fraction(0)], ev, local=False)[0]
    assert not _audited(model, res.entry)


def test_locally_but_not_globally_stable() -> None:
    # common practice: dx/dt = -x + x^3 has equilibria 0, 1, -1; 0 is stable (f'(0) = -1)
    # and attracts exactly (-1, 1): a local certificate's sublevel set must lie inside it.
    model = _model(
        "state x\ndx/dt = -x + x^3\nequilibrium O at x = 0\n",
        "claim O stable\nclaim O globally stable\n",
    )
    entry, v, lie = _proved(model, 0)
    level = float(Fraction(entry["evidence"]["numbers"]["level"]))
    xs = np.linspace(-3, 3, 6001)
    fv = sp.lambdify(model.state_symbols, v, "numpy")
    assert np.abs(xs[fv(xs) <= level]).max() < 1
    _sampled(model, v, lie, 0.99, level)
    _claim, res = _prove(model, 1)
    assert res.entry["status"] == "not proved"


def test_prove_runs_the_lyapunov_method_and_the_audit_accepts() -> None:
    # the whole run: linearization cannot decide (eigenvalues +-i), the Lyapunov prover can
    from proofkit.proofs import prove_model

    model = _model(CUBIC_DAMPED, "claim O stable\nclaim O globally stable\n")
    run = prove_model(model)
    assert [o.status for o in run.outcomes] == ["proved", "proved"]
    assert [o.method for o in run.outcomes] == ["lyapunov", "lyapunov"]
    assert [c["theorem"] for c in run.certificate["claims"]] == [
        "lyapunov-local",
        "lyapunov-global",
    ]


def _leaves(obj, path=()):
    """Paths of every exact number (a string) in an evidence object."""
    if isinstance(obj, dict):
        for k, v in obj.items():
            yield from _leaves(v, (*path, k))
    elif isinstance(obj, list):
        for i, v in enumerate(obj):
            yield from _leaves(v, (*path, i))
    elif isinstance(obj, str):
        yield path


def test_every_mutated_number_is_rejected_by_the_audit() -> None:
    # common practice (mutation testing): changing any one exact number of a certificate
    # breaks an identity, the symmetry of a Gram matrix, or a sign condition.
    import copy

    model = _model(CUBIC_DAMPED, "claim O stable\n")
    _claim, res = _prove(model)
    assert res.entry["status"] == "proved"
    paths = list(_leaves(res.entry["evidence"]))
    assert len(paths) > 50
    for path in paths:
        entry = copy.deepcopy(res.entry)
        node = entry["evidence"]
        for k in path[:-1]:
            node = node[k]
        node[path[-1]] = str(Fraction(node[path[-1]]) + Fraction(1, 7))
        assert not _audited(model, entry), path
