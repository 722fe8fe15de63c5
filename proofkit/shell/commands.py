"""The shell's commands: one small function per command, looked up by its first word.

Commands ask questions about the session's model (``equilibria``,
``linearize``, ``try``, ``prove``, ``basin``, ``cycles``), write files
(``write``, ``portrait``, ``save``), or edit the statements (``load``,
``drop``, ``undo``, ``clear``). Each prints plain text; statuses come from
the library ("proved" only where the audit accepted the certificate). Heavy
modules are imported inside the commands that use them.

A command must never evaluate typed text as Python or end the session on an
error it can report.
"""

from __future__ import annotations

import difflib
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from proofkit.errors import InputError
from proofkit.keywords import STATEMENT_WORDS
from proofkit.shell.model_text import Statement, StatementSet, key_of, split_statements
from proofkit.shell.session import Session

__all__ = ["COMMANDS", "Command", "unknown"]


@dataclass(frozen=True)
class Command:
    name: str
    usage: str
    help: str
    run: Callable[[Session, str], Any]


COMMANDS: dict[str, Command] = {}


def command(name: str, usage: str, help: str) -> Callable[[Callable[..., Any]], Any]:
    def register(fn: Callable[[Session, str], Any]) -> Callable[[Session, str], Any]:
        COMMANDS[name] = Command(name, usage, help, fn)
        return fn

    return register


def unknown(word: str, text: str) -> InputError:
    """The error for a line that is neither a statement nor a command."""
    words = [*COMMANDS, *STATEMENT_WORDS]
    near = difflib.get_close_matches(word, words, n=1)
    hint = (
        f"did you mean '{near[0]}'?"
        if near
        else ("type a statement (state, dx/dt = ..., claim ...) or a command; 'help' lists them")
    )
    if "=" in text and not text.startswith("d"):
        hint = "an equation is written dx/dt = ...; a parameter as parameter k = 1"
    return InputError(f"'{word}' is neither a statement nor a command", hint=hint)


def _no_args(args: str, name: str) -> None:
    if args:
        raise InputError(f"'{name}' takes no arguments", hint=f"type '{name}' alone")


# --- session --------------------------------------------------------------------
@command("help", "help [COMMAND]", "list the commands, or explain one")
def _help(s: Session, args: str) -> None:
    if args:
        cmd = COMMANDS.get(args)
        if cmd is None:
            raise InputError(f"no command named '{args}'", hint="type 'help' for the list")
        s.say(f"{cmd.usage}\n  {cmd.help}")
        return
    s.say("Type model statements line by line (state x, y / dx/dt = ... / equilibrium E at ...")
    s.say("/ claim E stable); typing a statement again with the same name replaces it.")
    s.say("Commands:")
    width = max(len(c.usage) for c in COMMANDS.values())
    for c in COMMANDS.values():
        s.say(f"  {c.usage.ljust(width)}  {c.help}")


@command("quit", "quit", "leave the shell (end of input does the same)")
def _quit(s: Session, args: str) -> None:
    _no_args(args, "quit")
    s.done = True


COMMANDS["exit"] = Command("exit", "exit", "leave the shell (same as quit)", _quit)


@command("show", "show", "show the model as typed, and whether it is complete")
def _show(s: Session, args: str) -> None:
    _no_args(args, "show")
    if not len(s.statements):
        s.say("(no statements yet)")
        return
    s.attach(
        statements=[st.text for st in s.statements.ordered()],
        complete=s.model is not None,
        problem=None if s.problem is None else str(s.problem),
    )
    for k, st in enumerate(s.statements.ordered(), 1):
        s.say(f"{k:3d}  {st.text}")
    if s.model is not None:
        word = "states" if len(s.model.states) != 1 else "state"
        s.say(
            f"complete model: {len(s.model.states)} {word}, "
            f"{len(s.model.equilibria)} declared equilibria, {len(s.model.claims)} claims"
        )
    elif s.problem is not None:
        s.say("not complete yet: " + str(s.problem).splitlines()[0])


@command("load", "load FILE", "replace the session's statements by those of a model file")
def _load(s: Session, args: str) -> None:
    from proofkit.lang import MAX_FILE_BYTES

    if not args:
        raise InputError("load needs a file name", hint="load worked/valve_latch.pk")
    path = Path(args)
    try:
        with path.open("rb") as handle:  # bounded: devices and pipes report no size
            data = handle.read(MAX_FILE_BYTES + 1)
        text = data.decode("utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(f"{args}: cannot be read ({exc})") from None
    if len(data) > MAX_FILE_BYTES:
        raise InputError(f"{args}: larger than {MAX_FILE_BYTES} bytes; not a model file")
    statements = StatementSet()
    for st in split_statements(text):
        key = key_of(st)
        if key is None:
            raise InputError(f"{args}: not a statement: {st}")
        statements.put(Statement(key, st))
    s.file = args
    s.commit(statements, f"loaded {len(statements)} statements from {args}")


@command("save", "save FILE", "write the model's statements to a file")
def _save(s: Session, args: str) -> None:
    if not args:
        raise InputError("save needs a file name", hint="save my_model.pk")
    Path(args).write_text(s.statements.text(), encoding="utf-8")
    s.say(f"saved {len(s.statements)} statements to {args}")


def _find(s: Session, args: str, verb: str) -> tuple[str, str]:
    """The key of the statement named by ``args`` (dx/dt, a name, domain, claim N)."""
    keys = s.statements.key_list()
    words = args.split()
    eq = key_of(args + " = 0") if args.startswith("d") and "/" in args else None
    claims = [k for k in keys if k[0] == "claim"]
    want: tuple[str, str] | None
    if eq is not None and eq in keys:
        want = eq
    elif len(words) == 1 and words[0] in ("system", "state", "domain"):
        want = (words[0], "")
    elif len(words) == 2 and words[0] == "claim" and words[1].isdigit():
        n = int(words[1])
        want = claims[n - 1] if 0 < n <= len(claims) else None
    elif words and words[0] == "claim":
        want = ("claim", " ".join(words[1:]))
    else:
        want = next((k for k in keys if k[1] == args and k[0] != "claim"), None)
    if want is None or want not in keys:
        raise InputError(f"nothing to {verb} named '{args}'", hint="'show' lists the statements")
    return want


@command("drop", "drop WHAT", "remove a statement: drop dx/dt, drop k, drop domain, drop claim 2")
def _drop(s: Session, args: str) -> None:
    want = _find(s, args, "drop")
    trial = s.statements.copy()
    trial.drop(want)
    s.commit(trial, f"dropped: {want[0]} {want[1]}".rstrip())


@command("edit", "edit WHAT", "put a statement on the next prompt to change it: edit dx/dt")
def _edit(s: Session, args: str) -> None:
    want = _find(s, args, "edit")
    text = next(st.text for st in s.statements.ordered() if st.key == want)
    s.prefill = text
    s.attach(statement=text)
    if not s.interactive:
        s.say(text)


@command("undo", "undo", "undo the last change to the statements")
def _undo(s: Session, args: str) -> None:
    _no_args(args, "undo")
    if not s.history:
        raise InputError("nothing to undo")
    previous = s.history.pop()
    s.statements = previous
    s.model, s.problem = s.rebuild(previous)
    s.say(f"undone; {len(previous)} statements")


@command("clear", "clear", "start an empty model")
def _clear(s: Session, args: str) -> None:
    _no_args(args, "clear")
    s.file = None
    s.commit(StatementSet(), "cleared")
