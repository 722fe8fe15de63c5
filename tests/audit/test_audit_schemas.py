"""The Lyapunov and region-of-attraction schemas on hand-built certificates.

Every expected value is computed by hand below (Lie derivatives of quadratic V,
Gram matrices of one-variable forms); the systems' basins are known exactly.
"""

from __future__ import annotations

import copy
from fractions import Fraction

from hypothesis import given
from hypothesis import strategies as st

from proofkit.audit import audit_certificate

from .conftest import build, full_ok, squares, verdicts

# dx/dt = -x^3: globally asymptotically stable (common practice: V = x^2 gives
# Vdot = -2x^4 < 0 for x != 0), but the linearization (J = 0) does not decide.
CUBIC = "state x\ndx/dt = -x^3\nequilibrium o at x = 0\nclaim o globally stable\nclaim o stable\n"


def cubic_global() -> dict:
    # computed by hand: V = x^2, eps = 1/2, m = 2: V - eps x^2 = x^2/2;
    # -lie(V) - eps (x^2)^2 = 2x^4 - x^4/2 = 3/2 x^4.
    return {
        "V": [[[2], "1"]],
        "numbers": {"eps": "1/2"},
        "margin_power": 2,
        "squares": squares(positive=([[1]], [["1/2"]]), decrease=([[2]], [["3/2"]])),
    }


def cubic_local() -> dict:
    # the same with level 1 and s0 = 0 (the empty polynomial, empty Gram matrix)
    ev = cubic_global()
    ev["numbers"] = {"eps": "1/2", "level": "1"}
    ev["multipliers"] = {"s0": []}
    ev["squares"]["s0"] = {"basis": [], "gram": []}
    return ev


def cubic_certificate() -> dict:
    return build(
        CUBIC,
        [
            ("lyapunov", "lyapunov-global", cubic_global()),
            ("lyapunov", "lyapunov-local", cubic_local()),
        ],
    )


def test_cubic_system_is_certified_globally_and_locally() -> None:
    cert = cubic_certificate()
    report = audit_certificate(cert)
    assert [v.status for v in report.claims] == ["proved", "proved"]
    assert report.claims[0].sentence == (
        "the equilibrium o (x = 0) is globally asymptotically stable"
    )
    assert any("radially unbounded" in c for c in report.claims[0].checked)
    assert full_ok(cert)


# dx/dt = -x + x^3: equilibria -1, 0, 1 (computed: x(x^2 - 1) = 0); the basin of 0 is
# exactly (-1, 1), since f < 0 on (0, 1) and f > 0 on (-1, 0).
BISTABLE = (
    "state x\ndx/dt = -x + x^3\nequilibrium o at x = 0\n"
    "domain x^2 <= 9/16\nclaim o attracts x^2 <= 1/4\n"
)


def basin_evidence(level: str = "1/2") -> dict:
    # computed by hand with V = x^2, eps = 1/2, s0 = 2x^2, s1 = 1, t1 = 1, level c:
    #   decrease: 2x^2 - 2x^4 - x^2/2 - 2x^2 (c - x^2) = (3/2 - 2c) x^2
    #   inside:   c - x^2 - (1/4 - x^2) = c - 1/4
    #   domain 1: 9/16 - x^2 - (c - x^2) = 9/16 - c
    c = Fraction(level)
    return {
        "V": [[[2], "1"]],
        "numbers": {"eps": "1/2", "level": level},
        "multipliers": {"s0": [[[2], "2"]], "s1": [[[0], "1"]], "t1": [[[0], "1"]]},
        "squares": {
            "positive": {"basis": [[1]], "gram": [["1/2"]]},
            "decrease": {"basis": [[1]], "gram": [[str(Fraction(3, 2) - 2 * c)]]},
            "inside": {"basis": [[0]], "gram": [[str(c - Fraction(1, 4))]]},
            "domain 1": {"basis": [[0]], "gram": [[str(Fraction(9, 16) - c)]]},
            "s0": {"basis": [[1]], "gram": [["2"]]},
            "s1": {"basis": [[0]], "gram": [["1"]]},
            "t1": {"basis": [[0]], "gram": [["1"]]},
        },
    }


def basin_certificate(level: str = "1/2") -> dict:
    return build(BISTABLE, [("sublevel-set", "region-of-attraction", basin_evidence(level))])


def test_region_of_attraction_inside_the_known_basin_is_certified() -> None:
    cert = basin_certificate()
    report = audit_certificate(cert)
    assert report.claims[0].status == "proved", report.claims[0].message
    assert report.claims[0].sentence == (
        "every trajectory that starts in {-x^2 + 1/4 >= 0} converges to the equilibrium o (x = 0)"
    )
    assert full_ok(cert)


def test_a_level_reaching_the_other_equilibria_cannot_be_certified() -> None:
    # level 1: {V <= 1} = [-1, 1] contains the equilibria +-1 (computed above), so no
    # decrease certificate can exist; the only Gram matrix of the target is negative.
    v = audit_certificate(basin_certificate("1")).claims[0]
    assert v.status == "rejected" and "not PSD" in (v.message or "")


