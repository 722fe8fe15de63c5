"""Printing exact sympy expressions and whole Models back as model-language text.

:func:`format_expr` writes an expression in the syntax of the language
(``^`` for powers, ``abs``, ``sqrt``, exact ``p/q`` rationals), with only
the parentheses the precedence rules need, so that parsing the text gives
back the same sympy expression. :func:`format_model` writes a whole Model
such that ``proofkit.parse(format_model(m)) == m``.

This module must never use sympy's own string printers for output that is
read back (they print ``**``, ``Abs``, ``E`` ...), and never evaluates text.
"""

from __future__ import annotations

import sympy as sp

from proofkit.model import ELEMENTARY, Condition, Model, Region

__all__ = ["format_condition", "format_expr", "format_model", "format_region"]

_ADD, _NEG, _MUL, _POW, _ATOM = 1, 2, 3, 4, 5
_FUNCS = ELEMENTARY
# Functions sympy may produce on its own, written with the language's functions.
_RECIPROCAL: dict[type, str] = {sp.sec: "cos", sp.csc: "sin", sp.coth: "tanh"}


def _at(e: sp.Expr, level: int) -> str:
    text, prec = _fmt(e)
    return f"({text})" if prec < level else text


def _number(e: sp.Rational) -> tuple[str, int]:
    if e.is_Integer:
        return (str(int(e)), _ATOM) if e >= 0 else (f"-{-int(e)}", _NEG)
    p, q = int(e.p), int(e.q)
    return (f"{p}/{q}", _MUL) if p > 0 else (f"-{-p}/{q}", _NEG)


def _mul(e: sp.Expr) -> tuple[str, int]:
    coeff, _ = e.as_coeff_Mul()
    if coeff.is_negative:
        return "-" + _at(-e, _MUL), _NEG
    numer: list[sp.Expr] = []
    denom: list[sp.Expr] = []
    for f in sp.Mul.make_args(e):
        if f.is_Rational:
            if f.p != 1:
                numer.insert(0, sp.Integer(f.p))
            if f.q != 1:
                denom.insert(0, sp.Integer(f.q))
        elif f.is_Pow and f.exp.is_Rational and f.exp.is_negative:
            denom.append(sp.Pow(f.base, -f.exp))
        else:
            numer.append(f)
    top = "*".join(_at(f, _MUL) for f in numer) if numer else "1"
    if not denom:
        return top, _MUL
    if len(denom) == 1:
        bottom = _at(denom[0], _POW)
    else:
        bottom = "(" + "*".join(_at(f, _MUL) for f in denom) + ")"
    return f"{top}/{bottom}", _MUL


def _pow(e: sp.Pow) -> tuple[str, int]:
    base, exp = e.base, e.exp
    if exp.is_Rational and exp.is_negative:
        return _mul(e)
    if exp == sp.S.Half:
        return f"sqrt({_fmt(base)[0]})", _ATOM
    if base is sp.E:
        return f"exp({_fmt(exp)[0]})", _ATOM
    exp_text = _at(exp, _ATOM)
    return f"{_at(base, _ATOM)}^{exp_text}", _POW


def _fmt(e: sp.Expr) -> tuple[str, int]:
    """(text, precedence) of ``e`` in model syntax."""
    if e.is_Rational:
        return _number(e)
    if e.is_Symbol:
        return e.name, _ATOM
    if e is sp.pi:
        return "pi", _ATOM
    if e is sp.E:
        return "exp(1)", _ATOM
    if e.is_Add:
        terms = e.as_ordered_terms()
        if terms[0].could_extract_minus_sign():  # lead with a positive term: 1 - x^2
            first = next((t for t in terms if not t.could_extract_minus_sign()), None)
            if first is not None:
                terms.remove(first)
                terms.insert(0, first)
        out = _fmt(terms[0])[0]
        for t in terms[1:]:
            if t.could_extract_minus_sign():
                out += " - " + _at(-t, _MUL)
            else:
                out += " + " + _at(t, _NEG)
        return out, _ADD
    if e.is_Mul:
        return _mul(e)
    if e.is_Pow:
        return _pow(e)
    func = type(e)
    if func in _FUNCS and len(e.args) == 1:
        return f"{_FUNCS[func]}({_fmt(e.args[0])[0]})", _ATOM
    if func is sp.cot and len(e.args) == 1:  # sympy's own form of tan(u + pi/2) = -cot(u)
        return f"tan(pi/2 - {_at(e.args[0], _MUL)})", _ATOM
    if func in _RECIPROCAL and len(e.args) == 1:
        return f"1/{_RECIPROCAL[func]}({_fmt(e.args[0])[0]})", _MUL
    if isinstance(e, sp.Number) and e.is_Float:  # pragma: no cover - models never hold floats
        raise ValueError("a floating-point number cannot be written exactly")
    raise ValueError(f"cannot write {type(e).__name__} in the model language")


def format_expr(e: sp.Expr) -> str:
    """``e`` in the model language's syntax (parses back to the same expression)."""
    return _fmt(sp.Integer(e) if isinstance(e, int) else e)[0]


def format_condition(c: Condition) -> str:
    return f"{format_expr(c.lhs)} {c.op} {format_expr(c.rhs)}"


def format_region(r: Region) -> str:
    return " and ".join(format_condition(c) for c in r)


def format_model(model: Model) -> str:
    """The model as valid model text; ``proofkit.parse(format_model(m)) == m``.

    Constants, shorthands and equilibrium points are written with their exact
    (substituted) values; claims are written as their recorded text.
    """
    lines: list[str] = []
    if model.name is not None:
        lines.append(f"system {model.name}")
    lines += [f"constant {c.name} = {format_expr(c.value)}" for c in model.constants]
    for p in model.params:
        text = f"parameter {p.name} = {format_expr(p.nominal)}"
        if p.low is not None and p.high is not None:
            text += f" in [{format_expr(p.low)}, {format_expr(p.high)}]"
        lines.append(text)
    lines.append("state " + ", ".join(model.states))
    lines += [f"let {let.name} = {format_expr(let.expr)}" for let in model.lets]
    lines += [f"d{e.state}/dt = {format_expr(e.rhs)}" for e in model.equations]
    if model.domain is not None:
        lines.append(f"domain {format_region(model.domain)}")
    for q in model.equilibria:
        point = ", ".join(f"{s} = {format_expr(v)}" for s, v in q.point)
        lines.append(f"equilibrium {q.name} at {point}")
    lines += [f"claim {c.text}" for c in model.claims]
    return "\n".join(lines) + "\n"
