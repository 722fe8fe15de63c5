"""The model language: every statement, expressions, exact numbers, sets and claims.

Check values are facts of arithmetic and of the language contract
(grammar/LANGUAGE.md); expected sympy objects are built directly.
"""

from __future__ import annotations

import sympy as sp

from proofkit import parse
from proofkit.lang import format_expr

x, y = sp.Symbol("x", real=True), sp.Symbol("y", real=True)
k = sp.Symbol("k", real=True)


def rhs(expr_text: str, extra: str = "") -> sp.Expr:
    """The right-hand side of dx/dt in a one-state model (with optional declarations)."""
    m = parse(f"{extra}state x, y\ndx/dt = {expr_text}\ndy/dt = 0\n")
    return m.equations[0].rhs


def const(value_text: str) -> sp.Expr:
    return parse(f"constant c = {value_text}\nstate x\ndx/dt = -x\n").constants[0].value


# --- exact numbers (common practice: decimal literals are exact decimal fractions) ---
def test_decimals_are_exact_rationals() -> None:
    assert const("0.1") == sp.Rational(1, 10)
    assert isinstance(const("0.1"), sp.Rational)
    assert const("2.5e-3") == sp.Rational(1, 400)
    assert const("1e3") == 1000
    assert const("1.25E+2") == 125
    assert const(".5") == sp.Rational(1, 2)
    assert const("5.") == 5
    assert const("0.1 + 0.2") == sp.Rational(3, 10)  # exactly, unlike binary floats
    assert const("1/3") == sp.Rational(1, 3)
    assert const("123456789012345678901234567890.5") == sp.Rational(
        246913578024691357802469135781, 2
    )


def test_no_float_enters_a_model() -> None:
    m = parse(
        "constant g = 9.81\nparameter a = 0.4 in [0.25, 1e0]\nstate x\ndx/dt = -a*x + g*1e-2\n"
    )
    for c in m.constants:
        assert not c.value.has(sp.Float)
    assert m.params[0].nominal == sp.Rational(2, 5)
    assert m.params[0].low == sp.Rational(1, 4)
    assert not m.equations[0].rhs.has(sp.Float)
    assert m.equations[0].rhs == -sp.Symbol("a", real=True) * x + sp.Rational(981, 10000)


# --- expressions: precedence and associativity (common practice, as in mathematics) ---
def test_power_binds_tighter_than_unary_minus() -> None:
    assert rhs("-x^2") == -(x**2)
    assert const("-2^2") == -4
    assert const("(-2)^2") == 4


def test_power_is_right_associative_and_double_star_is_a_synonym() -> None:
    assert const("2^3^2") == 512
    assert const("2**3**2") == 512
    assert const("(2^3)^2") == 64
    assert rhs("x**3") == x**3


def test_left_associative_minus_and_division() -> None:
    assert const("10 - 4 - 3") == 3
    assert const("24/4/2") == 3
    assert const("2 + 3*4") == 14
    assert const("(2 + 3)*4") == 20
    assert rhs("x/y/2") == x / (2 * y)


def test_negative_and_fractional_exponents() -> None:
    assert rhs("x^-1") == 1 / x
    assert rhs("x^(1/2)") == sp.sqrt(x)
    assert const("4^(1/2)") == 2
    assert const("8^(-1/3)") == sp.Rational(1, 2)


def test_unary_signs() -> None:
    assert rhs("- -x") == x
    assert rhs("+x - +y") == x - y
    assert rhs("-x*y") == -x * y


def test_functions_and_pi() -> None:
    assert rhs("sin(x) + cos(y) + tan(x) + exp(y) + log(2) + sqrt(x) + tanh(y) + abs(x)") == (
        sp.sin(x)
        + sp.cos(y)
        + sp.tan(x)
        + sp.exp(y)
        + sp.log(2)
        + sp.sqrt(x)
        + sp.tanh(y)
        + sp.Abs(x)
    )
    assert const("sin(pi/6)") == sp.Rational(1, 2)
    assert const("2*pi") == 2 * sp.pi


def test_symbols_are_real() -> None:
    m = parse("parameter k = 1\nstate x\ndx/dt = -k*x\n")
    for s in m.equations[0].rhs.free_symbols:
        assert s.is_real


# --- statements -----------------------------------------------------------------------
def test_every_statement() -> None:
    text = """
# a comment line
system demo_1   # trailing comment
constant c = 3/2
parameter k = 2 in [1, 3]
parameter d = 1/2
state x, y
let r = c*x - x^3
dx/dt = y
dy/dt = -r - d*y + k*0
domain x^2 <= 4 and y^2 < 9
equilibrium O at x = 0, y = 0
claim O stable
claim O unstable
claim O globally stable
claim O attracts x^2 + y^2 <= 1/2 at nominal
claim no cycle in x^2 + y^2 <= 3
claim cycle in 1 <= x^2 + y^2 <= 4
"""
    m = parse(text, name="demo.pk")
    assert m.name == "demo_1"
    assert m.file == "demo.pk" and m.source == text
    assert m.states == ("x", "y")
    assert [(c.name, c.value) for c in m.constants] == [("c", sp.Rational(3, 2))]
    assert [(p.name, p.nominal, p.low, p.high) for p in m.params] == [
        ("k", 2, 1, 3),
        ("d", sp.Rational(1, 2), None, None),
    ]
    assert m.params[0].is_uncertain and not m.params[1].is_uncertain
    assert m.lets[0].name == "r" and m.lets[0].expr == sp.Rational(3, 2) * x - x**3
    d = sp.Symbol("d", real=True)
    assert m.field == (y, -(sp.Rational(3, 2) * x - x**3) - d * y)
    assert m.domain is not None
    assert [(c.lhs, c.op, c.rhs) for c in m.domain] == [(x**2, "<=", 4), (y**2, "<", 9)]
    assert m.equilibria[0].as_dict() == {"x": 0, "y": 0}
    kinds = [c.kind for c in m.claims]
    assert kinds == ["stable", "unstable", "globally stable", "attracts", "no cycle", "cycle"]
    assert [c.target for c in m.claims] == ["O", "O", "O", "O", None, None]
    attracts = m.claims[3]
    assert attracts.at_nominal and attracts.text == "O attracts x^2 + y^2 <= 1/2 at nominal"
    assert attracts.region is not None
    assert [(c.lhs, c.op, c.rhs) for c in attracts.region] == [
        (x**2 + y**2, "<=", sp.Rational(1, 2))
    ]
    cycle = m.claims[5]
    assert cycle.region is not None
    assert [(c.lhs, c.op, c.rhs) for c in cycle.region] == [
        (1, "<=", x**2 + y**2),
        (x**2 + y**2, "<=", 4),
    ]
    # spans point at the statements
    assert m.equations[1].span is not None and m.equations[1].span.line == 10
    assert m.claims[0].span is not None and m.claims[0].span.line == 13


