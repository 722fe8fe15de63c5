"""The parse tree of a model file to the immutable :class:`proofkit.model.Model`.

Statements are processed in file order: names must be declared before they
are used (claims may name equilibria declared anywhere). Checks done here:
one ``state`` statement, one equation per state, no duplicate names, nominal
values inside parameter ranges, equilibria where ``f`` vanishes exactly, claims
that name declared equilibria, and the term-count limit of every expression.

This module must never evaluate model text: expressions are built by
:class:`proofkit.lang._expr.ExprBuilder` from the tree.
"""

from __future__ import annotations

import re
from typing import Any

import sympy as sp
from lark import Token, Tree

from proofkit.errors import InputError, SourceSpan
from proofkit.lang._checks import ModelChecker
from proofkit.lang._diagnostics import Located, closest, make_error
from proofkit.lang._expr import (
    FUNCTIONS,
    KIND_WORDS,
    MAX_EXPR_DEPTH,
    MAX_NODES,
    MAX_TERMS,
    Binding,
    ExprBuilder,
    Val,
    estimate_terms,
    expression_size,
    show,
)
from proofkit.lang._limits import MAX_CLAIMS, MAX_EQUILIBRIA, MAX_STATES
from proofkit.model import (
    Claim,
    Condition,
    Constant,
    Definedness,
    Equation,
    Equilibrium,
    Let,
    Model,
    Param,
    Region,
)

__all__ = ["build_model"]

_CONST = frozenset({"constant"})
_DYNAMIC = frozenset({"constant", "parameter", "state", "let"})
_POINT = frozenset({"constant", "parameter"})
_CLAIM_KINDS = {
    "claim_stable": "stable",
    "claim_unstable": "unstable",
    "claim_globally_stable": "globally stable",
    "claim_attracts": "attracts",
    "claim_no_cycle": "no cycle",
    "claim_cycle": "cycle",
}
_COMMENT = re.compile(r"#[^\n]*")


def _span(where: Located, meta: Any) -> SourceSpan:
    end = meta.end_column if meta.end_line == meta.line else None
    return where.span(meta.line, meta.column, end)


def _tok_span(where: Located, tok: Token) -> SourceSpan:
    return where.span(tok.line, tok.column, tok.end_column)


