"""A gate outcome as Markdown, short enough to post on a pull request."""

from __future__ import annotations

from harness.formatting import as_points, metric_label
from harness.gate.compare import PASS, GateOutcome
from harness.report.markdown_text import escape

MARKS = {"pass": "pass", "warn": "⚠️ warn", "fail": "❌ fail", "skip": "skipped"}


def gate_markdown(outcome: GateOutcome) -> str:
    metric = metric_label(outcome.metric)
    level = round(100 * outcome.confidence)
    lines = [
        f"### Heedful gate `{outcome.suite}`: {outcome.status.upper()}",
        "",
        f"| contender | test {metric}: baseline → now | difference (points) | {level}% interval "
        "| s/epoch ratio | memory ratio | verdict |",
        "| --- | --- | --- | --- | --- | --- | --- |",
    ]
    for contender in outcome.contender_seconds:
        checks = outcome.of(contender)
        figures = checks["metric"].figures
        worst = [c.status for c in checks.values() if c.status not in (PASS, "skip")]
        verdict = MARKS["fail"] if "fail" in worst else MARKS["warn"] if worst else MARKS["pass"]
        lines.append(
            f"| {escape(contender)} | {figures['baseline']:.4f} → {figures['current']:.4f} "
            f"| {as_points(figures['difference'])} "
            f"| [{as_points(figures['low'])}, {as_points(figures['high'])}] "
            f"| ×{checks['time'].figures['ratio']:.2f} | ×{checks['memory'].figures['ratio']:.2f} "
            f"| {verdict} |"
        )
    findings = [c for c in outcome.checks if c.status not in (PASS, "skip")]
    if findings:
        lines += ["", "**Findings**", ""]
        lines += [f"- {MARKS[c.status]} `{c.check}`: {escape(c.message)}" for c in findings]
    if outcome.environment_differences:
        lines += [
            "",
            "⚠️ Measured in a different environment than the baseline: "
            + escape("; ".join(outcome.environment_differences)),
        ]
    lines += [
        "",
        f"Difference = current − baseline. Interval: {level}% t-interval of the paired mean "
        "difference over shared seeds (Welch interval when fewer than two seeds are shared). "
        "A metric fails only when the drop exceeds the tolerance and the test is significant. "
        "These are estimates on this suite's data and seeds.",
    ]
    return "\n".join(lines) + "\n"
