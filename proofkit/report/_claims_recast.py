"""Claim sections of recast proofs (method ``recast``), line by line for a reviewer.

Recasting (Papachristodoulou and Prajna, "Analysis of non-polynomial systems
using the sum of squares decomposition", 2005): each ``sin``/``cos`` argument
``delta`` gets the variables ``S = sin(delta)``, ``C = cos(delta) - 1``, each
exponent ``E = exp(delta) - 1``. The section names them by what they stand
for, lists the substitutions (angle addition with exact values), the recast
field with its derivative rules, the circle equalities, the Taylor
inequalities of the stated order, the enclosure of sqrt d and why checking
both of its ends suffices, then V, the level and each obligation with its
multipliers, and what ``W(x) = V(x - x*, recast(x))`` means for the states.

The derivation is re-described from the certificate's expression trees (the
audit derives it itself; its acceptance is the evidence). May import: sympy,
``report._*``. Must never import ``proofkit.audit``, call a prover, or decide
validity.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from fractions import Fraction
from math import factorial
from typing import Any

import sympy as sp

from proofkit.report._blocks import Block, m, para, t
from proofkit.report._claims_nonpoly import tree_sympy
from proofkit.report._claims_sos import SosView, _expr, _q, sos_blocks
from proofkit.report._math import latex_name, latex_number, latex_poly
from proofkit.report._trees import RecastView, recast_view

__all__ = ["recast_blocks"]


class _System:
    """The recast system in sympy, re-described from the trees (display only)."""

    def __init__(
        self, view: RecastView, states: list[str], point: Sequence[Any], nominal: list[Any]
    ):
        self.view = view
        self.states = states
        self.names = states + list(view.names)
        self.ys = [sp.Symbol(s, real=True) for s in states]
        self.zs = [sp.Symbol(s, real=True) for s in view.names]
        self.deltas = [
            _expr([[list(e), str(c)] for e, c in p.items()], self.ys) for _k, p in view.atoms
        ]
        self.at = [_q(c) + y for c, y in zip(point, self.ys, strict=True)] + [
            _q(v) for v in nominal
        ]
        self.rules: list[tuple[str, str]] = []  # (atom as written, substitution)

    def variable(self, k: int) -> tuple[sp.Symbol, sp.Symbol | None]:
        """(S, C) of atom k when trigonometric, (E or T, None) otherwise."""
        i = 0
        for j, (kind, _d) in enumerate(self.view.atoms):
            if j == k:
                return (self.zs[i], self.zs[i + 1]) if kind == "trig" else (self.zs[i], None)
            i += 2 if kind == "trig" else 1
        raise IndexError(k)

    def kind(self, k: int) -> tuple[str, int]:
        """The atom's kind and its number among the atoms of that kind (1-based)."""
        kinds = [kind for kind, _d in self.view.atoms]
        return kinds[k], kinds[: k + 1].count(kinds[k])

    def atom(self, op: str, arg: Any) -> sp.Expr:
        a = sp.expand(tree_sympy(arg, self.at))
        q = a.coeff(sp.pi)
        delta = sp.expand(a - q * sp.pi)
        want = {"exp": "exp", "tanh": "tanh"}.get(op, "trig")
        k = next(
            i
            for i, d in enumerate(self.deltas)
            if self.kind(i)[0] == want and sp.expand(d - delta) == 0
        )
        s, c = self.variable(k)
        if op == "exp":
            out = s + 1
        elif op == "tanh":
            out = s
        elif op == "sin":
            out = sp.sin(q * sp.pi) * (c + 1) + sp.cos(q * sp.pi) * s
        else:
            out = sp.cos(q * sp.pi) * (c + 1) - sp.sin(q * sp.pi) * s
        self._rule(op, arg, q, k, out)
        return out

    def _rule(self, op: str, arg: Any, q: sp.Expr, k: int, out: sp.Expr) -> None:
        xs = [sp.Symbol(s, real=True) for s in self.states]
        written = f"\\{op}\\left({_latex(tree_sympy(arg, xs + self.at[len(xs) :]))}\\right)"
        s, c = self.variable(k)
        angle = sp.latex(q * sp.pi)
        if op in ("exp", "tanh") or q == 0:
            middle = ""
        elif op == "sin":
            middle = f"\\sin({angle})\\,({_latex(c + 1)}) + \\cos({angle})\\,{_latex(s)} = "
        else:
            middle = f"\\cos({angle})\\,({_latex(c + 1)}) - \\sin({angle})\\,{_latex(s)} = "
        rule = (written, middle + _latex(out))
        if rule not in self.rules:
            self.rules.append(rule)

    def field(self, components: Sequence[Any]) -> list[sp.Expr]:
        """The recast field over z = (y, S1, C1, ..., E1, ...): states first, then the rules."""
        f = [sp.expand(tree_sympy(c, self.at, self.atom)) for c in components]
        out = list(f)
        for k, delta in enumerate(self.deltas):
            d = sp.expand(sum(sp.diff(delta, y) * fi for y, fi in zip(self.ys, f, strict=True)))
            s, c = self.variable(k)
            if c is not None:
                out += [sp.expand((c + 1) * d), sp.expand(-s * d)]
            elif self.kind(k)[0] == "tanh":
                out.append(sp.expand((1 - s**2) * d))
            else:
                out.append(sp.expand((s + 1) * d))
        return out

    def constraints(
        self, order: int
    ) -> tuple[list[tuple[str, sp.Expr]], list[tuple[str, sp.Expr]]]:
        """(equalities h = 0, inequalities g >= 0) with the audit's labels; delta_k symbolic."""
        eqs, ineqs = [], []
        for k in range(len(self.deltas)):
            s, c = self.variable(k)
            kind, num = self.kind(k)
            dk = sp.Symbol(f"delta_{k + 1}", real=True)
            if c is not None:
                eqs.append((f"circle {num}", s**2 + c**2 + 2 * c))
                bounds = []
                for j in range(1, order + 1):
                    bounds += [
                        c + 1 - _series(dk, 2 * j, False),
                        _series(dk, 2 * j + 1, False) - (c + 1),
                        dk * s - dk * _series(dk, 2 * j, True),
                        dk * _series(dk, 2 * j - 1, True) - dk * s,
                    ]
                ineqs += [(f"taylor {num}.{i + 1}", g) for i, g in enumerate(bounds)]
            elif kind == "tanh":
                bounds = [dk * s - s**2] + ([dk * s - dk**2 + dk**4 / 3] if order >= 1 else [])
                ineqs += [(f"tanh {num}.{i + 1}", g) for i, g in enumerate(bounds)]
            else:
                for j in range(1, order + 1):
                    g = s + 1 - sum(dk**i / sp.factorial(i) for i in range(2 * j))
                    ineqs.append((f"exp {num}.{j}", g))
        return eqs, ineqs