def test_equations_are_stored_in_state_order() -> None:
    m = parse("state a, b\ndb/dt = a\nda/dt = -b\n")
    assert [e.state for e in m.equations] == ["a", "b"]


def test_system_is_optional() -> None:
    m = parse("state x\ndx/dt = -x\n")
    assert m.name is None and m.claims == () and m.domain is None


def test_let_substitutes_and_chains() -> None:
    m = parse("state x\nlet a = x + 1\nlet b = a^2\ndx/dt = -b\n")
    assert m.equations[0].rhs == -((x + 1) ** 2)


def test_constant_uses_earlier_constants() -> None:
    m = parse("constant a = 2\nconstant b = a^2 + 1\nstate x\ndx/dt = -b*x\n")
    assert m.constants[1].value == 5 and m.equations[0].rhs == -5 * x


def test_equilibrium_moving_with_a_parameter() -> None:
    m = parse(
        "parameter k = 1 in [1/2, 2]\nstate s, w\nds/dt = w\ndw/dt = -k*s - w + s^2\n"
        "equilibrium J at s = k, w = 0\n"
    )
    assert m.equilibria[0].as_dict() == {"s": k, "w": 0}


def test_equilibrium_with_exact_irrational_point() -> None:
    m = parse("state x\ndx/dt = x - x^3/2\nequilibrium R at x = sqrt(2)\n")
    assert m.equilibria[0].as_dict() == {"x": sp.sqrt(2)}


def test_param_range_may_be_a_single_point_and_use_constants() -> None:
    m = parse("constant a = 2\nparameter k = a in [a, 2*a]\nstate x\ndx/dt = -k*x\n")
    assert (m.params[0].nominal, m.params[0].low, m.params[0].high) == (2, 2, 4)
    m = parse("parameter k = 1 in [1, 1]\nstate x\ndx/dt = -k*x\n")
    assert m.params[0].low == m.params[0].high == 1


# --- lexical rules ---------------------------------------------------------------------
def test_line_continuation_inside_parentheses_and_after_operators() -> None:
    m = parse(
        "parameter k = 2 in\n  [1,\n   3]\nstate x, y\n"
        "dx/dt = (y +\n  x)\n"
        "dy/dt = -x -   # a comment on a continued line\n   y*k\n"
        "domain x^2 <= 1 and\n  y^2 <= 1\n"
    )
    assert m.equations[0].rhs == x + y
    assert m.equations[1].rhs == -x - k * y
    assert m.domain is not None and len(m.domain.conditions) == 2
    assert m.params[0].high == 3


def test_crlf_tabs_and_blank_lines() -> None:
    m = parse("\r\n\tstate x\r\n\r\ndx/dt\t=\t-x # c\r\n\n\n")
    assert m.equations[0].rhs == -x


def test_names_are_case_sensitive() -> None:
    m = parse("state x, X\ndx/dt = X\ndX/dt = -x\n")
    assert m.states == ("x", "X")


def test_claim_text_is_as_written_without_comments() -> None:
    m = parse(
        "state x, y\ndx/dt = -x\ndy/dt = -y\nequilibrium O at x = 0, y = 0\n"
        "claim O attracts x^2 +   # keep going\n   y^2 <= 1\n"
    )
    assert m.claims[0].text == "O attracts x^2 + y^2 <= 1"


def test_format_expr_writes_language_syntax() -> None:
    # computed: the printed text must use the language's own spellings
    assert format_expr(sp.Abs(x) + x**2) == "x^2 + abs(x)"
    assert format_expr(-(x**2) / 3) == "-x^2/3"
    assert format_expr(sp.sqrt(x)) == "sqrt(x)"
    assert format_expr(1 / (2 * y)) == "1/(2*y)"
    assert format_expr(sp.exp(1)) == "exp(1)"
    assert format_expr(sp.Rational(-1, 3)) == "-1/3"
    assert format_expr((x + 1) ** 2) == "(x + 1)^2"
    assert format_expr(x ** sp.Rational(3, 2)) == "x^(3/2)"


def test_sympy_rewrites_print_back_to_the_same_value() -> None:
    # computed: sympy turns tan(x + pi/2) into -cot(x); the text must mean the same
    m = parse("state x\ndx/dt = tan(x + pi/2) + tan(pi/2 - 2*x)\n")
    text = format_expr(m.equations[0].rhs)
    assert "cot" not in text
    again = parse(f"state x\ndx/dt = {text}\n")
    assert again.equations[0].rhs == m.equations[0].rhs
