"""Contracts of the proof documents: what a reader of proof.md, proof.tex and phase.png sees.

The documents are rendered from the certificate and the audit report handed
over by the proving run. Checked here: how a refuted claim is rendered (the
evidence for the opposite statement and the conclusion), the LaTeX content
(the exact matrices and polynomials, balanced environments, the status table,
the cautions), the refusal of a mismatched audit report, and the pixels of
the phase portrait (not only that the file exists).
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pytest

import proofkit
from proofkit.proofs import prove_model
from proofkit.report import DocumentMeta, phase_portrait, render_latex, render_markdown

# computed by hand: J(o) = [[0, 1], [-1, -1]], det(sI - J) = s^2 + s + 1, and
# A'P + PA = -I gives P = [[3/2, 1/2], [1/2, 1]]; J(r) = [[0, 1], [2, -1]],
# det(sI - J) = s^2 + s - 2 = (s + 2)(s - 1): r is a saddle.
MODEL = """state x, y
dx/dt = y
dy/dt = -x - y + x^3
equilibrium o at x = 0, y = 0
equilibrium r at x = 1, y = 0
claim o stable
claim r stable
"""


@pytest.fixture(scope="module")
def run():
    return prove_model(proofkit.parse(MODEL, "focus_saddle.pk"))


def _meta(figure: str | None = None) -> DocumentMeta:
    return DocumentMeta(
        command="proofkit prove focus_saddle.pk --out DIR",
        certificate_sha256="0" * 64,
        version=proofkit.__version__,
        figure=figure,
    )


def test_refuted_claim_is_rendered_with_the_evidence_for_the_opposite(run) -> None:
    assert [o.status for o in run.outcomes] == ["proved", "refuted"]
    md = render_markdown(run.certificate, run.audit, _meta())
    assert "| r stable | refuted |" in md
    part = md[md.index("## Claim 2: r stable") :]
    part = part[: part.index("\n## ", 5)]
    assert "s^{2} + s - 2" in part  # the stated characteristic polynomial
    assert "1 sign change" in part  # Routh's count of right-half-plane roots
    assert "Conclusion: the claim is false" in part
    assert "[x]" in part and "[ ]" not in part  # every hypothesis checked
    assert "holds for the model as written" not in part


def test_latex_content(run) -> None:
    tex = render_latex(run.certificate, run.audit, _meta())
    assert tex.startswith("\\documentclass") and tex.rstrip().endswith("\\end{document}")
    for env in ("document", "longtable", "pmatrix", "aligned", "verbatim"):
        assert tex.count(f"\\begin{{{env}}}") == tex.count(f"\\end{{{env}}}") > 0, env
    body = re.sub(r"\\begin\{verbatim\}.*?\\end\{verbatim\}", "", tex, flags=re.S)
    assert body.count("{") - body.count("\\{") == body.count("}") - body.count("\\}")
    assert "\\begin{pmatrix} 0 & 1 \\\\ -1 & -1 \\end{pmatrix}" in tex
    assert "s^{2} + s + 1" in tex and "s^{2} + s - 2" in tex
    assert "\\frac{3}{2} & \\frac{1}{2} \\\\ \\frac{1}{2} & 1" in tex  # P, exact
    assert "o stable & proved & linearization" in tex
    assert "r stable & refuted & linearization" in tex
    assert "qualified engineering review" in tex and "not the physical plant" in tex
    assert "0" * 64 in tex  # the certificate's SHA-256 for reproduction


def test_documents_refuse_an_audit_report_of_another_certificate(run) -> None:
    other = prove_model(proofkit.parse(MODEL.replace("claim r stable\n", ""), "other.pk"))
    with pytest.raises(ValueError):
        render_markdown(run.certificate, other.audit, _meta())


def test_phase_portrait_pixels(run, tmp_path: Path) -> None:
    import matplotlib.image

    path = tmp_path / "phase.png"
    assert phase_portrait(run.certificate, path)
    img = matplotlib.image.imread(path)
    h, w = img.shape[:2]
    assert h >= 300 and w >= 300
    rgb = img[..., :3].reshape(-1, 3)
    assert rgb.std() > 0.05  # not a blank canvas
    colours = {tuple(c) for c in np.round(rgb[:: max(1, len(rgb) // 20000)] * 8).astype(int)}
    assert len(colours) >= 4  # flow, equilibria and axes in distinct colours
    dark = rgb.mean(axis=1) < 0.5
    assert 0.001 < dark.mean() < 0.5  # lines and labels drawn, not a filled block


def test_no_portrait_for_a_one_state_model(tmp_path: Path) -> None:
    one = prove_model(proofkit.parse("state x\ndx/dt = -x\nequilibrium o at x = 0\n", "one.pk"))
    assert not phase_portrait(one.certificate, tmp_path / "phase.png")
    assert not (tmp_path / "phase.png").exists()


def test_counterexample_is_rendered_with_start_point_and_trace() -> None:
    # the shape the basin prover writes (start point exact, trajectory samples for a plot)
    from types import SimpleNamespace

    from proofkit.certificate import read
    from proofkit.report._claims import claim_blocks
    from proofkit.report.writers import to_markdown

    entry = {
        "claim": {"kind": "attracts", "equilibrium": {"name": "o", "point": ["0", "0"]},
                  "set": None, "scope": "nominal"},
        "statement": "o attracts x^2 + y^2 <= 4", "status": "refuted",
        "method": "simulation", "theorem": "counterexample-by-simulation",
        "evidence": {"start": ["3/2", "0"], "kind": "escaped"},
        "counterexample": {
            "start": ["3/2", "0"], "what_happened": "leaves every bounded set", "kind": "escaped",
            "time_horizon": 2.0,
            "trajectory": {"t": [0.0, 0.5, 1.0, 1.5, 2.0],
                           "x": [[1.5, 0.0], [1.7, 0.9], [2.4, 2.8], [4.1, 9.5], [9.0, 60.0]]},
            "note": "simulation (scipy solve_ivp, rtol 1e-9): numerical evidence, not a proof",
        },
    }  # fmt: skip
    view = read({"proofkit_certificate": 2, "model": None, "claims": [entry]})
    verdict = SimpleNamespace(status="refuted", checked=("the start point lies in the set",))
    model = SimpleNamespace(states=("x", "y"), field=None, parameters=())
    md = to_markdown(claim_blocks(view.claims[0], verdict, model, []))
    assert "Counterexample: the trajectory starting exactly at $x = \\frac{3}{2}, y = 0$" in md
    assert "leaves every bounded set" in md
    assert "| t | x | y |" in md and "| 2 | 9 | 60 |" in md  # the last sample is kept
    assert "numerical evidence, not a proof" in md
    assert "Conclusion: the claim is false" in md


def test_sum_of_squares_lyapunov_proof_shows_function_derivative_and_obligations() -> None:
    # computed by hand: for V = x^2 + y^2 and f = (-x + y, -x - y^3), dV/dt = -2 x^2 - 2 y^4;
    # whatever V the search finds, its stated Lie derivative is recomputed here with sympy
    import sympy as sp

    text = "state x, y\ndx/dt = -x + y\ndy/dt = -x - y^3\nequilibrium o at x = 0, y = 0\n"
    run = prove_model(proofkit.parse(text + "claim o globally stable\n", "g.pk"))
    assert [o.status for o in run.outcomes] == ["proved"]
    md = render_markdown(run.certificate, run.audit, _meta())
    ev = run.certificate["claims"][0]["evidence"]
    x, y = sp.symbols("x y")

    def poly(terms):
        return sum(sp.Rational(str(c)) * x ** e[0] * y ** e[1] for e, c in terms)

    v = poly(ev["V"])
    lie = sp.expand(sp.diff(v, x) * (-x + y) + sp.diff(v, y) * (-x - y**3))
    assert "The Lyapunov function" in md and "Its derivative along the model's field" in md
    lie_line = next(line for line in md.splitlines() if line.startswith("\\dot V"))
    terms = sp.Poly(lie, x, y).terms()
    assert lie_line.count(" x") + lie_line.count(" y") >= len(terms)
    for _monomial, c in terms:  # every coefficient of sympy's derivative is shown
        c = abs(c)
        shown = str(c) if c.q == 1 else f"\\frac{{{c.p}}}{{{c.q}}}"
        assert shown in lie_line, (shown, lie_line)
    for name in ("positive", "decrease"):
        assert f"Obligation {name}" in md
    assert "V - \\varepsilon |y|^2 = z^T G_{\\mathit{positive}} z" in md
    assert "Its exact LDL' factorisation gives the squares" in md
    assert "[x] V is radially unbounded" in md or "radially unbounded" in md


def test_second_equilibrium_refutation_is_rendered_exactly() -> None:
    # computed by hand: x - x^3 = x (1 - x)(1 + x), so (0, 0) is an equilibrium inside the
    # disc of radius 2 about (1, 0)
    text = (
        "state x, y\ndx/dt = x - x^3\ndy/dt = -y\nequilibrium right at x = 1, y = 0\n"
        "equilibrium middle at x = 0, y = 0\nclaim right attracts (x - 1)^2 + y^2 <= 4\n"
    )
    run = prove_model(proofkit.parse(text, "bistable.pk"))
    assert run.outcomes[0].status == "refuted"
    md = render_markdown(run.certificate, run.audit, _meta())
    assert "Another equilibrium, exactly: $x = 0, y = 0$" in md
    assert "a second equilibrium in the claim's set" in md
    assert "Conclusion: the claim is false" in md