def _latex(expr: sp.Expr) -> str:
    names = {s: latex_name(s.name) for s in expr.free_symbols if isinstance(s, sp.Symbol)}
    return sp.latex(expr, symbol_names=names)


def _terms(expr: sp.Expr, symbols: Sequence[sp.Symbol]) -> tuple[list[list[Any]], int] | None:
    """Terms with coefficients ``"p/q"`` or ``[a, b]`` (a + b sqrt d), and d (None: neither)."""
    out, radicand = [], 0
    for exps, c in sp.Poly(sp.expand(expr), *symbols).terms():
        if c.is_Rational:
            out.append([list(exps), str(c)])
            continue
        roots = [
            p.base for p in c.atoms(sp.Pow) if p.exp == sp.Rational(1, 2) and p.base.is_Integer
        ]
        if len(set(roots)) != 1 or radicand not in (0, int(roots[0])):
            return None
        radicand = int(roots[0])
        b = sp.expand(c).coeff(sp.sqrt(radicand))
        a = sp.expand(c - b * sp.sqrt(radicand))
        if not (a.is_Rational and b.is_Rational):
            return None
        out.append([list(exps), [str(a), str(b)]])
    return out, radicand


def _poly_latex(expr: sp.Expr, symbols: Sequence[sp.Symbol]) -> str:
    found = _terms(expr, symbols)
    if found is None:
        return _latex(sp.expand(expr))
    terms, d = found
    return latex_poly(terms, [s.name for s in symbols], d)


