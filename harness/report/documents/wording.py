"""The sentences of a report, written from the analysis's figures: what of a suite is missing,
warnings recorded in runs, why each comparison got its verdict, the headline comparison, the
notes on clipped t-intervals and where the per-node gain concentrates. Wording only: every
figure comes from harness.analysis."""

from __future__ import annotations

import pandas as pd

from harness.analysis.bounds import SEED_CAP
from harness.analysis.breakdown import Breakdown
from harness.analysis.stats import RecordedWarning
from harness.analysis.suite_report import Incomplete, SuiteReport
from harness.analysis.verdict import (
    BETTER,
    EXCLUDES_ZERO,
    FEW_SEEDS,
    INSIDE_MINIMUM_GAIN,
    NO_DIFFERENCE,
    NOT_SIGNIFICANT,
    WORSE,
    Headline,
    Side,
    count,
)
from harness.formatting import metric_label, p_phrase, percent, signed
from harness.schema.analysis import DEFAULT_ANALYSIS, Analysis


def notices(report: SuiteReport) -> list[str]:
    """Said before everything else: what of the suite is not stored yet, then each warning
    recorded in its runs."""
    lines = [] if report.incomplete is None else [incomplete_line(report.incomplete)]
    return lines + [warning_line(warning) for warning in report.warnings]


def incomplete_line(missing: Incomplete) -> str:
    parts = [f"{missing.stored} of {missing.expected} runs stored"]
    if missing.absent:
        parts.append(f"no runs yet of {', '.join(missing.absent)}")
    parts += [f"{c} lacks seeds {', '.join(map(str, seeds))}" for c, seeds in missing.lacking]
    return "incomplete: " + "; ".join(parts) + "; figures cover the stored runs only"


def warning_line(warning: RecordedWarning) -> str:
    """`warning: contender: text (k of n runs)`."""
    return f"warning: {warning.contender}: {warning.text} ({warning.count} of {warning.runs} runs)"


def reason(
    figures: pd.Series, settings: Analysis, interval: tuple[str, str] = ("t_low", "t_high")
) -> str:
    """Why a judged comparison (a row of verdict.judge_all) got its verdict; `interval` names
    the columns of its t-interval."""
    m, alpha = settings.minimum_gain, 1 - settings.confidence
    low, high = figures[interval[0]], figures[interval[1]]
    span = f"{percent(settings.confidence)} t-interval {signed(low)} to {signed(high)} points"
    rule, p = figures["decided_by"], figures["p_t_holm"]
    if rule == FEW_SEEDS:
        return f"only {figures['seeds']} shared seed(s); need at least 2"
    if rule == INSIDE_MINIMUM_GAIN:
        return f"{span} lies inside ±{m:g}, the minimum gain"
    if rule == EXCLUDES_ZERO:
        size = "gain" if figures["verdict"] == BETTER else "loss"
        below = figures["below_minimum_gain"]
        note = f"; the {size} may be below the minimum gain of {m:g}" if below else ""
        return f"{span} excludes 0, Holm-adjusted {p_phrase(p)}{note}"
    if rule == NOT_SIGNIFICANT:
        why = f"{span} excludes 0 but Holm-adjusted {p_phrase(p)} is not below {alpha:g}"
    else:
        why = f"{span} is wider than the minimum gain of ±{m:g} allows to decide"
    return why + (
        settle_note(count(figures["seeds_needed"]))
        or "; no practical number of seeds would settle it at this spread"
    )


def settle_note(seeds_needed: int | None) -> str:
    """`; about N seeds would likely settle it`, or nothing when no practical number would."""
    if seeds_needed is None or seeds_needed >= SEED_CAP:
        return ""
    return f"; about {seeds_needed} seeds would likely settle it"


def with_reasons(
    judged: pd.DataFrame,
    settings: Analysis = DEFAULT_ANALYSIS,
    interval: tuple[str, str] = ("t_low", "t_high"),
) -> pd.DataFrame:
    """Judged comparisons with their verdict's `reason` in place of the figures it words
    (`decided_by`, `below_minimum_gain`): the columns of the report's CSV files."""
    out = judged.copy()
    texts = [reason(row, settings, interval) for _, row in judged.iterrows()]
    out.insert(out.columns.get_loc("decided_by"), "reason", texts)
    return out.drop(columns=["decided_by", "below_minimum_gain"])


def reasons(report: SuiteReport) -> list[str]:
    """One line per comparison: the verdict and why; then one per t-interval shown clipped."""
    return [
        f"{r['attention']} vs {r['baseline']}: {r['verdict']} ({reason(r, report.settings)})"
        for _, r in report.comparisons.iterrows()
    ] + range_notes(report)


