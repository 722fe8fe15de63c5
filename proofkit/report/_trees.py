"""A certificate's expression trees, read for the documents and the pictures.

``model.expressions`` holds the field of a non-polynomial model as trees
(``"p/q"``, ``["var", i]``, ``["pi"]``, ``["+", ...]``, ``["*", ...]``,
``["^", e, k]``, ``["sin" | "cos" | "tan" | "exp" | "log" | "sqrt" | "tanh", e]``).
This module re-describes, for a reader, the recast system the audit derives
from them (Papachristodoulou and Prajna, 2005): which atom each recast
variable stands for (``S = sin(delta)``, ``C = cos(delta) - 1``,
``E = exp(delta) - 1``, ``T = tanh(delta)``, in the audit's order:
trigonometric pairs first, then exponentials, then tanh, each in order of
first appearance, depth first), the argument
``delta`` of each as a polynomial in the deviation ``y = x - x*``, and the
multiple of pi split off by angle addition. It also evaluates trees and
recast variables with numpy, for drawing.

Description and display only: the audit derives the system itself and its
acceptance is the evidence. May import the standard library (numpy lazily,
for drawing). Must never import ``proofkit.audit``, sympy or matplotlib,
evaluate text, or decide anything.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from fractions import Fraction
from typing import Any

__all__ = ["Occurrence", "RecastView", "numpy_tree", "recast_values", "recast_view"]

Poly = dict[tuple[int, ...], Fraction]  # over the states (the deviation y)
MAX_NODES = 4000


class NotRecast(ValueError):
    """The trees are not of the shape the recast schema takes."""


@dataclass(frozen=True)
class Occurrence:
    """One ``sin``/``cos``/``exp`` node: its atom (index into the view's atoms) and q (of q pi)."""

    op: str
    atom: int
    q: Fraction


@dataclass(frozen=True)
class RecastView:
    """The recast variables of a field at a rational point, as the audit orders them."""

    n: int
    pairs: tuple[Poly, ...]  # delta of each trigonometric pair
    exps: tuple[Poly, ...]  # delta of each exponential atom
    occurrences: tuple[Occurrence, ...]
    tanhs: tuple[Poly, ...] = ()  # delta of each tanh atom

    @property
    def atoms(self) -> tuple[tuple[str, Poly], ...]:
        """(kind, delta) per atom: ``trig`` pairs, then ``exp``, then ``tanh``."""
        return (
            tuple(("trig", p) for p in self.pairs)
            + tuple(("exp", p) for p in self.exps)
            + tuple(("tanh", p) for p in self.tanhs)
        )

    @property
    def names(self) -> tuple[str, ...]:
        """``S1, C1, S2, C2, ..., E1, ..., T1, ...`` (the recast variables after the states)."""
        out: list[str] = []
        for k in range(len(self.pairs)):
            out += [f"S{k + 1}", f"C{k + 1}"]
        out += [f"E{k + 1}" for k in range(len(self.exps))]
        return tuple(out + [f"T{k + 1}" for k in range(len(self.tanhs))])


# --- polynomials over the deviation, exact ------------------------------------------
def _add(p: Poly, q: Poly) -> Poly:
    out = dict(p)
    for e, c in q.items():
        out[e] = out.get(e, Fraction(0)) + c
    return {e: c for e, c in out.items() if c != 0}


def _mul(p: Poly, q: Poly) -> Poly:
    out: Poly = {}
    for e1, c1 in p.items():
        for e2, c2 in q.items():
            e = tuple(a + b for a, b in zip(e1, e2, strict=True))
            out[e] = out.get(e, Fraction(0)) + c1 * c2
    return {e: c for e, c in out.items() if c != 0}


def _const(c: Fraction, n: int) -> Poly:
    return {tuple([0] * n): c} if c else {}


class _Walk:
    """Arguments of atoms as exact polynomials in y; collects atoms and occurrences."""

    def __init__(self, n: int, point: Sequence[Fraction], nominal: Sequence[Fraction]) -> None:
        self.n, self.point, self.nominal = n, list(point), list(nominal)
        self.pairs: list[Poly] = []
        self.exps: list[Poly] = []
        self.tanhs: list[Poly] = []
        self.occurrences: list[Occurrence] = []
        self.nodes = 0

    def poly(self, e: Any) -> Poly | None:
        """A polynomial subtree (None when it holds an atom or a constant root)."""
        self.nodes += 1
        if self.nodes > MAX_NODES:
            raise NotRecast("too many nodes")
        if isinstance(e, str):
            return _const(Fraction(e), self.n)
        op = e[0]
        if op == "var":
            i = int(e[1])
            if i >= self.n:
                return _const(self.nominal[i - self.n], self.n)
            unit = tuple(int(j == i) for j in range(self.n))
            return _add({unit: Fraction(1)}, _const(self.point[i], self.n))
        if op in ("+", "*"):
            parts = [self.poly(a) for a in e[1:]]
            if any(p is None for p in parts):
                return None
            acc = parts[0] or {}
            for p in parts[1:]:
                acc = _add(acc, p or {}) if op == "+" else _mul(acc, p or {})
            return acc
        if op == "^":
            base = self.poly(e[1])
            if base is None or int(e[2]) < 0:
                return None if base is None else self._negative_power()
            acc = _const(Fraction(1), self.n)
            for _ in range(int(e[2])):
                acc = _mul(acc, base)
            return acc
        if op in ("sin", "cos", "exp", "tanh"):
            self._atom(op, e[1])
            return None
        if op == "sqrt" and isinstance(e[1], str):
            return None  # a constant in Q(sqrt d)
        raise NotRecast(f"{op} is not recast")

    def _negative_power(self) -> Poly:
        raise NotRecast("a negative power")

    def angle(self, e: Any) -> tuple[Poly, Fraction]:
        """An argument as (polynomial in y, rational multiple of pi)."""
        if not isinstance(e, str) and e[0] == "pi":
            return {}, Fraction(1)
        if not isinstance(e, str) and e[0] == "+":
            acc, q = {}, Fraction(0)
            for a in e[1:]:
                p, qa = self.angle(a)
                acc, q = _add(acc, p), q + qa
            return acc, q
        if not isinstance(e, str) and e[0] == "*" and any(_has_pi(a) for a in e[1:]):
            k = Fraction(1)
            for a in e[1:]:
                if _has_pi(a):
                    p, qa = self.angle(a)
                    if p:
                        raise NotRecast("pi times a variable")
                    k *= qa
                else:
                    c = self.poly(a)
                    if c is None or any(sum(x) for x in c):
                        raise NotRecast("pi times a variable")
                    k *= c.get(tuple([0] * self.n), Fraction(0))
            return {}, k
        p = self.poly(e)
        if p is None:
            raise NotRecast("an atom inside an atom")
        return p, Fraction(0)

    def _atom(self, op: str, arg: Any) -> None:
        delta, q = self.angle(arg)
        if delta.get(tuple([0] * self.n)):
            raise NotRecast("an argument that does not vanish at the point")
        table = {"exp": self.exps, "tanh": self.tanhs}.get(op, self.pairs)
        if delta not in table:
            table.append(delta)
        self.occurrences.append(Occurrence(op, table.index(delta), q))


def _has_pi(e: Any) -> bool:
    if isinstance(e, str):
        return False
    if e[0] == "pi":
        return True
    return e[0] in ("+", "*") and any(_has_pi(a) for a in e[1:])


def recast_view(
    components: Sequence[Any], n: int, point: Sequence[Any], nominal: Sequence[Any] = ()
) -> RecastView | None:
    """The recast variables of ``components`` at the rational ``point`` (None: not recast)."""
    try:
        walk = _Walk(n, [Fraction(str(c)) for c in point], [Fraction(str(c)) for c in nominal])
        for e in components:
            walk.poly(e)
    except (NotRecast, ValueError, TypeError, IndexError, ZeroDivisionError):
        return None
    offset = {"exp": len(walk.pairs), "tanh": len(walk.pairs) + len(walk.exps)}
    occ = tuple(Occurrence(o.op, o.atom + offset.get(o.op, 0), o.q) for o in walk.occurrences)
    if not walk.pairs and not walk.exps and not walk.tanhs:
        return None
    return RecastView(n, tuple(walk.pairs), tuple(walk.exps), occ, tuple(walk.tanhs))


# --- numpy evaluation (drawing only) ---------------------------------------------------
_NUMPY = {"sin", "cos", "tan", "exp", "log", "sqrt", "tanh"}


def numpy_tree(tree: Any, n: int, nominal: Sequence[float] = ()) -> Callable[..., Any]:
    """A vectorised function of the ``n`` states computed from ``tree`` (floats, display)."""
    import numpy as np

    def run(e: Any, xs: Sequence[Any]) -> Any:
        if isinstance(e, str):
            return float(Fraction(e))
        op = e[0]
        if op == "var":
            i = int(e[1])
            return xs[i] if i < n else float(nominal[i - n])
        if op == "pi":
            return float(np.pi)
        if op == "+":
            return sum((run(a, xs) for a in e[2:]), run(e[1], xs))
        if op == "*":
            acc = run(e[1], xs)
            for a in e[2:]:
                acc = acc * run(a, xs)
            return acc
        if op == "^":
            k = int(e[2])
            base = run(e[1], xs)
            return base**k if k >= 0 else 1.0 / base ** (-k)
        if op in _NUMPY:
            return getattr(np, op)(run(e[1], xs))
        raise ValueError(f"cannot draw the expression {op!r}")

    def f(*xs: Any) -> Any:
        with np.errstate(all="ignore"):
            return run(tree, xs)

    return f


def _poly_value(p: Poly, ys: Sequence[Any]) -> Any:
    acc: Any = 0.0
    for e, c in p.items():
        term: Any = float(c)
        for y, k in zip(ys, e, strict=True):
            if k:
                term = term * y**k
        acc = acc + term
    return acc


def recast_values(view: RecastView, ys: Sequence[Any]) -> list[Any]:
    """The recast variables (``S, C`` per pair, then ``E``, then ``T``) at the deviations."""
    import numpy as np

    out: list[Any] = []
    with np.errstate(all="ignore"):
        for delta in view.pairs:
            v = _poly_value(delta, ys)
            out += [np.sin(v), np.cos(v) - 1.0]
        for delta in view.exps:
            out.append(np.expm1(_poly_value(delta, ys)))
        for delta in view.tanhs:
            out.append(np.tanh(_poly_value(delta, ys)))
    return out
