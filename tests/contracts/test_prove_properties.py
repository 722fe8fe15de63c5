"""Property tests of ``prove``: the verdict re-derived outside the project.

Random polynomial fields with an equilibrium at the origin, f(x) = A x +
(quadratic terms); ``claim o stable`` and ``claim o unstable`` are proved.
The expected verdict comes from numpy's eigenvalues of A (computed), the
stated Lyapunov matrix P from ``scipy.linalg.solve_continuous_lyapunov``
(computed) and the stated Jacobian from sympy's ``jacobian`` (computed) --
not from "the audit accepted it", which a bug shared by prover and audit
would also pass. Fields whose linearization has an eigenvalue within 1e-6 of
the imaginary axis are assumed away (the linear test does not decide them).
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
