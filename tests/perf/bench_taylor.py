"""Benchmark: certified region of attraction of the damped swing equation, by Taylor models.

    python tests/perf/bench_taylor.py [--degree 6] [--sin-order 6] [--cos-order 7]
                                      [--rounds 8] [--grid 101]

Model and box as in ``bench_swing.py`` (the recast benchmark):
``dx1/dt = x2, dx2/dt = -x2/2 - (sin(x1 + pi/3) - sin(pi/3))`` on
``[-2, 3] x [-3, 3/2]``; the true region inside the box comes from its
``true_region`` (computed: classical Runge–Kutta of order 4, step 0.01,
horizon 60, on a ``grid x grid`` lattice; a point belongs to the region when
its state at the horizon is within 1e-2 of the origin). Coverage is the
fraction of those grid points with ``V(x) <= level`` for the certified,
audited ``V`` (a polynomial in the states only); a certified point outside
the simulated region would be a contradiction and is counted (must be 0).

Published anchors inside their own box (Liu, Meng, Fitzsimmons, Zhou,
Automatica 175 (2025) 112193, Table 3): a degree-6 sum-of-squares Lyapunov
function on the Taylor-expanded model covers 18.53 % of the true region (not a
sound proof for the true field), a neural Lyapunov function 82.52 %.
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

import numpy as np

import proofkit
from proofkit.audit import audit_certificate
from proofkit.certificate import claim_entry, model_section, new_certificate
from proofkit.proofs.taylor_model import region_search

sys.path.insert(0, str(Path(__file__).resolve().parent))
from bench_swing import SOURCE, true_region


def _value(evidence: dict, pts: np.ndarray) -> np.ndarray:
    out = np.zeros(len(pts))
    for exps, coef in evidence["V"]:
        num, _, den = coef.partition("/")
        out += (int(num) / int(den or 1)) * np.prod(pts ** np.array(exps), axis=1)
    return out


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawTextHelpFormatter)
    ap.add_argument("--degree", type=int, default=6)
    ap.add_argument("--sin-order", type=int, default=6)
    ap.add_argument("--cos-order", type=int, default=7)
    ap.add_argument("--rounds", type=int, default=8)
    ap.add_argument("--grid", type=int, default=101)
    ap.add_argument("--quiet", action="store_true")
    args = ap.parse_args()
    t0 = time.perf_counter()
    pts, inside = true_region(args.grid)
    t_sim = time.perf_counter() - t0
    print(f"true region: {inside.sum()} of {len(pts)} grid points ({t_sim:.1f} s)")
    model = proofkit.parse(SOURCE, "swing_benchmark.pk")
    claim = model.claims[0]
    target = pts[inside][:: max(1, int(inside.sum()) // 400)]
    t1 = time.perf_counter()
    say = (lambda _m: None) if args.quiet else (lambda m: print(m, file=sys.stderr, flush=True))
    res = region_search(
        model,
        claim,
        target,
        degree=args.degree,
        orders=(args.sin_order, args.cos_order),
        rounds=args.rounds,
        progress=say,
    )
    t_search = time.perf_counter() - t1
    if res.evidence is None:
        print(f"not proved: {res.reason} ({t_search:.1f} s)")
        return 1
    theorem = "taylor-model-region-of-attraction"
    entry = claim_entry(
        model, claim, "proved", method="taylor-model", theorem=theorem, evidence=res.evidence
    )
    t2 = time.perf_counter()
    verdict = audit_certificate(new_certificate(model_section(model), [entry]), 120).claims[0]
    t_audit = time.perf_counter() - t2
    num, _, den = res.evidence["numbers"]["level"].partition("/")
    cert = _value(res.evidence, pts) <= int(num) / int(den or 1)
    cover = (cert & inside).sum() / inside.sum()
    note = "" if verdict.status == "proved" else f": {verdict.message}"
    print(f"audit: {verdict.status} ({t_audit:.1f} s){note}")
    print(f"search and exact certificate: {t_search:.1f} s ({args.rounds} rounds at most)")
    print(f"coverage of the true region in the box: {100 * cover:.2f} %  (anchors 18.53, 82.52 %)")
    print(f"certified grid points outside the simulated region: {(cert & ~inside).sum()}")
    return 0 if verdict.status == "proved" else 1


if __name__ == "__main__":
    sys.exit(main())
