"""Benchmarks of the parser (run on purpose: ``pytest -m perf tests/lang``).

Prints the measured times; the asserts are generous ceilings that catch a
complexity regression (quadratic behaviour), not machine speed.
"""

from __future__ import annotations

import time
from pathlib import Path

import pytest

from proofkit import parse
from proofkit.lang import format_model

WORKED = Path(__file__).resolve().parents[2] / "worked"


def timed(fn, repeat: int = 1) -> float:  # type: ignore[no-untyped-def]
    best = float("inf")
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t0)
    return best


@pytest.mark.perf
def test_parse_speed() -> None:
    parse("state x\ndx/dt = -x\n")  # build the cached parser first
    for path in sorted(WORKED.glob("*.pk")):
        text = path.read_text()
        t = timed(lambda text=text: parse(text), repeat=5)
        r = timed(lambda text=text: parse(format_model(parse(text))), repeat=3)
        print(f"{path.name}: parse {t * 1e3:.1f} ms, round trip {r * 1e3:.1f} ms")
    small = "state x\ndx/dt = " + " + ".join(f"{i}*x^{i % 7}" for i in range(500)) + "\n"
    big = "state x\ndx/dt = " + " + ".join(f"{i}*x^{i % 7}" for i in range(5000)) + "\n"
    ts, tb = timed(lambda: parse(small), 3), timed(lambda: parse(big), 3)
    print(f"sum of 500 terms {ts * 1e3:.0f} ms, 5000 terms {tb * 1e3:.0f} ms, ratio {tb / ts:.1f}")
    assert tb / ts < 30  # linear would be 10; quadratic would be 100
    lines = "".join(f"# line {i} of padding to make the file long\n" for i in range(20000))
    full = "state x\ndx/dt = -x\n" + lines
    t = timed(lambda: parse(full))
    print(f"{len(full) / 2**20:.2f} MiB of comments: {t:.2f} s")

    def consts(n: int) -> str:
        return "state x\ndx/dt = -x\n" + "".join(
            f"constant c{i} = {i}/7 + 0.25\n" for i in range(n)
        )

    t1, t5 = timed(lambda: parse(consts(1000))), timed(lambda: parse(consts(5000)))
    print(f"1000 constant statements {t1:.2f} s, 5000: {t5:.2f} s, ratio {t5 / t1:.1f}")
    assert t5 / t1 < 12  # linear would be 5