def _variables_blocks(sys: _System) -> list[Block]:
    rows = []
    for k, delta in enumerate(sys.deltas):
        s, c = sys.variable(k)
        dk = f"\\delta_{{{k + 1}}}"
        arg = f"{dk} = {_poly_latex(delta, sys.ys)}"
        if c is not None:
            rows.append(((m(_latex(s)),), (m(f"\\sin {dk}"),), (m(arg),)))
            rows.append(((m(_latex(c)),), (m(f"\\cos {dk} - 1"),), (m(arg),)))
        elif sys.kind(k)[0] == "tanh":
            rows.append(((m(_latex(s)),), (m(f"\\tanh {dk}"),), (m(arg),)))
        else:
            rows.append(((m(_latex(s)),), (m(f"\\exp {dk} - 1"),), (m(arg),)))
    return [
        para(
            t(
                "Recast variables. Each argument of sin, cos, exp or tanh, without its multiple "
                "of pi, is a polynomial delta in the deviation y = x - x* (written with the "
                "state names) that vanishes at the equilibrium; so does every new variable:"
            )
        ),
        Block("table", header=("variable", "stands for", "argument"), rows=tuple(rows)),
        para(
            t(
                "Substitutions (angle addition, exact values of sine and cosine at the "
                "multiple of pi):"
            )
        ),
        Block("items", items=tuple((m(f"{a} = {b}"),) for a, b in sys.rules)),
    ]


def _field_blocks(sys: _System, field: list[sp.Expr]) -> list[Block]:
    syms = sys.ys + sys.zs
    rows = [
        f"\\dot{{{latex_name(n)}}} &= {_poly_latex(f, syms)}"
        for n, f in zip(sys.names, field, strict=True)
    ]
    rules = []
    for k in range(len(sys.deltas)):
        s, c = sys.variable(k)
        dk = f"D_{{{k + 1}}} = \\nabla \\delta_{{{k + 1}}} \\cdot F"
        sl, cl, dd = _latex(s), _latex(c) if c is not None else "", f"D_{{{k + 1}}}"
        if c is not None:
            rules.append(
                m(f"\\dot {sl} = ({cl} + 1)\\, {dd},\\; \\dot {cl} = -{sl}\\, {dd},\\; {dk}")
            )
        elif sys.kind(k)[0] == "tanh":
            rules.append(m(f"\\dot {sl} = (1 - {sl}^2)\\, {dd},\\; {dk}"))
        else:
            rules.append(m(f"\\dot {sl} = ({sl} + 1)\\, {dd},\\; {dk}"))
    return [
        para(
            t(
                "The recast field F(z), z = (y, recast variables), with the derivative rules of "
                "the chain rule: "
            ),
            *[seg for r in rules for seg in (r, t("; "))][:-1],
            t(":"),
        ),
        Block("math", "\\begin{aligned} " + " \\\\ ".join(rows) + " \\end{aligned}"),
    ]


def _series(delta: sp.Symbol, terms: int, odd: bool) -> sp.Expr:
    return sum(
        sp.Rational((-1) ** k, factorial(2 * k + odd)) * delta ** (2 * k + odd)
        for k in range(terms)
    )


def _constraint_blocks(sys: _System, order: int) -> list[Block]:
    found = sys.constraints(order)
    eqs = [m(f"\\text{{{h}}}:\\; {_latex(e)} = 0") for h, e in found[0]]
    ineqs = [m(f"\\text{{{g}}}:\\; {_latex(e)} \\ge 0") for g, e in found[1]]
    out = []
    if eqs:
        out += [
            para(
                t(
                    "Equalities that hold at z = recast(x) for every x (sin^2 + cos^2 = 1, "
                    "written in S and C = cos - 1):"
                )
            ),
            Block("items", items=tuple((e,) for e in eqs)),
        ]
    if ineqs:
        out += [
            para(
                t(
                    f"Inequalities of Taylor order {order}, valid for every real delta (each "
                    "delta is the polynomial of its table row): the cosine series cut after a "
                    "negative term is a lower bound of cos, after a positive term an upper bound; "
                    "delta sin delta lies between delta times the sine series cut after a "
                    "negative and after a positive term; exp is at least its Taylor polynomial "
                    "of odd degree (alternating series and Taylor's remainder); tanh delta has "
                    "the sign of delta and |tanh delta| <= |delta| (tanh 1), and tanh delta >= "
                    "delta - delta^3/3 for delta >= 0, as tanh is odd (tanh 2):"
                )
            ),
            Block("items", items=tuple((g,) for g in ineqs)),
        ]
    else:
        out.append(para(t("Taylor order 0: no inequalities are used.")))
    return out


