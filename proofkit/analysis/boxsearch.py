"""Certified equilibria of a non-polynomial field in a box: exclusion plus the Krawczyk test.

The search box is split (bisection of the widest side, with a budget on the
number of boxes). A box is *excluded* when the ball enclosure of some f_i
over it misses 0. A box is *certified* to hold exactly one zero when the
Krawczyk operator K(X) = m - Y f(m) + (I - Y J(X)) (X - m) (Krawczyk 1969;
Moore's existence test) lands strictly inside X; it is excluded when K(X)
misses X. Y is a floating-point inverse of J(m): any Y is valid, so floats
only steer the test, ball arithmetic decides. The list is complete when
every part of the box was excluded or certified.

Where the field is a quotient ``N/D`` (rational terms), the search runs on
the numerators ``N``, which have no poles: a zero of ``N`` in the box is an
equilibrium exactly when the enclosure of every ``D`` over its box misses 0,
so no box ever straddles a pole. Boxes where the argument of a ``log`` or of
a fractional power is certainly out of range lie outside the natural domain
and are excluded. :func:`search_settings` sets the time budget and a progress
callback for every search in its ``with`` block (the ``inspect`` command uses
it for ``--budget`` and its progress line on stderr).

A certified root is named exactly when a simple exact candidate (a rational,
or a rational multiple of pi) lies in its box and makes every f_i vanish
identically by sympy's exact evaluation.

May import: python-flint, numpy (start points only), sympy,
``analysis.intervals``.
This module must never report a root that the ball arithmetic did not certify.
"""

from __future__ import annotations

import itertools
import time
from collections.abc import Callable, Iterator, Sequence
from contextlib import contextmanager
from dataclasses import dataclass, field
from fractions import Fraction

import flint
import numpy as np
import sympy as sp

from proofkit.analysis.intervals import arb_value, compile_arb

__all__ = ["DEFAULT_SECONDS", "BoxResult", "CertifiedRoot", "box_search", "search_settings"]

Box = list[tuple[flint.fmpq, flint.fmpq]]
_SPLIT = flint.fmpq(19, 37)
DEFAULT_SECONDS = 20.0  # time budget of one search unless search_settings says otherwise
_SETTINGS: dict[str, object] = {"seconds": None, "progress": None}


@contextmanager
def search_settings(
    seconds: float | None = None, progress: Callable[[str], None] | None = None
) -> Iterator[None]:
    """Inside the block, searches use ``seconds`` as their budget and report to ``progress``."""
    saved = dict(_SETTINGS)
    _SETTINGS.update(seconds=seconds, progress=progress)
    try:
        yield
    finally:
        _SETTINGS.update(saved)


@dataclass(frozen=True, eq=False)
class CertifiedRoot:
    """A box that holds exactly one zero (``unique``); ``exact`` is that zero when identified.

    With ``unique`` False the box was not decided, but ``exact`` is a zero for sure.
    """

    box: tuple[tuple[sp.Rational, sp.Rational], ...]
    exact: tuple[sp.Expr, ...] | None
    unique: bool = True  # False: an exact zero found in an undecided box


@dataclass(frozen=True)
class BoxResult:
    roots: tuple[CertifiedRoot, ...]
    complete: bool
    reason: str
    boxes: int


def _arb_to_q(a: flint.arb) -> tuple[flint.fmpq, flint.fmpq]:
    """Exact rational bounds of a ball (mid - rad, mid + rad)."""
    m, e = a.mid().man_exp()
    r, f = a.rad().man_exp()
    mid = _dyadic(int(m), int(e))
    rad = _dyadic(int(r), int(f))
    return mid - rad, mid + rad


def _dyadic(m: int, e: int) -> flint.fmpq:
    return flint.fmpq(m * 2**e) if e >= 0 else flint.fmpq(m, 2 ** (-e))


def _ball(lo: flint.fmpq, hi: flint.fmpq) -> flint.arb:
    return flint.arb(lo).union(flint.arb(hi))


