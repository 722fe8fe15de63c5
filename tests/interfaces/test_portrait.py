"""Phase portraits: file formats, and that what is drawn is what ``inspect`` found."""

from __future__ import annotations

import contextlib
import io
import json
import math
import os
import struct
import subprocess
import sys
from dataclasses import dataclass
from fractions import Fraction
from pathlib import Path

import pytest

import proofkit

from .models import CONVECTION, DUFFING, DUFFING_POINTS, PENDULUM

PY = sys.executable


@dataclass
class Done:
    returncode: int
    stdout: str
    stderr: str


def _run(*args: str, cwd: Path | None = None) -> Done:
    """``proofkit ARGS`` in this process (the entry point itself is run once, below)."""
    from proofkit.cli import main

    out, err = io.StringIO(), io.StringIO()
    here = Path.cwd()
    try:
        os.chdir(cwd or here)
        with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
            code = main(list(args))
    finally:
        os.chdir(here)
    return Done(code, out.getvalue(), err.getvalue())


def test_the_command_runs_as_a_program(tmp_path: Path) -> None:
    f = tmp_path / "d.pk"
    f.write_text(DUFFING, encoding="utf-8")
    done = subprocess.run(
        [PY, "-m", "proofkit", "portrait", str(f), "-o", str(tmp_path / "d.png")],
        capture_output=True,
        text=True,
        timeout=300,
    )
    assert done.returncode == 0, done.stderr
    assert "wrote" in done.stderr and (tmp_path / "d.png").stat().st_size > 10_000


@pytest.fixture()
def duffing_file(tmp_path: Path) -> Path:
    f = tmp_path / "duffing.pk"
    f.write_text(DUFFING, encoding="utf-8")
    return f


def test_png_svg_pdf_files(duffing_file: Path, tmp_path: Path) -> None:
    for suffix, magic in (("png", b"\x89PNG"), ("svg", b"<?xml"), ("pdf", b"%PDF")):
        out = tmp_path / f"p.{suffix}"
        done = _run("portrait", str(duffing_file), "-o", str(out), "--quiet")
        assert done.returncode == 0, done.stderr
        data = out.read_bytes()
        assert data.startswith(magic) and len(data) > 10_000, suffix
        if suffix == "png":
            width, height = struct.unpack(">II", data[16:24])
            assert (width, height) == (640, 560)
        if suffix == "svg":
            assert "origin" in data.decode() and "saddle (unstable)" in data.decode()


def test_default_output_name_and_json(duffing_file: Path, tmp_path: Path) -> None:
    done = _run("portrait", str(duffing_file.resolve()), "--json", "--quiet", cwd=tmp_path)
    assert done.returncode == 0, done.stderr
    report = json.loads(done.stdout)
    assert Path(report["file"]).name == "duffing.png" and (tmp_path / "duffing.png").is_file()
    assert {tuple(e["point"]): e["verdict"] for e in report["equilibria"]} == DUFFING_POINTS


def test_drawn_equilibria_match_inspect(duffing_file: Path) -> None:
    cli = _run("inspect", str(duffing_file), "--json")
    found = {
        (e["numeric"]["x"], e["numeric"]["y"]): (e["name"], e["verdict"], e["type"])
        for e in json.loads(cli.stdout)["equilibria"]
    }
    fig = proofkit.portrait(duffing_file).figure()
    (ax,) = fig.axes
    marks = {}
    for line in ax.lines:
        gid = line.get_gid() or ""
        if gid.startswith("equilibrium "):
            _, verdict, name = gid.split(" ", 2)
            xs, ys = line.get_data()
            marks[(float(xs[0]), float(ys[0]))] = (name, verdict, line.get_marker())
    assert set(marks) == set(found)
    for xy, (name, verdict, _type) in found.items():
        drawn_name, drawn_verdict, _marker = marks[xy]
        assert drawn_name == str(name)
        assert drawn_verdict == ("saddle" if _type == "saddle" else verdict)
    shapes = {v: m for _n, v, m in marks.values()}
    assert len(set(shapes.values())) == len(shapes)  # one marker shape per verdict
    words = [t.get_text() for t in ax.get_legend().get_texts()]
    assert "stable (asymptotically)" in words and "saddle (unstable)" in words
    separatrices = [ln for ln in ax.lines if ln.get_gid() == "separatrix"]
    assert len(separatrices) == 4 * 2  # two saddles, four branches each


