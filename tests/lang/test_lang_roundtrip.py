"""Property tests: random valid models parse to what they say, and print back exactly.

Each generated expression comes with the sympy value built directly by the
test (computed: sympy arithmetic), so the parser's meaning is checked
against an independent construction, not against itself. Then
``parse(format_model(m)) == m`` and printing is idempotent.
"""

from __future__ import annotations

from dataclasses import dataclass

import sympy as sp
from hypothesis import given
from hypothesis import strategies as st

from proofkit import parse
from proofkit.lang import format_expr, format_model

STATE_POOL = ["x", "y", "z", "theta", "q_2", "Vel", "dt", "dx"]
PARAM_POOL = ["a", "b", "k", "gain", "c1"]
CONST_POOL = ["g", "c0", "rho"]


@dataclass(frozen=True)
class Ex:
    text: str
    value: sp.Expr
    atomic: bool = False  # needs no parentheses anywhere


def sym(name: str) -> sp.Symbol:
    return sp.Symbol(name, real=True)


def numbers() -> st.SearchStrategy[Ex]:
    ints = st.integers(0, 12).map(lambda n: Ex(str(n), sp.Integer(n), True))
    fracs = st.tuples(st.integers(1, 9), st.integers(2, 9)).map(
        lambda pq: Ex(f"{pq[0]}/{pq[1]}", sp.Rational(pq[0], pq[1]))
    )
    decimals = st.tuples(st.integers(0, 99), st.integers(1, 3)).map(
        lambda nd: Ex(f"{nd[0] / 10 ** nd[1]:.{nd[1]}f}", sp.Rational(nd[0], 10 ** nd[1]), True)
    )
    sci = st.tuples(st.integers(1, 9), st.integers(-3, 3)).map(
        lambda me: Ex(f"{me[0]}e{me[1]}", sp.Rational(me[0]) * sp.Rational(10) ** me[1], True)
    )
    return st.one_of(ints, fracs, decimals, sci)


def paren(e: Ex) -> str:
    return e.text if e.atomic else f"({e.text})"


def sums_and_products(children: st.SearchStrategy[Ex]) -> st.SearchStrategy[Ex]:
    """``a + b``, ``a - b``, ``a * b`` with the value built by sympy arithmetic (computed)."""
    return st.tuples(children, st.sampled_from(["+", "-", "*"]), children).map(
        lambda t: Ex(
            f"{paren(t[0])} {t[1]} {paren(t[2])}",
            {
                "+": t[0].value + t[2].value,
                "-": t[0].value - t[2].value,
                "*": t[0].value * t[2].value,
            }[t[1]],
        )
    )


def expressions(leaves: st.SearchStrategy[Ex], max_leaves: int = 6) -> st.SearchStrategy[Ex]:
    def extend(children: st.SearchStrategy[Ex]) -> st.SearchStrategy[Ex]:
        binary = sums_and_products(children)
        power = st.tuples(children, st.integers(0, 3), st.sampled_from(["^", "**"])).map(
            lambda t: Ex(f"{paren(t[0])}{t[2]}{t[1]}", t[0].value ** t[1])
        )
        neg = children.map(lambda c: Ex(f"-{paren(c)}", -c.value))
        divide = st.tuples(children, st.integers(1, 7)).map(
            lambda t: Ex(f"{paren(t[0])}/{t[1]}", t[0].value / t[1])
        )
        return st.one_of(binary, power, neg, divide)

    return st.recursive(leaves, extend, max_leaves=max_leaves)


@st.composite
def models(draw: st.DrawFn) -> tuple[str, dict[str, sp.Expr]]:
    """Model text and the right-hand sides it must mean."""
    n = draw(st.integers(1, 3)) if draw(st.booleans()) else 2
    states = draw(st.permutations(STATE_POOL))[:n]
    params = draw(st.permutations(PARAM_POOL))[: draw(st.integers(0, 2))]
    consts = draw(st.permutations(CONST_POOL))[: draw(st.integers(0, 1))]
    lines: list[str] = []
    if draw(st.booleans()):
        lines.append(f"system {draw(st.sampled_from(['demo', 'plant_7', 'Loop']))}")
    leaves: list[st.SearchStrategy[Ex]] = [numbers()]
    for c in consts:
        e = draw(expressions(numbers(), 3))
        lines.append(f"constant {c} = {e.text}")
        leaves.append(st.just(Ex(c, e.value, True)))
    for p in params:
        nominal = draw(numbers())
        text = f"parameter {p} = {nominal.text}"
        if draw(st.booleans()):
            lo, hi = draw(st.integers(0, 3)), draw(st.integers(0, 3))
            text += f" in [{nominal.text} - {lo}, {nominal.text} + {hi}]"
        lines.append(text)
        leaves.append(st.just(Ex(p, sym(p), True)))
    lines.append("state " + ", ".join(states))
    leaves += [st.just(Ex(s, sym(s), True)) for s in states]
    if draw(st.booleans()):
        e = draw(expressions(st.one_of(leaves), 4))
        lines.append(f"let r = {e.text}")
        leaves.append(st.just(Ex("r", e.value, True)))
    leaf = st.one_of(leaves)
    expected: dict[str, sp.Expr] = {}
    for s in states:
        # every term carries a state, so the origin is an equilibrium
        terms = [draw(expressions(leaf)) for _ in range(draw(st.integers(1, 2)))]
        carriers = [draw(st.sampled_from(states)) for _ in terms]
        pairs = list(zip(terms, carriers, strict=True))
        lines.append(f"d{s}/dt = " + " + ".join(f"({t.text})*{c}" for t, c in pairs))
        expected[s] = sp.Add(*[t.value * sym(c) for t, c in pairs])
    region = st.tuples(
        expressions(leaf, 4), st.sampled_from(["<=", "<", ">=", ">"]), expressions(leaf, 3)
    )

    def set_text() -> str:
        conds = draw(st.lists(region, min_size=1, max_size=2))
        return " and ".join(f"{a.text} {op} {b.text}" for a, op, b in conds)

    def domain_text() -> str:
        # every term on the state side carries a state, so the origin (the declared
        # equilibrium) lies in the domain for every parameter value
        conds = []
        for _ in range(draw(st.integers(1, 2))):
            a, b = draw(expressions(leaf, 3)), draw(expressions(leaf, 3))
            side = f"({a.text})*{draw(st.sampled_from(states))}"
            if draw(st.booleans()):
                conds.append(f"{side} {draw(st.sampled_from(['<=', '<']))} ({b.text})^2 + 1")
            else:
                conds.append(f"({b.text})^2 + 1 {draw(st.sampled_from(['>=', '>']))} {side}")
        return " and ".join(conds)

    if draw(st.booleans()):
        lines.append(f"domain {domain_text()}")
    lines.append("equilibrium O at " + ", ".join(f"{s} = 0" for s in states))
    kinds = ["stable", "unstable", "globally stable", "attracts"]
    if n == 2:
        kinds += ["no cycle", "cycle"]  # periodic-orbit claims are for planar models
    for kind in draw(st.lists(st.sampled_from(kinds), max_size=4)):
        suffix = " at nominal" if draw(st.booleans()) else ""
        if kind in ("stable", "unstable", "globally stable"):
            lines.append(f"claim O {kind}{suffix}")
        elif kind == "attracts":
            lines.append(f"claim O attracts {set_text()}{suffix}")
        else:
            lines.append(f"claim {kind} in {set_text()}{suffix}")
    decorated = [line + ("   # note" if draw(st.booleans()) else "") for line in lines]
    return "\n".join(decorated) + "\n", expected


