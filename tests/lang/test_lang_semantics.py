"""Fixed parameters, moving equilibria and where the field is defined.

The convection loop is the one of ../shared/REFERENCES.md (published:
Sparrow, *The Lorenz Equations*, 1982; Strogatz, *Nonlinear Dynamics and
Chaos*, section 9.2): with sigma = 10, beta = 8/3 the convecting equilibria are
(±sqrt(beta (rho - 1)), ±sqrt(beta (rho - 1)), rho - 1), unstable above
rho_H = 470/19.
"""

from __future__ import annotations

import sympy as sp
from hypothesis import given, settings
from hypothesis import strategies as st

import proofkit
from proofkit import parse
from proofkit.errors import InputError
from proofkit.lang import format_model

LOOP = """\
parameter sigma = 10
parameter rho = {rho}
parameter beta = 8/3{beta_range}
state x, y, z
dx/dt = sigma*(y - x)
dy/dt = x*(rho - z) - y
dz/dt = x*y - beta*z
equilibrium rest at x = 0, y = 0, z = 0
equilibrium warm at {point}
"""
MOVING = "x = sqrt(beta*(rho - 1)), y = sqrt(beta*(rho - 1)), z = rho - 1"


def error(text: str) -> InputError:
    try:
        parse(text, name="m.pk")
    except InputError as err:
        return err
    raise AssertionError("the model was accepted")


def test_fixed_parameter_equilibrium_written_with_numbers_is_accepted_and_proved() -> None:
    # computed: beta (rho - 1) = 8/3 * 27 = 72, so the point is (6 sqrt 2, 6 sqrt 2, 27)
    text = (
        LOOP.format(rho="28", beta_range="", point="x = 6*sqrt(2), y = sqrt(72), z = 27")
        + "claim warm unstable\n"
    )
    model = parse(text)
    warm = model.equilibrium("warm")
    assert not warm.moves_with_parameters
    assert warm.as_dict()["x"] == 6 * sp.sqrt(2)
    assert model.uncertain_params == () and len(model.params) == 3
    assert model.with_fixed().params == () and model.with_fixed().field == model.at_nominal().field
    from proofkit.proofs import prove_model

    run = prove_model(proofkit.parse(text, "loop.pk"))
    # published: rho = 28 > rho_H = 470/19, so the convecting equilibrium is unstable
    assert [o.status for o in run.outcomes] == ["proved"]


def test_fixed_parameter_point_that_holds_only_at_another_value_is_refused() -> None:
    # computed: at rho = 28 the residual of dy/dt at (6 sqrt 2, 6 sqrt 2, 26) is 6 sqrt 2
    err = error(LOOP.format(rho="28", beta_range="", point="x = sqrt(72), y = sqrt(72), z = 26"))
    assert "'warm' is not an equilibrium" in err.message and err.span.line == 9
    assert "dy/dt = 6*sqrt(2)" in err.message


def test_moving_equilibrium_with_a_radical_is_kept_symbolic() -> None:
    model = parse(LOOP.format(rho="28 in [2, 30]", beta_range=" in [2, 3]", point=MOVING))
    warm = model.equilibrium("warm")
    beta, rho = sp.Symbol("beta", real=True), sp.Symbol("rho", real=True)
    assert warm.moves_with_parameters and warm.parameter_symbols == {beta, rho}
    assert warm.as_dict()["z"] == rho - 1
    assert warm.as_dict()["x"] == sp.sqrt(beta * (rho - 1))
    assert [p.name for p in model.uncertain_params] == ["rho", "beta"]
    assert [p.name for p in model.with_fixed().params] == ["rho", "beta"]
    assert not model.equilibrium("rest").moves_with_parameters
    assert parse(format_model(model)) == model


def test_moving_equilibrium_refused_where_the_radicand_turns_negative() -> None:
    err = error(LOOP.format(rho="28 in [1/2, 30]", beta_range=" in [2, 3]", point=MOVING))
    assert err.span is not None and (err.span.line, err.span.column) == (9, 1)
    assert "not defined for every parameter value" in err.message
    assert "the argument of sqrt (beta*(rho - 1)) must be >= 0" in err.message
    # the witness is exact: at rho = 1/2, beta = 2 the radicand is 2 * (-1/2) = -1 (computed)
    assert "it is -1 at beta = 2, rho = 1/2" in err.message


def test_moving_point_that_fails_for_some_parameter_values_shows_one() -> None:
    # the sign of the root is wrong for y: the residual of dx/dt is -2 sigma sqrt(...)
    point = "x = sqrt(beta*(rho - 1)), y = -sqrt(beta*(rho - 1)), z = rho - 1"
    err = error(LOOP.format(rho="28 in [2, 30]", beta_range=" in [2, 3]", point=point))
    assert "'warm' is not an equilibrium" in err.message
    # computed: at the box midpoint beta = 5/2, rho = 16, dx/dt = -20 sqrt(75/2) = -122.47...
    assert "(at beta = 5/2, rho = 16, dx/dt is -122.47" in err.message


