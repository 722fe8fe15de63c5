"""Exact Lyapunov equations against a published solution and scipy."""

from __future__ import annotations

import numpy as np
import pytest
import scipy.linalg
import sympy as sp
from hypothesis import given
from hypothesis import strategies as st

from proofkit.analysis import solve_lyapunov


def test_reversed_time_oscillator_linearisation() -> None:
    # published: Khalil, Nonlinear Systems, 3rd ed., section 8.2 (A and P with Q = I)
    s = solve_lyapunov(sp.Matrix([[0, -1], [1, -1]]))
    R = sp.Rational
    assert sp.Matrix([[R(3, 2), R(-1, 2)], [R(-1, 2), 1]]) == s.P
    assert s.minors == (R(3, 2), R(5, 4))  # computed by hand: det P = 3/2 - 1/4
    assert s.positive_definite


def test_equation_holds_exactly_with_irrational_entries() -> None:
    # computed by hand: A = diag(-2 sqrt 2, -1), Q = I gives P = diag(1/(4 sqrt 2), 1/2)
    A = sp.Matrix([[-2 * sp.sqrt(2), 1], [0, -1]])
    s = solve_lyapunov(A)
    residual = (A.T * s.P + s.P * A + sp.eye(2)).applyfunc(sp.expand)
    assert residual == sp.zeros(2, 2)
    assert s.positive_definite


def test_no_unique_solution_is_refused() -> None:
    # common practice: lambda_i + lambda_j = 0 makes the Lyapunov operator singular
    with pytest.raises(ValueError):
        solve_lyapunov(sp.Matrix([[1, 0], [0, -1]]))


def test_unstable_matrix_gives_indefinite_P() -> None:
    # common practice (Lyapunov's theorem): A with an eigenvalue 1 > 0 cannot have P > 0
    s = solve_lyapunov(sp.Matrix([[1, 0], [0, -2]]))
    assert not s.positive_definite


@given(
    st.integers(2, 4).flatmap(
        lambda n: st.lists(st.integers(-5, 5), min_size=n * n, max_size=n * n).map(
            lambda v, n=n: (n, v)
        )
    ),
    st.integers(0, 3),
)
def test_random_hurwitz_matrices_match_scipy(nv: tuple[int, list[int]], extra: int) -> None:
    # computed: scipy.linalg.solve_continuous_lyapunov is the reference
    n, vals = nv
    B = np.array(vals, dtype=float).reshape(n, n)
    shift = int(np.ceil(max(np.linalg.eigvals(B).real))) + 1 + extra
    A = sp.Matrix(n, n, vals) - shift * sp.eye(n)  # Hurwitz: every eigenvalue real part <= -1
    q = sp.Matrix(n, n, lambda i, j: 2 if i == j else (1 if abs(i - j) == 1 else 0))  # Q > 0
    s = solve_lyapunov(A, q)
    ref = scipy.linalg.solve_continuous_lyapunov(
        np.array(A.T, dtype=float), -np.array(q, dtype=float)
    )
    assert np.allclose(np.array(s.P, dtype=float), ref, rtol=1e-8, atol=1e-10)
    assert (A.T * s.P + s.P * A + q) == sp.zeros(n, n)  # exact identity
    assert s.positive_definite