@given(models())
def test_random_models_mean_what_they_say_and_round_trip(case: tuple[str, dict]) -> None:
    text, expected = case
    m = parse(text)
    for eq in m.equations:
        assert sp.cancel(eq.rhs - expected[eq.state]) == 0, (eq.state, text)
    printed = format_model(m)
    again = parse(printed)
    assert again == m, printed
    assert format_model(again) == printed


@given(
    expressions(
        st.one_of(numbers(), st.sampled_from([Ex("x", sym("x"), True), Ex("y", sym("y"), True)])), 8
    )
)
def test_expression_printer_round_trips(e: Ex) -> None:
    m = parse(f"state x, y\ndx/dt = {e.text}\ndy/dt = 0\n")
    rhs = m.equations[0].rhs
    assert sp.expand(rhs - e.value) == 0
    back = parse(f"state x, y\ndx/dt = {format_expr(rhs)}\ndy/dt = 0\n").equations[0].rhs
    assert back == rhs
    assert "**" not in format_expr(rhs)


FUNCTION_NAMES = ["sin", "cos", "tan", "exp", "log", "sqrt", "tanh", "abs"]
SYMPY_FUNCTIONS = {
    "sin": sp.sin,
    "cos": sp.cos,
    "tan": sp.tan,
    "exp": sp.exp,
    "log": sp.log,
    "sqrt": sp.sqrt,
    "tanh": sp.tanh,
    "abs": sp.Abs,
}


def with_functions() -> st.SearchStrategy[Ex]:
    base = st.one_of(
        numbers(),
        st.sampled_from([Ex("x", sym("x"), True), Ex("y", sym("y"), True), Ex("pi", sp.pi, True)]),
    )

    def extend(children: st.SearchStrategy[Ex]) -> st.SearchStrategy[Ex]:
        # log and sqrt get positive arguments so every value stays real
        call = st.tuples(st.sampled_from(FUNCTION_NAMES), children).map(
            lambda t: (
                Ex(f"{t[0]}({paren(t[1])}^2 + 1)", SYMPY_FUNCTIONS[t[0]](t[1].value ** 2 + 1), True)
                if t[0] in ("log", "sqrt")
                else Ex(f"{t[0]}({t[1].text})", SYMPY_FUNCTIONS[t[0]](t[1].value), True)
            )
        )
        binary = sums_and_products(children)
        power = st.tuples(children, st.integers(-2, 3)).map(
            lambda t: Ex(f"{paren(t[0])}^({t[1]})", t[0].value ** t[1])
        )
        return st.one_of(call, binary, power)

    return st.recursive(base, extend, max_leaves=6)


@given(with_functions())
def test_expressions_with_functions_round_trip(e: Ex) -> None:
    text = f"state x, y\ndx/dt = {e.text}\ndy/dt = 0\n"
    from proofkit.errors import InputError

    try:  # any exception but InputError propagates and fails the test
        m = parse(text)
    except InputError:  # e.g. 0^(-1) or tan at a pole: a clean refusal is a correct outcome
        m = None
    if m is not None:
        rhs = m.equations[0].rhs
        assert rhs == e.value or sp.simplify(rhs - e.value) == 0
        back = parse(f"state x, y\ndx/dt = {format_expr(rhs)}\ndy/dt = 0\n")
        assert back.equations[0].rhs == rhs, format_expr(rhs)


def test_worked_models_and_the_spec_example_round_trip() -> None:
    from pathlib import Path

    root = Path(__file__).resolve().parents[2]
    spec = (root / "grammar" / "LANGUAGE.md").read_text()
    example = spec.split("```\n", 2)[1]  # the example block of the language page
    assert "system glider_pitch" in example
    texts = [p.read_text() for p in sorted((root / "worked").glob("*.pk"))] + [example]
    for text in texts:
        m = parse(text)
        printed = format_model(m)
        assert parse(printed) == m, printed
