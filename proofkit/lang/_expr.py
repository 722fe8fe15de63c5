"""Expression trees to exact sympy objects, with name resolution and safety limits.

A lark :class:`~lark.Transformer` builds sympy values directly from the
tree (``sp.Integer``, ``sp.Rational``, ``sp.Add``, ``sp.Mul``, ``sp.Pow``,
``sp.sin`` ...). Decimal literals become exact rationals from their digits.
The limits (exponent size, number size, term count after expansion) are
checked before anything could grow large.

This module must never call ``sympify``, ``parse_expr``, ``eval`` or ``exec``,
and never expands an expression whose size it has not bounded first.
"""

from __future__ import annotations

import re
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import Any

import sympy as sp
from lark import Token, Transformer, Tree, v_args
from lark.exceptions import VisitError

from proofkit.errors import InputError
from proofkit.keywords import FUNCTION_NAMES
from proofkit.lang._diagnostics import Located, closest, make_error
from proofkit.lang._exact import ball_of
from proofkit.lang._limits import (
    MAX_EXP_ARGUMENT,
    MAX_EXP_NESTING,
    MAX_NUMBER_BITS,
    MAX_NUMBER_DIGITS,
    NumberSizes,
    digits_of_bits,
)
from proofkit.model import ELEMENTARY, Definedness

__all__ = [
    "FUNCTIONS",
    "KIND_WORDS",
    "MAX_EXPONENT",
    "MAX_EXPR_DEPTH",
    "MAX_NODES",
    "MAX_TERMS",
    "Binding",
    "ExprBuilder",
    "Val",
    "estimate_terms",
    "exact_number",
    "expression_size",
    "show",
]

MAX_EXPONENT = 64  # largest |n| in x^n
MAX_TERMS = 10_000  # terms of an expanded right-hand side or condition
MAX_LITERAL_DIGITS = 1000
MAX_LITERAL_EXPONENT = 300  # |e| in a literal like 1e-3
MAX_NODES = 100_000  # operations in one expression once shorthands are substituted
MAX_EXPR_DEPTH = 200  # depth of one expression once shorthands are substituted

_BY_NAME: dict[str, Callable[[sp.Expr], sp.Expr]] = {n: f for f, n in ELEMENTARY.items()}
FUNCTIONS: dict[str, Callable[[sp.Expr], sp.Expr]] = {
    n: sp.sqrt if n == "sqrt" else _BY_NAME[n] for n in FUNCTION_NAMES
}
_NUMBER_RE = re.compile(r"([0-9]*)(?:\.([0-9]*))?(?:[eE]([+-]?[0-9]+))?")
_NOT_REAL = (sp.I, sp.zoo, sp.nan, sp.oo, sp.S.NegativeInfinity)

_PLURAL = {
    "constant": "constants",
    "parameter": "parameters",
    "state": "states",
    "let": "shorthands (let)",
}
KIND_WORDS = {
    "constant": "a constant",
    "parameter": "a parameter",
    "state": "a state",
    "let": "a shorthand (let)",
    "equilibrium": "an equilibrium",
}


@dataclass(frozen=True)
class Binding:
    """What a name means at a point of the file."""

    kind: str  # constant, parameter, state, let, equilibrium
    value: sp.Expr | None
    line: int
    column: int
    definedness: tuple[Definedness, ...] = ()  # a shorthand's conditions, carried to its uses


@dataclass(frozen=True)
class Val:
    """A built sympy value with the source position it came from."""

    expr: sp.Expr
    line: int
    column: int
    end_line: int
    end_column: int


