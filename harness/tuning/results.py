"""What tuning did, per contender: best settings, trials completed and pruned, time used,
hyperparameter importances (Optuna's fANOVA evaluator; Hutter et al., 2014) and the
validation curve of the best trial. Values and DataFrames only; renderers format them.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import optuna
import pandas as pd
from optuna.trial import TrialState

from harness.errors import InputError
from harness.planning import with_settings
from harness.schema.suite import Suite
from harness.tuning.sizing import attribute_frame, parameter_table, size_hidden, target_count
from harness.tuning.study import best_settings, tuning_plan
from harness.tuning.trial_states import FINISHED, usage


@dataclass(frozen=True)
class ContenderTuning:
    """One contender's study, summarised."""

    contender: str
    model: str
    study: str
    budget_trials: int | None
    budget_seconds: float | None
    completed: int
    pruned: int
    failed: int
    seconds: float
    epochs: int
    best_value: float
    best_settings: dict[str, Any] = field(default_factory=dict)
    importances: dict[str, float] = field(default_factory=dict)
    curve: list[float] = field(default_factory=list)


def epochs_trained(study: optuna.Study) -> int:
    """Epochs of every finished trial: the length of its reported validation curve."""
    trials = study.get_trials(deepcopy=False, states=FINISHED)
    return sum(len(trial.intermediate_values) for trial in trials)


def importances(study: optuna.Study) -> dict[str, float]:
    """fANOVA importances (seeded); empty when fewer than two trials completed, or when
    every completed trial scored the same."""
    completed = study.get_trials(deepcopy=False, states=(TrialState.COMPLETE,))
    varied = {
        k for t in completed for k in t.params if len({str(u.params.get(k)) for u in completed}) > 1
    }
    if len(completed) < 2 or not varied or len({t.value for t in completed}) < 2:
        return {}  # nothing to explain: fANOVA splits the variance of the scores
    evaluator = optuna.importance.FanovaImportanceEvaluator(seed=0)
    values = optuna.importance.get_param_importances(
        study, evaluator=evaluator, params=sorted(varied)
    )
    return {name: float(value) for name, value in values.items()}


def tuning_summary(suite: Suite, storage: optuna.storages.BaseStorage) -> list[ContenderTuning]:
    """Every contender's tuning as stored; an error when a study does not exist yet."""
    summaries = []
    for plan in tuning_plan(suite):
        try:
            study = optuna.load_study(study_name=plan.study, storage=storage)
        except KeyError:
            raise InputError(
                f"suite '{suite.name}': no tuning study for contender '{plan.contender}' in this "
                "tuning database; allowed: run the suite first (heedful run), with the same "
                "--tuning-database"
            ) from None
        used = usage(study)
        completed = [t for t in study.get_trials(deepcopy=False) if t.state == TrialState.COMPLETE]
        best = study.best_trial if completed else None
        summaries.append(
            ContenderTuning(
                contender=plan.contender,
                model=plan.base.model,
                study=plan.study,
                budget_trials=suite.tuning.trials,
                budget_seconds=suite.tuning.seconds,
                completed=used.completed,
                pruned=used.pruned,
                failed=used.failed,
                seconds=used.seconds,
                epochs=epochs_trained(study),
                best_value=best.value if best is not None else math.nan,
                best_settings=best_settings(study) if best is not None else {},
                importances=importances(study),
                curve=list(best.user_attrs.get("curve", [])) if best is not None else [],
            )
        )
    return summaries


def summary_frame(summaries: list[ContenderTuning]) -> pd.DataFrame:
    """One row per contender: budget, trials completed, pruned and failed, time, best score."""
    names = ("contender", "model", "budget_trials", "budget_seconds", "completed", "pruned")
    columns = {name: name for name in (*names, "failed", "seconds", "epochs")}
    return attribute_frame(summaries, columns | {"best_validation": "best_value"})


def settings_frame(summaries: list[ContenderTuning]) -> pd.DataFrame:
    """Long table of best settings with their importance: contender, setting, value."""
    rows = [
        {
            "contender": s.contender,
            "setting": name,
            "value": value,
            "importance": s.importances.get(name, math.nan),
        }
        for s in summaries
        for name, value in s.best_settings.items()
    ]
    return pd.DataFrame(rows, columns=["contender", "setting", "value", "importance"])


def curve_frame(summaries: list[ContenderTuning]) -> pd.DataFrame:
    """Validation score per epoch of each contender's best trial."""
    rows = [
        {"contender": s.contender, "epoch": epoch, "validation": value}
        for s in summaries
        for epoch, value in enumerate(s.curve, start=1)
    ]
    return pd.DataFrame(rows, columns=["contender", "epoch", "validation"])


def parameter_frame(suite: Suite, summaries: list[ContenderTuning]) -> pd.DataFrame:
    """Equal-parameter mode: each contender's sized width, count, target and deviation."""
    if suite.tuning is None or suite.tuning.equal_parameters is None:
        return pd.DataFrame(columns=["contender", "hidden", "params", "target", "deviation"])
    plans = tuning_plan(suite)
    target = target_count(suite.tuning.equal_parameters, {p.contender: p.base for p in plans})
    chosen = {s.contender: s.best_settings for s in summaries}
    sized = [
        size_hidden(with_settings(plan.base, chosen.get(plan.contender, {})), target)
        for plan in plans
    ]
    return parameter_table(sized)
