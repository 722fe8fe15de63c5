"""Search programs whose unknowns are polynomials: assembly into sparse systems.

A :class:`SearchProgram` holds unknowns (free polynomials with a given
support, sums of squares with a given basis = Gram matrices, scalars), fixed
rational *levels* (e.g. a sublevel value fixed per bisection step, passed to
the solver as a parameter), and linear polynomial identities ``expr == 0``
built with :class:`PolyExpr` arithmetic (products with fixed polynomials,
partial derivatives and Lie derivatives of unknowns). Each identity becomes
ONE sparse coefficient-matching system ``sum_u A_u vec(u) = b`` built with
numpy index arithmetic.

A program is never changed behind its caller's back: a reduction (fewer
Gram basis monomials) is :meth:`SearchProgram.with_bases`, which returns a NEW
program with the same names (see :mod:`proofkit.sos.reduce` for the inverse
data). ``version`` counts structural changes, so that solvers may cache the
compiled problem and re-solve after a mere level change.

This module only builds and numbers things; it never solves and never
decides anything (see :mod:`proofkit.sos.solve`); it must never import
:mod:`proofkit.exact` (exactness builds on search, not the other way).
"""

from __future__ import annotations

import time
from collections.abc import Sequence
from dataclasses import dataclass, field
from fractions import Fraction

import flint
import numpy as np
import scipy.sparse as sps
import sympy as sp

from proofkit.errors import ModelError
from proofkit.sos.basis import full_basis, newton_basis
from proofkit.sos.poly import PolySpace, encode_exponents, to_fmpq

__all__ = [
    "FreePoly",
    "Identity",
    "Level",
    "PolyExpr",
    "Scalar",
    "SearchProgram",
    "SosPoly",
    "Unknown",
]


class Unknown:
    """An unknown of a search program; ``ncols`` scalar columns in the systems."""

    kind = "unknown"

    def __init__(self, program: SearchProgram, name: str, ncols: int) -> None:
        self.program = program
        self.name = name
        self.ncols = ncols
        self.uid = -1

    @property
    def expr(self) -> PolyExpr:
        s = self.program.space
        return PolyExpr(s, s.zero(), [_Part(self, s.const(1), None, None)])

    def __add__(self, o: object) -> PolyExpr:
        return self.expr + o

    __radd__ = __add__

    def __sub__(self, o: object) -> PolyExpr:
        return self.expr - o

    def __rsub__(self, o: object) -> PolyExpr:
        return (-self.expr) + o

    def __neg__(self) -> PolyExpr:
        return -self.expr

    def __mul__(self, o: object) -> PolyExpr:
        return self.expr * o

    __rmul__ = __mul__

    def diff(self, i: int | sp.Symbol) -> PolyExpr:
        return self.expr.diff(i)

    def lie(self, field: Sequence[object]) -> PolyExpr:
        return self.expr.lie(field)

    def __repr__(self) -> str:
        return f"{type(self).__name__}({self.name!r})"


class FreePoly(Unknown):
    """A polynomial with unknown coefficients on a fixed monomial support."""

    kind = "free"

    def __init__(self, program: SearchProgram, name: str, support: np.ndarray) -> None:
        super().__init__(program, name, int(support.shape[0]))
        self.support = support


class SosPoly(Unknown):
    """A sum of squares ``b' Q b`` with fixed basis ``b`` and unknown PSD Gram matrix ``Q``.

    Columns are ``vec(Q)`` in column-major order (``n*n`` of them).
    """

    kind = "sos"

    def __init__(self, program: SearchProgram, name: str, basis: np.ndarray) -> None:
        n = int(basis.shape[0])
        super().__init__(program, name, n * n)
        self.basis = basis
        self.size = n


class Scalar(Unknown):
    """A real unknown number (a constant polynomial)."""

    kind = "scalar"

    def __init__(self, program: SearchProgram, name: str) -> None:
        super().__init__(program, name, 1)


@dataclass
class Level:
    """A fixed rational number that the solver sees as a parameter (changeable between solves)."""

    name: str
    value: Fraction
    lid: int = -1

    def set(self, value: object) -> None:
        q = to_fmpq(value)
        self.value = Fraction(int(q.p), int(q.q))


@dataclass
class _Part:
    """``level * mult * D(unknown)`` with D the identity or a partial derivative."""

    unknown: Unknown | None  # None: the fixed polynomial ``mult`` itself
    mult: flint.fmpq_mpoly
    dvar: int | None
    level: Level | None


