"""Model text to a lark parse tree with positions; lark's errors become teaching errors.

Steps: size and character checks, lexing with the grammar's basic lexer,
removal of the newlines that continue a statement (inside brackets or after
an operator), LALR parsing through lark's interactive parser (so the token
before an error is known for hints), and a nesting-depth check done
iteratively (the later recursive stages then cannot overflow the stack).

This module must never evaluate model text; it only tokenises and parses.
"""

from __future__ import annotations

import re
from collections.abc import Iterator

from lark import Lark, Token, Tree
from lark.exceptions import LarkError, UnexpectedCharacters, UnexpectedEOF, UnexpectedToken

from proofkit.errors import InputError
from proofkit.keywords import KEYWORDS, STATEMENT_WORDS
from proofkit.lang._diagnostics import (
    Located,
    closest,
    describe_expected,
    make_error,
    non_ascii_error,
)
from proofkit.lang._limits import MAX_CLAIMS, MAX_EQUILIBRIA, MAX_LINES, MAX_TOKENS

__all__ = ["KEYWORDS", "MAX_DEPTH", "MAX_FILE_CHARS", "parse_tree"]

MAX_FILE_CHARS = 1 << 20  # 1 MiB of text
MAX_DEPTH = 100  # nesting levels of an expression tree

# A newline right after one of these tokens continues the statement.
_CONTINUE_AFTER = frozenset(
    {"ADDOP", "MULOP", "POW", "REL", "COMMA", "EQUAL", "AND", "LPAR", "LSQB", "IN"}
)
_OPEN = {"LPAR", "LSQB"}
_CLOSE = {"RPAR", "RSQB"}
_ALLOWED_CONTROL = {"\n", "\t", "\r", "\f"}

_OLD_WORDS = {"param": "parameter", "const": "constant"}
_PRIME_LINE = re.compile(r"(\s*)([A-Za-z_][A-Za-z0-9_]*)\s*('+)\s*=")
_STATEMENT_HINT = (
    "a statement starts with system, constant, parameter, state, let, domain, "
    "equilibrium, claim, or a time derivative (as in dx/dt = ...)"
)

_parser: Lark | None = None


def _get_parser() -> Lark:
    """The compiled LALR parser, built on first use and then reused."""
    global _parser
    if _parser is None:
        from proofkit.grammar import grammar_text

        _parser = Lark(
            grammar_text(),
            parser="lalr",
            lexer="basic",
            propagate_positions=True,
            maybe_placeholders=True,
        )
    return _parser


def _check_characters(where: Located) -> None:
    if "\r" in where.text.replace("\r\n", ""):
        offset = _bare_cr_offset(where.text)
        line, column = where.position(offset)
        raise make_error(
            where,
            "a bare carriage return (CR) ends a line here; model files end lines with LF "
            "(or CR LF)",
            line,
            column,
            hint="save the file with Unix (LF) or Windows (CR LF) line ends",
        )
    for offset, ch in enumerate(where.text):
        if (" " <= ch <= "~") or ch in _ALLOWED_CONTROL:
            continue
        raise non_ascii_error(where, offset)


def _bare_cr_offset(text: str) -> int:
    """Offset of the first CR not followed by LF."""
    start = 0
    while True:
        i = text.index("\r", start)
        if i + 1 >= len(text) or text[i + 1] != "\n":
            return i
        start = i + 1


def _significant_tokens(where: Located, tokens: Iterator[Token]) -> Iterator[Token]:
    """Drop the newlines that do not end a statement (line continuation).

    Also enforces the nesting limit on brackets, which the tree depth check
    cannot see (``((x))`` leaves no trace in the tree).
    """
    depth = 0
    prev: Token | None = None
    for tok in tokens:
        if tok.type == "_NL":
            if depth > 0 or (prev is not None and prev.type in _CONTINUE_AFTER):
                continue
        elif tok.type in _OPEN:
            depth += 1
            if depth > MAX_DEPTH:
                raise make_error(
                    where,
                    f"parentheses nested more than {MAX_DEPTH} levels deep",
                    tok.line,
                    tok.column,
                    tok.end_column,
                    hint="simplify the expression, or split it with let shorthands",
                    limit=True,
                )
        elif tok.type in _CLOSE:
            depth = max(0, depth - 1)
        prev = tok
        yield tok