def _to_rational(q: flint.fmpq) -> sp.Rational:
    return sp.Rational(int(q.p), int(q.q))


def _cleared(fs: Sequence[sp.Expr], xs: Sequence[sp.Symbol]) -> tuple[list, list]:
    """Numerators to search and the denominators that must not vanish (1 where none)."""
    nums, dens = [], []
    for f in fs:
        num, den = sp.fraction(sp.together(f))
        if den.free_symbols & set(xs):
            nums.append(num)
            dens.append(den)
        else:
            nums.append(f)
            dens.append(sp.Integer(1))
    return nums, dens


def _domain_arguments(fs: Sequence[sp.Expr]) -> list[tuple[sp.Expr, bool]]:
    """Arguments that must be > 0 (log, negative fractional powers) or >= 0 (sqrt, ...)."""
    out = []
    for f in fs:
        for e in sp.preorder_traversal(f):
            if isinstance(e, sp.log):
                out.append((e.args[0], True))
            elif isinstance(e, sp.Pow) and e.exp.is_Rational and not e.exp.is_Integer:
                out.append((e.base, bool(e.exp < 0)))
    return out


class _Krawczyk:
    def __init__(self, fs: Sequence[sp.Expr], xs: Sequence[sp.Symbol]) -> None:
        self.n = len(xs)
        nums, dens = _cleared(fs, xs)
        self.f = [compile_arb(f, xs) for f in nums]
        self.J = [[compile_arb(sp.diff(f, x), xs) for x in xs] for f in nums]
        self.dens = [compile_arb(d, xs) for d in dens if d != 1]
        self.args = [(compile_arb(a, xs), strict) for a, strict in _domain_arguments(fs)]
        self.undefined = 0  # boxes excluded because the field is undefined on all of them

    def excluded_by_range(self, X: list[flint.arb]) -> bool:
        for a, strict in self.args:
            v = a(X)
            if v.is_finite() and (v < 0 or (strict and v <= 0)):
                self.undefined += 1
                return True
        for f in self.f:
            v = f(X)
            if v.is_finite() and not v.contains(0):
                return True
        return False

    def off_poles(self, box: Box) -> bool:
        """Every denominator is certainly nonzero on ``box``."""
        X = [_ball(lo, hi) for lo, hi in box]
        return all(d(X).is_finite() and not d(X).contains(0) for d in self.dens)

    def step(self, box: Box) -> tuple[str, Box | None]:
        """One Krawczyk test: ('unique', K∩X), ('none', None), ('contained', K∩X) or 'unknown'.

        'contained' gives K∩X, which holds every zero in X, without proving one exists.
        """
        n = self.n
        X = [_ball(lo, hi) for lo, hi in box]
        mids = [(lo + hi) / 2 for lo, hi in box]
        M = [flint.arb(m) for m in mids]
        fm = [f(M) for f in self.f]
        JX = [[J(X) for J in row] for row in self.J]
        Jm = [[J(M) for J in row] for row in self.J]
        try:
            Jf = np.array([[float(v.mid()) for v in row] for row in Jm])
            Y = np.linalg.inv(Jf)
        except (np.linalg.LinAlgError, ValueError, OverflowError):
            return "unknown", None
        if not np.all(np.isfinite(Y)):
            return "unknown", None
        Ya = [[flint.arb(float(v)) for v in row] for row in Y]
        out: Box = []
        inside = True
        for i in range(n):
            k = M[i]
            for j in range(n):
                k = k - Ya[i][j] * fm[j]
            for j in range(n):
                c = flint.arb(1 if i == j else 0)
                for m in range(n):
                    c = c - Ya[i][m] * JX[m][j]
                k = k + c * (X[j] - M[j])
            if not k.is_finite():
                return "unknown", None
            lo, hi = _arb_to_q(k)
            blo, bhi = box[i]
            if hi < blo or lo > bhi:
                return "none", None
            if not (blo < lo and hi < bhi):
                inside = False
            out.append((max(lo, blo), min(hi, bhi)))
        return ("unique", out) if inside else ("contained", out)


