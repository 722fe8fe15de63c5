"""The survey of a model: every equilibrium, its exact linearization, verdict and type.

``survey(model)`` works on ``model.at_nominal()``. Polynomial fields with
rational coefficients are solved exactly (``equilibria``); other fields are
searched in a box with certified ball arithmetic (``boxsearch``). For each
equilibrium with exact coordinates the Jacobian, characteristic polynomial,
Routh array and (when stable) the solution of A'P + PA = -I are exact. For a
root known only by a certified box, the same quantities are certified
enclosures over that box (sympy ``Interval`` entries) and a verdict is given
only when every sign needed is certain.

Verdicts follow Lyapunov's indirect method: "stable" (every eigenvalue in
the open left half plane), "unstable" (one in the open right half plane),
"inconclusive" (eigenvalues on the imaginary axis, none to the right).

May import: python-flint, numpy (eigenvalues for display only), sympy, the
model and ``analysis``; never ``proofkit.audit``.
This module must never decide a verdict from floating-point numbers.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass, field, replace
from typing import Literal

import flint
import numpy as np
import sympy as sp

from proofkit.analysis.algebraic import AlgNum, RealAlgebraicField, field_of_exprs
from proofkit.analysis.boxsearch import _arb_to_q, _ball
from proofkit.analysis.equilibria import FoundPoint, Limits, _eval_poly_at, _fq
from proofkit.analysis.finding import _find, search_box
from proofkit.analysis.intervals import arb_value, compile_arb
from proofkit.analysis.linear import characteristic_polynomial
from proofkit.analysis.lyapunov import LyapunovSolution, solve_lyapunov_in
from proofkit.analysis.routh import RouthArray, routh_array_in
from proofkit.model import Model

__all__ = ["EquilibriumReport", "Survey", "survey"]

Verdict = Literal["stable", "unstable", "inconclusive"]


@dataclass(frozen=True, eq=False)
class EquilibriumReport:
    """One equilibrium and its linearization (exact unless ``exact`` is False)."""

    name: str | None
    point: dict[str, sp.Expr]
    numeric: dict[str, float]
    jacobian: sp.Matrix
    charpoly: tuple[sp.Expr, ...]
    routh: RouthArray
    eigenvalues: tuple[complex, ...]
    verdict: Verdict
    type: str
    lyapunov: LyapunovSolution | None
    exact: bool = True
    enclosure: tuple[tuple[sp.Rational, sp.Rational], ...] | None = None
    jacobian_enclosure: tuple[tuple[sp.Interval, ...], ...] | None = None
    note: str = ""
    field_degree: int = 1  # degree over Q of the field holding the exact data (0: enclosure)
    in_domain: bool | None = True  # inside the model's domain (None: not decided)


@dataclass(frozen=True)
class Survey:
    equilibria: tuple[EquilibriumReport, ...]
    complete: bool
    complete_reason: str
    at_nominal: bool = True
    method: str = ""
    timings: dict[str, float] = field(default_factory=dict, compare=False)

    def by_name(self, name: str) -> EquilibriumReport:
        for e in self.equilibria:
            if e.name == name:
                return e
        raise KeyError(name)


# --- linearization -------------------------------------------------------------


def _planar_type(J: list[list[AlgNum]]) -> str:
    tr = J[0][0] + J[1][1]
    det = J[0][0] * J[1][1] - J[0][1] * J[1][0]
    sd, st = det.sign(), tr.sign()
    if sd < 0:
        return "saddle"
    if sd == 0:
        return "degenerate"
    if st == 0:
        return "centre-type (linear part)"
    disc = (tr * tr - det * 4).sign()
    side = "stable" if st < 0 else "unstable"
    return f"{side} focus" if disc < 0 else f"{side} node"


def _type_for(n: int, rhp: int, imag: int, planar: str | None) -> str:
    if planar is not None:
        return planar
    text = f"{rhp} unstable direction" + ("" if rhp == 1 else "s")
    if imag:
        text += f", {imag} eigenvalue{'s' if imag > 1 else ''} on the imaginary axis"
    return text


def _verdict(rhp: int, imag: int) -> Verdict:
    return "unstable" if rhp > 0 else ("stable" if imag == 0 else "inconclusive")


def _exact_report(
    name: str | None,
    names: tuple[str, ...],
    point: dict[str, sp.Expr],
    numeric: dict[str, float],
    K: RealAlgebraicField,
    J: list[list[AlgNum]],
    note: str = "",
) -> EquilibriumReport:
    n = len(J)
    cp = characteristic_polynomial(J, K)
    ra = routh_array_in(cp, K)
    verdict = _verdict(ra.rhp_count, ra.imag_count)
    planar = _planar_type(J) if n == 2 else None
    Jf = np.array([[float(v) for v in row] for row in J], dtype=float).reshape(n, n)
    eig = tuple(complex(z) for z in np.linalg.eigvals(Jf)) if n else ()
    lyap = None
    if verdict == "stable":
        Qm = [[K.one if i == j else K.zero for j in range(n)] for i in range(n)]
        P, minors = solve_lyapunov_in(J, Qm, K)
        pd = all(mn.sign() > 0 for mn in minors)
        if not pd:  # Lyapunov's theorem: impossible for a Hurwitz matrix
            raise RuntimeError("internal: P of a Hurwitz matrix is not positive definite")
        lyap = LyapunovSolution(
            A=sp.Matrix([[v.to_sympy() for v in row] for row in J]),
            P=sp.Matrix([[v.to_sympy() for v in row] for row in P]),
            Q=sp.eye(n),
            minors=tuple(mn.to_sympy() for mn in minors),
            positive_definite=pd,
        )
    return EquilibriumReport(
        name=name,
        point=point,
        numeric=numeric,
        jacobian=sp.Matrix(n, n, [v.to_sympy() for row in J for v in row]),
        charpoly=tuple(c.to_sympy() for c in cp),
        routh=ra,
        eigenvalues=eig,
        verdict=verdict,
        type=_type_for(n, ra.rhp_count, ra.imag_count, planar),
        lyapunov=lyap,
        note=note,
        field_degree=K.degree,
    )


def _interval(a: flint.arb) -> sp.Interval:
    lo, hi = _arb_to_q(a)
    return sp.Interval(sp.Rational(int(lo.p), int(lo.q)), sp.Rational(int(hi.p), int(hi.q)))


def _asign(a: flint.arb) -> int | None:
    return 1 if a > 0 else (-1 if a < 0 else None)


def _arb_charpoly(J: list[list[flint.arb]]) -> list[flint.arb]:
    """Ball enclosure of det(sI - J), highest first (Faddeev–LeVerrier in ball arithmetic)."""
    n = len(J)
    coeffs = [flint.arb(1)]
    Mk = [[flint.arb(0)] * n for _ in range(n)]
    for k in range(1, n + 1):
        c = coeffs[-1]
        Mk = [
            [
                sum((J[i][t] * Mk[t][j] for t in range(n)), flint.arb(0)) + (c if i == j else 0)
                for j in range(n)
            ]
            for i in range(n)
        ]
        tr = sum((J[i][t] * Mk[t][i] for i in range(n) for t in range(n)), flint.arb(0))
        coeffs.append(-tr / k)
    return coeffs


def _arb_routh(coeffs: list[flint.arb]) -> tuple[list[list[flint.arb]], bool]:
    """A regular Routh array in ball arithmetic, and whether some first-column sign is uncertain."""
    n = len(coeffs) - 1
    width = n // 2 + 1
    r0 = coeffs[0::2] + [flint.arb(0)] * width
    r1 = coeffs[1::2] + [flint.arb(0)] * width
    rows = [r0[:width], r1[:width]] if n >= 1 else [r0[:width]]
    for _i in range(2, n + 1):
        a, b = rows[-2], rows[-1]
        if _asign(b[0]) is None:
            return rows, True
        rows.append(
            [
                (b[0] * a[j + 1] - a[0] * b[j + 1]) / b[0] if j + 1 < width else flint.arb(0)
                for j in range(width)
            ]
        )
    return rows, any(_asign(r[0]) is None for r in rows)


def _arb_planar_type(J: list[list[flint.arb]]) -> str:
    tr2, det2 = J[0][0] + J[1][1], J[0][0] * J[1][1] - J[0][1] * J[1][0]
    sd, st, sq = _asign(det2), _asign(tr2), _asign(tr2 * tr2 - 4 * det2)
    if sd == -1:
        return "saddle"
    if sd == 1 and st is not None and sq is not None:
        return ("stable " if st < 0 else "unstable ") + ("focus" if sq < 0 else "node")
    return "undetermined (interval enclosure)"


def _enclosure_routh(
    coeffs: list[flint.arb], rows: list[list[flint.arb]], undecided: bool, planar: str | None
) -> tuple[RouthArray, Verdict, str]:
    """The Routh array of intervals, the verdict and the type it supports."""
    n = len(coeffs) - 1
    signs = [_asign(r[0]) for r in rows]
    if undecided:
        rhp, changes, verdict = -1, -1, "inconclusive"
        special: tuple[str, ...] = ("a first-column sign is not certain over the root enclosure",)
        kind = "saddle" if planar == "saddle" else "undetermined (interval enclosure)"
        if planar == "saddle":  # det < 0 for every matrix in the box: a positive eigenvalue
            verdict, rhp = "unstable", 1
    else:
        ss = [s for s in signs if s is not None]
        changes = sum(1 for p, q in itertools.pairwise(ss) if p != q)
        rhp, special = changes, ()
        verdict = _verdict(rhp, 0)
        kind = _type_for(n, rhp, 0, planar)
    rows_int = tuple(
        tuple(_interval(v) for v in r[: max(1, (n - i) // 2 + 1)]) for i, r in enumerate(rows)
    )
    ra = RouthArray(
        coefficients=tuple(_interval(c) for c in coeffs),
        rows=rows_int,
        first_column=tuple(r[0] for r in rows_int),
        first_column_signs=tuple(s or 0 for s in signs),
        special=(*special, "entries are certified enclosures over the equilibrium's box"),
        auxiliary=(),
        sign_changes=changes,
        rhp_count=rhp,
        imag_count=0 if not undecided else -1,
    )
    return ra, verdict, kind


_NOTE_EXACT_POINT = (
    "the point is exact but its Jacobian is not algebraic: the verdict, the "
    "characteristic polynomial and the Routh array are certified ball enclosures"
)
_NOTE_BOX = (
    "the equilibrium is known to lie in a certified box (exactly one there); "
    "point and jacobian are at the box centre (display only); the verdict, the "
    "characteristic polynomial and the Routh array are certified enclosures over the box"
)


def _enclosure_report(
    name: str | None, m: Model, fp: FoundPoint, Jsym: sp.Matrix
) -> EquilibriumReport:
    """Linearization over a certified root box: every sign from ball arithmetic, or no verdict."""
    xs, n = m.state_symbols, len(m.states)
    assert fp.enclosure is not None
    old = flint.ctx.prec
    flint.ctx.prec = 128
    try:
        X = [_ball(_fq(a), _fq(b)) for a, b in fp.enclosure]
        J = [[compile_arb(Jsym[i, j], xs)(X) for j in range(n)] for i in range(n)]
        coeffs = _arb_charpoly(J)
        rows, undecided = _arb_routh(coeffs)
        planar = _arb_planar_type(J) if n == 2 else None
        ra, verdict, kind = _enclosure_routh(coeffs, rows, undecided, planar)
        J_int = tuple(tuple(_interval(v) for v in row) for row in J)
        Jmid = np.array([[float(v.mid()) for v in row] for row in J]).reshape(n, n)
    finally:
        flint.ctx.prec = old
    return EquilibriumReport(
        name=name,
        point=fp.point,
        numeric=fp.numeric,
        jacobian=Jsym.subs(dict(zip(xs, fp.point.values(), strict=True))),
        charpoly=ra.coefficients,
        routh=ra,
        eigenvalues=tuple(complex(z) for z in np.linalg.eigvals(Jmid)) if n else (),
        verdict=verdict,
        type=kind,
        lyapunov=None,
        exact=fp.exact,
        enclosure=fp.enclosure,
        jacobian_enclosure=J_int,
        field_degree=0,
        note=_NOTE_EXACT_POINT if fp.exact else _NOTE_BOX,
    )


def _report_for_exact_point(
    name: str | None,
    m: Model,
    point: dict[str, sp.Expr],
    numeric: dict[str, float],
    Jsym: sp.Matrix,
    fp: FoundPoint | None,
    note: str = "",
) -> EquilibriumReport | None:
    names, xs, n = m.states, m.state_symbols, len(m.states)
    if fp is not None and fp.field is not None and fp.coords is not None:
        K = fp.field
        polys = [[sp.Poly(Jsym[i, j], *xs, domain=sp.QQ) for j in range(n)] for i in range(n)]
        J = [[_eval_poly_at(polys[i][j], fp.coords, K) for j in range(n)] for i in range(n)]
        return _exact_report(name, names, point, numeric, K, J, note)
    subs = {x: point[nm] for x, nm in zip(xs, names, strict=True)}
    entries = [sp.expand(Jsym[i, j].subs(subs)) for i in range(n) for j in range(n)]
    try:
        K, elems = field_of_exprs(entries)
    except (ValueError, NotImplementedError):
        return None  # not algebraic: use the enclosure
    J = [elems[i * n : (i + 1) * n] for i in range(n)]
    return _exact_report(name, names, point, numeric, K, J, note)


# --- declared equilibria ------------------------------------------------------


def _same_value(v: sp.Expr, fp: FoundPoint, k: int) -> bool:
    if fp.field is not None and fp.coords is not None:
        c = fp.coords[k]
        if isinstance(v, sp.Rational):
            return c.is_rational() and c.rational() == _fq(v)
        if c.is_rational():
            return False
        try:
            K2, (e2,) = field_of_exprs([v])
        except ValueError:
            return False
        return K2.locate(e2.p) == fp.field.locate(c.p)
    return sp.simplify(v - fp.point[list(fp.point)[k]]) == 0 if fp.exact else False


def _in_enclosure(point: dict[str, sp.Expr], fp: FoundPoint) -> bool:
    assert fp.enclosure is not None
    for v, (a, b) in zip(point.values(), fp.enclosure, strict=True):
        try:
            lo, hi = _arb_to_q(arb_value(v, 256))
        except Exception:
            return False
        if not (_fq(a) <= lo and hi <= _fq(b)):
            return False
    return True


def _condition_sign(g: sp.Expr, m: Model, fp: FoundPoint) -> int | None:
    """The exact sign of g at the equilibrium, or None when it cannot be decided."""
    xs = m.state_symbols
    if fp.field is not None and fp.coords is not None and g.is_polynomial(*xs):
        P = sp.Poly(g, *xs)
        if all(isinstance(c, sp.Rational) for c in P.coeffs()):
            return _eval_poly_at(P, fp.coords, fp.field).sign()
    if fp.exact:
        v = sp.expand(g.subs(dict(zip(xs, fp.point.values(), strict=True))))
        if v == 0:
            return 0
        try:
            ball = arb_value(v, 256)
        except Exception:
            return None
    else:
        if fp.enclosure is None:
            return None
        old = flint.ctx.prec
        flint.ctx.prec = 128
        try:
            X = [_ball(_fq(a), _fq(b)) for a, b in fp.enclosure]
            ball = compile_arb(g, xs)(X)
        except Exception:
            return None
        finally:
            flint.ctx.prec = old
    return _asign(ball)


def _in_domain(m: Model, fp: FoundPoint) -> bool | None:
    if m.domain is None:
        return True
    answer: bool | None = True
    for g, strict in m.domain.nonnegative_forms():
        sg = _condition_sign(g, m, fp)
        if sg is None:
            answer = None
        elif sg < 0 or (strict and sg == 0):
            return False
    return answer


def _with_enclosure(fp: FoundPoint) -> FoundPoint:
    """The point with a tiny certified box around its exact coordinates, if it has none."""
    if fp.enclosure is not None:
        return fp
    box = []
    for v in fp.point.values():
        lo, hi = _arb_to_q(arb_value(v, 256))
        box.append((sp.Rational(int(lo.p), int(lo.q)), sp.Rational(int(hi.p), int(hi.q))))
    return FoundPoint(point=fp.point, numeric=fp.numeric, enclosure=tuple(box), exact=fp.exact)


def _in_box(point: dict[str, sp.Expr], box: list[tuple[sp.Rational, sp.Rational]]) -> bool:
    """True when the point may lie in the closed box (False only when certainly outside)."""
    for v, (a, b) in zip(point.values(), box, strict=True):
        try:
            lo, hi = _arb_to_q(arb_value(v, 256))
        except Exception:
            return True
        if hi < _fq(a) or lo > _fq(b):
            return False
    return True


def survey(model: Model, limits: Limits | None = None) -> Survey:
    """Find, linearize, classify every equilibrium of ``model.at_nominal()``."""
    import time

    m = model.at_nominal()
    xs, names = m.state_symbols, m.states
    t0 = time.perf_counter()
    points, complete, reason, method, timings = _find(m, limits or Limits())
    timings = dict(timings)
    timings["find"] = time.perf_counter() - t0
    Jsym = sp.Matrix(m.field).jacobian(list(xs)) if names else sp.zeros(0, 0)
    names_for: dict[int, str] = {}
    extra: list[tuple[str, dict[str, sp.Expr]]] = []
    for decl in m.equilibria:
        dp = decl.as_dict()
        hit = None
        for idx, fp in enumerate(points):
            if fp.enclosure is not None and not fp.exact:
                if _in_enclosure(dp, fp):
                    hit = idx
            elif all(_same_value(dp[nm], fp, k) for k, nm in enumerate(names)):
                hit = idx
            if hit is not None:
                break
        if hit is None:
            searched = method != "box search" or _in_box(dp, search_box(m)[0])
            if complete and searched:
                raise RuntimeError(
                    f"internal: declared equilibrium {decl.name} is missing from a complete list"
                )
            extra.append((decl.name, dp))
        else:
            names_for[hit] = decl.name
    t0 = time.perf_counter()
    reports: list[EquilibriumReport] = []
    for idx, fp in enumerate(points):
        nm = names_for.get(idx)
        point, numeric = fp.point, fp.numeric
        if not fp.exact and nm is not None:  # the declared exact point is this certified root
            point = m.equilibrium(nm).as_dict()
            fp = FoundPoint(point=point, numeric=numeric, enclosure=fp.enclosure, exact=True)
        rep = None
        if fp.exact:
            rep = _report_for_exact_point(nm, m, point, numeric, Jsym, fp)
        if rep is None:
            rep = _enclosure_report(nm, m, _with_enclosure(fp), Jsym)
        reports.append(replace(rep, in_domain=_in_domain(m, fp)))
    for nm, dp in extra:
        numeric = {k: float(arb_value(v, 64).mid()) for k, v in dp.items()}
        fp_decl = FoundPoint(point=dp, numeric=numeric)
        note = "a declared equilibrium outside the searched part of the state space"
        rep = _report_for_exact_point(nm, m, dp, numeric, Jsym, fp_decl, note=note)
        if rep is None:
            rep = _enclosure_report(nm, m, _with_enclosure(fp_decl), Jsym)
        reports.append(replace(rep, in_domain=_in_domain(m, fp_decl)))
    timings["linearize"] = time.perf_counter() - t0
    return Survey(tuple(reports), complete, reason, True, method, timings)