def _enclosure_blocks(block: Mapping[str, Any], d: int) -> list[Block]:
    enc = block.get("enclosure")
    if not enc or not d:
        return []
    lo, hi = (Fraction(str(x)) for x in enc)
    return [
        para(
            t(
                f"The field's constants lie in Q(sqrt {d}). The certificate states the rational "
                "enclosure "
            ),
            m(
                f"\\sqrt{{{d}}} \\in [{latex_number(str(lo))}, {latex_number(str(hi))}] "
                f"\\approx [{float(lo):.15g}, {float(hi):.15g}]"
            ),
            t(", which the audit checks exactly by "),
            m(f"0 \\le \\mathrm{{lo}},\\; \\mathrm{{lo}}^2 \\le {d} \\le \\mathrm{{hi}}^2"),
            t(f". The field F is affine in r = sqrt {d} (the constants enter linearly), "),
            m("F = F_0 + r F_1"),
            t(", and V does not depend on r, so the decrease target "),
            m("T(r) = -\\nabla V \\cdot (F_0 + r F_1) - \\varepsilon |y|^2"),
            t(" is affine in r: for r in [lo, hi], "),
            m("T(r) = \\lambda\\, T(\\mathrm{lo}) + (1 - \\lambda)\\, T(\\mathrm{hi})"),
            t(" with "),
            m("\\lambda = (\\mathrm{hi} - r)/(\\mathrm{hi} - \\mathrm{lo}) \\in [0, 1]"),
            t(
                ". The decrease obligations at lo and at hi show T(lo) >= 0 and T(hi) >= 0 "
                f"wherever V <= level (with their own multipliers), so T(sqrt {d}) >= 0 there "
                "too: checking both ends suffices, with rational arithmetic only."
            ),
        )
    ]


def _obligation_table(
    ev: Mapping[str, Any], domain: Sequence[Any] | None, arg: str = "z"
) -> tuple[Block, dict[str, str]]:
    """The obligations with their multipliers' labels, and the LaTeX target of each."""
    sos, free = ev.get("multipliers") or {}, ev.get("free") or {}
    rows, targets = [], {}
    for name in ev.get("squares") or {}:
        if name in sos:
            continue
        base = _base(name, domain, arg)
        ins = [k.split(" * ", 1)[1] for k in sos if k.startswith(name + " * ")]
        eqs = [k.split(" * ", 1)[1] for k in free if k.startswith(name + " * ")]
        targets[name] = (
            base
            + (" - \\sum_{g} \\sigma_g\\, g" if ins else "")
            + (" - \\sum_{h} \\lambda_h\\, h" if eqs else "")
        )
        rows.append(
            ((t(name),), (m(base),), (t(", ".join(ins) or "-"),), (t(", ".join(eqs) or "-"),))
        )
    header = (
        "obligation",
        "before multipliers",
        "inequalities g (SOS multiplier)",
        "equalities h (free multiplier)",
    )
    return Block("table", header=header, rows=tuple(rows)), targets


def _base(name: str, domain: Sequence[Any] | None, arg: str = "z") -> str:
    if name == "positive":
        return "V - \\varepsilon |y|^2"
    if name.startswith("decrease"):
        end = name.split(" ", 1)[1] if " " in name else ""
        sub = f"_{{\\mathrm{{{end}}}}}" if end else ""
        return f"-\\nabla V \\cdot F{sub}({arg}) - \\varepsilon |y|^2"
    if name == "inside":
        return "\\mathrm{level} - V"
    if name.startswith("bound ") and name[6:].isdigit():
        return f"D - \\delta({arg})\\; (\\text{{exp atom {name[6:]}}})"
    if name.startswith("divergence"):
        end = name.split(" ", 1)[1] if " " in name else ""
        return (f"P_{{\\mathrm{{{end}}}}}" if end else "P") + f"({arg}) - \\varepsilon"
    if name.startswith("domain ") and name[7:].isdigit() and domain:
        j = int(name[7:]) - 1
        strict = j < len(domain) and bool(domain[j].get("strict"))
        return f"h_{{{j + 1}}}(x^* + y)" + (" - \\varepsilon" if strict else "")
    return f"\\text{{{name}}}"