def _candidates(lo: flint.fmpq, hi: flint.fmpq) -> list[sp.Expr]:
    """Simple exact numbers near [lo, hi]: small-denominator rationals, rational multiples of pi."""
    mid = Fraction(int(((lo + hi) / 2).p), int(((lo + hi) / 2).q))
    out: list[sp.Expr] = []
    for den in (1, 2, 3, 4, 6, 8, 12):
        q = Fraction(round(mid * den), den)
        out.append(sp.Rational(q.numerator, q.denominator))
        qp = Fraction(round(float(mid) / np.pi * den), den)
        out.append(sp.Rational(qp.numerator, qp.denominator) * sp.pi)
    return list(dict.fromkeys(out))


def _identify(
    fs: Sequence[sp.Expr], xs: Sequence[sp.Symbol], box: Box
) -> tuple[sp.Expr, ...] | None:
    per_coord = []
    for lo, hi in box:
        cands = []
        for c in _candidates(lo, hi):
            ball = arb_value(c, 320)
            clo, chi = _arb_to_q(ball)
            if lo <= clo and chi <= hi:
                cands.append(c)
        if not cands:
            return None
        per_coord.append(cands[:3])
    for combo in itertools.product(*per_coord):
        subs = dict(zip(xs, combo, strict=True))
        if all(sp.expand(f.subs(subs)) == 0 for f in fs):
            return tuple(combo)
    return None


@dataclass
class _Bisection:
    """The state of one branch-and-prune run over a box."""

    stack: list[Box]
    found: list[Box] = field(default_factory=list)
    undecided: list[Box] = field(default_factory=list)
    processed: int = 0
    unresolved: int = 0


def _process(kr: _Krawczyk, b: Box, run: _Bisection, mw: flint.fmpq) -> None:
    """Exclude b, certify one zero in it, or split it (or give it up when tiny)."""
    X = [_ball(lo, hi) for lo, hi in b]
    if kr.excluded_by_range(X):
        return
    verdict, kbox = kr.step(b)
    if verdict == "none":
        return
    if verdict != "unique":
        # epsilon-inflation: a unique zero in a slightly larger box covers this box
        # too (and catches zeros on a face shared by two boxes)
        wide = [(lo - (hi - lo) / 8, hi + (hi - lo) / 8) for lo, hi in b]
        verdict, kbox = kr.step(wide)
    if verdict == "unique":
        assert kbox is not None
        run.found.append(_refine(kr, kbox))
        return
    widths = [hi - lo for lo, hi in b]
    k = max(range(len(b)), key=lambda i: widths[i])
    if widths[k] < mw:
        run.unresolved += 1
        if len(run.undecided) < 64:
            run.undecided.append(b)
        return
    lo, hi = b[k]
    mid = lo + (hi - lo) * _SPLIT  # off-centre: rational zeros rarely sit on a face
    left, right = list(b), list(b)
    left[k], right[k] = (lo, mid), (mid, hi)
    run.stack.extend([right, left])


def _outcome_text(run: _Bisection, complete: bool, start: Box, roots: int, limits: str) -> str:
    box_text = " x ".join(f"[{_to_rational(lo)}, {_to_rational(hi)}]" for lo, hi in start)
    if complete:
        return (
            f"the box {box_text} is covered by {run.processed} boxes, each certified free of "
            f"equilibria or holding exactly one (Krawczyk test): {roots} "
            + ("equilibrium" if roots == 1 else "equilibria")
        )
    if run.stack:
        return (
            f"incomplete: budget reached ({run.processed} boxes of at most {limits}) "
            f"in the box {box_text}"
        )
    if run.unresolved:
        return f"incomplete: {run.unresolved} tiny boxes in {box_text} could not be decided"
    return "incomplete: two root enclosures could not be separated"