def test_point_in_a_fixed_parameter_is_substituted() -> None:
    model = parse("parameter k = 2\nstate x\ndx/dt = k - x\nequilibrium e at x = k\n")
    assert model.equilibrium("e").point == (("x", sp.Integer(2)),)
    assert not model.equilibrium("e").moves_with_parameters


# --- meaning never changed by simplification (sympy would turn these into -x, 0, 1) ---
def test_singularity_removed_by_simplification_is_still_refused() -> None:
    for rhs, origin, column in [
        ("-exp(log(x))", "the argument of log (x) must be > 0", 18),
        ("-x + 0/x", "a denominator (x) must be != 0", 16),
        ("-x*(x/x)", "a denominator (x) must be != 0", 15),
        ("-x + sqrt(x)^2 - x", "the argument of sqrt (x) must be >= 0", 0),
    ]:
        text = f"state x\ndx/dt = {rhs}\nequilibrium o at x = {-1 if column == 0 else 0}\n"
        err = error(text)
        assert "the field is not defined at 'o'" in err.message, err
        assert origin in err.message
        assert err.span is not None and err.span.line == 3
        if column:
            assert err.hint == f"that expression is at m.pk:2:{column}"


def test_model_keeps_where_the_field_is_defined() -> None:
    x = sp.Symbol("x", real=True)
    model = parse("state x\nlet r = 1/(x - 1)\ndx/dt = -exp(log(x + 2)) + 2 + 0*r\n")
    assert model.field == (-x,)  # sympy's value; the conditions keep the meaning
    kept = {(d.expr, d.relation) for d in model.definedness}
    assert kept == {(x + 2, ">"), (x - 1, "!=")}
    assert model.at_nominal().definedness == model.definedness


def test_claim_set_and_domain_must_avoid_singular_points() -> None:
    base = "state x\ndx/dt = -x + x^2/(x - 1)\nequilibrium o at x = 0\n"
    err = error(base + "claim o attracts x^2 <= 4\n")
    assert "not defined everywhere in the claim's set" in err.message
    assert "it is 0 at x = 1" in err.message and (err.span.line, err.span.column) == (4, 18)
    err = error(base + "domain x <= 2\n")
    assert "not defined everywhere in the domain" in err.message
    parse(base + "domain x <= 1/2\nclaim o attracts x^2 <= 1/4\n")


def test_equilibrium_outside_the_domain_is_refused() -> None:
    err = error("state x\ndx/dt = -x\ndomain x >= 1\nequilibrium o at x = 0\n")
    assert "'o' lies outside the declared domain: x >= 1 fails there" in err.message
    err = error(
        "parameter k = 1 in [0, 2]\nstate x\ndx/dt = k - x\ndomain x <= 3/2\n"
        "equilibrium e at x = k\n"
    )
    assert "outside the declared domain" in err.message and "at k = " in err.message


def test_parameter_denominator_must_stay_nonzero_over_the_range() -> None:
    err = error("parameter k = 1 in [0, 2]\nstate x\ndx/dt = -x/k\n")
    assert "a denominator (k) must be != 0, but it is 0 at k = 0" in err.message
    assert (err.span.line, err.span.column) == (3, 12)
    parse("parameter k = 1 in [1/2, 2]\nstate x\ndx/dt = -x/k\nequilibrium o at x = 0\n")


@settings(max_examples=25, deadline=None)
@given(
    k=st.integers(-3, 3),
    c=st.integers(-3, 3),
    uncertain=st.booleans(),
    width=st.integers(0, 2),
    offset=st.integers(-2, 2),
)
def test_points_written_in_the_parameters(
    k: int, c: int, uncertain: bool, width: int, offset: int
) -> None:
    # computed by hand: dx/dt = -(x - k - c) (x^2 + 1) vanishes exactly at x = k + c, for every
    # value of k; a point off by a nonzero offset is refused, by a zero offset accepted
    rng = f" in [{k - width}, {k + width}]" if uncertain else ""
    text = (
        f"parameter k = {k}{rng}\nconstant c = {c}\nstate x\n"
        f"dx/dt = -(x - k - c)*(x^2 + 1)\nequilibrium e at x = k + c + ({offset})\n"
    )
    if offset != 0:
        assert "'e' is not an equilibrium" in error(text).message
    else:
        model = parse(text)
        assert model.equilibrium("e").moves_with_parameters == uncertain
        assert parse(format_model(model)) == model