def exact_number(text: str, where: Located, line: int, column: int) -> sp.Rational:
    """The exact rational written by a number literal (digits as integers; no float)."""
    m = _NUMBER_RE.fullmatch(text)
    if m is None:  # pragma: no cover - the lexer only yields valid literals
        raise make_error(where, f"malformed number {text!r}", line, column)
    whole, frac, exp = m.group(1) or "", m.group(2) or "", m.group(3)
    digits = (whole + frac).lstrip("0") or "0"
    end = column + len(text)
    if len(digits) > MAX_LITERAL_DIGITS:
        raise make_error(
            where,
            f"a number with {len(digits)} digits; the limit is {MAX_LITERAL_DIGITS}",
            line,
            column,
            end,
            limit=True,
        )
    power = 0
    if exp is not None:
        if len(exp.lstrip("+-").lstrip("0")) > 6 or abs(int(exp)) > MAX_LITERAL_EXPONENT:
            raise make_error(
                where,
                f"the exponent of {text} is too large; the limit is {MAX_LITERAL_EXPONENT}",
                line,
                column,
                end,
                limit=True,
            )
        power = int(exp)
    power -= len(frac)
    n = int(digits)
    if power >= 0:
        return sp.Integer(n * 10**power)
    return sp.Rational(n, 10**-power)


def show(e: sp.Expr, width: int = 60) -> str:
    """``e`` in model syntax for a message, shortened to about ``width`` characters."""
    from proofkit.lang._printer import format_expr

    try:
        text = format_expr(e)
    except ValueError:  # pragma: no cover - a form the printer does not know
        text = str(e)
    return text if len(text) <= width else text[: width - 4] + " ..."


def _comb_capped(n: int, k: int, cap: int) -> int:
    """``min(comb(n, k), cap + 1)`` computed without building huge numbers."""
    k = min(k, n - k)
    if k < 0:
        return 0
    value = 1
    for i in range(1, k + 1):
        value = value * (n - k + i) // i
        if value > cap:
            return cap + 1
    return value


def estimate_terms(expr: sp.Expr, cap: int = MAX_TERMS) -> int:
    """An upper bound (capped at ``cap + 1``) on the number of terms of ``expand(expr)``.

    Multinomial counting: a sum adds, a product multiplies, ``b^n`` has at most
    ``comb(t + n - 1, n)`` terms for a ``t``-term base, further bounded by the
    number of monomials of the degree reached. Function arguments and
    negative or fractional powers are opaque factors whose insides are bounded
    too. Nothing is expanded.
    """
    memo: dict[sp.Expr, tuple[int, int, bool]] = {}
    worst = 0

    def go(e: sp.Expr) -> tuple[int, int, bool]:
        """(terms bound, degree bound, opaque factors present)."""
        nonlocal worst
        if e in memo:
            return memo[e]
        if e.is_Atom:
            res = (1, 0 if e.is_number else 1, False)
        elif e.is_Add:
            parts = [go(a) for a in e.args]
            res = (
                min(sum(p[0] for p in parts), cap + 1),
                max(p[1] for p in parts),
                any(p[2] for p in parts),
            )
        elif e.is_Mul:
            terms, deg, opaque = 1, 0, False
            for a in e.args:
                t, d, o = go(a)
                terms = min(terms * t, cap + 1)
                deg = min(deg + d, 10**9)
                opaque = opaque or o
            res = (terms, deg, opaque)
        elif e.is_Pow and e.exp.is_Integer and e.exp > 0:
            t, d, o = go(e.base)
            n = int(e.exp)
            if not o and e.base.free_symbols:
                t = min(t, _comb_capped(len(e.base.free_symbols) + d, d, cap))
            terms = 1 if t <= 1 else _comb_capped(t + n - 1, n, cap)
            res = (terms, min(d * n, 10**9), o)
        else:  # functions, negative or fractional powers: one opaque factor
            inner = [go(a)[0] for a in e.args]
            worst = max([worst, *inner])
            res = (1, 1, True)
        memo[e] = res
        return res

    terms, deg, opaque = go(expr)
    if not opaque and expr.free_symbols:
        terms = min(terms, _comb_capped(len(expr.free_symbols) + deg, deg, cap))
    return min(max(terms, worst), cap + 1)


