"""Heedful's own colours for plots and the HTML page. The series colours stay apart for readers
with deuteranopia or protanopia too (tests/reference/test_palette_reference.py checks it)."""

from __future__ import annotations

from cycler import cycler

from harness.analysis.verdict import BETTER, INCONCLUSIVE, NO_DIFFERENCE, WORSE

# one colour per contender or line, in order; the first two mark the two sides
SERIES = ("#71345b", "#5285b5", "#e2b853", "#444d20", "#b57978", "#76d6d2")
SIDES = {"attention": SERIES[0], "baseline": SERIES[1]}
VERDICTS = {
    BETTER: "#1f5f3a",
    WORSE: "#e07a5c",
    NO_DIFFERENCE: "#7d8794",
    INCONCLUSIVE: "#f0c24b",
}
INK = "#1d2024"  # text
MUTED = "#5b6169"  # notes, header rules
RULE = "#dcdfe3"  # table rules
AXIS = "#4a5058"  # zero lines and marked values in plots
GUIDE = "#a3a7ad"  # diagonals and fronts drawn behind the data
BAND = "#e8ebe4"  # the band of differences too small to matter
TINT = "#f7f2f6"  # behind the headline on the page

# matplotlib's colour cycle, so lines without a colour of their own take ours
CYCLE = {"axes.prop_cycle": cycler(color=list(SERIES))}