def _merge_derivatives(tokens: Iterator[Token]) -> Iterator[Token]:
    """Turn ``dNAME / dt`` at the start of a statement into one DERIVATIVE token.

    The token's value is the state name; its position spans ``dNAME/dt``.
    Elsewhere ``dt`` and names starting with ``d`` stay ordinary names.
    """
    window: list[Token] = []
    at_start = True
    for tok in tokens:
        if not window and not at_start:
            at_start = tok.type == "_NL"
            yield tok
            continue
        window.append(tok)
        if not _derivative_prefix(window):
            yield from window
            at_start = tok.type == "_NL"
            window = []
        elif len(window) == 3:
            first, dt = window[0], window[2]
            yield Token(
                "DERIVATIVE",
                str(first)[1:],
                first.start_pos,
                first.line,
                first.column,
                dt.end_line,
                dt.end_column,
                dt.end_pos,
            )
            at_start = False
            window = []
    yield from window


def _derivative_prefix(window: list[Token]) -> bool:
    """True while ``window`` may still be the start of ``dNAME / dt``."""
    first = window[0]
    if first.type != "NAME" or len(first) < 2 or not str(first).startswith("d"):
        return False
    if len(window) >= 2 and (window[1].type != "MULOP" or str(window[1]) != "/"):
        return False
    return len(window) < 3 or (window[2].type == "NAME" and str(window[2]) == "dt")


def _describe_token(tok: Token) -> str:
    if tok.type == "$END":
        return "the end of the file"
    if tok.type == "_NL":
        return "the end of the line"
    if tok.type == "NAME":
        return f"the name '{tok}'"
    if tok.type == "NUMBER":
        return f"the number {tok}"
    if tok.type == "STRING":
        return "quoted text"
    if tok.type == "DERIVATIVE":
        return f"the derivative d{tok}/dt"
    if str(tok) in KEYWORDS:
        return f"the word '{tok}'"
    return f"'{tok}'"


def _token_error(where: Located, tok: Token, prev: Token | None, expected: set[str]) -> InputError:
    """A syntax error at ``tok`` (``prev`` came before it) with plain words and a hint."""
    ptype = prev.type if prev is not None else None
    if ptype == "NAME" and len(expected) > 1:
        expected = expected - {"LPAR"}  # a call is possible, but never what was meant
    if "SYSTEM" in expected:
        words = (
            "a statement (system, constant, parameter, state, let, domain, equilibrium, "
            "claim, or an equation dx/dt = ...)"
        )
    else:
        words = describe_expected(expected)
    if tok.type in {"$END", "_NL"} and prev is not None:
        line, column, end = prev.end_line or prev.line, prev.end_column or prev.column, None
    else:
        line, column, end = tok.line, tok.column, tok.end_column
    message = f"expected {words}, found {_describe_token(tok)}"
    hint: str | None = None
    if tok.type == "NAME" and (prev is None or ptype == "_NL"):
        hint = _statement_start_hint(where, tok)
    elif ptype == "NUMBER" and tok.type in {"NAME", "LPAR"} and "MULOP" in expected:
        hint = f"write {prev}*{tok} for a product: multiplication is never implicit"
        message = f"a number directly followed by {_describe_token(tok)}; expected {words}"
    elif (
        ptype in {"NAME", "RPAR", "NUMBER"}
        and tok.type in {"NAME", "NUMBER", "LPAR"}
        and not (tok.type == "NUMBER" and ptype == "NUMBER")
        and "MULOP" in expected
    ):
        hint = f"put an operator between {prev} and {tok}, e.g. {prev}*{tok}"
    elif tok.type == "NAME" and "COMMA" in expected and "MULOP" not in expected:
        hint = f"separate the names with commas: {prev}, {tok}"
    elif tok.type in _keyword_types() and "NAME" in expected:
        hint = f"'{tok}' is a reserved word of the language and cannot be used as a name"
    elif tok.type == "EQUAL" and "REL" in expected:
        hint = "a set condition compares with <=, <, >= or >"
    elif tok.type in {"RPAR", "RSQB"} and tok.type not in expected:
        hint = f"this '{tok}' has no matching opening bracket"
    elif tok.type == "LSQB":
        hint = "group with parentheses ( ); brackets [ ] only write parameter ranges"
    elif tok.type == "MULOP" and ptype == "MULOP":
        hint = "write ^ (or **) for a power"
    elif tok.type in {"_NL", "$END"}:
        hint = "the statement is incomplete"
    return make_error(where, message, line, column, end, hint=hint)