def range_notes(report: SuiteReport) -> list[str]:
    """Each t-interval that passed the metric's possible range (analysis.bounds)."""
    level = percent(report.settings.confidence)
    notes = []
    for r in report.contenders.itertuples():
        if r.t_clipped:
            notes.append(
                f"{r.variant}: the {level} t-interval of its mean passes the possible range 0 to "
                f"1 and is shown clipped; {range_advice(r.seeds, count(r.seeds_for_range))}"
            )
    for r in report.comparisons.itertuples():
        if r.t_clipped:
            notes.append(
                f"{r.attention} vs {r.baseline}: the {level} t-interval of the difference passes "
                f"the possible ±100 points and is shown clipped; "
                f"{range_advice(r.seeds, count(r.seeds_for_range))}"
            )
    return notes


def range_advice(seeds: int, seeds_for_range: int | None) -> str:
    """Why a clipped interval (analysis.bounds) is not to be trusted, and how many seeds would
    help."""
    more = (
        f"about {seeds_for_range} seeds would likely keep it inside"
        if seeds_for_range is not None
        else "no practical number of seeds would keep it inside at this spread"
    )
    return f"with {seeds} seeds and this much spread the t-interval is unreliable; {more}"


def side_label(side: Side) -> str:
    """A variant with its model kind and, for attention kinds, its heads."""
    extra = f", {side.heads} heads" if side.heads is not None else ""
    return f"{side.variant} ({side.model}{extra})"


def headline_sentence(report: SuiteReport) -> str:
    """One sentence: the best attention variant against the best baseline of the suite, with a
    warning after it when the t-interval is shown clipped."""
    line, settings = report.headline, report.settings
    if line.missing is not None:
        missing = "attention contender" if line.missing == "attention" else "baseline"
        return f"No comparison: the suite has no {missing}."
    a, b = side_label(line.attention), side_label(line.baseline)
    if line.seeds < 2:
        return (
            f"{a} against the best baseline, {b}: inconclusive, they share {line.seeds} "
            "seed(s); a paired comparison needs at least 2."
        )
    facts = (
        f"{percent(settings.confidence)} t-interval {signed(line.low)} to {signed(line.high)}, "
        f"Holm-adjusted {p_phrase(line.p_holm)}, {line.seeds} seeds"
    )
    return _sentence(line, a, b, facts, settings) + _range_warning(line)


def _sentence(line: Headline, a: str, b: str, facts: str, settings: Analysis) -> str:
    d, metric = signed(line.difference), metric_label(line.metric)
    if line.verdict == BETTER:
        return f"{a} beats the best baseline, {b}, by {d} {metric} points ({facts})."
    if line.verdict == WORSE:
        return f"{a} trails the best baseline, {b}, by {d} {metric} points ({facts})."
    if line.verdict == NO_DIFFERENCE:
        return (
            f"{a} and the best baseline, {b}, differ by {d} {metric} points ({facts}): no "
            f"difference that matters at a minimum gain of {settings.minimum_gain:g} points."
        )
    settle = settle_note(line.seeds_needed)
    return (
        f"{a} against the best baseline, {b}: inconclusive, {d} {metric} points ({facts}){settle}."
    )


def _range_warning(line: Headline) -> str:
    """A clipped t-interval (analysis.bounds) is said to be unreliable, after the sentence."""
    if not line.clipped:
        return ""
    return (
        " The t-interval passes the possible ±100 points and is shown clipped: "
        + range_advice(line.seeds, line.seeds_for_range)
        + "."
    )


def breakdown_summary(nodes: Breakdown) -> str:
    """Where the headline comparison's gain concentrates over the node groups, in one
    sentence."""
    if nodes.groups.empty:
        return f"No per-{nodes.unit} predictions are stored for these runs."
    if nodes.attention is None:
        return "No comparison: the suite lacks one of the two sides."
    rows = nodes.headline_rows()

    def listed(chosen: pd.DataFrame) -> str:
        ordered = chosen.reindex(chosen["difference"].abs().sort_values(ascending=False).index)
        return ", ".join(
            f"{r.grouping.replace('_', ' ')} {r.group} ({signed(r.difference)} points, "
            f"{signed(r.low)} to {signed(r.high)})"
            for r in ordered.itertuples()
        )

    gains, losses = rows[rows["verdict"] == BETTER], rows[rows["verdict"] == WORSE]
    lead = f"{nodes.attention} against {nodes.baseline} by {nodes.unit} group: "
    if gains.empty and losses.empty:
        return lead + "no group differs (each is inconclusive or within the minimum gain)."
    parts = []
    if not gains.empty:
        parts.append(f"the gain concentrates in {listed(gains)}")
    if not losses.empty:
        parts.append(f"it loses in {listed(losses)}")
    return lead + "; ".join(parts) + "; no other group differs."
