"""Baseline files: a suite's per-seed figures and where they were measured, saved as JSON.

A baseline is meant to be committed next to its suite: keys are sorted, figures rounded to
what the measurements support, and it holds no paths, user or host names.
The suite hash covers the task the figures were measured on (data, split, setting, metric);
contender options, training, seeds and gate settings may change between baseline and gate,
because finding the effect of such changes is the gate's job.
"""

from __future__ import annotations

import json
import platform
import time
from importlib import metadata
from pathlib import Path
from typing import Any

import pandas as pd
from pydantic import ValidationError

import harness
from harness.digest import json_digest
from harness.errors import InputError
from harness.output_files import write_output
from harness.planning import RunSpec
from harness.schema.ablation import point_label
from harness.schema.base import format_validation_error
from harness.schema.gate import BASELINE_FORMAT, BASELINE_FORMAT_VERSION, BaselineFile
from harness.schema.suite import Suite
from harness.schema.tasks import first_metric_names, metric_names, task_kind

RUN_FIELDS = (
    "test_metric",
    "val_metric",
    *(f"test_{name}" for name in first_metric_names()),
    "seconds_per_epoch",
    "peak_mb",
)
# metrics of later tasks: recorded for runs that have them (the first task's runs leave them out)
LATER_RUN_FIELDS = tuple(
    f"test_{name}" for name in metric_names() if name not in first_metric_names()
)


def cpu_model() -> str:
    """The CPU's model name (Linux /proc/cpuinfo), else what the platform module reports."""
    try:
        for line in Path("/proc/cpuinfo").read_text().splitlines():
            if line.startswith("model name"):
                return line.split(":", 1)[1].strip()
    except OSError:
        pass
    return platform.processor() or platform.machine() or "unknown"


def _version(package: str) -> str:
    try:
        return metadata.version(package)
    except metadata.PackageNotFoundError:
        return "not installed"


def environment_fingerprint(threads: int) -> dict[str, Any]:
    """Library versions, CPU model and torch threads per run: what can move the figures."""
    return {
        "python": platform.python_version(),
        "torch": _version("torch"),
        "torch_geometric": _version("torch_geometric"),
        "numpy": _version("numpy"),
        "cpu": cpu_model(),
        "threads": threads,
    }


def environment_differences(saved: dict[str, Any], current: dict[str, Any]) -> list[str]:
    """`field: baseline X, now Y` for each fingerprint field that differs."""
    return [
        f"{field}: baseline {saved.get(field)}, now {current.get(field)}"
        for field in sorted(set(saved) | set(current))
        if saved.get(field) != current.get(field)
    ]


def suite_task(suite: Suite) -> dict[str, Any]:
    """What the figures are measured on; a baseline only compares with the same task."""
    task = {
        "data": suite.data.model_dump(mode="json"),
        "split": suite.split.model_dump(mode="json"),
        "setting": suite.setting,
        "metric": suite.metric,
    }
    kind = task_kind(suite.task)
    if kind.keyed:  # hashes of baselines saved before tasks existed stay as they were
        task["task"] = suite.task
        if kind.options_section:
            task[kind.options_section] = suite.task_options.model_dump(mode="json")
    return task


def suite_hash(suite: Suite) -> str:
    return json_digest(suite_task(suite))


def check_gateable(suite: Suite, path: str | Path) -> None:
    """Baselines and gates compare fixed settings; a tuning suite's settings move each time."""
    if suite.tuning is not None:
        raise InputError(
            f"{path}: tuning: a gate compares fixed contender settings; allowed: a suite without "
            "[tuning] (copy the tuned settings into its contenders)"
        )


def _rounded(value: Any) -> Any:
    if value is None or (isinstance(value, float) and value != value):
        return None
    return round(float(value), 6)


def run_labels(runs: pd.DataFrame) -> list[str]:
    """Each run's contender label: the contender, with its ablation point when it has one."""
    points = runs["point"] if "point" in runs.columns else [None] * len(runs)
    return [
        point_label(contender, point or {})
        for contender, point in zip(runs["contender"], points, strict=True)
    ]


def contender_labels(specs: list[RunSpec]) -> list[str]:
    """Contender labels in suite order (one per contender, or per contender and ablation point)."""
    return list(dict.fromkeys(spec.label for spec in specs))


