"""Benchmark: how fast the commands start, and what the portrait costs in ``prove --out``.

Run on purpose (not collected by pytest):
    .venv/bin/python tests/perf/bench_startup.py [--repeat 5]

Each row is the median wall time of ``--repeat`` fresh processes (the
interpreter's own start-up is the first row), plus which heavy libraries the
process imported. ``audit --core-only`` must import none of sympy, numpy,
cvxpy, lark or matplotlib. The last rows split ``prove --out`` into the proof
run and the phase portrait (``prove --out`` minus ``prove``), and time the
portrait's parts in one process: importing matplotlib's Agg canvas, drawing
and saving.

Measured on the shared 2-core machine on 2026-12-03 while about eight other
jobs ran (load average 7.4, so absolute times are noisy; median of 3):
python 0.09 s, ``--help`` 0.29 s, ``inspect`` 2.0 s, ``audit --core-only``
0.33 s (no heavy library imported), ``prove`` 5.8 s, ``prove --out`` 8.9 s;
portrait parts in one process: Agg import 1.23 s, draw 0.38 s, save 0.28 s.
Against the earlier portrait (pyplot, ``streamplot``, equilibria only), same
certificate, same process set-up, load average 12: first portrait 2.9-3.6 s
before, 2.3-2.8 s now (import dominates); a second portrait 1.2-1.4 s before,
0.67-0.88 s now, while drawing separatrices, trajectories and a legend too.
"""

from __future__ import annotations

import argparse
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
from tests.models import DUFFING

HEAVY = ("sympy", "numpy", "cvxpy", "lark", "matplotlib", "prompt_toolkit")
PROBE = (
    "import sys\nfrom proofkit.cli import main\nimport contextlib, io\n"
    "with contextlib.redirect_stdout(io.StringIO()), contextlib.redirect_stderr(io.StringIO()):\n"
    "    code = main({args!r})\n"
    "print(','.join(m for m in {heavy!r} if m in sys.modules))\n"
)


def _median_time(cmd: list[str], repeat: int) -> float:
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        subprocess.run(cmd, capture_output=True, check=False)
        times.append(time.perf_counter() - t0)
    return statistics.median(times)


def _heavy(args: list[str]) -> str:
    code = PROBE.format(args=args, heavy=HEAVY)
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    return out.stdout.strip() or "-"


def _portrait_parts(model: Path) -> str:
    code = (
        "import time\nimport proofkit\nm = proofkit.load({m!r})\n"
        "from proofkit.analysis.surveying import survey\ns = survey(m)\n"
        "t0 = time.perf_counter()\n"
        "import matplotlib.figure, matplotlib.backends.backend_agg\n"
        "t1 = time.perf_counter()\n"
        "from proofkit.report._portrait_data import model_portrait_data\n"
        "from proofkit.report.figures import draw_portrait\n"
        "fig = draw_portrait(model_portrait_data(m, s))\n"
        "t2 = time.perf_counter()\n"
        "fig.savefig({png!r})\n"
        "t3 = time.perf_counter()\n"
        "print(f'import {{t1 - t0:.3f}} s, draw {{t2 - t1:.3f}} s, save {{t3 - t2:.3f}} s')\n"
    ).format(m=str(model), png=str(model.with_suffix(".png")))
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    return out.stdout.strip() or out.stderr.strip()[-300:]


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=5)
    repeat = parser.parse_args().repeat
    py = [sys.executable]
    with tempfile.TemporaryDirectory() as tmp:
        model = Path(tmp) / "m.pk"
        model.write_text(DUFFING, encoding="utf-8")
        out = Path(tmp) / "out"
        subprocess.run(
            [*py, "-m", "proofkit", "prove", str(model), "--out", str(out)],
            capture_output=True,
            check=False,
        )
        cert = str(out / "certificate.json")
        rows = [
            ("python -c pass", [*py, "-c", "pass"], None),
            ("proofkit --help", [*py, "-m", "proofkit", "--help"], ["--help"]),
            (
                "proofkit inspect",
                [*py, "-m", "proofkit", "inspect", str(model)],
                ["inspect", str(model)],
            ),
            (
                "proofkit audit --core-only",
                [*py, "-m", "proofkit", "audit", "--core-only", cert],
                ["audit", "--core-only", cert],
            ),
            ("proofkit prove", [*py, "-m", "proofkit", "prove", str(model)], None),
            (
                "proofkit prove --out",
                [*py, "-m", "proofkit", "prove", str(model), "--out", str(Path(tmp) / "o2")],
                None,
            ),
            (
                "proofkit portrait",
                [*py, "-m", "proofkit", "portrait", str(model), "-o", str(Path(tmp) / "p.png")],
                None,
            ),
        ]
        print(f"{'command':<30} {'median s':>9}  heavy libraries imported")
        measured = {}
        for label, cmd, probe in rows:
            measured[label] = _median_time(cmd, repeat)
            heavy = _heavy(probe) if probe and probe != ["--help"] else ""  # --help exits
            print(f"{label:<30} {measured[label]:>9.3f}  {heavy}")
        share = measured["proofkit prove --out"] - measured["proofkit prove"]
        print(
            f"portrait and documents in prove --out: {share:.3f} s of "
            f"{measured['proofkit prove --out']:.3f} s"
        )
        print("portrait parts in one process:", _portrait_parts(model))


if __name__ == "__main__":
    main()