def test_planes_of_a_larger_model(tmp_path: Path) -> None:
    model = proofkit.parse(CONVECTION)
    through_origin = proofkit.portrait(model, plane=("x", "z"), at={"y": 0})
    # published (Sparrow 1982; Strogatz 9.2): for rho = 10 the origin is unstable and the
    # convecting points (+-sqrt(24), +-sqrt(24), 9) are stable
    assert [(p.xy, p.verdict) for p in through_origin.data.points] == [((0.0, 0.0), "unstable")]
    through_c = proofkit.portrait(model, plane=("x", "z"), at={"y": 24**0.5})
    [(xy, verdict)] = [(p.xy, p.verdict) for p in through_c.data.points]
    assert verdict == "stable" and xy == pytest.approx((24**0.5, 9.0))
    f = tmp_path / "c.pk"
    f.write_text(CONVECTION, encoding="utf-8")
    done = _run("portrait", str(f), "--plane", "x,z", "--at", "y=0", "-o", str(tmp_path / "s.png"))
    assert done.returncode == 0, done.stderr


def test_certificate_regions_only_from_the_same_model(duffing_file: Path, tmp_path: Path) -> None:
    out = tmp_path / "run"
    assert _run("prove", str(duffing_file), "--out", str(out)).returncode == 0
    cert = out / "certificate.json"
    ok = _run(
        "portrait", str(duffing_file), "--certificate", str(cert), "-o", str(tmp_path / "a.png")
    )
    assert ok.returncode == 0, ok.stderr
    other = tmp_path / "other.pk"
    other.write_text(DUFFING.replace("- y\n", "- 2*y\n"), encoding="utf-8")
    bad = _run("portrait", str(other), "--certificate", str(cert), "-o", str(tmp_path / "b.png"))
    assert bad.returncode == 2 and "another model" in bad.stderr


@pytest.mark.parametrize(
    ("args", "message"),
    [
        (["-o", "x.gif"], "unknown picture format"),
        (["--plane", "x,q"], "'q' is not a state"),
        (["--plane", "x,x"], "two different states"),
        (["--at", "y"], "NAME=VALUE"),
    ],
)
def test_bad_options_exit_2_with_a_message(
    duffing_file: Path, args: list[str], message: str, tmp_path: Path
) -> None:
    done = _run("portrait", str(duffing_file), *args, cwd=tmp_path)
    assert done.returncode == 2 and message in done.stderr and "Traceback" not in done.stderr


def test_document_portrait_from_a_certificate(duffing_file: Path, tmp_path: Path) -> None:
    from proofkit.report.figures import certificate_portrait_data

    run = proofkit.prove(duffing_file)
    data = certificate_portrait_data(run.certificate)
    assert data is not None
    assert {p.xy: p.verdict for p in data.points} == {(0.0, 0.0): "stable", (1.0, 0.0): "saddle"}


def test_axes_from_the_domain_and_a_non_polynomial_field() -> None:
    import math

    drawn = proofkit.portrait(proofkit.parse(PENDULUM))
    xmin, xmax, ymin, ymax = drawn.data.box
    assert -4.8 < xmin < -4 and 4 < xmax < 4.8 and -7.2 < ymin < -6 and 6 < ymax < 7.2
    marks = sorted((round(p.xy[0], 9), p.verdict) for p in drawn.data.points)
    assert marks == [(-round(math.pi, 9), "saddle"), (0.0, "stable"), (round(math.pi, 9), "saddle")]
    (ax,) = drawn.figure().axes
    assert "domain (claims hold inside)" in [t.get_text() for t in ax.get_legend().get_texts()]


def test_certificate_regions_for_cycle_claims_are_drawn_where_they_lie() -> None:
    from proofkit.report._portrait_data import _cert_regions

    disc = [{"g": [[[0, 0], "1/4"], [[2, 0], "-1"], [[0, 2], "-1"]], "strict": False}]
    no_cycle = {"claim": {"kind": "no cycle", "set": disc}, "status": "proved", "evidence": {}}
    (free,) = _cert_regions(no_cycle, None)
    assert free.func(0.0, 0.0) <= free.level < free.func(1.0, 0.0)
    w = [[[2, 0], "1/2"], [[0, 2], "1"]]  # W = (p^2 + 2 v^2)/2
    annulus = {
        "claim": {"kind": "cycle", "set": disc},
        "status": "proved",
        "evidence": {"W": w, "numbers": {"inner": "7/20", "outer": "33/20"}},
    }
    (band,) = _cert_regions(annulus, None)
    assert band.level <= band.func(1.0, 0.0) <= band.upper  # the whistle ellipse W = 1/2
    assert band.func(0.0, 0.0) < band.level
    assert _cert_regions({**annulus, "status": "not proved"}, None) == []