def expression_size(expr: sp.Expr, cap: int = MAX_NODES) -> tuple[int, int]:
    """(number of nodes counted with repetition, depth) of ``expr``, capped at ``cap + 1``.

    Shorthands may share subexpressions, so a file can describe a tree far
    larger than itself; sympy's own walks (``subs``, ``has``) do not share
    work, so this bound is what keeps them fast. The walk itself is memoised
    and iterative.
    """
    memo: dict[sp.Basic, tuple[int, int]] = {}
    stack: list[tuple[sp.Basic, bool]] = [(expr, False)]
    while stack:
        node, ready = stack.pop()
        if node in memo:
            continue
        if not ready:
            stack.append((node, True))
            stack.extend((a, False) for a in node.args if a not in memo)
            continue
        size, depth = 1, 1
        for a in node.args:
            s, d = memo[a]
            size = min(size + s, cap + 1)
            depth = max(depth, d + 1)
        memo[node] = (size, depth)
    return memo[expr]


def _pos(meta: Any) -> tuple[int, int, int, int]:
    return meta.line, meta.column, meta.end_line, meta.end_column


@v_args(meta=True)
class ExprBuilder(Transformer):
    """Builds sympy values from an expression tree for one statement.

    ``env`` maps every name declared so far to its :class:`Binding`;
    ``allowed`` lists the kinds of names this statement may use; ``later``
    maps every name declared in the file to its first line (for the hint
    when a name is used before its declaration);
    ``purpose`` words the statement in messages ("a constant", ...).
    """

    def __init__(
        self,
        where: Located,
        env: Mapping[str, Binding],
        allowed: frozenset[str],
        purpose: str,
        later: Mapping[str, int],
    ) -> None:
        super().__init__(visit_tokens=False)
        self.where = where
        self.env = env
        self.allowed = allowed
        self.purpose = purpose
        self.later = later
        self.definedness: list[Definedness] = []
        self.sizes = NumberSizes()

    # --- helpers -------------------------------------------------------------
    def _err(self, msg: str, line: int, col: int, end: int | None = None, **kw: Any) -> InputError:
        return make_error(self.where, msg, line, col, end, **kw)

    def _err_val(self, msg: str, v: Val, **kw: Any) -> InputError:
        end = v.end_column if v.end_line == v.line else None
        return self._err(msg, v.line, v.column, end, **kw)

    def _real(self, expr: sp.Expr, v: Val) -> sp.Expr:
        if expr.has(*_NOT_REAL) or (expr.is_number and expr.is_extended_real is False):
            raise self._err_val(
                "this expression is not a finite real number (division by zero, "
                "or a root or logarithm of a negative number)",
                v,
            )
        return expr

    def build(self, tree: Tree | Token) -> Val:
        """Transform one expression tree; names that are bare tokens are handled too."""
        self.definedness = []
        if not isinstance(tree, Tree):
            return self._token_value(tree)
        try:
            return self.transform(tree)
        except VisitError as err:
            if isinstance(err.orig_exc, InputError):
                raise err.orig_exc from None
            raise

    def _token_value(self, tok: Token) -> Val:
        line, col = tok.line, tok.column
        end_line, end = tok.end_line, tok.end_column
        if tok.type == "NUMBER":
            value: sp.Expr = exact_number(str(tok), self.where, line, col)
        elif tok.type == "NAME":
            value = self._resolve(tok)
        else:  # pragma: no cover - the grammar allows no other bare token here
            raise self._err(f"unexpected {tok!s}", line, col, end)
        return Val(value, line, col, end_line, end)

    def _resolve(self, tok: Token) -> sp.Expr:
        name = str(tok)
        line, col, end = tok.line, tok.column, tok.end_column
        if name == "pi":
            return sp.pi
        if name in FUNCTIONS:
            raise self._err(
                f"'{name}' is a function, not a value",
                line,
                col,
                end,
                hint=f"call it with an argument, as in {name}(x); a variable needs another name",
            )
        binding = self.env.get(name)
        if binding is None:
            if name in self.later:
                if self.later[name] == line:
                    raise self._err(
                        f"'{name}' cannot be used in its own definition", line, col, end
                    )
                raise self._err(
                    f"'{name}' is used before it is declared (on line {self.later[name]})",
                    line,
                    col,
                    end,
                    hint=f"move the declaration of '{name}' above this line",
                )
            known = [n for n, b in self.env.items() if b.kind in self.allowed]
            pending = [n for n in self.later if n not in self.env]
            guess = closest(name, [*known, *pending, "pi", *FUNCTIONS])
            if guess in pending:
                hint = f"did you mean '{guess}' (declared later, on line {self.later[guess]})?"
            elif guess:
                hint = f"did you mean '{guess}'?"
            else:
                hint = "declare it with constant, parameter, state or let before using it"
            raise self._err(f"unknown name '{name}'", line, col, end, hint=hint)
        if binding.kind not in self.allowed:
            may = ", ".join(
                _PLURAL[k] for k in ("constant", "parameter", "state", "let") if k in self.allowed
            )
            raise self._err(
                f"'{name}' is {KIND_WORDS[binding.kind]}, which {self.purpose} cannot use",
                line,
                col,
                end,
                hint=f"{self.purpose} may use numbers, pi, functions and {may}",
            )
        assert binding.value is not None
        self.definedness.extend(binding.definedness)
        return binding.value

    def _exp_limits(self, v: Val) -> None:
        """Nested exp and huge constant arguments make numbers no one can evaluate."""
        if self.sizes.exp_nesting(v.expr) >= MAX_EXP_NESTING:
            raise self._err_val(
                f"exp is nested more than {MAX_EXP_NESTING} levels deep",
                v,
                hint="rescale the model; nested exponentials overflow every evaluation",
                limit=True,
            )
        if not v.expr.free_symbols:
            b = ball_of(v.expr)
            if b is None or not abs(b) <= MAX_EXP_ARGUMENT:
                raise self._err_val(
                    f"exp of a constant beyond {MAX_EXP_ARGUMENT} in absolute value",
                    v,
                    hint="rescale the model; such a number has hundreds of digits",
                    limit=True,
                )

    def _require(self, expr: sp.Expr, relation: str, origin: str, v: Val) -> None:
        """Record where the value being built is defined (before sympy may simplify it away)."""
        if expr.free_symbols:
            end = v.end_column if v.end_line == v.line else None
            span = self.where.span(v.line, v.column, end)
            self.definedness.append(Definedness(expr, relation, origin, span))  # type: ignore[arg-type]

    def __default__(self, data: Any, children: Any, meta: Any) -> Any:  # pragma: no cover
        raise self._err(f"unexpected construct {data}", meta.line, meta.column)

    # --- rules -----------------------------------------------------------------
    def number(self, meta: Any, children: list[Token]) -> Val:
        return self._token_value(children[0])

    def name(self, meta: Any, children: list[Token]) -> Val:
        return self._token_value(children[0])

    def _val(self, child: Val | Token) -> Val:
        return child if isinstance(child, Val) else self._token_value(child)

    def _number_limit(self, bits: int, meta: Any, what: str) -> None:
        if bits > MAX_NUMBER_BITS:
            raise self._err(
                f"{what} would hold an exact number of about {digits_of_bits(bits)} digits; "
                f"the limit is {MAX_NUMBER_DIGITS} digits",
                meta.line,
                meta.column,
                meta.end_column if meta.end_line == meta.line else None,
                hint="use numbers of a sensible size (rescale the model)",
                limit=True,
            )

    def sum(self, meta: Any, children: list[Any]) -> Val:
        terms = [self._val(children[0]).expr]
        for op, child in zip(children[1::2], children[2::2], strict=True):
            value = self._val(child).expr
            terms.append(value if str(op) == "+" else -value)
        self._number_limit(self.sizes.sum_bits(terms), meta, "this sum")
        return Val(sp.Add(*terms), *_pos(meta))

    def product(self, meta: Any, children: list[Any]) -> Val:
        factors = [self._val(children[0]).expr]
        divided = False
        for op, child in zip(children[1::2], children[2::2], strict=True):
            v = self._val(child)
            if str(op) == "*":
                factors.append(v.expr)
                continue
            if v.expr.is_zero:
                raise self._err_val("division by zero", v)
            self._require(v.expr, "!=", "a denominator", v)
            factors.append(sp.Pow(v.expr, -1))
            divided = True
        self._number_limit(self.sizes.product_bits(factors), meta, "this product")
        out = Val(sp.Mul(*factors), *_pos(meta))
        # only a division can turn finite real factors into a non-real value
        return Val(self._real(out.expr, out), *_pos(meta)) if divided else out

    def sign(self, meta: Any, children: list[Any]) -> Val:
        v = self._val(children[1])
        return Val(-v.expr if str(children[0]) == "-" else v.expr, *_pos(meta))

    def pow(self, meta: Any, children: list[Any]) -> Val:
        base, exp = self._val(children[0]), self._val(children[2])
        e = exp.expr
        if e.free_symbols:
            raise self._err_val(
                "an exponent must be a constant (a number or a constant expression)",
                exp,
                hint="write the power as a product, or use exp(...) and log(...)",
            )
        if not e.is_Rational:
            raise self._err_val(
                f"the exponent {show(e)} is not a rational number",
                exp,
                hint="exponents must be integers or fractions such as 1/2",
            )
        p, q = int(e.p), int(e.q)
        if abs(p) > MAX_EXPONENT or q > MAX_EXPONENT:
            raise self._err_val(
                f"the exponent {show(e)} exceeds the limit of {MAX_EXPONENT} in absolute value",
                exp,
                hint="a file may not ask for huge powers",
                limit=True,
            )
        b = base.expr
        self._number_limit(self.sizes.power_bits(b, p), meta, "this power")
        if b.is_Rational and b.is_zero and p < 0:
            raise self._err_val("zero raised to a negative power (division by zero)", base)
        if q != 1 and b.is_number and b.is_negative:
            raise self._err_val("a negative number raised to a fractional power is not real", base)
        if q != 1:
            self._require(b, ">=" if p > 0 else ">", "the base of a fractional power", base)
        elif p < 0:
            self._require(b, "!=", "a denominator", base)
        out = Val(sp.Pow(b, e), *_pos(meta))
        return Val(self._real(out.expr, out), *_pos(meta))

    def call(self, meta: Any, children: list[Any]) -> Val:
        fname = children[0]
        args = [a for a in children[1:] if a is not None]
        name = str(fname)
        line, col, end = fname.line, fname.column, fname.end_column
        if name not in FUNCTIONS:
            binding = self.env.get(name)
            if binding is not None or name == "pi":
                kind = "a constant" if name == "pi" else KIND_WORDS[binding.kind]  # type: ignore[union-attr]
                raise self._err(
                    f"'{name}' is {kind}, not a function, so it cannot be called",
                    line,
                    col,
                    end,
                    hint=f"for a product write {name}*(...)",
                )
            guess = closest(name, FUNCTIONS)
            hint = (
                f"did you mean '{guess}'?"
                if guess
                else ("known functions: " + ", ".join(FUNCTIONS))
            )
            raise self._err(
                f"unknown name '{name}': not a known function", line, col, end, hint=hint
            )
        if len(args) != 1:
            raise self._err(
                f"{name} takes exactly one argument, got {len(args)}",
                line,
                col,
                end,
                hint=f"write {name}(x)",
            )
        arg = args[0]
        if isinstance(arg, Token) and arg.type == "STRING":
            raise self._err(
                "quoted text is not part of the language",
                arg.line,
                arg.column,
                arg.end_column,
                hint=f"give {name} an expression, as in {name}(x)",
            )
        v = self._val(arg)
        if name in ("sqrt", "log") and v.expr.is_number and v.expr.is_negative:
            raise self._err_val(f"{name} of a negative number is not real", v)
        if name == "log" and v.expr.is_zero:
            raise self._err_val("log(0) is not a finite number", v)
        if name == "exp":
            self._exp_limits(v)
        if name == "log":
            self._require(v.expr, ">", "the argument of log", v)
        elif name == "sqrt":
            self._require(v.expr, ">=", "the argument of sqrt", v)
        elif name == "tan":
            self._require(sp.cos(v.expr), "!=", "cos of the argument of tan", v)
        out = Val(FUNCTIONS[name](v.expr), *_pos(meta))
        return Val(self._real(out.expr, out), *_pos(meta))
