"""Claim sections of sum-of-squares proofs: the function, its Lie derivative, the obligations.

Shows ``V`` (or ``B``, ``W``) of a proof with its Lie derivative along the
model's polynomial field expanded exactly, the numbers, the free polynomials,
and for each obligation its target, basis, Gram matrix and the squares of its
exact LDL' factorisation (large ones in the appendix).

May import: sympy, ``proofkit.exact`` (LDL'), ``report._math``, ``report._blocks``,
``report._theorems``. Must never re-audit, import ``proofkit.audit.algebra`` or
``proofkit.audit.numbers``, or decide validity: the audit's verdict is handed in.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from fractions import Fraction
from typing import Any

import sympy as sp

from proofkit.report._blocks import Block, m, para, t
from proofkit.report._math import latex_label, latex_matrix, latex_number, latex_poly
from proofkit.report._theorems import OBLIGATIONS

__all__ = ["APPENDIX_SIZE", "MAX_INLINE_TERMS", "SosView", "sos_blocks"]

APPENDIX_SIZE = 6  # Gram matrices larger than this, and long Lie derivatives, go to the appendix
MAX_MATRIX_COLUMNS = 14  # wider Gram matrices are listed entry by entry
MAX_INLINE_TERMS = 24
MAX_SQUARES_CHARS = 20_000  # longer LDL' sums of squares are described, not printed


@dataclass(frozen=True)
class SosView:
    """How a non-polynomial section shows its sum-of-squares part (defaults: from the claim).

    ``evidence``: the part holding V, numbers, multipliers and squares; ``names``: the
    variables of its polynomials; ``field``: the polynomial field (in ``names``, shifted to
    the point) for the Lie derivative, with ``field_text`` its name; ``targets``: LaTeX
    target of each obligation by name.
    """

    evidence: Mapping[str, Any] | None = None
    names: Sequence[str] | None = None
    field: Sequence[sp.Expr] | None = None
    field_text: str = "f(x^* + y)"
    field_words: str = "the model's field"
    targets: Mapping[str, str] | None = None


# --- exact polynomials from certificate data ----------------------------------------
def _q(value: Any) -> sp.Rational:
    f = Fraction(str(value))
    return sp.Rational(f.numerator, f.denominator)


def _expr(terms: Sequence[Any], symbols: Sequence[sp.Symbol]) -> sp.Expr:
    out = sp.Integer(0)
    for exps, c in terms:
        out += _q(c) * sp.Mul(*[s**e for s, e in zip(symbols, exps, strict=True)])
    return out


def _terms(expr: sp.Expr, symbols: Sequence[sp.Symbol]) -> list[list[Any]]:
    poly = sp.Poly(sp.expand(expr), *symbols)
    return [[list(e), str(c)] for e, c in poly.terms() if c != 0]


def _function_names(function: Sequence[Any], model: Any) -> list[str]:
    """The variables of an evidence polynomial: the states, or over a parameter range
    the states and then the uncertain parameters (as the field lists them)."""
    states = list(model.states)
    width = len(function[0][0]) if function else len(states)
    if width == len(states):
        return states
    variables = list(model.field["variables"]) if model.field else []
    if len(variables) >= width:
        return variables[:width]
    # recast variables (sin, cos - 1, exp - 1 of each argument, in order of appearance)
    return states + [f"u{i + 1}" for i in range(width - len(states))]


def _field_exprs(
    model: Any, shift: Sequence[Any] | None, keep_parameters: bool = False
) -> list[sp.Expr] | None:
    """The model's polynomial field in its states, shifted to ``shift``; the uncertain
    parameters at their nominal values, or kept as symbols (``keep_parameters``)."""
    fld = model.field if model is not None else None
    if not fld or fld.get("denominators") is not None:
        return None
    variables = list(fld["variables"])
    xs = sp.symbols(" ".join(variables), seq=True)
    nominal = {} if keep_parameters else {p["name"]: _q(p["nominal"]) for p in model.parameters}
    if any(v is None for v in nominal.values()):
        return None
    subs = {s: nominal[v] for s, v in zip(xs, variables, strict=True) if v in nominal}
    states = xs[: len(model.states)]
    if shift is not None:
        subs.update({s: s + _q(c) for s, c in zip(states, shift, strict=True)})
    return [_expr(p, xs).subs(subs, simultaneous=True) for p in fld["numerators"]]


def _lie(function: Sequence[Any], fld: list[sp.Expr], names: Sequence[str]) -> list[list[Any]]:
    """``grad V . f`` over the states (the first ``len(fld)`` names), in all ``names``."""
    xs = sp.symbols(" ".join(names), seq=True)
    v = _expr(function, xs)
    return _terms(sum(sp.diff(v, x) * f for x, f in zip(xs, fld, strict=False)), xs)


# --- sum-of-squares obligations ------------------------------------------------------
def _function_blocks(
    claim: Any, model: Any, appendix: list[Block], view: SosView | None = None
) -> list[Block]:
    """V (or B, W), its Lie derivative expanded, the numbers and the free polynomials."""
    view = view or SosView()
    ev = view.evidence if view.evidence is not None else claim.evidence
    states = list(model.states) if model is not None else []
    out: list[Block] = []
    cycle = claim.kind in ("cycle", "no cycle")
    for key, what in (
        ("V", "Lyapunov function"),
        ("W", "annulus function"),
        ("B", "Dulac function"),
    ):
        if key not in ev:
            continue
        coords = (
            "the states"
            if cycle
            else "the deviation y = x - x* from the equilibrium (written with the state names)"
        )
        names = list(view.names or _function_names(ev[key], model))
        if view.names is not None and len(names) > len(states):
            coords = (
                f"the variables {', '.join(names)} (the deviations of the states, written "
                "with their names, then the recast variables)"
            )
        over_range = len(names) > len(states) and view.names is None
        out.append(
            para(t(f"The {what}, in {coords}: "), m(f"{key} = " + latex_poly(ev[key], names)))
        )
        if key == "B" or (over_range and claim.point is None):  # a moving point: see below
            continue
        fld = view.field
        if fld is None and view.names is None:
            shift = None if cycle or claim.point is None else claim.point
            fld = _field_exprs(model, shift, over_range)
        if fld is None:
            continue
        lie = _lie(ev[key], list(fld), names)
        field = view.field_text if view.field is not None else "f(x)" if cycle else "f(x^* + y)"
        body = f"\\dot {key} = \\nabla {key} \\cdot {field} = " + latex_poly(lie, names)
        if len(lie) <= MAX_INLINE_TERMS:
            out.append(para(t(f"Its derivative along {view.field_words}, expanded exactly:")))
            out.append(Block("math", body))
        else:
            out.append(
                para(t(f"Its derivative along the field ({len(lie)} terms) is in the appendix."))
            )
            appendix += [Block("heading", f"Lie derivative of {key}: {claim.statement}", 3)]
            appendix.append(Block("math", body))
    numbers = ev.get("numbers") or {}
    if numbers:
        shown = ",\\; ".join(f"{_number_name(k)} = {latex_number(v)}" for k, v in numbers.items())
        out.append(para(t("Numbers of the certificate: "), m(shown), t(".")))
    for name, poly in (ev.get("free") or {}).items():
        names = list(view.names or (_function_names(poly, model) if model is not None else states))
        shown = latex_poly(poly, names)
        out.append(para(t("Free polynomial "), m(f"{latex_label(name)} = " + shown)))
    return out


def _number_name(key: str) -> str:
    if key == "eps":
        return "\\varepsilon"
    return "\\mathrm{" + key.replace("_", "\\_") + "}"


def _squares_text(basis: Sequence[Any], gram: Sequence[Any], states: list[str]) -> str | None:
    """``sum d_k (l_k' z)^2`` from the exact LDL' of the Gram matrix (None: not PSD)."""
    from proofkit.exact import ldl_psd

    found = ldl_psd([[Fraction(str(x)) for x in r] for r in gram])
    if not found.psd or found.D is None or found.L is None:
        return None
    out = []
    for k, dk in enumerate(found.D):
        if dk == 0:
            continue
        acc: dict[tuple[int, ...], Fraction] = {}
        for i, b in enumerate(basis):
            lik = found.L[i][k]
            if lik != 0:
                acc[tuple(b)] = acc.get(tuple(b), Fraction(0)) + Fraction(int(lik.p), int(lik.q))
        comb = [[list(e), str(c)] for e, c in acc.items() if c != 0]
        w = Fraction(int(dk.p), int(dk.q))
        weight = "" if w == 1 else latex_number(str(w))
        out.append(f"{weight}\\left({latex_poly(comb, states)}\\right)^2")
        if sum(map(len, out)) > MAX_SQUARES_CHARS:
            return ""
    return " + ".join(out) or "0"


def _obligation(
    name: str, sq: Mapping[str, Any], target: str | None, states: list[str]
) -> list[Block]:
    basis, gram = sq["basis"], sq["gram"]
    label = latex_label(name)
    out = []
    if target is not None:
        out.append(
            para(
                t(f"Obligation {name}: "),
                m(f"{target} = z^T G_{{{label}}} z"),
                t(f"; Gram matrix {name} with basis"),
            )
        )
    else:
        out.append(
            para(
                t(f"Obligation {name} (a multiplier, a sum of squares itself): "),
                m(f"z^T G_{{{label}}} z"),
                t(f"; Gram matrix {name} with basis"),
            )
        )
    z = (
        "\\begin{pmatrix} "
        + " \\\\ ".join(latex_poly([[b, "1"]], states) for b in basis)
        + " \\end{pmatrix}"
    )
    out.append(Block("math", f"z = {z}"))
    if len(basis) <= MAX_MATRIX_COLUMNS:
        out.append(Block("math", f"G_{{{label}}} = {latex_matrix(gram)}"))
    else:  # too wide for one matrix: the nonzero entries on and above the diagonal
        rows = tuple(
            ((t(str(i + 1)),), (t(str(j + 1)),), (m(latex_number(x)),))
            for i, r in enumerate(gram)
            for j, x in enumerate(r)
            if j >= i and x != "0"
        )
        out.append(Block("table", header=("row", "column", "entry"), rows=rows))
    squares = _squares_text(basis, gram, states)
    if squares == "":
        out.append(
            para(
                t(
                    "Its exact LDL' factorisation (D >= 0, checked by the audit) gives squares "
                    f"whose exact coefficients run past {MAX_SQUARES_CHARS} characters; they "
                    "are not printed (recompute them from the Gram matrix above)."
                )
            )
        )
    elif squares is not None:
        out.append(para(t("Its exact LDL' factorisation gives the squares:")))
        out.append(Block("math", f"z^T G_{{{label}}} z = {squares}"))
    return out


def _numbered(name: str) -> str:
    """``invariant 2`` -> ``invariant j`` (the OBLIGATIONS key of a numbered family)."""
    head, _, tail = name.rpartition(" ")
    return f"{head} j" if head and tail.isdigit() else name


def sos_blocks(
    claim: Any, model: Any, appendix: list[Block], view: SosView | None = None
) -> list[Block]:
    view = view or SosView()
    ev = view.evidence if view.evidence is not None else claim.evidence
    states = list(ev.get("variables") or (model.states if model is not None else []))
    function = ev.get("V") or ev.get("W") or ev.get("B")
    if view.names is not None:
        states = list(view.names)
    elif model is not None and function and "variables" not in ev:
        states = _function_names(function, model)  # states + parameters over a range
    out = _function_blocks(claim, model, appendix, view) if model is not None else []
    if "p" in ev:
        out.append(para(t("The polynomial: "), m("p = " + latex_poly(ev["p"], states))))
    targets = view.targets if view.targets is not None else OBLIGATIONS.get(claim.theorem or "", {})
    multipliers = ev.get("multipliers") or {}
    for name, sq in ev["squares"].items():
        target = "p" if "p" in ev else targets.get(name, targets.get(_numbered(name)))
        if target is None and name not in multipliers and not name.startswith(("within", "domain")):
            target = f"\\text{{{name}}}"
        if target is None and name.startswith(("within", "domain")):
            target = f"\\text{{{name} (see the theorem)}}"
        blocks = _obligation(name, sq, target, states)
        if len(sq["basis"]) > APPENDIX_SIZE:
            out.append(
                para(
                    t(
                        f"Obligation {name} ({len(sq['basis'])} x {len(sq['basis'])} Gram "
                        "matrix) is in the appendix."
                    )
                )
            )
            appendix.append(Block("heading", f"Obligation {name}: {claim.statement}", 3))
            appendix += blocks
        else:
            out += blocks
    return out
