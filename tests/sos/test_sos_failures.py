"""Solver trouble is reported honestly and never turns into a certificate."""

from __future__ import annotations

import cvxpy as cp
import numpy as np
import pytest
import sympy as sp

import proofkit.exact.decomposition as decompose_mod
import proofkit.exact.ladder as certify
from proofkit.exact import decompose
from proofkit.sos import NumericSolution, SearchProgram, solve_program

X, Y = sp.symbols("x y", real=True)
# published: MIT 6.972 lecture notes (Parrilo): an SOS polynomial, certified when solvers work.
GOOD = X**2 - X * Y**2 + Y**4 + 1


def _fake(status: str, values: dict | None, margin: float | None = 0.5):
    def solve(program, solver=None, **kw):
        program.assemble()
        vals = values(program) if callable(values) else (values or {})
        return NumericSolution(status=status, solver=solver or "fake", values=vals, margin=margin)

    return solve


def test_reference_polynomial_is_certified_without_tampering() -> None:
    assert decompose(GOOD, [X, Y]).found


def test_solver_error_gives_failed_status_and_no_certificate(monkeypatch) -> None:
    def boom(self, *a, **k):
        raise cp.error.SolverError("forced failure")

    monkeypatch.setattr(cp.Problem, "solve", boom)
    prog = SearchProgram([X, Y])
    prog.require_sos(prog.poly(GOOD), "g")
    sol = solve_program(prog, "clarabel")
    assert sol.status == "failed"
    assert "forced failure" in sol.message
    res = decompose(GOOD, [X, Y])
    assert not res.found
    assert "failed" in res.reason
    assert {a.solver for a in res.attempts} == {"clarabel", "scs"}


def test_inaccurate_garbage_is_not_certified(monkeypatch) -> None:
    # (Random garbage may legitimately project onto a valid PSD Gram matrix, which the
    # exact check then accepts; a strongly negative matrix cannot.)
    def garbage(program):
        return {u.name: -50.0 * np.eye(u.size) for u in program.unknowns}

    monkeypatch.setattr(certify, "solve_program", _fake("inaccurate", garbage))
    res = decompose(GOOD, [X, Y])
    assert not res.found
    assert "inaccurate" in res.reason
    assert all(a.status == "inaccurate" for a in res.attempts)


def test_non_finite_values_are_failed(monkeypatch) -> None:
    def nans(program):
        return {u.name: np.full((u.size, u.size), np.nan) for u in program.unknowns}

    monkeypatch.setattr(certify, "solve_program", _fake("solved", nans))
    res = decompose(GOOD, [X, Y])
    assert not res.found
    assert "failed" in res.reason
    assert "no usable (finite) values" in res.reason


def test_lying_solver_cannot_certify_an_indefinite_polynomial(monkeypatch) -> None:
    # common practice: x^2 - y^2 = [x, y] diag(1, -1) [x, y]' exactly, but diag(1, -1) is
    # not PSD; a solver claiming success with it must be caught by the exact LDL'.
    p = X**2 - Y**2

    def liar(program):
        return {"g": np.diag([1.0, -1.0])}

    monkeypatch.setattr(decompose_mod, "_sample_negative", lambda *a: None)
    prog = SearchProgram([X, Y])
    prog.require_sos(prog.poly(p), "g", basis=[X, Y])
    monkeypatch.setattr(certify, "solve_program", _fake("solved", liar, margin=0.5))
    res = certify.solve_exactly(prog)
    assert not res.found
    assert "negative pivot" in res.reason
    res = decompose(p, [X, Y], basis=[X, Y])
    assert not res.found


def test_infeasible_status_is_reported() -> None:
    # common practice: a Gram matrix with Q00 = -1 cannot be PSD.
    for solver in ("clarabel", "scs"):
        prog = SearchProgram([X])
        s = prog.sos("s", [sp.Integer(1)])
        prog.equate(s, -1)
        sol = solve_program(prog, solver, margin=False)
        assert sol.status == "infeasible", (solver, sol.status)


def test_unknown_solver_name_is_refused() -> None:
    prog = SearchProgram([X])
    with pytest.raises(ValueError):
        solve_program(prog, "nonesuch")
