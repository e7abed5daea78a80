"""The report's tables as a LaTeX document with booktabs rules."""

from __future__ import annotations

from harness.analysis.suite_report import SuiteReport
from harness.formatting import visible
from harness.report.breakdown import report_tables
from harness.report.text_table import TextTable
from harness.report.wording import headline_sentence, notices

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


def table(part: TextTable) -> str:
    columns = "".join("r" if right else "l" for right in part.right)
    lines = [
        r"\begin{table}[htbp]",
        r"\centering",
        rf"\caption{{{escape(part.title)}}}",
        r"\resizebox{\linewidth}{!}{%",
        rf"\begin{{tabular}}{{{columns}}}",
        r"\toprule",
        " & ".join(escape(h) for h in part.header) + r" \\",
        r"\midrule",
    ]
    lines += [" & ".join(escape(c) for c in row) + r" \\" for row in part.rows]
    lines += [r"\bottomrule", r"\end{tabular}}"]
    if part.note:
        lines.append(rf"\par\smallskip\footnotesize {escape(part.note)}")
    lines.append(r"\end{table}")
    return "\n".join(lines)


def render(report: SuiteReport) -> str:
    """A standalone document; copy the table environments into a paper as they are."""
    body = "\n\n".join(table(part) for part in report_tables(report))
    return "\n".join(
        [
            r"\documentclass{article}",
            r"\usepackage[T1]{fontenc}",
            r"\usepackage[utf8]{inputenc}",
            r"\usepackage{booktabs}",
            r"\usepackage{graphicx}",
            r"\usepackage[margin=2cm]{geometry}",
            r"\begin{document}",
            rf"\section*{{Heedful report: {escape(report.suite)}}}",
            *[rf"\textbf{{{escape(notice)}}}\par" for notice in notices(report)],
            escape(headline_sentence(report)),
            "",
            body,
            r"\end{document}",
            "",
        ]
    )
