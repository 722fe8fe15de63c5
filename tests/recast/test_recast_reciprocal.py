"""Recasting reciprocal atoms: R = 1/q - 1/q(x*), (R + r0) q = 1, denominators away from 0.

Check values and their sources are written beside each check.
"""

from __future__ import annotations

import copy
from fractions import Fraction

import numpy as np
import pytest
from scipy.integrate import solve_ivp

import proofkit
from proofkit.audit import audit_certificate
from proofkit.audit._recast_field import derive
from proofkit.audit.enclosures import read_expressions
from proofkit.audit.numbers import FormatError, Num
from proofkit.audit.schemas import Rejected
from proofkit.certificate import model_section, new_certificate
from proofkit.errors import InputError
from proofkit.proofs._recast_system import Unsupported, build_system
from proofkit.proofs.recast import attempt

PENDULUM = """system pendulum_sat
state x, v
dx/dt = v
dv/dt = -sin(x) - v - x/(1 + x^2)
equilibrium rest at x = 0, v = 0
claim rest attracts x^2 + v^2 <= 1/2
"""

# The denominator 4x^2 - 4x + 1 = (2x - 1)^2 is a sum of squares, 1 at the point, 0 at
# x = 1/2 (computed: by hand); a sine keeps the field non-rational, so that it is recast.
SQUARE_POLE = """system square_pole
state x
dx/dt = -x/(4*x^2 - 4*x + 1) - sin(x)
equilibrium rest at x = 0
claim rest attracts x^2 <= {r2}
"""


def _quiet(_m: str) -> None:
    return None


def _prove(src: str) -> tuple[object, dict]:
    model = proofkit.parse(src, "m.pk")
    found = attempt(model, model.claims[0], _quiet)
    if found is None:  # the recast refused the field
        return model, {"status": "not attempted"}
    return model, found.entry


@pytest.fixture(scope="module")
def pendulum() -> tuple[object, dict]:
    model, entry = _prove(PENDULUM)
    assert entry["status"] == "proved", entry
    return model, entry


def _audit(model: object, entry: dict) -> object:
    return audit_certificate(new_certificate(model_section(model), [entry])).claims[0]


def test_saturated_pendulum_basin_is_audited_and_agrees_with_simulation(pendulum) -> None:
    model, entry = pendulum
    got = _audit(model, entry)
    assert got.status == "proved", got.message
    ev = entry["evidence"]
    assert "denominator 1" in ev["squares"] and "set denominator 1" in ev["squares"]
    assert "decrease * reciprocal 1" in ev["free"]

    # computed (scipy solve_ivp, rtol 1e-9): starts on the claim's circle converge
    def rhs(_t: float, z: np.ndarray) -> list[float]:
        x, v = z
        return [v, -np.sin(x) - v - x / (1 + x * x)]

    for a in np.linspace(0.0, 2 * np.pi, 16, endpoint=False):
        start = np.sqrt(0.5) * np.array([np.cos(a), np.sin(a)])
        sol = solve_ivp(rhs, (0.0, 40.0), start, rtol=1e-9, atol=1e-12)
        assert np.linalg.norm(sol.y[:, -1]) < 1e-5


def _trees(src: str) -> tuple[list, object]:
    model = proofkit.parse(src, "m.pk")
    return model_section(model)["expressions"]["components"], model


def _flint_dict(p: object) -> dict:
    pairs = zip(p.monoms(), p.coeffs(), strict=True)  # type: ignore[attr-defined]
    return {tuple(int(x) for x in e): Fraction(int(c.p), int(c.q)) for e, c in pairs}


