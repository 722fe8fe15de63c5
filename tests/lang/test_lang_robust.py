"""Hostile input: random bytes and mutated models fail only with InputError; nothing is evaluated.

common practice: a parser for untrusted text must never crash with an
internal exception and must never hand text to an evaluator.
"""

from __future__ import annotations

import builtins
import sys
from pathlib import Path

import pytest
import sympy
from hypothesis import given
from hypothesis import strategies as st

from proofkit import load, parse
from proofkit.errors import InputError

WORKED = Path(__file__).resolve().parents[2] / "worked"
SEEDS = sorted(p.read_text() for p in WORKED.glob("*.pk")) or ["state x\ndx/dt = -x\n"]
PIECES = [
    "(",
    ")",
    "[",
    "]",
    "^",
    "**",
    "*",
    "/",
    "-",
    "+",
    "=",
    "'",
    ",",
    "\n",
    " ",
    "#",
    "<=",
    ">",
    "and",
    "in",
    "at",
    "nominal",
    "claim",
    "state",
    "let",
    "x",
    "2",
    "0.5",
    "1e-3",
    "sin(",
    "__import__",
    '"',
    "\u2212",
    "\u00a0",
    "\t",
    "\r",
    "9" * 40,
    "^64",
    "^65",
    "(" * 30,
    "equilibrium",
    "cycle",
    "no",
    "domain",
    "param",
    "const",
    "parameter",
    "constant",
    "dx/dt",
    "/dt",
    ".",
    "e",
    "pi",
    "abs",
    "\x00",
]


def parses_or_input_error(text: str) -> None:
    try:
        parse(text, name="fuzz.pk")
    except InputError as err:
        message = str(err)
        assert message.strip(), "an error must say something"
        assert "Traceback" not in message
        if err.span is not None:
            assert err.span.file == "fuzz.pk"
            assert 1 <= err.span.line <= text.count("\n") + 2
            assert err.span.column >= 1


@given(st.text(max_size=300))
def test_random_text_gives_only_input_errors(text: str) -> None:
    parses_or_input_error(text)


@given(st.binary(max_size=300))
def test_random_bytes_from_a_file_give_only_input_errors(data: bytes) -> None:
    import tempfile

    with tempfile.TemporaryDirectory() as d:
        p = Path(d) / "bytes.pk"
        p.write_bytes(data)
        try:
            load(p)
        except InputError as err:
            assert "bytes.pk" in str(err)


@st.composite
def mutated(draw: st.DrawFn) -> str:
    text = draw(st.sampled_from(SEEDS))
    for _ in range(draw(st.integers(1, 4))):
        pos = draw(st.integers(0, len(text)))
        action = draw(st.sampled_from(["insert", "delete", "replace", "duplicate"]))
        piece = draw(st.sampled_from(PIECES))
        n = draw(st.integers(1, 8))
        if action == "insert":
            text = text[:pos] + piece + text[pos:]
        elif action == "delete":
            text = text[:pos] + text[pos + n :]
        elif action == "replace":
            text = text[:pos] + piece + text[pos + n :]
        else:
            text = text[:pos] + text[pos : pos + 3 * n] + text[pos:]
    return text


@given(mutated())
def test_mutated_models_give_only_input_errors(text: str) -> None:
    parses_or_input_error(text)


@given(st.lists(st.sampled_from(PIECES), max_size=60))
def test_token_soup_gives_only_input_errors(pieces: list[str]) -> None:
    parses_or_input_error("state x\n" + "".join(pieces))


def test_deeply_nested_input_is_a_limit_error_not_a_crash() -> None:
    for text in (
        "state x\ndx/dt = " + "(" * 5000 + "x" + ")" * 5000 + "\n",
        "state x\ndx/dt = " + "-" * 5000 + "x\n",
        "state x\ndx/dt = x" + "^1" * 5000 + "\n",
        "state x\ndx/dt = " + "sin(" * 3000 + "x" + ")" * 3000 + "\n",
    ):
        with pytest.raises(InputError, match="nested"):
            parse(text)


def test_long_flat_sums_are_fine() -> None:
    # a 5000-term sum is long but not deep: it must parse (and quickly)
    m = parse("state x\ndx/dt = " + " + ".join(["x"] * 5000) + "\n")
    assert m.equations[0].rhs == 5000 * sympy.Symbol("x", real=True)


def test_nothing_in_a_model_is_evaluated(monkeypatch: pytest.MonkeyPatch) -> None:
    def forbidden(*args: object, **kwargs: object) -> None:
        raise AssertionError("model text reached an evaluator")

    real_sympify = sympy.sympify

    def no_text_sympify(a: object, *args: object, **kwargs: object) -> object:
        if isinstance(a, str):
            raise AssertionError("sympify was given text")
        return real_sympify(a, *args, **kwargs)

    extra = (
        "constant c = 2.5e-3\nparameter k = 1 in [0.5, 2]\nstate x, y\n"
        "dx/dt = sin(x)*exp(-y) + sqrt(2)*abs(y) - c*x^2\ndy/dt = -k*y + log(3)*tanh(x) + pi\n"
    )
    for text in [*SEEDS, extra]:  # warm up: let sympy import its lazy modules first
        parse(text)
    monkeypatch.setattr(builtins, "eval", forbidden)
    monkeypatch.setattr(builtins, "exec", forbidden)
    monkeypatch.setattr(sympy, "sympify", no_text_sympify)
    monkeypatch.setattr(sympy, "parse_expr", forbidden, raising=False)
    import sympy.parsing.sympy_parser as sympy_parser

    core_sympify = sys.modules["sympy.core.sympify"]

    monkeypatch.setattr(core_sympify, "sympify", no_text_sympify)
    monkeypatch.setattr(sympy_parser, "parse_expr", forbidden)
    # the traps are live: text given to sympy's converters or to eval would fail here
    with pytest.raises(AssertionError):
        sympy.sympify("x + 1")
    with pytest.raises(AssertionError):
        core_sympify._sympify("x + 1")
    with pytest.raises(AssertionError):
        eval("1 + 1")

    for text in SEEDS:
        parse(text)
    m = parse(extra)
    assert m.constants[0].value == sympy.Rational(1, 400)
    with pytest.raises(InputError, match="unknown name '__import__'"):
        parse('state x\ndx/dt = __import__("os")\n')
    with pytest.raises(InputError, match="unknown name 'open'"):
        parse('state x\ndx/dt = open("/etc/passwd") + x\n')
    with pytest.raises(InputError, match=r"unexpected character '\.'"):
        parse('state x\ndx/dt = __import__("os").system("echo hacked")\n')