def test_swapped_obligation_with_a_true_identity_is_rejected() -> None:
    # Every Gram identity below is true for SOME target, but "positive" and "decrease"
    # carry each other's: the identity is not the theorem's hypothesis.
    cert = cubic_certificate()
    sq = cert["claims"][0]["evidence"]["squares"]
    sq["positive"], sq["decrease"] = sq["decrease"], sq["positive"]
    v = audit_certificate(cert).claims[0]
    assert v.status == "rejected" and "target differs" in (v.message or "")


CENTRE = (
    "state x, y\ndx/dt = y\ndy/dt = -x\nequilibrium o at x = 0, y = 0\nclaim o globally stable\n"
)


def test_centre_with_a_borrowed_true_identity_is_rejected() -> None:
    # dx/dt = y, dy/dt = -x (a centre; common practice: circles are orbits). With
    # V = x^2 + y^2, lie(V) = 0, so "decrease" is -eps (x^2 + y^2): not a sum of squares.
    # The "positive" identity V - eps|y|^2 = (x^2 + y^2)/2 is true; offering it for
    # "decrease" too must fail.
    identity = {"basis": [[1, 0], [0, 1]], "gram": [["1/2", "0"], ["0", "1/2"]]}
    ev = {
        "V": [[[2, 0], "1"], [[0, 2], "1"]],
        "numbers": {"eps": "1/2"},
        "squares": {"positive": identity, "decrease": copy.deepcopy(identity)},
    }
    cert = build(CENTRE, [("lyapunov", "lyapunov-global", ev)])
    assert verdicts(cert) == ["rejected"]


rationals = st.fractions(min_value=-4, max_value=4, max_denominator=8)


@given(p11=rationals, p12=rationals, p22=rationals, eps=rationals)
def test_a_centre_is_never_certified_with_a_quadratic_v(p11, p12, p22, eps) -> None:
    # For V = y'Py the decrease target -(A'P + PA) - eps I is a quadratic form whose
    # Gram matrix in the basis (x, y) is unique; for the centre A = [[0, 1], [-1, 0]]
    # its trace is -2 eps < 0 (computed: tr(A'P + PA) = 2 tr(PA) = 0), so it is never
    # PSD. The audit must agree for every P and every eps (also the invalid ones).
    a = [[0, 1], [-1, 0]]
    p = [[p11, p12], [p12, p22]]
    lyap = [
        [sum(a[k][i] * p[k][j] + p[i][k] * a[k][j] for k in range(2)) for j in range(2)]
        for i in range(2)
    ]
    g = [[-lyap[i][j] - (eps if i == j else 0) for j in range(2)] for i in range(2)]
    pos = [[p[i][j] - (eps if i == j else 0) for j in range(2)] for i in range(2)]

    def poly(m: list[list[Fraction]]) -> list:
        terms = {(2, 0): m[0][0], (1, 1): 2 * m[0][1], (0, 2): m[1][1]}
        return [[list(e), str(c)] for e, c in terms.items() if c != 0]

    ev = {
        "V": poly(p),
        "numbers": {"eps": str(eps)},
        "squares": {
            "positive": {"basis": [[1, 0], [0, 1]], "gram": [[str(x) for x in r] for r in pos]},
            "decrease": {"basis": [[1, 0], [0, 1]], "gram": [[str(x) for x in r] for r in g]},
        },
    }
    cert = build(CENTRE, [("lyapunov", "lyapunov-global", ev)])
    assert verdicts(cert) in (["rejected"], ["malformed"])


def test_mutations_of_the_evidence_are_rejected() -> None:
    base = basin_certificate()
    ev = base["claims"][0]["evidence"]
    mutations = {
        "eps zero": ("numbers", "eps", "0"),
        "eps negative": ("numbers", "eps", "-1/2"),
        "level negative": ("numbers", "level", "-1/2"),
        "an unchecked number": ("numbers", "offset", "1"),
        "a missing multiplier": ("multipliers", "t1", None),
        "an extra multiplier": ("multipliers", "s9", [[[0], "1"]]),
        "a missing obligation": ("squares", "domain 1", None),
        "an extra obligation": ("squares", "spare", {"basis": [[0]], "gram": [["1"]]}),
        "a negative multiplier": ("multipliers", "s1", [[[0], "-1"]]),
    }
    for what, (part, key, value) in mutations.items():
        cert = copy.deepcopy(base)
        target = cert["claims"][0]["evidence"][part]
        if value is None:
            del target[key]
        else:
            target[key] = value
        assert verdicts(cert) in (["rejected"], ["malformed"]), what
    for what, change in {
        "V with a linear term": lambda e: e["V"].append([[1], "1"]),
        "margin power 5": lambda e: e.__setitem__("margin_power", 5),
        "margin power true": lambda e: e.__setitem__("margin_power", True),
    }.items():
        cert = copy.deepcopy(base)
        change(cert["claims"][0]["evidence"])
        assert verdicts(cert) in (["rejected"], ["malformed"]), what
    assert ev == basin_certificate()["claims"][0]["evidence"]  # the base stayed intact


