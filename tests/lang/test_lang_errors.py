"""Every kind of input error: file, line, column, the caret, plain words and the hint.

The expected positions are counted by hand from the test texts (common
practice: 1-based lines and columns, as compilers report them).
"""

from __future__ import annotations

import pytest
import sympy as sp

from proofkit import load, parse
from proofkit.errors import InputError, LimitError


def fails(
    text: str,
    line: int,
    column: int,
    message: str,
    hint: str | None = None,
    *,
    width: int | None = None,
    limit: bool = False,
) -> InputError:
    """Assert that ``text`` fails at line:column with the message, caret and hint."""
    with pytest.raises(InputError) as info:
        parse(text, name="m.pk")
    err = info.value
    assert isinstance(err, LimitError) == limit, str(err)
    assert err.span is not None, str(err)
    assert (err.span.file, err.span.line, err.span.column) == ("m.pk", line, column), str(err)
    assert message in err.message, str(err)
    rendered = str(err).splitlines()
    assert rendered[0].startswith(f"m.pk:{line}:{column}: error: ")
    source = text.split("\n")[line - 1].rstrip("\r")
    caret = rendered[2]
    if len(source) <= 120:
        assert rendered[1] == "    " + source
        assert caret.startswith("    " + " " * (column - 1) + "^"), str(err)
    else:  # a long line is shown around the fault; the caret is under the same character
        at = caret.index("^")
        assert rendered[1][at] == source[column - 1], str(err)
    if width is not None:
        assert caret.strip() == "^" * width, str(err)
    if hint is None:  # no hint required; one that is given must be shown and say something
        if err.hint is not None:
            assert err.hint.strip() and rendered[-1] == f"hint: {err.hint}", str(err)
    else:
        assert err.hint is not None and hint in err.hint, str(err)
        assert rendered[-1] == f"hint: {err.hint}"
    return err


# --- syntax -------------------------------------------------------------------------------
def test_implicit_multiplication() -> None:
    err = fails(
        "state x\ndx/dt = 2x\n", 2, 10, "a number directly followed by the name 'x'", "2*x", width=1
    )
    assert "expected an operator or the end of the line" in err.message


def test_implicit_multiplication_before_parenthesis() -> None:
    fails("state x\ndx/dt = 3(x + 1)\n", 2, 10, "directly followed by '('", "3*(")


def test_missing_operator_between_names() -> None:
    fails("state x, y\ndx/dt = x y\ndy/dt = 0\n", 2, 11, "expected an operator", "x*y")


def test_incomplete_line_after_operator_at_end_of_file() -> None:
    fails(
        "state x\ndx/dt = x +\n",
        2,
        12,
        "expected a number, a name or '(', found the end of the file",
        "incomplete",
    )


def test_unclosed_parenthesis() -> None:
    fails("state x\ndx/dt = (x + 1\n", 2, 15, "expected an operator or ')'", "incomplete")


def test_reserved_word_as_name() -> None:
    fails("state in, x\n", 1, 7, "expected a name, found the word 'in'", "reserved word", width=2)


def test_equals_in_a_set() -> None:
    fails("state x\ndx/dt = -x\ndomain x = 1\n", 3, 10, "found '='", "<=, <, >= or >")


def test_misspelt_statement_word() -> None:
    fails("stat x\n", 1, 1, "found the name 'stat'", "did you mean 'state'?", width=4)


def test_assignment_instead_of_equation() -> None:
    fails("state x\nx = 1\n", 2, 1, "found the name 'x'", "written dx/dt = ...; a constant")


def test_statement_shape_hints() -> None:
    fails("state x y\n", 1, 9, "expected ',' or the end of the line", "separate the names")
    fails("state x\nx'' = 1\n", 2, 1, "a prime derivative is not part", "first order", width=3)
    fails("state x\nd/dt = 1\n", 2, 1, "found the name 'd'", "derivative of x as dx/dt")
    fails("state x\ndx/dt == 1\n", 2, 8, "found '='")
    err = fails(
        "state x\ndx/dt = -x\nequilibrium E at x = 0\nclaim E is stable\n",
        4,
        9,
        "expected 'attracts', 'globally', 'stable' or 'unstable', found the name 'is'",
    )
    assert "operator" not in (err.hint or "")


