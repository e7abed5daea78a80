"""The sentences of a report, pinned word for word: verdict reasons, headlines, range notes,
the per-node summary, what of a suite is missing and warnings recorded in runs. Figures come
from crafted run tables (tests/test_verdict.py)."""

from __future__ import annotations

import pandas as pd
import pytest
from test_bounds import spread_runs
from test_verdict import CLEAR_GAIN, CLEAR_LOSS, NOISY, SETTINGS, TIE, crafted

from harness.analysis.breakdown import Breakdown
from harness.analysis.stats import RecordedWarning
from harness.analysis.suite_report import Incomplete
from harness.api import analyse
from harness.report.documents.wording import (
    breakdown_summary,
    headline_sentence,
    incomplete_line,
    reasons,
    warning_line,
)

SMALL_GAIN = [2.0, 1.0, 3.5, 0.4, 2.6]
A, B = "att (gat, 8 heads)", "conv (gcn)"

CASES = [
    (
        CLEAR_GAIN,
        f"{A} beats the best baseline, {B}, by +3.0 macro-F1 points (95% t-interval +2.9 to +3.1, "
        "Holm-adjusted p < 0.001, 10 seeds).",
        "better (95% t-interval +2.9 to +3.1 points excludes 0, Holm-adjusted p < 0.001)",
    ),
    (
        CLEAR_LOSS,
        f"{A} trails the best baseline, {B}, by -3.0 macro-F1 points (95% t-interval -3.1 to -2.9, "
        "Holm-adjusted p < 0.001, 10 seeds).",
        "worse (95% t-interval -3.1 to -2.9 points excludes 0, Holm-adjusted p < 0.001)",
    ),
    (
        TIE,
        f"{A} and the best baseline, {B}, differ by +0.1 macro-F1 points (95% t-interval -0.1 "
        "to +0.3, Holm-adjusted p = 0.17, 10 seeds): no difference that matters at a minimum "
        "gain of 1 points.",
        "no difference that matters (95% t-interval -0.1 to +0.3 points lies inside ±1, the "
        "minimum gain)",
    ),
    (
        NOISY,
        f"{A} against the best baseline, {B}: inconclusive, +0.5 macro-F1 points (95% "
        "t-interval -5.2 to +6.2, Holm-adjusted p = 0.82, 5 seeds); about 329 seeds would "
        "likely settle it.",
        "inconclusive (95% t-interval -5.2 to +6.2 points is wider than the minimum gain of ±1 "
        "allows to decide; about 329 seeds would likely settle it)",
    ),
    (
        SMALL_GAIN,
        f"{A} beats the best baseline, {B}, by +1.9 macro-F1 points (95% t-interval +0.4 to +3.4, "
        "Holm-adjusted p = 0.026, 5 seeds).",
        "better (95% t-interval +0.4 to +3.4 points excludes 0, Holm-adjusted p = 0.026; the gain "
        "may be below the minimum gain of 1)",
    ),
    (
        [-gap for gap in SMALL_GAIN],
        f"{A} trails the best baseline, {B}, by -1.9 macro-F1 points (95% t-interval -3.4 to -0.4, "
        "Holm-adjusted p = 0.026, 5 seeds).",
        "worse (95% t-interval -3.4 to -0.4 points excludes 0, Holm-adjusted p = 0.026; the loss "
        "may be below the minimum gain of 1)",
    ),
    (
        [5.0],
        f"{A} against the best baseline, {B}: inconclusive, they share 1 seed(s); a paired "
        "comparison needs at least 2.",
        "inconclusive (only 1 shared seed(s); need at least 2)",
    ),
]


@pytest.mark.parametrize(("gaps", "headline", "reason"), CASES)
def test_headline_and_reason_word_for_word(gaps, headline, reason):
    report = analyse(crafted(gaps), SETTINGS)
    assert headline_sentence(report) == headline
    assert reasons(report)[0] == f"att vs conv: {reason}"


