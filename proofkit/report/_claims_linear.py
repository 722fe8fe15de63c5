"""Claim sections of linearization proofs: point, Jacobian, Routh array, parameter covers.

Rendered only from a certificate entry's evidence (exact numbers as written).
May import: ``report._math``, ``report._blocks``. Must never re-audit or decide
a sign: the Routh signs and counts shown are the certificate's, checked by the audit.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from proofkit.report._blocks import Block, m, para, t
from proofkit.report._math import latex_matrix, latex_name, latex_number, latex_poly

__all__ = ["linearization_blocks", "range_blocks", "routh_blocks"]


def linearization_blocks(claim: Any, states: list[str]) -> list[Block]:
    d, ev = claim.number_field, claim.evidence
    out = []
    if d:
        out.append(
            para(
                t("Numbers below lie in the field "),
                m(f"\\mathbb{{Q}}(\\sqrt{{{d}}})"),
                t("; signs are decided exactly by comparing squares."),
            )
        )
    if claim.point is not None:
        pt = ", ".join(
            f"{latex_name(s)} = {latex_number(v, d)}"
            for s, v in zip(states, claim.point, strict=True)
        )
        out.append(
            para(
                t(f"Equilibrium {claim.equilibrium}: "),
                m(pt),
                t(". Every component of the vector field vanishes there exactly."),
            )
        )
    cp = ev["characteristic_polynomial"]
    n = len(cp) - 1
    cp_terms = [[[n - k], c] for k, c in enumerate(cp) if c != "0"]
    out.append(para(t("Jacobian at the equilibrium and its characteristic polynomial:")))
    out.append(
        Block(
            "math",
            f"J = {latex_matrix(ev['jacobian'], d)}, \\qquad "
            f"\\det(sI - J) = {latex_poly(cp_terms, ['s'], d)}",
        )
    )
    out += routh_blocks(ev["routh"], d)
    if "lyapunov" in ev:
        p, q = ev["lyapunov"]["P"], ev["lyapunov"]["Q"]
        out.append(
            para(
                t("A quadratic Lyapunov function of the linearization, "),
                m("V = x^T P x"),
                t(", solves "),
                m("J^T P + P J = -Q"),
                t(" with:"),
            )
        )
        out.append(Block("math", f"P = {latex_matrix(p, d)}, \\qquad Q = {latex_matrix(q, d)}"))
    return out


def routh_blocks(ro: Mapping[str, Any], d: int) -> list[Block]:
    out = []
    shift, power = ro["shift"], ro["multiplier_power"]
    if shift != "0" or power:
        q = ro["polynomial"]
        terms = [[[len(q) - 1 - k], c] for k, c in enumerate(q) if c != "0"]
        h = latex_number(shift, d)
        out.append(
            para(
                t("To step around a special case of the Routh array, it is built for "),
                m(f"q(s) = (s+1)^{{{power}}}\\, p(s + {h})"),
                t(", whose roots are those of p moved left by "),
                m(h),
                t(", plus roots at -1:"),
            )
        )
        out.append(Block("math", f"q(s) = {latex_poly(terms, ['s'], d)}"))
    deg = len(ro["rows"]) - 1
    rows = tuple(
        ((m(f"s^{{{deg - k}}}"),), *((m(latex_number(x, d)),) for x in r))
        for k, r in enumerate(ro["rows"])
    )
    header = ("row", *(f"column {i + 1}" for i in range(len(ro["rows"][0]))))
    out.append(para(t("The Routh array, computed exactly:")))
    out.append(Block("table", header=header, rows=rows))
    out.append(
        para(t(f"The first column of the Routh array has {ro['sign_changes']} sign change(s)."))
    )
    return out


def range_blocks(claim: Any) -> list[Block]:
    ev = claim.evidence
    names = list(ev["variables"])
    cp = ev["characteristic_polynomial"]
    n = len(cp) - 1
    shown = " + ".join(
        f"\\left({latex_poly(c, names)}\\right) s^{{{n - k}}}" for k, c in enumerate(cp)
    )
    out = [
        para(
            t("Characteristic polynomial, exactly, in the parameters "),
            m(", ".join(map(latex_name, names))),
            t(":"),
        ),
        Block("math", f"\\det(sI - J) = {shown}"),
        para(
            t(
                "Conditions whose signs decide the claim (Routh–Hurwitz), each of known sign "
                "on every box of the cover:"
            )
        ),
        Block("items", items=tuple((m(latex_poly(c, names)),) for c in ev["conditions"])),
    ]
    rows = tuple(
        (
            (
                m(
                    " \\times ".join(
                        f"[{latex_number(a)}, {latex_number(b)}]" for a, b in box["box"]
                    )
                ),
            ),
            (t(", ".join("+" if s > 0 else "-" for s in box["signs"])),),
        )
        for box in ev["cover"]
    )
    out.append(Block("table", header=("parameter box", "condition signs"), rows=rows))
    for mg in ev.get("margins") or []:
        lo, hi = mg["range"]
        out.append(
            para(
                t(
                    "Margin: with the other parameters in their ranges, the claim holds for "
                    f"{mg['parameter']} in "
                ),
                m(f"[{latex_number(lo)}, {latex_number(hi)}]"),
                t("."),
            )
        )
    return out
