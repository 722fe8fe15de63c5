"""The model a shell session builds: statements kept by key, edited line by line.

Each statement has a key (``("equation", "x")`` for ``dx/dt = ...``,
``("parameter", "k")``, ``("claim", "open stable")``, ...); entering a
statement with the key of an existing one replaces it, so re-typing
``dx/dt = ...`` changes that equation. The text of the model is the
statements in the language's natural order (system, constants, parameters,
state, shorthands, equations, domain, equilibria, claims), which is what
``save`` writes and what the parser reads.

Keys are found by looking at the first words of a line with regular
expressions; the statement itself is checked only by the parser (through
:func:`proofkit.parse`). Nothing here evaluates text.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

__all__ = ["Statement", "StatementSet", "key_of", "split_statements"]

ORDER = (
    "system",
    "constant",
    "parameter",
    "state",
    "let",
    "equation",
    "domain",
    "equilibrium",
    "claim",
)

_KEYED = re.compile(r"^(constant|parameter|let|equilibrium|const|param)\s+([A-Za-z_]\w*)")
_EQUATION = re.compile(r"^d\s*([A-Za-z_]\w*)\s*/\s*dt\b|^([A-Za-z_]\w*)\s*'")
_NAME = re.compile(r"[A-Za-z_]\w*")
SCAFFOLD = "pk_scaffold_state"
_OLD = {"const": "constant", "param": "parameter"}
_OPEN, _CLOSE = "([", ")]"
_TRAILING = ("+", "-", "*", "/", "^", "=", ",", "<", ">", "and")


def _strip_comment(line: str) -> str:
    return line.split("#", 1)[0].rstrip()


def key_of(text: str) -> tuple[str, str] | None:
    """The key of a statement line, or None when the line is not a statement."""
    line = _strip_comment(text).strip()
    word = line.split(maxsplit=1)[0] if line else ""
    if word in ("system", "state", "domain"):
        return (word, "")
    if word == "claim":
        return ("claim", " ".join(line.split()[1:]))
    m = _KEYED.match(line)
    if m:
        return (_OLD.get(m.group(1), m.group(1)), m.group(2))
    m = _EQUATION.match(line)
    if m and "=" in line:
        return ("equation", m.group(1) or m.group(2))
    return None


def unfinished(text: str) -> bool:
    """True when a statement continues on the next line (open bracket, trailing operator)."""
    line = _strip_comment(text)
    depth = sum(line.count(c) for c in _OPEN) - sum(line.count(c) for c in _CLOSE)
    stripped = line.rstrip()
    return depth > 0 or (bool(stripped) and stripped.endswith(_TRAILING))


def split_statements(text: str) -> list[str]:
    """The statements of a model text, comments dropped, continued lines joined."""
    out: list[str] = []
    pending = ""
    for raw in text.splitlines():
        line = _strip_comment(raw)
        if not line.strip() and not pending:
            continue
        pending = f"{pending} {line.strip()}" if pending else line.strip()
        if not unfinished(pending):
            out.append(pending)
            pending = ""
    if pending:
        out.append(pending)
    return out


@dataclass(frozen=True)
class Statement:
    key: tuple[str, str]
    text: str


class StatementSet:
    """The statements of the session's model, by key, in entry order within each kind."""

    def __init__(self, statements: list[Statement] | None = None) -> None:
        self._items: list[Statement] = list(statements or [])

    def copy(self) -> StatementSet:
        return StatementSet(self._items)

    def __len__(self) -> int:
        return len(self._items)

    def put(self, st: Statement) -> str:
        """Add or replace (same key); returns "added" or "replaced"."""
        for k, old in enumerate(self._items):
            if old.key == st.key:
                self._items[k] = st
                return "replaced"
        self._items.append(st)
        return "added"

    def drop(self, key: tuple[str, str]) -> Statement | None:
        for k, old in enumerate(self._items):
            if old.key == key:
                return self._items.pop(k)
        return None

    def ordered(self) -> list[Statement]:
        return sorted(self._items, key=lambda s: ORDER.index(s.key[0]))

    def key_list(self) -> list[tuple[str, str]]:
        return [s.key for s in self.ordered()]

    def text(self) -> str:
        return "".join(s.text + "\n" for s in self.ordered())

    def scaffolded(self) -> StatementSet:
        """The statements plus ``dX/dt = 0`` for each state without an equation (and a
        state statement when there is none), so that a new statement can be checked
        on its own merits while the model is still being typed."""
        out = self.copy()
        keys = self.key_list()
        names = self.state_names()
        if names is None:
            names = [k[1] for k in keys if k[0] == "equation"] or [SCAFFOLD]
            out.put(Statement(("state", ""), "state " + ", ".join(names)))
        for name in names:
            if ("equation", name) not in keys:
                out.put(Statement(("equation", name), f"d{name}/dt = 0"))
        return out

    def state_names(self) -> list[str] | None:
        """The names in the state statement (None when there is none)."""
        state = next((st for st in self._items if st.key[0] == "state"), None)
        if state is None:
            return None
        names = [n.strip() for n in _strip_comment(state.text)[len("state") :].split(",")]
        return [n for n in names if _NAME.fullmatch(n)]

    def line_of(self, key: tuple[str, str]) -> int:
        """1-based line of the statement with ``key`` in :meth:`text`."""
        return self.key_list().index(key) + 1
