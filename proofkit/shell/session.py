"""One shell session: the statements typed so far, the model they make, and the commands.

:meth:`Session.handle` takes one complete input (a statement or a command)
and writes what the user should see. A statement is kept (added, or
replacing the one with the same key) unless the parser finds a fault in the
statement itself, which is then shown with the caret and the model stays as
it was. An incomplete model (a state without its equation, ...) is kept and
the missing part is named. Every error is shown and the session goes on.

The session never evaluates text: statements go to :func:`proofkit.parse`,
commands are looked up in a table by their first word.
"""

from __future__ import annotations

import json
import sys
from collections.abc import Callable
from typing import TYPE_CHECKING, Any, TextIO

from proofkit.errors import InputError, ProofkitError, SourceSpan
from proofkit.shell.model_text import Statement, StatementSet, key_of

if TYPE_CHECKING:
    from proofkit.model import Model

__all__ = ["Session"]

INPUT = "<input>"


class Session:
    """The state of one shell: statements, the model they parse to, and output streams."""

    def __init__(
        self,
        out: TextIO | None = None,
        err: TextIO | None = None,
        quiet: bool = False,
        json_lines: bool = False,
    ) -> None:
        self.out = out or sys.stdout
        self.json_lines = json_lines  # one JSON object per input instead of text
        self._lines: list[str] = []
        self._data: dict[str, Any] = {}
        self.err = err or sys.stderr
        self.quiet = quiet
        self.statements = StatementSet()
        self.history: list[StatementSet] = []
        self.model: Model | None = None
        self.problem: InputError | None = None  # why the statements are not a model yet
        self.file: str | None = None
        self.done = False
        self.interactive = False  # set by the terminal loop
        self.prefill = ""  # text to put on the next prompt (the edit command)
        self._found: tuple[Any, dict[str, list[Any]]] = (None, {})  # findings of one model

    # --- output -------------------------------------------------------------
    def say(self, text: str = "") -> None:
        if self.json_lines:
            self._lines.extend(text.splitlines() or [""])
        else:
            print(text, file=self.out, flush=True)

    def attach(self, **data: Any) -> None:
        """Structured results of the current input (printed in JSON mode only)."""
        self._data.update(data)

    def progress(self, msg: str) -> None:
        if not self.quiet:
            print(f"proofkit: {msg}", file=self.err, flush=True)

    # --- the model ------------------------------------------------------------
    def rebuild(self, statements: StatementSet) -> tuple[Model | None, InputError | None]:
        """Parse the statements; the model, or the first problem the parser found."""
        from proofkit import parse

        if not len(statements):
            return None, InputError("the model is empty: start with a state statement")
        try:
            return parse(statements.text(), name=self.file or "<session>"), None
        except InputError as err:
            return None, err

    def commit(self, statements: StatementSet, note: str = "") -> None:
        self.history.append(self.statements)
        del self.history[:-50]
        self.statements = statements
        self.model, self.problem = self.rebuild(statements)
        if note:
            self.say(note)
        if self.problem is not None and len(statements):
            self.say("the model is not complete yet: " + _first_line(self.problem))

    def remember(self, kind: str, value: Any) -> None:
        """Keep a finding (a certificate, located cycles) for the current model only."""
        if self._found[0] is not self.model:
            self._found = (self.model, {})
        self._found[1].setdefault(kind, []).append(value)

    def recall(self, kind: str) -> list[Any]:
        """The findings of ``kind`` about the current model (none after any change)."""
        return list(self._found[1].get(kind, [])) if self._found[0] is self.model else []

    def need_model(self) -> Model:
        if self.model is None:
            if self.problem is not None:
                raise InputError("there is no complete model yet: " + _first_line(self.problem))
            raise InputError("there is no model yet: type statements or 'load FILE'")
        return self.model

    # --- input ------------------------------------------------------------------
    def handle(self, line: str) -> None:
        """Run one input line (statement or command); errors are shown, never raised."""
        text = line.strip()
        if not text or text.startswith("#"):
            return
        self._lines, self._data = [], {}
        ok = False
        try:
            if key_of(text) is not None:
                self.statement(text)
            else:
                self.command(text)
            ok = True
        except KeyboardInterrupt:
            self.say("interrupted")
        except InputError as err:
            self.say(str(err))
        except ProofkitError as err:
            self.say(f"error: {err}")
        except (OSError, ValueError) as err:
            self.say(f"error: {err}")
        except Exception as exc:  # a bug must not end the session; say so plainly
            self.say(
                f"internal error (a bug in proofkit; please report it): {type(exc).__name__}: {exc}"
            )
        if self.json_lines:
            record = {"input": text, "ok": ok, "output": self._lines, **self._data}
            print(json.dumps(record, default=str), file=self.out, flush=True)

    def statement(self, text: str) -> None:
        key = key_of(text)
        assert key is not None
        trial = self.statements.copy()
        verb = trial.put(Statement(key, text))
        scaffold = trial.scaffolded()
        _model, problem = self.rebuild(scaffold)
        if problem is not None and _in_statement(problem, scaffold, key):
            raise _relocated(problem, text)
        what = f"{key[0]} {key[1]}".strip()
        self.commit(trial, f"{verb}: {what}" if verb == "replaced" else "")
        self.attach(statement=key[0], name=key[1], action=verb, complete=self.model is not None)

    def command(self, text: str) -> None:
        from proofkit.shell.questions import COMMANDS, unknown

        word, _, rest = text.partition(" ")
        entry = COMMANDS.get(word)
        if entry is None:
            raise unknown(word, text)
        entry.run(self, rest.strip())


def _first_line(err: InputError) -> str:
    where = f" (line {err.span.line})" if err.span else ""
    return err.message + where


def _in_statement(err: InputError, statements: StatementSet, key: tuple[str, str]) -> bool:
    return err.span is not None and err.span.line == statements.line_of(key)


def _relocated(err: InputError, text: str) -> InputError:
    """The parser's message about one statement, located in that statement as typed."""
    assert err.span is not None
    span = SourceSpan(INPUT, 1, err.span.column, err.span.end_column)
    return InputError(err.message, span, source_line=text, hint=err.hint)


Handler = Callable[[Session, str], Any]
