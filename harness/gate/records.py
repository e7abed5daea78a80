"""Gate history rows from a gate outcome: one per contender, with its figures and verdicts
(stored and read by harness/storage/gate_history.py)."""

from __future__ import annotations

from harness.gate.compare import FAIL, PASS, SKIP, WARN, GateOutcome
from harness.storage.gate_history import GateRecord

WORST_FIRST = (FAIL, WARN, PASS, SKIP)


def history_records(outcome: GateOutcome) -> list[GateRecord]:
    """Each contender's figures and verdicts; its status is the worst of its verdicts."""
    records = []
    for contender in outcome.contender_seconds:
        checks = outcome.of(contender)
        metric = checks["metric"].figures
        verdicts = {name: check.status for name, check in checks.items()}
        records.append(
            GateRecord(
                suite=outcome.suite,
                contender=contender,
                gated_at=outcome.gated_at,
                metric=outcome.metric,
                metric_mean=metric["current"],
                baseline_mean=metric["baseline"],
                difference=metric["difference"],
                difference_low=metric["low"],
                difference_high=metric["high"],
                p_value=metric["p_value"],
                seconds_per_epoch=checks["time"].figures["current"],
                peak_mb=checks["memory"].figures["current"],
                verdicts=verdicts,
                contender_status=next(s for s in WORST_FIRST if s in verdicts.values()),
                gate_status=outcome.status,
                environment=outcome.environment,
                environment_differs=bool(outcome.environment_differences),
            )
        )
    return records
