"""Exact certificate data written as LaTeX math (used by Markdown and LaTeX alike).

Reads only the certificate's own JSON values (strings ``"p/q"``, pairs
``["a", "b"]`` meaning ``a + b sqrt(d)``, sparse polynomials; lists or the
tuples of the typed views); never floats, never solver output. May import:
the standard library only.
"""

from __future__ import annotations

import re
from fractions import Fraction
from typing import Any

__all__ = [
    "latex_label",
    "latex_matrix",
    "latex_name",
    "latex_number",
    "latex_poly",
    "latex_vector_poly",
]


def latex_name(name: str) -> str:
    """``x`` -> ``x``, ``x1`` -> ``x_{1}``, ``omega`` -> ``\\omega``, else ``\\mathit{...}``."""
    greek = {
        "alpha",
        "beta",
        "gamma",
        "delta",
        "theta",
        "omega",
        "phi",
        "psi",
        "mu",
        "nu",
        "lambda",
        "sigma",
        "tau",
        "rho",
        "eta",
        "xi",
        "zeta",
        "kappa",
        "epsilon",
    }
    m = re.fullmatch(r"([A-Za-z]+)_?([0-9]+)", name)
    if m and (len(m.group(1)) == 1 or m.group(1) in greek):
        base = m.group(1) if len(m.group(1)) == 1 else "\\" + m.group(1)
        return f"{base}_{{{m.group(2)}}}"
    if len(name) == 1:
        return name
    if name in greek:
        return "\\" + name
    return "\\mathit{" + name.replace("_", "\\_") + "}"


def latex_label(name: str) -> str:
    """An obligation or multiplier name as LaTeX: ``s0`` -> ``s_{0}``, ``within 1`` -> text."""
    if re.fullmatch(r"[A-Za-z]+_?[0-9]*", name):
        return latex_name(name)
    sub = re.fullmatch(r"([A-Za-z])_([A-Za-z0-9]+)", name)
    if sub:
        return f"{sub.group(1)}_{{{sub.group(2)}}}"
    special = {"\\": "\\textbackslash{}", "~": "\\textasciitilde{}", "^": "\\textasciicircum{}"}
    text = "".join(special.get(c, "\\" + c if c in "#$%&_{}" else c) for c in name)
    return "\\text{" + text + "}"


def _frac(x: Fraction) -> str:
    if x.denominator == 1:
        return str(x.numerator)
    sign = "-" if x < 0 else ""
    return f"{sign}\\frac{{{abs(x.numerator)}}}{{{x.denominator}}}"


def latex_number(value: Any, d: int = 0) -> str:
    """A certificate number as LaTeX (``a + b\\sqrt{d}`` for a pair)."""
    if isinstance(value, list | tuple):
        a, b = Fraction(value[0]), Fraction(value[1])
        root = f"\\sqrt{{{d}}}"
        bpart = root if b == 1 else ("-" + root if b == -1 else f"{_frac(b)}{root}")
        if a == 0:
            return bpart
        return f"{_frac(a)} {'-' if b < 0 else '+'} {bpart.lstrip('-')}"
    return _frac(Fraction(value))


def _monomial(exps: list[int], names: list[str]) -> str:
    parts = []
    for e, n in zip(exps, names, strict=True):
        if e == 1:
            parts.append(latex_name(n))
        elif e > 1:
            parts.append(f"{latex_name(n)}^{{{e}}}")
    return " ".join(parts)


def latex_poly(terms: list[Any], names: list[str], d: int = 0) -> str:
    """A sparse polynomial ``[[exps], coeff]`` in graded order, as LaTeX."""
    if not terms:
        return "0"
    ordered = sorted(terms, key=lambda t: (-sum(t[0]), [-e for e in t[0]]))
    out = []
    for k, (exps, coeff) in enumerate(ordered):
        mono = _monomial(exps, names)
        text = latex_number(coeff, d)
        if isinstance(coeff, list | tuple) and mono:
            text = f"\\left({text}\\right)"
            sign = "+"
        else:
            sign = "-" if text.startswith("-") else "+"
            text = text.lstrip("-")
            if mono and text == "1":
                text = ""
        body = f"{text} {mono}".strip()
        out.append(body if k == 0 and sign == "+" else f"{sign} {body}" if k else f"-{body}")
    return " ".join(out)


def latex_vector_poly(polys: list[Any], names: list[str]) -> list[str]:
    return [latex_poly(p, names) for p in polys]


def latex_matrix(rows: list[list[Any]], d: int = 0) -> str:
    body = " \\\\ ".join(" & ".join(latex_number(x, d) for x in r) for r in rows)
    return "\\begin{pmatrix} " + body + " \\end{pmatrix}"
