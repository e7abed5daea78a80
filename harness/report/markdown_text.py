"""Plain text made safe for Markdown: one escaping for every Markdown Heedful writes."""

from __future__ import annotations

import re

from harness.formatting import visible

# Markdown punctuation a name could use to start emphasis, links, math or code.
_PUNCTUATION = re.compile(r"([\\`*_{}\[\]#!|$~])")


def escape(text: object) -> str:
    """Plain text for Markdown: hidden characters shown (harness.formatting.visible), entities
    for HTML, backslashes for Markdown punctuation."""
    text = visible(str(text)).replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
    return _PUNCTUATION.sub(r"\\\1", text).replace("\n", " ")
