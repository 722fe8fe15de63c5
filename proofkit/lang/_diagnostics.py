"""Teaching error messages for model text: locations, plain-word expectations, hints.

Everything here builds :class:`~proofkit.errors.InputError` values; nothing
here parses or evaluates model text.
"""

from __future__ import annotations

import difflib
import unicodedata
from collections.abc import Iterable

from proofkit.errors import InputError, LimitError, SourceSpan

__all__ = [
    "Located",
    "closest",
    "describe_expected",
    "make_error",
    "non_ascii_error",
]

# Typographic characters that people paste from documents, and their ASCII forms.
_TYPOGRAPHIC: dict[str, str] = {
    "\u2212": "-",  # minus sign
    "\u2013": "-",  # en dash
    "\u2014": "-",  # em dash
    "\u2010": "-",  # hyphen
    "\u2011": "-",  # non-breaking hyphen
    "\u00d7": "*",  # multiplication sign
    "\u22c5": "*",  # dot operator
    "\u00b7": "*",  # middle dot
    "\u2219": "*",  # bullet operator
    "\u2217": "*",  # asterisk operator
    "\u00f7": "/",  # division sign
    "\u2215": "/",  # division slash
    "\u2044": "/",  # fraction slash
    "\u2019": "'",  # right single quotation mark
    "\u2018": "'",  # left single quotation mark
    "\u2032": "'",  # prime
    "\u00b4": "'",  # acute accent
    "\u201c": '"',  # left double quotation mark
    "\u201d": '"',  # right double quotation mark
    "\u00a0": " ",  # no-break space
    "\u2009": " ",  # thin space
    "\u202f": " ",  # narrow no-break space
    "\u200b": "",  # zero width space
    "\ufeff": "",  # byte order mark / zero width no-break space
    "\u2264": "<=",  # less-than or equal to
    "\u2265": ">=",  # greater-than or equal to
    "\u2227": "and",  # logical and
    "\u03c0": "pi",  # greek small letter pi
    "\u00b2": "^2",  # superscript two
    "\u00b3": "^3",  # superscript three
    "\uff0c": ",",  # fullwidth comma
    "\uff08": "(",  # fullwidth left parenthesis
    "\uff09": ")",  # fullwidth right parenthesis
}

# Plain words for the grammar's terminals (lark's names) in "expected ..." lists.
_VALUE_TERMINALS = {"NUMBER", "NAME", "LPAR", "ADDOP"}
_OPERATOR_TERMINALS = {"ADDOP", "MULOP", "POW"}
_END_TERMINALS = {"_NL", "$END"}
_WORDS: dict[str, str] = {
    "NUMBER": "a number",
    "NAME": "a name",
    "LPAR": "'('",
    "RPAR": "')'",
    "LSQB": "'['",
    "RSQB": "']'",
    "COMMA": "','",
    "EQUAL": "'='",
    "DERIVATIVE": "a time derivative dx/dt",
    "REL": "a comparison (<=, <, >=, >)",
    "STRING": "quoted text",
    "ADDOP": "'+' or '-'",
    "MULOP": "'*' or '/'",
    "POW": "'^'",
}


class Located:
    """Source text with its file name, to turn offsets into spans and lines."""

    def __init__(self, text: str, file: str) -> None:
        self.text = text
        self.file = file
        self.lines = text.split("\n")

    def line_text(self, line: int) -> str | None:
        if 1 <= line <= len(self.lines):
            return self.lines[line - 1].rstrip("\r")
        return None

    def span(self, line: int, column: int, end_column: int | None = None) -> SourceSpan:
        if end_column is not None and end_column <= column:
            end_column = None
        return SourceSpan(self.file, line, column, end_column)

    def position(self, offset: int) -> tuple[int, int]:
        """1-based (line, column) of a character offset."""
        offset = max(0, min(offset, len(self.text)))
        line = self.text.count("\n", 0, offset) + 1
        start = self.text.rfind("\n", 0, offset) + 1
        return line, offset - start + 1


def make_error(
    where: Located,
    message: str,
    line: int | None,
    column: int | None = None,
    end_column: int | None = None,
    *,
    hint: str | None = None,
    limit: bool = False,
) -> InputError:
    """An InputError (or LimitError) pointing at ``line:column`` of ``where``."""
    cls = LimitError if limit else InputError
    if line is None:
        return cls(f"{message} (in {where.file})", hint=hint)
    column = column or 1
    source_line = where.line_text(line)
    if source_line is not None:  # one column per character, so the caret lines up
        source_line = source_line.replace("\t", " ").replace("\f", " ")
    if source_line is not None and end_column is not None:
        end_column = min(end_column, len(source_line) + 1)
    return cls(
        message,
        where.span(line, column, end_column),
        source_line=source_line,
        hint=hint,
    )


def closest(name: str, known: Iterable[str]) -> str | None:
    """The known name closest to ``name`` (difflib), if any is close enough."""
    matches = difflib.get_close_matches(name, sorted(set(known)), n=1, cutoff=0.6)
    if not matches:
        lower = {k.lower(): k for k in known}
        return lower.get(name.lower())
    return matches[0]


def non_ascii_error(where: Located, offset: int) -> InputError:
    """The error for a non-ASCII or control character at ``offset``."""
    ch = where.text[offset]
    line, column = where.position(offset)
    code = f"U+{ord(ch):04X}"
    name = unicodedata.name(ch, "").lower() or "a control character"
    if ch in _TYPOGRAPHIC:
        ascii_form = _TYPOGRAPHIC[ch]
        if ascii_form == "":
            hint = "delete this invisible character"
        elif ascii_form == " ":
            hint = "replace it with an ordinary space"
        else:
            hint = f"replace it with the ASCII {ascii_form!r}"
        return make_error(
            where,
            f"the character {name} ({code}) is not allowed; model files are plain ASCII",
            line,
            column,
            hint=hint,
        )
    if ord(ch) < 32 or ord(ch) == 127:
        return make_error(
            where,
            f"unexpected control character {code} in the model text",
            line,
            column,
            hint="model files are plain ASCII text; remove the character",
        )
    return make_error(
        where,
        f"the character {ch!r} ({name}, {code}) is not allowed; model files are plain ASCII",
        line,
        column,
        hint="use ASCII letters, digits and '_' for names, and ASCII operators",
    )


def describe_expected(expected: Iterable[str]) -> str:
    """Plain words for a set of lark terminal names, e.g. 'a number or a name'."""
    exp = set(expected)
    parts: list[str] = []
    if {"NUMBER", "NAME"} <= exp:
        parts.append("a number, a name or '('" if "LPAR" in exp else "a number or a name")
        exp -= _VALUE_TERMINALS
    elif "NAME" in exp or "NUMBER" in exp:
        kind = "NAME" if "NAME" in exp else "NUMBER"
        parts.append(_WORDS[kind])
        exp.discard(kind)
    if exp & {"MULOP", "POW"}:
        parts.append("an operator")
        exp -= _OPERATOR_TERMINALS
    end = bool(exp & _END_TERMINALS)
    exp -= _END_TERMINALS
    parts += [_WORDS[t] for t in sorted(exp) if t in _WORDS]
    parts += [f"'{t.lower()}'" for t in sorted(exp) if t not in _WORDS and not t.startswith("_")]
    if end:
        parts.append("the end of the line")
    if not parts:
        return "something else"
    if len(parts) == 1:
        return parts[0]
    return ", ".join(parts[:-1]) + " or " + parts[-1]
