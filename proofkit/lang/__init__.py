"""The model language: ``.pk`` text to the exact, immutable :class:`~proofkit.model.Model`.

Model text enters the library through one public door, :func:`proofkit.parse`
and :func:`proofkit.load`; the private ``_parse_model`` (text) and
``_load_model`` (a file) are the machinery behind that door.
Public here: :func:`format_model` (a Model back to text), :func:`format_expr`
(one exact expression in the language's syntax). Every failure caused by the input is an
:class:`~proofkit.errors.InputError` (or its :class:`~proofkit.errors.LimitError`)
with file, line, column, a caret under the fault and a hint.

Nothing in a model file is ever evaluated as Python: the lark tree is turned
into sympy objects by constructors, never by ``sympify``/``parse_expr``/``eval``.

Layout: ``_syntax`` (characters, lexing, line continuation, LALR parse,
lark errors to plain words), ``_expr`` (the Transformer that builds exact
sympy values, name resolution, the safety limits), ``_build`` (statements to
the Model, whole-file checks such as exact equilibria), ``_printer`` (sympy to
model text), ``_diagnostics`` (messages, hints, typographic characters).
"""

from __future__ import annotations

import os
from pathlib import Path

from proofkit.errors import InputError, LimitError
from proofkit.model import Model

from ._diagnostics import Located, make_error
from ._expr import MAX_EXPONENT, MAX_TERMS
from ._printer import format_condition, format_expr, format_model, format_region
from ._syntax import MAX_DEPTH, MAX_FILE_CHARS, parse_tree

__all__ = [
    "MAX_DEPTH",
    "MAX_EXPONENT",
    "MAX_FILE_BYTES",
    "MAX_TERMS",
    "format_condition",
    "format_expr",
    "format_model",
    "format_region",
]

MAX_FILE_BYTES = MAX_FILE_CHARS


def _parse_model(text: str, file: str = "<model>") -> Model:
    """Parse model text into a Model; ``file`` names the text in error messages."""
    if not isinstance(text, str):
        raise InputError(f"model text must be a string, not {type(text).__name__} (in {file})")
    where = Located(text, file)
    try:
        from ._build import build_model

        return build_model(where, parse_tree(where))
    except InputError:
        raise
    except RecursionError:
        raise make_error(
            where,
            f"the model is nested too deeply to process (limit {MAX_DEPTH} levels)",
            None,
            limit=True,
        ) from None
    except MemoryError:
        raise make_error(where, "the model is too large to process", None, limit=True) from None


def _load_model(path: str | os.PathLike[str]) -> Model:
    """Read a ``.pk`` file (UTF-8, at most 1 MiB) and parse it."""
    p = Path(path)
    name = str(path)
    try:
        size = p.stat().st_size
        if size > MAX_FILE_BYTES:
            raise LimitError(
                f"{name}: the file has {size} bytes; the limit is {MAX_FILE_BYTES}",
                hint="a model file should be a short text",
            )
        with p.open("rb") as handle:  # bounded read: devices and pipes report no size
            data = handle.read(MAX_FILE_BYTES + 1)
    except FileNotFoundError:
        raise InputError(f"{name}: no such file", hint="check the path") from None
    except IsADirectoryError:
        raise InputError(f"{name}: is a directory, not a model file") from None
    except PermissionError:
        raise InputError(f"{name}: permission denied; the file cannot be read") from None
    except OSError as err:
        raise InputError(f"{name}: cannot be read ({err.strerror or err})") from None
    if len(data) > MAX_FILE_BYTES:
        raise LimitError(f"{name}: the file has {len(data)} bytes; the limit is {MAX_FILE_BYTES}")
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError as err:
        line = data[: err.start].count(b"\n") + 1
        raise InputError(
            f"{name}:{line}: the file is not UTF-8 text (byte 0x{data[err.start]:02x} at "
            f"offset {err.start})",
            hint="save the model as plain ASCII text",
        ) from None
    if text.startswith("\ufeff"):
        text = text[1:]  # a UTF-8 byte order mark is harmless; drop it
    return _parse_model(text, file=name)
