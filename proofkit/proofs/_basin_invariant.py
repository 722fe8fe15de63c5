"""``claim E globally stable`` inside a declared domain: the domain forward invariant, V on it.

Theorem ``lyapunov-global-in-domain`` (method ``lyapunov-domain``; schema in
``proofkit/audit/lyapunov.py``), with ``y = x - x*`` and the domain
``D = {h_j >= 0}``:

- ``invariant j``: ``lie(h_j) - eps + u_j h_j - sum_k r_jk h_k`` and every
  ``u_j``, ``r_jk`` sums of squares, so ``lie(h_j) >= eps`` wherever ``h_j = 0``
  in D (Nagumo's condition, strict; ``u_j h_j`` with ``r_jj h_j`` is the free
  multiplier of the face as an equality);
- ``positive``: ``V - eps|y|^2 - sum_j p_j h_j``; ``decrease``:
  ``-lie(V) - eps (|y|^2)^m - sum_j q_j h_j``; ``p_j``, ``q_j`` sums of squares;
  ``m`` the evidence's ``margin_power``.

Margin powers as for the global method (:mod:`proofkit.proofs.lyapunov`, exact
Routh counts): ``m = 1`` when the linearization is Hurwitz, ``m = 2, 3, 4`` when
it has eigenvalues on the imaginary axis (``dx/dt = -x^3``: the decrease is only
of order ``|y|^4``, never ``eps|y|^2``); an eigenvalue with positive real part
stops the search with that reason. For ``m >= 2`` the ``q_j`` vanish to order
``2m`` at the point and the program is solved by the exact ladder
(:func:`proofkit.exact.solve_exactly`: Newton-polytope bases, facial reduction).

The invariance obligations do not involve ``V`` and are fitted first (a domain
that is not invariant is named at once). For ``m = 1``, ``V`` of degree 2, 4, 6 comes
from one semidefinite program per degree (``V`` and all multipliers free, jointly
linear), in coordinates scaled as for the basin search; each obligation is then
made exact (:func:`proofkit.proofs.basin._obligation`: rounding, Peyrl–Parrilo
projection, exact LDL').

This module never marks anything proved (the audit does) and never evaluates
user text.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from typing import Any

import flint
import numpy as np

from proofkit.certificate import claim_entry, claim_scope, not_proved_entry
from proofkit.model import Claim, Model
from proofkit.proofs import ProofAttempt

__all__ = ["METHOD", "THEOREM", "attempt", "positive_on_domain"]

METHOD, THEOREM = "lyapunov-domain", "lyapunov-global-in-domain"
MAX_CONDITIONS = 6  # m^2 + 3m + 2 obligations: 56 at m = 6 (the audit takes 64)
DEGREES = (2, 4, 6)
BUDGET = 30.0  # seconds for the V search of one claim
MAX_UNKNOWNS = 3000  # Gram entries of one obligation in the joint exact projection
Say = Callable[[str], None]


def _not_proved(model: Model, claim: Claim, reason: str) -> ProofAttempt:
    return ProofAttempt(not_proved_entry(model, claim, reason), reason)


def _deg(p: flint.fmpq_mpoly) -> int:
    return max((sum(e) for e in p.monoms()), default=0)


def _half(n: int, top: int, low: int = 0) -> np.ndarray:
    from proofkit.sos._ascent_maps import monomials

    return monomials(n, max(max(top, 0) // 2, low), low)


def _even(k: int) -> int:
    return k + k % 2


def _bases(
    d_target: int, d_terms: list[int], n: int, low: int = 0
) -> tuple[list[np.ndarray], np.ndarray]:
    """Multiplier bases (products reach the target's degree) and the Gram basis.

    A multiplier of ``h_k`` has the even degree at or above ``d_target - deg h_k``;
    the Gram basis goes to half the largest degree present, rounded down, so an odd
    top degree must cancel between the target and the products. ``low = 1`` leaves
    out the constant monomial: everything vanishes to second order at the point.
    """
    degs = [max(_even(max(d_target - d, 0)), 2 * low) for d in d_terms]
    top = max([d_target] + [m + d for m, d in zip(degs, d_terms, strict=True)])
    return [_half(n, m, low) for m in degs], _half(n, top - top % 2, low)


def _invariance(setup: Any, ev: dict) -> str | None:
    """``invariant j`` with ``u_j``, ``r_jk`` for every domain condition, into ``ev``."""
    from proofkit.proofs.basin import _sq

    st = setup.setting
    sp_, n = st.space, st.n
    hs = [h for h, _strict in st.domain]
    eps = sp_.const(flint.fmpq(st.eps.numerator, st.eps.denominator))
    for j, h in enumerate(hs):
        lie_h = st.lie(h)
        mb, gb = _bases(_deg(lie_h), [_deg(hk) for hk in [h, *hs]], n)
        terms = [(q, b) for q, b in zip([h] + [-hk for hk in hs], mb, strict=True)]
        fit = _joint_fit(st, lie_h - eps, terms, gb)
        if isinstance(fit, str):
            return f"the domain is not shown forward invariant at condition {j + 1} ({fit})"
        names = [f"u{j + 1}"] + [f"r{j + 1}_{k + 1}" for k in range(len(hs))]
        for name, (s, b, g) in zip(names, fit[0], strict=True):
            ev["multipliers"][name] = _poly_json(s)
            ev["squares"][name] = _sq(b, g)
        ev["squares"][f"invariant {j + 1}"] = _sq(gb, fit[1])
    return None


def _joint_fit(setting: Any, p0: Any, terms: list, basis: np.ndarray) -> tuple | str:
    """``p0 + sum_k q_k s_k = b' G b`` exactly, every Gram PSD: (multipliers, G) or why not.

    The numerical Gram matrices (max-min eigenvalue) are rounded and projected
    together onto the exact identity (least change, Peyrl–Parrilo for all blocks at
    once: top-degree terms that cancel between multipliers cancel exactly), then
    each block is shown PSD by exact LDL'.
    """
    from proofkit.exact import ldl_psd
    from proofkit.proofs._basin_exact import BITS, gram_poly, round_matrix, z_gram_to_y
    from proofkit.proofs.basin import MAX_GRAM
    from proofkit.sos.ascent import fit_squares

    if max([basis.shape[0]] + [b.shape[0] for _q, b in terms]) > MAX_GRAM:
        return f"its Gram matrix would exceed {MAX_GRAM} rows"
    got = fit_squares(setting.to_z(p0), [(setting.to_z(q), b) for q, b in terms], basis)
    if got is None:
        return "no numerical certificate"
    mgrams, q, _lam = got
    one = setting.space.const(1)
    blocks = [(one, basis, z_gram_to_y(setting, basis, q))]
    blocks += [
        (-qk, b, z_gram_to_y(setting, b, g)) for (qk, b), g in zip(terms, mgrams, strict=True)
    ]
    why = "no exact projection"
    for bits in BITS:
        grams = _project(p0, blocks, [round_matrix(g, bits) for _c, _b, g in blocks])
        if isinstance(grams, str):
            return grams
        bad = [k for k, g in enumerate(grams) if not ldl_psd(g).psd]
        if not bad:
            mults = [
                (gram_poly(setting, b, g), b, g)
                for (_c, b, _g), g in zip(blocks[1:], grams[1:], strict=True)
            ]
            return mults, grams[0]
        why = f"a projected Gram matrix is not PSD (block {bad[0]})"
    return why


def _project(p0: Any, blocks: list, x0: list) -> list | str:
    """Least change of the symmetric matrices ``x0`` so that ``sum_k c_k b_k' X_k b_k = p0``."""
    cols: list[tuple[int, int, int]] = [
        (k, i, j)
        for k, (_c, b, _g) in enumerate(blocks)
        for i in range(b.shape[0])
        for j in range(i, b.shape[0])
    ]
    if len(cols) > MAX_UNKNOWNS:
        return f"the exact projection would have {len(cols)} unknowns (limit {MAX_UNKNOWNS})"
    rows: dict[tuple[int, ...], int] = {}
    entries: dict[tuple[int, int], flint.fmpq] = {}
    for col, (k, i, j) in enumerate(cols):
        c, b = blocks[k][0], blocks[k][1]
        mono = tuple(int(x) for x in b[i] + b[j])
        for e, coeff in zip(c.monoms(), c.coeffs(), strict=True):
            key = tuple(a + m for a, m in zip(e, mono, strict=True))
            r = rows.setdefault(key, len(rows))
            entries[r, col] = entries.get((r, col), flint.fmpq(0)) + coeff * (1 if i == j else 2)
    for e in p0.monoms():
        rows.setdefault(tuple(e), len(rows))
    a = flint.fmpq_mat(len(rows), len(cols))
    for (r, col), v in entries.items():
        a[r, col] = v
    x = flint.fmpq_mat(len(cols), 1, [x0[k][i][j] for k, i, j in cols])
    rhs = flint.fmpq_mat(len(rows), 1)
    for e, coeff in zip(p0.monoms(), p0.coeffs(), strict=True):
        rhs[rows[tuple(e)], 0] = coeff
    resid = rhs - a * x
    at = a.transpose()
    aat = a * at
    aug = flint.fmpq_mat(len(rows), len(rows) + 1)
    for r in range(len(rows)):
        for c in range(len(rows)):
            aug[r, c] = aat[r, c]
        aug[r, len(rows)] = resid[r, 0]
    red, rank = aug.rref()
    lam = flint.fmpq_mat(len(rows), 1)
    for r in range(rank):
        lead = next(c for c in range(len(rows) + 1) if red[r, c] != 0)
        if lead == len(rows):
            return (
                "the identity has no solution with these bases (a target monomial is out of reach)"
            )
        lam[lead, 0] = red[r, len(rows)]
    x = x + at * lam
    out = [[[flint.fmpq(0)] * b.shape[0] for _ in range(b.shape[0])] for _c, b, _g in blocks]
    for col, (k, i, j) in enumerate(cols):
        out[k][i][j] = out[k][j][i] = x[col, 0]
    return out


def positive_on_domain(setup: Any, q_y: Any) -> dict[str, Any] | str:
    """Evidence that ``Q(x* + y) - eps - sum_j w_j h_j`` and the ``w_j`` are sums of squares."""
    from proofkit.proofs.basin import _sq

    st = setup.setting
    hs = [h for h, _strict in st.domain]
    q0 = q_y.coeffs()[q_y.monoms().index((0,) * st.n)] if (0,) * st.n in q_y.monoms() else 0
    if not q0 > 0:
        return "Q is not positive at the point"
    why = "no certificate"
    for share in (16, 4, 64):
        eps = flint.fmpq(q0) / share
        mb, gb = _bases(_deg(q_y), [_deg(h) for h in hs], st.n)
        fit = _joint_fit(
            st, q_y - st.space.const(eps), [(-h, b) for h, b in zip(hs, mb, strict=True)], gb
        )
        if isinstance(fit, str):
            why = fit
            continue
        mults = {f"w{j + 1}": _poly_json(s) for j, (s, _b, _g) in enumerate(fit[0])}
        squares = {f"w{j + 1}": _sq(b, g) for j, (_s, b, g) in enumerate(fit[0])}
        squares["denominator"] = _sq(gb, fit[1])
        return {"numbers": {"eps": str(eps)}, "multipliers": mults, "squares": squares}
    return why


def _poly_json(p: flint.fmpq_mpoly) -> list:
    from proofkit.proofs._basin_exact import poly_json

    return poly_json(p)


def _v_program(setup: Any, degree: int) -> Any:
    """Numerical V (scaled coordinates) with both Lyapunov inequalities on D, or why not."""
    import warnings

    import cvxpy as cp

    from proofkit.proofs.basin import MAX_GRAM
    from proofkit.sos._ascent_maps import MonoIndex, gram_map, lie_map, monomials, mult_map

    st = setup.setting
    n = st.n
    hs = [st.to_z(h) for h, _strict in st.domain]
    d2 = np.array([float(s) ** 2 for s in st.scale])
    field_deg = max(int(g.exps.sum(axis=1).max(initial=1)) for g in setup.field_z)
    supp = monomials(n, degree, 2)
    vv = cp.Variable(supp.shape[0])
    lam = cp.Variable()
    cons: list = [lam <= 1]
    eps_vec = {tuple(2 * np.eye(n, dtype=np.int64)[i]): float(st.eps) * d2[i] for i in range(n)}

    def sos(basis: np.ndarray) -> Any:
        q = cp.Variable((basis.shape[0], basis.shape[0]), symmetric=True)
        cons.append(q - lam * np.eye(basis.shape[0]) >> 0)
        return q

    dhs = [int(h.exps.sum(axis=1).max(initial=0)) for h in hs]
    targets = ((degree, 1.0), (degree + field_deg - 1, -1.0))
    rows = max(
        b.shape[0] for d, _s in targets for b in [*_bases(d, dhs, n, 1)[0], _bases(d, dhs, n, 1)[1]]
    )
    if rows > MAX_GRAM:
        return f"a Gram matrix would have {rows} rows (limit {MAX_GRAM})"
    for d_target, sign in targets:
        mb, basis = _bases(d_target, dhs, n, low=1)
        top = max(2 * int(b.sum(axis=1).max(initial=0)) + d for b, d in zip(mb, dhs, strict=True))
        idx = MonoIndex(n, max(top, d_target, 2 * int(basis.sum(axis=1).max(initial=0))))
        core = mult_map(_one(n), supp, idx) if sign > 0 else lie_map(setup.field_z, supp, idx)
        lhs = sign * (core @ vv)  # V or -lie(V)
        eps_poly = sum(c * idx.vector(_mono(e, n)) for e, c in eps_vec.items())
        lhs = lhs - gram_map(basis, idx) @ cp.vec(sos(basis), order="F")
        for h, hb in zip(hs, mb, strict=True):
            hid = MonoIndex(n, 2 * int(hb.sum(axis=1).max()))
            lhs = lhs - mult_map(h, hid.exps, idx) @ gram_map(hb, hid) @ cp.vec(sos(hb), order="F")
        cons.append(lhs == eps_poly)
    quad = [i for i, e in enumerate(supp) if e.sum() == 2 and e.max() == 2]
    cons.append(cp.sum(vv[quad]) == 1)
    prob = cp.Problem(cp.Maximize(lam), cons)
    try:
        with warnings.catch_warnings():  # "inaccurate" is in prob.status already
            warnings.simplefilter("ignore", UserWarning)
            prob.solve(solver="CLARABEL")
    except cp.error.SolverError:
        return "the solver failed"
    ok = prob.status in ("optimal", "optimal_inaccurate") and lam.value is not None
    if not ok or float(lam.value) <= 1e-9 or vv.value is None:
        return "no numerical V (no positive margin)"
    from proofkit.sos._ascent_maps import NumPoly

    return NumPoly(supp, np.asarray(vv.value, dtype=float))


def _one(n: int) -> Any:
    return _mono(np.zeros(n, dtype=np.int64), n)


def _mono(e: Any, n: int) -> Any:
    from proofkit.sos._ascent_maps import NumPoly

    return NumPoly(np.asarray(e, dtype=np.int64).reshape(1, n), np.ones(1))


def _lyapunov_evidence(setup: Any, v_num: Any, ev: dict) -> str | None:
    """``positive``, ``decrease`` with ``p_j``, ``q_j`` for a rounded ``V``, into ``ev``."""
    from proofkit.proofs._basin_exact import round_poly
    from proofkit.proofs.basin import _sq

    st = setup.setting
    sp_, n = st.space, st.n
    hs = [h for h, _strict in st.domain]
    v = round_poly(st, v_num, bits=30)
    if any(sum(e) < 2 for e in v.monoms()):
        return "V rounded to a term of degree below 2"
    eps = sp_.const(flint.fmpq(st.eps.numerator, st.eps.denominator))
    lie_v = st.lie(v)
    for name, mult, p0, deg in (
        ("positive", "p", v - st.norm() * eps, _deg(v)),
        ("decrease", "q", -lie_v - st.norm() * eps, _deg(lie_v)),
    ):
        mb, gb = _bases(deg, [_deg(h) for h in hs], n, low=1)
        fit = _joint_fit(st, p0, [(-h, b) for h, b in zip(hs, mb, strict=True)], gb)
        if isinstance(fit, str):
            return f"{name}: {fit}"
        for j, (s, b, g) in enumerate(fit[0]):
            ev["multipliers"][f"{mult}{j + 1}"] = _poly_json(s)
            ev["squares"][f"{mult}{j + 1}"] = _sq(b, g)
        ev["squares"][name] = _sq(gb, fit[1])
    ev["V"] = _poly_json(v)
    return None


def _margin_powers(setup: Any) -> tuple[int, ...] | str:
    """1 for a Hurwitz linearization, 2..4 on the imaginary axis; or why no V exists."""
    from proofkit.proofs.lyapunov import _margin_powers as powers

    got = powers(setup.setting.space, setup.setting.g)
    return got if isinstance(got, str) else (1,) if 1 in got else got


def _margin_evidence(setup: Any, degree: int, m: int, ev: dict) -> str | None:
    """``positive`` and ``decrease`` (margin ``eps (|y|^2)^m``) solved exactly, into ``ev``."""
    from proofkit.exact import solve_exactly
    from proofkit.exact.rounding import unknown_poly
    from proofkit.proofs.basin import MAX_GRAM, _sq
    from proofkit.sos import SearchProgram, full_basis

    st = setup.setting
    space, n = st.space, st.n
    hs = [h for h, _strict in st.domain]
    eps = space.const(flint.fmpq(st.eps.numerator, st.eps.denominator))
    prog = SearchProgram(space.variables)
    v = prog.free("V", full_basis(n, degree, 2))
    lie = v.lie(st.g)
    d_lie = degree + max(_deg(g) for g in st.g) - 1
    mults: dict[str, Any] = {}
    pos, dec = v - st.norm() * eps, -lie - st.norm() ** m * eps
    for j, h in enumerate(hs):
        (pb,), _gb = _bases(degree, [_deg(h)], n, low=1)
        (qb,), _gb = _bases(max(d_lie, 2 * m), [_deg(h)], n, low=m)
        pj, qj = prog.sos(f"p{j + 1}", pb), prog.sos(f"q{j + 1}", qb)
        mults[f"p{j + 1}"], mults[f"q{j + 1}"] = pj, qj
        pos, dec = pos - pj * h, dec - qj * h
    grams = {"positive": prog.require_sos(pos, "positive")}
    grams["decrease"] = prog.require_sos(dec, "decrease")
    if max(u.size for u in [*grams.values(), *mults.values()]) > MAX_GRAM:
        return f"a Gram matrix would exceed {MAX_GRAM} rows"
    res = solve_exactly(prog)
    if not res.found:
        return f"no exact certificate with margin power {m}"
    values = res.exact.values
    for name, u in {**mults, **grams}.items():
        ev["squares"][name] = _sq(u.basis, values[u.name])
        if name in mults:
            ev["multipliers"][name] = _poly_json(unknown_poly(space, u, values[u.name]))
    ev["V"] = _poly_json(unknown_poly(space, v, values["V"]))
    ev["margin_power"] = m
    return None


def _v_search(setup: Any, ev: dict, say: Say) -> tuple[int, str]:
    """V of degree 2, 4, 6 with every margin power worth trying: (degree, "") or (0, why)."""
    powers = _margin_powers(setup)
    if isinstance(powers, str):
        return 0, powers
    d_field = max(_deg(g) for g in setup.setting.g)
    t0, tried = time.perf_counter(), []
    for degree in DEGREES:
        for m in powers:
            if 2 * m > degree + d_field - 1:
                continue
            if time.perf_counter() - t0 > BUDGET:
                return 0, "; ".join(tried) or "time budget used"
            say(f"Lyapunov function of degree {degree} on the domain (margin power {m})")
            if m == 1:
                v_num = _v_program(setup, degree)
                why = v_num if isinstance(v_num, str) else _lyapunov_evidence(setup, v_num, ev)
            else:
                why = _margin_evidence(setup, degree, m, ev)
            if why is None:
                return degree, ""
            tried.append(f"degree {degree}" + (f" (m = {m})" if m > 1 else "") + f": {why}")
    return 0, "; ".join(tried) or "time budget used"


def attempt(model: Model, claim: Claim, say: Say) -> ProofAttempt | None:
    """Evidence for ``claim E globally stable`` inside the model's domain, or None if n/a."""
    from proofkit.proofs.basin import setup_basin

    if claim.kind != "globally stable" or model.domain is None or not model.is_polynomial():
        return None
    if claim_scope(model, claim) != "nominal":
        return None
    setup = setup_basin(model, claim.target or "", None, say)
    if isinstance(setup, str):
        return _not_proved(model, claim, setup)
    if len(setup.setting.domain) > MAX_CONDITIONS:
        return _not_proved(model, claim, f"more than {MAX_CONDITIONS} domain conditions")
    st = setup.setting
    ev: dict[str, Any] = {
        "numbers": {"eps": str(st.eps)}, "margin_power": 1, "multipliers": {}, "squares": {}
    }  # fmt: skip
    say("showing the domain forward invariant")
    why = _invariance(setup, ev)
    if why:
        return _not_proved(model, claim, why)
    degree, why = _v_search(setup, ev, say)
    if degree:
        ev = {"V": ev.pop("V"), **ev}
        entry = claim_entry(model, claim, "proved", method=METHOD, theorem=THEOREM, evidence=ev)
        m = ev["margin_power"]
        margin = f" (margin power {m})" if m > 1 else ""
        detail = f"the domain is forward invariant and a degree-{degree} V decreases on it{margin}"
        return ProofAttempt(entry, detail, trace=setup)
    return _not_proved(
        model, claim, "the domain is forward invariant, but no Lyapunov function on it was "
        f"found ({why})",
    )  # fmt: skip