def test_an_unsettled_comparison_past_the_range_says_so_twice():
    """No practical number of seeds settles it; the clipped interval is warned about."""
    report = analyse(crafted([0.0, 90.0, -90.0]), SETTINGS)
    advice = "with 3 seeds and this much spread the t-interval is unreliable; about"
    assert headline_sentence(report) == (
        f"{A} against the best baseline, {B}: inconclusive, +0.0 macro-F1 points (95% "
        "t-interval -100.0 to +100.0, Holm-adjusted p = 1.00, 3 seeds). The t-interval passes "
        "the possible ±100 "
        f"points and is shown clipped: {advice} 6 seeds would likely keep it inside."
    )
    assert reasons(report) == [
        "att vs conv: inconclusive (95% t-interval -100.0 to +100.0 points is wider than the "
        "minimum gain of ±1 allows to decide; no practical number of seeds would settle it at "
        "this spread)",
        "att: the 95% t-interval of its mean passes the possible range 0 to 1 and is shown "
        f"clipped; {advice} 36 seeds would likely keep it inside",
        "att vs conv: the 95% t-interval of the difference passes the possible ±100 points and "
        f"is shown clipped; {advice} 6 seeds would likely keep it inside",
    ]


def test_a_clipped_headline_word_for_word(crafted_run):
    report = analyse(spread_runs(crafted_run))
    assert headline_sentence(report) == (
        "attention (gat, 2 heads) against the best baseline, convolution (gcn): inconclusive, "
        "+60.3 accuracy points (95% t-interval -22.1 to +100.0, Holm-adjusted p = 0.088, 3 seeds); "
        "about 4 seeds would likely settle it. The t-interval passes the possible ±100 points "
        "and is shown clipped: with 3 seeds and this much spread the t-interval is unreliable; "
        "about 6 seeds would likely keep it inside."
    )


GROUPS = pd.DataFrame(
    {
        "grouping": ["degree", "degree", "local_homophily", "local_homophily"],
        "group": ["0-3", "4+", "0.0-0.5", "0.5-1.0"],
        "difference": [1.24, -4.5, 2.5, 0.3],
        "low": [0.2, -6.0, 1.0, -1.0],
        "high": [2.3, -3.01, 4.0, 1.6],
        "verdict": ["better", "worse", "better", "inconclusive"],
    }
)
LEAD = "att against conv by node group: "


@pytest.mark.parametrize(
    ("chosen", "sentence"),
    [
        (
            [0, 1, 2, 3],
            "the gain concentrates in local homophily 0.0-0.5 (+2.5 points, +1.0 to +4.0), "
            "degree 0-3 (+1.2 points, +0.2 to +2.3); it loses in degree 4+ (-4.5 points, -6.0 "
            "to -3.0); no other group differs.",
        ),
        ([1], "it loses in degree 4+ (-4.5 points, -6.0 to -3.0); no other group differs."),
        ([3], "no group differs (each is inconclusive or within the minimum gain)."),
    ],
)
def test_breakdown_summary_word_for_word(chosen, sentence):
    nodes = Breakdown(
        GROUPS, GROUPS.iloc[chosen].assign(attention="att", baseline="conv"), "att", "conv"
    )
    assert breakdown_summary(nodes) == LEAD + sentence


def test_what_is_missing_and_recorded_warnings_word_for_word():
    missing = Incomplete(3, 6, ("features_only",), (("convolution", (1, 4)),))
    assert incomplete_line(missing) == (
        "incomplete: 3 of 6 runs stored; no runs yet of features_only; convolution lacks seeds "
        "1, 4; figures cover the stored runs only"
    )
    assert incomplete_line(Incomplete(5, 6, (), ())) == (
        "incomplete: 5 of 6 runs stored; figures cover the stored runs only"
    )
    warning = RecordedWarning("plain", "the test split holds 2 of 3 classes", 1, 2)
    assert warning_line(warning) == (
        "warning: plain: the test split holds 2 of 3 classes (1 of 2 runs)"
    )
