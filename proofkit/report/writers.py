"""Markdown and LaTeX layout of the proof document blocks.

Markdown uses ``$...$`` and ``$$...$$`` math; LaTeX uses standard packages only
(amsmath, amssymb, geometry, longtable, graphicx) and compiles with pdflatex.
These writers lay out blocks; they never compute or judge anything.
"""

from __future__ import annotations

from proofkit.report._blocks import Block, Seg

__all__ = ["to_latex", "to_markdown"]


def _md_segs(segs: tuple[Seg, ...], cell: bool = False) -> str:
    out = []
    for kind, text in segs:
        if kind == "m":
            out.append("$" + (text.replace("|", "\\vert ") if cell else text) + "$")
        else:
            out.append(text.replace("$", "\\$").replace("|", "\\|"))
    return "".join(out)


def to_markdown(blocks: list[Block]) -> str:
    lines: list[str] = []
    for b in blocks:
        if b.kind == "heading":
            lines += ["#" * b.level + " " + b.text, ""]
        elif b.kind == "para":
            lines += [_md_segs(b.segs), ""]
        elif b.kind == "math":
            lines += ["$$", b.text, "$$", ""]
        elif b.kind == "code":
            lines += ["```", b.text.rstrip("\n"), "```", ""]
        elif b.kind in ("items", "checks"):
            mark = "- [x] " if b.kind == "checks" else "- "
            lines += [mark + _md_segs(i) for i in b.items] + [""]
        elif b.kind == "table":
            lines.append("| " + " | ".join(b.header) + " |")
            lines.append("|" + "---|" * len(b.header))
            lines += ["| " + " | ".join(_md_segs(c, cell=True) for c in r) + " |" for r in b.rows]
            lines.append("")
        elif b.kind == "figure":
            lines += [f"![phase portrait]({b.text})", ""]
    return "\n".join(lines).rstrip("\n") + "\n"


_TEX_ESCAPES = {
    "\\": "\\textbackslash{}",
    "{": "\\{",
    "}": "\\}",
    "$": "\\$",
    "&": "\\&",
    "#": "\\#",
    "^": "\\textasciicircum{}",
    "_": "\\_",
    "%": "\\%",
    "~": "\\textasciitilde{}",
    "<": "\\textless{}",
    ">": "\\textgreater{}",
}


def tex_escape(text: str) -> str:
    text = "".join(_TEX_ESCAPES.get(ch, ch) for ch in text)
    return "".join(ch if ord(ch) < 128 else _unicode(ch) for ch in text)


def _unicode(ch: str) -> str:
    return {"–": "--", "—": "---", "’": "'", "≥": "$\\ge$", "≤": "$\\le$"}.get(ch, "?")


def _tex_segs(segs: tuple[Seg, ...]) -> str:
    return "".join(f"\\({text}\\)" if kind == "m" else tex_escape(text) for kind, text in segs)


MAX_SOURCE_LINE = 2000  # TeX reads a source line into a fixed buffer; long sums are split


def _tex_lines(text: str) -> str:
    """Long math split into source lines at its sums (a newline is a space to TeX)."""
    if len(text) <= MAX_SOURCE_LINE:
        return text
    return text.replace(" + ", " +\n").replace(" - ", " -\n")


def to_latex(blocks: list[Block]) -> str:
    out = [
        "\\documentclass[11pt]{article}",
        "\\usepackage[T1]{fontenc}",
        "\\usepackage{amsmath,amssymb}",
        "\\usepackage[margin=2.2cm]{geometry}",
        "\\usepackage{longtable}",
        "\\usepackage{graphicx}",
        "\\setcounter{MaxMatrixCols}{40}",
        "\\begin{document}",
    ]
    for b in blocks:
        if b.kind == "heading":
            if b.level == 1:
                out += [f"\\title{{{tex_escape(b.text)}}}", "\\date{}", "\\maketitle"]
            else:
                cmd = "section" if b.level == 2 else "subsection"
                out.append(f"\\{cmd}*{{{tex_escape(b.text)}}}")
        elif b.kind == "para":
            out += [_tex_lines(_tex_segs(b.segs)), ""]
        elif b.kind == "math":
            out += ["\\[", _tex_lines(b.text), "\\]"]
        elif b.kind == "code":
            out += [
                "\\begin{verbatim}",
                b.text.rstrip("\n").replace("\\end{verbatim}", ""),
                "\\end{verbatim}",
            ]
        elif b.kind in ("items", "checks"):
            mark = "[$\\checkmark$]" if b.kind == "checks" else ""
            out.append("\\begin{itemize}")
            out += [f"\\item{mark} {_tex_segs(i)}" for i in b.items]
            out.append("\\end{itemize}")
        elif b.kind == "table":
            spec = "l" * len(b.header)
            out.append(f"\\begin{{longtable}}{{{spec}}}")
            out.append(" & ".join(f"\\textbf{{{tex_escape(h)}}}" for h in b.header) + " \\\\")
            out.append("\\hline")
            out += [" & ".join(_tex_segs(c) for c in r) + " \\\\" for r in b.rows]
            out.append("\\end{longtable}")
        elif b.kind == "figure":
            out += [
                "\\begin{center}",
                f"\\includegraphics[width=0.6\\textwidth]{{{b.text}}}",
                "\\end{center}",
            ]
    out.append("\\end{document}")
    return "\n".join(out) + "\n"