def test_bracket_hints_and_statement_start() -> None:
    fails(
        "state x\ndx/dt = x)\n",
        2,
        10,
        "expected an operator or the end of the line, found ')'",
        "no matching opening bracket",
    )
    fails("state x\ndx/dt = [x]\n", 2, 9, "found '['", "parentheses")
    fails("3 = x\n", 1, 1, "expected a statement (system, constant, parameter, state")


def test_caret_lines_up_under_tabs() -> None:
    with pytest.raises(InputError) as info:
        parse("state x\ndx/dt\t=\t2x\n", name="m.pk")
    lines = str(info.value).splitlines()
    assert lines[1] == "    dx/dt = 2x"
    assert lines[2] == "    " + " " * 9 + "^"


def test_unexpected_character() -> None:
    fails("state x; dx/dt = -x\n", 1, 8, "unexpected character ';'", "one statement per line")
    fails("state x\ndx/dt = x & 1\n", 2, 11, "unexpected character '&'", "'and'")


def test_typographic_characters_are_named_with_code_point() -> None:
    err = fails("state x\ndx/dt = \u2212x\n", 2, 9, "minus sign (U+2212)", "'-'")
    assert "ASCII" in err.message
    fails("state x\ndx/dt = 2\u00d7x\n", 2, 10, "multiplication sign (U+00D7)", "'*'")
    fails("state x\ndx/dt = x\u00f72\n", 2, 10, "division sign (U+00F7)", "'/'")
    fails("state x\nx\u2019 = -x\n", 2, 2, "right single quotation mark (U+2019)", '"\'"')
    fails("state x\ndx/dt = \u201cx\u201d\n", 2, 9, "left double quotation mark (U+201C)", "'\"'")
    fails("state x\ndx/dt =\u00a0-x\n", 2, 8, "no-break space (U+00A0)", "ordinary space")
    fails("state \u00e9\n", 1, 7, "(latin small letter e with acute, U+00E9)", "ASCII letters")
    fails("state x\u0000\n", 1, 8, "control character U+0000", "remove")


# --- names ----------------------------------------------------------------------------------
def test_unknown_name_suggests_closest() -> None:
    fails(
        "parameter damping = 1\nstate x, y\ndx/dt = y\ndy/dt = -x - dampng*y\n",
        4,
        14,
        "unknown name 'dampng'",
        "did you mean 'damping'?",
        width=6,
    )


def test_name_declared_later() -> None:
    fails(
        "state x, y\ndx/dt = y\ndy/dt = -x - damping*y\nparameter damping = 1\n",
        3,
        14,
        "'damping' is used before it is declared (on line 4)",
        "move the declaration",
    )


def test_name_in_its_own_definition() -> None:
    fails("state x\nlet a = a + x\ndx/dt = -x\n", 2, 9, "'a' cannot be used in its own definition")


def test_python_builtins_are_unknown_names() -> None:
    fails(
        'state x\ndx/dt = __import__("os")\n',
        2,
        9,
        "unknown name '__import__'",
        "known functions",
        width=10,
    )
    fails("state x\ndx/dt = eval(x)\n", 2, 9, "unknown name 'eval'")


def test_unknown_function_suggests_closest() -> None:
    fails("state x\ndx/dt = sinn(x)\n", 2, 9, "unknown name 'sinn'", "did you mean 'sin'?")


def test_function_name_used_as_variable() -> None:
    fails("state x\ndx/dt = sin*x\n", 2, 9, "'sin' is a function", "sin(x)", width=3)


def test_variable_called_like_a_function() -> None:
    fails("state x\ndx/dt = x(2)\n", 2, 9, "'x' is a state, not a function", "x*(...)")


def test_function_arity_and_quoted_argument() -> None:
    fails("state x\ndx/dt = sin(x, x)\n", 2, 9, "sin takes exactly one argument, got 2")
    fails("state x\ndx/dt = sin()\n", 2, 9, "sin takes exactly one argument, got 0")
    fails('state x\ndx/dt = sin("x")\n', 2, 13, "quoted text is not part of the language")


def test_builtin_names_cannot_be_declared() -> None:
    fails("constant pi = 3\nstate x\ndx/dt = -x\n", 1, 10, "'pi' is the constant pi", "pi_1")
    fails("state exp\ndexp/dt = 1\n", 1, 7, "'exp' is a built-in function")


