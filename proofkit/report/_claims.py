"""One section per claim of a proof document, rendered generically from its evidence.

Every proof kind is shown from what its certificate entry carries: the point,
Jacobian, characteristic polynomial and Routh array of a linearization; the
function ``V`` (or ``B``, ``W``) of a sum-of-squares proof with its Lie
derivative expanded, the numbers, the multipliers and, for each obligation, its
target, basis, Gram matrix and the squares of its exact LDL' factorisation
(large ones in the appendix); parameter-range covers; counterexamples with
their start point and a plot-ready trace. Then the theorem, its hypotheses as
ticked by the audit, and the conclusion.

May import: sympy, ``proofkit.certificate`` (typed views, exact numbers),
``proofkit.exact`` (LDL'), ``report._math``, ``report._blocks``. Must never
re-audit, import ``proofkit.audit.algebra`` or ``proofkit.audit.numbers``, or
decide validity: the audit's verdict is handed in.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from fractions import Fraction
from typing import Any

import sympy as sp

from proofkit.report._blocks import Block, m, para, t
from proofkit.report._math import (
    latex_label,
    latex_matrix,
    latex_name,
    latex_number,
    latex_poly,
)

__all__ = ["APPENDIX_SIZE", "THEOREMS", "claim_blocks"]

APPENDIX_SIZE = 6  # Gram matrices larger than this, and long Lie derivatives, go to the appendix
MAX_MATRIX_COLUMNS = 14  # wider Gram matrices are listed entry by entry
MAX_INLINE_TERMS = 24
MAX_TRACE_ROWS = 12

_ROUTH = (
    " Routh's theorem: when no first-column entry of the Routh array is zero, the number of "
    "sign changes in the first column equals the number of roots in the open right half plane."
)
_SOS = " Each obligation equals z'Gz with G positive semidefinite, so it is nonnegative everywhere."
THEOREMS: dict[str, tuple[str, str]] = {
    "indirect-method-stability": (
        "Lyapunov's indirect method (linearization), with the Routh–Hurwitz criterion",
        "If every eigenvalue of the Jacobian at an equilibrium has negative real part, the "
        "equilibrium of the nonlinear system is locally exponentially stable." + _ROUTH,
    ),
    "indirect-method-instability": (
        "Lyapunov's indirect method (instability), with Routh's count of right-half-plane roots",
        "If some eigenvalue of the Jacobian at an equilibrium has positive real part, the "
        "equilibrium of the nonlinear system is unstable." + _ROUTH,
    ),
    "sum-of-squares": (
        "sum-of-squares decomposition with a positive semidefinite Gram matrix",
        "If p = z'Gz with G positive semidefinite, then p = sum of d_k (l_k' z)^2 with "
        "d_k >= 0 (LDL'), so p >= 0 at every real point.",
    ),
    "lyapunov-global": (
        "Lyapunov's theorem with a radially unbounded Lyapunov function",
        "If V(y) >= eps |y|^2 and dV/dt <= -eps (|y|^2)^m along the shifted field, the "
        "equilibrium is globally asymptotically stable." + _SOS,
    ),
    "lyapunov-local": (
        "Lyapunov's theorem on a sublevel set (S-procedure)",
        "If V >= eps |y|^2 and dV/dt <= -eps (|y|^2)^m wherever V <= level (S-procedure with "
        "the multiplier s0 >= 0), the equilibrium is locally asymptotically stable." + _SOS,
    ),
    "region-of-attraction": (
        "a forward-invariant sublevel set of a Lyapunov function (S-procedure)",
        "If V is positive definite, decreases on {V <= level} and the claim's set lies inside "
        "{V <= level}, every trajectory from the set converges to the equilibrium." + _SOS,
    ),
    "index-no-equilibrium": (
        "index theory: a closed orbit in the plane encloses an equilibrium",
        "A convex set free of equilibria (|f|^2 > 0 on it) contains no closed orbit, since the "
        "orbit and its inside would lie in the set." + _SOS,
    ),
    "bendixson-dulac": (
        "the Bendixson–Dulac criterion",
        "If div(B f) > 0 on a simply connected (here convex) set, no closed orbit lies in it."
        + _SOS,
    ),
    "poincare-bendixson": (
        "the Poincaré–Bendixson theorem on a trapping annulus",
        "A compact annulus that trajectories enter and never leave and that holds no "
        "equilibrium contains a closed orbit." + _SOS,
    ),
    "range-indirect-method-stability": (
        "Lyapunov's indirect method over parameter boxes, with the Routh–Hurwitz conditions",
        "If the Hurwitz conditions of det(sI - J(k)) are positive on every box of a cover of "
        "the parameter ranges, every eigenvalue has negative real part for every parameter "
        "value, and the equilibrium is locally exponentially stable for each of them.",
    ),
    "range-indirect-method-instability": (
        "Lyapunov's indirect method (instability) over parameter boxes",
        "If on every box of a cover of the parameter ranges some Routh condition is negative, "
        "the Jacobian has an eigenvalue with positive real part for every parameter value.",
    ),
    "indirect-method-stability-at-a-value": (
        "Lyapunov's indirect method at one parameter value",
        "At the parameter value shown every eigenvalue has negative real part." + _ROUTH,
    ),
    "indirect-method-instability-at-a-value": (
        "Lyapunov's indirect method (instability) at one parameter value",
        "At the parameter value shown some eigenvalue has positive real part, so a claim "
        "for every value in the range is false." + _ROUTH,
    ),
    "lyapunov-global-over-range": (
        "Lyapunov's theorem over parameter boxes (one V for every parameter value)",
        "The obligations of the global Lyapunov theorem hold for every parameter value in its "
        "box, with multipliers for the box constraints." + _SOS,
    ),
    "lyapunov-local-over-range": (
        "Lyapunov's theorem on a sublevel set over parameter boxes",
        "The obligations of the local Lyapunov theorem hold for every parameter value in its "
        "box, with multipliers for the box constraints." + _SOS,
    ),
    "region-of-attraction-over-range": (
        "a forward-invariant sublevel set over parameter boxes",
        "The region-of-attraction obligations hold for every parameter value in its box, with "
        "multipliers for the box constraints." + _SOS,
    ),
    "counterexample-by-simulation": (
        "a counterexample: a start point in the claim's set whose trajectory does not converge",
        "The start point is exact; the trajectory is simulated (numerical evidence shown for "
        "the reader) and the exact facts the audit re-checked are listed below.",
    ),
}

OBLIGATIONS: dict[str, dict[str, str]] = {  # target of each obligation, as LaTeX
    "lyapunov-global": {
        "positive": r"V - \varepsilon |y|^2",
        "decrease": r"-\dot V - \varepsilon (|y|^2)^m",
    },
    "lyapunov-local": {
        "positive": r"V - \varepsilon |y|^2",
        "decrease": r"-\dot V - \varepsilon (|y|^2)^m - s_0 (\mathrm{level} - V)",
    },
    "region-of-attraction": {
        "positive": r"V - \varepsilon |y|^2",
        "decrease": r"-\dot V - \varepsilon (|y|^2)^m - s_0 (\mathrm{level} - V)",
        "inside": r"\mathrm{level} - V - \sum_i s_i g_i(x^* + y)",
    },
    "index-no-equilibrium": {"apart": r"|f|^2 - \varepsilon - \sum_i s_i g_i"},
    "bendixson-dulac": {"divergence": r"\operatorname{div}(B f) - \varepsilon - \sum_i s_i g_i"},
    "poincare-bendixson": {
        "bounded": r"W - \varepsilon |x|^2 + \mathrm{offset}",
        "outer": r"-\dot W - \varepsilon + p_o (W - \mathrm{outer})",
        "inner": r"\dot W - \varepsilon + p_i (W - \mathrm{inner})",
        "apart": r"|f|^2 - \varepsilon - a_1 (W - \mathrm{inner}) - a_2 (\mathrm{outer} - W)",
    },
}


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


# --- linearization ---------------------------------------------------------------
def _linearization(claim: Any, states: list[str]) -> list[Block]:
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
    out += _routh(ev["routh"], d)
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


def _routh(ro: Mapping[str, Any], d: int) -> list[Block]:
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


# --- sum-of-squares obligations ------------------------------------------------------
def _function_blocks(claim: Any, model: Any, appendix: list[Block]) -> list[Block]:
    """V (or B, W), its Lie derivative expanded, the numbers and the free polynomials."""
    ev, states = claim.evidence, list(model.states) if model is not None else []
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
        names = _function_names(ev[key], model)
        over_range = len(names) > len(states)
        out.append(
            para(t(f"The {what}, in {coords}: "), m(f"{key} = " + latex_poly(ev[key], names)))
        )
        if key == "B" or (over_range and claim.point is None):  # a moving point: see below
            continue
        fld = _field_exprs(model, None if cycle or claim.point is None else claim.point, over_range)
        if fld is None:
            continue
        lie = _lie(ev[key], fld, names)
        field = "f(x)" if cycle else "f(x^* + y)"
        body = f"\\dot {key} = \\nabla {key} \\cdot {field} = " + latex_poly(lie, names)
        if len(lie) <= MAX_INLINE_TERMS:
            out.append(para(t("Its derivative along the model's field, expanded exactly:")))
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
        shown = latex_poly(poly, _function_names(poly, model) if model is not None else states)
        out.append(para(t("Free polynomial "), m(f"{latex_label(name)} = " + shown)))
    if claim.method == "recast":
        out.append(
            para(
                t(
                    "Recasting (Papachristodoulou and Prajna, 2005): u1, u2, ... stand for "
                    "sin(a) and cos(a) - 1 of each sine or cosine argument a, and exp(a) - 1 of "
                    "each exponent, in order of first appearance; the audit derives their "
                    "derivative rules, the circle constraints and the Taylor bounds from the "
                    "model's own field, never from the certificate."
                )
            )
        )
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
    if squares is not None:
        out.append(para(t("Its exact LDL' factorisation gives the squares:")))
        out.append(Block("math", f"z^T G_{{{label}}} z = {squares}"))
    return out


def _sos(claim: Any, model: Any, appendix: list[Block]) -> list[Block]:
    ev = claim.evidence
    states = list(ev.get("variables") or (model.states if model is not None else []))
    function = ev.get("V") or ev.get("W") or ev.get("B")
    if model is not None and function and "variables" not in ev:
        states = _function_names(function, model)  # states + parameters over a range
    out = _function_blocks(claim, model, appendix) if model is not None else []
    if "p" in ev:
        out.append(para(t("The polynomial: "), m("p = " + latex_poly(ev["p"], states))))
    targets = OBLIGATIONS.get(claim.theorem or "", {})
    multipliers = ev.get("multipliers") or {}
    for name, sq in ev["squares"].items():
        target = "p" if "p" in ev else targets.get(name)
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


# --- parameter ranges, counterexamples, anything else ------------------------------------
def _ranges(claim: Any) -> list[Block]:
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


def _counterexample(claim: Any, states: list[str]) -> list[Block]:
    cx = claim.counterexample
    out = []
    start = ", ".join(
        f"{latex_name(s)} = {latex_number(v)}" for s, v in zip(states, cx["start"], strict=True)
    )
    out.append(
        para(
            t("Counterexample: the trajectory starting exactly at "),
            m(start),
            t(f" {cx.get('what_happened', '')}."),
        )
    )
    trace = cx.get("trajectory") or {}
    ts, xs = list(trace.get("t") or []), list(trace.get("x") or [])
    if ts and xs:
        step = max(1, len(ts) // MAX_TRACE_ROWS)
        picks = list(range(0, len(ts), step))
        if picks[-1] != len(ts) - 1:
            picks.append(len(ts) - 1)
        rows = tuple(((t(f"{ts[i]:.4g}"),), *((t(f"{v:.6g}"),) for v in xs[i])) for i in picks)
        out.append(
            para(
                t(
                    f"Trace ({len(ts)} samples in the certificate's counterexample.trajectory, "
                    "plot-ready as t and x columns; a selection):"
                )
            )
        )
        out.append(Block("table", header=("t", *states), rows=rows))
    if cx.get("note"):
        out.append(para(t(str(cx["note"]) + ".")))
    return out


def _generic(ev: Mapping[str, Any]) -> list[Block]:
    items = []
    for key, value in ev.items():
        text = str(_plain(value))
        items.append((t(f"{key}: {text if len(text) <= 200 else text[:200] + ' ...'}"),))
    return [
        para(t("Evidence (see the certificate for every entry):")),
        Block("items", items=tuple(items)),
    ]


def _plain(value: Any) -> Any:
    if isinstance(value, Mapping):
        return {k: _plain(v) for k, v in value.items()}
    if isinstance(value, list | tuple):
        return [_plain(v) for v in value]
    return value


def _theorem(claim: Any, checked: Sequence[str], refuted: bool, model: Any) -> list[Block]:
    name, text = THEOREMS.get(claim.theorem or "", (claim.theorem or "", ""))
    out = [
        para(
            t("Theorem applied: "),
            t(name),
            t(". "),
            t(text),
            t(" Its hypotheses, each re-checked by the audit:"),
        ),
        Block("checks", items=tuple((t(s),) for s in checked)),
    ]
    if refuted:
        end = "the claim is false; the evidence above proves the opposite statement."
    elif model is None:
        end = "the claim holds for every real point."
    elif claim.scope == "range":
        end = "the claim holds for the model as written, for every parameter value in its range."
    else:
        end = "the claim holds for the model as written (parameters at their nominal values)."
    out.append(para(t("Conclusion: " + end)))
    return out


def claim_blocks(claim: Any, verdict: Any, model: Any, appendix: list[Block]) -> list[Block]:
    """The section of one claim (a ``ClaimView``), given the audit's ``ClaimVerdict`` for it."""
    states = list(model.states) if model is not None else []
    if verdict.status == "not proved":
        return [para(t("Not proved: "), t(claim.reason or verdict.message or ""))]
    ev = claim.evidence
    if "jacobian" in ev and "routh" in ev:
        out = _linearization(claim, states)
    elif "squares" in ev:
        out = _sos(claim, model, appendix)
    elif "cover" in ev:
        out = _ranges(claim)
    elif claim.counterexample is None:
        out = _generic(ev)
    else:
        out = []
    if claim.counterexample is not None:
        out += _counterexample(claim, states)
    return out + _theorem(claim, verdict.checked, verdict.status == "refuted", model)
