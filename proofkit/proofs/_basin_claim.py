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
from fractions import Fraction
from typing import Any

from proofkit.sos._ascent_maps import NumPoly

__all__ = ["ClaimLog", "claim_iterates", "set_leaves_domain"]

TARGET = 0.995  # gamma / level below which the exact step is tried
STALL_GAIN = 2e-3  # a round improving the ratio by less than this share counts as stalled
STALL_ROUNDS = 3
GROWTH = 4.0  # a degree is tried only if this many times the last degree's time is left


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
    it, last = start, 0.0
    for k, degree in enumerate(degrees):
        t_degree = time.perf_counter()
        deadline = t0 + seconds * (k + 1) / len(degrees)
        if t_degree - t0 + GROWTH * last > seconds:  # a higher degree costs more than the last
            log.stopped = f"degree {degree} not tried within the budget of {seconds:.0f} s"
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
        last = time.perf_counter() - t_degree


def set_leaves_domain(setup: Any, states: Sequence[str], seed: int = 5) -> str | None:
    """Why no sublevel set inside the domain can hold the claim's set, or None.

    Samples the set; a sample outside the domain is rounded to a rational point and
    checked exactly (in the set, some domain condition fails), then named.
    """
    import flint
    import numpy as np

    from proofkit.proofs._basin_sim import _sample_set, numeric

    st = setup.setting
    if not st.domain or not st.set_conds:
        return None
    n = st.n
    conds = [(numeric([g], n)[0], strict) for g, strict in st.set_conds]
    reach = max(float(s) for s in st.scale)
    pts = _sample_set(conds, n, reach, np.random.default_rng(seed))
    if len(pts) == 0:
        return None
    bad = np.zeros(len(pts), dtype=bool)
    for h, strict in st.domain:
        val = numeric([h], n)[0](pts)
        bad |= val <= 0 if strict else val < 0

    def inside(q: list) -> bool:
        return all((g(*q) > 0) if s else (g(*q) >= 0) for g, s in st.set_conds)

    for i, den in ((i, den) for i in np.flatnonzero(bad)[:10] for den in (10, 100, 1000)):
        y = [Fraction(round(float(c) * den), den) for c in pts[i]]
        q = [flint.fmpq(c.numerator, c.denominator) for c in y]
        if not inside(q):
            continue
        for j, (h, strict) in enumerate(st.domain):
            if (h(*q) <= 0) if strict else (h(*q) < 0):
                at = ", ".join(
                    f"{s} = {p + c}" for s, p, c in zip(states, setup.point, y, strict=True)
                )
                return (
                    f"the claim's set leaves the domain: the point {at} lies in the set but "
                    f"not in domain condition {j + 1} (checked exactly); claims are proved "
                    "inside the domain"
                )
    return None
