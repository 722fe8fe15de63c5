"""Search and exact layers: import direction, reductions as new programs, honest statuses, reuse."""

from __future__ import annotations

import ast
import subprocess
import sys
from fractions import Fraction
from pathlib import Path

import numpy as np
import pytest
import sympy as sp

from proofkit.exact import solve_exactly
from proofkit.sos import SearchProgram, drop_monomials, solve_program

ROOT = Path(__file__).resolve().parents[2]
X, Y = sp.symbols("x y", real=True)


def _imports(path: Path) -> set[str]:
    names: set[str] = set()
    for node in ast.walk(ast.parse(path.read_text())):
        if isinstance(node, ast.Import):
            names.update(a.name for a in node.names)
        elif isinstance(node, ast.ImportFrom) and node.module:
            names.add(node.module)
    return names


# The package namespace keeps the earlier names solve_exactly/decompose as lazy aliases of
# their proofkit.exact definitions (documented in proofkit/sos/__init__.py and DEVELOPERS.md).
COMPATIBILITY = {"proofkit.exact.ladder", "proofkit.exact.decomposition"}


def test_search_layer_never_imports_the_exact_layer() -> None:
    # common practice (layering): exactness builds on search; no module of proofkit/sos imports
    # proofkit.exact, except the documented compatibility aliases of the package namespace.
    for path in sorted((ROOT / "proofkit" / "sos").glob("*.py")):
        found = {m for m in _imports(path) if m.startswith("proofkit.exact")}
        allowed = COMPATIBILITY if path.name == "__init__.py" else set()
        assert found <= allowed, f"{path.name} imports {found - allowed}"