class _Builder:
    """Walks the statements of one file in order, keeping what is declared."""

    def __init__(self, where: Located, tree: Tree) -> None:
        self.where = where
        self.tree = tree
        self.env: dict[str, Binding] = {}
        self.first_decl = self._declarations(tree)
        self.builders: dict[tuple[frozenset[str], str], ExprBuilder] = {}
        self.name: str | None = None
        self.system_line: int | None = None
        self.states: list[str] | None = None
        self.state_tokens: list[Token] = []
        self.state_line: int | None = None
        self.equations: dict[str, Equation] = {}
        self.params: list[Param] = []
        self.constants: list[Constant] = []
        self.lets: list[Let] = []
        self.domain: Region | None = None
        self.domain_line: int | None = None
        self.equilibria: list[tuple[Equilibrium, Tree, tuple[Definedness, ...]]] = []
        self.claims: list[tuple[Claim, Token | None]] = []
        self.definedness: list[Definedness] = []
        self.last_definedness: tuple[Definedness, ...] = ()

    # --- helpers ---------------------------------------------------------------
    @staticmethod
    def _declarations(tree: Tree) -> dict[str, int]:
        first: dict[str, int] = {}
        for st in tree.children:
            if not isinstance(st, Tree):
                continue
            if st.data in ("constant", "parameter", "let", "equilibrium"):
                tok = st.children[0]
                first.setdefault(str(tok), tok.line)
            elif st.data == "state":
                for tok in st.children:
                    first.setdefault(str(tok), tok.line)
        return first

    def err(self, msg: str, tok_or_meta: Any, **kw: Any) -> InputError:
        t = tok_or_meta
        end = t.end_column if getattr(t, "end_line", t.line) == t.line else None
        return make_error(self.where, msg, t.line, t.column, end, **kw)

    def expr(self, tree: Any, allowed: frozenset[str], purpose: str) -> Val:
        key = (allowed, purpose)
        builder = self.builders.get(key)
        if builder is None:  # env and first_decl are shared, so one builder per use suffices
            builder = ExprBuilder(self.where, self.env, allowed, purpose, self.first_decl)
            self.builders[key] = builder
        v = builder.build(tree)
        self.last_definedness = tuple(dict.fromkeys(builder.definedness))
        end = v.end_column if v.end_line == v.line else None
        nodes, depth = expression_size(v.expr)
        if nodes > MAX_NODES or depth > MAX_EXPR_DEPTH:
            what = (
                f"more than {MAX_NODES} operations"
                if nodes > MAX_NODES
                else f"nesting deeper than {MAX_EXPR_DEPTH} levels"
            )
            raise make_error(
                self.where,
                f"this expression has {what} once its shorthands are substituted",
                v.line,
                v.column,
                end,
                hint="shorthands that use earlier shorthands several times grow quickly; "
                "simplify the model",
                limit=True,
            )
        if estimate_terms(v.expr) > MAX_TERMS:
            raise make_error(
                self.where,
                f"this expression could have more than {MAX_TERMS} terms once expanded",
                v.line,
                v.column,
                end,
                hint="use smaller powers or fewer factors",
                limit=True,
            )
        return v

    def constant(self, tree: Any, purpose: str) -> sp.Expr:
        return self.expr(tree, _CONST, purpose).expr

    def declare(
        self,
        tok: Token,
        kind: str,
        value: sp.Expr | None,
        definedness: tuple[Definedness, ...] = (),
    ) -> None:
        name = str(tok)
        if name in FUNCTIONS or name == "pi":
            what = "the constant pi" if name == "pi" else "a built-in function"
            raise self.err(
                f"'{name}' is {what} and cannot be declared as a name",
                tok,
                hint=f"choose another name, e.g. {name}_1",
            )
        old = self.env.get(name)
        if old is not None:
            raise self.err(
                f"'{name}' is already declared as {KIND_WORDS[old.kind]} on line {old.line}",
                tok,
                hint=f"each name is declared once; first declaration at "
                f"{self.where.file}:{old.line}:{old.column}",
            )
        self.env[name] = Binding(kind, value, tok.line, tok.column, definedness)

    # --- statements -----------------------------------------------------------
    def run(self) -> Model:
        for index, st in enumerate(self.tree.children):
            if isinstance(st, Tree):
                getattr(self, "st_" + st.data)(st, index)
        return self.finish()

    def st_system(self, st: Tree, index: int) -> None:
        tok = st.children[0]
        if self.system_line is not None:
            raise self.err(
                f"a second system statement (the first is on line {self.system_line})",
                st.meta,
                hint="a file describes one system; remove one of the two",
            )
        if index != 0:
            raise self.err(
                "the system statement must be the first statement of the file",
                st.meta,
                hint="move 'system ...' to the top (comments may come before it)",
            )
        self.name, self.system_line = str(tok), tok.line

    def st_constant(self, st: Tree, index: int) -> None:
        tok, body = st.children
        value = self.constant(body, "a constant")
        self.declare(tok, "constant", value)
        self.constants.append(Constant(str(tok), value, _span(self.where, st.meta)))

    def st_parameter(self, st: Tree, index: int) -> None:
        tok, body, *rng = st.children
        nominal = self.constant(body, "a parameter value")
        low = high = None
        if rng:
            low = self.constant(rng[0], "a parameter range")
            high = self.constant(rng[1], "a parameter range")
            if _leq(low, high) is False:
                raise self.err(
                    f"the range [{show(low)}, {show(high)}] of '{tok}' is empty (low > high)",
                    st.meta,
                    hint="write the range as [low, high]",
                )
            inside = (_leq(low, nominal), _leq(nominal, high))
            if None in inside and False not in inside:
                raise self.err(
                    f"cannot decide exactly whether the nominal value {show(nominal)} of "
                    f"'{tok}' lies in [{show(low)}, {show(high)}]",
                    st.meta,
                    hint="write the nominal value and the range as simpler exact numbers",
                )
            if False in inside:
                raise self.err(
                    f"the nominal value {show(nominal)} of '{tok}' is not in its range "
                    f"[{show(low)}, {show(high)}]",
                    st.meta,
                    hint="the nominal value must satisfy low <= nominal <= high",
                )
        sym = sp.Symbol(str(tok), real=True)
        self.declare(tok, "parameter", sym)
        self.params.append(Param(str(tok), nominal, low, high, _span(self.where, st.meta)))

    def st_state(self, st: Tree, index: int) -> None:
        if self.states is not None:
            raise self.err(
                f"a second state statement (the first is on line {self.state_line})",
                st.meta,
                hint="list all states in one statement: state x, y, ...",
            )
        if len(st.children) > MAX_STATES:
            raise self.err(
                f"{len(st.children)} states; the limit is {MAX_STATES}",
                st.children[MAX_STATES],
                hint="a model this large is beyond what the exact methods can analyse",
                limit=True,
            )
        for tok in st.children:
            self.declare(tok, "state", sp.Symbol(str(tok), real=True))
        self.states = [str(t) for t in st.children]
        self.state_tokens = list(st.children)
        self.state_line = st.meta.line

    def st_let(self, st: Tree, index: int) -> None:
        tok, body = st.children
        value = self.expr(body, _DYNAMIC, "a shorthand").expr
        self.declare(tok, "let", value, self.last_definedness)
        self.lets.append(Let(str(tok), value, _span(self.where, st.meta)))

    def st_equation(self, st: Tree, index: int) -> None:
        deriv, body = st.children
        name = str(deriv)
        tok = Token(  # the state name inside dNAME/dt, for carets
            "NAME",
            name,
            deriv.start_pos,
            deriv.line,
            deriv.column + 1,
            deriv.line,
            deriv.column + 1 + len(name),
        )
        binding = self.env.get(name)
        if binding is None or binding.kind != "state":
            if binding is not None:
                raise self.err(
                    f"'{name}' is {KIND_WORDS[binding.kind]}, not a state; only states "
                    "have equations",
                    tok,
                )
            if self.states is None:
                raise self.err(
                    f"equation for '{name}' before the state statement",
                    tok,
                    hint="declare the states first, e.g. state x, y",
                )
            guess = closest(name, self.states)
            raise self.err(
                f"'{name}' is not a state",
                tok,
                hint=f"did you mean '{guess}'?"
                if guess
                else f"the states are: {', '.join(self.states)}",
            )
        if name in self.equations:
            first = self.equations[name].span
            assert first is not None
            raise self.err(
                f"a second equation for '{name}' (the first is on line {first.line})",
                st.meta,
                hint=f"each state has exactly one equation; first one at {first}",
            )
        rhs = self.expr(body, _DYNAMIC, "an equation").expr
        self.definedness.extend(self.last_definedness)
        self.equations[name] = Equation(name, rhs, _span(self.where, st.meta))

    def region(self, st: Tree, purpose: str) -> Region:
        conditions: list[Condition] = []
        for cond in st.children:
            parts = cond.children
            values = [self.expr(p, _DYNAMIC, purpose).expr for p in parts[0::2]]
            ops = [str(o) for o in parts[1::2]]
            if len(ops) == 2 and (ops[0][0] != ops[1][0]):
                raise self.err(
                    "a chained condition must compare in one direction",
                    cond.meta,
                    hint="write a <= x <= b or a >= x >= b, or split it with 'and'",
                )
            span = _span(self.where, cond.meta)
            for i, op in enumerate(ops):
                conditions.append(Condition(values[i], op, values[i + 1], span))  # type: ignore[arg-type]
        return Region(tuple(conditions), _span(self.where, st.meta))

    def st_domain(self, st: Tree, index: int) -> None:
        if self.domain is not None:
            raise self.err(
                f"a second domain statement (the first is on line {self.domain_line})",
                st.meta,
                hint="join all conditions into one domain with 'and'",
            )
        self.domain = self.region(st.children[0], "a domain")
        self.domain_line = st.meta.line

    def st_equilibrium(self, st: Tree, index: int) -> None:
        tok, *assigns = st.children
        if self.states is None:
            raise self.err(
                "equilibrium before the state statement",
                st.meta,
                hint="declare the states first, e.g. state x, y",
            )
        given: dict[str, sp.Expr] = {}
        point_conditions: list[Definedness] = []
        for a in assigns:
            stok, body = a.children
            sname = str(stok)
            if sname not in self.states:
                guess = closest(sname, self.states)
                raise self.err(
                    f"'{sname}' is not a state",
                    stok,
                    hint=f"did you mean '{guess}'?"
                    if guess
                    else f"the states are: {', '.join(self.states)}",
                )
            if sname in given:
                raise self.err(f"'{sname}' is given twice in this point", stok)
            given[sname] = self.expr(body, _POINT, "an equilibrium point").expr
            point_conditions.extend(self.last_definedness)
        missing = [s for s in self.states if s not in given]
        if missing:
            raise self.err(
                f"the point '{tok}' does not give {', '.join(missing)}",
                st.meta,
                hint="give every state: " + ", ".join(f"{s} = ..." for s in self.states),
            )
        if len(self.equilibria) >= MAX_EQUILIBRIA:
            raise self.err(
                f"more than {MAX_EQUILIBRIA} equilibria; the limit is {MAX_EQUILIBRIA}",
                st.meta,
                hint="declare only the equilibria that claims are about",
                limit=True,
            )
        self.declare(tok, "equilibrium", None)
        fixed = {p.symbol: p.nominal for p in self.params if not p.is_uncertain}
        point = tuple((s, given[s].subs(fixed)) for s in self.states)
        own = tuple(dict.fromkeys(d.subs(fixed) for d in point_conditions))
        eq = Equilibrium(str(tok), point, _span(self.where, st.meta))
        self.equilibria.append((eq, st, own))

    def st_claim(self, st: Tree, index: int) -> None:
        if len(self.claims) >= MAX_CLAIMS:
            raise self.err(
                f"more than {MAX_CLAIMS} claims; the limit is {MAX_CLAIMS}",
                st.meta,
                hint="split the claims over several model files",
                limit=True,
            )
        body = st.children[0]
        at_nominal = len(st.children) > 1
        kind = _CLAIM_KINDS[body.data]
        target_tok = body.children[0] if isinstance(body.children[0], Token) else None
        sets = [c for c in body.children if isinstance(c, Tree)]
        region = self.region(sets[0], "a claim") if sets else None
        raw = self.where.text[body.meta.start_pos : st.meta.end_pos]
        text = " ".join(_COMMENT.sub(" ", raw).split())
        claim = Claim(
            kind,  # type: ignore[arg-type]
            text,
            str(target_tok) if target_tok is not None else None,
            region,
            at_nominal,
            _span(self.where, st.meta),
        )
        self.claims.append((claim, target_tok))

    # --- whole-file checks ---------------------------------------------------------
    def finish(self) -> Model:
        if self.states is None:
            raise make_error(
                self.where,
                "the model has no state statement",
                1,
                1,
                hint="declare the state variables, e.g. state x, y",
            )
        for tok in self.state_tokens:
            if str(tok) not in self.equations:
                raise self.err(
                    f"state '{tok}' has no equation",
                    tok,
                    hint=f"add a line d{tok}/dt = ... giving its time derivative",
                )
        equations = tuple(self.equations[s] for s in self.states)
        definedness = tuple(dict.fromkeys(self.definedness))
        self.check(equations, definedness)
        names = [e.name for e, _, _ in self.equilibria]
        for claim, _tok in self.claims:
            if claim.kind in ("cycle", "no cycle") and len(self.states) != 2:
                assert claim.span is not None
                raise make_error(
                    self.where,
                    f"a '{claim.kind}' claim is about planar systems, and this model has "
                    f"{len(self.states)} state{'s' if len(self.states) != 1 else ''}",
                    claim.span.line,
                    claim.span.column,
                    claim.span.end_column,
                    hint="periodic-orbit claims need exactly two states",
                )
        for claim, tok in self.claims:
            if tok is not None and claim.target not in names:
                guess = closest(str(tok), names)
                kind = self.env.get(str(tok))
                what = f"; '{tok}' is {KIND_WORDS[kind.kind]}" if kind else ""
                raise self.err(
                    f"the claim names '{tok}', which is not a declared equilibrium{what}",
                    tok,
                    hint=f"did you mean '{guess}'?"
                    if guess
                    else f"declare it: equilibrium {tok} at "
                    + ", ".join(f"{s} = ..." for s in self.states),
                )
        return Model(
            name=self.name,
            states=tuple(self.states),
            equations=equations,
            params=tuple(self.params),
            constants=tuple(self.constants),
            lets=tuple(self.lets),
            domain=self.domain,
            equilibria=tuple(e for e, _, _ in self.equilibria),
            claims=tuple(c for c, _ in self.claims),
            definedness=definedness,
            source=self.where.text,
            file=self.where.file,
        )

    def check(self, equations: tuple[Equation, ...], definedness: tuple[Definedness, ...]) -> None:
        """The exact whole-model checks (see :mod:`proofkit.lang._checks`)."""
        assert self.states is not None
        checker = ModelChecker(self.where, equations, self.params, definedness, self.domain)
        checker.parameters_only()
        for eq, st, own in self.equilibria:
            checker.equilibrium(eq, st.meta, own)
        if self.domain is not None and self.domain.span is not None:
            checker.defined_on(self.domain, self.states, "the domain", self.domain.span)
        for claim, _tok in self.claims:
            if claim.region is not None and claim.region.span is not None:
                checker.defined_on(claim.region, self.states, "the claim's set", claim.region.span)


def _leq(a: sp.Expr, b: sp.Expr) -> bool | None:
    """Exact ``a <= b`` for constant expressions (None when undecidable)."""
    try:
        d = sp.expand(b - a)
        if d.is_Rational:
            return bool(d >= 0)
        nonneg = d.is_nonnegative
    except (ValueError, TypeError, NotImplementedError, ArithmeticError):
        return None
    return None if nonneg is None else bool(nonneg)


def build_model(where: Located, tree: Tree) -> Model:
    """Build the Model of a parsed file (raises InputError on any semantic fault)."""
    return _Builder(where, tree).run()