def test_duplicate_name_points_at_first_declaration() -> None:
    fails(
        "parameter a = 1\nconstant a = 2\nstate x\ndx/dt = -x\n",
        2,
        10,
        "'a' is already declared as a parameter on line 1",
        "m.pk:1:11",
    )


def test_wrong_kind_of_name() -> None:
    fails(
        "state x\nconstant c = x\ndx/dt = -x\n",
        2,
        14,
        "'x' is a state, which a constant cannot use",
        "constants",
    )
    fails("parameter k = 1\nparameter j = k\nstate x\ndx/dt = -x\n", 2, 15, "'k' is a parameter")
    fails(
        "state x\ndx/dt = -x\nequilibrium O at x = 0\nclaim O attracts O <= 1\n",
        4,
        18,
        "'O' is an equilibrium",
    )
    fails("state x\ndx/dt = -x\nequilibrium O at x = x\n", 3, 22, "'x' is a state")


# --- statements -------------------------------------------------------------------------
def test_state_without_equation() -> None:
    fails("state x, y\ndx/dt = y\n", 1, 10, "state 'y' has no equation", "dy/dt = ...")


def test_duplicate_equation() -> None:
    fails(
        "state x\ndx/dt = -x\ndx/dt = x\n",
        3,
        1,
        "a second equation for 'x' (the first is on line 2)",
        "m.pk:2:1",
    )


def test_equation_for_non_state() -> None:
    fails(
        "parameter k = 1\nstate x\ndx/dt = -x\ndk/dt = 1\n", 4, 2, "'k' is a parameter, not a state"
    )
    fails("state speed\ndsped/dt = 1\n", 2, 2, "'sped' is not a state", "did you mean 'speed'?")
    fails(
        "dx/dt = 1\nstate x\n",
        1,
        2,
        "equation for 'x' before the state statement",
        "declare the states first",
    )


def test_missing_and_second_state_statement() -> None:
    fails("constant a = 1\n", 1, 1, "the model has no state statement", "state x, y")
    fails("", 1, 1, "the model has no state statement")
    fails(
        "state x\nstate y\ndx/dt = -x\ndy/dt = -y\n",
        2,
        1,
        "a second state statement",
        "one statement",
    )


def test_system_must_be_first_and_single() -> None:
    fails("state x\nsystem foo\ndx/dt = -x\n", 2, 1, "must be the first statement", "top")
    fails("system a\nsystem b\nstate x\ndx/dt = -x\n", 2, 1, "a second system statement")


def test_second_domain() -> None:
    fails(
        "state x\ndx/dt = -x\ndomain x <= 1\ndomain x >= -1\n",
        4,
        1,
        "a second domain statement",
        "'and'",
    )


def test_nominal_outside_range() -> None:
    fails(
        "parameter a = 5 in [1, 3]\nstate x\ndx/dt = -a*x\n",
        1,
        1,
        "the nominal value 5 of 'a' is not in its range [1, 3]",
        "low <= nominal <= high",
    )
    fails("parameter a = 2 in [3, 1]\nstate x\ndx/dt = -a*x\n", 1, 1, "is empty", "[low, high]")


def test_equilibrium_residual_is_shown_per_state() -> None:
    err = fails(
        "state x, y\ndx/dt = y - 1\ndy/dt = x\nequilibrium E at x = 0, y = 0\n",
        4,
        1,
        "'E' is not an equilibrium",
        "exactly 0",
    )
    assert "residual dx/dt = -1, dy/dt = 0" in err.message


def test_equilibrium_must_hold_for_every_parameter_value() -> None:
    err = fails(
        "parameter k = 1 in [1/2, 2]\nstate x\ndx/dt = x - k\nequilibrium E at x = 1\n",
        4,
        1,
        "'E' is not an equilibrium",
        "for every value of the uncertain ones",
    )
    # computed by hand: the residual 1 - k at the midpoint k = 5/4 of the range is -1/4
    assert "dx/dt = 1 - k" in err.message and "at k = 5/4, dx/dt is -1/4" in err.message