def test_solving_a_program_loads_no_exact_module() -> None:
    code = (
        "import sys, sympy as sp\n"
        "from proofkit.sos import SearchProgram, solve_program\n"
        "x = sp.Symbol('x')\n"
        "p = SearchProgram([x]); p.require_sos(p.poly(x**2 + 1), 'g')\n"
        "assert solve_program(p).status == 'solved'\n"
        "print(sorted(m for m in sys.modules if m.startswith('proofkit.exact')))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[]"


def test_negative_margin_is_reported_infeasible() -> None:
    # computed by hand: x^2 - 1 = [1, x] diag(-1, 1) [1, x]' has this one Gram matrix, whose
    # smallest eigenvalue is -1; the solver "solves" the margin program with margin -1.
    prog = SearchProgram([X])
    prog.require_sos(prog.poly(X**2 - 1), "g", basis=[sp.Integer(1), X])
    sol = solve_program(prog, "clarabel")
    assert sol.status == "infeasible"
    assert sol.margin == pytest.approx(-1.0, abs=1e-5)
    assert "margin" in sol.message
    res = solve_exactly(prog)
    assert not res.found
    assert "infeasible" in (res.reason or "")


def test_with_an_objective_gram_matrices_stay_psd() -> None:
    # computed by hand: the largest t with x^4 + 1 - t x^2 SOS is t = 2; with the margin
    # kept nonnegative the objective cannot trade PSD-ness for a larger t.
    prog = SearchProgram([X])
    t = prog.scalar("t")
    prog.require_sos(X**4 + 1 - t * X**2, "g", basis=[sp.Integer(1), X, X**2])
    prog.maximize({t: 1})
    sol = solve_program(prog, "clarabel")
    assert sol.status == "solved"
    assert float(sol.values["t"][0]) == pytest.approx(2.0, abs=1e-4)
    assert np.linalg.eigvalsh(sol.values["g"]).min() > -1e-6


def test_drop_monomials_returns_a_new_program_and_lifts_back() -> None:
    prog = SearchProgram([X, Y])
    g = prog.require_sos(prog.poly((X - Y) ** 2), "g", basis=[sp.Integer(1), X, Y])
    before = g.basis.copy()
    red = drop_monomials(prog, {"g": np.array([False, True, True])})
    assert np.array_equal(g.basis, before)  # the caller's program is unchanged
    assert red.program is not prog
    assert red.program.unknowns[0].size == 2
    sol = solve_program(red.program, "clarabel")
    lifted = red.lift_numeric(sol.values)["g"]
    assert lifted.shape == (3, 3)
    assert np.allclose(lifted[0], 0.0)
    # computed by hand: (x - y)^2 = [x, y] [[1, -1], [-1, 1]] [x, y]'
    assert np.allclose(lifted[1:, 1:], [[1, -1], [-1, 1]], atol=1e-6)


def test_solve_exactly_never_changes_the_callers_program() -> None:
    # computed by hand: x^4 has the Gram matrix e3 e3' in the basis [1, x, x^2], singular;
    # the ladder drops 1 and x in a NEW program and lifts the answer back.
    prog = SearchProgram([X])
    g = prog.require_sos(prog.poly(X**4), "g", basis=[sp.Integer(1), X, X**2])
    version = prog.version
    res = solve_exactly(prog)
    assert res.found, res.reason
    assert g.size == 3 and prog.version == version
    gram = res.exact.gram(g)
    assert gram.shape == (3, 3)
    assert gram == sp.diag(0, 0, 1)


def _level_program(c0: Fraction) -> tuple[SearchProgram, object]:
    """Reversed-time oscillator, fixed V = x'Px (REFERENCES.md): is {V <= c} certified?"""
    f = [-Y, X + (X**2 - 1) * Y]
    v = sp.Rational(3, 2) * X**2 - X * Y + Y**2
    prog = SearchProgram([X, Y])
    c = prog.level("c", c0)
    s0 = prog.sos_of_degree("s0", 2)
    vdot = sp.diff(v, X) * f[0] + sp.diff(v, Y) * f[1]
    eps = (X**2 + Y**2) / 1000
    prog.require_sos(-vdot - eps - s0 * c + s0 * v, "decrease")
    return prog, c


def test_bisection_program_reused_over_levels_matches_fresh_programs() -> None:
    # computed (REFERENCES.md, reversed-time oscillator: minimum of V on {Vdot = 0, x != 0} by
    # a dense polar sweep): for this V the largest certifiable level is below c* = 2.3044776;
    # levels well below it are feasible, levels above are not.
    levels = [Fraction(k, 4) for k in (1, 3, 5, 7, 9, 10, 11)]
    reused, c = _level_program(levels[0])
    stats = []
    for lv in levels:
        c.set(lv)
        a = solve_program(reused, "clarabel")
        b = solve_program(_level_program(lv)[0], "clarabel")
        assert a.status == b.status, lv
        if a.margin is not None and b.margin is not None:
            assert a.margin == pytest.approx(b.margin, abs=1e-5)
        stats.append(a.status)
    assert len(reused.solver_cache) == 1  # one compiled problem served every level
    assert stats[0] == "solved" and stats[-1] == "infeasible"
    assert "infeasible" not in stats[: stats.index("infeasible")]


def test_face_restriction_is_a_new_system_with_an_exact_lift() -> None:
    # computed by hand: (1 - x^2)^2 = c' G c with c = W b, b = [1, x, x^2], W rows
    # [1, 0, -1] and [0, 1, 0], G = diag(1, 0); the lift W' G W is the outer product of
    # [1, 0, -1], and the face system holds at vec(G).
    import flint

    from proofkit.exact.facial import FaceRestriction
    from proofkit.sos.refine import gram_system

    prog = SearchProgram([X])
    g = prog.require_sos(prog.poly((1 - X**2) ** 2), "g", basis=[sp.Integer(1), X, X**2])
    a, b = gram_system(prog, g)
    face = FaceRestriction.of([[1, 0, -1], [0, 1, 0]])
    a_face, b_face = face.system(a, b)
    assert a_face.shape == (a.shape[0], 4)
    assert np.allclose(a_face @ np.array([1.0, 0.0, 0.0, 0.0]), b_face)
    one, zero = flint.fmpq(1), flint.fmpq(0)
    lifted = face.lift([[one, zero], [zero, zero]])
    assert lifted == [[one, zero, -one], [zero, zero, zero], [-one, zero, one]]
    assert g.size == 3  # the program is unchanged
