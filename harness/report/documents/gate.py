"""A gate outcome and the gate history as Documents: the verdict first, one row per contender,
then every check that did not pass; the checks as a frame for JUnit XML."""

from __future__ import annotations

import pandas as pd

from harness.formatting import as_points, fixed, metric_label, sparkline
from harness.gate.compare import FAIL, PASS, SKIP, WARN, GateOutcome
from harness.report.documents.document import Document, Items, Table, table

MARKS = {PASS: "✓", WARN: "!", FAIL: "✗", SKIP: "-"}


def worst(statuses: list[str]) -> str:
    """A contender's verdict: fail over warn over pass; skipped checks do not count."""
    return FAIL if FAIL in statuses else WARN if WARN in statuses else PASS


def _ratio(checks: dict, name: str) -> str:
    """A cost check's ratio now / baseline, `-` when the check has no figures."""
    return fixed(checks[name].figures.get("ratio"), 2) if name in checks else "-"


def gate_table(outcome: GateOutcome) -> Table:
    """One row per contender: the metric then and now, the difference with its interval, the
    cost ratios and one mark per check."""
    level = round(100 * outcome.confidence)
    header = ["contender", "baseline", "now", "difference (points)", f"{level}% t-interval"]
    header += ["s/epoch ×", "memory ×", "checks", "verdict"]
    rows, marks = [], []
    for contender in dict.fromkeys(check.contender for check in outcome.checks):
        checks = outcome.of(contender)
        if "metric" not in checks:
            continue  # nothing to compare: its checks are listed below the table
        figures = checks["metric"].figures
        verdict = worst([c.status for c in checks.values()])
        rows.append(
            [
                contender,
                fixed(figures.get("baseline")),
                fixed(figures.get("current")),
                as_points(figures.get("difference")),
                f"{as_points(figures.get('low'))} to {as_points(figures.get('high'))}",
                _ratio(checks, "time"),
                _ratio(checks, "memory"),
                "".join(MARKS[c.status] for c in checks.values()),
                verdict,
            ]
        )
        marks.append(verdict)
    note = (
        f"Difference: now minus baseline, in points; interval: {level}% t-interval of the paired "
        "mean difference over shared seeds (Welch interval when fewer than two seeds are "
        "shared). Checks: metric, time, memory, reproducibility; "
        + ", ".join(f"{mark} {status}" for status, mark in MARKS.items())
        + ". A metric fails only when the drop exceeds the tolerance and the test is "
        "significant. These are estimates on this suite's data and seeds."
    )
    title = f"Gate: {outcome.suite} (test {metric_label(outcome.metric)})"
    return table(
        "gate", title, header, rows, note, optional=("s/epoch ×", "memory ×", "checks"), marks=marks
    )


def checks_frame(outcome: GateOutcome) -> pd.DataFrame:
    """One row per contender and check, the metric check carrying the contender's seconds."""
    rows = [
        {
            "classname": f"{outcome.suite}.{check.contender}",
            "name": check.check,
            "time": outcome.contender_seconds.get(check.contender, 0.0)
            if check.check == "metric"
            else 0.0,
            "status": check.status,
            "message": check.message,
        }
        for check in outcome.checks
    ]
    return pd.DataFrame(rows, columns=["classname", "name", "time", "status", "message"])


def gate_document(outcome: GateOutcome) -> Document:
    findings = [c for c in outcome.checks if c.status not in (PASS, SKIP)]
    blocks: list = [gate_table(outcome)]
    if findings:
        lines = tuple(f"{c.status} {c.check}: {c.message}" for c in findings)
        blocks.append(Items("Findings", lines))
    notices = ()
    if outcome.environment_differences:
        differences = "; ".join(outcome.environment_differences)
        notices = (f"environment differs from the baseline's: {differences}",)
    properties = [("metric", outcome.metric), ("status", outcome.status)]
    properties += [(f"environment.{k}", str(v)) for k, v in sorted(outcome.environment.items())]
    properties.append(("environment_differs", "; ".join(outcome.environment_differences) or "no"))
    return Document(
        title=f"Heedful gate: {outcome.suite}",
        headline=f"gate {outcome.status.upper()}",
        notices=notices,
        blocks=tuple(blocks),
        frames={"checks": checks_frame(outcome)},
        properties=tuple(properties),
        name=f"gate {outcome.suite}",
        made_at=outcome.gated_at,
    )


def history_document(history: pd.DataFrame, suite: str, last: int = 20) -> Document:
    """Each contender's latest figures, each with a trend over its last `last` gate runs.

    Metric trends span at least 2 points, cost trends at least 10% of their largest value.
    """
    metric = metric_label(history["metric"].iloc[-1])
    first = pd.Timestamp(history["gated_at"].min(), unit="s").strftime("%Y-%m-%d %H:%M")
    final = pd.Timestamp(history["gated_at"].max(), unit="s").strftime("%Y-%m-%d %H:%M")
    gates = history["gate_id"].nunique()
    rows, marks = [], []
    for contender, chosen in history.groupby("contender", sort=False):
        chosen = chosen.tail(last)
        latest = chosen.iloc[-1]
        seconds = chosen["seconds_per_epoch"].tolist()
        memory = chosen["peak_mb"].tolist()
        rows.append(
            [
                str(contender),
                str(len(chosen)),
                f"{fixed(float(latest['metric_mean']), 3)} "
                f"{sparkline(chosen['metric_mean'].tolist(), 0.02)}",
                f"{fixed(float(latest['seconds_per_epoch']), 4)} "
                f"{sparkline(seconds, 0.1 * max(seconds))}",
                f"{fixed(float(latest['peak_mb']), 2)} {sparkline(memory, 0.1 * max(memory))}",
                "".join(MARKS[s] for s in chosen["contender_status"]),
            ]
        )
        marks.append(str(latest["contender_status"]))
    header = ["contender", "gates", f"test {metric}", "s/epoch", "tensor MiB", "verdicts"]
    runs = f"{gates} gate run{'s' if gates != 1 else ''}"
    title = f"Gate history: {suite}, {runs}, {first} to {final} UTC"
    note = "Latest value, then one mark per gate run, oldest first."
    part = table("gate_history", title, header, rows, note, marks=marks)
    return Document(title=title, blocks=(part,), frames={"gate_history": history}, name="history")