def _statement_start_hint(where: Located, tok: Token) -> str:
    """The hint for a name where a statement should start."""
    guess = closest(str(tok), STATEMENT_WORDS)
    rest = (where.line_text(tok.line) or "")[tok.end_column - 1 :].lstrip()
    if rest.startswith("/") and str(tok).startswith("d"):
        state = str(tok)[1:] or "x"
        return f"write the time derivative of {state} as d{state}/dt = ..."
    if rest.startswith("=") and not rest.startswith("=="):
        return (
            f"a state equation is written d{tok}/dt = ...; a constant is "
            f"constant {tok} = ...; a shorthand is let {tok} = ..."
        )
    return f"did you mean '{guess}'?" if guess else _STATEMENT_HINT


def _syntax_error(where: Located, parser: Lark, tokens: list[Token], tok: Token) -> InputError:
    """Replay the accepted tokens to learn exactly which terminals could have come next."""
    replay = parser.parse_interactive("")
    for t in tokens:
        replay.feed_token(t)
    expected = set(replay.accepts())
    prev = tokens[-1] if tokens else None
    if tok.type == "NAME" and (prev is None or prev.type == "_NL"):
        if str(tok) in _OLD_WORDS:
            return _old_keyword_error(where, tok)
        prime = _prime_error(where, tok.start_pos)
        if prime is not None:
            return prime
    return _token_error(where, tok, prev, expected)


def _old_keyword_error(where: Located, word: Token) -> InputError:
    """``param``/``const`` at the start of a statement: name the full keyword, fix the line."""
    full = _OLD_WORDS[str(word)]
    line = where.line_text(word.line) or ""
    start = word.column - 1
    fixed = (line[:start] + full + line[start + len(word) :]).strip()
    return make_error(
        where,
        f"'{word}' is not a word of this language; a {full} is declared with '{full}'",
        word.line,
        word.column,
        word.end_column,
        hint=f"write: {fixed}",
    )


def _prime_error(where: Located, offset: int) -> InputError | None:
    """A prime derivative ``x' = ...``: the error with the Leibniz form of that line."""
    line, _column = where.position(offset)
    text = where.line_text(line) or ""
    m = _PRIME_LINE.match(text)
    if m is None:
        return None
    column = m.start(3) + 1
    fixed = f"d{m.group(2)}/dt = {text[m.end() :].strip()}".rstrip()
    return make_error(
        where,
        "a prime derivative is not part of this language; time derivatives are written "
        f"d{m.group(2)}/dt",
        line,
        m.start(2) + 1,
        column + len(m.group(3)),
        hint=f"write: {fixed}"
        if len(m.group(3)) == 1
        else (
            f"models are first order: give the rate its own state, e.g. state {m.group(2)}, "
            f"v with d{m.group(2)}/dt = v and dv/dt = ..."
        ),
    )


def _keyword_types() -> frozenset[str]:
    return frozenset(k.upper() for k in KEYWORDS)


def _char_error(where: Located, err: UnexpectedCharacters) -> InputError:
    ch = where.text[err.pos_in_stream] if err.pos_in_stream < len(where.text) else ""
    if ch == "'":
        prime = _prime_error(where, err.pos_in_stream)
        if prime is not None:
            return prime
    hints = {
        ";": "one statement per line: start a new line instead of ';'",
        "&": "join conditions with the word 'and'",
        "|": "only conjunctions ('and') of conditions are supported",
        "!": "there is no '!' operator; conditions use <=, <, >= or >",
        "{": "group with parentheses ( )",
        "}": "group with parentheses ( )",
        "%": "there is no '%' operator",
        '"': "quoted text is not part of the language",
        "\\": "continue a line by ending it with an operator or inside parentheses",
        "$": "names use ASCII letters, digits and '_'",
        "@": "there is no '@' operator",
        "?": "there is no '?' operator",
        "~": "there is no '~' operator",
        "`": "there is no '`' operator",
        "'": "there is no prime notation; a time derivative is written dx/dt = ...",
        ".": "'.' appears only inside numbers such as 0.25",
    }
    return make_error(
        where,
        f"unexpected character {ch!r}",
        err.line,
        err.column,
        hint=hints.get(ch, "this character is not part of the language"),
    )