class PolyExpr:
    """An expression affine in the unknowns: fixed part plus a list of parts."""

    def __init__(self, space: PolySpace, const: flint.fmpq_mpoly, parts: list[_Part]) -> None:
        self.space = space
        self.const = const
        self.parts = parts

    def _lift(self, o: object) -> PolyExpr:
        if isinstance(o, PolyExpr):
            return o
        if isinstance(o, Unknown):
            return o.expr
        return PolyExpr(self.space, self.space.coerce(o), [])

    def __add__(self, o: object) -> PolyExpr:
        other = self._lift(o)
        return PolyExpr(self.space, self.const + other.const, self.parts + other.parts)

    __radd__ = __add__

    def __neg__(self) -> PolyExpr:
        return self * -1

    def __sub__(self, o: object) -> PolyExpr:
        return self + (-self._lift(o))

    def __rsub__(self, o: object) -> PolyExpr:
        return (-self) + o

    def __mul__(self, o: object) -> PolyExpr:
        if isinstance(o, PolyExpr | Unknown):
            raise ModelError("a product of two unknowns is not linear; fix one of them first")
        if isinstance(o, Level):
            if any(p.level is not None for p in self.parts):
                raise ModelError("at most one level per term")
            parts = [_Part(p.unknown, p.mult, p.dvar, o) for p in self.parts]
            if not self.const.is_zero():
                parts.append(_Part(None, self.const, None, o))
            return PolyExpr(self.space, self.space.zero(), parts)
        g = self.space.coerce(o)
        return PolyExpr(
            self.space,
            self.const * g,
            [_Part(p.unknown, p.mult * g, p.dvar, p.level) for p in self.parts],
        )

    __rmul__ = __mul__

    def diff(self, i: int | sp.Symbol) -> PolyExpr:
        """Partial derivative (product rule; unknowns may be differentiated once)."""
        if isinstance(i, sp.Symbol):
            i = self.space.variables.index(i)
        parts: list[_Part] = []
        for p in self.parts:
            if p.unknown is None:
                parts.append(_Part(None, p.mult.derivative(i), None, p.level))
                continue
            if p.dvar is not None:
                raise ModelError("second derivatives of unknowns are not supported")
            dg = p.mult.derivative(i)
            if not dg.is_zero():
                parts.append(_Part(p.unknown, dg, None, p.level))
            if p.unknown.kind != "scalar":
                parts.append(_Part(p.unknown, p.mult, i, p.level))
        return PolyExpr(self.space, self.const.derivative(i), parts)

    def lie(self, field: Sequence[object]) -> PolyExpr:
        """Lie derivative ``sum_i f_i * d/dx_i`` along a polynomial vector field."""
        if len(field) != self.space.nvars:
            raise ModelError("vector field length differs from the number of variables")
        out = PolyExpr(self.space, self.space.zero(), [])
        for i, f in enumerate(field):
            out = out + self.diff(i) * f
        return out


@dataclass
class Block:
    """Coefficient-matching entries of one (unknown, level) pair in one identity.

    Entry ``k`` adds ``factor[k] * gcoef[tidx[k]]`` (exact) at row ``rows[k]``,
    column ``cols[k]``; ``matrix`` is the float CSR version.
    """

    unknown: Unknown | None
    level: Level | None
    rows: np.ndarray
    cols: np.ndarray
    factor: np.ndarray
    tidx: np.ndarray
    gcoef: list[flint.fmpq]
    matrix: sps.csr_matrix | None = None


@dataclass
class Identity:
    """One assembled identity ``sum blocks == 0`` over the monomials ``monomials``."""

    name: str
    expr: PolyExpr
    monomials: np.ndarray = field(default_factory=lambda: np.zeros((0, 0), np.int64))
    blocks: list[Block] = field(default_factory=list)
    assembly_time: float = 0.0


def _atoms(u: Unknown, nvars: int) -> tuple[np.ndarray, np.ndarray]:
    """Exponents and column numbers of the monomial atoms of an unknown."""
    if isinstance(u, FreePoly):
        return u.support, np.arange(u.ncols)
    if isinstance(u, SosPoly):
        b = u.basis
        n = b.shape[0]
        exps = (b[None, :, :] + b[:, None, :]).reshape(n * n, nvars)  # row i*n+j: b_i + b_j
        ii, jj = np.divmod(np.arange(n * n), n)
        return exps, jj * n + ii  # column-major vec(Q): entry (i, j) at j*n + i
    return np.zeros((1, nvars), np.int64), np.zeros(1, np.int64)


def _part_entries(part: _Part, nvars: int) -> tuple[np.ndarray, ...]:
    """(exps, cols, integer factor, multiplier term index) for one part."""
    if part.unknown is None:
        exps = np.zeros((1, nvars), np.int64)
        cols = np.zeros(1, np.int64)
    else:
        exps, cols = _atoms(part.unknown, nvars)
    factor = np.ones(len(cols), np.int64)
    if part.dvar is not None:
        factor = exps[:, part.dvar].copy()
        keep = factor != 0
        exps, cols, factor = exps[keep].copy(), cols[keep], factor[keep]
        exps[:, part.dvar] -= 1
    gexps, gcoef = PolySpace.arrays(part.mult, nvars)
    a, t = len(cols), len(gcoef)
    all_exps = (exps[:, None, :] + gexps[None, :, :]).reshape(a * t, nvars)
    return (
        all_exps,
        np.repeat(cols, t),
        np.repeat(factor, t),
        np.tile(np.arange(t), a),
        gcoef,
    )