def _root_of(box: Box, exact: tuple[sp.Expr, ...] | None, unique: bool = True) -> CertifiedRoot:
    return CertifiedRoot(
        box=tuple((_to_rational(lo), _to_rational(hi)) for lo, hi in box),
        exact=exact,
        unique=unique,
    )


def _exact_in_undecided(
    fs: Sequence[sp.Expr], xs: Sequence[sp.Symbol], run: _Bisection, start: Box, seen: set
) -> list[CertifiedRoot]:
    """Undecided tiny boxes (typically a multiple zero): exact candidates where f vanishes.

    Such a point is an equilibrium for sure, though not certified unique near it.
    """
    out = []
    for b in run.undecided:
        wide = [(lo - (hi - lo), hi + (hi - lo)) for lo, hi in b]
        exact = _identify(fs, xs, wide)
        if exact is None or exact in seen or not _exact_in_box(exact, start):
            continue
        seen.add(exact)
        out.append(_root_of(wide, exact, unique=False))
    return out


def box_search(
    fs: Sequence[sp.Expr],
    xs: Sequence[sp.Symbol],
    box: Sequence[tuple[sp.Rational, sp.Rational]],
    budget: int = 20000,
    min_width: Fraction = Fraction(1, 2**30),
    max_seconds: float | None = None,
) -> BoxResult:
    """Every zero of fs in the box, each certified unique in a small box; and is that all?

    ``max_seconds``: the time budget (default: the enclosing :func:`search_settings`,
    else :data:`DEFAULT_SECONDS`).
    """
    if max_seconds is None:
        max_seconds = float(_SETTINGS["seconds"] or DEFAULT_SECONDS)  # type: ignore[arg-type]
    kr = _Krawczyk(fs, xs)
    start: Box = [
        (flint.fmpq(int(lo.p), int(lo.q)), flint.fmpq(int(hi.p), int(hi.q))) for lo, hi in box
    ]
    run = _Bisection(stack=[start])
    mw = flint.fmpq(min_width.numerator, min_width.denominator)
    old = flint.ctx.prec
    flint.ctx.prec = 80
    try:
        _run(kr, run, mw, budget, max_seconds)
        roots, merge_ok = _merge(kr, run.found)
        kept, notes, open_roots = _classify(kr, fs, xs, roots, start)
    finally:
        flint.ctx.prec = old
    searched = not run.stack and run.unresolved == 0 and merge_ok
    complete = searched and not open_roots
    reason = _outcome_text(run, searched, start, len(kept), f"{budget}, {max_seconds:g} s")
    reason += "".join(f"; {n}" for n in notes)
    out = [_root_of(rb, exact) for rb, exact in kept]
    extra = _exact_in_undecided(fs, xs, run, start, {r.exact for r in out if r.exact is not None})
    if extra:
        reason += (
            f"; {len(extra)} exact equilibria found in undecided boxes (exact zeros; no other "
            "zero near them is excluded)"
        )
    return BoxResult((*out, *extra), complete, reason, run.processed)


def _classify(
    kr: _Krawczyk, fs: Sequence[sp.Expr], xs: Sequence[sp.Symbol], roots: list[Box], start: Box
) -> tuple[list[tuple[Box, tuple[sp.Expr, ...] | None]], list[str], int]:
    """Certified zeros of the numerators: equilibria in the box, with notes; and how many
    stay undecided (on a pole, or on the boundary of the box, not settled exactly)."""
    kept: list[tuple[Box, tuple[sp.Expr, ...] | None]] = []
    notes: list[str] = []
    on_pole = outside = undecided = 0
    nums, dens = _cleared(fs, xs)
    for r in roots:
        if not _meets(r, start):
            continue
        if not kr.off_poles(r):
            exact = _identify(nums, xs, r)
            if exact is not None and any(
                sp.simplify(d.subs(dict(zip(xs, exact, strict=True)))) == 0 for d in dens
            ):
                on_pole += 1  # exactly on a pole: the field is undefined there
            else:
                undecided += 1
            continue
        exact = _identify(fs, xs, r)
        if _within(r, start):
            kept.append((r, exact))
        elif exact is not None and _exact_in_box(exact, start):
            kept.append((r, exact))  # on the boundary of the box, exactly inside
        elif exact is not None:
            outside += 1
        else:
            undecided += 1
    if kr.dens:
        notes.append("zeros of the numerators count only where every denominator is nonzero")
    if on_pole:
        notes.append(f"{on_pole} zero(s) of the numerators lie exactly on a pole (not equilibria)")
    if kr.undefined:
        notes.append(f"{kr.undefined} boxes lie where the field is undefined (log, sqrt)")
    if undecided:
        notes.append(
            f"{undecided} root enclosure(s) on a pole or the box boundary could not be decided"
        )
    return kept, notes, undecided


