"""The report as one self-contained HTML page: inline style, plots as base64 PNG images."""

from __future__ import annotations

import base64
import html

from harness.analysis.suite_report import SuiteReport
from harness.formatting import visible
from harness.report.breakdown import report_tables
from harness.report.plots import PLOT_TITLES
from harness.report.text_table import TextTable, facts
from harness.report.trend import TREND_TITLE
from harness.report.wording import headline_sentence, notices, reasons

STYLE = """
body { font-family: system-ui, sans-serif; margin: 2rem auto; max-width: 1200px;
       color: #212121; line-height: 1.45; padding: 0 1rem; }
blockquote { font-size: 1.15rem; border-left: 4px solid #c2571a; margin: 1rem 0;
             padding: 0.5rem 1rem; background: #fff8f3; }
table { border-collapse: collapse; margin: 0.5rem 0 1rem; font-size: 0.85rem; }
th, td { padding: 0.25rem 0.6rem; border-bottom: 1px solid #e0e0e0; text-align: left; }
th { border-bottom: 2px solid #616161; }
td.number { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
.note { color: #616161; font-size: 0.85rem; }
figure { margin: 1rem 0 2rem; }
figure img { max-width: 100%; }
"""


def escape(text: str) -> str:
    """Text safe in HTML: hidden characters shown (harness.formatting.visible), then entities."""
    return html.escape(visible(str(text)))


def table(part: TextTable) -> str:
    head = "".join(f"<th>{escape(h)}</th>" for h in part.header)
    body = "".join(
        "<tr>"
        + "".join(
            f'<td class="number">{escape(c)}</td>' if right else f"<td>{escape(c)}</td>"
            for c, right in zip(row, part.right, strict=True)
        )
        + "</tr>"
        for row in part.rows
    )
    note = f'<p class="note">{escape(part.note)}</p>' if part.note else ""
    return (
        f"<h2>{escape(part.title)}</h2>\n<table><thead><tr>{head}</tr></thead>"
        f"<tbody>{body}</tbody></table>{note}"
    )


def trend_section(trend: bytes | None) -> str:
    """The gate-history plot (harness.report.trend), when the suite has gate runs."""
    if trend is None:
        return ""
    return (
        f'<h2>Gate history</h2><figure><img alt="{escape(TREND_TITLE)}" '
        f'src="data:image/png;base64,{base64.b64encode(trend).decode("ascii")}">'
        f"<figcaption>{escape(TREND_TITLE)}</figcaption></figure>"
    )


def render(report: SuiteReport, plots: dict[str, bytes], trend: bytes | None = None) -> str:
    """The page; `plots` maps plot names to PNG bytes (embedded, no outside files)."""
    sections = []
    for part in report_tables(report):
        sections.append(table(part))
        if part.name == "comparisons":
            items = "".join(f"<li>{escape(line)}</li>" for line in reasons(report))
            sections.append(f"<h3>Verdicts</h3><ul>{items}</ul>")
    figures = "".join(
        f'<figure><img alt="{escape(PLOT_TITLES[name])}" '
        f'src="data:image/png;base64,{base64.b64encode(png).decode("ascii")}">'
        f"<figcaption>{escape(PLOT_TITLES[name])}</figcaption></figure>"
        for name, png in plots.items()
    )
    return f"""<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<title>Heedful report: {escape(report.suite)}</title>
<style>{STYLE}</style>
</head>
<body>
<h1>Heedful report: {escape(report.suite)}</h1>
{"".join(f'<p class="notice">{escape(notice)}</p>' for notice in notices(report))}
<blockquote>{escape(headline_sentence(report))}</blockquote>
<p class="note">{escape(facts(report))}</p>
<h2>Plots</h2>
{figures}
{trend_section(trend)}
{"".join(sections)}
</body>
</html>
"""
