"""Text and JSON views of a :class:`~proofkit.analysis.surveying.Survey` for ``proofkit inspect``.

Exact numbers are written as exact text (the model language's printer where
it can, sympy's exact notation for ``CRootOf``); floats appear only in the
"numeric" and "eigenvalues" entries, which are for display.

This module must never compute anything a verdict depends on.
"""

from __future__ import annotations

from typing import Any

import sympy as sp

from proofkit.analysis.surveying import EquilibriumReport, Survey, survey
from proofkit.errors import ModelError
from proofkit.model import Model

__all__ = [
    "equilibria_json",
    "equilibria_lines",
    "exact_text",
    "model_equilibria_json",
    "model_equilibria_lines",
]


def exact_text(v: object) -> str:
    """Exact text for a sympy number (``"1/3"``, ``"sqrt(2)"``, ``"CRootOf(x**3 - x - 1, 0)"``)."""
    if isinstance(v, sp.Interval):
        return f"[{exact_text(v.start)}, {exact_text(v.end)}]"
    if isinstance(v, sp.FiniteSet) and len(v) == 1:  # a degenerate interval [a, a]
        (a,) = tuple(v)
        return f"[{exact_text(a)}, {exact_text(a)}]"
    try:
        from proofkit.lang import format_expr

        return format_expr(v)
    except (ImportError, ValueError, TypeError):
        return sp.sstr(v)


def _entry(e: EquilibriumReport) -> dict[str, Any]:
    if e.exact or e.jacobian_enclosure is None:
        jac = [
            [exact_text(e.jacobian[i, j]) for j in range(e.jacobian.cols)]
            for i in range(e.jacobian.rows)
        ]
    else:  # known only in a box: certified enclosures "[lo, hi]"
        jac = [[exact_text(v) for v in row] for row in e.jacobian_enclosure]
    return {
        "name": e.name,
        # a point known only by its certified box is written as that box, "[lo, hi]"
        "point": (
            {k: exact_text(v) for k, v in e.point.items()}
            if e.exact or e.enclosure is None
            else {
                k: f"[{exact_text(a)}, {exact_text(b)}]"
                for k, (a, b) in zip(e.point, e.enclosure, strict=True)
            }
        ),
        "numeric": dict(e.numeric),
        "exact": e.exact,
        "enclosure": (
            None
            if e.enclosure is None
            else [[exact_text(a), exact_text(b)] for a, b in e.enclosure]
        ),
        "jacobian": jac,
        "eigenvalues": [[float(z.real), float(z.imag)] for z in e.eigenvalues],
        "in_domain": e.in_domain,
        "rhp_count": e.routh.rhp_count,  # -1: not decided (interval signs uncertain)
        "verdict": e.verdict,
        "type": e.type,
    }


def equilibria_json(s: Survey) -> dict[str, Any]:
    """The keys ``inspect --json`` adds: "equilibria", "complete", "complete_reason"."""
    return {
        "equilibria": [_entry(e) for e in s.equilibria],
        "complete": s.complete,
        "complete_reason": s.complete_reason,
        "at_nominal": s.at_nominal,
    }


def _eig_text(z: complex) -> str:
    if abs(z.imag) < 1e-12:
        return f"{z.real:.4g}"
    return f"{z.real:.4g}{'+' if z.imag >= 0 else '-'}{abs(z.imag):.4g}i"


def equilibria_lines(s: Survey, nominal_note: bool = False) -> list[str]:
    """The equilibria table of ``inspect``, then the completeness statement."""
    head = "equilibria" + (" (at the nominal parameter values)" if nominal_note else "") + ":"
    out = [head]
    rows = [("name", "point", "verdict", "type", "eigenvalues (display only)")]
    for e in s.equilibria:
        where = ", ".join(f"{k} = {exact_text(v)}" for k, v in e.point.items())
        if not e.exact:
            where = "in a certified box near " + ", ".join(
                f"{k} ~ {v:.6g}" for k, v in e.numeric.items()
            )
        if e.in_domain is False:
            where += "  (outside the domain)"
        elif e.in_domain is None:
            where += "  (domain: undecided)"
        rows.append(
            (
                e.name or "-",
                where,
                e.verdict,
                e.type,
                ", ".join(_eig_text(z) for z in e.eigenvalues),
            )
        )
    if len(rows) == 1:
        out.append("  (no real equilibria)")
    else:
        widths = [max(len(r[i]) for r in rows) for i in range(4)]
        for r in rows:
            out.append(
                "  "
                + "  ".join(c.ljust(w) for c, w in zip(r[:4], widths, strict=True))
                + "  "
                + r[4]
            )
    out.append(("complete: " if s.complete else "not complete: ") + s.complete_reason)
    return [line.rstrip() for line in out]


def model_equilibria_json(model: Model) -> dict[str, Any]:
    """``equilibria_json`` of the model's survey; a model the analysis cannot take says why."""
    try:
        return equilibria_json(survey(model))
    except ModelError as err:
        return {
            "equilibria": [],
            "complete": False,
            "complete_reason": f"not analysed: {err}",
            "at_nominal": True,
        }


def model_equilibria_lines(model: Model) -> list[str]:
    """``equilibria_lines`` of the model's survey; a model the analysis cannot take says why."""
    try:
        return equilibria_lines(survey(model), nominal_note=bool(model.uncertain_params))
    except ModelError as err:
        return ["equilibria:", f"  not analysed: {err}"]
