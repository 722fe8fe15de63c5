"""Notebook display of every result type: Markdown and LaTeX with $...$ math, PNG pictures."""

from __future__ import annotations

import json
import re

import pytest

import proofkit
from proofkit.results import BasinResult

from .models import DUFFING, STRIP, VAN_DER_POL

PNG_MAGIC = b"\x89PNG\r\n\x1a\n"


def _check_math(text: str) -> None:
    assert text.count("$") % 2 == 0, text  # every math span is closed


def _check(result: object, picture: bool) -> None:
    data = result.to_json()  # type: ignore[attr-defined]
    json.dumps(data)
    md = result._repr_markdown_()  # type: ignore[attr-defined]
    tex = result._repr_latex_()  # type: ignore[attr-defined]
    assert md.strip() and tex.strip()
    _check_math(md)
    _check_math(tex)
    png = result._repr_png_() if hasattr(result, "_repr_png_") else None
    if picture:
        assert png is not None and png.startswith(PNG_MAGIC) and len(png) > 10_000


@pytest.fixture(scope="module")
def duffing() -> proofkit.Model:
    return proofkit.parse(DUFFING)


def test_inspection_display(duffing: proofkit.Model) -> None:
    found = proofkit.inspect(duffing)
    _check(found, picture=True)
    md = found._repr_markdown_()
    assert r"$\frac{dx}{dt} = y$" in md
    assert md.count("| saddle |") == 2 and "| stable focus |" in md  # computed by hand
    assert "origin" in found._repr_latex_()


def test_proof_and_audit_display(duffing: proofkit.Model) -> None:
    result = proofkit.prove(duffing)
    _check(result, picture=True)
    assert "2 of 2 claim(s) proved" in result._repr_markdown_()
    checked = proofkit.audit(result)
    _check(checked, picture=False)
    assert "certificate accepted" in checked._repr_markdown_()


def test_orbit_display_and_period() -> None:
    found = proofkit.orbit(proofkit.parse(VAN_DER_POL))
    _check(found, picture=True)
    # published: Hairer & Wanner reference period 6.66328686 (REFERENCES.md)
    assert len(found.cycles) == 1 and found.cycles[0].period == pytest.approx(6.66328686, 1e-5)
    assert "located numerically" in found._repr_markdown_()


def test_portrait_display(duffing: proofkit.Model) -> None:
    drawn = proofkit.portrait(duffing)
    _check(drawn, picture=True)
    assert re.search(r"\$\(x, y\)\$", drawn._repr_markdown_())


@pytest.fixture(scope="module")
def strip_basin() -> BasinResult:
    return proofkit.basin(proofkit.parse(STRIP), "origin", degree=2)


def test_basin_display_and_extent(strip_basin: BasinResult) -> None:
    assert strip_basin.certified
    _check(strip_basin, picture=True)
    assert "certified region of attraction of origin" in strip_basin._repr_markdown_()
    # computed by hand: the true region is |x| < 1, so the certified set stays inside it
    drawn = proofkit.portrait(proofkit.parse(STRIP), certificate=strip_basin.result.certificate)
    (region,) = drawn.data.regions
    assert "certified region of attraction of origin" in region.label
    assert region.func(0.0, 0.0) <= region.level < region.func(1.0, 0.0)
    assert region.func(0.9, 0.0) <= region.level  # the best quadratic comes within 10 %
