"""Claim-directed basin search: a certified sublevel set that holds the claim's set.

For ``claim E attracts SET`` the volume of ``{V <= level}`` matters less than
whether SET fits inside it (and the set inside the domain). From the
Lyapunov-equation ``V`` at its best domain-aware level, each round fixes the
level probe's multipliers and lowers the largest value of ``V`` on SET
(:meth:`proofkit.sos.ascent.BasinSearch.claim_step`, the expanding interior
idea of Jarvis-Wloszek, Feeley, Tan, Sun and Packard, CDC 2003), then probes
the level of the new ``V`` again. The ratio ``gamma / level`` (the claim's set
lies in ``{V <= gamma}``) is followed while it decreases; once it is below
one the iterate is handed to the exact step. Degrees are raised in turn (warm start).

Everything here is numerical: a hint for :mod:`proofkit.proofs.basin`, which
makes the evidence exact, and the audit decides. This module never marks
anything proved and never uses the true region of attraction.
"""

from __future__ import annotations

import time
from collections.abc import Callable, Iterator, Sequence
from dataclasses import dataclass, field
from typing import Any

from proofkit.sos._ascent_maps import NumPoly

__all__ = ["ClaimLog", "claim_iterates"]

TARGET = 0.995  # gamma / level below which the exact step is tried
STALL_GAIN = 2e-3  # a round improving the ratio by less than this share counts as stalled
STALL_ROUNDS = 3


@dataclass
class ClaimLog:
    """What the claim-directed search tried, for the reason of a "not proved"."""

    degrees: list[int] = field(default_factory=list)
    rounds: int = 0
    best_ratio: float = float("inf")
    stopped: str = ""

    def summary(self) -> str:
        if not self.degrees:
            return "the claim-directed search did not start"
        ratio = (
            f"the claim's set reached V = {self.best_ratio:.4g} times the certified level"
            if self.best_ratio < float("inf")
            else "no round bounded V on the claim's set"
        )
        degrees = ", ".join(map(str, self.degrees))
        tail = f"; {self.stopped}" if self.stopped else ""
        return f"claim-directed search at degrees {degrees}, {self.rounds} rounds: {ratio}{tail}"


def _round(search: Any, it: Any, degree: int) -> tuple[Any, float] | None:
    """One claim step and level probe: the next iterate and its ratio gamma / level."""
    got = search.claim_step(it, search.shapes(degree))
    if got is None:
        return None
    v, gamma = got
    nxt = search.level_of(NumPoly(v.exps, v.coeffs / it.level), degree, 1.0)
    if nxt is None:
        return None
    nxt.history = [*it.history, (degree, len(it.history) + 1, nxt.level, nxt.volume)]
    return nxt, gamma / it.level / nxt.level


def claim_iterates(
    search: Any,
    start: Any,
    degrees: Sequence[int],
    seconds: float,
    log: ClaimLog,
    say: Callable[[str], None],
) -> Iterator[Any]:
    """Yield iterates whose ``{V <= level}`` holds the claim's set (numerically).

    ``start`` is a degree-2 iterate; ``seconds`` bounds the whole search, shared
    out over ``degrees`` (time left over passes on to the next degree).
    """
    t0 = time.perf_counter()
    it = start
    for k, degree in enumerate(degrees):
        deadline = t0 + seconds * (k + 1) / len(degrees)
        if time.perf_counter() > deadline:
            log.stopped = f"time budget of {seconds:.0f} s used"
            return
        if degree != it.degree:
            nxt = search.raise_degree(it, degree)
            if nxt is None:
                log.stopped = f"no level was found at degree {degree}"
                return
            it = nxt
        log.degrees.append(degree)
        stall, best = 0, float("inf")
        while stall < STALL_ROUNDS and time.perf_counter() < deadline:
            got = _round(search, it, degree)
            log.rounds += 1
            if got is None:
                break
            nxt, ratio = got
            if ratio >= best:  # numerically worse: keep the best iterate, try the next degree
                break
            stall = stall + 1 if ratio > best * (1 - STALL_GAIN) else 0
            it, best = nxt, ratio
            log.best_ratio = min(log.best_ratio, ratio)
            say(f"degree {degree}, claim round {log.rounds}: the set reaches {ratio:.4g} x level")
            if ratio <= TARGET:
                yield it
