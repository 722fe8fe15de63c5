"""Property tests of ``prove``: the verdict re-derived outside the project.

Random polynomial fields with an equilibrium at the origin, f(x) = A x +
(quadratic terms); ``claim o stable`` and ``claim o unstable`` are proved.
The expected verdict comes from numpy's eigenvalues of A (computed), the
stated Lyapunov matrix P from ``scipy.linalg.solve_continuous_lyapunov``
(computed) and the stated Jacobian from sympy's ``jacobian`` (computed) --
not from "the audit accepted it", which a bug shared by prover and audit
would also pass. A second family puts the equilibrium at an irrational point
of a quadratic field Q(sqrt d), where the stated characteristic polynomial is
compared with sympy's exact one. Fields whose linearization has an eigenvalue
within 1e-6 of the imaginary axis are assumed away (the linear test does not
decide them).
"""

from __future__ import annotations

from fractions import Fraction

import numpy as np
import scipy.linalg
import sympy as sp
from hypothesis import assume, given
from hypothesis import strategies as st

import proofkit
from proofkit.proofs import prove_model


@st.composite
def fields(draw: st.DrawFn) -> tuple[np.ndarray, list[tuple[int, int, int]]]:
    """A (n x n integers) and one quadratic term c * x_j * x_k per equation."""
    n = draw(st.integers(2, 3))
    a = np.array(draw(st.lists(st.integers(-4, 4), min_size=n * n, max_size=n * n))).reshape(n, n)
    quad = [
        (draw(st.integers(0, n - 1)), draw(st.integers(0, n - 1)), draw(st.integers(-2, 2)))
        for _ in range(n)
    ]
    return a, quad


def _text(a: np.ndarray, quad: list[tuple[int, int, int]]) -> str:
    n = len(a)
    names = [f"x{i + 1}" for i in range(n)]
    body = "state " + ", ".join(names) + "\n"
    for i, (j, k, c) in enumerate(quad):
        linear = " + ".join(f"({a[i, m]})*{names[m]}" for m in range(n))
        body += f"d{names[i]}/dt = {linear} + ({c})*{names[j]}*{names[k]}\n"
    body += "equilibrium o at " + ", ".join(f"{v} = 0" for v in names) + "\n"
    return body + "claim o stable\nclaim o unstable\n"


def _sympy_field(a: np.ndarray, quad: list[tuple[int, int, int]]) -> tuple[sp.Matrix, list]:
    xs = sp.symbols(f"x1:{len(a) + 1}")
    rows = [
        sum(int(a[i, m]) * xs[m] for m in range(len(a))) + c * xs[j] * xs[k]
        for i, (j, k, c) in enumerate(quad)
    ]
    return sp.Matrix(rows), list(xs)


def _q(v: object) -> float:
    assert isinstance(v, str), v  # rational points only here
    return float(Fraction(v))


@given(fields())
def test_prove_verdict_matches_numpy_eigenvalues(case) -> None:
    a, quad = case
    max_re = float(np.max(np.linalg.eigvals(a.astype(float)).real))
    assume(abs(max_re) > 1e-6)
    run = prove_model(proofkit.parse(_text(a, quad), "random.pk"))
    stable, unstable = (o.status for o in run.outcomes)
    if max_re < 0:  # computed: numpy eigenvalues, all in the open left half plane
        assert (stable, unstable) == ("proved", "refuted")
    else:  # computed: an eigenvalue in the open right half plane
        assert (stable, unstable) == ("refuted", "proved")
    ev = run.certificate["claims"][0]["evidence"]
    f, xs = _sympy_field(a, quad)
    jac = f.jacobian(xs)
    jac0 = np.array(jac.subs(dict.fromkeys(xs, 0)), dtype=float)  # computed: sympy jacobian
    assert np.array_equal(np.array([[_q(v) for v in r] for r in ev["jacobian"]]), jac0)
    if max_re < 0 and "lyapunov" in ev:
        p = np.array([[_q(v) for v in r] for r in ev["lyapunov"]["P"]])
        p_ref = scipy.linalg.solve_continuous_lyapunov(a.T.astype(float), -np.eye(len(a)))
        assert np.allclose(p, p_ref, rtol=1e-9, atol=1e-12)  # computed: scipy


@given(
    a=st.integers(-3, 3),
    b=st.integers(-3, 3),
    c=st.sampled_from([-3, -2, -1, 1, 2, 3]),
    d=st.sampled_from([2, 3, 5]),
    sign=st.sampled_from([1, -1]),
)
def test_prove_verdict_at_a_quadratic_irrational_point(a, b, c, d, sign) -> None:
    # dx/dt = x^2 - d + a y, dy/dt = b x + c y: y = -b x / c and x^2 - (a b / c) x - d = 0,
    # so x = (A +- sqrt(A^2 + 4 d)) / 2 with A = a b / c, a point over Q(sqrt(A^2 + 4 d)).
    big_a = Fraction(a * b, c)
    disc = big_a**2 + 4 * d
    xs = (float(big_a) + sign * float(disc) ** 0.5) / 2
    jac = np.array([[2 * xs, a], [b, c]], dtype=float)
    max_re = float(np.max(np.linalg.eigvals(jac).real))  # computed: numpy at the float point
    assume(abs(max_re) > 1e-6)
    root = f"(({big_a}) {'+' if sign > 0 else '-'} sqrt({disc})) / 2"
    text = (
        f"state x, y\ndx/dt = x^2 - {d} + ({a})*y\ndy/dt = ({b})*x + ({c})*y\n"
        f"equilibrium p at x = {root}, y = -({Fraction(b, c)})*{root}\n"
        "claim p stable\nclaim p unstable\n"
    )
    run = prove_model(proofkit.parse(text, "quadratic.pk"))
    statuses = tuple(o.status for o in run.outcomes)
    assert statuses == (("proved", "refuted") if max_re < 0 else ("refuted", "proved"))
    # computed: sympy's exact value of the stated characteristic polynomial at the point
    x = (
        sp.Rational(big_a.numerator, big_a.denominator) / 2
        + sign * sp.sqrt(sp.Rational(disc.numerator, disc.denominator)) / 2
    )
    expected = sp.Matrix([[2 * x, a], [b, c]]).charpoly(sp.Symbol("s")).all_coeffs()
    ev = run.certificate["claims"][0]["evidence"]
    nf = run.certificate["claims"][0]["number_field"]
    root_d = int(nf["sqrt"]) if nf else 0
    stated = [_exact(v, root_d) for v in ev["characteristic_polynomial"]]
    assert all(sp.simplify(s - e) == 0 for s, e in zip(stated, expected, strict=True))


def _exact(v: object, d: int) -> sp.Expr:
    if isinstance(v, list):
        a, b = (Fraction(p) for p in v)
        return sp.Rational(a.numerator, a.denominator) + sp.Rational(
            b.numerator, b.denominator
        ) * sp.sqrt(d)
    f = Fraction(str(v))
    return sp.Rational(f.numerator, f.denominator)