class SearchProgram:
    """Unknown polynomials tied by linear polynomial identities, with an optional objective."""

    def __init__(self, variables: Sequence[sp.Symbol]) -> None:
        self.space = PolySpace(variables)
        self.unknowns: list[Unknown] = []
        self.levels: list[Level] = []
        self.identities: list[Identity] = []
        self.objective: tuple[str, dict[int, Fraction]] | None = None
        self._names: set[str] = set()
        self.version = 0  # bumped by every structural change (not by Level.set)
        self.solver_cache: dict[object, object] = {}  # compiled problems (solve.py)

    def _changed(self) -> None:
        self.version += 1
        self.solver_cache.clear()

    # -- unknowns -------------------------------------------------------
    def _register(self, u: Unknown) -> None:
        if u.name in self._names:
            raise ModelError(f"duplicate unknown name {u.name!r}")
        self._names.add(u.name)
        u.uid = len(self.unknowns)
        self.unknowns.append(u)
        self._changed()

    def _exps(self, monomials: object) -> np.ndarray:
        if isinstance(monomials, np.ndarray):
            return np.asarray(monomials, np.int64).reshape(-1, self.space.nvars)
        rows = [
            m if isinstance(m, tuple) else self.space.exponents_of(m)
            for m in monomials  # type: ignore[union-attr]
        ]
        return np.array(rows, np.int64).reshape(len(rows), self.space.nvars)

    def free(self, name: str, support: object) -> FreePoly:
        """A free polynomial on the given monomials (exponent array, tuples or sympy monomials)."""
        u = FreePoly(self, name, self._exps(support))
        self._register(u)
        return u

    def free_of_degree(self, name: str, max_degree: int, min_degree: int = 0) -> FreePoly:
        return self.free(name, full_basis(self.space.nvars, max_degree, min_degree))

    def sos(self, name: str, basis: object) -> SosPoly:
        """A sum of squares with the given basis (exponent array or monomials)."""
        u = SosPoly(self, name, self._exps(basis))
        self._register(u)
        return u

    def sos_of_degree(self, name: str, degree: int, min_degree: int = 0) -> SosPoly:
        """A sum of squares of polynomials of degree ``min_degree..degree // 2``."""
        return self.sos(name, full_basis(self.space.nvars, degree // 2, min_degree))

    def scalar(self, name: str) -> Scalar:
        u = Scalar(self, name)
        self._register(u)
        return u

    def level(self, name: str, value: object) -> Level:
        """A fixed rational the solver receives as a parameter; change it with ``set``."""
        q = to_fmpq(value)
        lv = Level(name, Fraction(int(q.p), int(q.q)), len(self.levels))
        self.levels.append(lv)
        self._changed()
        return lv

    def poly(self, obj: object) -> PolyExpr:
        """A fixed polynomial as an expression."""
        return PolyExpr(self.space, self.space.coerce(obj), [])

    # -- identities -----------------------------------------------------
    def _as_expr(self, obj: object) -> PolyExpr:
        if isinstance(obj, PolyExpr):
            return obj
        if isinstance(obj, Unknown):
            return obj.expr
        return self.poly(obj)

    def equate(self, lhs: object, rhs: object = 0, name: str | None = None) -> Identity:
        """Require ``lhs == rhs`` as polynomials (coefficient by coefficient)."""
        expr = self._as_expr(lhs) - rhs
        ident = Identity(name or f"identity{len(self.identities)}", expr)
        self.identities.append(ident)
        self._changed()
        return ident

    def possible_support(self, expr: object) -> np.ndarray:
        """Every monomial that ``expr`` could contain, whatever the unknowns' values."""
        expr = self._as_expr(expr)
        nv = self.space.nvars
        rows = [PolySpace.arrays(expr.const, nv)[0]]
        for p in expr.parts:
            rows.append(_part_entries(p, nv)[0])
        return np.unique(np.vstack(rows), axis=0)

    def require_sos(self, expr: object, name: str, basis: object | None = None) -> SosPoly:
        """Require ``expr`` to be a sum of squares: a new Gram unknown and ``expr == b'Qb``.

        Without a basis, the Newton-polytope basis of every possible term of
        ``expr`` is used.
        """
        expr = self._as_expr(expr)
        b = newton_basis(self.possible_support(expr)) if basis is None else self._exps(basis)
        s = self.sos(name, b)
        self.equate(expr, s, name=f"{name}:identity")
        return s

    def minimize(self, weights: dict[Scalar, object]) -> None:
        """Minimise ``sum w * scalar`` (exact rational weights)."""
        self.objective = ("min", {u.uid: Fraction(str(to_fmpq(w))) for u, w in weights.items()})
        self._changed()

    def maximize(self, weights: dict[Scalar, object]) -> None:
        self.objective = ("max", {u.uid: Fraction(str(to_fmpq(w))) for u, w in weights.items()})
        self._changed()

    def with_bases(self, bases: dict[str, np.ndarray]) -> SearchProgram:
        """A NEW program equal to this one except for the named Gram unknowns' bases.

        Unknowns, levels and identities keep their names and order (levels are
        copied with their current values); this program is not changed.
        """
        new = SearchProgram.__new__(SearchProgram)
        new.space = self.space
        new.unknowns, new.levels, new.identities = [], [], []
        new.objective = self.objective
        new._names = set(self._names)
        new.version = 0
        new.solver_cache = {}
        umap: dict[int, Unknown] = {}
        for u in self.unknowns:
            if isinstance(u, SosPoly):
                b = np.asarray(bases.get(u.name, u.basis), np.int64)
                c: Unknown = SosPoly(new, u.name, b.reshape(-1, self.space.nvars))
            elif isinstance(u, FreePoly):
                c = FreePoly(new, u.name, u.support)
            else:
                c = Scalar(new, u.name)
            c.uid = u.uid
            umap[id(u)] = c
            new.unknowns.append(c)
        lmap = {id(lv): Level(lv.name, lv.value, lv.lid) for lv in self.levels}
        new.levels = [lmap[id(lv)] for lv in self.levels]
        for ident in self.identities:
            parts = [
                _Part(
                    umap[id(p.unknown)] if p.unknown is not None else None,
                    p.mult,
                    p.dvar,
                    lmap[id(p.level)] if p.level is not None else None,
                )
                for p in ident.expr.parts
            ]
            expr = PolyExpr(self.space, ident.expr.const, parts)
            new.identities.append(Identity(ident.name, expr))
        return new

    # -- assembly -------------------------------------------------------
    def assemble(self) -> float:
        """Build every identity's sparse system (idempotent); returns seconds spent."""
        t0 = time.perf_counter()
        for ident in self.identities:
            if not ident.blocks:
                _assemble_identity(ident, self.space.nvars)
        return time.perf_counter() - t0


def _assemble_identity(ident: Identity, nvars: int) -> None:
    t0 = time.perf_counter()
    expr = ident.expr
    parts = list(expr.parts)
    if not expr.const.is_zero():
        parts.append(_Part(None, expr.const, None, None))
    pieces = [_part_entries(p, nvars) for p in parts]
    if not pieces:
        ident.monomials = np.zeros((0, nvars), np.int64)
        ident.assembly_time = time.perf_counter() - t0
        return
    all_exps = np.vstack([pc[0] for pc in pieces])
    radix = int(all_exps.max(initial=0)) + 1
    keys = encode_exponents(all_exps, radix)
    ukeys, first, inverse = np.unique(keys, return_index=True, return_inverse=True)
    ident.monomials = all_exps[first]
    nrows = len(ukeys)
    offset = 0
    groups: dict[tuple[int, int], list[tuple[_Part, tuple[np.ndarray, ...], np.ndarray]]] = {}
    for p, pc in zip(parts, pieces, strict=True):
        k = len(pc[1])
        rows = inverse[offset : offset + k]
        offset += k
        key = (p.unknown.uid if p.unknown is not None else -1, p.level.lid if p.level else -1)
        groups.setdefault(key, []).append((p, pc, rows))
    for items in groups.values():
        p0 = items[0][0]
        gcoef: list[flint.fmpq] = []
        rows_l, cols_l, fac_l, tidx_l = [], [], [], []
        for _p, pc, rows in items:
            rows_l.append(rows)
            cols_l.append(pc[1])
            fac_l.append(pc[2])
            tidx_l.append(pc[3] + len(gcoef))
            gcoef.extend(pc[4])
        blk = Block(
            p0.unknown,
            p0.level,
            np.concatenate(rows_l),
            np.concatenate(cols_l),
            np.concatenate(fac_l),
            np.concatenate(tidx_l),
            gcoef,
        )
        gfloat = np.array([float(c) for c in gcoef])
        vals = blk.factor * gfloat[blk.tidx]
        ncols = p0.unknown.ncols if p0.unknown is not None else 1
        blk.matrix = sps.csr_matrix((vals, (blk.rows, blk.cols)), shape=(nrows, ncols))
        ident.blocks.append(blk)
    ident.assembly_time = time.perf_counter() - t0
