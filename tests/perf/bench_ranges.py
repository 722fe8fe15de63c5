"""Benchmark: a 4-state loop with two uncertain parameters, proved or refuted over the box.

Run on purpose (never a timed test): ``python tests/perf/bench_ranges.py [--repeat 3]``.
Prints where the time goes: the exact linearization in the parameters (Jacobian,
det(sI - J), Hurwitz conditions), the Bernstein cover, the stability margins, the
evidence at a refuting value, and the audit of the certificate. Target: proved or
refuted in under 10 s.

The model (invented, for timing only): two carts joined by a spring of stiffness k
and a damper c, the first tied to the wall by a unit spring and damped by 1/2, the
second pushed by a velocity feedback g v2 with g = 1/5 (negative damping), softened by
a cubic term. Small c lets the feedback win at small k.
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

import sympy as sp

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from proofkit.analysis.parametric import cover_box, range_system
from proofkit.audit import audit_text
from proofkit.certificate import dumps, model_section, new_certificate
from proofkit.model import Param
from proofkit.proofs.ranges import attempt, stability_margin
from tests.ranges.helpers import build


def carts(g_hi: str):
    k, c = sp.Symbol("k", real=True), sp.Symbol("c", real=True)
    x1, v1, x2, v2 = sp.symbols("x1 v1 x2 v2", real=True)
    g = sp.Rational(1, 5)
    rhs = [
        v1,
        -x1 - sp.Rational(1, 2) * v1 - k * (x1 - x2) - c * (v1 - v2),
        v2,
        -k * (x2 - x1) - c * (v2 - v1) + g * v2 - sp.Rational(1, 10) * x2**3,
    ]
    params = (
        Param("k", sp.Integer(1), sp.Rational(1, 2), sp.Integer(3)),
        Param("c", sp.Integer(1), sp.Rational(g_hi.split(",")[0]), sp.Rational(g_hi.split(",")[1])),
    )
    return build(
        "x1 v1 x2 v2", rhs, params, {"o": {"x1": 0, "v1": 0, "x2": 0, "v2": 0}}, [("stable", "o")]
    )


def run(label: str, model) -> None:
    claim = model.claims[0]
    t0 = time.perf_counter()
    system = range_system(model, "o")
    t1 = time.perf_counter()
    assert not isinstance(system, str), system
    cover = cover_box(system, "stable")
    t2 = time.perf_counter()
    margins = (
        [stability_margin(system, "stable", j) for j in range(2)]
        if (cover.status == "covered")
        else []
    )
    t3 = time.perf_counter()
    att = attempt(model, claim)  # the whole prover again, including the evidence at a value
    t4 = time.perf_counter()
    text = dumps(new_certificate(model_section(model), [att.entry]))
    verdict = audit_text(text).claims[0]
    t5 = time.perf_counter()
    degs = [c.total_degree() for c in system.conditions]
    print(f"{label}: {verdict.status} ({att.detail})")
    print(
        f"  conditions' total degrees {degs}; {len(cover.leaves)} sub-boxes; "
        f"margins {[m[0] if m else None for m in margins]}"
    )
    print(f"  linearization in the parameters {t1 - t0:7.3f} s")
    print(f"  Bernstein cover                 {t2 - t1:7.3f} s")
    print(f"  stability margins               {t3 - t2:7.3f} s")
    print(f"  whole prover (attempt)          {t4 - t3:7.3f} s")
    print(f"  audit of the certificate        {t5 - t4:7.3f} s  ({len(text)} bytes)")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=1)
    args = ap.parse_args()
    for _ in range(args.repeat):
        run("c in [3/8, 2] (proved, near the stability boundary at k = 1/2)", carts("3/8,2"))
        run("c in [1/4, 2] (refuted)", carts("1/4,2"))
        run("c in [0, 2] (refuted)", carts("0,2"))


if __name__ == "__main__":
    main()
