"""A Document as Markdown: pipe tables that render on common code hosts, plots as images in
plots/ next to the file. The one Markdown table writer of the package."""

from __future__ import annotations

import re

from harness.formatting import visible
from harness.report.documents.document import Block, Document, Items, Table, Text

# Markdown punctuation a name could use to start emphasis, links, math or code.
_PUNCTUATION = re.compile(r"([\\`*_{}\[\]#!|$~])")


def escape(text: object) -> str:
    """Plain text for Markdown: hidden characters shown (harness.formatting.visible), entities
    for HTML, backslashes for Markdown punctuation."""
    text = visible(str(text)).replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
    return _PUNCTUATION.sub(r"\\\1", text).replace("\n", " ")


def table(part: Table) -> str:
    def line(cells: tuple[str, ...]) -> str:
        return "| " + " | ".join(escape(c) for c in cells) + " |"

    rule = "| " + " | ".join("---:" if right else "---" for right in part.right) + " |"
    lines = ([f"## {escape(part.title)}", ""] if part.title else []) + [line(part.header), rule]
    lines += [line(row) for row in part.rows]
    lines += [line for text in (part.note, part.legend) if text for line in ("", escape(text))]
    return "\n".join(lines)


def block(part: Block) -> str:
    if isinstance(part, Table):
        return table(part)
    if isinstance(part, Items):
        return "\n".join([f"{escape(part.title)}:", "", *(f"- {escape(i)}" for i in part.items)])
    return escape(part.text) if isinstance(part, Text) else ""


def render(document: Document) -> str:
    """The whole document; its plots are linked as plots/NAME.png."""
    chunks = [f"# {escape(document.title)}"] if document.title else []
    chunks += [f"**{escape(notice)}**" for notice in document.notices]
    chunks += [f"> {escape(document.headline)}"] if document.headline else []
    chunks += [escape(document.lead)] if document.lead else []
    chunks += [block(part) for part in document.blocks]
    if document.plots:
        images = [f"![{plot.caption}](plots/{plot.name}.png)" for plot in document.plots]
        chunks.append("\n".join(["## Plots", "", *images]))
    return "\n\n".join(chunks) + "\n"
