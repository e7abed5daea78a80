"""A Document's tables as a LaTeX document with booktabs rules, ready to copy into a paper."""

from __future__ import annotations

from harness.formatting import visible
from harness.report.documents.document import Document, Table

_SPECIAL = {
    "\\": r"\textbackslash{}",
    "&": r"\&",
    "%": r"\%",
    "$": r"\$",
    "#": r"\#",
    "_": r"\_",
    "{": r"\{",
    "}": r"\}",
    "~": r"\textasciitilde{}",
    "^": r"\textasciicircum{}",
    "<": r"\textless{}",
    "[": "{[}",  # a row starting with [ would be read as the spacing argument of \\
    "]": "{]}",
    ">": r"\textgreater{}",
    "±": r"$\pm$",
    "−": "-",
}


def escape(text: str) -> str:
    """Text safe in LaTeX's text mode: hidden characters shown (harness.formatting.visible),
    then every special character replaced."""
    return "".join(_SPECIAL.get(character, character) for character in visible(str(text)))


def table(part: Table) -> str:
    columns = "".join("r" if right else "l" for right in part.right)
    lines = [
        r"\begin{table}[htbp]",
        r"\centering",
        *([rf"\caption{{{escape(part.title)}}}"] if part.title else []),
        r"\resizebox{\linewidth}{!}{%",
        rf"\begin{{tabular}}{{{columns}}}",
        r"\toprule",
        " & ".join(escape(h) for h in part.header) + r" \\",
        r"\midrule",
    ]
    lines += [" & ".join(escape(c) for c in row) + r" \\" for row in part.rows]
    lines += [r"\bottomrule", r"\end{tabular}}"]
    lines += [rf"\par\smallskip\footnotesize {escape(t)}" for t in (part.note, part.legend) if t]
    lines.append(r"\end{table}")
    return "\n".join(lines)


def render(document: Document) -> str:
    """A standalone document: title, notices, headline and every table; copy the table
    environments into a paper as they are."""
    body = "\n\n".join(table(part) for part in document.tables)
    return "\n".join(
        [
            r"\documentclass{article}",
            r"\usepackage[T1]{fontenc}",
            r"\usepackage[utf8]{inputenc}",
            r"\usepackage{booktabs}",
            r"\usepackage{graphicx}",
            r"\usepackage[margin=2cm]{geometry}",
            r"\begin{document}",
            rf"\section*{{{escape(document.title)}}}",
            *[rf"\textbf{{{escape(notice)}}}\par" for notice in document.notices],
            escape(document.headline),
            "",
            body,
            r"\end{document}",
            "",
        ]
    )
