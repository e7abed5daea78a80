"""How figures are written, everywhere: numbers, signed differences, p-values, intervals,
metric labels and sparklines. Missing figures (None or NaN) are written as "-"."""

from __future__ import annotations

import math
import re

from harness.schema.tasks import metric_label as metric_label  # labels live in the registry

BLOCKS = "▁▂▃▄▅▆▇█"


def missing(value: object) -> bool:
    return value is None or (isinstance(value, float) and math.isnan(value))


def fixed(value: float | None, digits: int = 3) -> str:
    """`0.812`: a figure with a fixed number of decimals."""
    return "-" if missing(value) else f"{value:.{digits}f}"


def interval(low: float | None, high: float | None, digits: int = 3) -> str:
    """`0.790 to 0.830`."""
    if missing(low) or missing(high):
        return "-"
    return f"{low:.{digits}f} to {high:.{digits}f}"


def signed(value: float, digits: int = 1) -> str:
    """`+1.2` / `-0.4`: a difference with its sign; `nan` when not finite."""
    return "nan" if not math.isfinite(value) else f"{value:+.{digits}f}"


def signed_interval(low: float, high: float) -> str:
    """`-0.8 to +2.1`."""
    if missing(low) or missing(high):
        return "-"
    return f"{signed(low)} to {signed(high)}"


def percent(share: float) -> str:
    """`95%`: a share as a whole percentage (a confidence level)."""
    return f"{share:.0%}"


def as_points(share: float) -> str:
    """A difference of shares in metric points: 0.0123 -> `+1.23`."""
    return "-" if missing(share) else f"{100 * share:+.2f}"


def p_text(p: float) -> str:
    """`< 0.001`, `0.012`, `0.43`; `n/a` when not finite."""
    if not math.isfinite(p):
        return "n/a"
    return "< 0.001" if p < 0.001 else f"{p:.2g}" if p < 0.1 else f"{p:.2f}"


def p_phrase(p: float) -> str:
    """`p = 0.012` or `p < 0.001`."""
    text = p_text(p)
    return f"p {text}" if text.startswith("<") else f"p = {text}"


def sparkline(values: list[float], least_span: float = 0.0, width: int | None = None) -> str:
    """One block character per value, from the lowest value over at least `least_span`; with
    `width`, runs of values are first squeezed to their maximum so the line fits `width`.

    The least span keeps changes far below what matters from filling the whole height; a
    missing value is a blank.
    """
    if width is not None and values:
        step = max(1, math.ceil(len(values) / width))
        values = [max(values[i : i + step]) for i in range(0, len(values), step)]
    finite = [v for v in values if v == v]
    if not finite:
        return ""
    low = min(finite)
    span = max(max(finite) - low, least_span)
    top = len(BLOCKS) - 1
    return "".join(
        " " if v != v else BLOCKS[0 if span == 0 else round((v - low) / span * top)] for v in values
    )


# Characters that change what a reader sees without being seen: C0 and C1 controls (escape
# sequences clear screens and retitle terminals), the soft hyphen, bidirectional marks,
# embeddings, overrides and isolates (they reorder the text around them), zero-width and
# invisible characters, line and paragraph separators, and the tag characters: every character
# of Unicode's General_Category Cc, Cf, Zl and Zp (tests/test_visible_text.py checks all planes).
HIDDEN = re.compile(
    "[\x00-\x1f\x7f-\x9f\u00ad\u0600-\u0605\u061c\u06dd\u070f\u0890\u0891\u08e2"
    "\u180e\u200b-\u200f\u2028-\u202e\u2060-\u206f\ufeff\ufff9-\ufffb"
    "\U000110bd\U000110cd\U00013430-\U0001343f\U0001bca0-\U0001bca3"
    "\U0001d173-\U0001d17a\U000e0000-\U000e007f]"
)


def visible(text: str) -> str:
    """Text with every control, bidirectional and invisible character written as an escape
    (`\\x1b`, `\\u202e`), so that what a terminal, Markdown, HTML, LaTeX or CSV reader sees is
    what the text holds. Every format writes user text through this one function."""
    if not HIDDEN.search(text):
        return text
    return HIDDEN.sub(_escaped, text)


def _escaped(match: re.Match[str]) -> str:
    code = ord(match.group())
    return (
        f"\\x{code:02x}"
        if code < 0x100
        else f"\\u{code:04x}"
        if code < 0x10000
        else f"\\U{code:08x}"
    )