def _leaves(obj: object, path: tuple = ()) -> list[tuple]:
    if isinstance(obj, dict):
        return [p for k, v in obj.items() for p in _leaves(v, (*path, k))]
    if isinstance(obj, list):
        return [p for i, v in enumerate(obj) for p in _leaves(v, (*path, i))]
    return [path] if isinstance(obj, int | str) and not isinstance(obj, bool) else []


def test_every_numeric_leaf_of_a_schema_certificate_matters() -> None:
    for base in (basin_certificate(), cubic_certificate()):
        for path in _leaves(base["claims"][0]["evidence"]):
            cert = copy.deepcopy(base)
            obj = cert["claims"][0]["evidence"]
            for k in path[:-1]:
                obj = obj[k]
            old = obj[path[-1]]
            obj[path[-1]] = old + 1 if isinstance(old, int) else str(Fraction(old) + 1)
            assert verdicts(cert)[0] in ("rejected", "malformed"), path


def test_global_claim_with_a_domain_is_not_accepted() -> None:
    text = CUBIC.replace("claim o globally stable\nclaim o stable\n", "")
    text += "domain x^2 <= 1\nclaim o globally stable\n"
    cert = build(text, [("lyapunov", "lyapunov-global", cubic_global())])
    report = audit_certificate(cert)
    assert report.claims[0].status == "rejected" and report.claims[0].failed_step == "domain"


RANGE = (
    "parameter k = 1 in [1/2, 2]\nstate x\ndx/dt = -k*x^3\nequilibrium o at x = 0\n"
    "claim o globally stable\nclaim o globally stable at nominal\n"
)


def test_nominal_evidence_proves_only_the_nominal_scope() -> None:
    # issue: a range claim must not be accepted from evidence at the nominal values
    ev = ("lyapunov", "lyapunov-global", cubic_global())
    cert = build(RANGE, [ev, copy.deepcopy(ev)])
    report = audit_certificate(cert)
    assert [c.scope for c in report.claims] == ["range", "nominal"]
    assert report.claims[0].status == "rejected" and report.claims[0].failed_step == "scope"
    assert report.claims[1].status == "proved"
    assert report.claims[0].sentence.endswith("for every value of k in [1/2, 2]")
    assert report.claims[1].sentence.endswith("at the nominal parameter values (k = 1)")


def test_another_equilibrium_in_the_set_refutes_attraction() -> None:
    # dx/dt = -x + x^3 (computed above): x = 1 is an equilibrium, so it never reaches 0;
    # the claim "o attracts x^2 <= 2" is false, shown exactly by that point.
    text = BISTABLE.replace("x^2 <= 1/4", "x^2 <= 2").replace("9/16", "4")
    ev = {"point": ["1"]}
    cert = build(text, [("equilibrium-in-set", "another-equilibrium-in-the-set", ev)])
    cert["claims"][0]["status"] = "refuted"
    report = audit_certificate(cert)
    assert report.claims[0].status == "refuted", report.claims[0].message
    assert full_ok(cert)
    for bad in (["0"], ["2"], ["1/2"]):  # its own point; not in the set; not an equilibrium
        cert["claims"][0]["evidence"] = {"point": bad}
        assert audit_certificate(cert).claims[0].status == "rejected", bad
    small = build(BISTABLE, [("equilibrium-in-set", "another-equilibrium-in-the-set", ev)])
    small["claims"][0]["status"] = "refuted"  # x = 1 is outside x^2 <= 1/4
    assert audit_certificate(small).claims[0].failed_step == "set"


def test_conditions_where_the_field_is_defined() -> None:
    # -x + 0/(x - 3): the field is -x where x != 3 (kept as (x - 3)^2 > 0, computed).
    import json

    import proofkit
    from proofkit.proofs import prove_model

    text = "state x\ndx/dt = -x + 0/(x - 3)\nequilibrium o at x = 0\nclaim o stable\n"
    cert = json.loads(prove_model(proofkit.parse(text, "c.pk")).text)
    assert cert["model"]["conditions"] == [
        {"g": [[[2], "1"], [[1], "-6"], [[0], "9"]], "strict": True}
    ]
    assert verdicts(cert) == ["proved"]  # local: the condition holds strictly at x = 0
    cert["model"]["conditions"][0]["g"] = [[[2], "1"]]  # x^2 > 0 fails at the point
    report = audit_certificate(cert)
    assert report.claims[0].status == "rejected" and report.claims[0].failed_step == "field"
    global_cert = build(text.replace("stable", "globally stable"), [None])
    global_cert["claims"][0].update(
        status="proved", method="lyapunov", theorem="lyapunov-global", evidence=cubic_global()
    )
    global_cert["claims"][0].pop("reason")
    global_cert["claims"][0]["number_field"] = None
    v = audit_certificate(global_cert).claims[0]
    assert v.status == "rejected" and "only under conditions" in (v.message or "")
