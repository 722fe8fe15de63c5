"""The building blocks of a proof document, shared by the document builder and the writers.

A document is a list of :class:`Block`; text runs are segments ``("t", plain
text)`` or ``("m", inline LaTeX math)``. The writers lay blocks out as Markdown
or LaTeX. May import: the standard library only. Must never hold a number
that did not come from a certificate.
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["Block", "Seg", "m", "para", "t"]

Seg = tuple[str, str]  # ("t", plain text) or ("m", inline LaTeX math)


@dataclass(frozen=True)
class Block:
    kind: str  # heading | para | math | code | items | checks | table | figure
    text: str = ""
    level: int = 2
    segs: tuple[Seg, ...] = ()
    items: tuple[tuple[Seg, ...], ...] = ()
    header: tuple[str, ...] = ()
    rows: tuple[tuple[tuple[Seg, ...], ...], ...] = ()


def t(text: str) -> Seg:
    return ("t", text)


def m(latex: str) -> Seg:
    return ("m", latex)


def para(*segs: Seg) -> Block:
    return Block("para", segs=segs)