def _tree_depth_check(where: Located, tree: Tree) -> None:
    """Reject trees nested deeper than MAX_DEPTH (iterative walk, no recursion)."""
    stack: list[tuple[Tree, int]] = [(tree, 0)]
    while stack:
        node, depth = stack.pop()
        if depth > MAX_DEPTH + 2:  # start, statement and set levels are not nesting
            meta = node.meta
            raise make_error(
                where,
                f"expression nested more than {MAX_DEPTH} levels deep",
                getattr(meta, "line", None),
                getattr(meta, "column", None),
                hint="simplify the expression, or split it with let shorthands",
                limit=True,
            )
        for child in node.children:
            if isinstance(child, Tree):
                stack.append((child, depth + 1))


_COUNTED = {
    "_NL": (MAX_LINES, "lines"),
    "CLAIM": (MAX_CLAIMS, "claims"),
    "EQUILIBRIUM": (MAX_EQUILIBRIA, "equilibria"),
}


def _count_limit(where: Located, tok: Token, count: int) -> None:
    """Stop reading early when a file has more lines, claims or equilibria than allowed."""
    limit, what = _COUNTED[tok.type]
    if count > limit:
        raise make_error(
            where,
            f"more than {limit} {what}; the limit is {limit}",
            tok.line,
            tok.column,
            tok.end_column if tok.type != "_NL" else None,
            hint="a model file should be a short text; split the claims over several files"
            if what == "claims"
            else "declare only what the claims need",
            limit=True,
        )


def parse_tree(where: Located) -> Tree:
    """Parse model text to a lark tree, raising only InputError (or LimitError)."""
    if len(where.text) > MAX_FILE_CHARS:
        raise make_error(
            where,
            f"the model text has {len(where.text)} characters; the limit is {MAX_FILE_CHARS}",
            None,
            limit=True,
        )
    _check_characters(where)
    parser = _get_parser()
    text = where.text if where.text.endswith("\n") else where.text + "\n"
    tokens: list[Token] = []
    try:
        interactive = parser.parse_interactive("")
        counts = {"_NL": 0, "CLAIM": 0, "EQUILIBRIUM": 0}
        for tok in _merge_derivatives(_significant_tokens(where, parser.lex(text))):
            if len(tokens) >= MAX_TOKENS:
                raise make_error(
                    where,
                    f"more than {MAX_TOKENS} words, numbers and operators; the limit is "
                    f"{MAX_TOKENS}",
                    tok.line,
                    tok.column,
                    tok.end_column,
                    hint="a model file should be a short text; use let shorthands",
                    limit=True,
                )
            if tok.type in counts:
                counts[tok.type] += 1
                _count_limit(where, tok, counts[tok.type])
            try:
                interactive.feed_token(tok)
            except UnexpectedToken:
                raise _syntax_error(where, parser, tokens, tok) from None
            tokens.append(tok)
        prev = tokens[-1] if tokens else None
        eof = Token.new_borrow_pos("$END", "", prev) if prev is not None else Token("$END", "")
        try:
            tree = interactive.feed_eof(prev)
        except UnexpectedToken:
            raise _syntax_error(where, parser, tokens, eof) from None
    except UnexpectedCharacters as err:
        raise _char_error(where, err) from None
    except UnexpectedEOF as err:  # pragma: no cover - the interactive parser reports tokens
        raise make_error(where, "the file ended too early", None, hint=str(err)) from None
    except LarkError as err:  # pragma: no cover - any other lark failure is still bad input
        raise make_error(where, f"could not parse the model: {err}", None) from None
    _tree_depth_check(where, tree)
    return tree