def test_audit_and_prover_derive_the_same_reciprocal_recast() -> None:
    # Two independent implementations (stdlib fractions vs python-flint) must agree.
    src = (
        "state x1, x2\ndx1/dt = x2\n"
        "dx2/dt = -sin(x1) - x2 - x1/(1 + x1^2) + x2^2/(2 - x1 + x2)^2 - x2^2/4\n"
    )
    trees, _model = _trees(src)
    exprs = read_expressions({"variables": ["x1", "x2"], "components": trees}, ["x1", "x2"], [])
    rc = derive(exprs, [Num.of(0)] * 2, [], {"taylor_order": 1}, "t", reciprocal=True)
    sysm = build_system(trees, [Fraction(0)] * 2, [], 1, reciprocal=True)
    assert rc.names == sysm.names == ("y1", "y2", "S1", "C1", "R1", "R2")
    for audit_f, (a, b) in zip(rc.field, sysm.field, strict=True):
        assert b.is_zero()
        assert {e: c.a for e, c in audit_f.items()} == _flint_dict(a)
    recips = [(lbl, h) for lbl, h in rc.equalities if lbl.startswith("reciprocal")]
    assert [lbl for lbl, _h in recips] == [lbl for lbl, _h in sysm.reciprocals]
    for (_l1, h1), (_l2, h2) in zip(recips, sysm.reciprocals, strict=True):
        assert {e: c.a for e, c in h1.items()} == _flint_dict(h2)
    for (l1, q1), (l2, q2) in zip(rc.poles, sysm.poles, strict=True):
        assert l1 == l2 and {e: c.a for e, c in q1.items()} == _flint_dict(q2)
    # computed (by hand): R = 1/(1 + x1^2) - 1 has dR/dt = -(R + 1)^2 * 2 x1 x2
    poles = [{e: c.a for e, c in q.items()} for _lbl, q in rc.poles]
    k = poles.index({(0,) * 6: 1, (2, 0, 0, 0, 0, 0): 1})
    r = [0] * 6
    r[4 + k] = 1
    want = {}
    for j, c in ((2, -2), (1, -4), (0, -2)):
        e = list(r)
        e[4 + k] = j
        want[tuple(a + b for a, b in zip(e, (1, 1, 0, 0, 0, 0), strict=True))] = c
    assert {e: c.a for e, c in rc.field[4 + k].items()} == want


def test_reciprocal_values_satisfy_the_recast_rules_numerically() -> None:
    # computed (numpy central differences along the field): dR/dt = -(R + r0)^2 grad q . f
    trees, _model = _trees("state x, v\ndx/dt = v\ndv/dt = -sin(x) - v + x/(2 - x)\n")
    sysm = build_system(trees, [Fraction(0)] * 2, [], 1, reciprocal=True)
    pts = np.array([[0.3, -0.2], [-0.5, 0.4], [1.2, 0.7]])
    z = sysm.lift(pts)
    fld = sysm.numeric_field()
    for row, x in zip(z, pts, strict=True):
        f = np.array([sum(c * np.prod(row ** np.array(e)) for e, c in fi.items()) for fi in fld])
        assert np.isclose(f[1], -np.sin(x[0]) - x[1] + x[0] / (2 - x[0]))
        h = 1e-6
        r = lambda p: 1 / (2 - p[0]) - 0.5  # noqa: E731
        assert np.isclose(f[4], (r(x + h * f[:2]) - r(x - h * f[:2])) / (2 * h), atol=1e-6)


def test_a_claim_holding_the_pole_is_never_proved() -> None:
    # dx/dt = -x - sin(x) + x^2/(1 - x) is undefined at x = 1 (fact of the trade: a pole):
    # the model is refused before any proof (exit 2 on the command line).
    src = (
        "system pole\nstate x\ndx/dt = -x - sin(x) + x^2/(1 - x)\nequilibrium rest at x = 0\n"
        "claim rest attracts x^2 <= 2\n"
    )
    with pytest.raises(InputError):
        proofkit.parse(src, "m.pk")


@pytest.fixture(scope="module")
def square_pole() -> tuple[object, dict]:
    model, entry = _prove(SQUARE_POLE.format(r2="1/100"))
    assert entry["status"] == "proved", entry
    return model, entry


def test_a_small_set_beside_a_square_pole_is_proved_and_audited(square_pole) -> None:
    model, entry = square_pole
    got = _audit(model, entry)
    assert got.status == "proved", got.message
    # computed (scipy solve_ivp): from the ends of the set the state tends to 0
    for x0 in (-0.1, 0.1):
        rhs = lambda _t, x: [-x[0] / (2 * x[0] - 1) ** 2 - np.sin(x[0])]  # noqa: E731
        assert abs(solve_ivp(rhs, (0.0, 30.0), [x0], rtol=1e-9).y[0, -1]) < 1e-6


@pytest.mark.parametrize("r2", ["1", "1/4"])
def test_a_certificate_moved_to_a_set_holding_the_pole_is_rejected(square_pole, r2) -> None:
    # The same evidence for x^2 <= r2, a set that holds the pole x = 1/2 (1/4: on its edge):
    # the set denominator obligation no longer matches, so the audit refuses.
    model, entry = square_pole
    bad = copy.deepcopy(entry)
    r = Fraction(r2)
    bad["claim"]["set"] = [{"g": [[[2], "-1"], [[0], str(r)]], "strict": False}]
    bad["statement"] = f"rest attracts x^2 <= {r2}"
    assert _audit(model, bad).status != "proved"


