"""A Document as one self-contained HTML page: inline style, plots as base64 PNG images."""

from __future__ import annotations

import base64
import html

from harness.formatting import visible
from harness.report.documents.document import Block, Document, Items, Plot, Table, Text
from harness.report.documents.palette import INK, MUTED, RULE, SIDES, TINT

STYLE = f"""
body {{ font-family: system-ui, sans-serif; margin: 2rem auto; max-width: 1200px;
       color: {INK}; line-height: 1.45; padding: 0 1rem; }}
blockquote {{ font-size: 1.15rem; border-left: 4px solid {SIDES["attention"]}; margin: 1rem 0;
             padding: 0.5rem 1rem; background: {TINT}; }}
table {{ border-collapse: collapse; margin: 0.5rem 0 1rem; font-size: 0.85rem; }}
th, td {{ padding: 0.25rem 0.6rem; border-bottom: 1px solid {RULE}; text-align: left; }}
th {{ border-bottom: 2px solid {MUTED}; }}
td.number {{ text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }}
.note {{ color: {MUTED}; font-size: 0.85rem; }}
figure {{ margin: 1rem 0 2rem; }}
figure img {{ max-width: 100%; }}
"""


def escape(text: str) -> str:
    """Text safe in HTML: hidden characters shown (harness.formatting.visible), then entities."""
    return html.escape(visible(str(text)))


def table(part: Table) -> str:
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
    note = "".join(
        f'<p class="note">{escape(text)}</p>' for text in (part.note, part.legend) if text
    )
    title = f"<h2>{escape(part.title)}</h2>\n" if part.title else ""
    return f"{title}<table><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>{note}"


def block(part: Block) -> str:
    if isinstance(part, Table):
        return table(part)
    if isinstance(part, Items):
        items = "".join(f"<li>{escape(line)}</li>" for line in part.items)
        return f"<h3>{escape(part.title)}</h3><ul>{items}</ul>"
    return f"<p>{escape(part.text)}</p>" if isinstance(part, Text) else ""


def figure(plot: Plot) -> str:
    """A plot embedded as a base64 PNG: the page needs no outside files."""
    data = base64.b64encode(plot.png).decode("ascii")
    return (
        f'<figure><img alt="{escape(plot.caption)}" src="data:image/png;base64,{data}">'
        f"<figcaption>{escape(plot.caption)}</figcaption></figure>"
    )


def render(document: Document) -> str:
    """The page: headline first, then the facts, the plots and every table."""
    notices = "".join(f'<p class="notice">{escape(notice)}</p>' for notice in document.notices)
    headline = f"<blockquote>{escape(document.headline)}</blockquote>" if document.headline else ""
    lead = f'<p class="note">{escape(document.lead)}</p>' if document.lead else ""
    figures = "".join(figure(plot) for plot in document.plots)
    plots = f"<h2>Plots</h2>\n{figures}\n" if document.plots else ""
    return f"""<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<title>{escape(document.title)}</title>
<style>{STYLE}</style>
</head>
<body>
<h1>{escape(document.title)}</h1>
{notices}
{headline}
{lead}
{plots}
{"".join(block(part) for part in document.blocks)}
</body>
</html>
"""
