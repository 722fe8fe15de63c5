"""Benchmark: certified region of attraction of the damped swing equation, by recasting.

    python tests/perf/bench_swing.py [--degree 4] [--order 2] [--rounds 12] [--grid 101]
                                     [--time-limit 90] [--quiet]

Model: ``dx1/dt = x2, dx2/dt = -x2/2 - (sin(x1 + pi/3) - sin(pi/3))`` (the
target of the non-polynomial issue). The box is ours:
``[-2, 3] x [-3, 3/2]``.

The true region inside the box is computed by simulation (computed: classical
Runge–Kutta of order 4, step 0.01, horizon 60, vectorised over a grid of
``grid x grid`` points of the box; a point belongs to the region when its
state at the horizon is within 1e-2 of the origin in both coordinates; a
subset is re-checked with scipy ``solve_ivp`` (RK45, rtol 1e-9)). Coverage is
the fraction of those grid points with ``W(x) = V(x, sin x1, cos x1 - 1) <=
level`` for the certified, audited ``V``; a certified point outside the
simulated region would be a contradiction and is counted (must be 0).
The search is the library's own ``proofkit.proofs.recast.region_search``
towards 400 points of the simulated region (12 rounds of the bilinear
iteration, no new round after ``--time-limit`` seconds); the audit then checks
the certificate once.

Published anchors inside their own box (Liu, Meng, Fitzsimmons, Zhou,
Automatica 175 (2025) 112193, Table 3): a degree-6 sum-of-squares Lyapunov
function on the Taylor-expanded model covers 18.53 % of the true region (not
a sound proof for the true field), a neural Lyapunov function 82.52 %.
Target here: sound (the audit accepts the certificate) and at least 85 %, in
under two minutes.
"""

from __future__ import annotations

import argparse
import sys
import time

import numpy as np

import proofkit
from proofkit.audit import audit_certificate
from proofkit.certificate import claim_entry, model_section, new_certificate
from proofkit.proofs.recast import region_search

SOURCE = """system swing_benchmark
state x1, x2
dx1/dt = x2
dx2/dt = -x2/2 - (sin(x1 + pi/3) - sin(pi/3))
equilibrium E at x1 = 0, x2 = 0
claim E attracts x1^2 + x2^2 <= 1/100
"""
BOX = (-2.0, 3.0, -3.0, 1.5)
ROUNDS = 12


def _rhs(a: np.ndarray, b: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    return b, -b / 2 - (np.sin(a + np.pi / 3) - np.sin(np.pi / 3))


def true_region(
    grid: int, dt: float = 0.01, horizon: float = 60.0
) -> tuple[np.ndarray, np.ndarray]:
    """Grid points of the box and whether each converges to the origin (RK4)."""
    x1, x2 = np.meshgrid(np.linspace(BOX[0], BOX[1], grid), np.linspace(BOX[2], BOX[3], grid))
    a, b = x1.ravel().copy(), x2.ravel().copy()
    pts = np.stack([a, b], axis=1)
    for _ in range(int(horizon / dt)):
        k1 = _rhs(a, b)
        k2 = _rhs(a + dt / 2 * k1[0], b + dt / 2 * k1[1])
        k3 = _rhs(a + dt / 2 * k2[0], b + dt / 2 * k2[1])
        k4 = _rhs(a + dt * k3[0], b + dt * k3[1])
        a = a + dt / 6 * (k1[0] + 2 * k2[0] + 2 * k3[0] + k4[0])
        b = b + dt / 6 * (k1[1] + 2 * k2[1] + 2 * k3[1] + k4[1])
    return pts, (np.abs(a) < 1e-2) & (np.abs(b) < 1e-2)


def spot_check(pts: np.ndarray, inside: np.ndarray, count: int = 40) -> int:
    """Disagreements of the RK4 classification with scipy's solve_ivp on a random subset."""
    from scipy.integrate import solve_ivp

    rng = np.random.default_rng(3)
    bad = 0
    for i in rng.choice(len(pts), size=min(count, len(pts)), replace=False):
        sol = solve_ivp(
            lambda _t, z: list(_rhs(z[0], z[1])), (0, 60), pts[i], rtol=1e-9, atol=1e-11
        )
        end = sol.y[:, -1]
        bad += int(bool(abs(end[0]) < 1e-2 and abs(end[1]) < 1e-2) != bool(inside[i]))
    return bad


def _w(evidence: dict, pts: np.ndarray) -> np.ndarray:
    z = np.stack([pts[:, 0], pts[:, 1], np.sin(pts[:, 0]), np.cos(pts[:, 0]) - 1], axis=1)
    out = np.zeros(len(pts))
    for exps, coef in evidence["V"]:
        num, _, den = coef.partition("/")
        out += (int(num) / int(den or 1)) * np.prod(z ** np.array(exps), axis=1)
    return out


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawTextHelpFormatter)
    ap.add_argument("--degree", type=int, default=4)
    ap.add_argument("--order", type=int, default=2)
    ap.add_argument("--rounds", type=int, default=ROUNDS)
    ap.add_argument("--grid", type=int, default=101)
    ap.add_argument(
        "--time-limit", type=float, default=90.0, help="no new round after this many seconds"
    )
    ap.add_argument("--quiet", action="store_true", help="no progress on stderr")
    args = ap.parse_args()
    t0 = time.perf_counter()
    pts, inside = true_region(args.grid)
    t_sim = time.perf_counter() - t0
    print(f"true region: {inside.sum()} of {len(pts)} grid points ({t_sim:.1f} s simulation)")
    print(f"RK4 vs solve_ivp disagreements on 40 random points: {spot_check(pts, inside)}")
    model = proofkit.parse(SOURCE, "swing_benchmark.pk")
    claim = model.claims[0]
    target = pts[inside][:: max(1, int(inside.sum()) // 400)]
    t1 = time.perf_counter()

    def say(msg: str) -> None:
        if not args.quiet:
            print(f"[{time.perf_counter() - t1:6.1f} s] {msg}", file=sys.stderr, flush=True)

    best = region_search(
        model, claim, target, degree=args.degree, order=args.order, rounds=args.rounds,
        time_limit=args.time_limit, progress=say,
    )  # fmt: skip
    t_search = time.perf_counter() - t1
    if best.evidence is None:
        print(f"not proved: {best.reason} ({t_search:.1f} s)")
        return 1
    entry = claim_entry(model, claim, "proved", method="recast",
                        theorem="recast-region-of-attraction", evidence=best.evidence)  # fmt: skip
    t2 = time.perf_counter()
    report = audit_certificate(new_certificate(model_section(model), [entry]), 120)
    t_audit = time.perf_counter() - t2
    verdict = report.claims[0]
    level = eval_level(best)
    cert = _w(best.evidence, pts) <= level
    cover = (cert & inside).sum() / inside.sum()
    note = "" if verdict.status == "proved" else f": {verdict.message}"
    print(f"audit: {verdict.status} ({t_audit:.1f} s){note}")
    print(f"search and exact certificate: {t_search:.1f} s; total {time.perf_counter() - t0:.1f} s")
    print(
        f"coverage of the true region in the box: {100 * cover:.2f} %  (anchors 18.53 %, 82.52 %)"
    )
    print(f"certified grid points outside the simulated region: {(cert & ~inside).sum()}")
    return 0 if verdict.status == "proved" else 1


def eval_level(res: object) -> float:
    num, _, den = res.evidence["numbers"]["level"].partition("/")  # type: ignore[attr-defined]
    return int(num) / int(den or 1)


if __name__ == "__main__":
    sys.exit(main())