@pytest.mark.slow
def test_document_portrait_of_the_worked_whistle(tmp_path: Path) -> None:
    root = Path(__file__).resolve().parents[2]
    run = proofkit.prove(root / "worked" / "duct_whistle.pk")
    from proofkit.report.figures import certificate_portrait_data

    data = certificate_portrait_data(run.certificate)
    assert data is not None
    labels = sorted(r.label for r in data.regions)
    assert labels == [
        "certified free of periodic orbits",
        "certified trapping annulus (holds a periodic orbit)",
    ]


def test_a_certificate_portrait_does_not_load_sympy(tmp_path: Path) -> None:
    """``proofkit.report`` builds documents lazily: drawing alone needs no sympy."""
    cert = Path(__file__).resolve().parents[2] / "worked" / "valve_latch.certificate.json"
    out = tmp_path / "p.png"
    code = (
        "import json, sys\nfrom proofkit.report import phase_portrait\n"
        f"ok = phase_portrait(json.loads(open({str(cert)!r}).read()), {str(out)!r})\n"
        "print(ok, 'sympy' in sys.modules)\n"
    )
    done = subprocess.run([PY, "-c", code], capture_output=True, text=True, check=True)
    assert done.stdout.split() == ["True", "False"]
    assert out.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def _drawn_region(ax, gid: str):
    """The path of a shaded set as drawn (data coordinates), found by its gid."""
    [coll] = [c for c in ax.collections if c.get_gid() == gid]
    [path] = coll.get_paths()
    return path


def _disc_radius(cert: dict) -> float:
    """The radius of the swing machine's basin claim d^2 + w^2 <= c (from its set)."""
    [entry] = [c for c in cert["claims"] if c["claim"]["kind"] == "attracts"]
    [cond] = entry["claim"]["set"]
    assert sorted(e for e, _c in cond["g"]) == [[0, 0], [0, 2], [2, 0]]
    return math.sqrt(float(Fraction(dict((tuple(e), c) for e, c in cond["g"])[(0, 0)])))


def test_swing_machine_certified_region_holds_the_disc_and_not_the_saddle() -> None:
    """The recast proof's set {W <= level}, W(x) = V(x - x*, sin d, cos d - 1), as drawn."""
    import numpy as np

    from proofkit.report.figures import certificate_portrait_data, draw_portrait

    root = Path(__file__).resolve().parents[2]
    cert = json.loads((root / "worked" / "swing_machine.certificate.json").read_text())
    data = certificate_portrait_data(cert)
    assert data is not None
    (ax,) = draw_portrait(data).axes
    label = "certified region of attraction of operating"
    region = _drawn_region(ax, "region " + label)
    angle = np.linspace(0.0, 2 * math.pi, 72, endpoint=False)
    radius = _disc_radius(cert)  # the claim's disc
    disc = np.stack([radius * np.cos(angle), radius * np.sin(angle)], axis=1)
    assert region.contains_points(disc * 0.97).all() and region.contains_points([[0.0, 0.0]])[0]
    # computed (sin(d + pi/3) = sin(pi/3) at d = pi/3, w = 0): the saddle of the swing
    # equation; just beyond it (d = pi/3 + 1/20, w = 0) dw/dt = sin(pi/3) - sin(d + pi/3) > 0,
    # so the rotor runs away: outside the region of attraction, never certified. (The
    # certified set may come close to the saddle from the inside: the true region reaches it.)
    assert not region.contains_points([[math.pi / 3, 0.0], [math.pi / 3 + 0.05, 0.0]]).any()
    [shaded] = [r for r in data.regions if r.label == label]
    assert shaded.func(math.pi / 3, 0.0) > shaded.level >= float(np.max(shaded.func(*disc.T)))
    outline = [c for c in ax.collections if c.get_gid() == "outline the claim's set"]
    assert len(outline) == 1  # the claim's disc is drawn as well
    assert "operating" in {p.name for p in data.points}