def _run(kr: _Krawczyk, run: _Bisection, mw: flint.fmpq, budget: int, seconds: float) -> None:
    """Process boxes until none are left or the budget is spent; report progress each second."""
    say = _SETTINGS["progress"]
    t0 = time.monotonic()
    t_end, next_note = t0 + seconds, t0 + 1.0
    while run.stack and run.processed < budget:
        now = time.monotonic()
        if now > t_end:
            break
        if callable(say) and now >= next_note:
            next_note = now + 1.0
            say(
                f"box search: {run.processed} boxes done, {len(run.stack)} to go, "
                f"{len(run.found)} root enclosures, {now - t0:.0f} of {seconds:g} s"
            )
        run.processed += 1
        _process(kr, run.stack.pop(), run, mw)


def _exact_in_box(point: tuple[sp.Expr, ...], box: Box) -> bool:
    for v, (lo, hi) in zip(point, box, strict=True):
        clo, chi = _arb_to_q(arb_value(v, 256))
        if not (lo <= clo and chi <= hi):
            return False
    return True


def _refine(kr: _Krawczyk, box: Box, rounds: int = 6) -> Box:
    """Shrink a box known to hold exactly one zero: X <- K(X) ∩ X keeps that zero."""
    for _ in range(rounds):
        verdict, kbox = kr.step(box)
        if verdict not in ("unique", "contained") or kbox is None:
            break
        box = kbox
    return box


def _merge(kr: _Krawczyk, boxes: list[Box]) -> tuple[list[Box], bool]:
    """Drop duplicates: overlapping certified boxes whose hull is certified hold one root."""
    out: list[Box] = []
    ok = True
    for b in boxes:
        dup = False
        for k, c in enumerate(out):
            if _meets(b, c):
                union = _unique_union(kr, b, c)
                if union is not None:
                    out[k] = union
                    dup = True
                    break
                ok = False
        if not dup:
            out.append(b)
    return out, ok


def _unique_union(kr: _Krawczyk, b: Box, c: Box) -> Box | None:
    """A box holding both that the Krawczyk test certifies to hold exactly one zero, or None.

    Both boxes hold a zero; when one zero is unique in a box that contains both, they
    are the same root. The hull is widened step by step (epsilon-inflation), as a
    side of zero width (a root on the face shared by two boxes) can never pass.
    """
    hull = [(min(p[0], q[0]), max(p[1], q[1])) for p, q in zip(b, c, strict=True)]
    for scale in (0, 1, 8):
        pad = [(hi - lo) * scale / 8 + flint.fmpq(1, 2**60) * scale for lo, hi in hull]
        wide = [(lo - e, hi + e) for (lo, hi), e in zip(hull, pad, strict=True)]
        if kr.step(wide)[0] == "unique":
            return wide
    return None


def _within(b: Box, c: Box) -> bool:
    return all(cl <= bl and bh <= ch for (bl, bh), (cl, ch) in zip(b, c, strict=True))


def _meets(b: Box, c: Box) -> bool:
    return all(bl <= ch and cl <= bh for (bl, bh), (cl, ch) in zip(b, c, strict=True))