def test_equilibrium_point_must_give_every_state_once() -> None:
    fails(
        "state x, y\ndx/dt = -x\ndy/dt = -y\nequilibrium E at x = 0\n",
        4,
        1,
        "does not give y",
        "x = ..., y = ...",
    )
    fails("state x\ndx/dt = -x\nequilibrium E at x = 0, x = 0\n", 3, 25, "'x' is given twice")
    fails(
        "state x\ndx/dt = -x\nequilibrium E at y = 0\n",
        3,
        18,
        "'y' is not a state",
        "the states are: x",
    )


def test_claim_must_name_declared_equilibrium() -> None:
    fails(
        "state x\ndx/dt = -x\nequilibrium origin at x = 0\nclaim orign stable\n",
        4,
        7,
        "'orign', which is not a declared equilibrium",
        "did you mean 'origin'?",
    )
    fails("state x\ndx/dt = -x\nclaim x stable\n", 3, 7, "'x' is a state", "equilibrium x at")


def test_cycle_claims_need_a_planar_model() -> None:
    fails(
        "state x\ndx/dt = -x\nclaim no cycle in x^2 <= 1\n",
        3,
        1,
        "'no cycle' claim is about planar systems, and this model has 1 state",
        "two states",
    )
    fails(
        "state x, y, z\ndx/dt = -x\ndy/dt = -y\ndz/dt = -z\nclaim cycle in x^2 <= 1\n",
        5,
        1,
        "has 3 states",
    )


def test_chained_condition_must_keep_direction() -> None:
    fails("state x\ndx/dt = -x\ndomain 0 < x > 1\n", 3, 8, "one direction", "a <= x <= b")


def test_non_real_values() -> None:
    fails("state x\ndx/dt = x/0\n", 2, 11, "division by zero", width=1)
    fails("state x\ndx/dt = sqrt(-1)*x\n", 2, 14, "sqrt of a negative number")
    fails("state x\ndx/dt = log(0)*x\n", 2, 13, "log(0)")
    fails("state x\ndx/dt = (-8)^(1/3)*x\n", 2, 10, "negative number raised to a fractional power")
    fails("state x\ndx/dt = 0^(-1)*x\n", 2, 9, "zero raised to a negative power")


def test_exponent_must_be_a_rational_constant() -> None:
    fails("state x\ndx/dt = 2^x\n", 2, 11, "an exponent must be a constant", "exp(...)")
    fails("state x\ndx/dt = x^pi\n", 2, 11, "not a rational number")


# --- limits ----------------------------------------------------------------------------------
def test_exponent_limit() -> None:
    fails("state x\ndx/dt = x^65\n", 2, 11, "exceeds the limit of 64", limit=True, width=2)
    fails("state x\ndx/dt = x^(-65)\n", 2, 12, "exceeds the limit of 64", limit=True)
    parse("state x\ndx/dt = x^64 - x^(-64)\n")  # the limit itself is allowed


def test_term_count_limit_without_expanding() -> None:
    # computed: (x+y+z+1)^60 has comb(63, 3) = 39711 terms, more than 10 000
    fails(
        "state x, y, z\nlet a = (x+y+z+1)^60\ndx/dt = a\ndy/dt = 0\ndz/dt = 0\n",
        2,
        9,
        "more than 10000 terms",
        "smaller powers",
        limit=True,
    )
    # a product of powers that would explode: refused by counting, instantly
    fails(
        "state x, y, z\nlet a = (x+y+z+1)^30\ndx/dt = a*a*a\ndy/dt = 0\ndz/dt = 0\n",
        3,
        9,
        "more than 10000 terms",
        limit=True,
    )
    # computed: (x + y)^64 has 65 terms, well within the limit
    parse("state x, y\ndx/dt = (x + y)^64\ndy/dt = 0\n")


def test_nesting_limit() -> None:
    deep = "-(" * 150 + "x" + ")" * 150
    err = fails(f"state x\ndx/dt = {deep}\n", 2, 210, "nested more than 100 levels", limit=True)
    assert "let" in (err.hint or "")
    # without parentheses the expression tree itself is measured
    fails(
        "state x\ndx/dt = " + "-" * 150 + "x\n", 2, 110, "nested more than 100 levels", limit=True
    )
    parse("state x\ndx/dt = " + "-(" * 40 + "x" + ")" * 40 + "\n")


