"""A proof document with very long sums still fits TeX's input buffer (pdflatex reads a
source line into a fixed buffer, 200 000 characters by default: common practice)."""

from __future__ import annotations

from proofkit.report._blocks import Block
from proofkit.report.writers import MAX_SOURCE_LINE, to_latex


def test_long_math_is_split_into_source_lines() -> None:
    terms = " + ".join(f"\\frac{{{k}}}{{{k + 1}}} x^{{{k}}}" for k in range(20000))
    tex = to_latex([Block("math", "V = " + terms)])
    assert max(len(line) for line in tex.splitlines()) <= MAX_SOURCE_LINE
    # nothing was lost: the same terms, only the white space differs
    assert "".join(tex.split()).count("\\frac") == 20000
