"""Benchmark: non-polynomial models, proved and audited; the equilibrium search of ``inspect``.

Run on purpose (never a timed test): ``python tests/perf/bench_nonpoly.py [--repeat 3]``.
Prints, per model, the time to prove every claim (search plus the one audit of the final
certificate), the audit alone (core, the enclosures re-computed with rational Taylor
arithmetic), the enclosure grid that decided the Routh signs, and the certified
equilibrium search over the box ``inspect`` uses.

Models: the chemostat with saturating uptake (rational field; linearization and a
region of attraction) and the damped swing equation with sin(x1 + pi/3) (linearization
at 0 and at the saddle pi/3), plus a field with exp, log, sqrt, tanh and tan.
"""

from __future__ import annotations

import argparse
import json
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

import proofkit
from proofkit.analysis.finding import find_equilibria
from proofkit.audit import audit_text
from proofkit.proofs import prove_model

CULTURE = """parameter D = 1/2
parameter ks = 1
parameter s0 = 4
state s, b
let growth = s/(ks + s)
ds/dt = D*(s0 - s) - growth*b
db/dt = growth*b - D*b
domain s >= 0 and b >= 0 and s <= 10 and b <= 10
equilibrium washout at s = 4, b = 0
equilibrium coexist at s = 1, b = 3
claim coexist stable
claim washout unstable
claim coexist attracts (s - 1)^2 + (b - 3)^2 <= 1/4
"""
SWING = """state x1, x2
dx1/dt = x2
dx2/dt = -x2/2 - (sin(x1 + pi/3) - sin(pi/3))
domain x1 >= -2 and x1 <= 2 and x2 >= -2 and x2 <= 2
equilibrium op at x1 = 0, x2 = 0
equilibrium saddle at x1 = pi/3, x2 = 0
claim op stable
claim saddle unstable
"""
MIXED = """state x, y
dx/dt = tanh(y)/2 - exp(x) + 1
dy/dt = -log(1 + x) - 4*(sqrt(4 + y) - 2) - tan(y)
equilibrium o at x = 0, y = 0
claim o stable
"""


def bench(name: str, text: str, repeat: int) -> None:
    model = proofkit.parse(text, f"{name}.pk")
    best_prove = best_audit = best_search = float("inf")
    for _ in range(repeat):
        t0 = time.perf_counter()
        run = prove_model(model)
        best_prove = min(best_prove, time.perf_counter() - t0)
        t0 = time.perf_counter()
        report = audit_text(run.text)
        best_audit = min(best_audit, time.perf_counter() - t0)
        t0 = time.perf_counter()
        points, complete, _reason = find_equilibria(model)
        best_search = min(best_search, time.perf_counter() - t0)
    assert report.accepted
    print(
        f"== {name}: prove {best_prove:.2f} s (incl. audit), audit alone {best_audit:.3f} s, "
        f"equilibrium search {best_search:.2f} s ({len(points)} found, complete {complete})"
    )
    for outcome, entry in zip(run.outcomes, json.loads(run.text)["claims"], strict=True):
        grid = entry.get("evidence", {}).get("precision")
        extra = f", grid 2^-{grid}" if grid else ""
        print(
            f"   {outcome.status:10s} {outcome.claim} [{outcome.method}{extra}] "
            f"{outcome.seconds:.2f} s"
        )


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=1)
    args = parser.parse_args()
    for name, text in (("chemostat", CULTURE), ("swing", SWING), ("mixed", MIXED)):
        bench(name, text, args.repeat)


if __name__ == "__main__":
    main()
