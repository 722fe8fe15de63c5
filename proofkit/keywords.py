"""The reserved words of the model language, in one place (standard library only).

The parser (``proofkit.lang``: reserved names, function names, "did you mean"
hints) and the interactive shell (``proofkit.shell``: completion, unknown-line hints)
both read these tuples, so the two never disagree about what starts a
statement. This module must never import anything heavy (the shell starts
without lark or sympy) and holds no grammar rules: ``grammar/model.lark`` is
the language; change both together.
"""

from __future__ import annotations

__all__ = ["CLAIM_WORDS", "FUNCTION_NAMES", "KEYWORDS", "STATEMENT_WORDS"]

# Words that start a statement (besides a time derivative ``dx/dt = ...``).
STATEMENT_WORDS = (
    "system",
    "constant",
    "parameter",
    "state",
    "let",
    "domain",
    "equilibrium",
    "claim",
)
# Words inside claims and equilibrium statements.
CLAIM_WORDS = (
    "stable",
    "unstable",
    "globally",
    "attracts",
    "no",
    "cycle",
    "in",
    "at",
    "nominal",
    "and",
)
KEYWORDS = frozenset(STATEMENT_WORDS + CLAIM_WORDS)
# The functions an expression may call (``proofkit.model.ELEMENTARY`` maps sympy's to these).
FUNCTION_NAMES = ("sin", "cos", "tan", "exp", "log", "sqrt", "tanh", "abs")
