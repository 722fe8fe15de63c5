"""The read loops of the shell: prompt_toolkit on a terminal, plain lines from a pipe.

A statement that ends inside brackets or after an operator continues on the
next line (prompt ``...``). Ctrl-C at the prompt clears the line; during a
command it interrupts the work and the session goes on; Ctrl-D or end of
input leaves with exit code 0. History is kept in ``$PROOFKIT_HISTORY``
(default ``~/.local/state/proofkit/shell_history``; an empty value keeps it
in memory only).

It must never evaluate typed text as Python; prompt_toolkit is imported only on a
terminal.
"""

from __future__ import annotations

import os
import sys
from collections.abc import Iterable, Iterator
from pathlib import Path
from typing import Any, TextIO

from proofkit.keywords import CLAIM_WORDS, FUNCTION_NAMES, STATEMENT_WORDS
from proofkit.shell.model_text import unfinished
from proofkit.shell.session import Session

__all__ = ["candidates", "run_shell"]

PROMPT, MORE = "proofkit> ", "     ...> "
BANNER = (
    "proofkit shell: type model statements (state x, y / dx/dt = ... / claim ...) or commands;\n"
    "'help' lists the commands, 'quit' or Ctrl-D leaves."
)
FUNCTIONS = (*FUNCTION_NAMES, "pi")
FILE_COMMANDS = ("load", "save", "write", "portrait")


def _names(session: Session) -> list[str]:
    m = session.model
    if m is None:
        return [k[1] for k in session.statements.key_list() if k[1] and k[0] != "claim"]
    return [
        *m.states,
        *(p.name for p in m.params),
        *(c.name for c in m.constants),
        *(x.name for x in m.lets),
        *(q.name for q in m.equilibria),
    ]


def _states(session: Session) -> list[str]:
    if session.model is not None:
        return list(session.model.states)
    return session.statements.state_names() or []


def candidates(session: Session, before: str) -> list[str]:
    """Completions of the last word of ``before`` (the line up to the cursor)."""
    from proofkit.shell.questions import COMMANDS

    words = before.split()
    word = "" if before.endswith(" ") or not words else words[-1]
    equations = [f"d{x}/dt = " for x in _states(session)]
    if len(words) == 0 or (len(words) == 1 and word):
        pool: Iterable[str] = [*STATEMENT_WORDS, *COMMANDS, *equations]
    elif words[0] in ("edit", "drop", "linearize", "basin"):
        pool = [*_names(session), *(e.rstrip(" =") for e in equations), "claim", "domain"]
    else:
        pool = [*_names(session), *CLAIM_WORDS, *FUNCTIONS]
    return [c for c in sorted(set(pool)) if c.startswith(word) and c != word]


def _session_completer(session: Session) -> Any:
    from prompt_toolkit.completion import Completer, Completion, PathCompleter
    from prompt_toolkit.document import Document

    paths = PathCompleter(expanduser=True)

    class SessionCompleter(Completer):
        """Completes statements and commands first, then names, claim words and files."""

        def get_completions(self, document: Any, complete_event: Any) -> Iterator[Any]:
            text = document.text_before_cursor
            words = text.split()
            argument = len(words) > 1 or (words and text.endswith(" "))
            if argument and words[0] in FILE_COMMANDS:
                arg = text[len(words[0]) :].lstrip()
                yield from paths.get_completions(Document(arg, len(arg)), complete_event)
                return
            word = document.get_word_before_cursor(WORD=True)
            for cand in candidates(session, text):
                yield Completion(cand, start_position=-len(word))

    return SessionCompleter()


def _history() -> Any:
    from prompt_toolkit.history import FileHistory, InMemoryHistory

    where = os.environ.get("PROOFKIT_HISTORY")
    if where == "":
        return InMemoryHistory()
    path = Path(where) if where else Path.home() / ".local/state/proofkit/shell_history"
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        path.touch(exist_ok=True)
        return FileHistory(str(path))
    except OSError:
        return InMemoryHistory()


def _interactive(session: Session) -> None:
    from prompt_toolkit import PromptSession

    prompt = PromptSession(
        history=_history(), completer=_session_completer(session), complete_while_typing=False
    )
    session.say(BANNER)
    session.interactive = True
    while not session.done:
        try:
            line = prompt.prompt(PROMPT, default=session.prefill)
            session.prefill = ""
            while unfinished(line):
                line += " " + prompt.prompt(MORE)
        except KeyboardInterrupt:
            session.prefill = ""
            continue
        except EOFError:
            break
        session.handle(line)


def _piped(session: Session, stream: TextIO) -> None:
    pending = ""
    for raw in stream:
        pending = f"{pending} {raw.strip()}" if pending else raw.rstrip("\n")
        if unfinished(pending):
            continue
        session.handle(pending)
        pending = ""
        if session.done:
            return
    if pending:
        session.handle(pending)


def run_shell(
    path: str | None = None,
    *,
    stdin: TextIO | None = None,
    stdout: TextIO | None = None,
    stderr: TextIO | None = None,
    interactive: bool | None = None,
    quiet: bool = False,
    json_lines: bool = False,
) -> int:
    """Run a shell session (on ``path``'s statements if given); returns the exit code 0."""
    inp = stdin or sys.stdin
    session = Session(stdout, stderr, quiet, json_lines)
    if path:
        session.handle(f"load {path}")
    if interactive is None:
        interactive = inp.isatty() and (stdout or sys.stdout).isatty() and not json_lines
    if interactive:
        _interactive(session)
    else:
        _piped(session, inp)
    return 0
