"""Benchmark: locating periodic orbits, and the annulus proof for the van der Pol oscillator.

Run on purpose (not collected by pytest):
    .venv/bin/python tests/perf/bench_orbit.py [--repeat 2] [--skip-proof]

Targets (issue 13): ``orbit`` on a planar polynomial model finds all its cycles
in under 10 s; the Poincaré–Bendixson annulus proof of the van der Pol
oscillator (mu = 1) takes under 60 s. Models: the van der Pol oscillator
(mu = 1; one attracting cycle, period 6.6633 published by Hairer & Wanner) and
an invented two-ring system (dr/dt = r (r^2 - 1)(4 - r^2)/4, dtheta/dt = 1: a repelling
circle r = 1 inside an attracting circle r = 2). Prints seconds per run, where
the orbit search spends them (exploration vs Newton refinement) and the
margin to each target.
"""

from __future__ import annotations

import argparse
import time

from proofkit import parse
from proofkit.analysis import orbits
from proofkit.proofs import prove_model

VDP = """system van_der_pol
state x, y
dx/dt = y
dy/dt = (1 - x^2)*y - x
equilibrium rest at x = 0, y = 0
claim cycle in x^2 + y^2 <= 16
"""
RINGS = """system two_rings
state x, y
let r2 = x^2 + y^2
dx/dt = -y + x*(r2 - 1)*(4 - r2)/4
dy/dt = x + y*(r2 - 1)*(4 - r2)/4
"""


def _orbit_run(text: str, expected: int) -> tuple[float, float, int]:
    model = parse(text, "bench.pk")
    spent = {"refine": 0.0}
    original = orbits.refine_cycle

    def timed(*args: object, **kwargs: object) -> object:
        t0 = time.perf_counter()
        try:
            return original(*args, **kwargs)  # type: ignore[arg-type]
        finally:
            spent["refine"] += time.perf_counter() - t0

    orbits.refine_cycle = timed  # type: ignore[assignment]
    try:
        t0 = time.perf_counter()
        found = orbits.find_cycles(model)
        total = time.perf_counter() - t0
    finally:
        orbits.refine_cycle = original  # type: ignore[assignment]
    if len(found.cycles) != expected:
        print(f"  WARNING: {len(found.cycles)} cycles found, {expected} expected")
    return total, spent["refine"], len(found.cycles)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=2)
    parser.add_argument("--skip-proof", action="store_true")
    args = parser.parse_args()
    print("orbit search (target: under 10 s)")
    for name, text, expected in (("van der Pol", VDP, 1), ("two rings", RINGS, 2)):
        for k in range(args.repeat):
            total, refine, count = _orbit_run(text, expected)
            print(
                f"  {name:12s} run {k + 1}: {total:6.2f} s, {count} cycle(s); Newton refinement "
                f"{refine:5.2f} s ({100 * refine / total:3.0f} %), exploration and the rest "
                f"{total - refine:5.2f} s; target margin {10 - total:+.2f} s"
            )
    if args.skip_proof:
        return
    print("annulus proof, van der Pol mu = 1 (target: under 60 s)")
    for k in range(args.repeat):
        t0 = time.perf_counter()
        run = prove_model(parse(VDP, "vdp.pk"))
        total = time.perf_counter() - t0
        outcome = run.outcomes[0]
        print(
            f"  run {k + 1}: {total:6.2f} s, {outcome.status} ({outcome.detail}); "
            f"target margin {60 - total:+.2f} s"
        )


if __name__ == "__main__":
    main()
