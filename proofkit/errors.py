"""The exception hierarchy: one root, one subclass per pipeline stage.

Every error a user can cause is an :class:`InputError` (exit code 2) whose
message names the file, line and column and shows the line with a caret.
Anything else escaping the program is a bug (exit code 3).

This module must never import anything outside the standard library (the audit
path and the command line load it first).
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = [
    "CertificateRejected",
    "InputError",
    "LimitError",
    "ModelError",
    "NumericalError",
    "ProofkitError",
    "SourceSpan",
]


class ProofkitError(Exception):
    """Root of every error raised on purpose by proofkit."""


@dataclass(frozen=True)
class SourceSpan:
    """Where something stands in a model file (1-based line and column)."""

    file: str
    line: int
    column: int
    end_column: int | None = None

    def __str__(self) -> str:
        return f"{self.file}:{self.line}:{self.column}"


class InputError(ProofkitError):
    """Bad model text or a bad file given by the user.

    ``str(err)`` is the full teaching message: location, the offending line
    with a caret, what was expected and, where one exists, a hint.
    """

    def __init__(
        self,
        message: str,
        span: SourceSpan | None = None,
        *,
        source_line: str | None = None,
        hint: str | None = None,
    ) -> None:
        self.message = message
        self.span = span
        self.source_line = source_line
        self.hint = hint
        super().__init__(self.render())

    def render(self) -> str:
        head = f"{self.span}: error: {self.message}" if self.span else f"error: {self.message}"
        lines = [head]
        if self.span is not None and self.source_line is not None:
            text = self.source_line.rstrip("\n")
            width = max(1, (self.span.end_column or self.span.column + 1) - self.span.column)
            text, offset, width = _window(text, self.span.column - 1, width)
            lines.append(f"    {text}")
            lines.append("    " + " " * offset + "^" * width)
        if self.hint:
            lines.append(f"hint: {self.hint}")
        return "\n".join(lines)


_SHOWN = 120  # characters of a long source line shown around the fault


def _window(text: str, offset: int, width: int) -> tuple[str, int, int]:
    """A long line shortened to the part around ``offset`` (with "..." marks)."""
    if len(text) <= _SHOWN:
        return text, offset, width
    start = max(0, offset - _SHOWN // 2)
    end = min(len(text), start + _SHOWN)
    head = "..." if start > 0 else ""
    tail = "..." if end < len(text) else ""
    width = max(1, min(width, end - offset))
    return head + text[start:end] + tail, offset - start + len(head), width


class LimitError(InputError):
    """Input that exceeds a safety limit (exponent, nesting, size, term count)."""


class ModelError(ProofkitError):
    """A model that parses but cannot be analysed as asked (not polynomial, ...)."""


class NumericalError(ProofkitError):
    """A numerical stage failed in a way the caller should hear about."""


class CertificateRejected(ProofkitError):
    """The audit refused a certificate; the message names the claim and the step."""