def _bump_eps_q(ev: dict) -> None:
    ev["numbers"]["eps_q"] = "2"  # q = 1 + x^2 >= 2 fails at x = 0


def _drop_set_denominator(ev: dict) -> None:
    for key in [k for k in ev["squares"] if k.startswith("set denominator")]:
        del ev["squares"][key]
    for key in [k for k in ev["multipliers"] if k.startswith("set denominator")]:
        del ev["multipliers"][key]
    for key in [k for k in ev["free"] if k.startswith("set denominator")]:
        del ev["free"][key]


def _tamper_denominator_gram(ev: dict) -> None:
    gram = ev["squares"]["denominator 1"]["gram"]
    gram[0][0] = str(Fraction(gram[0][0]) + Fraction(1, 2**40))


def _drop_reciprocal_multiplier(ev: dict) -> None:
    del ev["free"]["decrease * reciprocal 1"]


def _no_eps_q(ev: dict) -> None:
    del ev["numbers"]["eps_q"]


@pytest.mark.parametrize(
    "mutate",
    [_bump_eps_q, _drop_set_denominator, _tamper_denominator_gram,
     _drop_reciprocal_multiplier, _no_eps_q],
)  # fmt: skip
def test_tampered_denominator_certificates_are_rejected(pendulum, mutate) -> None:
    model, entry = pendulum
    bad = copy.deepcopy(entry)
    mutate(bad["evidence"])
    assert _audit(model, bad).status != "proved"


def test_atoms_inside_atoms_stay_refused() -> None:
    for body in ("-x + sin(1/(1 + x^2) - 1)", "-x + 1/(2 + sin(x)) - 1/2"):
        trees, _model = _trees(f"state x\ndx/dt = {body}\n")
        with pytest.raises(Unsupported):
            build_system(trees, [Fraction(0)], [], 1, reciprocal=True)
        exprs = read_expressions({"variables": ["x"], "components": trees}, ["x"], [])
        with pytest.raises((Rejected, FormatError)):
            derive(exprs, [Num.of(0)], [], {"taylor_order": 1}, "t", reciprocal=True)


def test_without_the_reciprocal_switch_negative_powers_stay_refused() -> None:
    # the cycle and Taylor-model schemas reuse the walk and keep refusing 1/q
    trees, _model = _trees("state x, v\ndx/dt = v\ndv/dt = -sin(x) - x/(1 + x^2)\n")
    with pytest.raises(Unsupported):
        build_system(trees, [Fraction(0)] * 2, [], 1)
    exprs = read_expressions({"variables": ["x", "v"], "components": trees}, ["x", "v"], [])
    with pytest.raises(Rejected):
        derive(exprs, [Num.of(0)] * 2, [], {"taylor_order": 1}, "t")


def test_local_stability_with_a_reciprocal_is_audited() -> None:
    # The linearization at 0 is x'' = -2x - x' (Hurwitz: computed by hand), so the point is
    # asymptotically stable; the recast certificate keeps its sublevel set away from no pole
    # (1 + x^2 >= 1) and still states the denominator obligation.
    model, entry = _prove(PENDULUM.replace("attracts x^2 + v^2 <= 1/2", "stable"))
    assert entry["status"] == "proved", entry
    assert "denominator 1" in entry["evidence"]["squares"]
    got = _audit(model, entry)
    assert got.status == "proved", got.message


def test_a_denominator_that_changes_sign_is_proved_beside_its_pole() -> None:
    # 1 - x is not a sum of squares: the certificate is lifted by W = (R + 1)^2 instead.
    src = (
        "system pole\nstate x\ndx/dt = -x - sin(x) + x^2/(1 - x)\nequilibrium rest at x = 0\n"
        "claim rest attracts x^2 <= 1/100\n"
    )
    model, entry = _prove(src)
    assert entry["status"] == "proved", entry
    got = _audit(model, entry)
    assert got.status == "proved", got.message
    # computed (scipy solve_ivp): from the ends of the set the state tends to 0
    for x0 in (-0.1, 0.1):
        rhs = lambda _t, x: [-x[0] - np.sin(x[0]) + x[0] ** 2 / (1 - x[0])]  # noqa: E731
        assert abs(solve_ivp(rhs, (0.0, 30.0), [x0], rtol=1e-9).y[0, -1]) < 1e-6