def build_baseline(
    suite: Suite, specs: list[RunSpec], runs: pd.DataFrame, environment: dict[str, Any]
) -> dict[str, Any]:
    """The baseline document of a suite's stored runs (suite_runs): one entry per contender,
    or per contender and ablation point, each with one run per seed."""
    by_label = {spec.label: spec for spec in specs}  # every seed of a label has its options
    contenders: dict[str, Any] = {}
    for name in contender_labels(specs):
        group = runs[[label == name for label in run_labels(runs)]].sort_values("seed")
        spec = by_label[name]
        contenders[name] = {
            "model": spec.options.model,
            "options": spec.options.model_dump(mode="json"),
            "contender": spec.contender,
            "point": spec.point,
            "runs": [
                {
                    "seed": int(row["seed"]),
                    "key": str(row["key"]),
                    "epochs": int(row["epochs"]),
                    "params": int(row["params"]),
                    **{field: _rounded(row[field]) for field in RUN_FIELDS},
                    **{
                        field: _rounded(row[field])
                        for field in LATER_RUN_FIELDS
                        if _rounded(row.get(field)) is not None
                    },
                }
                for _, row in group.iterrows()
            ],
        }
    return {
        "format": BASELINE_FORMAT,
        "format_version": BASELINE_FORMAT_VERSION,
        "suite": suite.name,
        "suite_hash": suite_hash(suite),
        "task": suite_task(suite),
        "metric": suite.metric,
        "harness_version": harness.__version__,
        "saved_at": time.strftime("%Y-%m-%dT%H:%M:%SZ", time.gmtime()),
        "environment": environment,
        "contenders": contenders,
    }


def write_baseline(path: str | Path, document: dict[str, Any]) -> None:
    """Human-readable JSON with stable key order; written whole or not at all."""
    path = Path(path)
    if path.is_dir():
        raise InputError(f"{path}: is a directory; allowed: a .json file path")
    text = json.dumps(document, indent=2, sort_keys=True, allow_nan=False) + "\n"
    write_output(path, text)


def read_baseline(path: str | Path) -> BaselineFile:
    """Load and validate a baseline file; every defect is one line naming the file."""
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise InputError(
            f"{path}: baseline file not found; save one with `heedful baseline SUITE --save {path}`"
        ) from None
    except (IsADirectoryError, PermissionError, UnicodeDecodeError) as error:
        raise InputError(
            f"{path}: cannot read baseline file ({error.__class__.__name__})"
        ) from None
    if not text.strip():
        raise InputError(f"{path}: baseline file is empty; allowed: a JSON baseline document")
    try:
        raw = json.loads(text)
    except json.JSONDecodeError as error:
        # a cut inside a string is reported at the string's start, a cut inside a number or
        # a literal on the file's last line, which a saved baseline ends with a line break
        cut_last_line = not text.endswith("\n") and "\n" not in text[error.pos :]
        if (
            not text[error.pos :].strip()
            or error.msg.startswith("Unterminated string")
            or cut_last_line
        ):
            raise InputError(
                f"{path}: baseline file is truncated: the JSON ends at line {error.lineno} "
                f"column {error.colno} before the document is complete"
            ) from None
        raise InputError(
            f"{path}: baseline file is not valid JSON: {error.msg} at line {error.lineno} "
            f"column {error.colno}"
        ) from None
    if not isinstance(raw, dict):
        raise InputError(
            f"{path}: given a JSON {type(raw).__name__}; allowed: a JSON object (a baseline)"
        )
    try:
        return BaselineFile.model_validate(raw)
    except ValidationError as error:
        raise InputError(format_validation_error(error, raw, str(path))) from None


def _flatten(value: Any, prefix: str = "") -> dict[str, Any]:
    if isinstance(value, dict):
        out: dict[str, Any] = {}
        for key, inner in value.items():
            out.update(_flatten(inner, f"{prefix}.{key}" if prefix else str(key)))
        return out
    return {prefix: value}


def check_matches(
    baseline: BaselineFile, suite: Suite, specs: list[RunSpec], path: str | Path
) -> None:
    """Refuse a baseline of another suite, another task or other contenders, saying what differs."""
    if baseline.suite != suite.name:
        raise InputError(
            f"{path}: baseline is of suite '{baseline.suite}', given suite '{suite.name}'"
        )
    current_hash = suite_hash(suite)
    if baseline.suite_hash != current_hash:
        saved, now = _flatten(baseline.task), _flatten(suite_task(suite))
        changes = [
            f"{key}: baseline {saved.get(key)!r}, suite {now.get(key)!r}"
            for key in sorted(set(saved) | set(now))
            if saved.get(key) != now.get(key)
        ]
        detail = "; ".join(changes) if changes else "the recorded task was edited"
        raise InputError(
            f"{path}: suite hash differs (baseline {baseline.suite_hash}, suite {current_hash}): "
            f"{detail}; save a new baseline for the changed task"
        )
    saved_names = {entry.contender or label for label, entry in baseline.contenders.items()}
    suite_names = {spec.contender for spec in specs}
    for name in sorted(suite_names - saved_names):
        raise InputError(
            f"{path}: contenders.{name}: in the suite but missing from the baseline; baseline "
            f"has {', '.join(sorted(saved_names))}"
        )
    for name in sorted(saved_names - suite_names):
        raise InputError(
            f"{path}: contenders.{name}: in the baseline but not in the suite; suite has "
            f"{', '.join(sorted(suite_names))}"
        )


def unmatched_points(baseline: BaselineFile, specs: list[RunSpec]) -> list[tuple[str, str]]:
    """(label, where) of each ablation point on one side only: 'suite' or 'baseline'."""
    suite_labels = contender_labels(specs)
    missing = [(label, "suite") for label in suite_labels if label not in baseline.contenders]
    return missing + [
        (label, "baseline") for label in baseline.contenders if label not in suite_labels
    ]