def test_shorthands_that_double_the_expression_are_stopped() -> None:
    # each shorthand uses the previous one twice: 2^40 nodes if substituted blindly
    lets = "".join(f"let a{i + 1} = sin(a{i}) + cos(a{i})\n" for i in range(40))
    text = "state x\nlet a0 = x\n" + lets + "dx/dt = a40\n"
    err = fails(text, 17, 11, "more than 100000 operations", "shorthands", limit=True)
    assert "substituted" in err.message
    chain = "".join(f"let b{i + 1} = sin(b{i})\n" for i in range(300))
    fails(
        "state x\nlet b0 = x\n" + chain + "dx/dt = b300\n",
        202,
        12,
        "nesting deeper than 200 levels",
        limit=True,
    )


def test_number_size_limits() -> None:
    fails("state x\ndx/dt = 1e99999*x\n", 2, 9, "the exponent of 1e99999 is too large", limit=True)
    fails("state x\ndx/dt = " + "9" * 1001 + "*x\n", 2, 9, "1001 digits", limit=True)
    # computed: (10^64)^64 = 10^4096 has 4097 digits, beyond the 1000-digit limit
    fails("state x\ndx/dt = ((10^64)^64)^64*x\n", 2, 10, "about 4104 digits", limit=True)


def test_file_size_limit(tmp_path) -> None:
    big = "state x\ndx/dt = -x\n" + "# padding\n" * 120_000
    with pytest.raises(LimitError, match="limit is 1048576"):
        parse(big)
    p = tmp_path / "big.pk"
    p.write_text(big)
    with pytest.raises(LimitError, match=r"big\.pk"):
        load(p)


# --- files --------------------------------------------------------------------------------
def test_file_errors_name_the_file(tmp_path) -> None:
    with pytest.raises(InputError, match=r"nope\.pk: no such file"):
        load(tmp_path / "nope.pk")
    with pytest.raises(InputError, match="is a directory"):
        load(tmp_path)
    bad = tmp_path / "latin1.pk"
    bad.write_bytes(b"state x\ndx/dt = -x # caf\xe9\n")
    with pytest.raises(InputError, match=r"latin1\.pk:2: the file is not UTF-8"):
        load(bad)
    good = tmp_path / "bom.pk"
    good.write_bytes(b"\xef\xbb\xbfstate x\ndx/dt = -x\n")
    assert load(good).states == ("x",)
    with pytest.raises(LimitError, match="limit is 1048576"):
        load("/dev/zero")  # an endless device is read only up to the limit
    wrong = tmp_path / "wrong.pk"
    wrong.write_text("state x\ndx/dt = 2x\n")
    with pytest.raises(InputError) as info:
        load(wrong)
    assert str(info.value).startswith(f"{wrong}:2:10: error:")


# --- notation of other languages: the fix is spelled out for the line ----------------------
def test_prime_derivative_is_answered_with_leibniz_form() -> None:
    err = fails(
        "state x, y\nx' = -x + y   # damping\ndy/dt = -y\n",
        2,
        1,
        "a prime derivative is not part of this language",
        "write: dx/dt = -x + y   # damping",
        width=2,
    )
    assert "dx/dt" in err.message


def test_prime_derivative_with_spaces_and_long_name() -> None:
    fails(
        "state theta\n  theta ' = -theta\n",
        2,
        3,
        "time derivatives are written dtheta/dt",
        "write: dtheta/dt = -theta",
        width=7,
    )


def test_param_keyword_is_answered_with_parameter() -> None:
    fails(
        "param k = 2 in [3/2, 3]\nstate x\ndx/dt = -k*x\n",
        1,
        1,
        "'param' is not a word of this language",
        "write: parameter k = 2 in [3/2, 3]",
        width=5,
    )


def test_const_keyword_is_answered_with_constant() -> None:
    fails(
        "state x\nconst g = 9.81\ndx/dt = -g*x\n",
        2,
        1,
        "'const' is not a word of this language",
        "write: constant g = 9.81",
        width=5,
    )


def test_param_and_const_may_still_be_names() -> None:
    m = parse("state param, const\ndparam/dt = -const\ndconst/dt = param\n")
    assert m.states == ("param", "const")
    m = parse("state dt, x\nddt/dt = -x\ndx/dt = dt/2\n")
    assert m.field == (-sp.Symbol("x", real=True), sp.Symbol("dt", real=True) / 2)
