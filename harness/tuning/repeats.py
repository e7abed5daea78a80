"""Seeded repeats of the tuned settings, shared through one Optuna study.

Each (contender, seed) is one enqueued trial; taking a waiting trial is atomic in Optuna's
storage, and of two live trials for one repeat only the one with the smaller id runs. Each
repeat's store record travels in its trial, so every machine's result store receives every
repeat once (`sync_repeats`).
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import replace

import optuna
from optuna.trial import Trial, TrialState

from harness.execution.runs import record_of
from harness.planning import expand, with_settings
from harness.schema.suite import Suite
from harness.storage import store
from harness.training.runs import perform
from harness.tuning.storage import fail_stale_trials
from harness.tuning.study import WORKER
from harness.tuning.trial_loop import run_trials
from harness.tuning.trial_states import LIVE, POLL_SECONDS, SurplusTrial, trial_id, usage


def enqueue_missing(study: optuna.Study, wanted: list[tuple[str, int]]) -> None:
    live = {
        (t.user_attrs.get("contender"), t.user_attrs.get("seed"))
        for t in study.get_trials(deepcopy=False, states=LIVE)
    }
    for contender, seed in wanted:
        if (contender, seed) not in live:
            study.enqueue_trial(
                {"contender": contender, "seed": seed},
                user_attrs={"contender": contender, "seed": seed},
            )


def run_repeats(
    suite: Suite,
    study: optuna.Study,
    settings: dict[str, dict],
    study_names: dict[str, str],
    resize: Callable | None,
    store_path: store.Store | None,
) -> None:
    """Run enqueued repeats until every (contender, seed) has a completed trial."""
    specs = {(s.contender, s.seed): s for s in expand(suite)}
    wanted = list(specs)
    names, seeds = list(suite.contenders), suite.seed_list

    def first_live(trial: Trial, key: tuple[str, int]) -> None:
        for other in study.get_trials(deepcopy=False, states=LIVE):
            same = (other.user_attrs.get("contender"), other.user_attrs.get("seed")) == key
            if same and trial_id(other) < trial_id(trial):
                raise SurplusTrial(f"repeat {key} is already taken by trial {other.number}")

    def objective(trial: Trial) -> float:
        key = (trial.user_attrs.get("contender"), trial.user_attrs.get("seed"))
        if key not in specs:
            raise SurplusTrial(f"trial {trial.number} is not an enqueued repeat")
        trial.suggest_categorical("contender", names)
        trial.suggest_int("seed", min(seeds), max(seeds))
        first_live(trial, key)
        trial.set_user_attr("worker", WORKER)
        spec = with_settings(specs[key], settings[key[0]])
        spec = resize(spec) if resize is not None else spec
        result = perform(spec)
        extras = {**result.extras, "tuned": settings[key[0]], "tuning_study": study_names[key[0]]}
        record = record_of(spec, replace(result, extras=extras))
        first_live(trial, key)
        trial.set_user_attr("record", record)
        if store_path is not None:  # None on a cluster worker: the submitter stores
            store.save_run(store_path, record)
        return result.val_metric

    while True:
        fail_stale_trials(study)
        enqueue_missing(study, wanted)
        trials = study.get_trials(deepcopy=False)
        done = {
            (t.user_attrs.get("contender"), t.user_attrs.get("seed"))
            for t in trials
            if t.state == TrialState.COMPLETE
        }
        if all(key in done for key in wanted):
            return
        if any(t.state == TrialState.WAITING for t in trials):
            run_trials(study, objective, lambda study: usage(study).waiting > 0, (SurplusTrial,))
        else:
            time.sleep(POLL_SECONDS)


def sync_repeats(study: optuna.Study, store_path: store.Store | None) -> frozenset[str]:
    """Copy every completed repeat into this machine's result store (stored once by key)."""
    completed = study.get_trials(deepcopy=False, states=(TrialState.COMPLETE,))
    for trial in completed:
        if store_path is not None:
            store.save_run(store_path, trial.user_attrs["record"])
    return frozenset(trial.user_attrs["record"]["key"] for trial in completed)
