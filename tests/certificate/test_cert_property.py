"""Property tests: every emitted certificate audits; verdicts agree with numpy.roots."""

from __future__ import annotations

import numpy as np
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from .conftest import companion_text, full_audit_ok, prove_text

coefficients = st.lists(st.integers(min_value=-6, max_value=9), min_size=1, max_size=5)


@given(coeffs=coefficients, claim=st.sampled_from(["stable", "unstable"]))
def test_linear_verdicts_agree_with_numpy_and_always_audit(coeffs, claim) -> None:
    run = prove_text(companion_text([str(c) for c in coeffs], claim))
    assert full_audit_ok(run.text)
    status = run.outcomes[0].status
    # computed: numpy.roots of s^n + c1 s^(n-1) + ... + cn, as an outside reference
    real = np.roots([1, *coeffs]).real
    if real.max() < -1e-6:
        assert status == ("proved" if claim == "stable" else "refuted")
    elif real.max() > 1e-6:
        # an unstable system is never proven stable; instability is found exactly
        assert status == ("proved" if claim == "unstable" else "refuted")
    elif coeffs[-1] == 0:
        # an exact zero eigenvalue and nothing to the right: the linear test cannot decide
        assert status == "not proved"


@settings(max_examples=25)  # undecided cases run the Lyapunov search: keep the run short
@given(
    a=st.fractions(min_value=-3, max_value=3, max_denominator=5),
    b=st.fractions(min_value=-3, max_value=3, max_denominator=5),
)
def test_planar_nonlinear_models_audit(a, b) -> None:
    # dx/dt = y, dy/dt = a x + b y - x^3: at the origin the verdict follows trace b and det -a
    # (computed by hand: J = [[0, 1], [a, b]]).
    text = (
        f"state x, y\ndx/dt = y\ndy/dt = ({a})*x + ({b})*y - x^3\n"
        "equilibrium o at x = 0, y = 0\nclaim o stable\n"
    )
    run = prove_text(text)
    assert full_audit_ok(run.text)
    status = run.outcomes[0].status
    if b < 0 and a < 0:
        assert status == "proved"
    elif b > 0 or a > 0:
        assert status == "refuted"
    else:  # the linearization does not decide; a Lyapunov method may prove stability
        assert status != "refuted"
        assert status == "not proved" or run.outcomes[0].method != "linearization"


@given(
    entries=st.lists(st.integers(min_value=-4, max_value=4), min_size=9, max_size=9),
)
def test_lyapunov_matrix_matches_scipy_on_random_hurwitz_matrices(entries) -> None:
    from fractions import Fraction

    import scipy.linalg

    a = np.array(entries, dtype=float).reshape(3, 3) - 5 * np.eye(3)  # usually Hurwitz
    assume(np.linalg.eigvals(a).real.max() <= -1e-3)
    rows = [" + ".join(f"({int(a[i, j])})*x{j + 1}" for j in range(3)) for i in range(3)]
    text = "state x1, x2, x3\n" + "".join(f"dx{i + 1}/dt = {rows[i]}\n" for i in range(3))
    text += "equilibrium o at x1 = 0, x2 = 0, x3 = 0\nclaim o stable\n"
    run = prove_text(text)
    assert run.outcomes[0].status == "proved"
    assert full_audit_ok(run.text)
    p = run.certificate["claims"][0]["evidence"]["lyapunov"]["P"]
    p_exact = np.array([[float(Fraction(x)) for x in r] for r in p])
    # computed: scipy.linalg.solve_continuous_lyapunov solves A'P + PA = -I
    p_ref = scipy.linalg.solve_continuous_lyapunov(a.T, -np.eye(3))
    assert np.allclose(p_exact, p_ref, rtol=1e-9, atol=1e-12)