_MEANING = (
    "What this proves for the states. Put W(x) = V(x - x*, recast(x)), the recast variables "
    "evaluated at x (S = sin delta, C = cos delta - 1, E = exp delta - 1, T = tanh delta, each "
    "delta at x - x*). "
    "For every state x the point z = recast(x) satisfies every equality and every Taylor "
    "inequality above, so each obligation, a sum of squares plus multiples of constraints that "
    "are >= 0 (sum-of-squares multipliers) or = 0 (free multipliers) at z, is >= 0 at z. Along a "
    "trajectory x(t), z(t) = recast(x(t)) moves with the recast field F (the derivative rules "
    "are the chain rule), so dW/dt = grad V(z) . F(z). Hence W(x) >= eps |x - x*|^2 (positive), "
    "dW/dt <= -eps |x - x*|^2 wherever W <= level (decrease), and for a region of attraction "
    "the claim's set lies in {W <= level} (inside) and {W <= level} in the domain (domain j). "
    "{W <= level} is compact and forward invariant, and every trajectory starting in it "
    "converges to the equilibrium (Lyapunov's theorem)."
)


def _nominal(model: Any, names: Sequence[str]) -> list[Any] | None:
    values = {p["name"]: p.get("nominal") for p in model.parameters}
    out = [values.get(n) for n in names]
    return None if any(v is None for v in out) else out


def recast_intro(
    claim: Any,
    model: Any,
    expressions: Mapping[str, Any] | None,
    point: Sequence[Any] | None,
    what: str = "V",
) -> tuple[_System, list[sp.Expr], list[Block]] | None:
    """The recast system around ``point`` and its description (None: not recast)."""
    ev, states = claim.evidence, list(model.states)
    variables = list((expressions or {}).get("variables") or [])
    nominal = _nominal(model, variables[len(states) :])
    comps = (expressions or {}).get("components") or []
    if nominal is None or not point:
        return None
    view = recast_view(comps, len(states), point, nominal)
    if view is None:
        return None
    sys = _System(view, states, point, nominal)
    field = sys.field(comps)
    block = ev.get("recast") or {}
    d = max((r for f in field if (r := _radicand(f, sys.ys + sys.zs))), default=0)
    out = [
        para(
            t(
                "Recasting (Papachristodoulou and Prajna, 2005). The audit derives everything in "
                "this part itself from the model's expression trees (compared with the source by "
                "provenance); the certificate adds only the Taylor order "
                f"({block.get('taylor_order')}), "
                + ("the enclosure of a square root, " if block.get("enclosure") else "")
                + f"{what}, the numbers, the multipliers and one Gram matrix per obligation."
            )
        ),
        *_variables_blocks(sys),
        *_field_blocks(sys, field),
        *_constraint_blocks(sys, int(block.get("taylor_order") or 0)),
        *_enclosure_blocks(block, d),
    ]
    return sys, field, out


def recast_blocks(
    claim: Any, model: Any, appendix: list[Block], expressions: Mapping[str, Any] | None
) -> list[Block]:
    """The recast section of a Lyapunov or region-of-attraction claim."""
    from proofkit.report._claims import generic_blocks

    found = recast_intro(claim, model, expressions, claim.point)
    if found is None:
        return generic_blocks(claim)
    sys, field, out = found
    table, targets = _obligation_table(claim.evidence, model.domain)
    out += [
        para(
            t(
                "Obligations: each target below, minus its multipliers times the constraints "
                "named in its row, equals z'Gz with G positive semidefinite (the level "
                "inequality is level - V >= 0, a set's condition is g_i(x* + y) >= 0):"
            )
        ),
        table,
    ]
    out += _lie_appendix(claim, sys, field, appendix)
    out += sos_blocks(claim, model, appendix, SosView(names=sys.names, targets=targets))
    out.append(para(t(_MEANING)))
    return out


def _radicand(expr: sp.Expr, symbols: Sequence[sp.Symbol]) -> int:
    found = _terms(expr, symbols)
    return found[1] if found else 0


def _lie_appendix(
    claim: Any, sys: _System, field: list[sp.Expr], appendix: list[Block]
) -> list[Block]:
    v = claim.evidence.get("V")
    if not v:
        return []
    syms = sys.ys + sys.zs
    vz = _expr(v, syms)
    lie = sp.expand(sum(sp.diff(vz, z) * f for z, f in zip(syms, field, strict=True)))
    appendix.append(
        Block("heading", f"Lie derivative of V along the recast field: {claim.statement}", 3)
    )
    appendix.append(Block("math", "\\nabla V \\cdot F(z) = " + _poly_latex(lie, syms)))
    return [
        para(
            t("The derivative of V along the recast field, "),
            m("\\nabla V \\cdot F(z)"),
            t(", expanded exactly, is in the appendix."),
        )
    ]
